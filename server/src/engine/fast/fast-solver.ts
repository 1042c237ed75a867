// The accelerated solver: hierarchical matrix (ACA far blocks, exact near blocks), a two-level
// preconditioner over tree clusters (block-jacobi.ts), restarted GMRES in lockstep over all
// right-hand sides, with warm starts. Unknowns and right-hand
// sides are in the caller's numbering; the tree order is internal.
import type { EntrySource } from './aca';
import { buildClusterTree } from './cluster-tree';
import { applyBlockJacobi, applyBlockJacobiMany, blockSolveHere, buildBlockJacobi, type BlockFactorRunner, type BlockJacobi, type BlockSolveRunner, type CoarseRunner } from './block-jacobi';
import { gmresMany } from '../linear/gmres';
import { fillBlock, hmatrixStorage, packProduct, partitionBlocks, PackWriter, type BlockPack, type BlockTask, type HMatrix } from './hmatrix';
import { arenaAlloc, arenaFloat64, createArena, kernelFor, type Arena } from './arena';

export interface FastSolverOptions {
  /** Most unknowns in a tree leaf (default 32). */
  leafSize: number;
  /** Admissibility η (default 2: fewer near entries than 1.5 at the same storage, measured at 4k panels). */
  eta: number;
  /** ACA tolerance per block (default 3e-7). */
  eps: number;
  /** Most unknowns per preconditioner block (default 128: with the coarse level, as few iterations as 256 at 16k panels and a quarter of the factoring work). */
  blockSize: number;
  /** Add the coarse level (one constant per coarse cluster) to the preconditioner (default true). */
  coarseLevel: boolean;
  /** GMRES relative residual tolerance (default 1e-9). */
  tol: number;
  /** GMRES restart length (default 60). */
  restart: number;
  /** Keep the blocks in a WebAssembly arena and multiply with the SIMD kernel (default true; false: plain JavaScript, the reference). */
  simd: boolean;
}

export const DEFAULT_FAST_OPTIONS: FastSolverOptions = { leafSize: 32, eta: 2, eps: 3e-7, blockSize: 128, coarseLevel: true, tol: 1e-9, restart: 60, simd: true };

/** Fills a list of blocks, possibly on several threads; returns them packed (in the arena when given), in any order. */
export type BlockFiller = (tasks: BlockTask[], order: Int32Array, eps: number, arena: Arena | null) => BlockPack[];

/** ys ← A·xs for K vectors stacked in tree order (K·n numbers each), possibly on several threads. */
export type BlockProduct = (H: HMatrix, xs: Float64Array, ys: Float64Array, K: number) => void;

const vectorAreas = new WeakMap<HMatrix, { xs: Float64Array; ys: Float64Array }>();

/**
 * Room in the H-matrix's arena for a product's K stacked vectors and `slices` sums of them (one
 * per thread), so that the SIMD kernel reaches them; kept per H-matrix, grown when K grows. Null
 * without an arena (or past its 4 GiB).
 */
export function productVectors(H: HMatrix, K: number, slices: number): { xs: Float64Array; ys: Float64Array } | null {
  if (!H.arena) return null;
  const n = H.size;
  let a = vectorAreas.get(H);
  if (!a || a.xs.length < K * n || a.ys.length < slices * K * n) {
    const x = arenaAlloc(H.arena, 8 * K * n);
    const y = x < 0 ? -1 : arenaAlloc(H.arena, 8 * slices * K * n);
    if (y < 0) return null;
    a = { xs: arenaFloat64(H.arena, x, K * n), ys: arenaFloat64(H.arena, y, slices * K * n) };
    vectorAreas.set(H, a);
  }
  return { xs: a.xs.subarray(0, K * n), ys: a.ys.subarray(0, slices * K * n) };
}

/** The product on the calling thread: in the arena with the SIMD kernel when there is one. */
export const productHere: BlockProduct = (H, xs, ys, K) => {
  const n = H.size;
  const area = productVectors(H, K, 1);
  const kernel = area && H.arena ? kernelFor(H.arena.memory) : null;
  if (!area || !kernel) {
    ys.fill(0);
    for (const p of H.packs) packProduct(p, 0, p.count, xs, ys, K, n);
    return;
  }
  area.xs.set(xs.subarray(0, K * n));
  area.ys.fill(0);
  for (const p of H.packs) packProduct(p, 0, p.count, area.xs, area.ys, K, n, kernel);
  ys.set(area.ys);
};

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

export interface SolveControl {
  tol?: number;
  isCancelled?: () => boolean;
}

export interface FastSolver {
  size: number;
  /** y = A·x in the caller's numbering. */
  apply(x: Float64Array, y: Float64Array): void;
  /** Solves A·x = b; x0 is a warm start (e.g. the solution before an edit). Null when cancelled. */
  solve(b: Float64Array, x0?: Float64Array | null, control?: SolveControl): { x: Float64Array; info: FastSolveInfo } | null;
  /** Solves for several right-hand sides in lockstep, one pass over the matrix per round for all. */
  solveMany(bs: Float64Array[], x0s?: (Float64Array | null | undefined)[], control?: SolveControl): { x: Float64Array; info: FastSolveInfo }[] | null;
  stats: FastSolverStats;
  H: HMatrix;
}

/** How the work is spread over threads; each part defaults to the calling thread alone. */
export interface FastWork {
  /** Fills the blocks (default: here, polling isCancelled). */
  fill?: BlockFiller;
  product?: BlockProduct;
  blockSolve?: BlockSolveRunner;
  factor?: BlockFactorRunner;
  coarse?: CoarseRunner;
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
  work: FastWork = {},
  isCancelled?: () => boolean,
): FastSolver | null {
  const filler = work.fill;
  const product = work.product ?? productHere;
  const blockSolve = work.blockSolve ?? blockSolveHere;
  const o = { ...DEFAULT_FAST_OPTIONS, ...options };
  const timings: Record<string, number> = {};
  let t0 = performance.now();
  const tree = buildClusterTree(points, o.leafSize, extent);
  const n = tree.order.length;
  const tasks = partitionBlocks(tree, o.eta);
  timings.tree = performance.now() - t0;
  t0 = performance.now();
  const arena = o.simd ? createArena() : null;
  let packs: BlockPack[];
  if (filler) packs = filler(tasks, tree.order, o.eps, arena);
  else {
    const w = new PackWriter(arena);
    for (let k = 0; k < tasks.length; k++) {
      if ((k & 63) === 0 && isCancelled?.()) return null;
      w.add(fillBlock(src, tree.order, tasks[k], o.eps));
    }
    packs = w.finish();
  }
  if (isCancelled?.()) return null;
  const H: HMatrix = { size: n, tree, packs, arena };
  timings.assemble = performance.now() - t0;
  t0 = performance.now();
  const P: BlockJacobi = buildBlockJacobi(H, o.blockSize, o.coarseLevel, { factor: work.factor, coarse: work.coarse });
  timings.precondition = performance.now() - t0;
  const order = tree.order;
  const store = hmatrixStorage(H);
  const precondition = (r: Float64Array, z: Float64Array) => applyBlockJacobi(P, r, z);
  // Stacked K vectors in tree order ↔ the caller's numbering.
  const toTree = (x: Float64Array, into: Float64Array, at: number) => {
    for (let k = 0; k < n; k++) into[at + k] = x[order[k]];
  };
  const fromTree = (from: Float64Array, at: number, y: Float64Array) => {
    for (let k = 0; k < n; k++) y[order[k]] = from[at + k];
  };
  const batch = {
    n,
    applyMany(xs: Float64Array[], ys: Float64Array[]) {
      const K = xs.length;
      const sx = new Float64Array(K * n), sy = new Float64Array(K * n);
      xs.forEach((x, v) => sx.set(x, v * n));
      product(H, sx, sy, K);
      ys.forEach((y, v) => y.set(sy.subarray(v * n, (v + 1) * n)));
    },
  };
  const solveMany: FastSolver['solveMany'] = (bs, x0s = [], control = {}) => {
    const bp = bs.map((b) => {
      const t = new Float64Array(n);
      toTree(b, t, 0);
      return t;
    });
    const initial = bs.map((_, k) => {
      const x0 = x0s[k];
      if (!x0) return null;
      const t = new Float64Array(n);
      toTree(x0, t, 0);
      return t;
    });
    const rs = gmresMany(batch, bp, {
      initial,
      tolerance: control.tol ?? o.tol ?? 1e-9,
      restart: o.restart,
      maxIterations: 1000,
      precondition,
      preconditionMany: (rs: Float64Array[], zs: Float64Array[]) => applyBlockJacobiMany(P, rs, zs, blockSolve),
      isCancelled: control.isCancelled,
    });
    if (!rs) return null;
    return rs.map((r) => {
      const x = new Float64Array(n);
      fromTree(r.x, 0, x);
      return { x, info: { iterations: r.iterations, relativeResidual: r.residual, converged: r.converged } };
    });
  };
  return {
    size: n,
    H,
    apply(x, y) {
      const xp = new Float64Array(n), yp = new Float64Array(n);
      toTree(x, xp, 0);
      product(H, xp, yp, 1);
      fromTree(yp, 0, y);
    },
    solve(b, x0 = null, control = {}) {
      const r = solveMany([b], [x0], control);
      return r ? r[0] : null;
    },
    solveMany,
    stats: {
      unknowns: n,
      denseEntries: store.dense,
      lowRankEntries: store.lowRank,
      bytes: store.bytes,
      maxRank: store.maxRank,
      meanRank: store.meanRank,
      blocks: store.blocks,
      timings,
    },
  };
}
