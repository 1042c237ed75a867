// Pure geometry of scene shapes: signed distances, bounding boxes, surface parametrisations,
// which electrode holds a point, and the scene's size. Shared by the geometry checks, the
// mesher, the slice grids and the outlines. Points are (x, y, z) in 3d, (r, z) in axisymmetric,
// (x, y) in planar; everything in metres.
import type { Scene, Shape3d, ShapeAxisymmetric, ShapePlanar, Vec2, Vec3 } from './scene';

/** An axis-aligned bounding box; 3 components in 3d, 2 in the plane spaces. */
export interface Bounds {
  min: number[];
  max: number[];
}

// ---------------------------------------------------------------- small vector helpers

const dot3 = (a: Vec3, b: Vec3) => a[0] * b[0] + a[1] * b[1] + a[2] * b[2];
const sub3 = (a: Vec3, b: Vec3): Vec3 => [a[0] - b[0], a[1] - b[1], a[2] - b[2]];
const norm3 = (a: Vec3) => Math.hypot(a[0], a[1], a[2]);

export function unit3(a: Vec3): Vec3 {
  const l = norm3(a);
  return l > 0 ? [a[0] / l, a[1] / l, a[2] / l] : [0, 0, 1];
}

/** An orthonormal pair (e1, e2) with e1 × e2 = w, for a unit vector w. */
export function basisAround(w: Vec3): [Vec3, Vec3] {
  const ax = Math.abs(w[0]), ay = Math.abs(w[1]), az = Math.abs(w[2]);
  const t: Vec3 = ax <= ay && ax <= az ? [1, 0, 0] : ay <= az ? [0, 1, 0] : [0, 0, 1];
  const d = dot3(t, w);
  const e1 = unit3([t[0] - d * w[0], t[1] - d * w[1], t[2] - d * w[2]]);
  // e2 = w × e1, so that e1 × e2 = w.
  const e2: Vec3 = [w[1] * e1[2] - w[2] * e1[1], w[2] * e1[0] - w[0] * e1[2], w[0] * e1[1] - w[1] * e1[0]];
  return [e1, e2];
}

const AXIS_INDEX = { x: 0, y: 1, z: 2 } as const;

/** A plate's two in-plane axes in x, y, z order, and its normal axis. */
export function plateAxes(normal: 'x' | 'y' | 'z'): [number, number, number] {
  const n = AXIS_INDEX[normal];
  const inPlane = [0, 1, 2].filter((a) => a !== n);
  return [inPlane[0], inPlane[1], n];
}

// Signed distance to an axis-aligned box of half-sides h centred at the origin, for a point q
// (any dimension): |max(|q| − h, 0)| + min(max_k(|q_k| − h_k), 0) (common practice).
function boxDistance(q: number[], half: number[]): number {
  let outside = 0;
  let inside = -Infinity;
  for (let k = 0; k < q.length; k++) {
    const d = Math.abs(q[k]) - half[k];
    if (d > 0) outside += d * d;
    inside = Math.max(inside, d);
  }
  return Math.sqrt(outside) + Math.min(inside, 0);
}

// Distance from point p to segment ab in the plane.
function segmentDistance2(p: Vec2, a: Vec2, b: Vec2): number {
  const dx = b[0] - a[0], dy = b[1] - a[1];
  const l2 = dx * dx + dy * dy;
  const t = l2 > 0 ? Math.max(0, Math.min(1, ((p[0] - a[0]) * dx + (p[1] - a[1]) * dy) / l2)) : 0;
  return Math.hypot(p[0] - a[0] - t * dx, p[1] - a[1] - t * dy);
}

// Signed distance to a closed polygon: distance to its edges, negative inside (even–odd rule).
function polygonDistance(p: Vec2, pts: Vec2[]): number {
  let d = Infinity;
  let inside = false;
  for (let i = 0, j = pts.length - 1; i < pts.length; j = i++) {
    const a = pts[j], b = pts[i];
    d = Math.min(d, segmentDistance2(p, a, b));
    if (a[1] > p[1] !== b[1] > p[1] && p[0] < ((b[0] - a[0]) * (p[1] - a[1])) / (b[1] - a[1]) + a[0]) inside = !inside;
  }
  return inside ? -d : d;
}

function polylineDistance(p: Vec2, pts: Vec2[]): number {
  let d = Infinity;
  for (let i = 1; i < pts.length; i++) d = Math.min(d, segmentDistance2(p, pts[i - 1], pts[i]));
  return pts.length === 1 ? Math.hypot(p[0] - pts[0][0], p[1] - pts[0][1]) : d;
}

// ---------------------------------------------------------------- 3d shapes

/**
 * Signed distance from p to a 3d shape: negative inside a closed shape (hollow or not: this is the
 * solid's distance), unsigned for the thin disc and plate. Exact for every shape.
 */
export function signedDistance3d(shape: Shape3d, p: Vec3): number {
  switch (shape.kind) {
    case 'sphere':
      return norm3(sub3(p, shape.center)) - shape.radius;
    case 'box':
      return boxDistance(sub3(p, shape.center), shape.size.map((s) => s / 2));
    case 'cylinder': {
      // In the axis frame: t along the axis from the centre, ρ from the axis; a 2d box in (ρ, t).
      const axis = sub3(shape.to, shape.from);
      const length = norm3(axis);
      const w = unit3(axis);
      const q = sub3(p, shape.from);
      const t = dot3(q, w) - length / 2;
      const rho = norm3([q[0] - (t + length / 2) * w[0], q[1] - (t + length / 2) * w[1], q[2] - (t + length / 2) * w[2]]);
      return boxDistance([rho, t], [shape.radius, length / 2]);
    }
    case 'disc': {
      const w = unit3(shape.normal);
      const q = sub3(p, shape.center);
      const h = dot3(q, w);
      const rho = norm3([q[0] - h * w[0], q[1] - h * w[1], q[2] - h * w[2]]);
      return rho <= shape.radius ? Math.abs(h) : Math.hypot(rho - shape.radius, h);
    }
    case 'plate': {
      const [a, b, n] = plateAxes(shape.normal);
      const da = Math.max(Math.abs(p[a] - shape.center[a]) - shape.size[0] / 2, 0);
      const db = Math.max(Math.abs(p[b] - shape.center[b]) - shape.size[1] / 2, 0);
      return Math.hypot(da, db, p[n] - shape.center[n]);
    }
    case 'torus': {
      // The tube is a circle of radius `minor` about the ring of radius `major` (common practice).
      const w = unit3(shape.axis);
      const q = sub3(p, shape.center);
      const h = dot3(q, w);
      const rho = norm3([q[0] - h * w[0], q[1] - h * w[1], q[2] - h * w[2]]);
      return Math.hypot(rho - shape.major, h) - shape.minor;
    }
  }
}

/**
 * signedDistance3d for one shape, with the axis frame worked out once: the fast form for searches
 * that ask many points of the same shape.
 */
export function distanceFunction3d(shape: Shape3d): (p: number[]) => number {
  switch (shape.kind) {
    case 'cylinder': {
      const axis = sub3(shape.to, shape.from);
      const length = norm3(axis);
      const [wx, wy, wz] = unit3(axis);
      const [fx, fy, fz] = shape.from;
      const half = [shape.radius, length / 2];
      return (p) => {
        const qx = p[0] - fx, qy = p[1] - fy, qz = p[2] - fz;
        const along = qx * wx + qy * wy + qz * wz;
        const rho = Math.hypot(qx - along * wx, qy - along * wy, qz - along * wz);
        return boxDistance([rho, along - length / 2], half);
      };
    }
    case 'torus':
    case 'disc': {
      const [wx, wy, wz] = unit3(shape.kind === 'torus' ? shape.axis : shape.normal);
      const [cx, cy, cz] = shape.center;
      return (p) => {
        const qx = p[0] - cx, qy = p[1] - cy, qz = p[2] - cz;
        const h = qx * wx + qy * wy + qz * wz;
        const rho = Math.hypot(qx - h * wx, qy - h * wy, qz - h * wz);
        if (shape.kind === 'torus') return Math.hypot(rho - shape.major, h) - shape.minor;
        return rho <= shape.radius ? Math.abs(h) : Math.hypot(rho - shape.radius, h);
      };
    }
    default:
      return (p) => signedDistance3d(shape, p as Vec3);
  }
}

/** Whether a 3d shape is a thin sheet (disc, plate, or any hollow shell): it has no conducting interior. */
export function isThin3d(shape: Shape3d): boolean {
  return shape.kind === 'disc' || shape.kind === 'plate' || shape.hollow;
}

/**
 * Distance from p to the conducting material of a 3d shape: negative inside a solid conductor;
 * never negative for thin sheets and hollow shells (their interior holds no metal).
 */
export function conductorDistance3d(shape: Shape3d, p: Vec3): number {
  const d = signedDistance3d(shape, p);
  return isThin3d(shape) ? Math.abs(d) : d;
}

/** Exact axis-aligned bounding box of a 3d shape. */
export function bounds3d(shape: Shape3d): Bounds {
  const c = 'center' in shape ? shape.center : shape.from;
  // Extent of a circle of radius R about unit axis w along coordinate k: R·sqrt(1 − w_k²).
  const circle = (w: Vec3, r: number) => [0, 1, 2].map((k) => r * Math.sqrt(Math.max(0, 1 - w[k] * w[k])));
  switch (shape.kind) {
    case 'sphere':
      return { min: c.map((x) => x - shape.radius), max: c.map((x) => x + shape.radius) };
    case 'box':
      return { min: c.map((x, k) => x - shape.size[k] / 2), max: c.map((x, k) => x + shape.size[k] / 2) };
    case 'cylinder': {
      const e = circle(unit3(sub3(shape.to, shape.from)), shape.radius);
      return {
        min: [0, 1, 2].map((k) => Math.min(shape.from[k], shape.to[k]) - e[k]),
        max: [0, 1, 2].map((k) => Math.max(shape.from[k], shape.to[k]) + e[k]),
      };
    }
    case 'disc': {
      const e = circle(unit3(shape.normal), shape.radius);
      return { min: c.map((x, k) => x - e[k]), max: c.map((x, k) => x + e[k]) };
    }
    case 'plate': {
      const [a, b] = plateAxes(shape.normal);
      const e = [0, 0, 0];
      e[a] = shape.size[0] / 2;
      e[b] = shape.size[1] / 2;
      return { min: c.map((x, k) => x - e[k]), max: c.map((x, k) => x + e[k]) };
    }
    case 'torus': {
      const e = circle(unit3(shape.axis), shape.major);
      return { min: c.map((x, k) => x - e[k] - shape.minor), max: c.map((x, k) => x + e[k] + shape.minor) };
    }
  }
}

/** The point at radius rho and angle ph on the circle about base spanned by e1, e2. */
function circlePoint(base: Vec3, e1: Vec3, e2: Vec3, rho: number, ph: number): Vec3 {
  const c = rho * Math.cos(ph), s = rho * Math.sin(ph);
  return [base[0] + c * e1[0] + s * e2[0], base[1] + c * e1[1] + s * e2[1], base[2] + c * e1[2] + s * e2[2]];
}

/**
 * The surface of a 3d shape as patches over the unit square (s, t) ∈ [0, 1]²; the checks sample
 * and refine them. Closed shapes give their whole surface; thin sheets their one sheet.
 */
export function surfacePatches3d(shape: Shape3d): ((s: number, t: number) => Vec3)[] {
  const TAU = 2 * Math.PI;
  switch (shape.kind) {
    case 'sphere': {
      const { center: c, radius: a } = shape;
      return [
        (s, t) => {
          const th = Math.PI * t, ph = TAU * s;
          return [c[0] + a * Math.sin(th) * Math.cos(ph), c[1] + a * Math.sin(th) * Math.sin(ph), c[2] + a * Math.cos(th)];
        },
      ];
    }
    case 'box': {
      const patches: ((s: number, t: number) => Vec3)[] = [];
      const lo = shape.center.map((x, k) => x - shape.size[k] / 2);
      for (let a = 0; a < 3; a++) {
        const u = (a + 1) % 3, v = (a + 2) % 3;
        for (const side of [0, 1]) {
          patches.push((s, t) => {
            const p: Vec3 = [0, 0, 0];
            p[a] = lo[a] + side * shape.size[a];
            p[u] = lo[u] + s * shape.size[u];
            p[v] = lo[v] + t * shape.size[v];
            return p;
          });
        }
      }
      return patches;
    }
    case 'cylinder': {
      const w = unit3(sub3(shape.to, shape.from));
      const [e1, e2] = basisAround(w);
      const r = shape.radius;
      const lerp = (t: number): Vec3 => [
        shape.from[0] + t * (shape.to[0] - shape.from[0]),
        shape.from[1] + t * (shape.to[1] - shape.from[1]),
        shape.from[2] + t * (shape.to[2] - shape.from[2]),
      ];
      return [
        (s, t) => circlePoint(lerp(t), e1, e2, r, TAU * s),
        (s, t) => circlePoint(shape.from, e1, e2, r * t, TAU * s),
        (s, t) => circlePoint(shape.to, e1, e2, r * t, TAU * s),
      ];
    }
    case 'disc': {
      const [e1, e2] = basisAround(unit3(shape.normal));
      return [(s, t) => circlePoint(shape.center, e1, e2, shape.radius * t, TAU * s)];
    }
    case 'plate': {
      const [a, b] = plateAxes(shape.normal);
      return [
        (s, t) => {
          const p: Vec3 = [...shape.center];
          p[a] += (s - 0.5) * shape.size[0];
          p[b] += (t - 0.5) * shape.size[1];
          return p;
        },
      ];
    }
    case 'torus': {
      const w = unit3(shape.axis);
      const [e1, e2] = basisAround(w);
      const { center: c, major: R, minor: r } = shape;
      return [
        (s, t) => {
          const th = TAU * s, ph = TAU * t;
          const p = circlePoint(c, e1, e2, R + r * Math.cos(ph), th);
          const h = r * Math.sin(ph);
          return [p[0] + h * w[0], p[1] + h * w[1], p[2] + h * w[2]];
        },
      ];
    }
  }
}

// ---------------------------------------------------------------- axisymmetric shapes, in (r, z)

/**
 * Signed distance in the (r, z) half-plane to a shape's profile: negative inside a closed profile,
 * unsigned for the thin disc and open revolve profiles. r is taken as |r| (the view may mirror it).
 */
export function signedDistanceAxisymmetric(shape: ShapeAxisymmetric, p: Vec2): number {
  const q: Vec2 = [Math.abs(p[0]), p[1]];
  switch (shape.kind) {
    case 'sphere':
      return Math.hypot(q[0] - shape.center[0], q[1] - shape.center[1]) - shape.radius;
    case 'disc':
      return segmentDistance2(q, [0, shape.center[1]], [shape.radius, shape.center[1]]);
    case 'torus':
      return Math.hypot(q[0] - shape.major, q[1] - shape.center[1]) - shape.minor;
    case 'cylinder': {
      const z0 = Math.min(shape.from[1], shape.to[1]), z1 = Math.max(shape.from[1], shape.to[1]);
      return boxDistance([q[0], q[1] - (z0 + z1) / 2], [shape.radius, (z1 - z0) / 2]);
    }
    case 'revolve':
      // A closed profile is a polygon in the half-plane; its interior includes what lies against the axis.
      return shape.closed ? polygonDistance(q, shape.points) : polylineDistance(q, shape.points);
  }
}

export function isThinAxisymmetric(shape: ShapeAxisymmetric): boolean {
  if (shape.kind === 'disc') return true;
  if (shape.kind === 'revolve') return !shape.closed || shape.hollow;
  return shape.hollow;
}

/** Bounding box of a profile in (r, z), r ≥ 0. */
export function boundsAxisymmetric(shape: ShapeAxisymmetric): Bounds {
  switch (shape.kind) {
    case 'sphere':
      return {
        min: [Math.max(0, shape.center[0] - shape.radius), shape.center[1] - shape.radius],
        max: [shape.center[0] + shape.radius, shape.center[1] + shape.radius],
      };
    case 'disc':
      return { min: [0, shape.center[1]], max: [shape.radius, shape.center[1]] };
    case 'torus':
      return {
        min: [Math.max(0, shape.major - shape.minor), shape.center[1] - shape.minor],
        max: [shape.major + shape.minor, shape.center[1] + shape.minor],
      };
    case 'cylinder':
      return {
        min: [0, Math.min(shape.from[1], shape.to[1])],
        max: [shape.radius, Math.max(shape.from[1], shape.to[1])],
      };
    case 'revolve':
      return pointsBounds(shape.points);
  }
}

/** The profile's boundary as curves over s ∈ [0, 1] in (r, z). */
export function profileCurvesAxisymmetric(shape: ShapeAxisymmetric): ((s: number) => Vec2)[] {
  switch (shape.kind) {
    case 'sphere':
      return [(s) => [shape.center[0] + shape.radius * Math.sin(Math.PI * s), shape.center[1] + shape.radius * Math.cos(Math.PI * s)]];
    case 'disc':
      return [(s) => [s * shape.radius, shape.center[1]]];
    case 'torus':
      return [
        (s) => [shape.major + shape.minor * Math.cos(2 * Math.PI * s), shape.center[1] + shape.minor * Math.sin(2 * Math.PI * s)],
      ];
    case 'cylinder': {
      const z0 = Math.min(shape.from[1], shape.to[1]), z1 = Math.max(shape.from[1], shape.to[1]);
      return polylineCurves([[0, z0], [shape.radius, z0], [shape.radius, z1], [0, z1]], false);
    }
    case 'revolve':
      return polylineCurves(shape.points, shape.closed);
  }
}

// ---------------------------------------------------------------- planar shapes, in (x, y)

/** Signed distance in the plane: negative inside circle, rect and polygon; unsigned for a strip. */
export function signedDistancePlanar(shape: ShapePlanar, p: Vec2): number {
  switch (shape.kind) {
    case 'circle':
      return Math.hypot(p[0] - shape.center[0], p[1] - shape.center[1]) - shape.radius;
    case 'rect':
      return boxDistance([p[0] - shape.center[0], p[1] - shape.center[1]], [shape.size[0] / 2, shape.size[1] / 2]);
    case 'polygon':
      return polygonDistance(p, shape.points);
    case 'strip':
      return segmentDistance2(p, shape.from, shape.to);
  }
}

export function isThinPlanar(shape: ShapePlanar): boolean {
  return shape.kind === 'strip' || shape.hollow;
}

export function boundsPlanar(shape: ShapePlanar): Bounds {
  switch (shape.kind) {
    case 'circle':
      return { min: shape.center.map((x) => x - shape.radius), max: shape.center.map((x) => x + shape.radius) };
    case 'rect':
      return { min: shape.center.map((x, k) => x - shape.size[k] / 2), max: shape.center.map((x, k) => x + shape.size[k] / 2) };
    case 'polygon':
      return pointsBounds(shape.points);
    case 'strip':
      return pointsBounds([shape.from, shape.to]);
  }
}

/** The outline of a planar shape as curves over s ∈ [0, 1]. */
export function outlineCurvesPlanar(shape: ShapePlanar): ((s: number) => Vec2)[] {
  switch (shape.kind) {
    case 'circle':
      return [(s) => [shape.center[0] + shape.radius * Math.cos(2 * Math.PI * s), shape.center[1] + shape.radius * Math.sin(2 * Math.PI * s)]];
    case 'rect': {
      const [cx, cy] = shape.center, [hx, hy] = [shape.size[0] / 2, shape.size[1] / 2];
      return polylineCurves([[cx - hx, cy - hy], [cx + hx, cy - hy], [cx + hx, cy + hy], [cx - hx, cy + hy]], true);
    }
    case 'polygon':
      return polylineCurves(shape.points, true);
    case 'strip':
      return polylineCurves([shape.from, shape.to], false);
  }
}

function polylineCurves(points: Vec2[], closed: boolean): ((s: number) => Vec2)[] {
  const curves: ((s: number) => Vec2)[] = [];
  const n = closed ? points.length : points.length - 1;
  for (let i = 0; i < n; i++) {
    const a = points[i], b = points[(i + 1) % points.length];
    curves.push((s) => [a[0] + s * (b[0] - a[0]), a[1] + s * (b[1] - a[1])]);
  }
  return curves;
}

function pointsBounds(points: number[][]): Bounds {
  if (points.length === 0) return { min: [0, 0], max: [0, 0] };
  return {
    min: points[0].map((_, k) => Math.min(...points.map((p) => p[k]))),
    max: points[0].map((_, k) => Math.max(...points.map((p) => p[k]))),
  };
}

// ---------------------------------------------------------------- whole-scene questions

/** Signed distance from a point to electrode i's shape in the scene's own coordinates (see signedDistance3d). */
export function electrodeDistance(scene: Scene, i: number, p: number[]): number {
  switch (scene.space) {
    case '3d':
      return signedDistance3d(scene.electrodes[i].shape, p as Vec3);
    case 'axisymmetric':
      return signedDistanceAxisymmetric(scene.electrodes[i].shape, p as Vec2);
    case 'planar':
      return signedDistancePlanar(scene.electrodes[i].shape, p as Vec2);
  }
}

/** Whether electrode i has no conducting interior (thin sheet or hollow shell). */
export function electrodeIsThin(scene: Scene, i: number): boolean {
  switch (scene.space) {
    case '3d':
      return isThin3d(scene.electrodes[i].shape);
    case 'axisymmetric':
      return isThinAxisymmetric(scene.electrodes[i].shape);
    case 'planar':
      return isThinPlanar(scene.electrodes[i].shape);
  }
}

/** Distance to electrode i's conducting material: negative only inside a solid conductor. */
export function conductorDistance(scene: Scene, i: number, p: number[]): number {
  const d = electrodeDistance(scene, i, p);
  return electrodeIsThin(scene, i) ? Math.abs(d) : d;
}

/** conductorDistance for electrode i as a function, prepared once (fast for many points). */
export function conductorDistanceFunction(scene: Scene, i: number): (p: number[]) => number {
  const thin = electrodeIsThin(scene, i);
  if (scene.space === '3d') {
    const f = distanceFunction3d(scene.electrodes[i].shape);
    return thin ? (p) => Math.abs(f(p)) : f;
  }
  return (p) => conductorDistance(scene, i, p);
}

export function electrodeBounds(scene: Scene, i: number): Bounds {
  switch (scene.space) {
    case '3d':
      return bounds3d(scene.electrodes[i].shape);
    case 'axisymmetric':
      return boundsAxisymmetric(scene.electrodes[i].shape);
    case 'planar':
      return boundsPlanar(scene.electrodes[i].shape);
  }
}

interface SolidElectrode {
  index: number;
  bounds: Bounds;
  distance: (p: number[]) => number;
}

// Per-scene preparation for insideElectrode (a slice grid asks it for every cell). Scenes are
// immutable plain data, so a weak cache keyed by the scene object is safe.
const solidsOfScene = new WeakMap<Scene, SolidElectrode[]>();

function solidsOf(scene: Scene): SolidElectrode[] {
  let solids = solidsOfScene.get(scene);
  if (!solids) {
    solids = [];
    for (let i = 0; i < scene.electrodes.length; i++) {
      if (electrodeIsThin(scene, i)) continue;
      const bounds = electrodeBounds(scene, i);
      if (![...bounds.min, ...bounds.max].every(Number.isFinite)) continue;
      const distance = scene.space === '3d' ? distanceFunction3d(scene.electrodes[i].shape) : (p: number[]) => electrodeDistance(scene, i, p);
      solids.push({ index: i, bounds, distance });
    }
    solidsOfScene.set(scene, solids);
  }
  return solids;
}

/**
 * Index of the first electrode whose solid interior holds the point (within `tolerance` of its
 * surface counts as inside), or −1. Hollow shells and thin sheets have no interior.
 */
export function insideElectrode(scene: Scene, point: number[], tolerance = 0): number {
  const q = scene.space === 'axisymmetric' ? [Math.abs(point[0]), point[1]] : point;
  for (const solid of solidsOf(scene)) {
    const b = solid.bounds;
    let outside = false;
    for (let k = 0; k < q.length && !outside; k++) outside = q[k] < b.min[k] - tolerance || q[k] > b.max[k] + tolerance;
    if (outside) continue;
    if (solid.distance(point) <= tolerance) return solid.index;
  }
  return -1;
}

export function unionBounds(a: Bounds | null, b: Bounds): Bounds {
  if (!a) return { min: [...b.min], max: [...b.max] };
  return { min: a.min.map((x, k) => Math.min(x, b.min[k])), max: a.max.map((x, k) => Math.max(x, b.max[k])) };
}

function chargeBounds(scene: Scene): Bounds | null {
  let box: Bounds | null = null;
  for (const c of scene.charges) {
    if (c.kind === 'point') box = unionBounds(box, { min: [...c.at], max: [...c.at] });
    else if (c.kind === 'line') box = unionBounds(box, pointsBounds([c.from, c.to]));
    else if ('axis' in c) {
      const w = unit3(c.axis);
      const e = [0, 1, 2].map((k) => c.radius * Math.sqrt(Math.max(0, 1 - w[k] * w[k])));
      box = unionBounds(box, { min: c.center.map((x, k) => x - e[k]), max: c.center.map((x, k) => x + e[k]) });
    } else box = unionBounds(box, { min: [0, c.at[1]], max: [c.at[0], c.at[1]] });
  }
  return box;
}

/** Bounding box of every electrode and free charge, or null for an empty scene. Degenerate shapes are skipped. */
export function sceneBounds(scene: Scene): Bounds | null {
  let box: Bounds | null = null;
  for (let i = 0; i < scene.electrodes.length; i++) {
    const b = electrodeBounds(scene, i);
    if ([...b.min, ...b.max].every(Number.isFinite)) box = unionBounds(box, b);
  }
  const charges = chargeBounds(scene);
  return charges ? unionBounds(box, charges) : box;
}

/** Bounding box of the electrodes alone, or null when there are none. */
export function electrodesBounds(scene: Scene): Bounds | null {
  let box: Bounds | null = null;
  for (let i = 0; i < scene.electrodes.length; i++) {
    const b = electrodeBounds(scene, i);
    if ([...b.min, ...b.max].every(Number.isFinite)) box = unionBounds(box, b);
  }
  return box;
}

/**
 * The scene's characteristic length: half the largest side of the electrodes' bounding box (a lone
 * sphere's radius), else of the charges' box, else 1 m. Mesh presets and tolerances scale with it.
 */
export function characteristicLength(scene: Scene): number {
  const b = electrodesBounds(scene) ?? chargeBounds(scene);
  if (!b) return 1;
  const half = Math.max(...b.max.map((x, k) => x - b.min[k])) / 2;
  if (half > 0 && Number.isFinite(half)) return half;
  // A single point charge: take its distance from the origin, else 1 m.
  const far = Math.max(...b.max.map(Math.abs), ...b.min.map(Math.abs));
  return far > 0 && Number.isFinite(far) ? far : 1;
}
