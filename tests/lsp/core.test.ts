// The core's bookkeeping, with a controllable solver: debounce, newest-version-only results,
// stale pictures, the time limit (VS501) and solver failures (VS502). The solver here is a test
// double that only records jobs; real solving is covered by the protocol tests.
import { afterEach, beforeEach, describe, expect, it, vi } from 'vitest';
import { LSPErrorCodes, ResponseError } from 'vscode-languageserver';
import { ServerCore, type Host } from '../../server/src/lsp/core';
import { FeatureError } from '../../server/src/lsp/feature-error';
import { makeGuard } from '../../server/src/lsp/server';
import { defaultSettings, readSettings } from '../../server/src/lsp/settings';
import type { SolveCallbacks, SolveRequest, Solver } from '../../server/src/lsp/solver';
import { solveScene } from '../../server/src/engine/index';
import { analyzeText } from '../../grammar/index';
import type { Result } from '../../server/src/engine/result';

class RecordingSolver implements Solver {
  jobs: { uri: string; request: SolveRequest; callbacks: SolveCallbacks }[] = [];
  cancelled: string[] = [];
  solve(uri: string, request: SolveRequest, callbacks: SolveCallbacks) {
    this.jobs.push({ uri, request, callbacks });
  }
  idleStopped: string[] = [];
  cancel(uri: string, idleToo?: boolean) {
    this.cancelled.push(uri);
    if (idleToo) this.idleStopped.push(uri);
  }
  dispose() {}
}

function recordingHost() {
  const events: { kind: string; params: any }[] = [];
  const host: Host = {
    publishDiagnostics: (uri, version, diagnostics) => events.push({ kind: 'diagnostics', params: { uri, version, diagnostics } }),
    notify: (type, params) => events.push({ kind: type.method, params }),
    log: (message) => events.push({ kind: 'log', params: message }),
  };
  return { host, events };
}

const uri = 'file:///s.vscape';
const scene = (kV: number) => `mesh coarse\nelectrode s sphere center (0, 0, 0) mm radius 10 mm potential ${kV} kV\n`;
let result: Result;

describe('server core', () => {
  beforeEach(() => {
    vi.useFakeTimers();
    // A real result to pass through (a coarse solve of the same sphere).
    result ??= solveScene(analyzeText(scene(1)).scene, { level: 'coarse' })!;
  });
  afterEach(() => vi.useRealTimers());

  it('publishes diagnostics at once and solves once after the debounce, for the newest version', () => {
    const { host, events } = recordingHost();
    const solver = new RecordingSolver();
    const core = new ServerCore(host, solver);
    core.update(uri, scene(1), 1);
    core.update(uri, scene(2), 2);
    core.update(uri, scene(3), 3);
    expect(events.filter((e) => e.kind === 'diagnostics').map((e) => e.params.version)).toEqual([1, 2, 3]);
    expect(solver.jobs).toHaveLength(0);
    vi.advanceTimersByTime(defaultSettings.solveDelay - 1);
    expect(solver.jobs).toHaveLength(0);
    vi.advanceTimersByTime(1);
    expect(solver.jobs).toHaveLength(1);
    expect(solver.jobs[0].request.scene.electrodes[0].drive).toEqual({ kind: 'potential', value: 3000 });
    expect(solver.jobs[0].request.levels).toEqual(['coarse', 'full']);
  });

  it('drops a result whose version is no longer the newest', () => {
    const { host, events } = recordingHost();
    const solver = new RecordingSolver();
    const core = new ServerCore(host, solver);
    core.update(uri, scene(1), 1);
    vi.advanceTimersByTime(defaultSettings.solveDelay);
    core.update(uri, scene(2), 2);
    solver.jobs[0].callbacks.onResult('coarse', result, 5);
    expect(events.some((e) => e.kind === 'voltscape/result')).toBe(false);
    expect(core.latestResult(uri)).toBeNull();
  });

  it('sends each level for the newest version and merges solve diagnostics with the analysis', () => {
    const { host, events } = recordingHost();
    const solver = new RecordingSolver();
    const core = new ServerCore(host, solver);
    core.update(uri, scene(1), 1);
    vi.advanceTimersByTime(defaultSettings.solveDelay);
    const marked: Result = { ...result, diagnostics: [{ code: 'VS401', severity: 'warning', message: 'peak', range: result.electrodes[0].range }] };
    solver.jobs[0].callbacks.onLevel?.('coarse');
    solver.jobs[0].callbacks.onResult('coarse', marked, 5);
    solver.jobs[0].callbacks.onLevel?.('full');
    solver.jobs[0].callbacks.onResult('full', marked, 7);
    solver.jobs[0].callbacks.onDone('done');
    const results = events.filter((e) => e.kind === 'voltscape/result').map((e) => [e.params.version, e.params.level, e.params.stale]);
    expect(results).toEqual([
      [1, 'coarse', false],
      [1, 'full', false],
    ]);
    const lastDiagnostics = events.filter((e) => e.kind === 'diagnostics').pop()!.params;
    expect(lastDiagnostics.version).toBe(1);
    expect(lastDiagnostics.diagnostics.map((d: any) => d.code)).toEqual(['VS401']);
    expect(events.filter((e) => e.kind === 'voltscape/solveStatus').map((e) => [e.params.state, e.params.level])).toEqual([
      ['queued', undefined],
      ['solving', undefined],
      ['solving', 'coarse'],
      ['solving', 'full'],
      ['done', undefined],
    ]);
  });

  it('says "solving" with the level the worker started, so never "coarse" when the worker skips that level', () => {
    const { host, events } = recordingHost();
    const solver = new RecordingSolver();
    const core = new ServerCore(host, solver);
    core.update(uri, scene(1), 1);
    vi.advanceTimersByTime(defaultSettings.solveDelay);
    solver.jobs[0].callbacks.onLevel?.('full');
    solver.jobs[0].callbacks.onResult('full', result, 7);
    solver.jobs[0].callbacks.onDone('done');
    const levels = events.filter((e) => e.kind === 'voltscape/solveStatus' && e.params.state === 'solving').map((e) => e.params.level);
    expect(levels).toEqual([undefined, 'full']);
  });

  it('asks a 3d drive-only edit for both levels with the same geometry (the worker skips the coarse one once warm); a 2d one for the full level only', () => {
    const { host } = recordingHost();
    const solver = new RecordingSolver();
    const core = new ServerCore(host, solver);
    const finish = (job: (typeof solver.jobs)[number]) => {
      job.callbacks.onResult('coarse', result, 5);
      job.callbacks.onResult('full', result, 5);
      job.callbacks.onDone('done');
    };
    core.update(uri, scene(1), 1);
    vi.advanceTimersByTime(defaultSettings.solveDelay);
    finish(solver.jobs[0]);
    core.update(uri, scene(2), 2);
    vi.advanceTimersByTime(defaultSettings.solveDelay);
    expect(solver.jobs[1].request.levels).toEqual(['coarse', 'full']);
    expect(solver.jobs[1].request.geometry).toBe(solver.jobs[0].request.geometry);
    finish(solver.jobs[1]);
    core.update(uri, scene(2).replace('radius 10 mm', 'radius 11 mm'), 3);
    vi.advanceTimersByTime(defaultSettings.solveDelay);
    expect(solver.jobs[2].request.levels).toEqual(['coarse', 'full']);
    expect(solver.jobs[2].request.geometry).not.toBe(solver.jobs[0].request.geometry);

    const planar = (kV: number) => `space planar\nmesh coarse\nelectrode w circle center (0, 0) mm radius 10 mm potential ${kV} kV\n`;
    const other = 'file:///p.vscape';
    core.update(other, planar(1), 1);
    vi.advanceTimersByTime(defaultSettings.solveDelay);
    finish(solver.jobs[3]);
    core.update(other, planar(2), 2);
    vi.advanceTimersByTime(defaultSettings.solveDelay);
    expect(solver.jobs[4].request.levels).toEqual(['full']);
  });

  it('does not solve a scene with errors; re-sends the last picture once, marked stale', () => {
    const { host, events } = recordingHost();
    const solver = new RecordingSolver();
    const core = new ServerCore(host, solver);
    core.update(uri, scene(1), 1);
    vi.advanceTimersByTime(defaultSettings.solveDelay);
    solver.jobs[0].callbacks.onResult('full', result, 5);
    core.update(uri, scene(1).replace('kV', 'kv'), 2);
    core.update(uri, scene(1).replace('kV', 'kvv'), 3);
    vi.advanceTimersByTime(10 * defaultSettings.solveDelay);
    expect(solver.jobs).toHaveLength(1);
    const stale = events.filter((e) => e.kind === 'voltscape/result' && e.params.stale);
    expect(stale).toHaveLength(1);
    expect(stale[0].params.version).toBe(1);
    expect(events.filter((e) => e.kind === 'voltscape/solveStatus' && e.params.state === 'stale').map((e) => e.params.version)).toEqual([2, 3]);
    expect(core.latestResult(uri)).toMatchObject({ version: 1, stale: true });
  });

  it('stops a solve at the time limit and says so (VS501)', () => {
    const { host, events } = recordingHost();
    const solver = new RecordingSolver();
    const core = new ServerCore(host, solver);
    core.configure(readSettings({ maxSolveTime: 2 }));
    core.update(uri, scene(1), 1);
    vi.advanceTimersByTime(defaultSettings.solveDelay);
    solver.jobs[0].callbacks.onResult('coarse', result, 5);
    vi.advanceTimersByTime(2000);
    expect(solver.cancelled.at(-1)).toBe(uri);
    solver.jobs[0].callbacks.onDone('cancelled');
    const last = events.filter((e) => e.kind === 'diagnostics').pop()!.params;
    expect(last.diagnostics.map((d: any) => d.code)).toEqual(['VS501']);
    expect(last.diagnostics[0].message).toContain('the picture is the coarse one');
    expect(events.filter((e) => e.kind === 'voltscape/solveStatus').pop()!.params.state).toBe('limited');
  });

  it('reports a solver failure as a diagnostic (VS502) and a log line', () => {
    const { host, events } = recordingHost();
    const solver = new RecordingSolver();
    const core = new ServerCore(host, solver);
    core.update(uri, scene(1), 1);
    vi.advanceTimersByTime(defaultSettings.solveDelay);
    solver.jobs[0].callbacks.onDone('failed', 'out of memory');
    const last = events.filter((e) => e.kind === 'diagnostics').pop()!.params;
    expect(last.diagnostics.map((d: any) => d.code)).toEqual(['VS502']);
    expect(events.some((e) => e.kind === 'log' && String(e.params).includes('out of memory'))).toBe(true);
  });

  it('clears diagnostics and cancels the solve when a document closes', () => {
    const { host, events } = recordingHost();
    const solver = new RecordingSolver();
    const core = new ServerCore(host, solver);
    core.update(uri, scene(1), 1);
    core.close(uri);
    vi.advanceTimersByTime(10 * defaultSettings.solveDelay);
    expect(solver.jobs).toHaveLength(0);
    // The worker's idle work for it stops too (a keystroke leaves it running through the debounce).
    expect(solver.idleStopped).toEqual([uri]);
    expect(events.at(-1)).toEqual({ kind: 'diagnostics', params: { uri, version: 0, diagnostics: [] } });
    expect(core.get(uri)).toBeUndefined();
  });
});

describe('settings', () => {
  it('falls back to safe defaults for missing or unreasonable values', () => {
    expect(readSettings(undefined)).toEqual(defaultSettings);
    expect(readSettings({ maxPanels: -5, maxGridCells: 'many', solveDelay: 1e9, inlayHints: 1 })).toEqual(defaultSettings);
    expect(readSettings({ maxPanels: 2000, solveDelay: 0 })).toMatchObject({ maxPanels: 2000, solveDelay: 0 });
  });
});

describe('request guard', () => {
  const state = { uri } as any;
  const logs: string[] = [];
  const guard = makeGuard((u) => (u === uri ? state : undefined), (m) => logs.push(m));
  const params = { textDocument: { uri } };

  it('answers empty and logs when a feature crashes', () => {
    const handler = guard('hover', null, () => {
      throw new Error('boom');
    });
    expect(handler(params)).toBeNull();
    expect(logs.at(-1)).toMatch(/^hover failed: Error: boom/);
  });

  it('answers a cancelled request as cancelled', () => {
    const handler = guard('hover', null, () => 'answer');
    const answer = handler(params, { isCancellationRequested: true, onCancellationRequested: () => ({ dispose() {} }) });
    expect(answer).toBeInstanceOf(ResponseError);
    expect((answer as ResponseError<void>).code).toBe(LSPErrorCodes.RequestCancelled);
  });

  it("turns a feature's own error into a failed request with its message", () => {
    const handler = guard('rename', null, () => {
      throw new FeatureError('not a name');
    });
    const answer = handler(params) as ResponseError<void>;
    expect(answer.code).toBe(LSPErrorCodes.RequestFailed);
    expect(answer.message).toBe('not a name');
  });

  it('answers empty for a document it does not know', () => {
    expect(guard('hover', [], () => ['x'])({ textDocument: { uri: 'file:///other' } })).toEqual([]);
  });
});
