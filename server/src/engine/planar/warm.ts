// Idle work for drive-only edits of planar and axisymmetric scenes (the language server's solve
// worker runs it between jobs): builds the stored per-electrode values (slices, probes, thin-element
// fields; planar/solve2d.ts) of the scene's full level, if that level is in the cache, in chunks that
// `isCancelled` can stop between; what was built is kept and the next warm-up goes on from there.
// Once a cache has been warmed, its live solves never build stored values themselves: they sum the
// complete chunks and evaluate the rest afresh (solve2d.ts BACKGROUND_BUILD).
import type { Scene } from '../../../../grammar/scene';
import { solveAxisymmetric } from '../axisymmetric/solve';
import type { EngineCache } from '../index';
import { solvePlanar } from './solve';
import { BACKGROUND_BUILD, type Solve2dOptions } from './solve2d';

/**
 * Builds the stored values a drive-only edit of `scene` at level 'full' would sum (with the limits
 * its solves use). True when they are complete, false when stopped or when the level is not cached.
 * A 3d scene has nothing to do here (engine/superpose.ts warms those).
 */
export function warmStoredGrids2d(scene: Scene, cache: EngineCache, isCancelled: () => boolean, limits: Pick<Solve2dOptions, 'maxPanels' | 'maxGridCells'> = {}): boolean {
  if (scene.space === '3d') return true;
  cache.store.set(BACKGROUND_BUILD, true);
  const warm = { complete: false };
  const options: Solve2dOptions = { ...limits, level: 'full', cache, isCancelled, superpose: true, warm };
  try {
    if (scene.space === 'planar') solvePlanar(scene, options);
    else solveAxisymmetric(scene, options);
  } catch {
    // A warm-up that fails leaves the live solves as they are: they evaluate afresh.
    return false;
  }
  return warm.complete;
}
