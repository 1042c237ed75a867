import { describe, expect, it } from 'vitest';
import { analyzeText } from '../../grammar/index';
import { createEngineCache } from '../../server/src/engine/index';
import { COARSE_GRID_CELLS, runSolveJob, warmSolveJob, WarmScenes } from '../../server/src/lsp/solve-runner';
import type { FromWorker } from '../../server/src/lsp/worker-messages';

const sceneText = 'mesh coarse\nelectrode s sphere center (0, 0, 0) mm radius 10 mm potential 1 kV\nslice xz at y = 0 from (-50, -50) mm to (50, 50) mm cells 100\n';
const scene = analyzeText(sceneText).scene;
const job = { type: 'solve' as const, id: 7, slot: 0, generation: 1, scene, maxPanels: 8000, maxGridCells: 65536 };

describe('solve runner', () => {
  it('caps the coarse picture grid without a grid warning, and reports each level then done', () => {
    const out: FromWorker[] = [];
    runSolveJob({ ...job, levels: ['coarse'] }, createEngineCache(), () => false, (m) => out.push(m));
    expect(out.map((m) => m.type)).toEqual(['result', 'done']);
    const first = out[0] as Extract<FromWorker, { type: 'result' }>;
    expect(first.id).toBe(7);
    expect(first.level).toBe('coarse');
    const slice = first.result.slices[0];
    expect(slice.nu * slice.nv).toBeLessThanOrEqual(COARSE_GRID_CELLS);
    expect(first.result.diagnostics.map((d) => d.code)).not.toContain('VS408');
  });

  it('stops at once when cancelled, and says so', () => {
    const out: FromWorker[] = [];
    runSolveJob({ ...job, levels: ['coarse', 'full'] }, createEngineCache(), () => true, (m) => out.push(m));
    expect(out).toEqual([{ type: 'done', id: 7, state: 'cancelled' }]);
  });

  it('warms the stored grids while idle; a warm scene skips the coarse level, a cold one does not', () => {
    const cache = createEngineCache();
    const warm = new WarmScenes();
    const geometryJob = { ...job, levels: ['coarse', 'full'] as ('coarse' | 'full')[], geometry: 'sphere-10mm' };
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
    const drive = { ...geometryJob, scene: analyzeText(sceneText.replace('1 kV', '2.5 kV')).scene };
    const warmOut: FromWorker[] = [];
    runSolveJob(drive, cache, () => false, (m) => warmOut.push(m), warm);
    expect(levelsOf(warmOut)).toEqual(['full']);
    const full = warmOut[0] as Extract<FromWorker, { type: 'result' }>;
    // The charge follows the new potential: Q = C·V with C = 4πε0·a for an isolated sphere
    // (Jackson, Classical Electrodynamics, sec. 1.11), within 2 % on this coarse mesh.
    const C = 4 * Math.PI * 8.8541878128e-12 * 0.01;
    expect(Math.abs(full.result.electrodes[0].charge / (C * 2500) - 1)).toBeLessThan(0.02);
    // Other free charges or other limits make a different scene: not warm.
    const other: FromWorker[] = [];
    runSolveJob({ ...drive, maxGridCells: 1024 }, cache, () => false, (m) => other.push(m), warm);
    expect(levelsOf(other)).toEqual(['coarse', 'full']);
  });
});
