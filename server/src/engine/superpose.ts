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
// charge. Building the stored values costs about K + 1 evaluations, so it is done only when a
// level is reused with new drives (the first solve of a geometry pays nothing extra).
import { insideElectrode } from '../../../grammar/geometry';
import type { Diagnostic, Scene3d } from '../../../grammar/scene';
import { addFreeCharges, potentialAndField, type FieldState3d } from './bem3d/field';
import type { FreeSolution, Level3d } from './bem3d/level';
import { GRID_FAR_RATIO, INV_4PI, type EvalMode } from './bem3d/system';
import { reflect, type Image } from './bem3d/images';
import { FAST_EVAL_MIN_PANELS } from './fast/bem3d';
import { panelPotentialAndGradient } from './kernels/triangle';
import { behindGround, evaluateSlices, FULL_GRID, probePoints, sliceGrid, sliceLayout, type GridEvaluator, type SliceLayout } from './evaluate';
import { FieldEvaluator } from './fast/field-evaluator';
import type { ProbeResult, SliceResult } from './result';

/** Stored values of one set of points: [φ, Ex, Ey, Ez] per point, one array per unit solution and one for the free charges. */
interface Basis {
  units: Float64Array[];
  free: { of: FreeSolution; values: Float64Array } | null;
}

interface SliceBasis extends Basis {
  /** The outside cells the values belong to; a different set (masks changed) rebuilds. */
  outside: Int32Array;
  /** Cells (positions in layout.outside) whose centre falls on a free charge: values a quarter cell off, per solution. */
  shifted: { m: number; units: number[][]; free: number[] }[];
}

interface LevelStore {
  /** The drives of the last use of this level: stored values are built when they change. */
  signature: string | null;
  slices: Map<string, SliceBasis>;
  probes: Map<string, Basis>;
  thin: Basis | null;
  /** Each slice's outlines and ground lines (the level's geometry and the slice decide them). */
  lines: Map<string, Pick<SliceResult, 'outlines' | 'groundLines'>>;
}

const stores = new WeakMap<Level3d, LevelStore>();

/** Most stored values (8 bytes each) for one slice: 2e7, 160 MB; larger grids are evaluated afresh. */
export const MAX_STORED_VALUES = 2e7;

function storeOf(level: Level3d): LevelStore {
  let s = stores.get(level);
  if (!s) {
    s = { signature: null, slices: new Map(), probes: new Map(), thin: null, lines: new Map() };
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

function unitState(level: Level3d, x: Float64Array, images: Image[], charges: Scene3d['charges']): FieldState3d {
  return { sys: level.sys, x, charges, images, permittivity: 1 };
}

/**
 * [φ, Ex, Ey, Ez] at m points (3 coordinates each) for every unit solution and the free-charge one
 * (last, with the free charges' direct field; null when there are none), the way potentialAndField
 * evaluates one state: below the treecode's size by direct sums, each panel's kernel computed once
 * and weighted by every solution (bem3d/system.ts surfacePotentialAndGradient, term by term).
 */
function allAt(level: Level3d, images: Image[], charges: Scene3d['charges'], free: Float64Array | null, pts: Float64Array, mode: EvalMode): Float64Array[] {
  const m = pts.length / 3;
  const xs = free ? [...level.unit, free] : level.unit;
  const states = xs.map((x, v) => unitState(level, x, images, free && v === xs.length - 1 ? charges : []));
  const outs = xs.map(() => new Float64Array(4 * m));
  const sys = level.sys;
  if (sys.n >= FAST_EVAL_MIN_PANELS) {
    states.forEach((st, v) => {
      for (let i = 0; i < m; i++) outs[v].set(potentialAndField(st, pts[3 * i], pts[3 * i + 1], pts[3 * i + 2], mode), 4 * i);
    });
    return outs;
  }
  const V = xs.length;
  const P = sys.panels;
  const c = P.centroid;
  const r = [0, 0, 0];
  const g = new Float64Array(4);
  const acc = new Float64Array(4 * V);
  const tot = new Float64Array(4 * V);
  const farRatioSq = GRID_FAR_RATIO * GRID_FAR_RATIO;
  const freeBuf = new Float64Array(4);
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
      freeBuf[0] = tot[4 * v] * INV_4PI;
      freeBuf[1] = tot[4 * v + 1] * INV_4PI;
      freeBuf[2] = tot[4 * v + 2] * INV_4PI;
      freeBuf[3] = tot[4 * v + 3] * INV_4PI;
      addFreeCharges(states[v], x, y, z, freeBuf);
      const o = outs[v];
      o[4 * i] = freeBuf[0];
      o[4 * i + 1] = -freeBuf[1];
      o[4 * i + 2] = -freeBuf[2];
      o[4 * i + 3] = -freeBuf[3];
    }
  }
  return outs;
}

/** [φ, Ex, Ey, Ez] of one state at m points, by the evaluator evaluateSlices would choose for that many points. */
function valuesAt(state: FieldState3d, pts: Float64Array, tree: FieldEvaluator | null, theta: number): Float64Array {
  const m = pts.length / 3;
  const out = new Float64Array(4 * m);
  if (tree) {
    tree.setDensities(state.x);
    const panels = tree.evaluate(pts, theta);
    const free = new Float64Array(4);
    for (let i = 0; i < m; i++) {
      free.fill(0);
      addFreeCharges(state, pts[3 * i], pts[3 * i + 1], pts[3 * i + 2], free);
      out[4 * i] = panels.potential[i] + free[0];
      for (let c = 0; c < 3; c++) out[4 * i + 1 + c] = panels.field[3 * i + c] - free[1 + c];
    }
    return out;
  }
  for (let i = 0; i < m; i++) out.set(potentialAndField(state, pts[3 * i], pts[3 * i + 1], pts[3 * i + 2], 'grid'), 4 * i);
  return out;
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
  for (const slice of scene.slices) {
    // A grid too large to keep K + 1 copies of: evaluated afresh, as without superposition.
    const { nu, nv } = sliceGrid(slice, maxGridCells);
    if (state && nu * nv * 4 * (level.unit.length + 1) > MAX_STORED_VALUES) {
      const one = evaluateSlices({ ...scene, slices: [slice] }, state, potentials, maxGridCells, diagnostics, isCancelled, grid);
      if (!one) return null;
      out.push(one[0]);
      continue;
    }
    const where = JSON.stringify([slice.plane, slice.at, slice.from, slice.to]);
    const L = sliceLayout(scene, slice, maxGridCells, potentials, diagnostics, store.lines.get(where));
    store.lines.set(where, { outlines: L.result.outlines, groundLines: L.result.groundLines });
    while (store.lines.size > 16) store.lines.delete(store.lines.keys().next().value as string);
    const key = JSON.stringify([slice.plane, slice.at, slice.from, slice.to, L.nu, L.nv, grid]);
    const basis = sliceBasis(scene, level, images, L, key, store, grid, isCancelled);
    if (!basis) return null;
    const f = [0, 0, 0, 0];
    const shifted = new Map(basis.shifted.map((s) => [s.m, s]));
    for (let m = 0; m < L.outside.length; m++) {
      const s = shifted.get(m);
      if (s) combine(s.units, s.free, 0, potentials, eps, f);
      else combine(basis.units, basis.free?.values ?? null, 4 * m, potentials, eps, f);
      L.store(L.outside[m], f);
    }
    out.push(L.result);
  }
  return out;
}

function sliceBasis(
  scene: Scene3d,
  level: Level3d,
  images: Image[],
  L: SliceLayout,
  key: string,
  store: LevelStore,
  grid: GridEvaluator,
  isCancelled?: () => boolean,
): SliceBasis | null {
  let basis = store.slices.get(key);
  if (basis && !sameCells(basis.outside, L.outside)) basis = undefined;
  if (basis && (basis.free?.of ?? null) === level.free) return basis;
  const pts = new Float64Array(3 * L.outside.length);
  const p = [0, 0, 0];
  L.outside.forEach((idx, m) => {
    L.centre(idx, p);
    pts.set(p, 3 * m);
  });
  // The evaluator evaluateSlices would use for this many points: the treecode (one tree, new densities per solution) or direct sums.
  const tree = L.outside.length * level.sys.n > grid.above ? new FieldEvaluator(level.sys.mesh, level.unit[0] ?? new Float64Array(level.sys.n), INV_4PI, images, {}, level.sys.panels) : null;
  let freeValues: Float64Array | null = null;
  if (!basis) {
    let units: Float64Array[] = [];
    if (tree) {
      for (const u of level.unit) {
        if (isCancelled?.()) return null;
        units.push(valuesAt(unitState(level, u, images, []), pts, tree, grid.theta));
      }
    } else {
      // Direct sums (at most grid.above point-panel pairs): every solution in one pass.
      const all = allAt(level, images, scene.charges, level.free?.x ?? null, pts, 'grid');
      units = all.slice(0, level.unit.length);
      freeValues = level.free ? all[level.unit.length] : null;
    }
    basis = { outside: Int32Array.from(L.outside), units, free: null, shifted: [] };
    store.slices.set(key, basis);
    // A few geometries' slices at most: drop the oldest.
    while (store.slices.size > 8) store.slices.delete(store.slices.keys().next().value as string);
  }
  const free = level.free;
  if (!free) {
    basis.free = null;
    basis.shifted = [];
  } else if (basis.free?.of !== free) {
    if (isCancelled?.()) return null;
    const fs = unitState(level, free.x, images, scene.charges);
    const values = freeValues ?? valuesAt(fs, pts, tree, grid.theta);
    basis.free = { of: free, values };
    // A cell centre on a point or line charge: every solution's value a quarter cell off it.
    basis.shifted = [];
    for (let m = 0; m < L.outside.length; m++) {
      let finite = true;
      for (let c = 0; c < 4; c++) finite &&= Number.isFinite(values[4 * m + c]);
      if (finite) continue;
      L.centre(L.outside[m], p);
      L.shift(p);
      basis.shifted.push({
        m,
        units: level.unit.map((u) => potentialAndField(unitState(level, u, images, []), p[0], p[1], p[2], 'grid')),
        free: potentialAndField(fs, p[0], p[1], p[2], 'grid'),
      });
    }
  }
  return basis;
}

function sameCells(a: Int32Array, b: readonly number[]): boolean {
  if (a.length !== b.length) return false;
  for (let i = 0; i < a.length; i++) if (a[i] !== b[i]) return false;
  return true;
}

/** Probe points by superposition: the precise sums per solution, stored per probe set. */
export function superposedProbes(scene: Scene3d, level: Level3d, images: Image[], potentials: readonly number[]): ProbeResult[] {
  const store = storeOf(level);
  const eps = scene.medium.permittivity;
  const layout = probeLayout(scene);
  const key = JSON.stringify(layout.map((p) => p.at));
  let basis = store.probes.get(key);
  if (!basis) {
    const all = allAt(level, images, scene.charges, level.free?.x ?? null, layoutPoints(layout), 'precise');
    basis = { units: all.slice(0, level.unit.length), free: level.free ? { of: level.free, values: all[level.unit.length] } : null };
    store.probes.set(key, basis);
    while (store.probes.size > 8) store.probes.delete(store.probes.keys().next().value as string);
  }
  const free = level.free;
  if (!free) basis.free = null;
  else if (basis.free?.of !== free) basis.free = { of: free, values: allAt({ ...level, unit: [] }, images, scene.charges, free.x, layoutPoints(layout), 'precise')[0] };
  const f = [0, 0, 0, 0];
  const behind = behindGround(scene);
  const points = layout.map((p, i) => {
    const k = insideElectrode(scene, p.at);
    if (k >= 0) return { at: p.at, potential: potentials[k], field: [0, 0, 0], fieldMagnitude: 0 };
    if (behind(p.at)) return { at: p.at, potential: 0, field: [0, 0, 0], fieldMagnitude: 0 };
    combine(basis.units, basis.free?.values ?? null, 4 * i, potentials, eps, f);
    return { at: p.at, potential: f[0], field: [f[1], f[2], f[3]], fieldMagnitude: Math.hypot(f[1], f[2], f[3]) };
  });
  return scene.probes.map((probe, pi) => ({ name: probe.name, points: points.filter((_, i) => layout[i].probe === pi) }));
}

/** Every probe point, in order, with its probe's index. */
function probeLayout(scene: Scene3d): { probe: number; at: number[] }[] {
  return scene.probes.flatMap((p, probe) => probePoints(p).map((at) => ({ probe, at })));
}

function layoutPoints(layout: { at: number[] }[]): Float64Array {
  const pts = new Float64Array(3 * layout.length);
  layout.forEach((p, i) => pts.set(p.at, 3 * i));
  return pts;
}

/**
 * Surface field per panel (as bem3d/field.ts surfaceFields) by superposition: the normal field at
 * thin panels' centroids is stored per solution; closed panels read |x| directly.
 */
export function superposedSurfaceFields(scene: Scene3d, level: Level3d, images: Image[], x: Float64Array, potentials: readonly number[]): Float64Array {
  const store = storeOf(level);
  const { mesh } = level.sys;
  const n = level.sys.n;
  const thin: number[] = [];
  for (let j = 0; j < n; j++) if (mesh.thin[j]) thin.push(j);
  const c = mesh.centroid;
  const pts = new Float64Array(3 * thin.length);
  thin.forEach((j, i) => pts.set(c.subarray(3 * j, 3 * j + 3), 3 * i));
  // The normal field E·n (into slot 0) at the thin centroids, per solution.
  const normalField = (values: Float64Array) => {
    thin.forEach((j, i) => {
      values[4 * i] = values[4 * i + 1] * mesh.normal[3 * j] + values[4 * i + 2] * mesh.normal[3 * j + 1] + values[4 * i + 3] * mesh.normal[3 * j + 2];
      values[4 * i + 1] = values[4 * i + 2] = values[4 * i + 3] = 0;
    });
    return values;
  };
  const free = level.free;
  if (!store.thin) {
    const all = allAt(level, images, scene.charges, free?.x ?? null, pts, 'precise').map(normalField);
    store.thin = { units: all.slice(0, level.unit.length), free: free ? { of: free, values: all[level.unit.length] } : null };
  }
  if (!free) store.thin.free = null;
  else if (store.thin.free?.of !== free) store.thin.free = { of: free, values: normalField(allAt({ ...level, unit: [] }, images, scene.charges, free.x, pts, 'precise')[0]) };
  const E = new Float64Array(n);
  for (let j = 0; j < n; j++) E[j] = Math.abs(x[j]);
  const f = [0, 0, 0, 0];
  thin.forEach((j, i) => {
    combine(store.thin!.units, store.thin!.free?.values ?? null, 4 * i, potentials, scene.medium.permittivity, f);
    E[j] = Math.abs(x[j]) / 2 + Math.abs(f[0]);
  });
  return E;
}
