// The clear O(N²) references the fast code is tested against: the full matrix from the same
// entries, its product, and LU solves (dense Gaussian elimination with partial pivoting, Golub and
// Van Loan, "Matrix Computations", 4th ed., Alg. 3.4.1). Only for tests and the benchmark.
import type { EntrySource } from './aca';
import { luFactor } from './block-jacobi';

/** The full n×n matrix, row-major. */
export function denseMatrix(src: EntrySource, n: number): Float64Array {
  const A = new Float64Array(n * n);
  const all = new Int32Array(n);
  for (let j = 0; j < n; j++) all[j] = j;
  const row = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    src.row(i, all, 0, n, row);
    A.set(row, i * n);
  }
  return A;
}

export function denseMatvec(A: Float64Array, x: Float64Array): Float64Array {
  const n = x.length;
  const y = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    let s = 0;
    for (let j = 0; j < n; j++) s += A[i * n + j] * x[j];
    y[i] = s;
  }
  return y;
}

/** Solves A·X = B for each right-hand side by one LU factorization (A is overwritten). */
export function denseSolve(A: Float64Array, n: number, rhs: Float64Array[]): Float64Array[] {
  const piv = luFactor(A, n);
  return rhs.map((b) => {
    const z = Float64Array.from(b);
    for (let i = 0; i < n; i++) {
      const p = piv[i];
      if (p !== i) {
        const t = z[i];
        z[i] = z[p];
        z[p] = t;
      }
    }
    for (let i = 0; i < n; i++) {
      let s = z[i];
      for (let j = 0; j < i; j++) s -= A[i * n + j] * z[j];
      z[i] = s;
    }
    for (let i = n - 1; i >= 0; i--) {
      let s = z[i];
      for (let j = i + 1; j < n; j++) s -= A[i * n + j] * z[j];
      z[i] = s / A[i * n + i];
    }
    return z;
  });
}
