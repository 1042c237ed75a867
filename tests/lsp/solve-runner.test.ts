import { describe, expect, it } from 'vitest';
import { analyzeText } from '../../grammar/index';
import { createEngineCache, solveScene } from '../../server/src/engine/index';
import { COARSE_GRID_CELLS, COARSE_GRID_CELLS_LEAST, COARSE_PICTURE_CELLS, coarseGridCells, runSolveJob, warmKey, warmSolveJob, WarmScenes } from '../../server/src/lsp/solve-runner';
import type { FromWorker } from '../../server/src/lsp/worker-messages';

const sceneText = 'mesh coarse\nelectrode s sphere center (0, 0, 0) mm radius 10 mm potential 1 kV\nslice xz at y = 0 from (-50, -50) mm to (50, 50) mm cells 100\n';
const scene = analyzeText(sceneText).scene;
const job = { type: 'solve' as const, id: 7, slot: 0, generation: 1, scene, maxPanels: 8000, maxGridCells: 65536 };

describe('solve runner', () => {
  it('caps the coarse picture grid without a grid warning, and reports each level then done', () => {
    const out: FromWorker[] = [];
    runSolveJob({ ...job, levels: ['coarse'] }, createEngineCache(), () => false, (m) => out.push(m));
    expect(out.map((m) => m.type)).toEqual(['started', 'result', 'done']);
    expect(out[0]).toEqual({ type: 'started', id: 7, level: 'coarse' });
    const first = out[1] as Extract<FromWorker, { type: 'result' }>;
    expect(first.id).toBe(7);
    expect(first.level).toBe('coarse');
    const slice = first.result.slices[0];
    expect(slice.nu * slice.nv).toBeLessThanOrEqual(COARSE_GRID_CELLS);
    expect(first.result.diagnostics.map((d) => d.code)).not.toContain('VS408');
  });

  it('shares a cell budget between the coarse picture\'s slices, each keeping a floor', () => {
    expect(coarseGridCells(1)).toBe(COARSE_GRID_CELLS);
    expect(coarseGridCells(2)).toBe(COARSE_PICTURE_CELLS / 2);
    expect(coarseGridCells(2)).toBeLessThan(COARSE_GRID_CELLS);
    expect(coarseGridCells(10)).toBe(COARSE_GRID_CELLS_LEAST);
    const two = analyzeText(`${sceneText}\nslice xy at z = 0 from (-50, -50) mm to (50, 50) mm cells 100\n`).scene;
    const out: FromWorker[] = [];
    runSolveJob({ ...job, scene: two, levels: ['coarse'] }, createEngineCache(), () => false, (m) => out.push(m));
    const result = (out.find((m) => m.type === 'result') as Extract<FromWorker, { type: 'result' }>).result;
    expect(result.slices).toHaveLength(2);
    for (const s of result.slices) expect(s.nu * s.nv).toBeLessThanOrEqual(coarseGridCells(2));
  });

  it('stops at once when cancelled, and says so', () => {
    const out: FromWorker[] = [];
    runSolveJob({ ...job, levels: ['coarse', 'full'] }, createEngineCache(), () => true, (m) => out.push(m));
    expect(out).toEqual([{ type: 'done', id: 7, state: 'cancelled' }]);
  });

  it('warms the stored grids while idle; a warm scene skips the coarse level, a cold one does not', () => {
    // Two electrodes, so that the unit grids cost more than one evaluation and are left to the warm-up.
    const pairText = (kV: number) =>
      `mesh coarse\nelectrode s sphere center (0, 0, 0) mm radius 10 mm potential ${kV} kV\nelectrode t sphere center (30, 0, 0) mm radius 5 mm floating\nslice xz at y = 0 from (-50, -50) mm to (50, 50) mm cells 100\n`;
    const cache = createEngineCache();
    const warm = new WarmScenes();
    const geometryJob = { ...job, scene: analyzeText(pairText(1)).scene, levels: ['coarse', 'full'] as ('coarse' | 'full')[], geometry: 'pair' };
    const levelsOf = (out: FromWorker[]) => out.filter((m) => m.type === 'result').map((m) => (m as Extract<FromWorker, { type: 'result' }>).level);
    const first: FromWorker[] = [];
    runSolveJob(geometryJob, cache, () => false, (m) => first.push(m), warm);
    expect(levelsOf(first)).toEqual(['coarse', 'full']);
    // A warm-up stopped at its first poll leaves the scene cold.
    expect(warmSolveJob(geometryJob, cache, () => true, warm)).toBe(false);
    const cold: FromWorker[] = [];
    runSolveJob(geometryJob, cache, () => false, (m) => cold.push(m), warm);
    expect(levelsOf(cold)).toEqual(['coarse', 'full']);
    // A finished warm-up: the next job for the scene (a drive edit) goes straight to the full level.
    expect(warmSolveJob(geometryJob, cache, () => false, warm)).toBe(true);
    const drive = { ...geometryJob, scene: analyzeText(pairText(2.5)).scene };
    const warmOut: FromWorker[] = [];
    runSolveJob(drive, cache, () => false, (m) => warmOut.push(m), warm);
    expect(levelsOf(warmOut)).toEqual(['full']);
    // The worker says which level it starts (the status bar shows it): only the full one here.
    expect(warmOut.filter((m) => m.type === 'started')).toEqual([{ type: 'started', id: 7, level: 'full' }]);
    // The summed picture is the fresh solve's (superposition: Jackson, Classical Electrodynamics, sec. 1.13).
    const full = (warmOut.find((m) => m.type === 'result') as Extract<FromWorker, { type: 'result' }>).result;
    const fresh = solveScene(drive.scene, { level: 'full', maxPanels: job.maxPanels, maxGridCells: job.maxGridCells })!;
    const scale = Math.max(...fresh.electrodes.map((e) => Math.abs(e.charge)));
    full.electrodes.forEach((e, k) => expect(Math.abs(e.charge - fresh.electrodes[k].charge)).toBeLessThan(1e-9 * scale));
    expect(full.electrodes[1].potential).toBeCloseTo(fresh.electrodes[1].potential, 6);
    const p = full.slices[0].potential, q = fresh.slices[0].potential;
    let worst = 0;
    for (let i = 0; i < q.length; i++) worst = Math.max(worst, Math.abs(p[i] - q[i]));
    expect(worst).toBeLessThan(1e-9 * 2500);
    // Other limits make a different scene (not warm); so does a 2d space (its grids are never warmed in the background).
    const other: FromWorker[] = [];
    runSolveJob({ ...drive, maxGridCells: 1024 }, cache, () => false, (m) => other.push(m), warm);
    expect(levelsOf(other)).toEqual(['coarse', 'full']);
    expect(warmKey({ ...drive, scene: analyzeText('space planar\nelectrode w circle center (0, 0) mm radius 10 mm potential 1 kV\n').scene })).toBeNull();
  });
});
