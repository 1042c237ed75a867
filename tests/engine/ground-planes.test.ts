// The engine given a Scene with two ground planes on one axis (the grammar's checks reject that as
// VS307, but the engine must stay safe for any Scene): it keeps the first, ignores the second (VS406)
// and still gives the one-plane answer.
import { describe, expect, it } from 'vitest';
import { EPSILON_0 } from '../../grammar/scene';
import { solveScene } from '../../server/src/engine/index';
import { electrode, scene3d, sphere } from './scenes';

describe('ground planes in the engine', () => {
  it('ignores a second plane on the same axis with VS406 on that plane, and solves with the first', () => {
    const a = 0.1;
    const s = scene3d({
      mesh: { kind: 'preset', preset: 'coarse' },
      ground: [{ axis: 'z', at: 0 }, { axis: 'z', at: 2 }],
      electrodes: [electrode('ball', sphere([0, 0, 3 * a], a))],
    });
    s.groundPlanes[1].range = { start: { line: 7, character: 0 }, end: { line: 7, character: 21 } };
    const r = solveScene(s, { convergence: false })!;
    const d = r.diagnostics.filter((x) => x.code === 'VS406');
    expect(d).toHaveLength(1);
    expect(d[0].range.start.line).toBe(7);
    // Sphere over a grounded plane at h/a = 3: C/C0 = 1.2011552846 (references.md, series summed);
    // the coarse mesh's flat-panel error is under 1%.
    const C0 = 4 * Math.PI * EPSILON_0 * a;
    expect(Math.abs(r.electrodes[0].capacitance / C0 / 1.2011552846 - 1)).toBeLessThan(0.01);
  });
});
