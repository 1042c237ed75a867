// Spheres against closed forms (references.md: Smythe; Jackson) at the default mesh.
import { beforeAll, describe, expect, it } from 'vitest';
import { EPSILON_0 } from '../../grammar/scene';
import { createEngineCache, solveScene } from '../../server/src/engine/index';
import type { Result } from '../../server/src/engine/result';
import type { Cache3d } from '../../server/src/engine/solve';
import { electrode, R0, scene3d, sphere } from './scenes';

const C0 = 4 * Math.PI * EPSILON_0; // capacitance of a unit sphere, F
const K = 1 / (4 * Math.PI * EPSILON_0); // Coulomb constant, CODATA 2022 ε0 (references.md)
const rel = (a: number, b: number) => Math.abs(a / b - 1);

describe('isolated sphere at the default mesh', () => {
  const cache = createEngineCache();
  const a = 0.3;
  let r: Result;
  beforeAll(() => {
    r = solveScene(scene3d({ electrodes: [electrode('s', sphere([0.1, -0.2, 0.05], a))] }), { cache })!;
  });

  it('capacitance is 4πε0·a within 0.2% raw and 0.02% extrapolated (closed form, Smythe)', () => {
    const e = r.electrodes[0];
    const exact = C0 * a;
    expect(rel(e.capacitance, exact)).toBeLessThan(2e-3);
    expect(rel(e.capacitanceConvergence.extrapolated!, exact)).toBeLessThan(2e-4);
    // The estimate is of the right size: the true error lies within a factor of 3 of it.
    const trueError = rel(e.capacitance, exact);
    expect(e.capacitanceConvergence.relativeError!).toBeGreaterThan(trueError / 3);
    expect(e.capacitanceConvergence.relativeError!).toBeLessThan(trueError * 3);
    expect(r.stats.levels.length).toBe(2);
  });

  it('surface field is V/a and stored energy ½CV² (closed forms, Smythe)', () => {
    const e = r.electrodes[0];
    expect(rel(e.maxField, 1 / a)).toBeLessThan(1e-2);
    expect(e.maxFieldOnEdge).toBe(false);
    expect(rel(r.energy, 0.5 * C0 * a)).toBeLessThan(2e-3);
  });

  it('a charge Q gives kQ/a on and inside the sphere and kQ/r outside (closed form), reusing the solve', () => {
    const levelsBefore = [...((cache.store.get('3d') as Cache3d).levels.values())];
    const Q = 2e-9;
    const s = scene3d({ electrodes: [electrode('s', sphere([0.1, -0.2, 0.05], a), { kind: 'charge', value: Q })] });
    s.probes = [
      { kind: 'point', name: 'centre', at: [0.1, -0.2, 0.05], range: R0 },
      { kind: 'line', name: 'out', from: [0.1 + 2 * a, -0.2, 0.05], to: [0.1, -0.2, 0.05 + 5 * a], samples: 5, range: R0 },
    ];
    const q = solveScene(s, { cache })!;
    expect(q.electrodes[0].charge).toBe(Q);
    expect(rel(q.electrodes[0].potential, (K * Q) / a)).toBeLessThan(2e-3);
    // A probe inside the conductor reads its potential and no field.
    expect(q.probes[0].points[0].potential).toBe(q.electrodes[0].potential);
    expect(q.probes[0].points[0].fieldMagnitude).toBe(0);
    for (const p of q.probes[1].points) {
      const d = Math.hypot(p.at[0] - 0.1, p.at[1] + 0.2, p.at[2] - 0.05);
      expect(rel(p.potential, (K * Q) / d)).toBeLessThan(2e-3);
      expect(rel(p.fieldMagnitude, (K * Q) / (d * d))).toBeLessThan(5e-3);
    }
    // A drive-only edit reused every cached level: the same objects, no new ones.
    const levelsAfter = [...((cache.store.get('3d') as Cache3d).levels.values())];
    expect(levelsAfter).toEqual(levelsBefore);
    levelsAfter.forEach((l, i) => expect(l).toBe(levelsBefore[i]));
  });

  it('capacitance scales with the medium permittivity (C ∝ εr, textbook)', () => {
    const oil = solveScene(scene3d({ permittivity: 2.2, electrodes: [electrode('s', sphere([0.1, -0.2, 0.05], a))] }), { cache })!;
    expect(rel(oil.electrodes[0].capacitance, 2.2 * r.electrodes[0].capacitance)).toBeLessThan(1e-12);
  });
});

describe('sphere over a grounded plane at the default mesh', () => {
  // C/C0 = sinh α·Σ 1/sinh(nα), cosh α = h/a (references.md; values summed to convergence).
  for (const [h, ratio] of [
    [1.5, 1.5353705088],
    [3, 1.2011552846],
  ]) {
    it(`h/a = ${h}: C/C0 = ${ratio} within 0.2% raw and 0.02% extrapolated`, () => {
      const a = 0.5;
      const r = solveScene(scene3d({ electrodes: [electrode('s', sphere([0, 0.2, h * a - 1], a))], ground: [{ axis: 'z', at: -1 }] }))!;
      const e = r.electrodes[0];
      expect(rel(e.capacitance, ratio * C0 * a)).toBeLessThan(2e-3);
      expect(rel(e.capacitanceConvergence.extrapolated!, ratio * C0 * a)).toBeLessThan(2e-4);
    });
  }
});
