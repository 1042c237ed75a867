// Plugs the fast methods into the 3D solver: registers the hierarchical-matrix GMRES
// ('hmatrix-gmres') with the linear-algebra interface and the 3D operator factory, and answers
// field evaluations of large systems by the treecode. Importing this module registers it.
//
// Hooks in files owned by others (each marked "fast-solver hook" there):
// - linear/solver.ts chooseSolver: systems above FAST_MIN_UNKNOWNS go to 'hmatrix-gmres' once registered;
// - bem3d/field.ts potentialAndField: imports this module and asks fastPotentialAndGradient first;
// - bem3d/system.ts registerRowFiller, registerThinRowFiller: dense rows are filled on all threads;
// - linear/solver.ts registerDenseProduct: dense products share their rows between threads.
import { registerBem3dOperator } from '../bem3d/operator';
import { fillDenseRows, fillThinRows, INV_4PI, registerRowFiller, registerThinRowFiller, type Bem3dSystem, type EvalMode } from '../bem3d/system';
import type { Image } from '../bem3d/images';
import type { Panels } from '../kernels/triangle';
import { runDenseProduct, runRows, type DenseProductJob, type RowsJob } from './jobs';
import { fastThreads, runParallel, shared } from './pool';
import { denseProductHere, FAST_MIN_UNKNOWNS, gmresSolver, registerDenseProduct, registerSolver, type LinearOperator, type LinearSolver } from '../linear/solver';
import type { FastSolver } from './fast-solver';
import { FieldEvaluator } from './field-evaluator';
import { buildPanelSolver } from './panel-solver';

export const FAST_KIND = 'hmatrix-gmres';
/** From this many panels, field evaluation goes through the treecode (the solver's threshold, linear/solver.ts). */
export const FAST_EVAL_MIN_PANELS = FAST_MIN_UNKNOWNS;
/** Opening angles: slices (about 1e-3 relative) and probes or surface fields (about 2e-5). */
export const GRID_THETA = 0.5;
export const PRECISE_THETA = 0.15;

interface FastOperator extends LinearOperator {
  fast: FastSolver;
}

/** The H-matrix operator of a 3D system (entries as bem3d/system.ts entry()); null when cancelled. */
export function fastOperator(sys: Bem3dSystem, isCancelled?: () => boolean): FastOperator | null {
  const fast = buildPanelSolver(
    { vertices: sys.mesh.vertices, triangles: sys.mesh.triangles, points: sys.points, scale: INV_4PI, images: sys.images },
    {},
    sys.panels,
    isCancelled,
  );
  return fast ? { n: sys.n, fast, apply: (x, y) => fast.apply(x, y) } : null;
}

/** GMRES relative residual of 3D solves by the fast solver (see fastLinearSolver). */
export const FAST_TOLERANCE = 1e-8;

/**
 * GMRES on the H-matrix with its block-Jacobi preconditioner, warm-started when given an initial guess.
 * Default relative residual 1e-8: with ACA at 3e-7 the charges then agree with dense LU to about 1e-6.
 */
export function fastLinearSolver(op: LinearOperator): LinearSolver {
  const fast = (op as FastOperator).fast;
  // An operator from elsewhere (another space) has no H-matrix: plain GMRES on it.
  if (!fast) return gmresSolver(op, 'dense-gmres');
  const solver: LinearSolver = {
    name: FAST_KIND,
    iterations: [],
    solve(rhs, options) {
      solver.iterations.length = 0;
      // All right-hand sides in lockstep: one pass over the H-matrix per round serves them all.
      const rs = fast.solveMany(rhs, options?.initial ?? [], { tol: options?.tolerance ?? FAST_TOLERANCE, isCancelled: options?.isCancelled });
      if (!rs) return null;
      for (const r of rs) solver.iterations.push(r.info.iterations);
      return rs.map((r) => r.x);
    },
  };
  return solver;
}

/** Below this many rows × columns a dense fill stays on the calling thread (starting threads costs more). */
const PARALLEL_ROWS_MIN_ENTRIES = 2e5;

/**
 * fillDenseRows on all threads: workers take chunks of rows from a shared counter and write them
 * into the shared matrix in place. Needs A in a SharedArrayBuffer; anything else, or one thread,
 * fills here. False when cancelled.
 */
export function fillRowsParallel(P: Panels, points: Float64Array, images: readonly Image[], rows: Int32Array, A: Float64Array, isCancelled?: () => boolean, cols?: Int32Array): boolean {
  const here = () => fillDenseRows(P, points, images, rows, A, isCancelled, cols);
  return rowsParallel(P, points, images, rows, A, null, here, isCancelled, cols);
}

/** fillThinRows on all threads, as fillRowsParallel (the normal-field rows must be shared too). */
export function fillThinRowsParallel(
  P: Panels,
  points: Float64Array,
  normals: Float64Array,
  images: readonly Image[],
  thinPanels: Int32Array,
  slots: Int32Array,
  A: Float64Array,
  gradient: Float64Array,
  isCancelled?: () => boolean,
  cols?: Int32Array,
): boolean {
  const here = () => fillThinRows(P, points, normals, images, thinPanels, slots, A, gradient, isCancelled, cols);
  if (!(gradient.buffer instanceof SharedArrayBuffer)) return here();
  return rowsParallel(P, points, images, slots, A, { panels: shared(thinPanels), normals: shared(normals), gradient }, here, isCancelled, cols);
}

function rowsParallel(
  P: Panels,
  points: Float64Array,
  images: readonly Image[],
  rows: Int32Array,
  A: Float64Array,
  thin: RowsJob['thin'],
  here: () => boolean,
  isCancelled?: () => boolean,
  cols?: Int32Array,
): boolean {
  const threads = fastThreads();
  const entries = rows.length * (cols ? cols.length : P.count);
  if (threads < 2 || !(A.buffer instanceof SharedArrayBuffer) || entries < PARALLEL_ROWS_MIN_ENTRIES) return here();
  const job: RowsJob = {
    kind: 'rows',
    vertices: shared(P.vertices),
    triangles: shared(Uint32Array.from({ length: 3 * P.count }, (_, k) => k)),
    points: shared(points),
    images: images.map((im) => ({ sign: im.sign, flip: [...im.flip] as Image['flip'], shift: [...im.shift] as Image['shift'] })),
    rows: shared(rows),
    cols: cols ? shared(cols) : null,
    A,
    thin,
    counter: new Int32Array(new SharedArrayBuffer(4)),
    chunk: 8,
  };
  let finished = true;
  const replies = runParallel(threads, job as unknown as Record<string, unknown>, () => {
    finished = runRows(job, P, isCancelled);
  });
  if (!finished) return false;
  // A worker failed: the rows it took may be unfilled, so fill them all here (the reference path).
  if (!replies) return here();
  return true;
}

/** Below this many unknowns a dense product stays on the calling thread. */
const PARALLEL_PRODUCT_MIN_UNKNOWNS = 400;

let productScratch: Float64Array<ArrayBufferLike> = new Float64Array(0);

/** The dense product with rows shared between threads; the matrix must be in shared memory. */
export function denseProductParallel(n: number, A: Float64Array, xs: Float64Array[], ys: Float64Array[]): void {
  const threads = fastThreads();
  if (threads < 2 || n < PARALLEL_PRODUCT_MIN_UNKNOWNS || !(A.buffer instanceof SharedArrayBuffer)) return denseProductHere(n, A, xs, ys);
  const K = xs.length;
  // Shared vectors kept between products (a GMRES solve makes one per round; fresh shared buffers
  // each time were garbage the collector had to chase).
  if (productScratch.length < 2 * K * n) productScratch = new Float64Array(new SharedArrayBuffer(16 * K * n));
  const sx = productScratch.subarray(0, K * n), sy = productScratch.subarray(K * n, 2 * K * n);
  xs.forEach((x, v) => sx.set(x, v * n));
  const job: DenseProductJob = { kind: 'dense-product', A, n, K, xs: sx, ys: sy, counter: new Int32Array(new SharedArrayBuffer(4)), chunk: 32 };
  const replies = runParallel(threads, job as unknown as Record<string, unknown>, () => runDenseProduct(job));
  if (!replies) return denseProductHere(n, A, xs, ys);
  ys.forEach((y, v) => y.set(job.ys.subarray(v * n, (v + 1) * n)));
}

registerRowFiller(fillRowsParallel);
registerThinRowFiller(fillThinRowsParallel);
registerDenseProduct(denseProductParallel);
registerBem3dOperator(FAST_KIND, (sys, isCancelled) => fastOperator(sys, isCancelled));
registerSolver(FAST_KIND, false, fastLinearSolver);

const evaluators = new WeakMap<Float64Array, { sys: Bem3dSystem; evaluator: FieldEvaluator }>();

/**
 * [φ, ∂φ/∂x, ∂φ/∂y, ∂φ/∂z] of the scaled densities xs at (x, y, z) into out, by the treecode, when
 * the system is large enough for it to pay; returns false (and leaves out alone) otherwise.
 */
export function fastPotentialAndGradient(sys: Bem3dSystem, xs: Float64Array, x: number, y: number, z: number, out: Float64Array, mode: EvalMode): boolean {
  if (sys.n < FAST_EVAL_MIN_PANELS) return false;
  let hit = evaluators.get(xs);
  if (!hit || hit.sys !== sys) {
    hit = { sys, evaluator: new FieldEvaluator(sys.mesh, xs, INV_4PI, sys.images, {}, sys.panels) };
    evaluators.set(xs, hit);
  }
  const [phi, ex, ey, ez] = hit.evaluator.at(x, y, z, mode === 'grid' ? GRID_THETA : PRECISE_THETA);
  out[0] = phi;
  out[1] = -ex;
  out[2] = -ey;
  out[3] = -ez;
  return true;
}

/** Many points at once (slices, probe lines), on several threads: [φ, ∂φ/∂x, ∂φ/∂y, ∂φ/∂z] per point. */
export function fastPotentialAndGradientMany(sys: Bem3dSystem, xs: Float64Array, points: Float64Array, mode: EvalMode): Float64Array {
  let hit = evaluators.get(xs);
  if (!hit || hit.sys !== sys) {
    hit = { sys, evaluator: new FieldEvaluator(sys.mesh, xs, INV_4PI, sys.images, {}, sys.panels) };
    evaluators.set(xs, hit);
  }
  const v = hit.evaluator.evaluate(points, mode === 'grid' ? GRID_THETA : PRECISE_THETA);
  const out = new Float64Array(4 * v.potential.length);
  for (let i = 0; i < v.potential.length; i++) {
    out[4 * i] = v.potential[i];
    for (let c = 0; c < 3; c++) out[4 * i + 1 + c] = -v.field[3 * i + c];
  }
  return out;
}
