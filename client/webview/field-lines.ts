// Field lines on a slice: seeded on each electrode's outline in proportion to its charge, traced by
// fourth-order Runge–Kutta on the unit field direction E/|E| (methods.md, "Contours and field lines").
// On a slice of a 3d scene only the in-plane components are known, so the lines follow the in-plane
// field; the picture says so.
import type { ElectrodeResult, SliceResult } from '../../server/src/engine/result';
import { cellAt, sampleBilinearFinite } from './geometry';

export interface FieldLine {
  /** Points in (u, v), in the direction of the field (from + to −). */
  points: [number, number][];
  electrode: number;
}

export interface FieldLineOptions {
  /** Total number of lines over all electrodes. */
  total: number;
}

/** Unit in-plane field direction at (u, v), or null where the field is unknown or vanishes. */
function direction(slice: SliceResult, u: number, v: number, eps: number): [number, number] | null {
  const eu = sampleBilinearFinite(slice, slice.fieldU, u, v);
  const ev = sampleBilinearFinite(slice, slice.fieldV, u, v);
  const m = Math.hypot(eu, ev);
  if (!Number.isFinite(m) || m <= eps) return null;
  return [eu / m, ev / m];
}

/** Points spaced evenly by arc length along the outline's polylines, with outward-ish normals. */
function seedsOnOutline(paths: number[][], closed: boolean, count: number): { p: [number, number]; n: [number, number] }[] {
  const segs: { a: [number, number]; b: [number, number]; len: number }[] = [];
  for (const flat of paths) {
    const m = flat.length / 2;
    const last = closed ? m : m - 1;
    for (let k = 0; k < last; k++) {
      const a: [number, number] = [flat[2 * k], flat[2 * k + 1]];
      const b: [number, number] = [flat[(2 * (k + 1)) % flat.length], flat[(2 * (k + 1) + 1) % flat.length]];
      const len = Math.hypot(b[0] - a[0], b[1] - a[1]);
      if (len > 0) segs.push({ a, b, len });
    }
  }
  const total = segs.reduce((s, g) => s + g.len, 0);
  if (total === 0 || count <= 0) return [];
  const out: { p: [number, number]; n: [number, number] }[] = [];
  let k = 0;
  let start = 0;
  for (let i = 0; i < count; i++) {
    const target = ((i + 0.5) / count) * total;
    while (k < segs.length - 1 && start + segs[k].len < target) start += segs[k++].len;
    const g = segs[k];
    const f = (target - start) / g.len;
    const tu = (g.b[0] - g.a[0]) / g.len;
    const tv = (g.b[1] - g.a[1]) / g.len;
    out.push({ p: [g.a[0] + (g.b[0] - g.a[0]) * f, g.a[1] + (g.b[1] - g.a[1]) * f], n: [tv, -tu] });
  }
  return out;
}

/** Crossing of segment p→q with any ground line. */
function crossesGround(slice: SliceResult, p: [number, number], q: [number, number]): boolean {
  for (const [a0, a1, b0, b1] of slice.groundLines) {
    const d = (x: number, y: number) => (b0 - a0) * (y - a1) - (b1 - a1) * (x - a0);
    if (d(p[0], p[1]) * d(q[0], q[1]) < 0) return true;
  }
  return false;
}

/** Traces one line from `start` along sign·E/|E| until it leaves the grid, meets a conductor or the ground, or stalls. */
export function traceLine(
  slice: SliceResult,
  start: [number, number],
  sign: 1 | -1,
  origin: number,
  eps = 0,
): [number, number][] {
  const h = 0.5 * Math.min(slice.du, slice.dv);
  const maxSteps = 6 * (slice.nu + slice.nv);
  const f = (u: number, v: number): [number, number] | null => {
    const d = direction(slice, u, v, eps);
    return d && [sign * d[0], sign * d[1]];
  };
  const points: [number, number][] = [start];
  let [u, v] = start;
  for (let step = 0; step < maxSteps; step++) {
    // Classic RK4 on dx/ds = F(x), F = ±E/|E| (arc-length parametrised field line).
    const k1 = f(u, v);
    if (!k1) break;
    const k2 = f(u + 0.5 * h * k1[0], v + 0.5 * h * k1[1]);
    if (!k2) break;
    const k3 = f(u + 0.5 * h * k2[0], v + 0.5 * h * k2[1]);
    if (!k3) break;
    const k4 = f(u + h * k3[0], v + h * k3[1]);
    if (!k4) break;
    const nu = u + (h / 6) * (k1[0] + 2 * k2[0] + 2 * k3[0] + k4[0]);
    const nv = v + (h / 6) * (k1[1] + 2 * k2[1] + 2 * k3[1] + k4[1]);
    const cell = cellAt(slice, nu, nv);
    if (cell < 0) break;
    if (crossesGround(slice, [u, v], [nu, nv])) {
      points.push([nu, nv]);
      break;
    }
    points.push([nu, nv]);
    u = nu;
    v = nv;
    const inside = slice.inside[cell];
    if (inside >= 0 && (inside !== origin || step > 4)) break;
  }
  return points;
}

/**
 * Field lines for the slice: each electrode with an outline here gets a share of `total` lines in
 * proportion to |charge| (the flux leaving a conductor is its charge over ε, Gauss's law), started just
 * off its outline and traced along E for a positive charge, against E for a negative one.
 */
export function fieldLines(slice: SliceResult, electrodes: ElectrodeResult[], options: FieldLineOptions): FieldLine[] {
  const present = slice.outlines.filter((o) => electrodes[o.electrode] && o.paths.some((p) => p.length >= 4));
  const sumQ = present.reduce((s, o) => s + Math.abs(electrodes[o.electrode].charge), 0);
  if (!(sumQ > 0)) return [];
  const offset = 0.75 * Math.min(slice.du, slice.dv);
  let maxField = 0;
  for (let i = 0; i < slice.fieldMagnitude.length; i++) {
    const m = slice.fieldMagnitude[i];
    if (Number.isFinite(m) && m > maxField) maxField = m;
  }
  const eps = maxField * 1e-9;
  const out: FieldLine[] = [];
  for (const o of present) {
    const q = electrodes[o.electrode].charge;
    const count = Math.round((options.total * Math.abs(q)) / sumQ);
    const seeds = seedsOnOutline(o.paths, o.closed, count);
    seeds.forEach(({ p, n }, k) => {
      // A thin (open) outline sends lines from both faces in turn; a closed one from its outside.
      const side = !o.closed && k % 2 === 1 ? -1 : 1;
      let start: [number, number] = [p[0] + side * n[0] * offset, p[1] + side * n[1] * offset];
      const cell = cellAt(slice, start[0], start[1]);
      if (cell >= 0 && slice.inside[cell] === o.electrode) start = [p[0] - n[0] * offset, p[1] - n[1] * offset];
      const line = traceLine(slice, start, q >= 0 ? 1 : -1, o.electrode, eps);
      if (line.length < 3) return;
      const points = q >= 0 ? [p, ...line] : [...line.reverse(), p];
      out.push({ points: points as [number, number][], electrode: o.electrode });
    });
  }
  return out;
}
