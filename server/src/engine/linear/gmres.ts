// Restarted GMRES with right preconditioning (Saad and Schultz, SIAM J. Sci. Stat. Comput. 7, 856,
// 1986; Saad, Iterative Methods for Sparse Linear Systems, 2nd ed., algorithm 9.5): minimises
// ‖b − A·x‖ over a Krylov space of A·M⁻¹, with modified Gram–Schmidt and Givens rotations.
// Generic over the operator: dense or matrix-free.
//
// Several right-hand sides run in lockstep (gmresMany): each system is the same restarted GMRES,
// written as a sequence of steps that each ask for one product y ← A·v; a round collects the
// products every unfinished system asks for and makes them in one pass of the operator (a dense or
// compressed product is memory-bound, so K vectors cost little more than one). Systems that
// converge drop out of the batch; each keeps its own iteration count and residual. gmres is the
// one-system case.
import type { LinearOperator } from './solver';

export interface GmresOptions {
  initial?: Float64Array;
  /** Stop when ‖b − A·x‖ ≤ tolerance·‖b‖. */
  tolerance: number;
  /** Krylov space size before a restart (default 60). */
  restart?: number;
  maxIterations?: number;
  /** z ← M⁻¹·r; identity when absent. */
  precondition?: (r: Float64Array, z: Float64Array) => void;
  /** The same M⁻¹ on several vectors at once (gmresMany batches each round's Arnoldi vectors through it). */
  preconditionMany?: (rs: Float64Array[], zs: Float64Array[]) => void;
  isCancelled?: () => boolean;
}

export interface GmresResult {
  x: Float64Array;
  iterations: number;
  /** Final relative residual. */
  residual: number;
  converged: boolean;
}

/** An operator that applies itself to several vectors in one pass: ys[k] ← A·xs[k]. */
export interface BatchOperator {
  n: number;
  applyMany(xs: Float64Array[], ys: Float64Array[]): void;
}

export type GmresManyOptions = Omit<GmresOptions, 'initial'> & { initial?: (Float64Array | null | undefined)[] };

function dot(a: Float64Array, b: Float64Array): number {
  let s = 0;
  for (let i = 0; i < a.length; i++) s += a[i] * b[i];
  return s;
}

/** A product request: the stepper wants y ← A·v (after v ← M⁻¹·pre, when pre is given) before its next step. */
interface Request {
  pre?: Float64Array;
  v: Float64Array;
  y: Float64Array;
}

/**
 * One system's restarted GMRES as a stepper: next() returns the product it needs next, or its
 * result once finished. Each call to next() follows the product of the previous request.
 */
function gmresStepper(n: number, b: Float64Array, initial: Float64Array | null | undefined, options: GmresManyOptions): () => Request | GmresResult {
  const m = Math.min(options.restart ?? 60, n);
  const maxIterations = options.maxIterations ?? Math.max(500, 4 * m);
  const M = options.precondition ?? ((r: Float64Array, z: Float64Array) => z.set(r));
  const tol = options.tolerance;
  const x = initial ? Float64Array.from(initial) : new Float64Array(n);
  const bNorm = Math.sqrt(dot(b, b));
  if (bNorm === 0) {
    const done: GmresResult = { x: new Float64Array(n), iterations: 0, residual: 0, converged: true };
    return () => done;
  }

  // The Krylov basis, grown as needed (most solves stop far short of the restart length).
  const V: Float64Array[] = [new Float64Array(n)];
  const H = new Float64Array((m + 1) * m); // H[i*m + j]
  const cs = new Float64Array(m), sn = new Float64Array(m), g = new Float64Array(m + 1);
  const w = new Float64Array(n), z = new Float64Array(n), r = new Float64Array(n);
  let iterations = 0;
  let residual = 1;
  let k = 0;
  // What the pending product was for: a restart's residual, an Arnoldi step, or a final check.
  let phase: 'start' | 'restart' | 'arnoldi' | 'confirm' = 'start';
  let result: GmresResult | null = null;

  const finish = (converged: boolean): GmresResult => (result = { x, iterations, residual, converged });
  const needResidual = (): Request => ({ v: x, y: r });
  // Next Arnoldi product: A·M⁻¹·v_k (the driver preconditions in a batch when it can).
  const batched = options.preconditionMany !== undefined;
  const needArnoldi = (): Request => {
    iterations++;
    if (batched) return { pre: V[k], v: z, y: w };
    M(V[k], z);
    return { v: z, y: w };
  };

  /** A cycle from r = A·x just computed: r ← b − r, then the first Arnoldi product (or done). */
  const startCycle = (): Request | GmresResult => {
    for (let i = 0; i < n; i++) r[i] = b[i] - r[i];
    const beta = Math.sqrt(dot(r, r));
    residual = beta / bNorm;
    if (residual <= tol) return finish(true);
    for (let i = 0; i < n; i++) V[0][i] = r[i] / beta;
    g.fill(0);
    g[0] = beta;
    k = 0;
    phase = 'arnoldi';
    return needArnoldi();
  };

  /** End of a cycle after k steps: x += M⁻¹·(V·y) with y = H⁻¹·g (upper triangular k×k). */
  const endCycle = (): Request | GmresResult => {
    const y = new Float64Array(k);
    for (let i = k - 1; i >= 0; i--) {
      let s = g[i];
      for (let j = i + 1; j < k; j++) s -= H[i * m + j] * y[j];
      y[i] = s / H[i * m + i];
    }
    w.fill(0);
    for (let j = 0; j < k; j++) {
      const vj = V[j], yj = y[j];
      for (let t = 0; t < n; t++) w[t] += yj * vj[t];
    }
    M(w, z);
    for (let t = 0; t < n; t++) x[t] += z[t];
    if (residual <= tol) {
      // Confirm with the true residual (the recurrence can drift); go on if it disagrees.
      phase = 'confirm';
      return needResidual();
    }
    if (iterations >= maxIterations) return finish(false);
    phase = 'restart';
    return needResidual();
  };

  /** One Arnoldi step from w = A·M⁻¹·v_k just computed. */
  const arnoldiStep = (): Request | GmresResult => {
    for (let i = 0; i <= k; i++) {
      const vi = V[i];
      const h = dot(w, vi);
      H[i * m + k] = h;
      for (let t = 0; t < n; t++) w[t] -= h * vi[t];
    }
    const h1 = Math.sqrt(dot(w, w));
    H[(k + 1) * m + k] = h1;
    if (V.length <= k + 1) V.push(new Float64Array(n));
    if (h1 !== 0) {
      const vk = V[k + 1];
      for (let t = 0; t < n; t++) vk[t] = w[t] / h1;
    }
    for (let i = 0; i < k; i++) {
      const a = H[i * m + k], c = H[(i + 1) * m + k];
      H[i * m + k] = cs[i] * a + sn[i] * c;
      H[(i + 1) * m + k] = -sn[i] * a + cs[i] * c;
    }
    const a = H[k * m + k], c = H[(k + 1) * m + k];
    const rho = Math.hypot(a, c);
    cs[k] = rho === 0 ? 1 : a / rho;
    sn[k] = rho === 0 ? 0 : c / rho;
    H[k * m + k] = rho;
    H[(k + 1) * m + k] = 0;
    g[k + 1] = -sn[k] * g[k];
    g[k] = cs[k] * g[k];
    residual = Math.abs(g[k + 1]) / bNorm;
    k++;
    if (residual <= tol || h1 === 0 || k >= m || iterations >= maxIterations) return endCycle();
    return needArnoldi();
  };

  return () => {
    if (result) return result;
    switch (phase) {
      case 'start':
        phase = 'restart';
        if (maxIterations <= 0) return finish(false);
        // From zero, A·x = 0: no product needed.
        if (!initial) return startCycle();
        return needResidual();
      case 'restart':
        return startCycle();
      case 'arnoldi':
        return arnoldiStep();
      case 'confirm': {
        let s = 0;
        for (let i = 0; i < n; i++) s += (b[i] - r[i]) * (b[i] - r[i]);
        residual = Math.sqrt(s) / bNorm;
        if (residual <= tol * 10) return finish(true);
        if (iterations >= maxIterations) return finish(false);
        // r = A·x is at hand: the next cycle starts from it.
        return startCycle();
      }
    }
  };
}

function isRequest(s: Request | GmresResult): s is Request {
  return (s as Request).v !== undefined;
}

/**
 * Solves A·x = b for each b in lockstep (see the header): one applyMany per round for every system
 * still running. Each system follows exactly the one-system GMRES. Null when cancelled.
 */
export function gmresMany(op: BatchOperator, bs: Float64Array[], options: GmresManyOptions): GmresResult[] | null {
  const steppers = bs.map((b, k) => gmresStepper(op.n, b, options.initial?.[k], options));
  const results: (GmresResult | null)[] = bs.map(() => null);
  let pending: { k: number; req: Request }[] = [];
  steppers.forEach((step, k) => {
    const s = step();
    if (isRequest(s)) pending.push({ k, req: s });
    else results[k] = s;
  });
  while (pending.length > 0) {
    if (options.isCancelled?.()) return null;
    const pre = pending.filter((p) => p.req.pre);
    if (pre.length > 0) {
      options.preconditionMany!(
        pre.map((p) => p.req.pre!),
        pre.map((p) => p.req.v),
      );
    }
    op.applyMany(
      pending.map((p) => p.req.v),
      pending.map((p) => p.req.y),
    );
    const next: typeof pending = [];
    for (const p of pending) {
      const s = steppers[p.k]();
      if (isRequest(s)) next.push({ k: p.k, req: s });
      else results[p.k] = s;
    }
    pending = next;
  }
  return results as GmresResult[];
}

/** A one-vector operator as a batch operator (one product per vector). */
export function batchOf(op: Pick<LinearOperator, 'n' | 'apply'> & { applyMany?: BatchOperator['applyMany'] }): BatchOperator {
  if (op.applyMany) return { n: op.n, applyMany: op.applyMany.bind(op) };
  return {
    n: op.n,
    applyMany(xs, ys) {
      for (let k = 0; k < xs.length; k++) op.apply(xs[k], ys[k]);
    },
  };
}

/** Solves A·x = b; null when cancelled. */
export function gmres(op: LinearOperator, b: Float64Array, options: GmresOptions): GmresResult | null {
  const { initial, ...rest } = options;
  const out = gmresMany(batchOf(op), [b], { ...rest, initial: [initial] });
  return out ? out[0] : null;
}
