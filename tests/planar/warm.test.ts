// Idle warm-up of planar and axisymmetric drive-only edits (engine/planar/warm.ts): the stored
// per-electrode values are built in chunks that a stop can interrupt, and a live solve sums the
// chunks that are complete and evaluates the rest afresh. Either way the picture is the fresh
// solve's: the field is linear in the drives (superposition, e.g. Jackson, Classical
// Electrodynamics, sec. 1.13).
import { describe, expect, it } from 'vitest';
import { analyzeText } from '../../grammar/index';
import type { Scene } from '../../grammar/scene';
import { createEngineCache, solveScene } from '../../server/src/engine/index';
import type { Result } from '../../server/src/engine/result';
import { warmStoredGrids2d } from '../../server/src/engine/planar/warm';

const planar = (hv: string, ground: boolean) => `
space planar
medium oil
mesh size 8 mm
electrode bar circle center (-40 mm, 60 mm) radius 10 mm potential ${hv}
electrode shield strip from (-80, 120) mm to (80, 120) mm floating
electrode rod circle center (40 mm, 60 mm) radius 8 mm potential -3 kV
${ground ? 'ground plane at y = 0' : ''}
charge dust point at (0, 30) mm density 1 nC/m
slice from (-100, 1) mm to (100, 140) mm cells 40
probe across line from (-20, 60) mm to (20, 60) mm samples 9
`;

const axisymmetric = (hv: string) => `
space axisymmetric
medium air
mesh size 8 mm
electrode stem revolve (0, -60) mm (10, -60) mm (10, 40) mm (0, 40) mm potential ${hv}
electrode halo torus center (0, 70) mm major 30 mm minor 5 mm floating
electrode can revolve (60, -80) mm (60, 60) mm (66, 60) mm (66, -80) mm (60, -80) mm potential 0 V
charge ions ring at (25, 50) mm density 0.1 nC/m
slice from (-80, -90) mm to (80, 100) mm cells 40
probe gap point at (35, 0) mm
`;

function scene(text: string): Scene {
  const a = analyzeText(text);
  expect(a.diagnostics.filter((d) => d.severity === 'error')).toEqual([]);
  return a.scene;
}

function expectSame(edited: Result, fresh: Result): void {
  const rel = (a: ArrayLike<number>, b: ArrayLike<number>) => {
    let scale = 0, diff = 0;
    for (let i = 0; i < b.length; i++) {
      if (Number.isNaN(b[i])) {
        expect(Number.isNaN(a[i])).toBe(true);
        continue;
      }
      scale = Math.max(scale, Math.abs(b[i]));
      diff = Math.max(diff, Math.abs(a[i] - b[i]));
    }
    return diff / scale;
  };
  expect(rel(edited.electrodes.map((e) => e.maxField), fresh.electrodes.map((e) => e.maxField))).toBeLessThan(1e-9);
  expect(rel(edited.slices[0].potential, fresh.slices[0].potential)).toBeLessThan(1e-9);
  // 32-bit field components: equal to their rounding.
  expect(rel(edited.slices[0].fieldMagnitude, fresh.slices[0].fieldMagnitude)).toBeLessThan(1e-6);
  const probe = (r: Result) => r.probes.flatMap((p) => p.points.map((q) => q.potential));
  expect(rel(probe(edited), probe(fresh))).toBeLessThan(1e-9);
}

/** A stop that lets `polls` polls through. */
const stopAfter = (polls: number) => () => polls-- <= 0;

describe('idle warm-up of 2d drive-only edits', () => {
  const cases: [string, (hv: string) => string][] = [
    ['planar with a ground plane', (hv) => planar(hv, true)],
    ['planar without ground (potential at infinity unknown)', (hv) => planar(hv, false)],
    ['axisymmetric', axisymmetric],
  ];
  for (const [name, text] of cases) {
    it(`${name}: a warm-up stopped partway, then a drive edit, then a finished warm-up all give the fresh picture`, () => {
      const cache = createEngineCache();
      const options = { level: 'full' as const, cache, maxGridCells: 1600 };
      const fresh = (hv: string) => solveScene(scene(text(hv)), { level: 'full', maxGridCells: 1600 })!;
      // Nothing cached yet: the warm-up factors nothing and says so.
      expect(warmStoredGrids2d(scene(text('10 kV')), createEngineCache(), () => false, options)).toBe(false);
      solveScene(scene(text('10 kV')), options);
      // Stopped after a few chunks: not complete.
      expect(warmStoredGrids2d(scene(text('10 kV')), cache, stopAfter(6), options)).toBe(false);
      // A live drive edit sums what is stored and evaluates the rest (it builds nothing: the cache is warmed in the background).
      expectSame(solveScene(scene(text('14 kV')), options)!, fresh('14 kV'));
      expect(warmStoredGrids2d(scene(text('14 kV')), cache, () => false, options)).toBe(true);
      const edited = solveScene(scene(text('7 kV')), options)!;
      expect(edited.stats.timings.slicesSuperposed).toBeDefined();
      expectSame(edited, fresh('7 kV'));
      // A new geometry in a warmed cache: its full solve keeps every unit solution's values as it goes,
      // so the next drive edit sums them with no warm-up in between.
      const moved = (hv: string) => text(hv).replace('mesh size 8 mm', 'mesh size 7 mm');
      solveScene(scene(moved('7 kV')), options);
      // Nothing left to build: the warm-up polls only twice (after the drives and after the slice), never per chunk.
      expect(warmStoredGrids2d(scene(moved('7 kV')), cache, stopAfter(2), options)).toBe(true);
      const next = solveScene(scene(moved('12 kV')), options)!;
      expect(next.stats.timings.slicesSuperposed).toBeDefined();
      expectSame(next, solveScene(scene(moved('12 kV')), { level: 'full', maxGridCells: 1600 })!);
    });
  }

  it('a 3d scene has nothing to warm here', () => {
    const cache = createEngineCache();
    expect(warmStoredGrids2d(scene('electrode s sphere center (0, 0, 0) mm radius 10 mm potential 1 kV\n'), cache, () => false)).toBe(true);
  });
});
