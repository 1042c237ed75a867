// Drive-only edits by superposition. The potential and field anywhere are linear in the drives:
//   φ(r) = Σ_k V_k·φ_k(r) + φ_f(r)/εr,
// with φ_k the field of electrode k's unit solution (k at 1 V, the rest at 0; no free charges) and
// φ_f that of the free charges at εr = 1 (their direct field with images plus the panels' induced
// response), and the same for E. (Linearity of the Laplace problem with the drives of drives.ts; the
// treecode and the far-field rule are linear in the densities too, since their choices depend on
// geometry alone.) So per cached level and per slice grid, probe set and thin-panel set we keep one
// set of values per unit solution and one for the free charges; a later edit that changes only
// drives (or only free charges) then sums K + 1 stored grids instead of evaluating the field again.
//
// The values are identical, up to rounding, to a from-scratch evaluation (evaluate.ts), which sums
// the same contributions once: the same points, the same evaluator (direct, grid rule, treecode),
// the same fills inside conductors and behind ground planes, the same quarter-cell shift at a free
// charge. Building the stored values takes one pass for all K + 1 solutions: direct sums weigh each
// panel's kernel by every solution, and the treecode walks its tree once for all of them (sharing
// the near-panel integrals; fast/treecode.ts setDensitiesMany). The build is resumable: it goes point chunk by
// point chunk, and what was computed before a cancellation is kept, so a later build goes on from
// there. When it runs is the caller's choice (withGridBuilding): at the first reuse of a level with
// new drives (the default), or only when asked, e.g. by the language server while it is idle. Until
// then a drive edit costs at most one evaluation: the last picture's values plus the grid of the
// change in drives, which is kept, so that a repeated edit of the same drive costs none.
import { insideElectrode } from '../../../grammar/geometry';
import type { Diagnostic, Scene3d } from '../../../grammar/scene';
import { addFreeCharges, potentialAndField, surfaceFields, type FieldState3d } from './bem3d/field';
import type { FreeSolution, Level3d } from './bem3d/level';
import { GRID_FAR_RATIO, INV_4PI, type EvalMode } from './bem3d/system';
import { reflect, type Image } from './bem3d/images';
import { FAST_EVAL_MIN_PANELS } from './fast/bem3d';
import { panelPotentialAndGradient } from './kernels/triangle';
import { behindGround, FULL_GRID, probePoints, sliceLayout, type GridEvaluator, type SliceCells, type SliceLayout } from './evaluate';
import { FieldEvaluator } from './fast/field-evaluator';
import type { EngineCache } from './index';
import type { Cache3d } from './solve';
import type { ProbeResult, SliceResult } from './result';

/**
 * When missing stored values are built:
 * - 'build' (the default): as soon as a use needs them;
 * - 'stored-only': a use sums the stored grids that are complete and finishes those that need at
 *   most one more evaluation's worth of work (the same cost as evaluating afresh); otherwise it
 *   starts from the values of the last use and adds the grid of the drive change (see
 *   Stored.directions: one evaluation for a new kind of change, none for a repeat), or evaluates
 *   afresh. The unit grids are left to a later 'build' run (the language server's idle warm-up).
 */
export type GridBuilding = 'build' | 'stored-only';

let building: GridBuilding = 'build';

/** Runs `run` (a solve) with missing stored values handled as `mode` says; the mode before is restored after. */
export function withGridBuilding<T>(mode: GridBuilding, run: () => T): T {
  const before = building;
  building = mode;
  try {
    return run();
  } finally {
    building = before;
  }
}

/**
 * Stored values of one set of points: [φ, Ex, Ey, Ez] per point, one array per unit solution and one
 * for the free charges' solution `of`; of each, the first filled points are computed so far.
 */
interface Solution {
  values: Float64Array;
  filled: number;
}

interface Stored {
  pts: Float64Array;
  units: Solution[];
  free: (Solution & { of: FreeSolution }) | null;
  /** The values of the last use (not yet shifted off free charges), with what they were summed for. */
  last: { potentials: number[]; free: FreeSolution | null; permittivity: number; values: Float64Array } | null;
  /**
   * Grids of drive changes met while the unit grids were incomplete: values of the densities
   * Σ_k d_k·unit_k for a unit vector d of potential changes. A later change along d (an edit of the
   * same drive, floating electrodes following it) is then last + α·grid, with no evaluation.
   */
  directions: { d: number[]; values: Float64Array }[];
  /** Points per build step, fitted to STEP_MS by the last build (see nextStep). */
  step?: number;
  /** How the last use evaluated (what a build in the background needs), and which use of the level it was. */
  use: { images: Image[]; charges: Scene3d['charges']; ev: Evaluator; at: number } | null;
}

interface SliceStored extends Stored {
  /** The outside cells the values belong to; a different set (masks changed) starts afresh. */
  outside: Int32Array;
}

interface LevelStore {
  /** The drives of the last use of this level. */
  signature: string | null;
  slices: Map<string, SliceStored>;
  probes: Map<string, Stored>;
  thin: Stored | null;
  /** Each slice's outlines and ground lines (the level's geometry and the slice decide them). */
  lines: Map<string, Pick<SliceResult, 'outlines' | 'groundLines'>>;
  /** Each slice grid's cells (inside a conductor, or in the field), by slice and grid size. */
  cells: Map<string, SliceCells>;
  /** The treecode over the level's panels (geometry only; densities are set per solution). */
  tree: FieldEvaluator | null;
  /** Uses of the level so far, and when the last was (a clock shared by all levels). */
  uses: number;
  lastUse: number;
}

const stores = new WeakMap<Level3d, LevelStore>();
let clock = 0;

/** Most stored values (8 bytes each) for one slice: 2e7, 160 MB; a grid that could need more is evaluated afresh. */
export const MAX_STORED_VALUES = 2e7;

/**
 * A build goes in steps of about this many milliseconds, so that a build in the background stops
 * soon when a job comes: the step's point count is fitted to the time the last step took (a fixed
 * 256 points took 50-150 ms a step on the 2k-panel samples' full level, measured in the language
 * server, and a drive edit waited that long for the worker). Steps stay under 2048 points, so the
 * treecode keeps to one thread (it splits batches over threads from 2048 points).
 */
const STEP_MS = 4;
const FIRST_STEP = 16;
const MAX_STEP = 1024;

/** The next step's point count, from the last one's and the time it took. */
function nextStep(points: number, ms: number): number {
  const fitted = ms > 0 ? (points * STEP_MS) / ms : 2 * points;
  return Math.max(4, Math.min(MAX_STEP, 2 * points, Math.round(fitted)));
}

function storeOf(level: Level3d): LevelStore {
  let s = stores.get(level);
  if (!s) {
    s = { signature: null, slices: new Map(), probes: new Map(), thin: null, lines: new Map(), cells: new Map(), tree: null, uses: 0, lastUse: 0 };
    stores.set(level, s);
  }
  return s;
}

/**
 * Whether this use of a level should go through stored values: true once the level is reused with
 * drives or free charges other than at its previous use (a live drive edit), or when values are
 * already stored; in 'stored-only' mode always, so that the first use leaves its values for the
 * next drive edit to start from (it costs what a fresh evaluation does). Call once per use of a
 * level, with everything that the result depends on besides the geometry.
 */
export function useSuperposition(level: Level3d, signature: string): boolean {
  const s = storeOf(level);
  const changed = s.signature !== null && s.signature !== signature;
  s.signature = signature;
  s.uses++;
  s.lastUse = ++clock;
  return building === 'stored-only' || changed || s.slices.size > 0 || s.probes.size > 0 || s.thin !== null;
}

/** Points computed of the stored unit grids, out of how many, and how many drive-change grids are kept (for tests and the benchmark). */
export function storedProgress(level: Level3d): { done: number; total: number; directions: number } {
  const s = stores.get(level);
  let done = 0, total = 0, directions = 0;
  if (!s) return { done, total, directions };
  for (const st of [...s.slices.values(), ...s.probes.values(), ...(s.thin ? [s.thin] : [])]) {
    const m = st.pts.length / 3;
    total += m * st.units.length;
    done += st.units.reduce((a, u) => a + u.filled, 0);
    directions += st.directions.length;
  }
  return { done, total, directions };
}

function unitState(level: Level3d, x: Float64Array, images: Image[], charges: Scene3d['charges']): FieldState3d {
  return { sys: level.sys, x, charges, images, permittivity: 1 };
}

/** The state of the given drives: x = Σ V_k·unit_k + free/εr (as solve.ts builds it). */
function combinedState(scene: Scene3d, level: Level3d, images: Image[], potentials: readonly number[]): FieldState3d {
  const x = new Float64Array(level.sys.n);
  potentials.forEach((v, k) => {
    if (v === 0) return;
    const u = level.unit[k];
    for (let j = 0; j < x.length; j++) x[j] += v * u[j];
  });
  if (level.free) {
    const f = level.free.x, inv = 1 / scene.medium.permittivity;
    for (let j = 0; j < x.length; j++) x[j] += inv * f[j];
  }
  return { sys: level.sys, x, charges: scene.charges, images, permittivity: scene.medium.permittivity };
}

/** How a set of points is evaluated: by the treecode at opening angle theta, or by direct sums in `mode`. */
type Evaluator = { tree: FieldEvaluator; theta: number } | { tree: null; mode: EvalMode };

/** Direct sums on a small system weigh each panel's kernel by every solution in one pass; otherwise each solution costs a pass. */
function onePass(level: Level3d, ev: Evaluator): boolean {
  return !ev.tree && level.sys.n < FAST_EVAL_MIN_PANELS;
}

/**
 * [φ, Ex, Ey, Ez] at m points (3 coordinates each) for each state, the way potentialAndField
 * evaluates one state: below the treecode's size by direct sums, each panel's kernel computed once
 * and weighted by every state (bem3d/system.ts surfacePotentialAndGradient, term by term).
 */
function direct(states: FieldState3d[], pts: Float64Array, mode: EvalMode): Float64Array[] {
  const m = pts.length / 3;
  const outs = states.map(() => new Float64Array(4 * m));
  if (states.length === 0) return outs;
  const sys = states[0].sys;
  if (sys.n >= FAST_EVAL_MIN_PANELS) {
    states.forEach((st, v) => {
      for (let i = 0; i < m; i++) outs[v].set(potentialAndField(st, pts[3 * i], pts[3 * i + 1], pts[3 * i + 2], mode), 4 * i);
    });
    return outs;
  }
  const xs = states.map((s) => s.x);
  const V = xs.length;
  const P = sys.panels;
  const c = P.centroid;
  const r = [0, 0, 0];
  const g = new Float64Array(4);
  const acc = new Float64Array(4 * V);
  const tot = new Float64Array(4 * V);
  const farRatioSq = GRID_FAR_RATIO * GRID_FAR_RATIO;
  const buf = new Float64Array(4);
  for (let i = 0; i < m; i++) {
    const x = pts[3 * i], y = pts[3 * i + 1], z = pts[3 * i + 2];
    tot.fill(0);
    for (const im of sys.images) {
      reflect(im, x, y, z, r);
      const rx = r[0], ry = r[1], rz = r[2];
      acc.fill(0);
      for (let j = 0; j < P.count; j++) {
        const dx = rx - c[3 * j], dy = ry - c[3 * j + 1], dz = rz - c[3 * j + 2];
        const d2 = dx * dx + dy * dy + dz * dz;
        if (mode === 'grid' && d2 > farRatioSq * P.diameter[j] * P.diameter[j]) {
          // The centroid rule, as in surfacePotentialAndGradient: q = w·area/R, ∇ = −q·d/R².
          const inv = 1 / Math.sqrt(d2);
          const a = P.area[j] * inv;
          const a3 = a * inv * inv;
          for (let v = 0; v < V; v++) {
            const w = xs[v][j];
            if (w === 0) continue;
            const q = w * a;
            const q3 = w * a3;
            acc[4 * v] += q;
            acc[4 * v + 1] -= q3 * dx;
            acc[4 * v + 2] -= q3 * dy;
            acc[4 * v + 3] -= q3 * dz;
          }
          continue;
        }
        panelPotentialAndGradient(P, j, rx, ry, rz, g);
        for (let v = 0; v < V; v++) {
          const w = xs[v][j];
          if (w === 0) continue;
          acc[4 * v] += w * g[0];
          acc[4 * v + 1] += w * g[1];
          acc[4 * v + 2] += w * g[2];
          acc[4 * v + 3] += w * g[3];
        }
      }
      for (let v = 0; v < V; v++) {
        tot[4 * v] += im.sign * acc[4 * v];
        tot[4 * v + 1] += im.sign * im.flip[0] * acc[4 * v + 1];
        tot[4 * v + 2] += im.sign * im.flip[1] * acc[4 * v + 2];
        tot[4 * v + 3] += im.sign * im.flip[2] * acc[4 * v + 3];
      }
    }
    for (let v = 0; v < V; v++) {
      buf[0] = tot[4 * v] * INV_4PI;
      buf[1] = tot[4 * v + 1] * INV_4PI;
      buf[2] = tot[4 * v + 2] * INV_4PI;
      buf[3] = tot[4 * v + 3] * INV_4PI;
      addFreeCharges(states[v], x, y, z, buf);
      const o = outs[v];
      o[4 * i] = buf[0];
      o[4 * i + 1] = -buf[1];
      o[4 * i + 2] = -buf[2];
      o[4 * i + 3] = -buf[3];
    }
  }
  return outs;
}

/** [φ, Ex, Ey, Ez] of one state at m points by the given evaluator. */
function valuesAt(state: FieldState3d, pts: Float64Array, ev: Evaluator): Float64Array {
  return ev.tree ? treeValues([state], pts, ev)[0] : direct([state], pts, ev.mode)[0];
}

/** [φ, Ex, Ey, Ez] of each state at m points by the treecode, one walk of the tree for all (the same numbers as one at a time). */
function treeValues(states: FieldState3d[], pts: Float64Array, ev: { tree: FieldEvaluator; theta: number }): Float64Array[] {
  const m = pts.length / 3;
  ev.tree.setDensitiesMany(states.map((st) => st.x));
  const panels = ev.tree.evaluateAll(pts, ev.theta);
  const free = new Float64Array(4);
  return states.map((state, v) => {
    const out = new Float64Array(4 * m), p = panels[v];
    for (let i = 0; i < m; i++) {
      free.fill(0);
      addFreeCharges(state, pts[3 * i], pts[3 * i + 1], pts[3 * i + 2], free);
      out[4 * i] = p.potential[i] + free[0];
      for (let c = 0; c < 3; c++) out[4 * i + 1 + c] = p.field[3 * i + c] - free[1 + c];
    }
    return out;
  });
}

/** A solution's values are allocated when its first chunk is computed (most stay unbuilt in a live session until the warm-up). */
function solution(): Solution {
  return { values: new Float64Array(0), filled: 0 };
}

/** The solution's values array, allocated for m points. */
function valuesOf(u: Solution, m: number): Float64Array {
  if (u.values.length !== 4 * m) u.values = new Float64Array(4 * m);
  return u.values;
}

function newStored(pts: Float64Array, level: Level3d): Stored {
  return { pts, units: level.unit.map(() => solution()), free: null, last: null, directions: [], use: null };
}

/** The solutions s must hold for the level: the unit ones, and the free charges' one if any (started afresh when they changed). */
function solutions(s: Stored, level: Level3d): Solution[] {
  const free = level.free;
  if (!free) s.free = null;
  else if (s.free?.of !== free) s.free = { ...solution(), of: free };
  return s.free ? [...s.units, s.free] : s.units;
}

function isComplete(s: Stored, level: Level3d): boolean {
  const m = s.pts.length / 3;
  return solutions(s, level).every((u) => u.filled === m);
}

/** Work left to complete s, in evaluations of one solution at one point (evaluating afresh costs m). */
function workLeft(s: Stored, level: Level3d, ev: Evaluator): number {
  const m = s.pts.length / 3;
  const left = solutions(s, level).map((u) => m - u.filled);
  return onePass(level, ev) ? Math.max(0, ...left) : left.reduce((a, b) => a + b, 0);
}

/**
 * Whether a use should complete s now (rather than evaluate afresh): always when building; else
 * when that costs no more than one evaluation, and not at the first use (a geometry edit's picture,
 * which should not wait for more than its own evaluation: one pass for every solution still costs
 * more than one for the combined densities).
 */
function shouldComplete(s: Stored, level: Level3d, ev: Evaluator): boolean {
  return building === 'build' || (s.last !== null && workLeft(s, level, ev) <= s.pts.length / 3);
}

/** Computes what s lacks, chunk by chunk; false when cancelled (what was computed is kept). */
function complete(s: Stored, level: Level3d, images: Image[], charges: Scene3d['charges'], ev: Evaluator, isCancelled?: () => boolean): boolean {
  const m = s.pts.length / 3;
  const all = solutions(s, level);
  const states = level.unit.map((u) => unitState(level, u, images, []));
  if (s.free) states.push(unitState(level, s.free.of.x, images, charges));
  let step = s.step ?? FIRST_STEP;
  if (onePass(level, ev) || ev.tree) {
    // Every solution that lacks a chunk gets it in the same pass (direct sums weigh each panel's
    // kernel by every solution; the treecode walks its tree once for all of them).
    for (let a = Math.min(...all.map((u) => u.filled)); a < m; ) {
      if (isCancelled?.()) return false;
      const t = performance.now();
      const b = Math.min(m, a + step);
      const which = all.map((u, v) => (u.filled < b ? v : -1)).filter((v) => v >= 0);
      const pts = s.pts.subarray(3 * a, 3 * b);
      const outs = ev.tree ? treeValues(which.map((v) => states[v]), pts, ev) : direct(which.map((v) => states[v]), pts, ev.mode);
      which.forEach((v, i) => {
        valuesOf(all[v], m).set(outs[i], 4 * a);
        all[v].filled = b;
      });
      step = s.step = nextStep(b - a, performance.now() - t);
      a = b;
    }
    return true;
  }
  for (let v = 0; v < all.length; v++) {
    const u = all[v];
    while (u.filled < m) {
      if (isCancelled?.()) return false;
      const t = performance.now();
      const b = Math.min(m, u.filled + step);
      valuesOf(u, m).set(valuesAt(states[v], s.pts.subarray(3 * u.filled, 3 * b), ev), 4 * u.filled);
      step = s.step = nextStep(b - u.filled, performance.now() - t);
      u.filled = b;
    }
  }
  return true;
}

/** Keeps at most `most` entries, dropping the oldest. */
function trim<V>(map: Map<string, V>, most: number): void {
  while (map.size > most) map.delete(map.keys().next().value as string);
}

/**
 * The combined values [φ, Ex, Ey, Ez] of s's points for these drives, the cheapest way: summed from
 * complete stored grids; or the last use's values plus known grids of the drive change (no
 * evaluation); or the stored grids completed (when building, or when that costs no more than one
 * evaluation) and summed; or the last values plus a new direction's grid (one evaluation); or
 * evaluated afresh. Null when cancelled.
 */
function valuesFor(
  s: Stored,
  level: Level3d,
  images: Image[],
  scene: Scene3d,
  potentials: readonly number[],
  ev: Evaluator,
  fresh: () => FieldState3d,
  isCancelled?: () => boolean,
): Float64Array | null {
  const eps = scene.medium.permittivity;
  s.use = { images, charges: scene.charges, ev, at: storeOf(level).uses };
  // Without evaluating: complete grids, or the last values moved along known grids.
  let values = isComplete(s, level) || building === 'build' ? null : fromLast(s, level, images, potentials, eps, ev, false);
  if (!values && (isComplete(s, level) || shouldComplete(s, level, ev))) {
    if (!complete(s, level, images, scene.charges, ev, isCancelled)) return null;
    const sum = new Float64Array((s.pts.length / 3) * 4);
    potentials.forEach((v, k) => v !== 0 && addScaled(sum, s.units[k].values, v));
    if (s.free) addScaled(sum, s.free.values, 1 / eps);
    values = sum;
  }
  if (!values) {
    if (isCancelled?.()) return null;
    values = fromLast(s, level, images, potentials, eps, ev, true) ?? valuesAt(fresh(), s.pts, ev);
  }
  s.last = { potentials: [...potentials], free: level.free, permittivity: eps, values };
  return values;
}

/** out += a·v. */
function addScaled(out: Float64Array, v: Float64Array, a: number): void {
  for (let i = 0; i < out.length; i++) out[i] += a * v[i];
}

/** out += the kept grid along `change` (a multiple of a kept direction ±d, cosine 1 to rounding); false when none is kept. */
function alongKept(s: Stored, change: readonly number[], out: Float64Array): boolean {
  const size = Math.hypot(...change);
  if (size === 0) return true;
  for (const g of s.directions) {
    const cos = g.d.reduce((a, x, k) => a + x * change[k], 0) / size;
    if (Math.abs(cos) < 1 - 1e-12) continue;
    addScaled(out, g.values, size * Math.sign(cos));
    return true;
  }
  return false;
}

/**
 * The last use's values moved to these drives (see Stored.directions); null when the free charges or
 * the medium changed since, or when that takes a new direction's grid and `evaluate` is false.
 */
function fromLast(s: Stored, level: Level3d, images: Image[], potentials: readonly number[], permittivity: number, ev: Evaluator, evaluate: boolean): Float64Array | null {
  const last = s.last;
  if (!last || last.free !== level.free || last.permittivity !== permittivity) return null;
  const m = s.pts.length / 3;
  const out = Float64Array.from(last.values);
  const change = potentials.map((v, k) => v - last.potentials[k]);
  // A kept direction of the whole change first (a repeated edit of one drive), even where unit grids
  // were completed since (the warm-up completes them one by one, which would split the change).
  if (alongKept(s, change, out)) return out;
  // Complete unit grids take their own part of the change; the rest goes along a direction.
  const rest = change.map((dv, k) => {
    if (dv === 0 || s.units[k].filled < m) return dv;
    addScaled(out, s.units[k].values, dv);
    return 0;
  });
  const size = Math.hypot(...rest);
  if (size === 0) return out;
  const d = rest.map((x) => x / size);
  if (alongKept(s, rest, out)) return out;
  if (!evaluate) return null;
  const x = new Float64Array(level.sys.n);
  d.forEach((c, k) => c !== 0 && addScaled(x, level.unit[k], c));
  const values = valuesAt(unitState(level, x, images, []), s.pts, ev);
  s.directions.push({ d, values });
  // At most K: by then the unit grids would have served as well.
  if (s.directions.length > level.unit.length) s.directions.shift();
  addScaled(out, values, size);
  return out;
}

/**
 * Builds, in the background, the stored grids that the latest uses of the levels of the most
 * recently used geometry went through (at most `levels` of them: its coarse level, and the full
 * solve's two, its estimate's and its own; solve.ts), the coarsest level first and each level's
 * cheapest first, in resumable steps. True when they are all complete; false when stopped by
 * isCancelled (what was built is kept). The levels are those of the engine cache (index.ts
 * EngineCache, 3d store), keyed `geometry|scale|solver`.
 */
export function warmStoredGrids(cache: EngineCache, isCancelled: () => boolean, levels = 3): boolean {
  const c3 = cache.store.get('3d') as Cache3d | undefined;
  if (!c3) return true;
  const geometryOf = (key: string) => key.slice(0, key.lastIndexOf('|', key.lastIndexOf('|') - 1));
  const used = [...c3.levels.entries()]
    .map(([key, level]) => ({ geometry: geometryOf(key), level, store: stores.get(level) }))
    .filter((u): u is { geometry: string; level: Level3d; store: LevelStore } => u.store !== undefined && u.store.uses > 0)
    .sort((a, b) => b.store.lastUse - a.store.lastUse)
    .filter((u, _, all) => u.geometry === all[0].geometry)
    .slice(0, levels);
  // Of each kind (slices, probes, thin panels), what the latest use that evaluated that kind went
  // through: a full solve's pass over its estimate level, which may be the coarse picture's level,
  // evaluates its surface alone and must not hide that picture's slices and probes.
  const latest = (kind: Stored[]) => {
    const at = Math.max(-1, ...kind.map((s) => s.use?.at ?? -1));
    return kind.filter((s) => s.use !== null && s.use.at === at);
  };
  const work = used.flatMap(({ level, store }) =>
    [...latest([...store.slices.values()]), ...latest([...store.probes.values()]), ...latest(store.thin ? [store.thin] : [])].map((s) => ({
      s,
      level,
      left: workLeft(s, level, s.use!.ev),
    })),
  );
  // The coarsest level first (what a drive edit's first picture needs), then the cheapest first.
  work.sort((a, b) => a.level.sys.n - b.level.sys.n || a.left - b.left);
  for (const { s, level } of work) {
    const use = s.use!;
    if (!complete(s, level, use.images, use.charges, use.ev, isCancelled)) return false;
  }
  return true;
}

/** Slices of a solved level by superposition (see the header); null when cancelled. */
export function superposedSlices(
  scene: Scene3d,
  level: Level3d,
  images: Image[],
  potentials: readonly number[],
  maxGridCells: number,
  diagnostics: Diagnostic[],
  isCancelled?: () => boolean,
  grid: GridEvaluator = FULL_GRID,
  state?: FieldState3d,
): SliceResult[] | null {
  const store = storeOf(level);
  const out: SliceResult[] = [];
  let combined: FieldState3d | null = state ?? null;
  const fresh = () => (combined ??= combinedState(scene, level, images, potentials));
  for (const slice of scene.slices) {
    const where = JSON.stringify([slice.plane, slice.at, slice.from, slice.to]);
    const size = JSON.stringify([where, maxGridCells]);
    const L = sliceLayout(scene, slice, maxGridCells, potentials, diagnostics, store.lines.get(where), store.cells.get(size));
    store.lines.set(where, { outlines: L.result.outlines, groundLines: L.result.groundLines });
    trim(store.lines, 16);
    if (!store.cells.has(size)) {
      store.cells.set(size, { inside: Int16Array.from(L.result.inside), outside: L.outside });
      trim(store.cells, 16);
    }
    const m = L.outside.length;
    const pts = new Float64Array(3 * m);
    const p = [0, 0, 0];
    L.outside.forEach((idx, i) => {
      L.centre(idx, p);
      pts.set(p, 3 * i);
    });
    // The evaluator evaluateSlices would use for this many points: the treecode (one tree, new densities per solution) or direct sums.
    const ev: Evaluator = m * level.sys.n > grid.above ? { tree: treeOf(store, level, images), theta: grid.theta } : { tree: null, mode: 'grid' };
    const key = JSON.stringify([slice.plane, slice.at, slice.from, slice.to, L.nu, L.nv, grid]);
    let s = store.slices.get(key);
    if (s && !sameCells(s.outside, L.outside)) s = undefined;
    // A grid too large to keep its grids of (K unit ones, the free charges', the last picture and up to K of drive changes) is evaluated afresh.
    const tooLarge = L.nu * L.nv * 4 * (2 * level.unit.length + 2) > MAX_STORED_VALUES;
    if (!tooLarge && !s) {
      s = { ...newStored(pts, level), outside: Int32Array.from(L.outside) };
      store.slices.set(key, s);
      // A few geometries' slices at most: drop the oldest.
      trim(store.slices, 8);
    }
    if (isCancelled?.()) return null;
    const values = s ? valuesFor(s, level, images, scene, potentials, ev, fresh, isCancelled) : valuesAt(fresh(), pts, ev);
    if (!values) return null;
    // A cell centre on a point or line charge: the value a quarter cell off it (as evaluateSlices),
    // from values stored like a probe's (the same cells at every drive edit: a line charge in the
    // slice's plane has a whole row of them).
    const onCharge: number[] = [];
    for (let i = 0; i < m; i++) {
      for (let c = 0; c < 4; c++) if (!Number.isFinite(values[4 * i + c])) {
        onCharge.push(i);
        break;
      }
    }
    const shifted = onCharge.length > 0 ? shiftedValues(store, level, images, scene, potentials, key, L, onCharge, fresh, isCancelled) : null;
    if (onCharge.length > 0 && !shifted) return null;
    const f = [0, 0, 0, 0];
    for (let i = 0, o = 0; i < m; i++) {
      const from: Float64Array = o < onCharge.length && onCharge[o] === i ? shifted! : values;
      const at = from === values ? i : o++;
      for (let c = 0; c < 4; c++) f[c] = from[4 * at + c];
      L.store(L.outside[i], f);
    }
    out.push(L.result);
  }
  return out;
}

/** Values a quarter cell off the given cells (L.shift), by direct sums in 'grid' mode as evaluateSlices takes them, stored per cell set; null when cancelled. */
function shiftedValues(
  store: LevelStore,
  level: Level3d,
  images: Image[],
  scene: Scene3d,
  potentials: readonly number[],
  sliceKey: string,
  L: SliceLayout,
  cells: number[],
  fresh: () => FieldState3d,
  isCancelled?: () => boolean,
): Float64Array | null {
  const key = `shifted ${sliceKey} ${cells.join(',')}`;
  let s = store.probes.get(key);
  if (!s) {
    const pts = new Float64Array(3 * cells.length);
    const p = [0, 0, 0];
    cells.forEach((i, k) => {
      L.centre(L.outside[i], p);
      L.shift(p);
      pts.set(p, 3 * k);
    });
    s = newStored(pts, level);
    store.probes.set(key, s);
    trim(store.probes, 8);
  }
  return valuesFor(s, level, images, scene, potentials, { tree: null, mode: 'grid' }, fresh, isCancelled);
}

function treeOf(store: LevelStore, level: Level3d, images: Image[]): FieldEvaluator {
  store.tree ??= new FieldEvaluator(level.sys.mesh, level.unit[0] ?? new Float64Array(level.sys.n), INV_4PI, images, {}, level.sys.panels);
  return store.tree;
}

function sameCells(a: Int32Array, b: readonly number[]): boolean {
  if (a.length !== b.length) return false;
  for (let i = 0; i < a.length; i++) if (a[i] !== b[i]) return false;
  return true;
}

/** Probe points by superposition: the precise sums per solution, stored per probe set (only points outside conductors and in front of ground planes). */
export function superposedProbes(scene: Scene3d, level: Level3d, images: Image[], potentials: readonly number[]): ProbeResult[] {
  const store = storeOf(level);
  const behind = behindGround(scene);
  const layout = scene.probes.flatMap((probe, pi) => probePoints(probe).map((at) => ({ probe: pi, at, k: insideElectrode(scene, at), behind: behind(at) })));
  const open = layout.filter((q) => q.k < 0 && !q.behind);
  const key = JSON.stringify(open.map((q) => q.at));
  let s = store.probes.get(key);
  if (!s) {
    const pts = new Float64Array(3 * open.length);
    open.forEach((q, i) => pts.set(q.at, 3 * i));
    s = newStored(pts, level);
    store.probes.set(key, s);
    trim(store.probes, 8);
  }
  const values = valuesFor(s, level, images, scene, potentials, { tree: null, mode: 'precise' }, () => combinedState(scene, level, images, potentials))!;
  let i = 0;
  const points = layout.map((q) => {
    if (q.k >= 0) return { at: q.at, potential: potentials[q.k], field: [0, 0, 0], fieldMagnitude: 0 };
    if (q.behind) return { at: q.at, potential: 0, field: [0, 0, 0], fieldMagnitude: 0 };
    const [phi, ex, ey, ez] = values.subarray(4 * i, 4 * ++i);
    return { at: q.at, potential: phi, field: [ex, ey, ez], fieldMagnitude: Math.hypot(ex, ey, ez) };
  });
  return scene.probes.map((probe, pi) => ({ name: probe.name, points: points.filter((_, j) => layout[j].probe === pi) }));
}

/**
 * Surface field per panel (as bem3d/field.ts surfaceFields) by superposition: the field at thin
 * panels' centroids is stored per solution (its normal component taken when summed); closed panels
 * read |x| directly. A system that keeps its thin panels' field rows (dense assembly) is summed
 * afresh through them until the stored values are complete.
 */
export function superposedSurfaceFields(scene: Scene3d, level: Level3d, images: Image[], x: Float64Array, potentials: readonly number[]): Float64Array {
  const store = storeOf(level);
  const { mesh } = level.sys;
  const n = level.sys.n;
  if (!store.thin) {
    const thin: number[] = [];
    for (let j = 0; j < n; j++) if (mesh.thin[j]) thin.push(j);
    const pts = new Float64Array(3 * thin.length);
    thin.forEach((j, i) => pts.set(mesh.centroid.subarray(3 * j, 3 * j + 3), 3 * i));
    store.thin = newStored(pts, level);
  }
  const s = store.thin;
  const state: FieldState3d = { sys: level.sys, x, charges: scene.charges, images, permittivity: scene.medium.permittivity };
  // Thin panels' field rows kept by the assembly: until the stored values are complete (a build
  // does that), the fresh sum over the rows is the cheapest way.
  if (level.sys.thinRows && building === 'stored-only' && !isComplete(s, level)) {
    s.use = { images, charges: scene.charges, ev: { tree: null, mode: 'precise' }, at: store.uses };
    return surfaceFields(state);
  }
  const values = valuesFor(s, level, images, scene, potentials, { tree: null, mode: 'precise' }, () => state)!;
  const E = new Float64Array(n);
  let i = 0;
  for (let j = 0; j < n; j++) {
    if (!mesh.thin[j]) {
      E[j] = Math.abs(x[j]);
      continue;
    }
    // As surfaceFields: the larger face's |x|/2 + |E·n|.
    const en = values[4 * i + 1] * mesh.normal[3 * j] + values[4 * i + 2] * mesh.normal[3 * j + 1] + values[4 * i + 3] * mesh.normal[3 * j + 2];
    E[j] = Math.abs(x[j]) / 2 + Math.abs(en);
    i++;
  }
  return E;
}
