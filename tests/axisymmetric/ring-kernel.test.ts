import { describe, expect, it } from 'vitest';
import { addAxisPoint, addRing, addRingFast } from '../../server/src/engine/axisymmetric/ring';

/** Coulomb's law summed over n equal point charges around the ring (periodic trapezoid rule: exponentially accurate). */
function coulombRing(a: number, zs: number, r: number, z: number, n = 4000): [number, number, number] {
  let phi = 0, er = 0, ez = 0;
  const q = (2 * Math.PI * a) / n; // λ = 1, ε = 1
  for (let i = 0; i < n; i++) {
    const t = (2 * Math.PI * (i + 0.5)) / n;
    const dx = r - a * Math.cos(t), dy = -a * Math.sin(t), dz = z - zs;
    const rho = Math.hypot(dx, dy, dz);
    phi += q / (4 * Math.PI * rho);
    er += (q * dx) / (4 * Math.PI * rho ** 3);
    ez += (q * dz) / (4 * Math.PI * rho ** 3);
  }
  return [phi, er, ez];
}

const ring = (a: number, zs: number, r: number, z: number) => {
  const acc = new Float64Array(3);
  addRing(a, zs, r, z, 1, true, acc);
  return acc;
};

describe('ring kernel (potential and field of a uniformly charged ring)', () => {
  it('matches Coulomb’s law summed around the ring, near and far, to 1e-12', () => {
    // Ciftja, Babineaux and Hafeez (2009): φ = kq·(2/π)·K(m)/d; checked here against direct summation.
    for (const [r, z] of [[0.3, 0.2], [1.2, -0.4], [0.95, 0.05], [3, 2], [0, 0.7], [1e-6, 0.3]]) {
      const [phi, er, ez] = coulombRing(1, 0, r, z);
      const got = ring(1, 0, r, z);
      expect(Math.abs(got[0] - phi) / phi).toBeLessThan(1e-12);
      // The radial field loses a few digits to cancellation right next to the axis (r = 1e-6).
      const scale = Math.hypot(er, ez);
      expect(Math.abs(got[1] - er) / scale).toBeLessThan(1e-9);
      expect(Math.abs(got[2] - ez) / scale).toBeLessThan(1e-9);
    }
  });

  it('gives the on-axis closed forms φ = kq/√(a² + z²), E_z = kqz/(a² + z²)^{3/2}, E_r = 0', () => {
    // Textbook electrostatics (e.g. Jackson, Classical Electrodynamics): the ring on its axis.
    const a = 2, z = 1.5, q = 2 * Math.PI * a, k = 1 / (4 * Math.PI);
    const got = ring(a, 0, 0, z);
    expect(got[0]).toBeCloseTo((k * q) / Math.hypot(a, z), 14);
    expect(got[2]).toBeCloseTo((k * q * z) / Math.hypot(a, z) ** 3, 14);
    expect(got[1]).toBe(0);
  });

  it('has a field equal to minus the gradient of its potential (central differences, 1e-7)', () => {
    // Consistency of the derived field formulas with the potential (E = −∇φ).
    const h = 1e-5;
    for (const [r, z] of [[0.5, 0.5], [1.5, -0.2], [0.99, 0.02]]) {
      const got = ring(1, 0, r, z);
      const dr = -(ring(1, 0, r + h, z)[0] - ring(1, 0, r - h, z)[0]) / (2 * h);
      const dz = -(ring(1, 0, r, z + h)[0] - ring(1, 0, r, z - h)[0]) / (2 * h);
      expect(Math.abs(got[1] - dr) / Math.hypot(dr, dz)).toBeLessThan(1e-7);
      expect(Math.abs(got[2] - dz) / Math.hypot(dr, dz)).toBeLessThan(1e-7);
    }
  });

  it('approaches a line charge, φ ≈ λ/(2πε)·ln(8a/ρ), close to the ring', () => {
    // Near the ring K(m) ≈ ln(4/√(1−m)) (DLMF 19.12.1), so φ ≈ λ/(2πε)·ln(8a/ρ) at distance ρ ≪ a,
    // with a relative correction of order ρ/a.
    const rho = 1e-6;
    const got = ring(1, 0, 1 + rho, 0);
    expect(Math.abs(got[0] / (Math.log(8 / rho) / (2 * Math.PI)) - 1)).toBeLessThan(2 * rho);
  });

  it('gives Coulomb’s law for a point charge on the axis', () => {
    // Coulomb's law, φ = q/(4πε·ρ).
    const acc = new Float64Array(3);
    addAxisPoint(1, 3, 5, 1, true, acc);
    expect(acc[0]).toBeCloseTo(1 / (4 * Math.PI * 5), 15);
    expect(acc[1]).toBeCloseTo(3 / (4 * Math.PI * 125), 15);
    expect(acc[2]).toBeCloseTo(4 / (4 * Math.PI * 125), 15);
  });
});

describe('the fast ring kernel for slice grids', () => {
  it('agrees with the precise ring kernel (AGM and series elliptic integrals) within 1e-7, near the ring, near the axis and far', () => {
    // Reference: addRing, itself checked above against Coulomb's law summed around the ring. The fast
    // kernel's polynomial forms (Abramowitz and Stegun 17.3.34, 17.3.36) promise |error| ≤ 2e-8 in K and E.
    // Field errors are measured against the local field or the field on the axis one radius from the
    // ring (a/(2·2^1.5) per unit λ/ε, Coulomb's law), whichever is larger: near the ring's centre the
    // field vanishes while its two terms do not.
    let worst = 0;
    for (let i = 0; i < 400; i++) {
      // A spread of targets: m from ~0 (near the axis, far away) to ~1 (next to the ring).
      const r = i % 20 === 0 ? 0 : 3 * ((i * 0.6180339887) % 1) ** 2;
      const z = 2.5 * (((i * 0.4142135624) % 1) - 0.5) ** 3;
      const fast = new Float64Array(3), precise = new Float64Array(3);
      addRingFast(1, 0, r, z, 1, true, fast);
      addRing(1, 0, r, z, 1, true, precise);
      const field = Math.max(Math.hypot(precise[1], precise[2]), 0.5 / 2 ** 1.5);
      worst = Math.max(worst, Math.abs(fast[0] - precise[0]) / precise[0], Math.hypot(fast[1] - precise[1], fast[2] - precise[2]) / field);
    }
    expect(worst).toBeLessThan(1e-7);
  });
});
