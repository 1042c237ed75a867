// Restarted GMRES with right preconditioning (Saad and Schultz, "GMRES: a generalized minimal
// residual algorithm", SIAM J. Sci. Stat. Comput. 7, 856-869, 1986; Saad, "Iterative Methods for
// Sparse Linear Systems", 2nd ed., 2003, Alg. 9.5).
//
// Solves A·x = b: Arnoldi on A·M⁻¹ with modified Gram–Schmidt, Givens rotations for the small
// least-squares problem, x = x0 + M⁻¹·(V·y). With right preconditioning the residual the rotations
// track is the true residual ‖b − A·x‖, so the stopping test ‖r‖ ≤ tol·‖b‖ means what it says.

export type Apply = (x: Float64Array, y: Float64Array) => void;

export interface GmresOptions {
  /** Relative residual tolerance ‖b − Ax‖/‖b‖ (default 1e-9). */
  tol?: number;
  /** Krylov vectors kept before a restart (default 60). */
  restart?: number;
  /** Most iterations in all (default 1000). */
  maxIterations?: number;
  /** Polled every iteration; when it returns true the solve stops and returns null. */
  isCancelled?: () => boolean;
}

export interface GmresResult {
  x: Float64Array;
  iterations: number;
  /** Final relative residual, recomputed from b − A·x. */
  relativeResidual: number;
  converged: boolean;
}

/** Solves A·x = b; `x0` is a warm start (the previous solution after an edit), else zeros. */
export function gmres(A: Apply, b: Float64Array, precondition: Apply | null, x0: Float64Array | null, options: GmresOptions = {}): GmresResult | null {
  const n = b.length;
  const tol = options.tol ?? 1e-9;
  const mMax = Math.max(1, Math.min(options.restart ?? 60, n));
  const maxIt = options.maxIterations ?? 1000;
  const x = x0 ? Float64Array.from(x0) : new Float64Array(n);
  const bNorm = norm(b);
  if (bNorm === 0) return { x: new Float64Array(n), iterations: 0, relativeResidual: 0, converged: true };
  const V: Float64Array[] = [];
  for (let k = 0; k <= mMax; k++) V.push(new Float64Array(n));
  const Z = new Float64Array(n);
  const w = new Float64Array(n);
  const H = new Float64Array((mMax + 1) * mMax); // column-major, (mMax+1) rows
  const cs = new Float64Array(mMax), sn = new Float64Array(mMax), g = new Float64Array(mMax + 1);
  let iterations = 0;
  let relRes = Infinity;
  const r = new Float64Array(n);
  while (iterations < maxIt) {
    // r = b − A·x
    A(x, r);
    for (let i = 0; i < n; i++) r[i] = b[i] - r[i];
    const beta = norm(r);
    relRes = beta / bNorm;
    if (relRes <= tol) break;
    for (let i = 0; i < n; i++) V[0][i] = r[i] / beta;
    g.fill(0);
    g[0] = beta;
    let k = 0;
    for (; k < mMax && iterations < maxIt; k++) {
      if (options.isCancelled?.()) return null;
      iterations++;
      if (precondition) precondition(V[k], Z);
      else Z.set(V[k]);
      A(Z, w);
      for (let j = 0; j <= k; j++) {
        const h = dot(w, V[j]);
        H[k * (mMax + 1) + j] = h;
        const vj = V[j];
        for (let i = 0; i < n; i++) w[i] -= h * vj[i];
      }
      const hk = norm(w);
      H[k * (mMax + 1) + k + 1] = hk;
      if (hk > 0) for (let i = 0; i < n; i++) V[k + 1][i] = w[i] / hk;
      // Apply the earlier rotations to the new column, then make a new one.
      const col = k * (mMax + 1);
      for (let j = 0; j < k; j++) {
        const t = cs[j] * H[col + j] + sn[j] * H[col + j + 1];
        H[col + j + 1] = -sn[j] * H[col + j] + cs[j] * H[col + j + 1];
        H[col + j] = t;
      }
      const a = H[col + k], c = H[col + k + 1];
      const d = Math.hypot(a, c);
      cs[k] = d === 0 ? 1 : a / d;
      sn[k] = d === 0 ? 0 : c / d;
      H[col + k] = d;
      H[col + k + 1] = 0;
      g[k + 1] = -sn[k] * g[k];
      g[k] = cs[k] * g[k];
      relRes = Math.abs(g[k + 1]) / bNorm;
      if (relRes <= tol || hk === 0) {
        k++;
        break;
      }
    }
    // Back-substitute H(0:k, 0:k)·y = g, then x += M⁻¹·(V·y).
    const y = new Float64Array(k);
    for (let i = k - 1; i >= 0; i--) {
      let s = g[i];
      for (let j = i + 1; j < k; j++) s -= H[j * (mMax + 1) + i] * y[j];
      y[i] = s / H[i * (mMax + 1) + i];
    }
    w.fill(0);
    for (let j = 0; j < k; j++) {
      const vj = V[j], yj = y[j];
      for (let i = 0; i < n; i++) w[i] += yj * vj[i];
    }
    if (precondition) precondition(w, Z);
    else Z.set(w);
    for (let i = 0; i < n; i++) x[i] += Z[i];
    if (relRes <= tol) {
      A(x, r);
      for (let i = 0; i < n; i++) r[i] = b[i] - r[i];
      relRes = norm(r) / bNorm;
      if (relRes <= tol * 10) break;
    }
  }
  return { x, iterations, relativeResidual: relRes, converged: relRes <= tol * 10 };
}

function dot(a: Float64Array, b: Float64Array): number {
  let s = 0;
  for (let i = 0; i < a.length; i++) s += a[i] * b[i];
  return s;
}
function norm(a: Float64Array): number {
  return Math.sqrt(dot(a, a));
}
