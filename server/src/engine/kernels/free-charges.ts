// Potential kernels of free charges in 3d: S(r) = ∫ ρ(r')/|r − r'| dV' and its gradient, in C/m and
// C/m² (the potential is S/(4π·ε0·εr), the field −∇S/(4π·ε0·εr)). Images are the caller's business.
//
// - Point charge q at p: S = q/|r − p| (Coulomb's law).
// - Uniform segment A→B of density λ (textbook, e.g. Griffiths, Introduction to Electrodynamics, ex. 2.3
//   generalised): with unit tangent t̂, l1,2 = (A|B − r)·t̂, R1,2 = |A|B − r|, ρ⃗ the part of r − A normal
//   to the line: S = λ·ln((R2 + l2)/(R1 + l1)),
//   ∇S = λ·[t̂·(1/R1 − 1/R2) − ρ⃗·(l2/R2 − l1/R1)/ρ²].
// - Uniform ring of radius a, density λ (total charge Q = 2πaλ), centre c, unit axis â; at axial height
//   z and radial distance ρ: d² = (a + ρ)² + z², d2² = (a − ρ)² + z², m = 4aρ/d² (so 1 − m = d2²/d²),
//   S = λ·4a·K(m)/d (Ciftja, Babineaux and Hafeez, "The electrostatic potential of a uniformly charged
//   ring", 2009: V = k·Q·(2/π)·K(m)/d), and differentiating (K' and E' in m, common practice):
//   −∂S/∂z = λ·4a·z·E(m)/(d·d2²),
//   −∂S/∂ρ = λ·(2a/(ρ·d))·[K(m) − E(m)·(a² − ρ² + z²)/d2²]
//          = λ·(2a/(ρ·d))·[(K − E) − 2ρ(a − ρ)·E/d2²]   (the form used: no cancellation as ρ → 0).
import type { Charge3d } from '../../../../grammar/scene';
import { completeElliptic } from '../special/elliptic';

type Vec = [number, number, number];

function unit(v: readonly number[]): Vec {
  const l = Math.hypot(v[0], v[1], v[2]);
  return l > 0 ? [v[0] / l, v[1] / l, v[2] / l] : [0, 0, 1];
}

/**
 * ln((R2 + l2)/(R1 + l1)) (l1 < l2) without cancellation: when both l are negative it equals
 * ln((R1 − l1)/(R2 − l2)), since (R + l)(R − l) = ρ²; across the foot of the normal it is
 * ln((R2 + l2)(R1 − l1)/ρ²).
 */
function logRatio(R2: number, l2: number, R1: number, l1: number, rhoSq: number): number {
  if (l1 >= 0) return Math.log((R2 + l2) / (R1 + l1));
  if (l2 <= 0) return Math.log((R1 - l1) / (R2 - l2));
  return Math.log(((R2 + l2) * (R1 - l1)) / rhoSq);
}

/** Total charge of a free charge, C. */
export function chargeTotal(c: Charge3d): number {
  if (c.kind === 'point') return c.value;
  if (c.kind === 'line') return c.density * Math.hypot(c.to[0] - c.from[0], c.to[1] - c.from[1], c.to[2] - c.from[2]);
  return c.density * 2 * Math.PI * c.radius;
}

/** S(r) = ∫ρ/R at (x, y, z), C/m. */
export function chargePotential(c: Charge3d, x: number, y: number, z: number): number {
  if (c.kind === 'point') {
    return c.value / Math.hypot(x - c.at[0], y - c.at[1], z - c.at[2]);
  }
  if (c.kind === 'line') {
    const L = Math.hypot(c.to[0] - c.from[0], c.to[1] - c.from[1], c.to[2] - c.from[2]);
    if (L === 0) return 0;
    const t = unit([c.to[0] - c.from[0], c.to[1] - c.from[1], c.to[2] - c.from[2]]);
    const ax = c.from[0] - x, ay = c.from[1] - y, az = c.from[2] - z;
    const l1 = ax * t[0] + ay * t[1] + az * t[2];
    const l2 = l1 + L;
    const R1sq = ax * ax + ay * ay + az * az;
    const rhoSq = Math.max(R1sq - l1 * l1, 0);
    const R1 = Math.sqrt(R1sq);
    const R2 = Math.sqrt(rhoSq + l2 * l2);
    return c.density * logRatio(R2, l2, R1, l1, rhoSq);
  }
  const { z: h, rho } = ringCoordinates(c, x, y, z);
  const a = c.radius;
  const d2 = (a + rho) ** 2 + h * h;
  const dm2 = (a - rho) ** 2 + h * h;
  const d = Math.sqrt(d2);
  const { k } = completeElliptic((4 * a * rho) / d2, dm2 / d2);
  return (c.density * 4 * a * k) / d;
}

/** ∇S at (x, y, z), written to out[at..at+2], C/m². */
export function chargeGradient(c: Charge3d, x: number, y: number, z: number, out: Float64Array, at = 0): void {
  if (c.kind === 'point') {
    const dx = x - c.at[0], dy = y - c.at[1], dz = z - c.at[2];
    const r2 = dx * dx + dy * dy + dz * dz;
    const s = -c.value / (r2 * Math.sqrt(r2));
    out[at] = s * dx;
    out[at + 1] = s * dy;
    out[at + 2] = s * dz;
    return;
  }
  if (c.kind === 'line') {
    const L = Math.hypot(c.to[0] - c.from[0], c.to[1] - c.from[1], c.to[2] - c.from[2]);
    out[at] = out[at + 1] = out[at + 2] = 0;
    if (L === 0) return;
    const t = unit([c.to[0] - c.from[0], c.to[1] - c.from[1], c.to[2] - c.from[2]]);
    const ax = c.from[0] - x, ay = c.from[1] - y, az = c.from[2] - z;
    const l1 = ax * t[0] + ay * t[1] + az * t[2];
    const l2 = l1 + L;
    // ρ⃗ = (r − A) − ((r − A)·t̂)t̂ = −a + l1·t̂ with a = A − r.
    const px = -ax + l1 * t[0], py = -ay + l1 * t[1], pz = -az + l1 * t[2];
    const rhoSq = px * px + py * py + pz * pz;
    const R1 = Math.sqrt(rhoSq + l1 * l1);
    const R2 = Math.sqrt(rhoSq + l2 * l2);
    // (l2/R2 − l1/R1)/ρ², with l/R = sign(l) ∓ ρ²/(R(R ± l)) to avoid 0/0 on the line's extension.
    const q = (l: number, R: number) => (l >= 0 ? -1 / (R * (R + l)) : 1 / (R * (R - l)));
    const s1 = l1 >= 0 ? 1 : -1, s2 = l2 >= 0 ? 1 : -1;
    const radial = (s2 !== s1 ? (s2 - s1) / rhoSq : 0) + q(l2, R2) - q(l1, R1);
    const along = 1 / R1 - 1 / R2;
    out[at] = c.density * (t[0] * along - px * radial);
    out[at + 1] = c.density * (t[1] * along - py * radial);
    out[at + 2] = c.density * (t[2] * along - pz * radial);
    return;
  }
  const { z: h, rho, axis, radial } = ringCoordinates(c, x, y, z);
  const a = c.radius;
  const d2 = (a + rho) ** 2 + h * h;
  const dm2 = (a - rho) ** 2 + h * h;
  const d = Math.sqrt(d2);
  const { e, kMinusE } = completeElliptic((4 * a * rho) / d2, dm2 / d2);
  const fz = (4 * a * h * e) / (d * dm2);
  // (K − E)/ρ stays finite as ρ → 0 (K − E ≈ π·m/4 = π·a·ρ/d²).
  const fr = rho > 1e-14 * a ? ((2 * a) / d) * (kMinusE / rho - (2 * (a - rho) * e) / dm2) : 0;
  for (let i = 0; i < 3; i++) out[at + i] = -c.density * (fz * axis[i] + fr * radial[i]);
}

/** Axial height, radial distance and unit vectors of a point relative to a ring. */
function ringCoordinates(c: Extract<Charge3d, { kind: 'ring' }>, x: number, y: number, z: number) {
  const axis = unit(c.axis);
  const px = x - c.center[0], py = y - c.center[1], pz = z - c.center[2];
  const h = px * axis[0] + py * axis[1] + pz * axis[2];
  const rx = px - h * axis[0], ry = py - h * axis[1], rz = pz - h * axis[2];
  const rho = Math.hypot(rx, ry, rz);
  const radial: Vec = rho > 0 ? [rx / rho, ry / rho, rz / rho] : [0, 0, 0];
  return { z: h, rho, axis, radial };
}

/**
 * Quadrature points along a free charge, with the charge each carries (sums to chargeTotal):
 * the point itself; 16-point Gauss–Legendre on a segment; 64 equal points on a ring (the trapezoid
 * rule, spectrally accurate for a periodic integrand). Used for energies and mutual potentials.
 */
export function chargeSamples(c: Charge3d): { points: Vec[]; charges: number[] } {
  if (c.kind === 'point') return { points: [[c.at[0], c.at[1], c.at[2]]], charges: [c.value] };
  if (c.kind === 'line') {
    const total = chargeTotal(c);
    const points: Vec[] = [];
    const charges: number[] = [];
    for (let i = 0; i < GL16_X.length; i++) {
      const s = 0.5 * (1 + GL16_X[i]);
      points.push([0, 1, 2].map((k) => c.from[k] + s * (c.to[k] - c.from[k])) as Vec);
      charges.push(0.5 * GL16_W[i] * total);
    }
    return { points, charges };
  }
  const axis = unit(c.axis);
  const helper: Vec = Math.abs(axis[0]) < 0.9 ? [1, 0, 0] : [0, 1, 0];
  const u = unit([
    helper[1] * axis[2] - helper[2] * axis[1],
    helper[2] * axis[0] - helper[0] * axis[2],
    helper[0] * axis[1] - helper[1] * axis[0],
  ]);
  const v: Vec = [axis[1] * u[2] - axis[2] * u[1], axis[2] * u[0] - axis[0] * u[2], axis[0] * u[1] - axis[1] * u[0]];
  const n = 64;
  const total = chargeTotal(c);
  const points: Vec[] = [];
  for (let i = 0; i < n; i++) {
    const th = (2 * Math.PI * i) / n;
    const cs = Math.cos(th) * c.radius, sn = Math.sin(th) * c.radius;
    points.push([0, 1, 2].map((k) => c.center[k] + cs * u[k] + sn * v[k]) as Vec);
  }
  return { points, charges: points.map(() => total / n) };
}

// 16-point Gauss–Legendre nodes and weights on [−1, 1] (Abramowitz and Stegun, table 25.4).
const GL16_HALF_X = [
  0.0950125098376374, 0.2816035507792589, 0.4580167776572274, 0.6178762444026438, 0.7554044083550030,
  0.8656312023878318, 0.9445750230732326, 0.9894009349916499,
];
const GL16_HALF_W = [
  0.1894506104550685, 0.1826034150449236, 0.1691565193950025, 0.1495959888165767, 0.1246289712555339,
  0.0951585116824928, 0.0622535239386479, 0.0271524594117541,
];
const GL16_X = [...GL16_HALF_X.map((x) => -x), ...GL16_HALF_X];
const GL16_W = [...GL16_HALF_W, ...GL16_HALF_W];
