// Restarted GMRES with right preconditioning (Saad and Schultz, SIAM J. Sci. Stat. Comput. 7, 856,
// 1986; Saad, Iterative Methods for Sparse Linear Systems, 2nd ed., algorithm 9.5): minimises
// ‖b − A·x‖ over a Krylov space of A·M⁻¹, with modified Gram–Schmidt and Givens rotations.
// Generic over the operator: dense or matrix-free.
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
  isCancelled?: () => boolean;
}

export interface GmresResult {
  x: Float64Array;
  iterations: number;
  /** Final relative residual. */
  residual: number;
  converged: boolean;
}

function dot(a: Float64Array, b: Float64Array): number {
  let s = 0;
  for (let i = 0; i < a.length; i++) s += a[i] * b[i];
  return s;
}

/** Solves A·x = b; null when cancelled. */
export function gmres(op: LinearOperator, b: Float64Array, options: GmresOptions): GmresResult | null {
  const n = op.n;
  const m = Math.min(options.restart ?? 60, n);
  const maxIterations = options.maxIterations ?? Math.max(500, 4 * m);
  const M = options.precondition ?? ((r: Float64Array, z: Float64Array) => z.set(r));
  const x = options.initial ? Float64Array.from(options.initial) : new Float64Array(n);
  const bNorm = Math.sqrt(dot(b, b));
  if (bNorm === 0) return { x: new Float64Array(n), iterations: 0, residual: 0, converged: true };

  const V: Float64Array[] = Array.from({ length: m + 1 }, () => new Float64Array(n));
  const H = new Float64Array((m + 1) * m); // H[i*m + j]
  const cs = new Float64Array(m), sn = new Float64Array(m), g = new Float64Array(m + 1);
  const w = new Float64Array(n), z = new Float64Array(n), r = new Float64Array(n);
  let iterations = 0;
  let residual = 1;

  while (iterations < maxIterations) {
    op.apply(x, r);
    for (let i = 0; i < n; i++) r[i] = b[i] - r[i];
    let beta = Math.sqrt(dot(r, r));
    residual = beta / bNorm;
    if (residual <= options.tolerance) return { x, iterations, residual, converged: true };
    for (let i = 0; i < n; i++) V[0][i] = r[i] / beta;
    g.fill(0);
    g[0] = beta;
    let k = 0;
    for (; k < m && iterations < maxIterations; k++) {
      if (options.isCancelled?.()) return null;
      iterations++;
      M(V[k], z);
      op.apply(z, w);
      for (let i = 0; i <= k; i++) {
        const h = dot(w, V[i]);
        H[i * m + k] = h;
        const vi = V[i];
        for (let t = 0; t < n; t++) w[t] -= h * vi[t];
      }
      const h1 = Math.sqrt(dot(w, w));
      H[(k + 1) * m + k] = h1;
      if (h1 !== 0) for (let t = 0; t < n; t++) V[k + 1][t] = w[t] / h1;
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
      if (residual <= options.tolerance || h1 === 0) {
        k++;
        break;
      }
    }
    // y = H⁻¹·g (upper triangular k×k); x += M⁻¹·(V·y).
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
    beta = residual;
    if (residual <= options.tolerance) {
      // Confirm with the true residual (the recurrence can drift); loop again if it disagrees.
      op.apply(x, r);
      for (let i = 0; i < n; i++) r[i] = b[i] - r[i];
      residual = Math.sqrt(dot(r, r)) / bNorm;
      if (residual <= options.tolerance * 10) return { x, iterations, residual, converged: true };
    }
  }
  return { x, iterations, residual, converged: false };
}
