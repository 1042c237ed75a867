import { describe, expect, it } from 'vitest';
import {
  FAR_RATIO,
  gradientExact,
  gradientFar,
  panelGradient,
  panelPotential,
  panelPotentialAndGradient,
  potentialExact,
  potentialFar,
  potentialGauss,
  preparePanels,
} from '../../server/src/engine/kernels/triangle';

// A scalene triangle tilted out of every coordinate plane.
const A = [0.1, -0.2, 0.05];
const B = [1.3, 0.1, 0.3];
const C = [0.4, 0.9, -0.2];
const P = preparePanels({ vertices: new Float64Array([...A, ...B, ...C]), triangles: new Uint32Array([0, 1, 2]) });

const sub = (a: number[], b: number[]) => a.map((x, i) => x - b[i]);
const add = (a: number[], b: number[]) => a.map((x, i) => x + b[i]);
const scale = (a: number[], s: number) => a.map((x) => x * s);
const len = (a: number[]) => Math.hypot(...a);
const cross = (a: number[], b: number[]) => [a[1] * b[2] - a[2] * b[1], a[2] * b[0] - a[0] * b[2], a[0] * b[1] - a[1] * b[0]];

// Brute force for points off the panel: split the triangle into 4^levels similar pieces and sum the
// integrand at each piece's centroid times its area (midpoint rule; error O(h²) for a smooth
// integrand), then remove the h² term by Richardson extrapolation over two levels. Common practice.
function bruteForce(p: number[], levels: number): { I: number; grad: number[] } {
  const fine = midpointSum(p, levels);
  const coarse = midpointSum(p, levels - 1);
  return { I: (4 * fine.I - coarse.I) / 3, grad: fine.grad.map((g, c) => (4 * g - coarse.grad[c]) / 3) };
}

function midpointSum(p: number[], levels: number): { I: number; grad: number[] } {
  let I = 0;
  const grad = [0, 0, 0];
  const n = 2 ** levels;
  const e1 = scale(sub(B, A), 1 / n);
  const e2 = scale(sub(C, A), 1 / n);
  const area = len(cross(e1, e2)) / 2;
  const visit = (q: number[]) => {
    const r = sub(p, q);
    const R = len(r);
    I += area / R;
    for (let c = 0; c < 3; c++) grad[c] -= (area * r[c]) / R ** 3;
  };
  for (let i = 0; i < n; i++) {
    for (let j = 0; j < n - i; j++) {
      const o = add(A, add(scale(e1, i), scale(e2, j)));
      visit(add(o, scale(add(e1, e2), 1 / 3)));
      if (i + j < n - 1) visit(add(o, scale(add(e1, e2), 2 / 3)));
    }
  }
  return { I, grad };
}

// Reference for points in the panel's plane, inside it: polar coordinates about the point turn
// ∫ 1/R dA into Σ over edges of ∫ ρ_edge(θ) dθ, a smooth 1D integral (common practice).
function polarInPlane(p: number[]): number {
  const verts = [A, B, C];
  let I = 0;
  for (let k = 0; k < 3; k++) {
    const a = verts[k], b = verts[(k + 1) % 3];
    // ∫ over the segment a→b of (distance from p)... in polar: ∫ dθ · ρ(θ); parametrise by t along the edge.
    // dθ = |(a−p)×(b−a)| / ρ² dt, so the integrand is |(a−p)×(b−a)| / ρ(t).
    const h = len(cross(sub(a, p), sub(b, a)));
    const m = 2000;
    let s = 0;
    for (let i = 0; i < m; i++) {
      const t = (i + 0.5) / m;
      s += 1 / len(sub(add(a, scale(sub(b, a), t)), p));
    }
    I += (h * s) / m;
  }
  return I;
}

describe('panel integrals of 1/R and its gradient', () => {
  const centroid = scale(add(A, add(B, C)), 1 / 3);
  const normal = scale(cross(sub(B, A), sub(C, A)), 1 / len(cross(sub(B, A), sub(C, A))));

  it('the closed form matches a brute-force quadrature near the panel, above and below it', () => {
    const points = [
      add(centroid, scale(normal, 0.1)),
      add(centroid, scale(normal, -0.3)),
      add(A, [0.05, 0.02, 0.2]), // near a vertex, off the plane
      add(B, scale(normal, 0.05)),
      [2, 1, 1],
    ];
    for (const p of points) {
      const ref = bruteForce(p, 7);
      expect(potentialExact(P, 0, p[0], p[1], p[2])).toBeCloseTo(ref.I, 5);
      const g = new Float64Array(3);
      gradientExact(P, 0, p[0], p[1], p[2], g);
      for (let c = 0; c < 3; c++) expect(Math.abs(g[c] - ref.grad[c])).toBeLessThan(2e-4 * len(ref.grad) + 1e-6);
    }
  });

  it('the closed form matches a polar-coordinate integral on the panel itself', () => {
    for (const p of [centroid, add(scale(A, 0.8), scale(centroid, 0.2)), add(scale(B, 0.5), scale(C, 0.5))]) {
      const ref = polarInPlane(p);
      expect(Math.abs(potentialExact(P, 0, p[0], p[1], p[2]) - ref) / ref).toBeLessThan(1e-6);
    }
  });

  it('the in-plane gradient at the centroid has no normal part (principal value)', () => {
    const g = new Float64Array(3);
    gradientExact(P, 0, centroid[0], centroid[1], centroid[2], g);
    expect(Math.abs(g[0] * normal[0] + g[1] * normal[1] + g[2] * normal[2])).toBeLessThan(1e-12);
  });

  it('the normal field just above and below the panel jumps by 4π (Gauss law for a sheet, textbook)', () => {
    const up = add(centroid, scale(normal, 1e-9));
    const down = add(centroid, scale(normal, -1e-9));
    const gu = new Float64Array(3), gd = new Float64Array(3);
    gradientExact(P, 0, up[0], up[1], up[2], gu);
    gradientExact(P, 0, down[0], down[1], down[2], gd);
    const jump = (gd[0] - gu[0]) * normal[0] + (gd[1] - gu[1]) * normal[1] + (gd[2] - gu[2]) * normal[2];
    expect(jump).toBeCloseTo(4 * Math.PI, 6);
  });

  // Each Gauss rule from its switch distance on (kernels/triangle.ts): 7 points from FAR_RATIO
  // diameters, 6 from 2.5, 4 from 6, 3 from 10; bounds measured over random triangles (3e-6, 2.5e-5).
  for (const [points, ratio] of [[7, FAR_RATIO], [6, 2.5], [4, 6], [3, 10]]) {
    it(`the ${points}-point Gauss rule agrees with the closed form from ${ratio} panel diameters on`, () => {
      const diam = P.diameter[0];
      let worstI = 0, worstG = 0;
      for (const dir of [normal, [1, 0, 0], [0.3, -0.8, 0.5], [-0.6, 0.2, -0.7], sub(B, A), sub(C, B)]) {
        const u = scale(dir, 1 / len(dir));
        const p = add(centroid, scale(u, ratio * diam * 1.0001));
        const I = potentialExact(P, 0, p[0], p[1], p[2]);
        worstI = Math.max(worstI, Math.abs(potentialFar(P, 0, p[0], p[1], p[2]) - I) / I);
        const ge = new Float64Array(3), gg = new Float64Array(3);
        gradientExact(P, 0, p[0], p[1], p[2], ge);
        gradientFar(P, 0, p[0], p[1], p[2], gg);
        worstG = Math.max(worstG, Math.hypot(gg[0] - ge[0], gg[1] - ge[1], gg[2] - ge[2]) / Math.hypot(ge[0], ge[1], ge[2]));
      }
      expect(worstI).toBeLessThan(3e-6);
      expect(worstG).toBeLessThan(2.5e-5);
      // Not the same numbers as the 7-point rule beyond the first switch: the rule really changes.
      const far = add(centroid, scale(normal, ratio * diam * 1.0001));
      if (points !== 7) expect(potentialFar(P, 0, far[0], far[1], far[2])).not.toBe(potentialGauss(P, 0, far[0], far[1], far[2]));
    });
  }

  it('the closed form stays accurate far away (no cancellation), matching the Gauss rule at 100 diameters', () => {
    const p = add(centroid, [60, -70, 40]);
    const I = potentialExact(P, 0, p[0], p[1], p[2]);
    expect(Math.abs(I - potentialGauss(P, 0, p[0], p[1], p[2])) / I).toBeLessThan(1e-8);
  });

  it('the combined potential-and-gradient kernel equals the separate ones, near and far', () => {
    const out = new Float64Array(4), g = new Float64Array(3);
    for (const p of [add(centroid, scale(normal, 0.2)), centroid, [3, -2, 4], add(B, [0.01, 0.02, -0.03])]) {
      panelPotentialAndGradient(P, 0, p[0], p[1], p[2], out);
      panelGradient(P, 0, p[0], p[1], p[2], g);
      expect(out[0]).toBe(panelPotential(P, 0, p[0], p[1], p[2]));
      for (let c = 0; c < 3; c++) expect(out[1 + c]).toBeCloseTo(g[c], 14);
    }
  });
});
