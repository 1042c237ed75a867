// Electrode cross-sections in a slice, as polylines in the slice's (u, v) coordinates, and the
// ground-plane traces. Exact where the section is simple: a sphere gives a circle of radius
// √(a² − d²), a box a rectangle, a plate or disc across the plane a segment, one lying in it its rim.
// Cylinders and tori are traced as the zero level of their signed distance on a grid over the body's
// footprint in the plane (marching squares with linear interpolation, the grid one cell wider than the
// body all round so every loop closes); the traced points lie within a small fraction of a grid step
// of the true section. A grid value exactly 0 counts as outside (a consistent tie-break).
import { basisAround, bounds3d, distanceFunction3d, unit3 } from '../../../grammar/geometry';
import type { Scene, Scene3d, Shape3d, Slice, Vec2, Vec3 } from '../../../grammar/scene';
import type { Outline } from './result';

/** Grid steps across a traced body's footprint, along each slice axis. */
const TRACE_STEPS = 160;

/** Points around each cut circle (a sphere's section, axisymmetric and planar circles). */
const CIRCLE_POINTS = 128;

/** The slice's in-plane axes (u, v) and its normal axis, as coordinate indices. */
export function sliceAxes(plane: Slice['plane']): [number, number, number] {
  switch (plane) {
    case 'xy':
      return [0, 1, 2];
    case 'xz':
      return [0, 2, 1];
    case 'yz':
      return [1, 2, 0];
    case 'rz':
      return [0, 1, 2];
  }
}

function circlePath(cu: number, cv: number, r: number): number[] {
  const path: number[] = [];
  for (let k = 0; k < CIRCLE_POINTS; k++) {
    const t = (2 * Math.PI * k) / CIRCLE_POINTS;
    path.push(cu + r * Math.cos(t), cv + r * Math.sin(t));
  }
  return path;
}

/**
 * The zero level of f on a grid of nu × nv cells over [u0, u1] × [v0, v1], as polylines chained
 * through the grid edges they cross (marching squares; saddles split by the cell-centre value).
 */
export function traceZero(f: (u: number, v: number) => number, u0: number, u1: number, v0: number, v1: number, nu: number, nv: number): number[][] {
  const du = (u1 - u0) / nu, dv = (v1 - v0) / nv;
  const value = new Float64Array((nu + 1) * (nv + 1));
  for (let j = 0; j <= nv; j++) for (let i = 0; i <= nu; i++) value[j * (nu + 1) + i] = f(u0 + i * du, v0 + j * dv);
  const at = (i: number, j: number) => value[j * (nu + 1) + i];
  const point = new Map<number, Vec2>();
  const links = new Map<number, number[]>();
  // Edge keys: horizontal edge from node (i, j) to (i + 1, j) is 2·node, vertical edge to (i, j + 1) is 2·node + 1.
  const edge = (i: number, j: number, vertical: boolean): number => {
    const key = 2 * (j * (nu + 1) + i) + (vertical ? 1 : 0);
    if (!point.has(key)) {
      const a = at(i, j), b = vertical ? at(i, j + 1) : at(i + 1, j);
      const t = a / (a - b);
      point.set(key, vertical ? [u0 + i * du, v0 + (j + t) * dv] : [u0 + (i + t) * du, v0 + j * dv]);
    }
    return key;
  };
  const link = (p: number, q: number) => {
    for (const [a, b] of [[p, q], [q, p]]) {
      const list = links.get(a);
      if (list) list.push(b);
      else links.set(a, [b]);
    }
  };
  for (let j = 0; j < nv; j++) {
    for (let i = 0; i < nu; i++) {
      const inside = [at(i, j) < 0, at(i + 1, j) < 0, at(i + 1, j + 1) < 0, at(i, j + 1) < 0];
      // Crossed edges in order bottom, right, top, left.
      const crossed: number[] = [];
      if (inside[0] !== inside[1]) crossed.push(edge(i, j, false));
      if (inside[1] !== inside[2]) crossed.push(edge(i + 1, j, true));
      if (inside[3] !== inside[2]) crossed.push(edge(i, j + 1, false));
      if (inside[0] !== inside[3]) crossed.push(edge(i, j, true));
      if (crossed.length === 2) link(crossed[0], crossed[1]);
      else if (crossed.length === 4) {
        // Saddle: join so the centre's side stays connected.
        const centre = f(u0 + (i + 0.5) * du, v0 + (j + 0.5) * dv) < 0;
        if (centre === inside[0]) {
          link(crossed[0], crossed[1]);
          link(crossed[2], crossed[3]);
        } else {
          link(crossed[0], crossed[3]);
          link(crossed[1], crossed[2]);
        }
      }
    }
  }
  const used = new Set<number>();
  const paths: number[][] = [];
  for (const start of links.keys()) {
    if (used.has(start)) continue;
    const path: number[] = [...point.get(start)!];
    used.add(start);
    let cur = start;
    for (;;) {
      const next = links.get(cur)!.find((q) => !used.has(q));
      if (next === undefined) break;
      path.push(...point.get(next)!);
      used.add(next);
      cur = next;
    }
    if (path.length >= 6) paths.push(path);
  }
  return paths;
}

/** A disc crossing the plane x[n] = at: the chord where the two planes meet, or null. */
function discChord(shape: Extract<Shape3d, { kind: 'disc' }>, iu: number, iv: number, n: number, at: number): number[] | null {
  const w = unit3(shape.normal);
  const [e1, e2] = basisAround(w);
  // Points c + x·e1 + y·e2 of the disc's plane with x[n] = at satisfy a·x + b·y = d.
  const a = e1[n], b = e2[n], d = at - shape.center[n];
  const ab2 = a * a + b * b;
  if (ab2 < 1e-24) return null;
  const distance = Math.abs(d) / Math.sqrt(ab2);
  if (distance >= shape.radius) return null;
  const half = Math.sqrt(shape.radius ** 2 - distance ** 2) / Math.sqrt(ab2);
  const x0 = (a * d) / ab2, y0 = (b * d) / ab2;
  const ends = [-1, 1].map((sgn) => {
    const x = x0 - sgn * half * b, y = y0 + sgn * half * a;
    const p = [0, 1, 2].map((k) => shape.center[k] + x * e1[k] + y * e2[k]);
    return [p[iu], p[iv]];
  });
  return [...ends[0], ...ends[1]];
}

/** The section of a plate or disc lying in the slice plane itself: its rim. */
function sheetInPlane(shape: Shape3d, iu: number, iv: number, n: number, at: number, tolerance: number): number[] | null {
  if (shape.kind === 'plate') {
    const normal = { x: 0, y: 1, z: 2 }[shape.normal];
    if (normal !== n || Math.abs(shape.center[n] - at) > tolerance) return null;
    const span = [0, 0, 0];
    const inPlane = [0, 1, 2].filter((k) => k !== n);
    span[inPlane[0]] = shape.size[0];
    span[inPlane[1]] = shape.size[1];
    const [cu, cv] = [shape.center[iu], shape.center[iv]];
    const [hu, hv] = [span[iu] / 2, span[iv] / 2];
    return [cu - hu, cv - hv, cu + hu, cv - hv, cu + hu, cv + hv, cu - hu, cv + hv];
  }
  if (shape.kind === 'disc') {
    const l = Math.hypot(...shape.normal);
    const off = [0, 1, 2].filter((k) => k !== n).some((k) => Math.abs(shape.normal[k] / l) > 1e-12);
    if (off || Math.abs(shape.center[n] - at) > tolerance) return null;
    return circlePath(shape.center[iu], shape.center[iv], shape.radius);
  }
  return null;
}

/** One electrode's section by the plane x[n] = at. */
function sectionOf(shape: Shape3d, index: number, slice: Slice): Outline | null {
  const [iu, iv, n] = sliceAxes(slice.plane);
  const at = slice.at;
  const b = bounds3d(shape);
  const size = Math.max(...b.max.map((x, k) => x - b.min[k]));
  const tolerance = 1e-9 * size;
  if (b.min[n] > at + tolerance || b.max[n] < at - tolerance) return null;
  if (shape.kind === 'sphere') {
    const d = at - shape.center[n];
    const r = Math.sqrt(Math.max(0, shape.radius ** 2 - d * d));
    if (r <= 0) return null;
    return { electrode: index, paths: [circlePath(shape.center[iu], shape.center[iv], r)], closed: true };
  }
  const flat = sheetInPlane(shape, iu, iv, n, at, tolerance);
  if (flat) return { electrode: index, paths: [flat], closed: true };
  // Axis-aligned flat bodies are cut exactly: a box gives its rectangle, a plate across the plane a segment.
  if (shape.kind === 'box') {
    return { electrode: index, paths: [[b.min[iu], b.min[iv], b.max[iu], b.min[iv], b.max[iu], b.max[iv], b.min[iu], b.max[iv]]], closed: true };
  }
  if (shape.kind === 'plate') {
    if ({ x: 0, y: 1, z: 2 }[shape.normal] === n) return null;
    return { electrode: index, paths: [[b.min[iu], b.min[iv], b.max[iu], b.max[iv]]], closed: false };
  }
  if (shape.kind === 'disc') {
    const chord = discChord(shape, iu, iv, n, at);
    return chord ? { electrode: index, paths: [chord], closed: false } : null;
  }
  // Cylinder or torus: trace the zero level of the signed distance over the footprint, one step wider all round.
  const f = distanceFunction3d(shape);
  const p: number[] = [0, 0, 0];
  p[n] = at;
  const steps = [iu, iv].map((k) => Math.max(b.max[k] - b.min[k], tolerance) / (TRACE_STEPS - 2));
  const paths = traceZero(
    (u, v) => {
      p[iu] = u;
      p[iv] = v;
      return f(p);
    },
    b.min[iu] - steps[0], b.max[iu] + steps[0], b.min[iv] - steps[1], b.max[iv] + steps[1], TRACE_STEPS, TRACE_STEPS,
  );
  return paths.length > 0 ? { electrode: index, paths, closed: true } : null;
}

/** Each electrode's cross-section by a 3d slice's plane, in the slice's (u, v) coordinates. */
export function sliceOutlines(scene: Scene3d, slice: Slice): Outline[] {
  const out: Outline[] = [];
  scene.electrodes.forEach((e, i) => {
    try {
      const o = sectionOf(e.shape, i, slice);
      if (o) out.push(o);
    } catch {
      // A degenerate shape (reported by the geometry checks) has no outline.
    }
  });
  return out;
}

/** Ground-plane traces [u0, v0, u1, v1] across the slice window (3d and planar). */
export function groundLines(scene: Scene, slice: Slice): number[][] {
  const [iu, iv] = sliceAxes(slice.plane);
  const [u0, u1] = [Math.min(slice.from[0], slice.to[0]), Math.max(slice.from[0], slice.to[0])];
  const [v0, v1] = [Math.min(slice.from[1], slice.to[1]), Math.max(slice.from[1], slice.to[1])];
  const lines: number[][] = [];
  if (scene.space === 'axisymmetric') return lines;
  for (const g of scene.groundPlanes) {
    const axis = { x: 0, y: 1, z: 2 }[g.axis];
    if (axis === iu && g.at >= u0 && g.at <= u1) lines.push([g.at, v0, g.at, v1]);
    else if (axis === iv && g.at >= v0 && g.at <= v1) lines.push([u0, g.at, u1, g.at]);
  }
  return lines;
}

/**
 * Outlines in the plane spaces: planar shapes as drawn; axisymmetric profiles as the meridian
 * section of the body of revolution (the profile and its mirror image at negative r).
 */
export function planeOutlines(scene: Exclude<Scene, Scene3d>): Outline[] {
  const out: Outline[] = [];
  const flat = (pts: Vec2[]) => pts.flatMap((p) => [p[0], p[1]]);
  const mirror = (pts: Vec2[]): Vec2[] => pts.map((p) => [-p[0], p[1]]);
  scene.electrodes.forEach((e, i) => {
    const s = e.shape;
    switch (s.kind) {
      case 'circle':
        out.push({ electrode: i, paths: [circlePath(s.center[0], s.center[1], s.radius)], closed: true });
        break;
      case 'rect': {
        const [cx, cy] = s.center, [hx, hy] = [s.size[0] / 2, s.size[1] / 2];
        out.push({ electrode: i, paths: [[cx - hx, cy - hy, cx + hx, cy - hy, cx + hx, cy + hy, cx - hx, cy + hy]], closed: true });
        break;
      }
      case 'polygon':
        out.push({ electrode: i, paths: [flat(s.points)], closed: true });
        break;
      case 'strip':
        out.push({ electrode: i, paths: [flat([s.from, s.to])], closed: false });
        break;
      case 'sphere':
        out.push({ electrode: i, paths: [circlePath(0, s.center[1], s.radius)], closed: true });
        break;
      case 'disc':
        out.push({ electrode: i, paths: [[-s.radius, s.center[1], s.radius, s.center[1]]], closed: false });
        break;
      case 'torus':
        out.push({ electrode: i, paths: [circlePath(s.major, s.center[1], s.minor), circlePath(-s.major, s.center[1], s.minor)], closed: true });
        break;
      case 'cylinder': {
        const z0 = Math.min(s.from[1], s.to[1]), z1 = Math.max(s.from[1], s.to[1]);
        out.push({ electrode: i, paths: [[-s.radius, z0, s.radius, z0, s.radius, z1, -s.radius, z1]], closed: true });
        break;
      }
      case 'revolve':
        out.push({ electrode: i, paths: [flat(s.points), flat(mirror(s.points))], closed: s.closed });
        break;
    }
  });
  return out;
}

/** Convenience for tests: the (u, v) of a 3d point in a slice. */
export function toSlice(p: Vec3, plane: Slice['plane']): Vec2 {
  const [iu, iv] = sliceAxes(plane);
  return [p[iu], p[iv]];
}
