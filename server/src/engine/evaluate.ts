// Potential and field at user-chosen places of a solved 3d scene: probes (points and lines) and slice
// grids (values at cell centres, row-major, see SliceResult). Cells inside a solid conductor take its
// potential and NaN field (grammar/geometry.ts insideElectrode), so contours need no holes; a cell
// centre that falls on a point or line charge takes the value a quarter cell away. Grids
// respect a cell limit: a larger slice is evaluated on a coarser grid, with a warning.
import { insideElectrode } from '../../../grammar/geometry';
import type { Diagnostic, Scene3d, Slice } from '../../../grammar/scene';
import { diagnostic } from '../../../grammar/diagnostics';
import { potentialAndField, type FieldState3d } from './bem3d/field';
import type { ProbeResult, SliceResult } from './result';

/** The in-plane axes (u, v) and the normal axis of a 3d slice plane. */
export function sliceAxes(plane: Slice['plane']): [number, number, number] {
  if (plane === 'xy') return [0, 1, 2];
  if (plane === 'xz') return [0, 2, 1];
  return [1, 2, 0]; // 'yz' (and 'rz', which 3d never sees)
}

export function evaluateProbes(scene: Scene3d, state: FieldState3d): ProbeResult[] {
  return scene.probes.map((p) => {
    const at: number[][] = [];
    if (p.kind === 'point') at.push([...p.at]);
    else {
      const n = Math.max(2, Math.floor(p.samples));
      for (let i = 0; i < n; i++) {
        const t = i / (n - 1);
        at.push([0, 1, 2].map((k) => p.from[k] + t * (p.to[k] - p.from[k])));
      }
    }
    return {
      name: p.name,
      points: at.map((q) => {
        const [phi, ex, ey, ez] = potentialAndField(state, q[0], q[1], q[2], 'precise');
        return { at: q, potential: phi, field: [ex, ey, ez], fieldMagnitude: Math.hypot(ex, ey, ez) };
      }),
    };
  });
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
): SliceResult[] | null {
  const out: SliceResult[] = [];
  for (const slice of scene.slices) {
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
    for (let j = 0; j < nv; j++) {
      if (isCancelled?.()) return null;
      for (let i = 0; i < nu; i++) {
        const idx = j * nu + i;
        p[iu] = u0 + (i + 0.5) * du;
        p[iv] = v0 + (j + 0.5) * dv;
        const k = insideElectrode(scene, p);
        inside[idx] = k;
        if (k >= 0) {
          potential[idx] = potentials[k];
          fieldU[idx] = fieldV[idx] = fieldMagnitude[idx] = NaN;
          continue;
        }
        let f = potentialAndField(state, p[0], p[1], p[2], 'grid');
        if (!f.every(Number.isFinite)) {
          // The cell centre sits on a point or line charge: take the value a quarter cell off it.
          const q = [...p];
          q[iu] += 0.25 * du;
          q[iv] += 0.25 * dv;
          f = potentialAndField(state, q[0], q[1], q[2], 'grid');
        }
        potential[idx] = f[0];
        fieldU[idx] = f[1 + iu];
        fieldV[idx] = f[1 + iv];
        fieldMagnitude[idx] = Math.hypot(f[1], f[2], f[3]);
      }
    }
    const groundLines: number[][] = [];
    for (const g of scene.groundPlanes) {
      const axis = { x: 0, y: 1, z: 2 }[g.axis];
      if (axis === iu) groundLines.push([g.at, v0, g.at, v0 + nv * dv]);
      else if (axis === iv) groundLines.push([u0, g.at, u0 + nu * du, g.at]);
    }
    out.push({
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
      outlines: [],
      groundLines,
    });
  }
  return out;
}
