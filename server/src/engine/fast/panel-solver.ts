// The fast solver for a panel mesh, with its parallel assembly: the entry points the 3D solver
// and the benchmark call. See fast-solver.ts for the method and hmatrix.ts for why.
import { preparePanels, type Panels } from '../kernels/triangle';
import { buildFastSolver, productHere, productVectors, type BlockProduct, type FastSolver, type FastSolverOptions, type FastWork } from './fast-solver';
import { type BlockPack, type BlockTask, type HMatrix } from './hmatrix';
import type { Arena } from './arena';
import { productItems, runAssemble, runCoarse, runFactor, runPrecondition, runProduct, type AssembleJob, type CoarseJob, type FactorJob, type PreconditionJob, type ProductJob } from './jobs';
import { blockSolveHere, type BlockFactorRunner, type BlockSolveRunner, type BuildWork, type CoarseRunner } from './block-jacobi';
import { panelEntrySource, panelExtent, type ImageMap } from './panel-entries';
import { fastThreads, runParallel, shared } from './pool';

export interface PanelSystem {
  /** Panel vertices and triangles (a Mesh will do). */
  vertices: Float64Array;
  triangles: Uint32Array;
  /** Collocation points, 3 per panel (the centroids). */
  points: Float64Array;
  /** Factor on ∫1/R: 1/(4π ε) for densities in C/m², 1/(4π) for the 3D system's scaled densities. */
  scale: number;
  /** Images of grounded planes, the identity included (default: the identity alone). */
  images?: readonly ImageMap[];
}

export interface PanelSolverOptions extends FastSolverOptions {
  /** Threads to use, the calling one included (default: all cores when the worker code is available). */
  threads: number;
}

/**
 * Builds the H-matrix solver for a panel system, filling blocks on several threads when it can.
 * Null when `isCancelled` turned true during assembly.
 */
export function buildPanelSolver(sys: PanelSystem, options: Partial<PanelSolverOptions> = {}, panels?: Panels, isCancelled?: () => boolean): FastSolver | null {
  const P = panels ?? preparePanels(sys);
  const src = panelEntrySource(P, sys.points, sys.scale, sys.images);
  const threads = fastThreads(options.threads);
  const work: FastWork =
    threads > 1
      ? {
          fill: (tasks: BlockTask[], order: Int32Array, eps: number, arena: Arena | null) => fillParallel(sys, P, tasks, order, eps, arena, threads, isCancelled),
          product: parallelProduct(threads),
          blockSolve: parallelBlockSolve(threads),
          ...parallelBuildWork(threads),
        }
      : {};
  return buildFastSolver(src, sys.points, panelExtent(P, sys.points), options, work, isCancelled);
}

/** The preconditioner's build on `threads` threads: its local blocks and its coarse level's A·Rᵀ. */
export function parallelBuildWork(threads: number): BuildWork {
  return { factor: parallelFactor(threads), coarse: parallelCoarse(threads) };
}

/** The preconditioner's local blocks gathered and factored on all threads (jobs.ts runFactor). */
function parallelFactor(threads: number): BlockFactorRunner {
  return (b) => {
    const job: FactorJob = { kind: 'factor', ...b, counter: new Int32Array(new SharedArrayBuffer(4)), chunk: 2 };
    // A failed worker may leave a block half built: say so, and the caller builds them all again.
    return runParallel(threads, job as unknown as Record<string, unknown>, () => runFactor(job)) !== null;
  };
}

/** The coarse level's A·Rᵀ summed on all threads, one row band at a time (jobs.ts runCoarse). */
function parallelCoarse(threads: number): CoarseRunner {
  return (c) => {
    const job: CoarseJob = { kind: 'coarse', ...c, counter: new Int32Array(new SharedArrayBuffer(4)) };
    return runParallel(threads, job as unknown as Record<string, unknown>, () => runCoarse(job)) !== null;
  };
}

/** The preconditioner's blocks shared between threads (jobs.ts runPrecondition); on failure, done here. */
function parallelBlockSolve(threads: number): BlockSolveRunner {
  return (P, ys, rs, zs, K) => {
    const slim = { start: P.start, size: P.size, lu: P.lu, luOff: P.luOff, pivot: P.pivot, coarse: P.coarse, memory: P.memory };
    const job: PreconditionJob = { kind: 'precondition', P: slim, ys, rs, zs, K, counter: new Int32Array(new SharedArrayBuffer(4)), chunk: 4 };
    const replies = runParallel(threads, job as unknown as Record<string, unknown>, () => runPrecondition(job));
    if (!replies) blockSolveHere(P, ys, rs, zs, K);
  };
}

/** The H-matrix product shared between threads (jobs.ts runProduct); on failure, done here. */
function parallelProduct(threads: number): BlockProduct {
  const items = new WeakMap<HMatrix, Int32Array>();
  return (H, xs, ys, K) => {
    const n = H.size;
    let list = items.get(H);
    if (!list) {
      list = shared(productItems(H.packs, 32 * threads));
      items.set(H, list);
    }
    // In the arena when there is one (the SIMD kernel reaches only its memory), else in shared buffers.
    const area = productVectors(H, K, threads);
    if (area) area.xs.set(xs.subarray(0, K * n));
    const job: ProductJob = {
      kind: 'product',
      packs: H.packs,
      items: list,
      memory: area ? H.arena!.memory : null,
      xs: area ? area.xs : shared(xs),
      ys: area ? area.ys : new Float64Array(new SharedArrayBuffer(8 * threads * K * n)),
      K,
      n,
      counter: new Int32Array(new SharedArrayBuffer(4)),
      slot: new Int32Array(new SharedArrayBuffer(4)),
    };
    const replies = runParallel(threads, job as unknown as Record<string, unknown>, () => runProduct(job));
    if (!replies) {
      productHere(H, xs, ys, K);
      return;
    }
    // Add the threads' slices (only slices a thread took were written).
    const used = Math.min(threads, Atomics.load(job.slot, 0));
    ys.set(job.ys.subarray(0, K * n));
    for (let t = 1; t < used; t++) {
      const o = t * K * n;
      for (let i = 0; i < K * n; i++) ys[i] += job.ys[o + i];
    }
  };
}

function fillParallel(
  sys: PanelSystem,
  P: Panels,
  tasks: BlockTask[],
  order: Int32Array,
  eps: number,
  arena: Arena | null,
  threads: number,
  isCancelled?: () => boolean,
): BlockPack[] {
  // Far blocks first (they vary most in cost), then the dense ones; chunks small enough to balance.
  const sorted = [...tasks].sort((a, b) => Number(b.far) - Number(a.far) || b.m * b.n - a.m * a.n);
  const flat = new Int32Array(5 * sorted.length);
  sorted.forEach((t, k) => flat.set([t.r0, t.m, t.c0, t.n, t.far ? 1 : 0], 5 * k));
  const job: AssembleJob = {
    kind: 'assemble',
    vertices: shared(sys.vertices),
    triangles: shared(sys.triangles),
    points: shared(sys.points),
    scale: sys.scale,
    images: (sys.images ?? undefined)?.map((im) => ({ sign: im.sign, flip: [...im.flip], shift: [...im.shift] })),
    order: shared(order),
    tasks: shared(flat),
    eps,
    memory: arena?.memory ?? null,
    counter: new Int32Array(new SharedArrayBuffer(4)),
    chunk: 16,
  };
  let mine: BlockPack[] = [];
  const replies = runParallel(threads, job as unknown as Record<string, unknown>, () => {
    mine = runAssemble(job, P, isCancelled);
  });
  if (isCancelled?.()) return [];
  if (!replies) {
    // A worker failed: do it all here (the reference path).
    job.counter[0] = 0;
    return runAssemble(job, P, isCancelled);
  }
  for (const r of replies) mine = mine.concat((r as { packs: BlockPack[] }).packs);
  return mine;
}

