import { describe, expect, it } from 'vitest';
import { preparePanels } from '../../server/src/engine/kernels/triangle';
import { buildPanelTree, evaluateDirect, evaluateTree, setDensities, setDensitiesMany } from '../../server/src/engine/fast/treecode';
import { boxSurface, icosphere, joinMeshes } from './fixtures';

// A sphere (1280 panels) and a box (864 panels) with an uneven density, evaluated on a 40×40
// grid that cuts through both bodies, passes close to their surfaces and reaches past them.
const mesh = joinMeshes([icosphere(1, 3), boxSurface([1, 1.4, 0.8], 6, [2.2, 0.3, 0.1], 1)]);
const P = preparePanels(mesh);
const sigma = Float64Array.from({ length: P.count }, (_, j) => 1 + 0.6 * mesh.centroid[3 * j] - 0.4 * mesh.centroid[3 * j + 2] ** 2);
const G = 40;
const grid = new Float64Array(3 * G * G);
for (let j = 0; j < G; j++) {
  for (let i = 0; i < G; i++) {
    const k = j * G + i;
    grid.set([-2 + (5 * (i + 0.5)) / G, -2 + (4 * (j + 0.5)) / G, 0.05], 3 * k);
  }
}
const reference = new Float64Array(4 * G * G);
evaluateDirect(P, sigma, grid, reference);

function errors(out: Float64Array): { potential: number; gradient: number } {
  let ep = 0, mp = 0, eg = 0, mg = 0;
  for (let k = 0; k < G * G; k++) {
    ep = Math.max(ep, Math.abs(out[4 * k] - reference[4 * k]));
    mp = Math.max(mp, Math.abs(reference[4 * k]));
    eg = Math.max(eg, Math.hypot(out[4 * k + 1] - reference[4 * k + 1], out[4 * k + 2] - reference[4 * k + 2], out[4 * k + 3] - reference[4 * k + 3]));
    mg = Math.max(mg, Math.hypot(reference[4 * k + 1], reference[4 * k + 2], reference[4 * k + 3]));
  }
  return { potential: ep / mp, gradient: eg / mg };
}

describe('treecode evaluation against the direct sum', () => {
  const T = buildPanelTree(P);
  setDensities(T, sigma);

  // Stated errors (largest over the grid, relative to the largest value): θ = 0.5 within 3e-3 for
  // the potential and 1e-2 for its gradient, θ = 0.3 within 5e-4 and 2e-3 (methods.md measured
  // 1.5e-3 and 3e-4 for the potential at these opening angles).
  it('agrees to 3e-3 (potential) and 1e-2 (gradient) at opening angle 0.5', () => {
    const out = new Float64Array(4 * G * G);
    evaluateTree(T, grid, 0, G * G, 0.5, out);
    const e = errors(out);
    expect(e.potential).toBeLessThan(3e-3);
    expect(e.gradient).toBeLessThan(1e-2);
  });

  it('agrees to 5e-4 (potential) and 2e-3 (gradient) at opening angle 0.3, and tighter angles do better', () => {
    const out = new Float64Array(4 * G * G);
    evaluateTree(T, grid, 0, G * G, 0.3, out);
    const e = errors(out);
    expect(e.potential).toBeLessThan(5e-4);
    expect(e.gradient).toBeLessThan(2e-3);
    const tight = new Float64Array(4 * G * G);
    evaluateTree(T, grid, 0, G * G, 0.1, tight);
    expect(errors(tight).potential).toBeLessThan(e.potential);
  });

  it('evaluates any subrange of points on its own (the unit of work for threads)', () => {
    const whole = new Float64Array(4 * G * G), parts = new Float64Array(4 * G * G);
    evaluateTree(T, grid, 0, G * G, 0.5, whole);
    evaluateTree(T, grid, 0, 700, 0.5, parts);
    evaluateTree(T, grid, 700, G * G, 0.5, parts);
    expect(Array.from(parts)).toEqual(Array.from(whole));
  });
});

describe('treecode against the closed form of a uniformly charged sphere', () => {
  it('gives σ·A_total/r outside and the field along r̂ (Jackson, Classical Electrodynamics, sec. 1.11)', () => {
    // A uniform density on the 1280-panel sphere: outside, the potential of its total charge at
    // the centre (the polyhedron's higher multipoles are far below the tolerance at r ≥ 2).
    const sphere = icosphere(1, 3);
    const Q = preparePanels(sphere);
    const T = buildPanelTree(Q);
    setDensities(T, new Float64Array(Q.count).fill(1));
    let total = 0;
    for (let j = 0; j < Q.count; j++) total += Q.area[j];
    const pts = new Float64Array([2, 0, 0, 0, -3, 1, 1.5, 1.5, 1.5]);
    const out = new Float64Array(12);
    evaluateTree(T, pts, 0, 3, 0.3, out);
    for (let i = 0; i < 3; i++) {
      const r = Math.hypot(pts[3 * i], pts[3 * i + 1], pts[3 * i + 2]);
      // Within the stated treecode error at θ = 0.3 (5e-4 of the potential, 2e-3 of the gradient).
      expect(Math.abs(out[4 * i] / (total / r) - 1)).toBeLessThan(5e-4);
      const g = total / r ** 2;
      for (let c = 0; c < 3; c++) expect(Math.abs(out[4 * i + 1 + c] + (g * pts[3 * i + c]) / r)).toBeLessThan(2e-3 * g);
    }
  });

  it('evaluates several density sets in one walk exactly as each set alone', () => {
    const T = buildPanelTree(P);
    const sets = [sigma, Float64Array.from(sigma, (v, j) => (j % 3 === 0 ? 0 : -2 * v)), Float64Array.from({ length: P.count }, (_, j) => Math.cos(j))];
    setDensitiesMany(T, sets);
    const many = new Float64Array(4 * sets.length * G * G);
    evaluateTree(T, grid, 0, G * G, 0.5, many);
    sets.forEach((set, d) => {
      const alone = buildPanelTree(P);
      setDensities(alone, set);
      const one = new Float64Array(4 * G * G);
      evaluateTree(alone, grid, 0, G * G, 0.5, one);
      for (let i = 0; i < G * G; i++) for (let c = 0; c < 4; c++) expect(many[4 * (i * sets.length + d) + c]).toBe(one[4 * i + c]);
    });
  });
});
