// One mesh level of a 3d scene, solved for unit drives: the mesh, the system, the solver (with its
// factorization, if any), one solution per electrode at 1 V (the rest at 0) and one for the free
// charges with every electrode grounded. Medium-independent: densities are scaled by ε0·εr
// (system.ts), and the free-charge solution is stored for εr = 1 and divided by εr on use.
// Everything here is cached by a hash of the geometry (levelKey), so drive-only edits reuse it all.
import type { Charge3d, Scene3d } from '../../../../grammar/scene';
import { EPSILON_0 } from '../../../../grammar/scene';
import { transferSolution } from '../fast/transfer';
import { chargePotential } from '../kernels/free-charges';
import { chooseSolver, createSolver, needsDenseMatrix, type LinearSolver, type SolverKind } from '../linear/solver';
import type { Mesh } from '../mesh/types';
import { reflect, type Image } from './images';
import { surfaceCollocation } from './collocation';
import { buildOperator } from './operator';
import { matrixReuse, panelPairs } from './reuse';
import { createSystem, type Bem3dSystem } from './system';

export interface FreeSolution {
  key: string;
  /** Scaled densities induced by the free charges (electrodes grounded), for εr = 1. */
  x: Float64Array;
  /** Σ x·area per electrode, m (times ε0 gives the induced charge, C, for any εr). */
  induced: number[];
}

export interface Level3d {
  mesh: Mesh;
  sys: Bem3dSystem;
  solver: LinearSolver;
  kind: SolverKind;
  /** unit[k]: scaled densities with electrode k at 1 V, the others at 0. */
  unit: Float64Array[];
  /** raw[i][k] = Σ_{panels of i} unit[k]·area, m: the capacitance matrix is ε0·εr·raw. */
  raw: number[][];
  free: FreeSolution | null;
  timings: Record<string, number>;
  /** Iterations of the unit solves, per electrode (iterative solvers; empty for a direct one). */
  iterations?: number[];
  /** The dense matrix, when the solver has one (a later geometry keeps what it can of it: reuse.ts). */
  matrix?: Float64Array;
  /** Matrix entries copied from an earlier level's, of all n² (0 when none). */
  reused?: number;
}

/** Σ of x·area over each electrode's panels. */
export function chargeSums(mesh: Mesh, x: Float64Array, electrodes: number): number[] {
  const sums = new Array<number>(electrodes).fill(0);
  for (let j = 0; j < x.length; j++) sums[mesh.electrode[j]] += x[j] * mesh.area[j];
  return sums;
}

/** A stable key for the free charges (shape and value; names and ranges do not matter). */
export function freeKey(charges: readonly Charge3d[]): string {
  return JSON.stringify(charges.map(({ name: _n, range: _r, ...rest }) => rest));
}

/** The free charges' potential at the collocation points, with images, for εr = 1 (V). */
function freeRhs(sys: Bem3dSystem, charges: readonly Charge3d[], images: Image[]): Float64Array {
  const b = new Float64Array(sys.n);
  const p = sys.points;
  const r = [0, 0, 0];
  const k = 1 / (4 * Math.PI * EPSILON_0);
  for (let i = 0; i < sys.n; i++) {
    let s = 0;
    for (const im of images) {
      reflect(im, p[3 * i], p[3 * i + 1], p[3 * i + 2], r);
      for (const c of charges) s += im.sign * chargePotential(c, r[0], r[1], r[2]);
    }
    b[i] = -k * s;
  }
  return b;
}

/**
 * Solves (or reuses from `cached`) the unit solutions on a mesh, then the free-charge solution if
 * the charges changed. Returns null when cancelled.
 */
export function solveLevel(
  scene: Scene3d,
  mesh: Mesh,
  images: Image[],
  cached: Level3d | null,
  options: {
    kind?: SolverKind | 'auto';
    isCancelled?: () => boolean;
    /** A solved level of an earlier geometry: its unit solutions, carried over, start an iterative solve (warm start). */
    warm?: Level3d | null;
  },
): Level3d | null {
  const K = scene.electrodes.length;
  const key = freeKey(scene.charges);
  let level = cached;
  if (!level) {
    const timings: Record<string, number> = {};
    let t = performance.now();
    const sys = createSystem(mesh, images);
    sys.points = surfaceCollocation(scene, mesh, sys.panels.diameter);
    const kind = chooseSolver(sys.n, { kind: options.kind });
    // After a geometry edit, the entries among electrodes the edit left alone come from the earlier matrix.
    const earlier = options.warm;
    const reuse = earlier?.matrix && needsDenseMatrix(kind) ? matrixReuse({ sys: earlier.sys, matrix: earlier.matrix }, sys) : null;
    const op = buildOperator(sys, kind, options.isCancelled, reuse);
    if (!op) return null;
    timings.assembly = performance.now() - t;
    t = performance.now();
    const solver = createSolver(op, kind);
    const rhs: Float64Array[] = Array.from({ length: K }, (_, k) => {
      const b = new Float64Array(sys.n);
      for (let i = 0; i < sys.n; i++) if (mesh.electrode[i] === k) b[i] = 1;
      return b;
    });
    // Warm start after a geometry edit (methods.md, fast methods): the earlier unit solutions moved onto
    // this mesh by nearest panel (fast/transfer.ts). A direct solver has no use for them.
    // When every electrode kept its panel count, the panels pair up in mesh order (reuse.ts), which
    // costs nothing next to the nearest-panel search.
    const warm = options.warm;
    let initial: (Float64Array | null)[] | undefined;
    let freeStart: Float64Array | null = null;
    if (warm && warm.unit.length === K && kind !== 'dense-lu') {
      const pairs = panelPairs(warm.sys, sys);
      const move = (u: Float64Array) => (pairs ? Float64Array.from(pairs, (f) => u[f]) : transferSolution(warm.mesh, u, mesh));
      initial = warm.unit.map(move);
      // The same free charges: their earlier induced densities start theirs.
      if (warm.free && warm.free.key === key) freeStart = move(warm.free.x);
    }
    // The free charges' right-hand side joins the unit ones: an iterative solver runs them in lockstep.
    const withFree = scene.charges.length > 0;
    if (withFree) rhs.push(freeRhs(sys, scene.charges, images));
    const solved = solver.solve(rhs, { initial: initial && withFree ? [...initial, freeStart] : initial, isCancelled: options.isCancelled });
    if (!solved) return null;
    const unit = solved.slice(0, K);
    timings.solve = performance.now() - t;
    const iterations = solver.iterations.slice(0, K);
    const sums = unit.map((x) => chargeSums(mesh, x, K)); // sums[k][i]
    const raw = Array.from({ length: K }, (_, i) => Array.from({ length: K }, (_, k) => sums[k][i]));
    const free = withFree ? { key, x: solved[K], induced: chargeSums(mesh, solved[K], K) } : null;
    let reused = 0;
    if (reuse) for (let i = 0; i < sys.n; i++) if (reuse.from[i] >= 0) reused++;
    level = { mesh, sys, solver, kind, unit, raw, free, timings, iterations, matrix: op.matrix, reused: reused * reused };
  }
  if (scene.charges.length === 0) {
    level.free = null;
  } else if (!level.free || level.free.key !== key) {
    const t = performance.now();
    const b = freeRhs(level.sys, scene.charges, images);
    const previous = level.free?.x;
    const x = level.solver.solve([b], { initial: [previous], isCancelled: options.isCancelled });
    if (!x) return null;
    level.free = { key, x: x[0], induced: chargeSums(mesh, x[0], K) };
    level.timings.freeSolve = performance.now() - t;
  }
  return level;
}

/**
 * The cached level to warm-start a new mesh from: the most recent one with the same electrodes
 * count whose panel count is closest to n (within a factor of 2), or null.
 */
export function warmCandidate(levels: Iterable<Level3d>, electrodes: number, n: number): Level3d | null {
  let best: Level3d | null = null;
  let bestRatio = 2;
  for (const l of levels) {
    if (l.unit.length !== electrodes || l.mesh.area.length === 0) continue;
    const ratio = Math.max(n, l.mesh.area.length) / Math.min(n, l.mesh.area.length);
    if (ratio <= bestRatio) {
      best = l;
      bestRatio = ratio;
    }
  }
  return best;
}
