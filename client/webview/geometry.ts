// Slice geometry: from the slice's (u, v) plane to picture pixels and back, from scene points to the
// slice, and sampling of the slice grids.
import type { Point, SliceResult } from '../../server/src/engine/result';

/** Where the plot sits in the SVG, in pixels; v grows upward in the scene and downward on screen. */
export interface Frame {
  /** Plot area left, top, width, height (pixels). */
  left: number;
  top: number;
  width: number;
  height: number;
  u0: number;
  v0: number;
  u1: number;
  v1: number;
}

export function makeFrame(slice: SliceResult, maxWidth = 760, maxHeight = 560, left = 64, top = 16): Frame {
  const su = slice.nu * slice.du;
  const sv = slice.nv * slice.dv;
  let scale = Math.min(maxWidth / su, maxHeight / sv);
  // A tall, narrow slice (an r–z half-plane) may grow taller so that it is not too thin to read.
  if (su * scale < 340) scale = Math.min(maxWidth / su, (maxHeight * 1.35) / sv);
  return {
    left,
    top,
    width: su * scale,
    height: sv * scale,
    u0: slice.u0,
    v0: slice.v0,
    u1: slice.u0 + su,
    v1: slice.v0 + sv,
  };
}

export const toPx = (f: Frame, u: number, v: number): [number, number] => [
  f.left + ((u - f.u0) / (f.u1 - f.u0)) * f.width,
  f.top + ((f.v1 - v) / (f.v1 - f.v0)) * f.height,
];

export const fromPx = (f: Frame, x: number, y: number): [number, number] => [
  f.u0 + ((x - f.left) / f.width) * (f.u1 - f.u0),
  f.v1 - ((y - f.top) / f.height) * (f.v1 - f.v0),
];

/** Names of the slice's in-plane axes, e.g. ['x', 'z'] for an xz slice. */
export function axisNames(slice: SliceResult): [string, string] {
  return [slice.plane[0], slice.plane[1]];
}

/**
 * A scene point in the slice's (u, v), with its distance from the slice plane.
 * 3d points are (x, y, z); axisymmetric (r, z) and planar (x, y) points lie in their plane.
 */
export function projectToSlice(slice: SliceResult, p: Point): { u: number; v: number; off: number } {
  if (p.length < 3) return { u: p[0], v: p[1], off: 0 };
  const [x, y, z] = p;
  if (slice.plane === 'xy') return { u: x, v: y, off: z - slice.at };
  if (slice.plane === 'xz') return { u: x, v: z, off: y - slice.at };
  if (slice.plane === 'yz') return { u: y, v: z, off: x - slice.at };
  return { u: Math.hypot(x, y), v: z, off: 0 };
}

export const insideFrame = (f: Frame, u: number, v: number): boolean =>
  u >= f.u0 && u <= f.u1 && v >= f.v0 && v <= f.v1;

/**
 * Bilinear interpolation of a cell-centred grid at (u, v); NaN when any of the four cells is NaN
 * or the point is outside the span of cell centres (clamped to the edge cells there).
 */
export function sampleBilinear(slice: SliceResult, values: ArrayLike<number>, u: number, v: number): number {
  const { nu, nv } = slice;
  const fx = Math.max(0, Math.min(nu - 1, (u - slice.u0) / slice.du - 0.5));
  const fy = Math.max(0, Math.min(nv - 1, (v - slice.v0) / slice.dv - 0.5));
  const i = Math.min(nu - 2, Math.floor(fx));
  const j = Math.min(nv - 2, Math.floor(fy));
  if (nu < 2 || nv < 2) return values[0];
  const tx = fx - i;
  const ty = fy - j;
  const a = values[j * nu + i];
  const b = values[j * nu + i + 1];
  const c = values[(j + 1) * nu + i];
  const d = values[(j + 1) * nu + i + 1];
  return (a * (1 - tx) + b * tx) * (1 - ty) + (c * (1 - tx) + d * tx) * ty;
}

/**
 * Like sampleBilinear, but cells holding NaN (conductor interiors) are left out and the remaining
 * weights renormalised; NaN only when all four are NaN. Lets field lines start right at a surface.
 */
export function sampleBilinearFinite(slice: SliceResult, values: ArrayLike<number>, u: number, v: number): number {
  const { nu, nv } = slice;
  if (nu < 2 || nv < 2) return values[0];
  const fx = Math.max(0, Math.min(nu - 1, (u - slice.u0) / slice.du - 0.5));
  const fy = Math.max(0, Math.min(nv - 1, (v - slice.v0) / slice.dv - 0.5));
  const i = Math.min(nu - 2, Math.floor(fx));
  const j = Math.min(nv - 2, Math.floor(fy));
  const tx = fx - i;
  const ty = fy - j;
  const cells = [j * nu + i, j * nu + i + 1, (j + 1) * nu + i, (j + 1) * nu + i + 1];
  const weights = [(1 - tx) * (1 - ty), tx * (1 - ty), (1 - tx) * ty, tx * ty];
  let sum = 0;
  let wsum = 0;
  for (let k = 0; k < 4; k++) {
    const x = values[cells[k]];
    if (Number.isFinite(x)) {
      sum += weights[k] * x;
      wsum += weights[k];
    }
  }
  return wsum > 1e-6 ? sum / wsum : NaN;
}

/** Index of the cell holding (u, v), or -1 outside the grid. */
export function cellAt(slice: SliceResult, u: number, v: number): number {
  const i = Math.floor((u - slice.u0) / slice.du);
  const j = Math.floor((v - slice.v0) / slice.dv);
  if (i < 0 || j < 0 || i >= slice.nu || j >= slice.nv) return -1;
  return j * slice.nu + i;
}

/** "xz at y = 0 mm"-style description of a slice. */
export function describeSlice(slice: SliceResult, formatLength: (m: number) => string): string {
  if (slice.plane === 'rz') return 'r–z half-plane';
  const normal = 'xyz'.replace(slice.plane[0], '').replace(slice.plane[1], '');
  return `${slice.plane} at ${normal} = ${formatLength(slice.at)}`;
}
