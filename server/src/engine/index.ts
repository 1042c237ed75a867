// The engine's public entry: solveScene(scene, options) → Result (null only when cancelled).
// Pure apart from the optional cache, which keeps meshes, factorizations and unit solutions keyed by
// a hash of the geometry (electrode shapes, ground planes, mesh setting, level), so that an edit that
// changes only drives or free charges needs no new factorization, and one that changes nothing
// geometric needs no new solve.
import type { Scene } from '../../../grammar/scene';
import type { Result } from './result';
import { createCache3d, solve3d, type Cache3d } from './solve';
import { solveAdaptive, type AdaptiveOptions } from './adaptive';
import { solveAxisymmetric } from './axisymmetric/solve';
import { solvePlanar } from './planar/solve';

export interface SolveOptions {
  /** Most panels in the finest mesh (default 20000); over it the mesh is coarsened with a warning. */
  maxPanels?: number;
  /** Most cells in one slice grid (default 250000); over it the grid is coarsened with a warning. */
  maxGridCells?: number;
  /** 'coarse': about 4× fewer panels and no convergence estimate; 'full' (default): the scene's mesh. */
  level?: 'coarse' | 'full';
  /** Solve a second, coarser level for convergence estimates (default true for 'full'). */
  convergence?: boolean;
  /** Polled during the solve; when it returns true the solve stops and returns null. */
  isCancelled?: () => boolean;
  cache?: EngineCache;
  /**
   * 3d only, level 'full': refine the mesh where the surface field peaks and the charge density jumps
   * until every C_kk and peak field changes by less than `tolerance` between rounds (adaptive.ts).
   */
  adaptive?: AdaptiveOptions;
  /**
   * Build (if missing) and use the stored per-electrode grids of drive-only edits now (superpose.ts;
   * the results are the same). Default: only when a cached level is reused with new drives. A worker
   * can run a full solve with this set while idle, so that the first drive edit is fast too.
   */
  superpose?: boolean;
}

/** Caches kept between solves, one store per space (3d: meshes and solved levels). */
export interface EngineCache {
  readonly store: Map<string, unknown>;
}

export function createEngineCache(): EngineCache {
  return { store: new Map() };
}

export function solveScene(scene: Scene, options: SolveOptions = {}): Result | null {
  const level = options.level ?? 'full';
  if (scene.space === 'axisymmetric') return solveAxisymmetric(scene, options);
  if (scene.space === 'planar') return solvePlanar(scene, options);
  const cache = options.cache ?? createEngineCache();
  let c3 = cache.store.get('3d') as Cache3d | undefined;
  if (!c3) {
    c3 = createCache3d();
    cache.store.set('3d', c3);
  }
  const o3 = {
    maxPanels: options.maxPanels ?? 20000,
    maxGridCells: options.maxGridCells ?? 250000,
    level,
    convergence: level === 'full' && (options.convergence ?? true),
    isCancelled: options.isCancelled,
    cache: c3,
    superpose: options.superpose,
  };
  const tol = options.adaptive?.tolerance;
  if (level === 'full' && tol !== undefined && tol > 0 && Number.isFinite(tol)) return solveAdaptive(scene, o3, options.adaptive!);
  return solve3d(scene, o3);
}
