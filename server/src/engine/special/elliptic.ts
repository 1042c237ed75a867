// Complete elliptic integrals of the first and second kind, with the parameter m = k²:
//   K(m) = ∫₀^{π/2} dθ / √(1 − m·sin²θ),   E(m) = ∫₀^{π/2} √(1 − m·sin²θ) dθ.
// Used by the ring kernel of the axisymmetric solver and by ring charges in 3d.
//
// Two methods, each where it is accurate to a few ulps:
// - m1 = 1 − m ≥ 0.05: the arithmetic–geometric mean (DLMF 19.8.1 and 19.8.2; Abramowitz and
//   Stegun 17.6). K = π / (2·AGM(1, √m1)); E = K·(1 − Σ 2^{n−1} c_n²) with c_0 = √m and
//   c_{n+1} = c_n² / (4·a_{n+1}), which never subtracts nearly equal numbers.
// - m1 < 0.05: the logarithmic series about m = 1 (DLMF 19.12.1 and 19.12.2), which carries the
//   log singularity K ≈ ln(4/√m1) explicitly, so E (which tends to 1 while K grows) loses nothing
//   to cancellation.
// Callers that know m1 = 1 − m more accurately than 1 − m can be formed (the ring kernel does:
// m1 = d₂²/d², a ratio of squared distances) pass it as the second argument.

export interface EllipticPair {
  /** K(m), complete elliptic integral of the first kind. */
  k: number;
  /** E(m), complete elliptic integral of the second kind. */
  e: number;
  /** K(m) − E(m), formed without cancellation for small m (it is ≈ π·m/4 there). */
  kMinusE: number;
}

const SERIES_BELOW = 0.05;
const LN4 = Math.log(4);

/**
 * K(m), E(m) and K(m) − E(m) for 0 ≤ m ≤ 1 (m1 = 1 − m by default). Outside that range K and E
 * are NaN; at m = 1, K = +∞ and E = 1.
 */
export function completeElliptic(m: number, m1: number = 1 - m): EllipticPair {
  return completeEllipticInto({ k: 0, e: 0, kMinusE: 0 }, m, m1);
}

/** As completeElliptic, writing into `out` (no allocation, for inner loops); returns out. */
export function completeEllipticInto(out: EllipticPair, m: number, m1: number = 1 - m): EllipticPair {
  if (!(m >= 0 && m1 >= 0 && m <= 1 && m1 <= 1)) {
    out.k = out.e = out.kMinusE = NaN;
  } else if (m1 === 0) {
    out.k = out.kMinusE = Infinity;
    out.e = 1;
  } else if (m1 < SERIES_BELOW) nearOne(m1, out);
  else byAgm(m, m1, out);
  return out;
}

/** K(m) alone; m is the parameter (m = k²). */
export function ellipK(m: number): number {
  return completeElliptic(m).k;
}

/** E(m) alone; m is the parameter (m = k²). */
export function ellipE(m: number): number {
  return completeElliptic(m).e;
}

// AGM (DLMF 19.8.1–19.8.2): a0 = 1, b0 = √m1, c0 = √m; a_{n+1} = (a_n + b_n)/2,
// b_{n+1} = √(a_n b_n), c_{n+1} = c_n²/(4 a_{n+1}); K = π/(2 a_∞); E = K (1 − Σ_{n≥0} 2^{n−1} c_n²).
function byAgm(m: number, m1: number, out: EllipticPair): void {
  let a = 1;
  let b = Math.sqrt(m1);
  let c2 = m; // c_n²
  let weight = 0.5; // 2^{n−1}
  let sum = weight * c2;
  for (let n = 0; n < 40; n++) {
    const aNext = 0.5 * (a + b);
    const bNext = Math.sqrt(a * b);
    c2 = (c2 * c2) / (16 * aNext * aNext); // c_{n+1}² = c_n⁴ / (16 a_{n+1}²)
    weight *= 2;
    a = aNext;
    b = bNext;
    const term = weight * c2;
    sum += term;
    if (term <= 1e-17 * sum && Math.abs(a - b) <= 1e-15 * a) break;
  }
  const k = Math.PI / (2 * a);
  out.k = k;
  out.e = k * (1 - sum);
  out.kMinusE = k * sum;
}

// Series about m = 1 (DLMF 19.12.1, 19.12.2), with k'² = m1 and L = ln(1/k') = −½·ln(m1):
//   K = Σ_{n≥0} [(½)_n / n!]² m1^n (L + d_n),
//   E = 1 + ½ Σ_{n≥0} [(½)_n (3/2)_n / ((2)_n n!)] m1^{n+1} (L + d_n − 1/((2n+1)(2n+2))),
// with d_0 = ln 4 and d_{n+1} = d_n − 2/((2n+1)(2n+2)) (d_n = ψ(1+n) − ψ(½+n)).
function nearOne(m1: number, out: EllipticPair): void {
  const L = -0.5 * Math.log(m1);
  let a = 1; // [(½)_n / n!]²
  let b = 1; // (½)_n (3/2)_n / ((2)_n n!)
  let p = 1; // m1^n
  let d = LN4;
  let k = 0;
  let eSum = 0;
  for (let n = 0; n < 60; n++) {
    const step = 1 / ((2 * n + 1) * (2 * n + 2));
    const kTerm = a * p * (L + d);
    const eTerm = b * p * m1 * (L + d - step);
    k += kTerm;
    eSum += eTerm;
    if (Math.abs(kTerm) <= 1e-17 * k && Math.abs(eTerm) <= 1e-17 * Math.abs(eSum)) break;
    const r = (n + 0.5) / (n + 1);
    a *= r * r;
    b *= ((n + 0.5) * (n + 1.5)) / ((n + 2) * (n + 1));
    p *= m1;
    d -= 2 * step;
  }
  const e = 1 + 0.5 * eSum;
  out.k = k;
  out.e = e;
  out.kMinusE = k - e;
}
