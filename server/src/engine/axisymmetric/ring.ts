// Potential and field of a uniformly charged ring about the z axis, and of a point charge on the axis,
// in the (r, z) half-plane. The kernel of the axisymmetric solver; also usable for ring charges in 3d.
import { completeEllipticInto, type EllipticPair } from '../special/elliptic';

const ke: EllipticPair = { k: 0, e: 0, kMinusE: 0 };

/**
 * Ring of radius a at height zs with line density λ (C/m along the ring, total charge q = 2πaλ),
 * observed at (r, z), in a medium of permittivity ε. With Δz = z − zs,
 *   d² = (r + a)² + Δz²,  d₂² = (r − a)² + Δz²,  m = 4ar/d²,  1 − m = d₂²/d²,
 *   φ   = q/(4πε) · (2/π) · K(m)/d = λ·a·K(m)/(π·ε·d)
 * (Ciftja, Babineaux and Hafeez, "The electrostatic potential of a uniformly charged ring", 2009).
 * The field is derived here from dK/dm = (E − (1−m)K)/(2m(1−m)) (DLMF 19.4.1, written for m = k²)
 * and checked against finite differences of φ in the tests; with C = λa/(πε):
 *   E_z = C·Δz·E(m)/(d·d₂²),
 *   E_r = C/(2rd)·[K(m) − E(m)·(a² − r² + Δz²)/d₂²]
 *       = C·[(K − E)/(2r·d) + E(m)·(r − a)/(d·d₂²)],
 * the last form free of cancellation near the axis (E_r = 0 on it). Near the ring itself
 * K ≈ ln(4d/d₂), the logarithmic singularity of a line charge.
 *
 * Adds w·(φ, E_r, E_z)·ε/λ, i.e. per unit λ/ε, into acc[0..2] (the field only when `field`).
 */
export function addRing(a: number, zs: number, r: number, z: number, w: number, field: boolean, acc: Float64Array): void {
  const dz = z - zs;
  const dz2 = dz * dz;
  const sum = r + a;
  const diff = r - a;
  const d2 = sum * sum + dz2;
  const near2 = diff * diff + dz2;
  if (near2 <= 1e-28 * d2) return; // on the ring itself: the caller integrates that exactly
  const d = Math.sqrt(d2);
  const m1 = near2 / d2;
  completeEllipticInto(ke, 1 - m1, m1);
  const c = (w * a) / Math.PI;
  acc[0] += (c * ke.k) / d;
  if (!field) return;
  acc[2] += (c * dz * ke.e) / (d * near2);
  if (r > 0) acc[1] += c * (ke.kMinusE / (2 * r * d) + (ke.e * diff) / (d * near2));
}

// Power series about m = 0 (DLMF 19.5.1, 19.5.2): K = (π/2)·Σ c_n·m^n, E = (π/2)·Σ c_n·m^n/(1 − 2n),
// c_n = [(½)_n/n!]²; hence K − E = (π/2)·Σ_{n≥1} c_n·m^n·2n/(2n − 1), free of cancellation.
const SERIES_TERMS = 16;
const seriesK = new Float64Array(SERIES_TERMS);
const seriesE = new Float64Array(SERIES_TERMS);
const seriesKE = new Float64Array(SERIES_TERMS);
for (let n = 0, c = 1; n < SERIES_TERMS; n++) {
  seriesK[n] = (Math.PI / 2) * c;
  seriesE[n] = (Math.PI / 2) * (c / (1 - 2 * n));
  seriesKE[n] = n === 0 ? 0 : (Math.PI / 2) * ((c * 2 * n) / (2 * n - 1));
  c *= ((2 * n + 1) / (2 * n + 2)) ** 2;
}
/** Below this m the series (16 terms: error below 0.2^16 ≈ 7e-12 of K); above it the polynomial forms. */
const SERIES_BELOW_M = 0.2;

/**
 * The ring kernel as addRing, with K and E from short closed approximations instead of iterations:
 * for m ≥ 0.2 the polynomial-and-logarithm forms of Hastings (Abramowitz and Stegun 17.3.34 and
 * 17.3.36, |error| ≤ 2e-8; coefficients from memory, checked against special/elliptic.ts in the
 * tests), below it the series about m = 0. Relative error about 1e-8 in φ and the field: for the
 * slice grids, where it is far below the interpolation's own error; the solve keeps addRing.
 */
export function addRingFast(a: number, zs: number, r: number, z: number, w: number, field: boolean, acc: Float64Array): void {
  const dz = z - zs;
  const dz2 = dz * dz;
  const sum = r + a;
  const diff = r - a;
  const d2 = sum * sum + dz2;
  const near2 = diff * diff + dz2;
  if (near2 <= 1e-28 * d2) return;
  const invD2 = 1 / d2;
  const invD = Math.sqrt(invD2);
  const m1 = near2 * invD2;
  const m = 4 * a * r * invD2;
  let k: number, e: number, kMinusE: number;
  if (m < SERIES_BELOW_M) {
    k = seriesK[SERIES_TERMS - 1];
    e = seriesE[SERIES_TERMS - 1];
    kMinusE = seriesKE[SERIES_TERMS - 1];
    for (let n = SERIES_TERMS - 2; n >= 0; n--) {
      k = k * m + seriesK[n];
      e = e * m + seriesE[n];
      kMinusE = kMinusE * m + seriesKE[n];
    }
  } else {
    const L = -Math.log(m1);
    k = 1.38629436112 + m1 * (0.09666344259 + m1 * (0.03590092383 + m1 * (0.03742563713 + m1 * 0.01451196212))) +
      L * (0.5 + m1 * (0.12498593597 + m1 * (0.06880248576 + m1 * (0.03328355346 + m1 * 0.00441787012))));
    e = 1 + m1 * (0.44325141463 + m1 * (0.0626060122 + m1 * (0.04757383546 + m1 * 0.01736506451))) +
      L * m1 * (0.2499836831 + m1 * (0.09200180037 + m1 * (0.04069697526 + m1 * 0.00526449639)));
    kMinusE = k - e;
  }
  const cd = (w * a * invD) / Math.PI;
  acc[0] += cd * k;
  if (!field) return;
  const eNear = (cd * e) / near2;
  acc[2] += eNear * dz;
  if (r > 0) acc[1] += (cd * kMinusE) / (2 * r) + eNear * diff;
}

/**
 * Point charge q on the axis at (0, zs), observed at (r, z): φ = q/(4πε·ρ), E = q/(4πε)·(x − xs)/ρ³
 * (Coulomb's law). Adds w·(φ, E_r, E_z)·ε/q into acc.
 */
export function addAxisPoint(zs: number, r: number, z: number, w: number, field: boolean, acc: Float64Array): void {
  const dz = z - zs;
  const rho2 = r * r + dz * dz;
  if (rho2 === 0) return;
  const rho = Math.sqrt(rho2);
  const c = w / (4 * Math.PI);
  acc[0] += c / rho;
  if (!field) return;
  const c3 = c / (rho2 * rho);
  acc[1] += c3 * r;
  acc[2] += c3 * dz;
}
