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
// charge. Building the stored values costs about K + 1 evaluations (one pass when direct sums weigh
// each panel's kernel by every solution at once). The build is resumable: it goes point chunk by
// point chunk, and what was computed before a cancellation is kept, so a later build goes on from
// there. When it runs is the caller's choice (withGridBuilding): at the first reuse of a level with
// new drives (the default), or only when asked, e.g. by the language server while it is idle, with
// drive edits in between taking what is complete and evaluating the rest afresh (one evaluation).
import { insideElectrode } from '../../../grammar/geometry';
import type { Diagnostic, Scene3d } from '../../../grammar/scene';
import { addFreeCharges, potentialAndField, surfaceFields, type FieldState3d } from './bem3d/field';
import type { FreeSolution, Level3d } from './bem3d/level';
import { GRID_FAR_RATIO, INV_4PI, type EvalMode } from './bem3d/system';
import { reflect, type Image } from './bem3d/images';
import { FAST_EVAL_MIN_PANELS } from './fast/bem3d';
import { panelPotentialAndGradient } from './kernels/triangle';
import { behindGround, evaluateProbes, FULL_GRID, probePoints, sliceLayout, type GridEvaluator, type SliceLayout } from './evaluate';
import { FieldEvaluator } from './fast/field-evaluator';
import type { ProbeResult, SliceResult } from './result';

/**
 * When missing stored values are built:
 * - 'build' (the default): as soon as a use needs them;
 * - 'stored-only': a use takes the stored values that are complete, finishes those that need at most
 *   one more evaluation's worth of work (the same cost as evaluating afresh), and evaluates the rest
 *   afresh from the combined densities (identical values), leaving their build to a later 'build' run.
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
 * Stored values of one set of points: [φ, Ex, Ey, Ez] per point, one array per unit solution (of
 * which the first filled[k] points are computed so far) and one for the free charges' solution.
 */
interface Stored {
  pts: Float64Array;
  units: Float64Array[];
  filled: number[];
  free: { of: FreeSolution; values: Float64Array } | null;
}

interface SliceStored extends Stored {
  /** The outside cells the values belong to; a different set (masks changed) starts afresh. */
  outside: Int32Array;
  /** Cells (positions in outside) whose centre falls on a free charge: values a quarter cell off, per solution, for `of`. */
  shifted: { of: FreeSolution | null; cells: { m: number; units: number[][]; free: number[] }[] };
}

interface LevelStore {
  /** The drives of the last use of this level. */
  signature: string | null;
  slices: Map<string, SliceStored>;
  probes: Map<string, Stored>;
  thin: Stored | null;
  /** Each slice's outlines and ground lines (the level's geometry and the slice decide them). */
  lines: Map<string, Pick<SliceResult, 'outlines' | 'groundLines'>>;
  /** The treecode over the level's panels (geometry only; densities are set per solution). */
  tree: FieldEvaluator | null;
}

const stores = new WeakMap<Level3d, LevelStore>();

/** Most stored values (8 bytes each) for one slice: 2e7, 160 MB; larger grids are evaluated afresh. */
export const MAX_STORED_VALUES = 2e7;

/** Points per step of a treecode build (threads split batches from 2048 points), and of a direct one. */
const TREE_CHUNK = 4096;
const DIRECT_CHUNK = 256;

function storeOf(level: Level3d): LevelStore {
  let s = stores.get(level);
  if (!s) {
    s = { signature: null, slices: new Map(), probes: new Map(), thin: null, lines: new Map(), tree: null };
    stores.set(level, s);
  }
  return s;
}

/**
 * Whether this use of a level should go through stored values: true once the level is reused with
 * drives or free charges other than at its previous use (a live drive edit), or when values are
 * already stored. Call once per use of a level, with everything that the result depends on besides
 * the geometry.
 */
export function useSuperposition(level: Level3d, signature: string): boolean {
  const s = storeOf(level);
  const changed = s.signature !== null && s.signature !== signature;
  s.signature = signature;
  return changed || s.slices.size > 0 || s.probes.size > 0 || s.thin !== null;
}

/** How many points of each kind of stored values are computed, out of how many (for tests and the benchmark). */
export function storedProgress(level: Level3d): { done: number; total: number } {
  const s = stores.get(level);
  let done = 0, total = 0;
  if (!s) return { done, total };
  for (const st of [...s.slices.values(), ...s.probes.values(), ...(s.thin ? [s.thin] : [])]) {
    const m = st.pts.length / 3;
    total += m * st.units.length;
    done += st.filled.reduce((a, b) => a + b, 0);
  }
  return { done, total };
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
  if (!ev.tree) return direct([state], pts, ev.mode)[0];
  const m = pts.length / 3;
  const out = new Float64Array(4 * m);
  ev.tree.setDensities(state.x);
  const panels = ev.tree.evaluate(pts, ev.theta);
  const free = new Float64Array(4);
  for (let i = 0; i < m; i++) {
    free.fill(0);
    addFreeCharges(state, pts[3 * i], pts[3 * i + 1], pts[3 * i + 2], free);
    out[4 * i] = panels.potential[i] + free[0];
    for (let c = 0; c < 3; c++) out[4 * i + 1 + c] = panels.field[3 * i + c] - free[1 + c];
  }
  return out;
}

function newStored(pts: Float64Array, level: Level3d): Stored {
  return { pts, units: level.unit.map(() => new Float64Array((4 * pts.length) / 3)), filled: level.unit.map(() => 0), free: null };
}

function isComplete(s: Stored, level: Level3d): boolean {
  const m = s.pts.length / 3;
  return s.filled.every((f) => f === m) && (s.free?.of ?? null) === level.free;
}

/** Work left to complete s, in evaluations of one solution at one point (evaluating afresh costs m). */
function workLeft(s: Stored, level: Level3d, ev: Evaluator): number {
  const m = s.pts.length / 3;
  const left = s.filled.map((f) => m - f);
  const units = onePass(level, ev) ? Math.max(0, ...left) : left.reduce((a, b) => a + b, 0);
  return units + (level.free && s.free?.of !== level.free ? m : 0);
}

/** Whether a use should complete s now (rather than evaluate afresh): always when building, else when that costs no more than one evaluation. */
function shouldComplete(s: Stored, level: Level3d, ev: Evaluator): boolean {
  return building === 'build' || workLeft(s, level, ev) <= s.pts.length / 3;
}

/** Computes what s lacks, chunk by chunk; false when cancelled (what was computed is kept). */
function complete(s: Stored, level: Level3d, images: Image[], charges: Scene3d['charges'], ev: Evaluator, isCancelled?: () => boolean): boolean {
  const m = s.pts.length / 3;
  const K = level.unit.length;
  const units = level.unit.map((u) => unitState(level, u, images, []));
  if (onePass(level, ev)) {
    for (let a = Math.min(m, ...s.filled); a < m; a += DIRECT_CHUNK) {
      if (isCancelled?.()) return false;
      const b = Math.min(m, a + DIRECT_CHUNK);
      const outs = direct(units, s.pts.subarray(3 * a, 3 * b), (ev as { mode: EvalMode }).mode);
      for (let k = 0; k < K; k++) {
        s.units[k].set(outs[k], 4 * a);
        s.filled[k] = Math.max(s.filled[k], b);
      }
    }
  } else {
    const chunk = ev.tree ? TREE_CHUNK : DIRECT_CHUNK;
    for (let k = 0; k < K; k++) {
      while (s.filled[k] < m) {
        if (isCancelled?.()) return false;
        const a = s.filled[k];
        const b = Math.min(m, a + chunk);
        s.units[k].set(valuesAt(units[k], s.pts.subarray(3 * a, 3 * b), ev), 4 * a);
        s.filled[k] = b;
      }
    }
  }
  const free = level.free;
  if (!free) s.free = null;
  else if (s.free?.of !== free) {
    if (isCancelled?.()) return false;
    s.free = { of: free, values: valuesAt(unitState(level, free.x, images, charges), s.pts, ev) };
  }
  return true;
}

/** Σ_k V_k·units_k[i] + free[i]/εr into f[0..3]. */
function combine(units: readonly (Float64Array | number[])[], free: Float64Array | number[] | null, at: number, potentials: readonly number[], permittivity: number, f: number[]): void {
  f[0] = f[1] = f[2] = f[3] = 0;
  units.forEach((u, k) => {
    const v = potentials[k];
    if (v === 0) return;
    for (let c = 0; c < 4; c++) f[c] += v * u[at + c];
  });
  if (free) for (let c = 0; c < 4; c++) f[c] += free[at + c] / permittivity;
}

/** Keeps at most `most` entries, dropping the oldest. */
function trim<V>(map: Map<string, V>, most: number): void {
  while (map.size > most) map.delete(map.keys().next().value as string);
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
  const eps = scene.medium.permittivity;
  let fresh: FieldState3d | null = state ?? null;
  const freshState = () => (fresh ??= combinedState(scene, level, images, potentials));
  for (const slice of scene.slices) {
    const where = JSON.stringify([slice.plane, slice.at, slice.from, slice.to]);
    const L = sliceLayout(scene, slice, maxGridCells, potentials, diagnostics, store.lines.get(where));
    store.lines.set(where, { outlines: L.result.outlines, groundLines: L.result.groundLines });
    trim(store.lines, 16);
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
    // A grid too large to keep K + 1 copies of, or one not complete that a use should not complete now: evaluated afresh.
    const tooLarge = L.nu * L.nv * 4 * (level.unit.length + 1) > MAX_STORED_VALUES;
    if (!tooLarge && !s) {
      s = { ...newStored(pts, level), outside: Int32Array.from(L.outside), shifted: { of: null, cells: [] } };
      store.slices.set(key, s);
      // A few geometries' slices at most: drop the oldest.
      trim(store.slices, 8);
    }
    // A grid too large to keep K + 1 copies of, or one a use should not complete now: evaluated afresh.
    if (!s || (!isComplete(s, level) && !shouldComplete(s, level, ev))) {
      if (isCancelled?.()) return null;
      const st = freshState();
      const values = valuesAt(st, pts, ev);
      const f = [0, 0, 0, 0];
      for (let i = 0; i < m; i++) {
        for (let c = 0; c < 4; c++) f[c] = values[4 * i + c];
        if (!f.every(Number.isFinite)) {
          // A cell centre on a point or line charge: the value a quarter cell off it.
          L.centre(L.outside[i], p);
          L.shift(p);
          const g = potentialAndField(st, p[0], p[1], p[2], 'grid');
          for (let c = 0; c < 4; c++) f[c] = g[c];
        }
        L.store(L.outside[i], f);
      }
      out.push(L.result);
      continue;
    }
    if (!complete(s, level, images, scene.charges, ev, isCancelled)) return null;
    const cells = shiftedCells(s, level, images, scene.charges, L, p);
    const f = [0, 0, 0, 0];
    const shifted = new Map(cells.map((c) => [c.m, c]));
    for (let i = 0; i < m; i++) {
      const c = shifted.get(i);
      if (c) combine(c.units, c.free, 0, potentials, eps, f);
      else combine(s.units, s.free?.values ?? null, 4 * i, potentials, eps, f);
      L.store(L.outside[i], f);
    }
    out.push(L.result);
  }
  return out;
}

/** The cells of a complete slice whose centre falls on a free charge, with every solution's value a quarter cell off it. */
function shiftedCells(
  s: SliceStored,
  level: Level3d,
  images: Image[],
  charges: Scene3d['charges'],
  L: Pick<SliceLayout, 'centre' | 'shift'>,
  p: number[],
): SliceStored['shifted']['cells'] {
  const free = s.free;
  if (!free) return [];
  if (s.shifted.of === free.of) return s.shifted.cells;
  const cells: SliceStored['shifted']['cells'] = [];
  const fs = unitState(level, free.of.x, images, charges);
  for (let i = 0; i < s.outside.length; i++) {
    let finite = true;
    for (let c = 0; c < 4; c++) finite &&= Number.isFinite(free.values[4 * i + c]);
    if (finite) continue;
    L.centre(s.outside[i], p);
    L.shift(p);
    cells.push({
      m: i,
      units: level.unit.map((u) => potentialAndField(unitState(level, u, images, []), p[0], p[1], p[2], 'grid')),
      free: potentialAndField(fs, p[0], p[1], p[2], 'grid'),
    });
  }
  s.shifted = { of: free.of, cells };
  return cells;
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
  const eps = scene.medium.permittivity;
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
  const ev: Evaluator = { tree: null, mode: 'precise' };
  if (!isComplete(s, level) && !shouldComplete(s, level, ev)) return evaluateProbes(scene, combinedState(scene, level, images, potentials), potentials);
  complete(s, level, images, scene.charges, ev);
  const f = [0, 0, 0, 0];
  let i = 0;
  const points = layout.map((q) => {
    if (q.k >= 0) return { at: q.at, potential: potentials[q.k], field: [0, 0, 0], fieldMagnitude: 0 };
    if (q.behind) return { at: q.at, potential: 0, field: [0, 0, 0], fieldMagnitude: 0 };
    combine(s.units, s.free?.values ?? null, 4 * i++, potentials, eps, f);
    return { at: q.at, potential: f[0], field: [f[1], f[2], f[3]], fieldMagnitude: Math.hypot(f[1], f[2], f[3]) };
  });
  return scene.probes.map((probe, pi) => ({ name: probe.name, points: points.filter((_, j) => layout[j].probe === pi) }));
}

/**
 * Surface field per panel (as bem3d/field.ts surfaceFields) by superposition: the field at thin
 * panels' centroids is stored per solution (its normal component taken when summed); closed panels
 * read |x| directly.
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
  const ev: Evaluator = { tree: null, mode: 'precise' };
  if (!isComplete(s, level) && !shouldComplete(s, level, ev)) {
    return surfaceFields({ sys: level.sys, x, charges: scene.charges, images, permittivity: scene.medium.permittivity });
  }
  complete(s, level, images, scene.charges, ev);
  const E = new Float64Array(n);
  for (let j = 0; j < n; j++) E[j] = Math.abs(x[j]);
  const f = [0, 0, 0, 0];
  let i = 0;
  for (let j = 0; j < n; j++) {
    if (!mesh.thin[j]) continue;
    combine(s.units, s.free?.values ?? null, 4 * i++, potentials, scene.medium.permittivity, f);
    const en = f[1] * mesh.normal[3 * j] + f[2] * mesh.normal[3 * j + 1] + f[3] * mesh.normal[3 * j + 2];
    E[j] = Math.abs(x[j]) / 2 + Math.abs(en);
  }
  return E;
}
