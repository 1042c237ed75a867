// The units of parallel work, written once and run both on the calling thread and in the workers
// (server/src/engine/fast/worker.ts): filling H-matrix blocks and evaluating the treecode at
// points. Each thread takes chunks from a shared atomic counter until none are left.
import { preparePanels, type Panels } from '../kernels/triangle';
import { fillBlock, isLowRank, type BlockTask, type DenseBlock, type LowRankBlock } from './hmatrix';
import { panelEntrySource, type ImageMap } from './panel-entries';
import { evaluateTree, type PanelTree } from './treecode';

/** What a thread needs to fill blocks of the panel matrix: plain arrays only (they cross threads). */
export interface AssembleJob {
  kind: 'assemble';
  vertices: Float64Array;
  triangles: Uint32Array;
  points: Float64Array;
  scale: number;
  images: ImageMap[] | undefined;
  order: Int32Array;
  /** 5 per task: r0, m, c0, n, far (0/1). */
  tasks: Int32Array;
  eps: number;
  /** Shared: next task to take. */
  counter: Int32Array;
  chunk: number;
}

/** Blocks packed for the trip back: per block 6 header numbers; dense data and low-rank factors. */
export interface PackedBlocks {
  headers: Int32Array;
  data: Float64Array;
  factors: Float32Array;
}

/**
 * Fills chunks of blocks until none are left. When `isCancelled` (polled per chunk, calling thread
 * only) turns true, the shared counter is pushed past the end so that every thread stops soon.
 */
export function runAssemble(job: AssembleJob, P?: Panels, isCancelled?: () => boolean): (DenseBlock | LowRankBlock)[] {
  const panels = P ?? preparePanels({ vertices: job.vertices, triangles: job.triangles });
  const src = panelEntrySource(panels, job.points, job.scale, job.images);
  const out: (DenseBlock | LowRankBlock)[] = [];
  const count = job.tasks.length / 5;
  for (;;) {
    if (isCancelled?.()) {
      Atomics.store(job.counter, 0, count);
      break;
    }
    const first = Atomics.add(job.counter, 0, job.chunk);
    if (first >= count) break;
    for (let t = first; t < Math.min(count, first + job.chunk); t++) {
      const o = 5 * t;
      const task: BlockTask = { r0: job.tasks[o], m: job.tasks[o + 1], c0: job.tasks[o + 2], n: job.tasks[o + 3], far: job.tasks[o + 4] === 1 };
      out.push(fillBlock(src, job.order, task, job.eps));
    }
  }
  return out;
}

export function packBlocks(blocks: (DenseBlock | LowRankBlock)[]): PackedBlocks {
  let size = 0, fsize = 0;
  for (const b of blocks) {
    if (isLowRank(b)) fsize += b.U.length + b.V.length;
    else size += b.data.length;
  }
  const headers = new Int32Array(6 * blocks.length);
  const data = new Float64Array(size);
  const factors = new Float32Array(fsize);
  let at = 0, fat = 0;
  blocks.forEach((b, k) => {
    headers.set([b.r0, b.m, b.c0, b.n, isLowRank(b) ? b.rank : -1, 0], 6 * k);
    if (isLowRank(b)) {
      factors.set(b.U, fat);
      factors.set(b.V, fat + b.U.length);
      fat += b.U.length + b.V.length;
    } else {
      data.set(b.data, at);
      at += b.data.length;
    }
  });
  return { headers, data, factors };
}

export function unpackBlocks(p: PackedBlocks): (DenseBlock | LowRankBlock)[] {
  const out: (DenseBlock | LowRankBlock)[] = [];
  let at = 0, fat = 0;
  for (let k = 0; k < p.headers.length / 6; k++) {
    const [r0, m, c0, n, rank] = p.headers.subarray(6 * k, 6 * k + 5);
    if (rank >= 0) {
      const U = p.factors.slice(fat, fat + rank * m);
      const V = p.factors.slice(fat + rank * m, fat + rank * (m + n));
      fat += rank * (m + n);
      out.push({ r0, m, c0, n, rank, U, V });
    } else {
      out.push({ r0, m, c0, n, data: p.data.slice(at, at + m * n) });
      at += m * n;
    }
  }
  return out;
}

/** What a thread needs to evaluate the treecode: the tree's arrays (shared) and the points. */
export interface EvaluateJob {
  kind: 'evaluate';
  tree: PanelTree;
  points: Float64Array;
  /** Shared output, 4 per point. */
  out: Float64Array;
  theta: number;
  count: number;
  counter: Int32Array;
  chunk: number;
}

export function runEvaluate(job: EvaluateJob): void {
  for (;;) {
    const first = Atomics.add(job.counter, 0, job.chunk);
    if (first >= job.count) break;
    evaluateTree(job.tree, job.points, first, Math.min(job.count, first + job.chunk), job.theta, job.out);
  }
}
