// Runs one solve job, level by level, on the thread that calls it (the solve worker). The engine
// cache passed in keeps meshes and factorizations between jobs, so an edit that changes only a
// drive reuses the factorization.
import { solveScene, type EngineCache } from '../engine/index';
import type { FromWorker, SolveJob } from './worker-messages';

/**
 * The coarse picture's slice grid is capped at this many cells (64 × 64): the slices cost far more
 * than the coarse solve itself, and the coarse picture is only there until the refined one comes.
 */
export const COARSE_GRID_CELLS = 4096;

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
      const coarse = level === 'coarse';
      const result = solveScene(job.scene, {
        level,
        maxPanels: job.maxPanels,
        maxGridCells: coarse ? Math.min(job.maxGridCells, COARSE_GRID_CELLS) : job.maxGridCells,
        isCancelled,
        cache,
      });
      if (result === null || isCancelled()) return post({ type: 'done', id: job.id, state: 'cancelled' });
      // The cap above is ours, not the user's: the grid warning (VS408) counts only for the full level.
      if (coarse) result.diagnostics = result.diagnostics.filter((d) => d.code !== 'VS408');
      post({ type: 'result', id: job.id, level, result, solveMs: performance.now() - started });
    }
    post({ type: 'done', id: job.id, state: 'done' });
  } catch (error) {
    post({ type: 'done', id: job.id, state: 'failed', message: error instanceof Error ? error.message : String(error) });
  }
}
