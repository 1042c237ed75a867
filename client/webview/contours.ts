// Filled bands and isolines from a cell-centred slice grid, with d3-contour.
// d3-contour puts grid value i at coordinate i + 0.5 and closes rings along the grid border at 0 and n;
// grid coordinate c maps to u0 + c·du, which puts value i at its cell centre u0 + (i + 0.5)·du.
import { contours } from 'd3-contour';
import type { Frame } from './geometry';
import { toPx } from './geometry';
import type { Outline, SliceResult } from '../../server/src/engine/result';

export type Ring = [number, number][];

export interface Band {
  /** The region where the value is at or above `level`, as SVG path data in pixels. */
  path: string;
  level: number;
}

export interface Isoline {
  level: number;
  /** Open or closed polylines in pixels, border segments removed. */
  lines: [number, number][][];
}

function gridToPx(slice: SliceResult, frame: Frame, c: [number, number]): [number, number] {
  return toPx(frame, slice.u0 + c[0] * slice.du, slice.v0 + c[1] * slice.dv);
}

const fmt = (x: number): string => (Math.round(x * 100) / 100).toString();

/** SVG path data for d3-contour MultiPolygon coordinates (rings in grid coordinates). */
function pathOf(slice: SliceResult, frame: Frame, polygons: Ring[][]): string {
  const parts: string[] = [];
  for (const polygon of polygons) {
    for (const ring of polygon) {
      ring.forEach((c, k) => {
        const [x, y] = gridToPx(slice, frame, c);
        parts.push(`${k === 0 ? 'M' : 'L'}${fmt(x)},${fmt(y)}`);
      });
      parts.push('Z');
    }
  }
  return parts.join('');
}

/** True for a ring segment that runs along the grid border (d3-contour's closing edge, not an isoline). */
function onBorder(a: [number, number], b: [number, number], nu: number, nv: number): boolean {
  return (
    (a[0] === b[0] && (a[0] === 0 || a[0] === nu)) || (a[1] === b[1] && (a[1] === 0 || a[1] === nv))
  );
}

/** Bands (value ≥ level) and isolines for each level, on `values` (NaN = hole). */
export function contourGrid(
  slice: SliceResult,
  frame: Frame,
  values: ArrayLike<number>,
  levels: number[],
): { bands: Band[]; isolines: Isoline[] } {
  const generator = contours().size([slice.nu, slice.nv]).thresholds(levels);
  const bands: Band[] = [];
  const isolines: Isoline[] = [];
  for (const level of levels) {
    const mp = generator.contour(values as number[], level);
    const polygons = mp.coordinates as unknown as Ring[][];
    bands.push({ level, path: pathOf(slice, frame, polygons) });
    const lines: [number, number][][] = [];
    for (const polygon of polygons) {
      for (const ring of polygon) {
        let current: [number, number][] = [];
        for (let k = 0; k < ring.length - 1; k++) {
          if (onBorder(ring[k], ring[k + 1], slice.nu, slice.nv)) {
            if (current.length > 1) lines.push(current);
            current = [];
            continue;
          }
          if (current.length === 0) current.push(gridToPx(slice, frame, ring[k]));
          current.push(gridToPx(slice, frame, ring[k + 1]));
        }
        if (current.length > 1) lines.push(current);
      }
    }
    isolines.push({ level, lines });
  }
  return { bands, isolines };
}

export function polylinePath(line: [number, number][]): string {
  return line.map(([x, y], k) => `${k === 0 ? 'M' : 'L'}${fmt(x)},${fmt(y)}`).join('');
}

/** Length of a polyline in pixels. */
export function polylineLength(line: [number, number][]): number {
  let s = 0;
  for (let k = 1; k < line.length; k++) s += Math.hypot(line[k][0] - line[k - 1][0], line[k][1] - line[k - 1][1]);
  return s;
}

/** The point at arc-length fraction t of a polyline, with the direction of the segment there. */
export function pointAlong(line: [number, number][], t: number): { x: number; y: number; angle: number } {
  const total = polylineLength(line);
  let target = total * t;
  for (let k = 1; k < line.length; k++) {
    const [x0, y0] = line[k - 1];
    const [x1, y1] = line[k];
    const seg = Math.hypot(x1 - x0, y1 - y0);
    if (target <= seg || k === line.length - 1) {
      const f = seg > 0 ? Math.min(1, target / seg) : 0;
      return { x: x0 + (x1 - x0) * f, y: y0 + (y1 - y0) * f, angle: Math.atan2(y1 - y0, x1 - x0) };
    }
    target -= seg;
  }
  return { x: line[0][0], y: line[0][1], angle: 0 };
}

/**
 * Cross-sections traced from the slice's `inside` mask (the 0.5 isoline of each electrode's indicator),
 * for electrodes that the result gives no outline for in this slice.
 */
export function outlinesFromMask(slice: SliceResult): Outline[] {
  const have = new Set(slice.outlines.map((o) => o.electrode));
  const found = new Set<number>();
  for (let i = 0; i < slice.inside.length; i++) if (slice.inside[i] >= 0 && !have.has(slice.inside[i])) found.add(slice.inside[i]);
  const generator = contours().size([slice.nu, slice.nv]);
  const out: Outline[] = [];
  for (const k of found) {
    const indicator = new Float64Array(slice.inside.length);
    for (let i = 0; i < indicator.length; i++) indicator[i] = slice.inside[i] === k ? 1 : 0;
    const polygons = generator.contour(indicator as unknown as number[], 0.5).coordinates as unknown as Ring[][];
    const paths: number[][] = [];
    for (const polygon of polygons) {
      for (const ring of polygon) paths.push(ring.flatMap(([x, y]) => [slice.u0 + x * slice.du, slice.v0 + y * slice.dv]));
    }
    if (paths.length > 0) out.push({ electrode: k, paths, closed: true });
  }
  return out;
}
