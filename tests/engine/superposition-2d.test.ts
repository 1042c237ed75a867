// Planar and axisymmetric drive-only and free-charge-only edits through the engine cache give the
// same slice grids as a fresh solve: the field is linear in the drives and the free charges
// (superposition, e.g. Jackson, Classical Electrodynamics, sec. 1.13), and the engine sums stored
// per-electrode grids for such edits.
import { describe, expect, it } from 'vitest';
import { analyzeText } from '../../grammar/index';
import type { Scene } from '../../grammar/scene';
import { createEngineCache, solveScene } from '../../server/src/engine/index';
import type { Result } from '../../server/src/engine/result';

const planar = (hv: string, dust: string, ground = true) => `
space planar
medium oil
mesh size 8 mm
electrode bar circle center (-40 mm, 60 mm) radius 10 mm potential ${hv}
electrode shield strip from (-80, 120) mm to (80, 120) mm floating
electrode rod circle center (40 mm, 60 mm) radius 8 mm potential -3 kV
${ground ? 'ground plane at y = 0' : ''}
charge dust point at (0, 30) mm density ${dust}
slice from (-100, 1) mm to (100, 140) mm cells 36
`;

const axisymmetric = (hv: string, ions: string) => `
space axisymmetric
medium air
mesh size 8 mm
electrode stem revolve (0, -60) mm (10, -60) mm (10, 40) mm (0, 40) mm potential ${hv}
electrode halo torus center (0, 70) mm major 30 mm minor 5 mm floating
electrode can revolve (60, -80) mm (60, 60) mm (66, 60) mm (66, -80) mm (60, -80) mm potential 0 V
charge ions ring at (25, 50) mm density ${ions}
slice from (0, -90) mm to (80, 100) mm cells 30
`;

function scene(text: string): Scene {
  const a = analyzeText(text);
  expect(a.diagnostics.filter((d) => d.severity === 'error')).toEqual([]);
  return a.scene;
}

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

function expectSameSlices(edited: Result, fresh: Result): void {
  expect(edited.stats.timings.slicesSuperposed).toBeDefined();
  // Peak surface fields (thin elements by their stored principal-value fields).
  expect(relDiff(edited.electrodes.map((e) => e.maxField), fresh.electrodes.map((e) => e.maxField))).toBeLessThan(1e-9);
  expect(edited.slices.length).toBe(fresh.slices.length);
  edited.slices.forEach((s, i) => {
    const f = fresh.slices[i];
    expect(relDiff(s.potential, f.potential)).toBeLessThan(1e-9);
    // 32-bit field components: equal to their rounding.
    expect(relDiff(s.fieldU, f.fieldU)).toBeLessThan(1e-6);
    expect(relDiff(s.fieldMagnitude, f.fieldMagnitude)).toBeLessThan(1e-6);
  });
}

describe('superposition of stored unit grids in 2d', () => {
  const cases: [string, (a: string, b: string) => string, [string, string], [string, string], [string, string]][] = [
    ['planar with a ground plane', (a, b) => planar(a, b), ['10 kV', '1 nC/m'], ['14 kV', '1 nC/m'], ['14 kV', '-3 nC/m']],
    ['planar without ground (potential at infinity unknown)', (a, b) => planar(a, b, false), ['10 kV', '1 nC/m'], ['7 kV', '1 nC/m'], ['7 kV', '2 nC/m']],
    ['axisymmetric', axisymmetric, ['20 kV', '0.1 nC/m'], ['25 kV', '0.1 nC/m'], ['25 kV', '-0.3 nC/m']],
  ];
  for (const [name, text, first, drive, free] of cases) {
    it(`${name}: drive-only and free-charge-only edits match a fresh solve`, () => {
      const cache = createEngineCache();
      const options = { level: 'coarse' as const, cache };
      solveScene(scene(text(...first)), options);
      expectSameSlices(solveScene(scene(text(...drive)), options)!, solveScene(scene(text(...drive)), { level: 'coarse' })!);
      expectSameSlices(solveScene(scene(text(...free)), options)!, solveScene(scene(text(...free)), { level: 'coarse' })!);
    });
    it(`${name}: superpose: true on a first solve gives the same grid`, () => {
      expectSameSlices(solveScene(scene(text(...first)), { level: 'coarse', superpose: true })!, solveScene(scene(text(...first)), { level: 'coarse' })!);
    });
  }
});
