// Runs one solve job, level by level, on whatever thread calls it (the solve worker in the server;
// the test's own thread in in-process tests). The engine cache passed in keeps meshes and
// factorizations between jobs, so an edit that changes only a drive reuses the factorization.
import { solveScene, type EngineCache } from '../engine/index';
import type { FromWorker, SolveJob } from './worker-messages';

export function runSolveJob(
  job: SolveJob,
  cache: EngineCache,
  isCancelled: () => boolean,
  post: (message: FromWorker) => void,
): void {
  try {
    for (const level of job.levels) {
      if (isCancelled()) return post({ type: 'done', id: job.id, state: 'cancelled' });
      const started = performance.now();
      const result = solveScene(job.scene, {
        level,
        maxPanels: job.maxPanels,
        maxGridCells: job.maxGridCells,
        isCancelled,
        cache,
      });
      if (result === null || isCancelled()) return post({ type: 'done', id: job.id, state: 'cancelled' });
      post({ type: 'result', id: job.id, level, result, solveMs: performance.now() - started });
    }
    post({ type: 'done', id: job.id, state: 'done' });
  } catch (error) {
    post({ type: 'done', id: job.id, state: 'failed', message: error instanceof Error ? error.message : String(error) });
  }
}
