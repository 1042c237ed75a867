import { describe, expect, it } from 'vitest';
import { analyzeText } from '../../grammar/index';
import { createEngineCache } from '../../server/src/engine/index';
import { COARSE_GRID_CELLS, runSolveJob } from '../../server/src/lsp/solve-runner';
import type { FromWorker } from '../../server/src/lsp/worker-messages';

const scene = analyzeText(
  'mesh coarse\nelectrode s sphere center (0, 0, 0) mm radius 10 mm potential 1 kV\nslice xz at y = 0 from (-50, -50) mm to (50, 50) mm cells 100\n',
).scene;
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
});
