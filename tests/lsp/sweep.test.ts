// Live sweeps over the protocol: the real server process (node dist/server.js --stdio) runs a scene's
// `sweep` in its solve worker after the full result, on the coarse level, and sends
// `voltscape/sweepResult` for the newest version only. Every wait is for a notification, never a sleep.
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { EPSILON_0 } from '../../grammar/scene';
import type { SweepResultParams } from '../../server/src/protocol';
import { ensureBuilt, LspClient } from './lsp-client';

const root = join(__dirname, '../..');
const uri = 'file:///work/radius-sweep.vscape';
// An isolated sphere whose radius is swept.
const scene = (from: number, to: number, steps: number) => `scene "Radius study"
medium vacuum
mesh coarse
let a = 20 mm
electrode dome sphere center (0, 0, 0) radius a potential 10 kV
sweep a from ${from} mm to ${to} mm steps ${steps}
`;

let client: LspClient;
beforeAll(async () => {
  ensureBuilt(root);
  client = await LspClient.start(join(root, 'dist/server.js'), { solveDelay: 50 });
});
afterAll(async () => {
  await client?.stop();
});

const sweepOf = (version: number, state: SweepResultParams['state']) =>
  client.waitFor('voltscape/sweepResult', (p: SweepResultParams) => p.uri === uri && p.version === version && p.state === state);

describe('live sweeps', () => {
  it("sweeps an isolated sphere's radius: C = 4πε0·a at every step, only for the newest version", async () => {
    await client.open(uri, scene(10, 30, 6), 1);
    // Version 1's sweep starts; an edit then supersedes it.
    await sweepOf(1, 'running');
    const changedAt = performance.now();
    await client.change(uri, 2, scene(10, 40, 4));
    const done = await sweepOf(2, 'done');
    const p = done.params as SweepResultParams;
    expect(p.level).toBe('coarse');
    expect(p.name).toBe('a');
    expect(p.unit).toBe('m');
    expect(p.values).toEqual([0.01, 0.02, 0.03, 0.04]);
    expect(p.electrodes.map((e) => e.name)).toEqual(['dome']);
    // Isolated sphere of radius a (textbook electrostatics, references.md "Closed forms"): C = 4πε0·a.
    // Tolerance: the flat-panel capacitance error is about 4/N (docs/geometry.md); live sweeps use the
    // coarse level, which meshes this sphere (`mesh coarse`) with N = 180 panels, so 4/N = 2.2%;
    // measured +0.26% at every step (the mesh scales with the radius).
    p.values.forEach((a, k) => {
      const c = p.electrodes[0].capacitance[k];
      expect(Math.abs(c - 4 * Math.PI * EPSILON_0 * a) / (4 * Math.PI * EPSILON_0 * a)).toBeLessThan(4 / 180);
    });
    // Vacuum has no strength and there is no limit: no margin.
    expect(p.basis).toBeNull();
    expect(p.electrodes[0].margin).toEqual([null, null, null, null]);
    // Nothing of version 1 arrives once version 2 exists (a result of it may only predate the edit).
    const late = client.received.filter((r) => r.method === 'voltscape/sweepResult' && r.params.version === 1 && r.params.state !== 'running' && r.at > changedAt);
    expect(late).toEqual([]);
  }, 60_000);

  it("says 'none' once the swept document no longer has a sweep", async () => {
    await client.change(uri, 3, scene(10, 40, 4).replace(/sweep .*\n/, ''));
    const none = await sweepOf(3, 'none');
    expect(none.params.values).toEqual([]);
  }, 60_000);
});
