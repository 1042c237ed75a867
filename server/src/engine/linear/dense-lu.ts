// Dense LU factorization with partial pivoting, P·A = L·U (Golub and Van Loan, Matrix Computations,
// 4th ed., algorithms 3.4.1 and 3.4.2), in place on a row-major Float64Array. Blocked right-looking
// form: a panel of BLOCK columns is factored, then the trailing matrix is updated tile by tile so
// that the rows of U being applied stay in cache. Generic: nothing here knows about panels or space.

const BLOCK = 48;
const TILE = 256;

export interface LuFactors {
  n: number;
  /** L (unit diagonal, below) and U (on and above the diagonal), row-major. */
  lu: Float64Array;
  /** Row interchanges: at step k, row k was swapped with row pivots[k]. */
  pivots: Int32Array;
  /** True when a zero pivot was met (the matrix is singular to working precision). */
  singular: boolean;
}

/** Factors a (overwritten) of size n×n. Returns null if isCancelled() turns true between blocks. */
export function luFactor(n: number, a: Float64Array, isCancelled?: () => boolean): LuFactors | null {
  const pivots = new Int32Array(n);
  let singular = false;
  for (let kb = 0; kb < n; kb += BLOCK) {
    if (isCancelled?.()) return null;
    const ke = Math.min(kb + BLOCK, n);
    // Factor the panel: columns kb..ke−1, rows kb..n−1.
    for (let k = kb; k < ke; k++) {
      let p = k;
      let best = Math.abs(a[k * n + k]);
      for (let i = k + 1; i < n; i++) {
        const v = Math.abs(a[i * n + k]);
        if (v > best) {
          best = v;
          p = i;
        }
      }
      pivots[k] = p;
      if (p !== k) {
        const rk = k * n, rp = p * n;
        for (let j = 0; j < n; j++) {
          const t = a[rk + j];
          a[rk + j] = a[rp + j];
          a[rp + j] = t;
        }
      }
      const pivot = a[k * n + k];
      if (pivot === 0) {
        singular = true;
        continue;
      }
      const inv = 1 / pivot;
      const rk = k * n;
      for (let i = k + 1; i < n; i++) {
        const ri = i * n;
        const l = (a[ri + k] *= inv);
        if (l !== 0) for (let j = k + 1; j < ke; j++) a[ri + j] -= l * a[rk + j];
      }
    }
    if (ke >= n) break;
    // U12 = L11⁻¹·A12 (rows kb..ke−1, columns ke..n−1).
    for (let k = kb; k < ke; k++) {
      const rk = k * n;
      for (let i = k + 1; i < ke; i++) {
        const ri = i * n;
        const l = a[ri + k];
        if (l !== 0) for (let j = ke; j < n; j++) a[ri + j] -= l * a[rk + j];
      }
    }
    // A22 ← A22 − L21·U12, one tile of columns at a time.
    for (let jb = ke; jb < n; jb += TILE) {
      const je = Math.min(jb + TILE, n);
      for (let i = ke; i < n; i++) {
        const ri = i * n;
        let k = kb;
        // Four rows of U at a time: one load and store of A22's row per four multiply-adds.
        for (; k + 3 < ke; k += 4) {
          const l0 = a[ri + k], l1 = a[ri + k + 1], l2 = a[ri + k + 2], l3 = a[ri + k + 3];
          const r0 = k * n, r1 = r0 + n, r2 = r1 + n, r3 = r2 + n;
          for (let j = jb; j < je; j++) a[ri + j] -= l0 * a[r0 + j] + l1 * a[r1 + j] + l2 * a[r2 + j] + l3 * a[r3 + j];
        }
        for (; k < ke; k++) {
          const l = a[ri + k];
          const rk = k * n;
          for (let j = jb; j < je; j++) a[ri + j] -= l * a[rk + j];
        }
      }
    }
  }
  return { n, lu: a, pivots, singular };
}

/** Solves A·x = b with the factors; b is left intact. */
export function luSolve(f: LuFactors, b: Float64Array): Float64Array {
  const x = Float64Array.from(b);
  luSolveInPlace(f, x);
  return x;
}

/** Solves A·x = b with the factors, x holding b on entry and the solution on return. */
export function luSolveInPlace(f: LuFactors, x: Float64Array): void {
  const { n, lu, pivots } = f;
  for (let k = 0; k < n; k++) {
    const p = pivots[k];
    if (p !== k) {
      const t = x[k];
      x[k] = x[p];
      x[p] = t;
    }
  }
  for (let i = 0; i < n; i++) {
    let s = x[i];
    const ri = i * n;
    for (let j = 0; j < i; j++) s -= lu[ri + j] * x[j];
    x[i] = s;
  }
  for (let i = n - 1; i >= 0; i--) {
    let s = x[i];
    const ri = i * n;
    for (let j = i + 1; j < n; j++) s -= lu[ri + j] * x[j];
    x[i] = s / lu[ri + i];
  }
}
