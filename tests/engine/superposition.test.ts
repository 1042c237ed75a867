// Drive-only and free-charge-only edits through the engine cache give the same slices, probes and
// surface fields as a fresh solve: the field is linear in the drives (superposition, e.g. Jackson,
// Classical Electrodynamics, sec. 1.13, the Green reciprocity and linearity of the Dirichlet
// problem), and the engine builds the edited picture as Σ V_k·(unit grid k) + (free-charge grid).
import { describe, expect, it } from 'vitest';
import { analyzeText } from '../../grammar/index';
import type { Scene3d } from '../../grammar/scene';
import { createEngineCache, solveScene, type SolveOptions } from '../../server/src/engine/index';
import type { Result } from '../../server/src/engine/result';
import { createCache3d, solve3d } from '../../server/src/engine/solve';

const sceneText = (hv: string, charge: string, cells: number) => `
scene "Superposition check"
space 3d
medium oil
mesh coarse
ground plane at z = 0
electrode hv sphere center (0, 0, 60) mm radius 20 mm potential ${hv}
electrode shield plate center (60, 0, 60) mm size (40, 40) mm normal x potential -2 kV
electrode pickup sphere center (-60, 0, 60) mm radius 10 mm floating
charge dust point at (0, 0, 25) mm value ${charge}
slice xz at y = 0 from (-100, 1) mm to (100, 110) mm cells ${cells}
probe path line from (-100, 5, 30) mm to (100, 5, 30) mm samples 9
probe spot point at (0, 30, 40) mm
`;

function scene(hv: string, charge: string, cells = 40): Scene3d {
  const a = analyzeText(sceneText(hv, charge, cells));
  expect(a.diagnostics.filter((d) => d.severity === 'error')).toEqual([]);
  return a.scene as Scene3d;
}

/** Largest difference between two arrays, relative to the largest finite magnitude in the reference. */
function relDiff(a: ArrayLike<number>, b: ArrayLike<number>): number {
  let scale = 0, diff = 0;
  expect(a.length).toBe(b.length);
  for (let i = 0; i < a.length; i++) {
    if (Number.isNaN(b[i])) {
      expect(Number.isNaN(a[i])).toBe(true);
      continue;
    }
    scale = Math.max(scale, Math.abs(b[i]));
    diff = Math.max(diff, Math.abs(a[i] - b[i]));
  }
  return scale > 0 ? diff / scale : diff;
}

function expectSame(edited: Result, fresh: Result): void {
  expect(edited.slices.length).toBe(fresh.slices.length);
  edited.slices.forEach((s, i) => {
    const f = fresh.slices[i];
    expect(Array.from(s.inside)).toEqual(Array.from(f.inside));
    expect(relDiff(s.potential, f.potential)).toBeLessThan(1e-9);
    // Field components are stored as 32-bit floats: equal to their rounding.
    expect(relDiff(s.fieldU, f.fieldU)).toBeLessThan(1e-6);
    expect(relDiff(s.fieldV, f.fieldV)).toBeLessThan(1e-6);
    expect(relDiff(s.fieldMagnitude, f.fieldMagnitude)).toBeLessThan(1e-6);
  });
  const probeValues = (r: Result) => r.probes.flatMap((p) => p.points.flatMap((q) => [q.potential, ...q.field]));
  expect(relDiff(probeValues(edited), probeValues(fresh))).toBeLessThan(1e-9);
  expect(relDiff(edited.electrodes.map((e) => e.maxField), fresh.electrodes.map((e) => e.maxField))).toBeLessThan(1e-9);
  expect(relDiff(edited.electrodes.map((e) => e.potential), fresh.electrodes.map((e) => e.potential))).toBeLessThan(1e-9);
}

describe('superposition of stored unit grids', () => {
  const options: SolveOptions = { level: 'coarse' };

  it('a drive-only edit through the cache matches a fresh solve without a cache', () => {
    const cache = createEngineCache();
    solveScene(scene('10 kV', '2 nC'), { ...options, cache });
    const edited = solveScene(scene('13 kV', '2 nC'), { ...options, cache })!;
    expect(edited.stats.timings.slicesSuperposed).toBeDefined();
    expectSame(edited, solveScene(scene('13 kV', '2 nC'), options)!);
    // A second drive edit reuses the stored grids.
    const again = solveScene(scene('-4 kV', '2 nC'), { ...options, cache })!;
    expectSame(again, solveScene(scene('-4 kV', '2 nC'), options)!);
  });

  it('a free-charge-only edit through the cache matches a fresh solve', () => {
    // Dense LU: the free-charge solution is then exact to rounding with or without the cache (an
    // iterative solve restarted from the previous solution agrees only to its tolerance).
    const run = (hv: string, charge: string, cache = createCache3d()) =>
      solve3d(scene(hv, charge), { maxPanels: 20000, maxGridCells: 250000, level: 'coarse', convergence: false, cache, solver: 'dense-lu' })!;
    const cache = createCache3d();
    run('10 kV', '2 nC', cache);
    run('12 kV', '2 nC', cache);
    const edited = run('12 kV', '-5 nC', cache);
    expect(edited.stats.timings.slicesSuperposed).toBeDefined();
    expectSame(edited, run('12 kV', '-5 nC'));
  });

  it('the full level (direct sums on a small grid) matches too', () => {
    const full: SolveOptions = { level: 'full', convergence: false };
    const cache = createEngineCache();
    solveScene(scene('10 kV', '2 nC', 16), { ...full, cache });
    const edited = solveScene(scene('12 kV', '2 nC', 16), { ...full, cache })!;
    expect(edited.stats.timings.slicesSuperposed).toBeDefined();
    expectSame(edited, solveScene(scene('12 kV', '2 nC', 16), full)!);
  });

  it('superpose: true builds and uses the stored grids at once (for an idle worker), with the same values', () => {
    const warmed = solveScene(scene('10 kV', '2 nC'), { ...options, superpose: true })!;
    expect(warmed.stats.timings.slicesSuperposed).toBeDefined();
    expectSame(warmed, solveScene(scene('10 kV', '2 nC'), options)!);
  });

  it('cells on a line charge in the slice plane (values a quarter cell off it) and behind a ground plane match too', () => {
    // Cell centres at z = 5, 15, ..., 95 mm: the line at z = 45 mm runs through a whole row of them,
    // and the row at z = 5 mm lies behind the ground plane (0 V, no field).
    const text = (hv: string) => `
scene "Line through a slice"
space 3d
medium air
mesh coarse
ground plane at z = 10 mm
electrode hv sphere center (0, 0, 25) mm radius 10 mm potential ${hv}
electrode shield plate center (0, 0, 80) mm size (60, 60) mm normal z potential -1 kV
charge beam line from (-100, 0, 45) mm to (100, 0, 45) mm density -0.4 nC/m
slice xz at y = 0 from (-100, 0) mm to (100, 100) mm cells 20
`;
    const scene = (hv: string) => analyzeText(text(hv)).scene as Scene3d;
    const full: SolveOptions = { level: 'full', convergence: false };
    const cache = createEngineCache();
    solveScene(scene('5 kV'), { ...full, cache });
    const edited = solveScene(scene('7 kV'), { ...full, cache })!;
    expect(edited.stats.timings.slicesSuperposed).toBeDefined();
    const fresh = solveScene(scene('7 kV'), full)!;
    // The row on the line holds finite values (taken a quarter cell off it).
    const g = edited.slices[0];
    const row = Array.from({ length: g.nu }, (_, i) => g.potential[4 * g.nu + i]);
    expect(row.every(Number.isFinite)).toBe(true);
    const behind = Array.from({ length: g.nu }, (_, i) => [g.potential[i], g.fieldMagnitude[i]]);
    expect(behind.flat().every((v) => v === 0)).toBe(true);
    expectSame(edited, fresh);
    expectSame(solveScene(scene('-2 kV'), { ...full, cache })!, solveScene(scene('-2 kV'), full)!);
  });

  it('a grid large enough for the treecode matches too', () => {
    const cache = createEngineCache();
    solveScene(scene('10 kV', '2 nC', 150), { ...options, cache });
    const edited = solveScene(scene('11 kV', '2 nC', 150), { ...options, cache })!;
    expect(edited.stats.timings.slicesSuperposed).toBeDefined();
    expectSame(edited, solveScene(scene('11 kV', '2 nC', 150), options)!);
  });
});
