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
