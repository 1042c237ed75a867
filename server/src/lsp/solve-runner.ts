// Runs one solve job, level by level, on the thread that calls it (the solve worker). The engine
// cache passed in keeps meshes and factorizations between jobs, so an edit that changes only a
// drive reuses the factorization.
//
// Drive-only edits sum stored per-electrode grids (engine/superpose.ts), which cost about K + 1
// evaluations to build. A live job never waits for that build: it takes what is stored and
// evaluates the rest from the last picture (one evaluation at most, the same values). The build
// happens while the worker is idle (warmSolveJob, after a job is done), in resumable steps that a
// newly posted job stops; once every level's grids of a scene are complete, a job for it skips the
// coarse picture.
import type { Scene } from '../../../grammar/scene';
import { solveScene, type EngineCache } from '../engine/index';
import { warmStoredGrids, withGridBuilding } from '../engine/superpose';
import { warmStoredGrids2d } from '../engine/planar/warm';
import type { SolveLevel } from '../protocol';
import type { FromWorker, SolveJob } from './worker-messages';

/**
 * The coarse picture's slice grid is capped at this many cells (48 × 48): the slices cost more than
 * the coarse solve itself, and the coarse picture is only there until the refined one comes. At
 * 4,096 cells (64 × 64) they took 55% of a 2k-panel sample's coarse picture (single-thread CPU
 * time, engine/solve.ts coarse level of about 550 panels); at 2,304 about 35%, and the picture
 * 30% less CPU time in all (measured on wafer-chuck and sensor-enclosure).
 */
export const COARSE_GRID_CELLS = 2304;
/**
 * All the coarse picture's slices together get about this many cells (1.5 × one slice's cap), each
 * at least COARSE_GRID_CELLS_LEAST: two slices 1,728 each, three 1,152 (the slices' cost grows with
 * their number; beam-deflector's two took 125-135 ms of its 250 ms coarse picture, single-thread CPU).
 */
export const COARSE_PICTURE_CELLS = 3456;
export const COARSE_GRID_CELLS_LEAST = 1024;

/** The cell cap of each slice of the coarse picture of a scene with `slices` slices. */
export function coarseGridCells(slices: number): number {
  return Math.min(COARSE_GRID_CELLS, Math.max(COARSE_GRID_CELLS_LEAST, Math.floor(COARSE_PICTURE_CELLS / Math.max(1, slices))));
}

/** Scenes whose stored grids are complete on every level, newest last; a few, as the engine cache keeps a few levels. */
export class WarmScenes {
  private readonly keys: string[] = [];
  constructor(private readonly most = 2) {}
  has(key: string | null): boolean {
    return key !== null && this.keys.includes(key);
  }
  add(key: string): void {
    this.keys.splice(this.keys.indexOf(key) >>> 0, this.keys.includes(key) ? 1 : 0);
    this.keys.push(key);
    while (this.keys.length > this.most) this.keys.shift();
  }
}

/**
 * What a scene's stored grids depend on: the geometry, the free charges and the limits. Null without
 * a geometry signature, and for the 2d spaces, whose engines keep their own record of what is warm
 * (engine/planar/warm.ts).
 */
export function warmKey(job: Pick<SolveJob, 'scene' | 'geometry' | 'maxPanels' | 'maxGridCells'>): string | null {
  if (job.geometry === undefined || job.scene.space !== '3d') return null;
  const charges = JSON.stringify(job.scene.charges, (key, value) => (key === 'range' || key === 'nameRange' ? undefined : value));
  return JSON.stringify([job.geometry, charges, job.maxPanels, job.maxGridCells]);
}

function solveLevel(scene: Scene, job: SolveJob, level: SolveLevel, cache: EngineCache, isCancelled: () => boolean) {
  const coarse = level === 'coarse';
  return solveScene(scene, {
    level,
    maxPanels: job.maxPanels,
    maxGridCells: coarse ? Math.min(job.maxGridCells, coarseGridCells(scene.slices.length)) : job.maxGridCells,
    isCancelled,
    cache,
  });
}

export function runSolveJob(
  job: SolveJob,
  cache: EngineCache,
  isCancelled: () => boolean,
  post: (message: FromWorker) => void,
  warm: WarmScenes = new WarmScenes(),
): void {
  try {
    // With every stored grid ready the full level costs about what the coarse one does: skip the coarse one.
    const levels = warm.has(warmKey(job)) && job.levels.includes('full') ? (['full'] as const) : job.levels;
    for (const level of levels) {
      if (isCancelled()) return post({ type: 'done', id: job.id, state: 'cancelled' });
      post({ type: 'started', id: job.id, level });
      const started = performance.now();
      const result = withGridBuilding('stored-only', () => solveLevel(job.scene, job, level, cache, isCancelled));
      if (result === null || isCancelled()) return post({ type: 'done', id: job.id, state: 'cancelled' });
      // The cap above is ours, not the user's: the grid warning (VS408) counts only for the full level.
      if (level === 'coarse') result.diagnostics = result.diagnostics.filter((d) => d.code !== 'VS408');
      post({ type: 'result', id: job.id, level, result, solveMs: performance.now() - started });
    }
    post({ type: 'done', id: job.id, state: 'done' });
  } catch (error) {
    post({ type: 'done', id: job.id, state: 'failed', message: error instanceof Error ? error.message : String(error) });
  }
}

/**
 * Idle work after a job that ended 'done': builds the stored grids its solves went through (3d;
 * engine/superpose.ts warmStoredGrids), coarsest level first, so the next drive edit sums them. Stops when
 * `stop` says so (a new job was posted); what was built is kept and the next warm-up goes on from
 * there. Returns whether the scene is warm.
 */
export function warmSolveJob(job: SolveJob, cache: EngineCache, stop: () => boolean, warm: WarmScenes): boolean {
  // Planar and axisymmetric scenes keep their own stored values (engine/planar/warm.ts).
  if (job.scene.space !== '3d') return warmStoredGrids2d(job.scene, cache, stop, { maxPanels: job.maxPanels, maxGridCells: job.maxGridCells });
  const key = warmKey(job);
  if (key === null) return false;
  if (warm.has(key)) return true;
  try {
    if (!warmStoredGrids(cache, stop)) return false;
  } catch {
    // A warm-up that fails leaves the live solves as they are: they evaluate afresh.
    return false;
  }
  warm.add(key);
  return true;
}
