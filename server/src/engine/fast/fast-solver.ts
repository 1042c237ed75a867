// The accelerated solver: hierarchical matrix (ACA far blocks, exact near blocks), block-Jacobi
// preconditioner over tree clusters, restarted GMRES with warm starts. Unknowns and right-hand
// sides are in the caller's numbering; the tree order is internal.
import type { EntrySource } from './aca';
import { buildClusterTree } from './cluster-tree';
import { applyBlockJacobi, buildBlockJacobi, type BlockJacobi } from './block-jacobi';
import { gmres, type GmresResult } from '../linear/gmres';
import { addBlock, hmatrixStorage, hmatvecTreeOrder, partitionBlocks, fillBlock, type HMatrix, type BlockTask, type DenseBlock, type LowRankBlock } from './hmatrix';

export interface FastSolverOptions {
  /** Most unknowns in a tree leaf (default 32). */
  leafSize: number;
  /** Admissibility η (default 2: fewer near entries than 1.5 at the same storage, measured at 4k panels). */
  eta: number;
  /** ACA tolerance per block (default 3e-7). */
  eps: number;
  /** Most unknowns per preconditioner block (default 256). */
  blockSize: number;
  /** GMRES relative residual tolerance (default 1e-9). */
  tol: number;
  /** GMRES restart length (default 60). */
  restart: number;
}

export const DEFAULT_FAST_OPTIONS: FastSolverOptions = { leafSize: 32, eta: 2, eps: 3e-7, blockSize: 256, tol: 1e-9, restart: 60 };

/** Fills a list of blocks, possibly on several threads; returns them in any order. */
export type BlockFiller = (tasks: BlockTask[], order: Int32Array, eps: number) => (DenseBlock | LowRankBlock)[];

export interface FastSolveInfo {
  iterations: number;
  relativeResidual: number;
  converged: boolean;
}

export interface FastSolverStats {
  unknowns: number;
  denseEntries: number;
  lowRankEntries: number;
  bytes: number;
  maxRank: number;
  meanRank: number;
  blocks: number;
  /** Milliseconds: tree, assembly, preconditioner. */
  timings: Record<string, number>;
}

export interface FastSolver {
  size: number;
  /** y = A·x in the caller's numbering. */
  apply(x: Float64Array, y: Float64Array): void;
  /** Solves A·x = b; x0 is a warm start (e.g. the solution before an edit). Null when cancelled. */
  solve(b: Float64Array, x0?: Float64Array | null, control?: { tol?: number; isCancelled?: () => boolean }): { x: Float64Array; info: FastSolveInfo } | null;
  stats: FastSolverStats;
  H: HMatrix;
}

/**
 * Builds the solver for the matrix whose entries `src` gives. `points` are the collocation points
 * (3 per unknown), `extent` what each unknown's box must cover (the panel vertices). Null when
 * `isCancelled` turned true during assembly.
 */
export function buildFastSolver(
  src: EntrySource,
  points: Float64Array,
  extent: { coords: Float64Array; stride: number } | undefined,
  options: Partial<FastSolverOptions> = {},
  filler?: BlockFiller,
  isCancelled?: () => boolean,
): FastSolver | null {
  const o = { ...DEFAULT_FAST_OPTIONS, ...options };
  const timings: Record<string, number> = {};
  let t0 = performance.now();
  const tree = buildClusterTree(points, o.leafSize, extent);
  const n = tree.order.length;
  const tasks = partitionBlocks(tree, o.eta);
  timings.tree = performance.now() - t0;
  t0 = performance.now();
  const H: HMatrix = { size: n, tree, dense: [], lowRank: [] };
  if (filler) {
    for (const b of filler(tasks, tree.order, o.eps)) addBlock(H, b);
  } else {
    for (let k = 0; k < tasks.length; k++) {
      if ((k & 63) === 0 && isCancelled?.()) return null;
      addBlock(H, fillBlock(src, tree.order, tasks[k], o.eps));
    }
  }
  if (isCancelled?.()) return null;
  timings.assemble = performance.now() - t0;
  t0 = performance.now();
  const P: BlockJacobi = buildBlockJacobi(H, o.blockSize);
  timings.precondition = performance.now() - t0;
  const order = tree.order;
  const xp = new Float64Array(n), yp = new Float64Array(n);
  const store = hmatrixStorage(H);
  const applyTree = (x: Float64Array, y: Float64Array) => hmatvecTreeOrder(H, x, y);
  const precondition = (r: Float64Array, z: Float64Array) => applyBlockJacobi(P, r, z);
  return {
    size: n,
    H,
    apply(x, y) {
      for (let k = 0; k < n; k++) xp[k] = x[order[k]];
      hmatvecTreeOrder(H, xp, yp);
      for (let k = 0; k < n; k++) y[order[k]] = yp[k];
    },
    solve(b, x0 = null, control = {}) {
      const bp = new Float64Array(n);
      for (let k = 0; k < n; k++) bp[k] = b[order[k]];
      let x0p: Float64Array | null = null;
      if (x0) {
        x0p = new Float64Array(n);
        for (let k = 0; k < n; k++) x0p[k] = x0[order[k]];
      }
      const r: GmresResult | null = gmres({ n, apply: applyTree }, bp, {
        initial: x0p ?? undefined,
        tolerance: control.tol ?? o.tol ?? 1e-9,
        restart: o.restart,
        maxIterations: 1000,
        precondition: precondition ?? undefined,
        isCancelled: control.isCancelled,
      });
      if (!r) return null;
      const x = new Float64Array(n);
      for (let k = 0; k < n; k++) x[order[k]] = r.x[k];
      return { x, info: { iterations: r.iterations, relativeResidual: r.residual, converged: r.converged } };
    },
    stats: {
      unknowns: n,
      denseEntries: store.dense,
      lowRankEntries: store.lowRank,
      bytes: store.bytes,
      maxRank: store.maxRank,
      meanRank: store.meanRank,
      blocks: H.dense.length + H.lowRank.length,
      timings,
    },
  };
}
