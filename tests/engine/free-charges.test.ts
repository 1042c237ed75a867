import { describe, expect, it } from 'vitest';
import ellipk from '@stdlib/math-base-special-ellipk';
import type { Charge3d } from '../../grammar/scene';
import { chargeGradient, chargePotential, chargeSamples, chargeTotal } from '../../server/src/engine/kernels/free-charges';

const range = { start: { line: 0, character: 0 }, end: { line: 0, character: 0 } };

// Direct sum of Coulomb's law over many small pieces (textbook superposition): a reference that
// shares nothing with the closed forms under test.
function directSum(pieces: { p: number[]; q: number }[], r: number[]): { S: number; grad: number[] } {
  let S = 0;
  const grad = [0, 0, 0];
  for (const { p, q } of pieces) {
    const d = [r[0] - p[0], r[1] - p[1], r[2] - p[2]];
    const R = Math.hypot(d[0], d[1], d[2]);
    S += q / R;
    for (let c = 0; c < 3; c++) grad[c] -= (q * d[c]) / R ** 3;
  }
  return { S, grad };
}

const ring: Charge3d = { kind: 'ring', name: 'r', center: [0.2, -0.1, 0.3], axis: [1, 2, 2], radius: 0.5, density: 3e-9, range };
const axis = [1 / 3, 2 / 3, 2 / 3];
const u = [2 / 3, -1 / 3 - 0, 0]; // not unit; orthogonalised below
function ringPieces(n: number): { p: number[]; q: number }[] {
  const ul = Math.hypot(...u);
  const e1 = u.map((x) => x / ul);
  const dot = e1[0] * axis[0] + e1[1] * axis[1] + e1[2] * axis[2];
  const e1o = e1.map((x, i) => x - dot * axis[i]);
  const l = Math.hypot(...e1o);
  const a = e1o.map((x) => x / l);
  const b = [axis[1] * a[2] - axis[2] * a[1], axis[2] * a[0] - axis[0] * a[2], axis[0] * a[1] - axis[1] * a[0]];
  const Q = chargeTotal(ring);
  return Array.from({ length: n }, (_, i) => {
    const t = (2 * Math.PI * i) / n;
    return { p: [0, 1, 2].map((k) => (ring as { center: number[] }).center[k] + 0.5 * (Math.cos(t) * a[k] + Math.sin(t) * b[k])), q: Q / n };
  });
}

describe('free-charge kernels', () => {
  it('ring potential matches k·Q·(2/π)·K(m)/d with K from @stdlib (parameter m = k²; Ciftja et al. 2009)', () => {
    // Points given by (rho, z) about the ring: above, in its plane inside and outside, on its axis.
    const a = 0.5;
    for (const [rho, z] of [[0.3, 0.2], [0.1, 0], [0.9, 0], [0, 0.4], [0.55, 0.01]]) {
      const side = [2 / 3, -2 / 3, 1 / 3]; // a unit vector normal to the axis (1, 2, 2)/3
      const p = [0, 1, 2].map((k) => [0.2, -0.1, 0.3][k] + z * axis[k] + rho * side[k]);
      const d = Math.sqrt((a + rho) ** 2 + z * z);
      const m = (4 * a * rho) / (d * d);
      const Q = chargeTotal(ring);
      const expected = (Q * (2 / Math.PI) * ellipk(m)) / d; // the k = 1/(4πε0) factor is left to the caller
      expect(Math.abs(chargePotential(ring, p[0], p[1], p[2]) - expected) / expected).toBeLessThan(1e-13);
    }
  });

  it('ring potential and field match a direct sum around the ring', () => {
    const pieces = ringPieces(4000);
    for (const p of [[1, 0.5, -0.2], [0.25, -0.05, 0.35], [0.2, -0.1, 0.3], [0.7, 0.4, 0.3]]) {
      const ref = directSum(pieces, p);
      expect(Math.abs(chargePotential(ring, p[0], p[1], p[2]) - ref.S) / Math.abs(ref.S)).toBeLessThan(1e-10);
      const g = new Float64Array(3);
      chargeGradient(ring, p[0], p[1], p[2], g);
      const gl = Math.hypot(...ref.grad);
      for (let c = 0; c < 3; c++) expect(Math.abs(g[c] - ref.grad[c])).toBeLessThan(1e-9 * (gl + Math.abs(ref.S)));
    }
  });

  it('segment potential and field match a direct sum along it, including on its extension', () => {
    const line: Charge3d = { kind: 'line', name: 'l', from: [0, 0, 0], to: [1, 0.5, -0.5], density: -2e-9, range };
    const n = 200000;
    const L = Math.hypot(1, 0.5, 0.5);
    const pieces = Array.from({ length: n }, (_, i) => ({ p: [(i + 0.5) / n, (0.5 * (i + 0.5)) / n, (-0.5 * (i + 0.5)) / n], q: (-2e-9 * L) / n }));
    for (const p of [[0.5, 0.5, 0.5], [-0.3, 0.2, 0.1], [2, 1, -1], [1.5, 0.8, -0.2]]) {
      const ref = directSum(pieces, p);
      expect(Math.abs(chargePotential(line, p[0], p[1], p[2]) - ref.S) / Math.abs(ref.S)).toBeLessThan(1e-8);
      const g = new Float64Array(3);
      chargeGradient(line, p[0], p[1], p[2], g);
      for (let c = 0; c < 3; c++) expect(Math.abs(g[c] - ref.grad[c])).toBeLessThan(1e-7 * Math.hypot(...ref.grad));
    }
  });

  it('point charge: S = q/r and ∇S = −q·r̂/r² (Coulomb)', () => {
    const pt: Charge3d = { kind: 'point', name: 'p', at: [1, 2, 3], value: 5e-9, range };
    expect(chargePotential(pt, 1, 2, 5)).toBeCloseTo(5e-9 / 2, 20);
    const g = new Float64Array(3);
    chargeGradient(pt, 1, 2, 5, g);
    expect(g[2]).toBeCloseTo(-5e-9 / 4, 20);
  });

  it('samples carry the whole charge', () => {
    for (const c of [ring, { kind: 'line', name: 'l', from: [0, 0, 0], to: [0, 0, 2], density: 1e-9, range } as Charge3d]) {
      const s = chargeSamples(c);
      expect(s.charges.reduce((a, b) => a + b, 0)).toBeCloseTo(chargeTotal(c), 20);
    }
  });
});
