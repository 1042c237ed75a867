// `voltscape solve --refine TOL`: the flag, and the report's refinement line (server/src/engine/adaptive.ts).
import { describe, expect, it } from 'vitest';
import { parseArgs } from '../../server/src/cli/args';
import { renderReport } from '../../server/src/cli/report';
import { solveScene } from '../../server/src/engine/index';
import { electrode, scene3d, sphere } from '../engine/scenes';

describe('solve --refine', () => {
  it('takes a tolerance between 0 and 1 and refuses anything else', () => {
    expect(parseArgs(['solve', 'x.vscape', '--refine', '1e-3'])).toMatchObject({ kind: 'solve', file: 'x.vscape', refine: 1e-3 });
    expect(parseArgs(['solve', '--refine=0.01', 'x.vscape'])).toMatchObject({ kind: 'solve', refine: 0.01 });
    expect(parseArgs(['solve', 'x.vscape'])).not.toHaveProperty('refine');
    for (const bad of [['--refine'], ['--refine', '0'], ['--refine', '2'], ['--refine=abc'], ['--refine', '-1e-3']]) {
      expect(parseArgs(['solve', 'x.vscape', ...bad]).kind).toBe('usage');
    }
  });

  it('prints one line with the rounds, the panels, why it stopped and each figure’s last change', () => {
    const scene = scene3d({ electrodes: [electrode('ball', sphere([0, 0, 0], 1))], mesh: { kind: 'size', size: 0.8 } });
    const result = solveScene(scene, { adaptive: { tolerance: 1e-6, maxRounds: 1 } })!;
    const r = result.stats.refinement!;
    const text = renderReport({ file: 'ball.vscape', scene, result, diagnostics: [] });
    const lines = text.split('\n').filter((l) => l.includes('adaptive refinement'));
    expect(lines.length).toBe(1);
    expect(lines[0]).toContain(`1 round (panels ${r.panels.join(', ')})`);
    expect(lines[0]).toContain('NOT within the tolerance');
    expect(lines[0]).toContain(`ball C ${r.reached.capacitance[0]!.toExponential(1)}`);
  });
});
