// Potential and field at user-chosen places of a solved 3d scene: probes (points and lines) and slice
// grids (values at cell centres, row-major, see SliceResult). Cells inside a solid conductor take its
// potential and NaN field (grammar/geometry.ts insideElectrode), so contours need no holes; a cell
// centre that falls on a point or line charge takes the value a quarter cell away; behind a ground
// plane everything is 0 (behindGround). Grids
// respect a cell limit: a larger slice is evaluated on a coarser grid, with a warning.
// Large grids take the panel part from the treecode (fast/field-evaluator.ts, opening angle 0.3:
// about 2e-4 relative) instead of the direct sum; free charges are always summed directly.
import { insideElectrode, sceneBounds } from '../../../grammar/geometry';
import type { Diagnostic, Scene3d, Slice } from '../../../grammar/scene';
import { diagnostic } from '../../../grammar/diagnostics';
import { addFreeCharges, potentialAndField, type FieldState3d } from './bem3d/field';
import { INV_4PI } from './bem3d/system';
import { FieldEvaluator } from './fast/field-evaluator';
import { groundLines, sliceAxes, sliceOutlines } from './outlines';
import type { ProbeResult, SliceResult } from './result';

/**
 * A test for points behind a ground plane (on the side away from the scene): there the grounded
 * conductor screens everything, so the potential is 0 V and the field zero (the image charges that
 * stand there are a device of the method, not a field).
 */
export function behindGround(scene: Scene3d): (p: readonly number[]) => boolean {
  const b = sceneBounds(scene);
  if (!b || scene.groundPlanes.length === 0) return () => false;
  const sides = scene.groundPlanes.map((g) => {
    const k = { x: 0, y: 1, z: 2 }[g.axis];
    return { k, at: g.at, side: Math.sign((b.min[k] + b.max[k]) / 2 - g.at) };
  });
  return (p) => sides.some((s) => s.side !== 0 && Math.sign(p[s.k] - s.at) === -s.side);
}

/** Above this many point-panel pairs a slice grid uses the treecode for the panel charges. */
export const TREECODE_ABOVE = 4e6;

/** How slice grids sum the panel charges: the treecode above `above` point-panel pairs, at opening angle `theta`. */
export interface GridEvaluator {
  above: number;
  theta: number;
}
/** The full picture: direct sums up to TREECODE_ABOVE pairs, then the treecode at θ = 0.3 (about 2e-4 relative). */
export const FULL_GRID: GridEvaluator = { above: TREECODE_ABOVE, theta: 0.3 };
/**
 * The coarse (live) picture: the treecode from 2e5 pairs at θ = 0.5 (about 1e-3 relative, below the
 * coarse mesh's own error): 3-5× faster than θ = 0.3 and 2-5× faster than the direct sums on the
 * samples' coarse grids (measured: wafer-chuck 895 panels × 3,606 cells, 0.3 s at θ = 0.3, 0.09 s at
 * θ = 0.5, 0.55 s direct).
 */
export const COARSE_GRID: GridEvaluator = { above: 2e5, theta: 0.5 };

/** Probes: precise sums; a probe inside a solid conductor reads its potential and no field (as the grid does). */
export function evaluateProbes(scene: Scene3d, state: FieldState3d, potentials: readonly number[]): ProbeResult[] {
  const behind = behindGround(scene);
  return scene.probes.map((p) => {
    const at = probePoints(p);
    return {
      name: p.name,
      points: at.map((q) => {
        const k = insideElectrode(scene, q);
        if (k >= 0) return { at: q, potential: potentials[k], field: [0, 0, 0], fieldMagnitude: 0 };
        if (behind(q)) return { at: q, potential: 0, field: [0, 0, 0], fieldMagnitude: 0 };
        const [phi, ex, ey, ez] = potentialAndField(state, q[0], q[1], q[2], 'precise');
        return { at: q, potential: phi, field: [ex, ey, ez], fieldMagnitude: Math.hypot(ex, ey, ez) };
      }),
    };
  });
}

/** The points of a probe: the point itself, or `samples` points evenly along a line. */
export function probePoints(p: Scene3d['probes'][number]): number[][] {
  if (p.kind === 'point') return [[...p.at]];
  const n = Math.max(2, Math.floor(p.samples));
  return Array.from({ length: n }, (_, i) => [0, 1, 2].map((k) => p.from[k] + (i / (n - 1)) * (p.to[k] - p.from[k])));
}

/** Grid dimensions of a slice: `cells` along the longer side, square cells, at most maxCells in all. */
export function sliceGrid(slice: Slice, maxCells: number): { nu: number; nv: number; du: number; dv: number; reduced: boolean } {
  const lu = Math.abs(slice.to[0] - slice.from[0]);
  const lv = Math.abs(slice.to[1] - slice.from[1]);
  let cells = Math.max(1, Math.floor(slice.cells));
  const dims = (c: number) => {
    const h = Math.max(lu, lv) / c;
    return { nu: Math.max(1, Math.round(lu / h)), nv: Math.max(1, Math.round(lv / h)) };
  };
  let { nu, nv } = dims(cells);
  let reduced = false;
  while (nu * nv > maxCells && cells > 1) {
    cells = Math.max(1, Math.floor(cells * Math.sqrt(maxCells / (nu * nv)) * 0.999));
    ({ nu, nv } = dims(cells));
    reduced = true;
  }
  return { nu, nv, du: lu / nu || 1, dv: lv / nv || 1, reduced };
}

export function evaluateSlices(
  scene: Scene3d,
  state: FieldState3d,
  potentials: readonly number[],
  maxGridCells: number,
  diagnostics: Diagnostic[],
  isCancelled?: () => boolean,
  grid: GridEvaluator = FULL_GRID,
): SliceResult[] | null {
  const out: SliceResult[] = [];
  // One treecode for all slices that use it (built on first need: its tree and moments cost about
  // as much as evaluating a coarse picture's grid).
  let treecode: FieldEvaluator | null = null;
  for (const slice of scene.slices) {
    const { outside, centre, store, shift, result, potential, fieldMagnitude } = sliceLayout(scene, slice, maxGridCells, potentials, diagnostics);
    const p = [0, 0, 0];
    const tree = outside.length * state.sys.n > grid.above ? (treecode ??= panelTreecode(state)) : null;
    if (tree) {
      // Panels by the treecode, free charges directly (a state with the panels left out).
      const pts = new Float64Array(3 * outside.length);
      outside.forEach((idx, m) => {
        centre(idx, p);
        pts.set(p, 3 * m);
      });
      if (isCancelled?.()) return null;
      const panels = tree.evaluate(pts, grid.theta);
      const free = new Float64Array(4);
      for (let m = 0; m < outside.length; m++) {
        free.fill(0);
        addFreeCharges(state, pts[3 * m], pts[3 * m + 1], pts[3 * m + 2], free);
        const f = [panels.potential[m] + free[0], 0, 0, 0];
        for (let c = 0; c < 3; c++) f[1 + c] = panels.field[3 * m + c] - free[1 + c];
        store(outside[m], f);
      }
    } else {
      for (let m = 0; m < outside.length; m++) {
        if ((m & 255) === 0 && isCancelled?.()) return null;
        centre(outside[m], p);
        store(outside[m], potentialAndField(state, p[0], p[1], p[2], 'grid'));
      }
    }
    // A cell centre on a point or line charge: take the value a quarter cell off it.
    for (const idx of outside) {
      if (Number.isFinite(potential[idx]) && Number.isFinite(fieldMagnitude[idx])) continue;
      centre(idx, p);
      shift(p);
      store(idx, potentialAndField(state, p[0], p[1], p[2], 'grid'));
    }
    out.push(result);
  }
  return out;
}

/** The treecode over the panel charges of a solved state (scaled densities, so the scale is 1/4π). */
function panelTreecode(state: FieldState3d): FieldEvaluator {
  return new FieldEvaluator(state.sys.mesh, state.x, INV_4PI, state.images, {}, state.sys.panels);
}

/** A slice's grid before any field is evaluated: cells inside conductors and behind ground planes filled, the rest listed. */
export interface SliceLayout {
  nu: number;
  nv: number;
  /** Cells outside every conductor and ground plane, row-major indices. */
  outside: number[];
  centre(idx: number, out: number[]): void;
  /** Moves a point a quarter cell along both grid axes (off a free charge). */
  shift(p: number[]): void;
  /** Writes [φ, Ex, Ey, Ez] of a cell. */
  store(idx: number, f: readonly number[]): void;
  potential: Float64Array;
  fieldMagnitude: Float32Array;
  result: SliceResult;
}

/** Which cells lie inside a conductor (its index, else −1) and which are outside everything (in the field): the geometry, the slice and the grid decide them. */
export interface SliceCells {
  inside: Int16Array;
  outside: number[];
}

/**
 * `lines`: the slice's outlines and ground lines, and `cells`: its cells' classification, when
 * already known (a drive-only edit: they depend on the geometry, the slice and the grid alone).
 */
export function sliceLayout(
  scene: Scene3d,
  slice: Slice,
  maxGridCells: number,
  potentials: readonly number[],
  diagnostics: Diagnostic[],
  lines?: Pick<SliceResult, 'outlines' | 'groundLines'>,
  cells?: SliceCells,
): SliceLayout {
  const { nu, nv, du, dv, reduced } = sliceGrid(slice, maxGridCells);
  if (reduced) {
    diagnostics.push(
      diagnostic('VS408', slice.range, `Slice grid reduced to ${nu} × ${nv} cells to stay within the grid-cell limit (${maxGridCells}).`),
    );
  }
  const [iu, iv, iw] = sliceAxes(slice.plane);
  const u0 = Math.min(slice.from[0], slice.to[0]);
  const v0 = Math.min(slice.from[1], slice.to[1]);
  const count = nu * nv;
  const potential = new Float64Array(count);
  const fieldU = new Float32Array(count);
  const fieldV = new Float32Array(count);
  const fieldMagnitude = new Float32Array(count);
  const inside = new Int16Array(count);
  const p = [0, 0, 0];
  p[iw] = slice.at;
  // Cells outside every conductor, and their centres.
  const outside: number[] = cells?.outside ?? [];
  if (cells && cells.inside.length === count) {
    // Known cells: conductors take their potential, cells neither inside nor outside are behind a ground plane.
    const open = new Uint8Array(count);
    for (const idx of outside) open[idx] = 1;
    inside.set(cells.inside);
    for (let idx = 0; idx < count; idx++) {
      const k = inside[idx];
      if (k >= 0) {
        potential[idx] = potentials[k];
        fieldU[idx] = fieldV[idx] = fieldMagnitude[idx] = NaN;
      } else if (!open[idx]) potential[idx] = 0;
    }
  }
  const behind = behindGround(scene);
  for (let j = 0; j < (cells ? 0 : nv); j++) {
    for (let i = 0; i < nu; i++) {
      const idx = j * nu + i;
      p[iu] = u0 + (i + 0.5) * du;
      p[iv] = v0 + (j + 0.5) * dv;
      const k = insideElectrode(scene, p);
      inside[idx] = k;
      if (k >= 0) {
        potential[idx] = potentials[k];
        fieldU[idx] = fieldV[idx] = fieldMagnitude[idx] = NaN;
      } else if (behind(p)) {
        potential[idx] = fieldU[idx] = fieldV[idx] = fieldMagnitude[idx] = 0;
      } else outside.push(idx);
    }
  }
  const centre = (idx: number, out: number[]) => {
    out[iw] = slice.at;
    out[iu] = u0 + ((idx % nu) + 0.5) * du;
    out[iv] = v0 + (Math.floor(idx / nu) + 0.5) * dv;
  };
  const store = (idx: number, f: readonly number[]) => {
    potential[idx] = f[0];
    fieldU[idx] = f[1 + iu];
    fieldV[idx] = f[1 + iv];
    fieldMagnitude[idx] = Math.hypot(f[1], f[2], f[3]);
  };
  const shift = (q: number[]) => {
    q[iu] += 0.25 * du;
    q[iv] += 0.25 * dv;
  };
  const result: SliceResult = {
    plane: slice.plane,
    at: slice.at,
    nu,
    nv,
    u0,
    v0,
    du,
    dv,
    potential,
    fieldU,
    fieldV,
    fieldMagnitude,
    inside,
    outlines: lines?.outlines ?? sliceOutlines(scene, slice),
    groundLines: lines?.groundLines ?? groundLines(scene, slice),
  };
  return { nu, nv, outside, centre, shift, store, potential, fieldMagnitude, result };
}

