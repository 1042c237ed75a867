// When the stored per-electrode grids of drive-only edits are built (engine/superpose.ts): a build
// cut short keeps what it computed and a later one goes on from there; in 'stored-only' mode a drive
// edit evaluates afresh what is not stored yet and builds nothing costly. In every case the picture
// equals a fresh solve's, since the field is linear in the drives (superposition of the Dirichlet
// problem's unit solutions: Jackson, Classical Electrodynamics, sec. 1.13; Smythe, Static and
// Dynamic Electricity, sec. 2.15, capacitance coefficients).
import { describe, expect, it } from 'vitest';
import { analyzeText } from '../../grammar/index';
import type { Scene3d } from '../../grammar/scene';
import type { Result } from '../../server/src/engine/result';
import { createCache3d, solve3d, type Cache3d } from '../../server/src/engine/solve';
import { createEngineCache, solveScene } from '../../server/src/engine/index';
import { storedProgress, warmStoredGrids, withGridBuilding } from '../../server/src/engine/superpose';

// A slice of 150 × 150 cells: over the coarse picture's 2e5 point-panel pairs, so it goes through
// the treecode (one walk of the tree serves all solutions, but each adds its own multipole terms,
// so a build costs several evaluations' worth and is done in chunks).
const sceneText = (hv: string, shield = '-2 kV') => `
scene "Build check"
space 3d
medium air
mesh coarse
ground plane at z = 0
electrode hv sphere center (0, 0, 60) mm radius 20 mm potential ${hv}
electrode shield plate center (60, 0, 60) mm size (40, 40) mm normal x potential ${shield}
electrode pickup sphere center (-60, 0, 60) mm radius 10 mm floating
charge dust point at (0, 0, 25) mm value 2 nC
slice xz at y = 0 from (-100, 1) mm to (100, 110) mm cells 150
probe path line from (-100, 5, 30) mm to (100, 5, 30) mm samples 9
`;

function scene(hv: string, shield?: string): Scene3d {
  const a = analyzeText(sceneText(hv, shield));
  expect(a.diagnostics.filter((d) => d.severity === 'error')).toEqual([]);
  return a.scene as Scene3d;
}

const solve = (hv: string, cache: Cache3d = createCache3d(), isCancelled?: () => boolean, superpose?: boolean, shield?: string) =>
  solve3d(scene(hv, shield), { maxPanels: 20000, maxGridCells: 250000, level: 'coarse', convergence: false, cache, isCancelled, superpose });

function level(cache: Cache3d) {
  expect(cache.levels.size).toBe(1);
  return [...cache.levels.values()][0];
}

/** Largest difference relative to the largest finite magnitude of the reference (NaN where the reference is NaN). */
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
  return diff / scale;
}

function expectSame(edited: Result, fresh: Result): void {
  const [s] = edited.slices, [f] = fresh.slices;
  expect(relDiff(s.potential, f.potential)).toBeLessThan(1e-9);
  // Fields are stored as 32-bit floats: equal to their rounding.
  expect(relDiff(s.fieldMagnitude, f.fieldMagnitude)).toBeLessThan(1e-6);
  const probe = (r: Result) => r.probes.flatMap((p) => p.points.flatMap((q) => [q.potential, ...q.field]));
  expect(relDiff(probe(edited), probe(fresh))).toBeLessThan(1e-9);
  expect(relDiff(edited.electrodes.map((e) => e.maxField), fresh.electrodes.map((e) => e.maxField))).toBeLessThan(1e-9);
}

describe('building the stored grids of drive-only edits', () => {
  it("'stored-only': a drive edit evaluates the slice afresh, with the same values, and leaves its build undone", () => {
    const cache = createCache3d();
    withGridBuilding('stored-only', () => solve('10 kV', cache));
    const edited = withGridBuilding('stored-only', () => solve('12 kV', cache))!;
    expectSame(edited, solve('12 kV')!);
    const progress = storedProgress(level(cache));
    // The probe line and the thin plate's panels cost one pass for all solutions (direct sums): built;
    // the slice's 3 unit grids by the treecode would cost 3 evaluations: not built.
    expect(progress.total).toBeGreaterThan(3 * 150 * 70);
    expect(progress.done).toBeLessThan(progress.total / 10);
  });

  it("'stored-only': a repeated edit of one drive (the floating electrode following) reuses the grid of its change", () => {
    const cache = createCache3d();
    const live = (hv: string, shield?: string) => withGridBuilding('stored-only', () => solve(hv, cache, undefined, undefined, shield))!;
    live('10 kV');
    // The first edit of hv: one grid along its change (hv and the floating pickup move together).
    expectSame(live('12 kV'), solve('12 kV')!);
    expect(storedProgress(level(cache)).directions).toBe(1);
    // Further edits of hv go along the same direction: no new grid, and still the fresh solve's values.
    expectSame(live('15 kV'), solve('15 kV')!);
    expectSame(live('-3 kV'), solve('-3 kV')!);
    expect(storedProgress(level(cache)).directions).toBe(1);
    // An edit of the shield is a new direction.
    expectSame(live('-3 kV', '4 kV'), solve('-3 kV', undefined, undefined, undefined, '4 kV')!);
    expect(storedProgress(level(cache)).directions).toBe(2);
  });

  it("'stored-only': a repeated edit of one drive still goes along its kept grid after a warm-up completed part of the unit grids", () => {
    const cache = createCache3d();
    const live = (hv: string) => withGridBuilding('stored-only', () => solve(hv, cache))!;
    live('10 kV');
    live('12 kV');
    expect(storedProgress(level(cache)).directions).toBe(1);
    // Warm until over half the unit values are stored: hv's slice grid is complete, the floating pickup's
    // (which moves with hv) is not, so the unit grids alone would split the change.
    const total = storedProgress(level(cache)).total;
    expect(warmStoredGrids({ store: new Map([['3d', cache]]) }, () => storedProgress(level(cache)).done > 0.6 * total)).toBe(false);
    expectSame(live('15 kV'), solve('15 kV')!);
    expect(storedProgress(level(cache)).directions).toBe(1);
  });

  it('a build cut short keeps its values; the next build goes on from there; stored-only then sums them', () => {
    const cache = createCache3d();
    solve('10 kV', cache);
    // Cancel the warm-up build after a few polls: it returns null but keeps the chunks it finished.
    let polls = 0;
    expect(solve('10 kV', cache, () => ++polls > 4, true)).toBeNull();
    const first = storedProgress(level(cache));
    expect(first.done).toBeGreaterThan(0);
    expect(first.done).toBeLessThan(first.total);
    // Each later build, cut short at a poll, adds to what is stored.
    let before = first.done;
    // Steps are fitted to a few milliseconds each (superpose.ts STEP_MS), so the number of rounds depends on the machine.
    for (let round = 0; round < 5000; round++) {
      polls = 0;
      const r = solve('10 kV', cache, () => ++polls > 4, true);
      const now = storedProgress(level(cache));
      expect(now.done).toBeGreaterThanOrEqual(before);
      before = now.done;
      if (r) break;
    }
    expect(storedProgress(level(cache)).done).toBe(first.total);
    // With every grid stored, a drive edit in 'stored-only' mode sums them: the same values as a fresh solve.
    const edited = withGridBuilding('stored-only', () => solve('-7 kV', cache))!;
    expect(edited.stats.timings.slicesSuperposed).toBeDefined();
    expectSame(edited, solve('-7 kV')!);
  });

  it('warmStoredGrids builds, in stoppable steps, the grids the latest live solves went through; a drive edit then sums them', () => {
    const cache = createEngineCache();
    const live = (hv: string) => withGridBuilding('stored-only', () => solveScene(scene(hv), { level: 'coarse', cache }))!;
    live('10 kV');
    const levelOf = () => [...(cache.store.get('3d') as Cache3d).levels.values()][0];
    const before = storedProgress(levelOf());
    expect(before.done).toBeLessThan(before.total);
    // Stopped after a few steps: false, with what it built kept.
    let polls = 0;
    expect(warmStoredGrids(cache, () => ++polls > 3)).toBe(false);
    const partial = storedProgress(levelOf());
    expect(partial.done).toBeGreaterThan(before.done);
    expect(warmStoredGrids(cache, () => false)).toBe(true);
    expect(storedProgress(levelOf()).done).toBe(before.total);
    // Every grid stored: a drive edit along a new direction needs no new grid, and matches a fresh solve.
    const edited = live('-7 kV');
    expect(storedProgress(levelOf()).directions).toBe(0);
    expectSame(edited, solveScene(scene('-7 kV'), { level: 'coarse' })!);
  });

  it("warmStoredGrids still builds the coarse picture's grids after a full solve went over the same level for its estimate", () => {
    const cache = createEngineCache();
    const live = (hv: string, level: 'coarse' | 'full') => withGridBuilding('stored-only', () => solveScene(scene(hv), { level, cache }))!;
    const coarse = live('10 kV', 'coarse');
    const full = live('10 kV', 'full');
    // The full solve's estimate level is the coarse picture's mesh (scale 2, within the coarse budget).
    expect(full.stats.levels[0]).toBe(coarse.stats.panels);
    const c3 = cache.store.get('3d') as Cache3d;
    const coarseLevel = [...c3.levels.values()].find((l) => l.sys.n === coarse.stats.panels)!;
    expect(warmStoredGrids(cache, () => false)).toBe(true);
    // The coarse picture's slice and probe grids are complete (not only the estimate pass's surface).
    const progress = storedProgress(coarseLevel);
    expect(progress.total).toBeGreaterThan(3 * 150 * 70);
    expect(progress.done).toBe(progress.total);
    expectSame(live('-7 kV', 'coarse'), solveScene(scene('-7 kV'), { level: 'coarse' })!);
  });
});
