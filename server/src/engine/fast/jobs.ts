// The units of parallel work, written once and run both on the calling thread and in the workers
// (server/src/engine/fast/worker.ts): filling H-matrix blocks, the H-matrix product, building
// (local blocks, the coarse level's row bands) and applying the preconditioner, dense rows and dense
// products of smaller systems, and evaluating the treecode at points. Each thread takes chunks from
// a shared atomic counter until none are left.
import { preparePanels, type Panels } from '../kernels/triangle';
import { fillBlock, packProduct, PackWriter, type BlockPack, type BlockTask } from './hmatrix';
import { panelEntrySource, type ImageMap } from './panel-entries';
import { evaluateTree, type PanelTree } from './treecode';
import { applyBlocks, coarseBands, factorBlocks, type BlockSolveData, type CoarseBuild, type LocalBuild } from './block-jacobi';
import { fillDenseRows, fillThinRows } from '../bem3d/system';
import { productMany } from '../linear/solver';
import { kernelFor } from './arena';
import type { Image } from '../bem3d/images';

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
  /** The arena's memory the packs go to (arena.ts); null: shared buffers of their own. */
  memory: WebAssembly.Memory | null;
  /** Shared: next task to take. */
  counter: Int32Array;
  chunk: number;
}

/**
 * Fills chunks of blocks until none are left. When `isCancelled` (polled per chunk, calling thread
 * only) turns true, the shared counter is pushed past the end so that every thread stops soon.
 */
export function runAssemble(job: AssembleJob, P?: Panels, isCancelled?: () => boolean): BlockPack[] {
  const panels = P ?? preparePanels({ vertices: job.vertices, triangles: job.triangles });
  const src = panelEntrySource(panels, job.points, job.scale, job.images);
  const out = new PackWriter(job.memory ? { memory: job.memory } : null);
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
      out.add(fillBlock(src, job.order, task, job.eps));
    }
  }
  return out.finish();
}

/**
 * One H-matrix product of K stacked vectors, shared between threads: the blocks are cut into
 * items of similar work, each thread sums its items into its own slice of `ys` (so no two threads
 * write the same numbers), and the caller adds the slices.
 */
export interface ProductJob {
  kind: 'product';
  packs: BlockPack[];
  /** 3 per item: pack index, first block, end block. */
  items: Int32Array;
  /** The arena's memory when xs, ys and the packs in it are views into it (the SIMD kernel runs there). */
  memory: WebAssembly.Memory | null;
  /** K vectors of n, tree order (shared). */
  xs: Float64Array;
  /** threads × K × n (shared): one slice per thread. */
  ys: Float64Array;
  K: number;
  n: number;
  /** Shared: next item; next free slice. */
  counter: Int32Array;
  slot: Int32Array;
}

export function runProduct(job: ProductJob): void {
  const { K, n } = job;
  const t = Atomics.add(job.slot, 0, 1);
  const ys = job.ys.subarray(t * K * n, (t + 1) * K * n);
  ys.fill(0);
  const kernel = job.memory ? kernelFor(job.memory) : null;
  const count = job.items.length / 3;
  for (;;) {
    const k = Atomics.add(job.counter, 0, 1);
    if (k >= count) break;
    const o = 3 * k;
    packProduct(job.packs[job.items[o]], job.items[o + 1], job.items[o + 2], job.xs, ys, K, n, kernel);
  }
}

/** Cuts the packs into about `pieces` items of similar work (numbers stored). */
export function productItems(packs: BlockPack[], pieces: number): Int32Array {
  let total = 0;
  for (const p of packs) total += p.values.length;
  const target = Math.max(1, total / pieces);
  const items: number[] = [];
  packs.forEach((p, q) => {
    let first = 0, work = 0;
    for (let b = 0; b < p.count; b++) {
      const h = 6 * b;
      work += p.heads[h + 4] < 0 ? p.heads[h + 1] * p.heads[h + 3] : p.heads[h + 4] * (p.heads[h + 1] + p.heads[h + 3]);
      if (work >= target) {
        items.push(q, first, b + 1);
        first = b + 1;
        work = 0;
      }
    }
    if (first < p.count) items.push(q, first, p.count);
  });
  return Int32Array.from(items);
}

/** Rows of the dense 3D matrix to fill in place (bem3d/system.ts fillDenseRows), shared between threads. */
export interface RowsJob {
  kind: 'rows';
  vertices: Float64Array;
  triangles: Uint32Array;
  points: Float64Array;
  images: Image[];
  rows: Int32Array;
  /** Only these columns (all when null). */
  cols: Int32Array | null;
  /** The shared n×n matrix. */
  A: Float64Array;
  /**
   * Thin panels' rows instead (bem3d/system.ts fillThinRows): `rows` then holds slots t of
   * thinPanels, and the normal-field rows go to `gradient` (shared).
   */
  thin: { panels: Int32Array; normals: Float64Array; gradient: Float64Array } | null;
  counter: Int32Array;
  chunk: number;
}

/** Fills chunks of rows until none are left; on cancellation pushes the counter past the end. False when cancelled. */
export function runRows(job: RowsJob, P?: Panels, isCancelled?: () => boolean): boolean {
  const panels = P ?? preparePanels({ vertices: job.vertices, triangles: job.triangles });
  const count = job.rows.length;
  for (;;) {
    if (isCancelled?.()) {
      Atomics.store(job.counter, 0, count);
      return false;
    }
    const first = Atomics.add(job.counter, 0, job.chunk);
    if (first >= count) return true;
    const rows = job.rows.subarray(first, Math.min(count, first + job.chunk));
    const cols = job.cols ?? undefined;
    if (job.thin) fillThinRows(panels, job.points, job.thin.normals, job.images, job.thin.panels, rows, job.A, job.thin.gradient, undefined, cols);
    else fillDenseRows(panels, job.points, job.images, rows, job.A, undefined, cols);
  }
}

/** A dense product ys = A·xs of K stacked vectors, rows shared between threads (each writes its own rows). */
export interface DenseProductJob {
  kind: 'dense-product';
  /** The shared n×n row-major matrix. */
  A: Float64Array;
  n: number;
  K: number;
  /** K vectors of n each (shared). */
  xs: Float64Array;
  ys: Float64Array;
  counter: Int32Array;
  chunk: number;
}

export function runDenseProduct(job: DenseProductJob): void {
  const { A, n, K, xs, ys, chunk } = job;
  const x = Array.from({ length: K }, (_, v) => xs.subarray(v * n, (v + 1) * n));
  for (;;) {
    const r0 = Atomics.add(job.counter, 0, chunk);
    if (r0 >= n) return;
    const r1 = Math.min(n, r0 + chunk);
    const y = Array.from({ length: K }, (_, v) => ys.subarray(v * n + r0, v * n + r1));
    productMany(r1 - r0, n, A.subarray(r0 * n, r1 * n), x, y);
  }
}

/** The preconditioner's blocks for K stacked vectors (block-jacobi.ts applyBlocks), shared between threads. */
export interface PreconditionJob {
  kind: 'precondition';
  P: BlockSolveData;
  ys: Float64Array;
  rs: Float64Array;
  zs: Float64Array;
  K: number;
  counter: Int32Array;
  chunk: number;
}

export function runPrecondition(job: PreconditionJob): void {
  const count = job.P.start.length;
  for (;;) {
    const k0 = Atomics.add(job.counter, 0, job.chunk);
    if (k0 >= count) return;
    applyBlocks(job.P, job.ys, job.rs, job.zs, job.K, k0, Math.min(count, k0 + job.chunk));
  }
}

/** The preconditioner's local blocks, gathered and factored in place (block-jacobi.ts factorBlocks), shared between threads. */
export interface FactorJob extends LocalBuild {
  kind: 'factor';
  counter: Int32Array;
  chunk: number;
}

export function runFactor(job: FactorJob): void {
  const count = job.size.length;
  for (;;) {
    const k0 = Atomics.add(job.counter, 0, job.chunk);
    if (k0 >= count) return;
    factorBlocks(job, k0, Math.min(count, k0 + job.chunk));
  }
}

/** The coarse level's A·Rᵀ summed in row bands (block-jacobi.ts coarseBands), shared between threads. */
export interface CoarseJob extends CoarseBuild {
  kind: 'coarse';
  counter: Int32Array;
}

export function runCoarse(job: CoarseJob): void {
  const count = job.bands.length - 1;
  const sums = new Map<number, Float64Array>();
  for (;;) {
    const t = Atomics.add(job.counter, 0, 1);
    if (t >= count) return;
    coarseBands(job, t, t + 1, sums);
  }
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
