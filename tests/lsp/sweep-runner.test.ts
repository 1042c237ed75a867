// The solve worker's sweep job (server/src/lsp/sweep-runner.ts), run in-process: coarse level, the
// user's maxPanels, cancelled between and within steps, failures as messages.
import { describe, expect, it } from 'vitest';
import { EPSILON_0 } from '../../grammar/scene';
import { createEngineCache } from '../../server/src/engine/index';
import { runSweepJob } from '../../server/src/lsp/sweep-runner';
import type { FromWorker, SweepJob } from '../../server/src/lsp/worker-messages';

// A sphere whose drive is swept: the geometry never changes.
const DRIVE = `medium air
mesh coarse
let v = 1 kV
electrode dome sphere center (0, 0, 0) radius 20 mm potential v
sweep v from 1 kV to 3 kV steps 3
`;
const job = (text: string, extra: Partial<SweepJob> = {}): SweepJob => ({ type: 'sweep', id: 7, slot: 0, generation: 1, uri: 'file:///s.vscape', text, name: 'v', maxPanels: 8000, ...extra });

function run(j: SweepJob, isCancelled: () => boolean = () => false): FromWorker[] {
  const out: FromWorker[] = [];
  runSweepJob(j, createEngineCache(), isCancelled, (m) => void out.push(m));
  return out;
}

describe('the live sweep job', () => {
  it('sweeps a drive: per electrode, one figure per step; C = 4πε0·εr·a throughout, E ∝ V, margin to the air strength', () => {
    const out = run(job(DRIVE));
    expect(out.map((m) => m.type)).toEqual(['sweep', 'done']);
    const m = out[0];
    if (m.type !== 'sweep') throw new Error('no sweep');
    expect(m.id).toBe(7);
    const s = m.sweep;
    expect(s).toMatchObject({ name: 'v', unit: 'V', space: '3d', basis: 'air strength', values: [1000, 2000, 3000] });
    const [dome] = s.electrodes;
    // Isolated sphere (textbook electrostatics, references.md "Closed forms"): C = 4πε0·εr·a, air εr = 1.0006
    // (docs/language.md media table; common practice). The coarse level meshes it with 180 panels: the
    // flat-panel error is about 4/N = 2.2% (docs/geometry.md); measured +0.26%.
    const c0 = 4 * Math.PI * EPSILON_0 * 1.0006 * 0.02;
    for (const c of dome.capacitance) expect(Math.abs(c - c0) / c0).toBeLessThan(4 / 180);
    // Linearity (superposition): the peak field scales with the drive; margin = strength (3 kV/mm, same table) / peak.
    dome.maxField.forEach((e, k) => {
      expect(e / s.values[k]).toBeCloseTo(dome.maxField[0] / s.values[0], 9);
      expect(dome.margin[k]).toBeCloseTo(3e6 / e, 9);
    });
  });

  it('respects maxPanels: under a lower limit the engine meshes coarser (the figures change) and still answers', () => {
    const figures = (maxPanels: number) => {
      const [m] = run(job(DRIVE, { maxPanels }));
      if (m.type !== 'sweep') throw new Error('no sweep');
      return m.sweep.electrodes[0].capacitance[0];
    };
    const fine = figures(8000);
    const coarse = figures(60);
    expect(coarse).not.toBe(fine);
    // Same closed form as above; at most 60 panels, so within 4/60 = 6.7%.
    const c0 = 4 * Math.PI * EPSILON_0 * 1.0006 * 0.02;
    expect(Math.abs(coarse - c0) / c0).toBeLessThan(4 / 60);
  });

  it('stops when cancelled part-way (the engine and the steps poll), sending no figures', () => {
    let polls = 0;
    const out = run(job(DRIVE), () => ++polls > 3);
    expect(out).toEqual([{ type: 'done', id: 7, state: 'cancelled' }]);
  });

  it('says why when a step cannot be solved', () => {
    // Growing the radius makes the dome swallow a second electrode at the last step.
    const collides = `medium air
mesh coarse
let a = 20 mm
electrode dome sphere center (0, 0, 0) radius a potential 1 kV
electrode pin sphere center (50, 0, 0) mm radius 5 mm potential 0 V
sweep a from 10 mm to 50 mm steps 2
`;
    const out = run(job(collides, { name: 'a' }));
    expect(out).toHaveLength(1);
    expect(out[0]).toMatchObject({ type: 'done', state: 'failed' });
    expect((out[0] as { message: string }).message).toMatch(/at a = 0\.05 m the scene has \d+ errors?: sweep stopped/);
  });
});
