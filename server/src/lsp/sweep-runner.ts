// Runs one live sweep job on the thread that calls it (the solve worker): the shared sweep core
// (server/src/sweep.ts) with the coarse mesh level, the user's maxPanels and the job's cancellation.
// Live sweeps are coarse to stay quick; `voltscape sweep` gives the full figures.
import { analyzeText } from '../../../grammar/index';
import { solveScene, type EngineCache } from '../engine/index';
import type { SweepResultParams } from '../protocol';
import { computeSweep } from '../sweep';
import type { FromWorker, SweepJob } from './worker-messages';

/** The sweep's figures as the protocol carries them: per electrode, one array per figure. */
export type SweepPayload = Pick<SweepResultParams, 'name' | 'unit' | 'space' | 'basis' | 'values' | 'electrodes'>;

export function runSweepJob(job: SweepJob, cache: EngineCache, isCancelled: () => boolean, post: (message: FromWorker) => void): void {
  const started = performance.now();
  try {
    const outcome = computeSweep(
      job.text,
      job.uri,
      {
        analyzeText,
        newSolver: () => (scene) => solveScene(scene, { level: 'coarse', maxPanels: job.maxPanels, isCancelled, cache }),
        isCancelled,
      },
      job.name,
    );
    if (!outcome.ok) {
      if (outcome.cancelled || isCancelled()) return post({ type: 'done', id: job.id, state: 'cancelled' });
      return post({ type: 'done', id: job.id, state: 'failed', message: outcome.message });
    }
    const t = outcome.table;
    const sweep: SweepPayload = {
      name: t.name,
      unit: t.unit,
      space: t.space,
      basis: t.basis?.what ?? null,
      values: t.steps.map((s) => s.value),
      electrodes: t.electrodes.map((name) => {
        const at = t.steps.map((s) => s.electrodes.find((e) => e.name === name));
        return {
          name,
          maxField: at.map((e) => e?.maxField ?? NaN),
          capacitance: at.map((e) => e?.capacitance ?? NaN),
          margin: at.map((e) => e?.margin ?? null),
        };
      }),
    };
    post({ type: 'sweep', id: job.id, sweep, solveMs: performance.now() - started });
    post({ type: 'done', id: job.id, state: 'done' });
  } catch (error) {
    post({ type: 'done', id: job.id, state: 'failed', message: error instanceof Error ? error.message : String(error) });
  }
}
