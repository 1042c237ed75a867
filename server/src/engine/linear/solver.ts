// The linear-algebra interface of the engine, generic over the space (3d, axisymmetric, planar) and
// over the method: a system A·x = b is given as a LinearOperator (a dense matrix, or matrix-free
// with a product and optional preconditioner hooks); a LinearSolver solves it for several
// right-hand sides at once, optionally from a warm start. chooseSolver is the single place that
// picks a method for a problem size; createSolver builds it. New methods (e.g. a treecode-GMRES)
// register a factory with registerSolver and add their rule to chooseSolver.
import { luFactor, luSolve } from './dense-lu';
import { batchOf, gmresMany } from './gmres';

/** A square linear operator y = A·x of size n. */
export interface LinearOperator {
  readonly n: number;
  /** y ← A·x. */
  apply(x: Float64Array, y: Float64Array): void;
  /** ys[k] ← A·xs[k] for several vectors in one pass over the operator, when it has such a product. */
  applyMany?(xs: Float64Array[], ys: Float64Array[]): void;
  /** The dense matrix, row-major n×n, when the operator has one (direct solvers need it). */
  readonly matrix?: Float64Array;
  /** The diagonal of A (Jacobi preconditioning), when known cheaply. */
  diagonal?(): Float64Array;
  /** A preconditioner z ≈ A⁻¹·r (e.g. a near-field block solve); overrides the diagonal when present. */
  precondition?(r: Float64Array, z: Float64Array): void;
  /** The same preconditioner on several vectors at once (zs[k] from rs[k]), when it has a batched form. */
  preconditionMany?(rs: Float64Array[], zs: Float64Array[]): void;
}

/** A dense operator over a row-major n×n matrix. */
export function denseOperator(n: number, matrix: Float64Array): LinearOperator {
  return {
    n,
    matrix,
    apply(x, y) {
      for (let i = 0; i < n; i++) {
        let s = 0;
        const row = i * n;
        for (let j = 0; j < n; j++) s += matrix[row + j] * x[j];
        y[i] = s;
      }
    },
    applyMany(xs, ys) {
      denseProductMany(n, matrix, xs, ys);
    },
    diagonal() {
      const d = new Float64Array(n);
      for (let i = 0; i < n; i++) d[i] = matrix[i * n + i];
      return d;
    },
  };
}

/** ys[k] ← A·xs[k] for all k, A square n×n row-major (see productMany), here or on several threads. */
export function denseProductMany(n: number, A: Float64Array, xs: Float64Array[], ys: Float64Array[]): void {
  denseProduct(n, A, xs, ys);
}

/** The dense product on this thread. */
export function denseProductHere(n: number, A: Float64Array, xs: Float64Array[], ys: Float64Array[]): void {
  productMany(n, n, A, xs, ys);
}

let denseProduct: typeof denseProductHere = denseProductHere;

/**
 * Fast-solver hook (owned by server/src/engine/fast/bem3d.ts): lets worker threads share the rows
 * of a dense product when the matrix lives in shared memory.
 */
export function registerDenseProduct(product: typeof denseProductHere): void {
  denseProduct = product;
}

/**
 * ys[k] ← A·xs[k] for all k, A rows×cols row-major (vectors may be subarrays): two rows of A
 * against up to four vectors at a time, so that each load of A serves four products and each load
 * of x two (the product is bound by loads in plain JavaScript: measured 1.5-2x faster than one
 * vector at a time). Each y_i is summed in the same order as a one-vector product, so the results
 * are identical to it.
 */
export function productMany(rows: number, cols: number, A: Float64Array, xs: Float64Array[], ys: Float64Array[]): void {
  let k = 0;
  for (; k + 4 <= xs.length; k += 4) productFour(rows, cols, A, xs[k], xs[k + 1], xs[k + 2], xs[k + 3], ys[k], ys[k + 1], ys[k + 2], ys[k + 3]);
  for (; k + 2 <= xs.length; k += 2) productTwo(rows, cols, A, xs[k], xs[k + 1], ys[k], ys[k + 1]);
  if (k < xs.length) productOne(rows, cols, A, xs[k], ys[k]);
}

function productFour(
  rows: number,
  n: number,
  A: Float64Array,
  x0: Float64Array,
  x1: Float64Array,
  x2: Float64Array,
  x3: Float64Array,
  y0: Float64Array,
  y1: Float64Array,
  y2: Float64Array,
  y3: Float64Array,
): void {
  let i = 0;
  for (; i + 2 <= rows; i += 2) {
    const ra = i * n, rb = ra + n;
    let a0 = 0, a1 = 0, a2 = 0, a3 = 0, b0 = 0, b1 = 0, b2 = 0, b3 = 0;
    for (let j = 0; j < n; j++) {
      const p = A[ra + j], q = A[rb + j];
      const v0 = x0[j], v1 = x1[j], v2 = x2[j], v3 = x3[j];
      a0 += p * v0;
      a1 += p * v1;
      a2 += p * v2;
      a3 += p * v3;
      b0 += q * v0;
      b1 += q * v1;
      b2 += q * v2;
      b3 += q * v3;
    }
    y0[i] = a0;
    y1[i] = a1;
    y2[i] = a2;
    y3[i] = a3;
    y0[i + 1] = b0;
    y1[i + 1] = b1;
    y2[i + 1] = b2;
    y3[i + 1] = b3;
  }
  if (i < rows) {
    productRow(n, A, i, x0, y0);
    productRow(n, A, i, x1, y1);
    productRow(n, A, i, x2, y2);
    productRow(n, A, i, x3, y3);
  }
}

/** Two vectors. */
function productTwo(rows: number, n: number, A: Float64Array, x0: Float64Array, x1: Float64Array, y0: Float64Array, y1: Float64Array): void {
  let i = 0;
  for (; i + 2 <= rows; i += 2) {
    const ra = i * n, rb = ra + n;
    let a0 = 0, a1 = 0, b0 = 0, b1 = 0;
    for (let j = 0; j < n; j++) {
      const p = A[ra + j], q = A[rb + j];
      const v0 = x0[j], v1 = x1[j];
      a0 += p * v0;
      a1 += p * v1;
      b0 += q * v0;
      b1 += q * v1;
    }
    y0[i] = a0;
    y1[i] = a1;
    y0[i + 1] = b0;
    y1[i + 1] = b1;
  }
  if (i < rows) {
    productRow(n, A, i, x0, y0);
    productRow(n, A, i, x1, y1);
  }
}

/** One vector, two rows at a time. */
function productOne(rows: number, n: number, A: Float64Array, x: Float64Array, y: Float64Array): void {
  let i = 0;
  for (; i + 2 <= rows; i += 2) {
    const ra = i * n, rb = ra + n;
    let a = 0, b = 0;
    for (let j = 0; j < n; j++) {
      const v = x[j];
      a += A[ra + j] * v;
      b += A[rb + j] * v;
    }
    y[i] = a;
    y[i + 1] = b;
  }
  if (i < rows) productRow(n, A, i, x, y);
}

function productRow(n: number, A: Float64Array, i: number, x: Float64Array, y: Float64Array): void {
  const row = i * n;
  let s = 0;
  for (let j = 0; j < n; j++) s += A[row + j] * x[j];
  y[i] = s;
}

/**
 * Dense GMRES stops at this relative residual by default. At 1e-6, on the 3d samples' coarse meshes
 * (900-1,400 panels, two-level preconditioner), capacitances differ from a 1e-11 solve by at most
 * 1e-7 relative and peak densities by at most 1e-5, within the panel integrals' own accuracy
 * (kernels/triangle.ts: 3e-6 and 2.5e-5) and far below the mesh error; 9 iterations instead of 11
 * at 1e-7 (measured here). (Earlier 1e-7, chosen when entries were good to 2e-7.)
 */
export const GMRES_TOLERANCE = 1e-6;

export interface LinearSolveOptions {
  /** Warm starts, one per right-hand side (iterative solvers; direct ones ignore them). */
  initial?: (Float64Array | null | undefined)[];
  /**
   * Relative residual at which iterative solvers stop (each solver has its default: the dense
   * GMRES's is GMRES_TOLERANCE).
   */
  tolerance?: number;
  /** Polled between steps; when it returns true the solve stops and returns null. */
  isCancelled?: () => boolean;
}

export interface LinearSolver {
  /** The method's name, for stats ("dense-lu", "dense-gmres", ...). */
  readonly name: string;
  /** Solves A·x = b for each right-hand side; null when cancelled. Direct solvers factor once and reuse it. */
  solve(rhs: Float64Array[], options?: LinearSolveOptions): Float64Array[] | null;
  /** Iterations used by the last solve, per right-hand side (iterative solvers). */
  readonly iterations: number[];
}

export type SolverKind = 'dense-lu' | 'dense-gmres' | (string & {});

/**
 * Above this size a dense matrix is solved iteratively (O(N²) per iteration) rather than by LU (O(N³)).
 * GMRES needed 10–30 iterations here, so for K right-hand sides it costs about 2·K·30·N² flops against
 * LU's ⅔·N³: LU pays off only for small systems (measured: cube at 1,452 panels, LU 11 s against
 * GMRES 4 s at 2,352 panels, on a loaded 2-core machine).
 */
export const LU_MAX_UNKNOWNS = 400;

/**
 * Largest system kept as a dense matrix (8·N² bytes: 288 MB at 6,000). Beyond it a matrix-free method
 * is needed; until one is registered for that size, callers coarsen the mesh to fit.
 */
export const DENSE_MAX_UNKNOWNS = 6000;

/** Fast-solver hook: above this size chooseSolver picks the hierarchical-matrix GMRES when registered (dense GMRES was faster at 2k panels, slower at 4k: scripts/bench-fast.ts). */
export const FAST_MIN_UNKNOWNS = 3500;

export interface SolverPreference {
  /** Force a method; 'auto' (default) lets chooseSolver decide. */
  kind?: SolverKind | 'auto';
}

/**
 * Picks the solver for n unknowns: dense LU up to LU_MAX_UNKNOWNS (factor once, then every new
 * right-hand side is a cheap back-substitution), dense GMRES above it.
 */
export function chooseSolver(n: number, preference: SolverPreference = {}): SolverKind {
  if (preference.kind && preference.kind !== 'auto') return preference.kind;
  // Fast-solver hook (owned by server/src/engine/fast/bem3d.ts, which registers 'hmatrix-gmres'):
  // above FAST_MIN_UNKNOWNS the hierarchical-matrix GMRES, once registered (scripts/bench-fast.ts).
  if (n > FAST_MIN_UNKNOWNS && factories.has('hmatrix-gmres')) return 'hmatrix-gmres';
  return n <= LU_MAX_UNKNOWNS ? 'dense-lu' : 'dense-gmres';
}

/** Whether a method needs the dense matrix assembled. */
export function needsDenseMatrix(kind: SolverKind): boolean {
  return kind === 'dense-lu' || kind === 'dense-gmres' || (factories.get(kind)?.needsDense ?? true);
}

interface SolverFactory {
  needsDense: boolean;
  create(op: LinearOperator): LinearSolver;
}
const factories = new Map<string, SolverFactory>();

/** Makes a new method available to createSolver (for solvers that live in other modules). */
export function registerSolver(kind: string, needsDense: boolean, create: (op: LinearOperator) => LinearSolver): void {
  factories.set(kind, { needsDense, create });
}

/** Builds a solver of the given kind for op. Throws only on a programming error (unknown kind). */
export function createSolver(op: LinearOperator, kind: SolverKind = chooseSolver(op.n)): LinearSolver {
  if (kind === 'dense-lu') return denseLuSolver(op);
  if (kind === 'dense-gmres') return gmresSolver(op, 'dense-gmres');
  const factory = factories.get(kind);
  if (!factory) throw new Error(`unknown solver kind ${kind}`);
  return factory.create(op);
}

/** Direct solver: LU with partial pivoting, factored lazily on the first solve and kept. */
function denseLuSolver(op: LinearOperator): LinearSolver {
  if (!op.matrix) throw new Error('dense-lu needs a dense matrix');
  const matrix = op.matrix;
  let factors: ReturnType<typeof luFactor> | null = null;
  return {
    name: 'dense-lu',
    iterations: [],
    solve(rhs, options) {
      if (!factors) {
        // The factorization overwrites its input: keep the operator's matrix intact.
        factors = luFactor(op.n, Float64Array.from(matrix), options?.isCancelled);
        if (!factors) return null;
      }
      return rhs.map((b) => luSolve(factors!, b));
    },
  };
}

/** Iterative solver: restarted GMRES, preconditioned by op.precondition or else by the diagonal. */
export function gmresSolver(op: LinearOperator, name: string): LinearSolver {
  let precondition = op.precondition?.bind(op);
  if (!precondition && op.diagonal) {
    const d = op.diagonal();
    const inv = d.map((v) => (v !== 0 ? 1 / v : 1));
    precondition = (r, z) => {
      for (let i = 0; i < r.length; i++) z[i] = r[i] * inv[i];
    };
  }
  const solver: LinearSolver = {
    name,
    iterations: [],
    solve(rhs, options) {
      // All right-hand sides in lockstep: one pass of the operator per round serves them all.
      const results = gmresMany(batchOf(op), rhs, {
        initial: options?.initial,
        tolerance: options?.tolerance ?? GMRES_TOLERANCE,
        precondition,
        preconditionMany: op.precondition ? op.preconditionMany?.bind(op) : undefined,
        isCancelled: options?.isCancelled,
      });
      if (!results) return null;
      solver.iterations.length = 0;
      solver.iterations.push(...results.map((r) => r.iterations));
      return results.map((r) => r.x);
    },
  };
  return solver;
}
