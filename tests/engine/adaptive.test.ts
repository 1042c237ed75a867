// Adaptive refinement (server/src/engine/adaptive.ts) and warm starts after a geometry edit
// (bem3d/level.ts). Coarse starting meshes keep every case to a few seconds.
import { describe, expect, it } from 'vitest';
import { EPSILON_0 } from '../../grammar/scene';
import { createEngineCache, solveScene } from '../../server/src/engine/index';
import { createCache3d, solve3d, type Solve3dOptions } from '../../server/src/engine/solve';
import { electrode, scene3d, sphere } from './scenes';

const C0 = (a: number) => 4 * Math.PI * EPSILON_0 * a;

describe('adaptive refinement', () => {
  it('brings a sphere over a ground plane (h/a = 1.5) within the tolerance of the image-series capacitance', () => {
    // C/C0 = 1.5353705088 at h/a = 1.5: image series C = C0·sinh α·Σ 1/sinh(nα), cosh α = h/a (Smythe, Static and Dynamic Electricity; references.md).
    const a = 1;
    const tolerance = 3e-2;
    const s = scene3d({ electrodes: [electrode('ball', sphere([0, 0, 1.5 * a], a))], ground: [{ axis: 'z', at: 0 }], mesh: { kind: 'size', size: 0.5 * a } });
    const r = solveScene(s, { adaptive: { tolerance }, cache: createEngineCache() })!;
    const ref = r.stats.refinement!;
    expect(ref.stop).toBe('tolerance');
    expect(ref.rounds).toBeGreaterThanOrEqual(1);
    expect(ref.panels.length).toBe(ref.rounds + 1);
    expect(ref.panels[ref.panels.length - 1]).toBeGreaterThan(ref.panels[0]);
    expect(ref.reached.capacitance[0]!).toBeLessThan(tolerance);
    expect(ref.reached.maxField[0]!).toBeLessThan(tolerance);
    const error = (c: number) => Math.abs(c / C0(a) / 1.5353705088 - 1);
    expect(error(r.electrodes[0].capacitance)).toBeLessThan(tolerance);
    // The reported change is not a bound, but here it covers the true error (measured: 2.1e-3 reported, 1.9e-3 true).
    expect(error(r.electrodes[0].capacitance)).toBeLessThan(ref.reached.capacitance[0]!);
    // Refinement improved on the first mesh.
    expect(error(r.electrodes[0].capacitance)).toBeLessThan(error(ref.history[0].capacitance[0]));
    // The Result's figures are the last round's, with the two last rounds as its levels.
    expect(r.stats.levels).toEqual(ref.panels.slice(-2));
    expect(r.electrodes[0].capacitance).toBe(ref.history[ref.history.length - 1].capacitance[0]);
  });

  it('converges the peak field of an isolated sphere to V/a, the error falling round by round, and stops at maxRounds', () => {
    // Isolated sphere at potential V: surface field E = V/a (closed form; references.md).
    const a = 0.5, V = 1;
    const s = scene3d({ electrodes: [electrode('ball', sphere([0, 0, 0], a), { kind: 'potential', value: V })], mesh: { kind: 'size', size: 0.8 * a } });
    const r = solveScene(s, { adaptive: { tolerance: 1e-6, maxRounds: 2 } })!;
    const ref = r.stats.refinement!;
    expect(ref.stop).toBe('rounds');
    expect(ref.rounds).toBe(2);
    const errors = ref.history.map((h) => Math.abs(h.maxField[0] / (V / a) - 1));
    expect(errors.length).toBe(3);
    expect(errors[1]).toBeLessThan(errors[0]);
    expect(errors[2]).toBeLessThan(errors[1]);
    expect(errors[2]).toBeLessThan(0.01);
    // Not converged to 1e-6: said so, not hidden.
    expect(ref.reached.maxField[0]!).toBeGreaterThan(1e-6);
    expect(ref.singularPeak[0]).toBe(false);
  });

  it('reports a peak on a cube edge as singular: it grows under refinement and is left out once the capacitance has converged', () => {
    // The field at a cube's edge is singular (about ρ^−1/3; methods.md), so the peak grows with refinement.
    const s = scene3d({ electrodes: [electrode('cube', { kind: 'box', center: [0, 0, 0], size: [1, 1, 1], hollow: false })], mesh: { kind: 'size', size: 0.5 } });
    const tolerance = 2e-2;
    const r = solveScene(s, { adaptive: { tolerance, maxRounds: 3 } })!;
    const ref = r.stats.refinement!;
    expect(r.electrodes[0].maxFieldOnEdge).toBe(true);
    expect(ref.singularPeak[0]).toBe(true);
    // The peak grew by far more than the tolerance: not converged, and reported as such.
    expect(ref.reached.maxField[0]!).toBeGreaterThan(tolerance);
    expect(ref.history[ref.history.length - 1].maxField[0]).toBeGreaterThan(ref.history[0].maxField[0]);
    // Stopped on the capacitance alone.
    expect(ref.stop).toBe('tolerance');
    expect(ref.reached.capacitance[0]!).toBeLessThan(tolerance);
    // Unit cube: C = 0.6606782·4πε0·side (Hwang and Mascagni, J. Appl. Phys. 95, 3798, 2004; references.md).
    expect(Math.abs(r.electrodes[0].capacitance / (C0(1) * 0.6606782) - 1)).toBeLessThan(tolerance);
  });
});

describe('warm start after a geometry edit', () => {
  it('needs fewer GMRES iterations than a cold start after a small move of one electrode, with the same answer', () => {
    const a = 1;
    const make = (dz: number) =>
      scene3d({
        electrodes: [electrode('hot', sphere([0, 0, 0], a)), electrode('cold', sphere([3 * a, 0, dz], a), { kind: 'potential', value: 0 })],
        mesh: { kind: 'size', size: 0.25 * a },
      });
    const options = (cache = createCache3d()): Solve3dOptions => ({ maxPanels: 20000, maxGridCells: 1000, level: 'full', convergence: false, cache, solver: 'dense-gmres' });
    const warmOptions = options();
    solve3d(make(0), warmOptions);
    const warm = solve3d(make(0.02 * a), warmOptions)!;
    const warmLevel = [...warmOptions.cache.levels.values()].pop()!;
    const coldOptions = options();
    const cold = solve3d(make(0.02 * a), coldOptions)!;
    const coldLevel = [...coldOptions.cache.levels.values()].pop()!;
    const sum = (xs: number[] = []) => xs.reduce((s, x) => s + x, 0);
    expect(warmLevel.mesh.area.length).toBe(coldLevel.mesh.area.length);
    expect(warmLevel.iterations!.length).toBe(2);
    expect(sum(warmLevel.iterations)).toBeLessThan(sum(coldLevel.iterations));
    for (let i = 0; i < 2; i++)
      for (let j = 0; j < 2; j++) {
        const c = cold.capacitance.matrix[i][j], w = warm.capacitance.matrix[i][j];
        expect(Math.abs(w - c) / Math.abs(cold.capacitance.matrix[i][i])).toBeLessThan(1e-6);
      }
  });
});
