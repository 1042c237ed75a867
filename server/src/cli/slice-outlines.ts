// Outlines and ground traces for the SVG when a solve left a slice's `outlines` or `groundLines`
// empty: solid conductors are traced from the slice's `inside` grid (d3-contour at 0.5 on the
// indicator of each electrode), thin sheets (plates, discs) and ground planes are cut from the
// scene's geometry. The solver's own outlines, when present, are always used instead.
import { contours } from 'd3-contour';
import type { Scene, Vec3 } from '../../../grammar/scene';
import type { Outline, Result, SliceResult } from '../engine/result';

const AXIS = { x: 0, y: 1, z: 2 } as const;

/** Scene axes (0, 1, 2) of a 3d slice's u, v and its normal w; null for planar and axisymmetric slices. */
function sliceAxes(plane: SliceResult['plane']): [number, number, number] | null {
  if (plane === 'xy') return [0, 1, 2];
  if (plane === 'xz') return [0, 2, 1];
  if (plane === 'yz') return [1, 2, 0];
  return null;
}

/** The result with fallback outlines and ground traces filled in where the solve gave none. */
export function completeSlices(scene: Scene, result: Result): Result {
  return {
    ...result,
    slices: result.slices.map((s) => ({
      ...s,
      outlines: s.outlines && s.outlines.length > 0 ? s.outlines : sceneOutlines(scene, s),
      groundLines: s.groundLines && s.groundLines.length > 0 ? s.groundLines : groundTraces(scene, s),
    })),
  };
}

/**
 * Every electrode's cut by the slice: exact curves where the shape and the slice are aligned (spheres,
 * boxes, axis-aligned cylinders and tori, plates, discs), the traced `inside` grid for the rest.
 * Hollow shells come back open (`closed: false`, drawn as a stroke) so that what is inside them shows.
 */
export function sceneOutlines(scene: Scene, s: SliceResult): Outline[] {
  const exact = solidOutlines(scene, s);
  const thin = thinOutlines(scene, s);
  const covered = new Set<number>([...exact.handled, ...thin.map((o) => o.electrode)]);
  const traced = maskOutlines(s).filter((o) => !covered.has(o.electrode));
  return [...exact.outlines, ...traced, ...thin];
}

const SEGMENTS = 96;

function circle(cu: number, cv: number, r: number): number[] {
  const out: number[] = [];
  for (let i = 0; i < SEGMENTS; i++) out.push(cu + r * Math.cos((2 * Math.PI * i) / SEGMENTS), cv + r * Math.sin((2 * Math.PI * i) / SEGMENTS));
  return out;
}
function rect(u0: number, v0: number, u1: number, v1: number): number[] {
  return [u0, v0, u1, v0, u1, v1, u0, v1];
}
/** The axis (0, 1, 2) a direction points along, or -1 when it is oblique. */
function alignedAxis(d: readonly number[]): number {
  const len = Math.hypot(d[0], d[1], d[2]);
  if (!(len > 0)) return -1;
  for (let a = 0; a < 3; a++) if (Math.abs(Math.abs(d[a]) / len - 1) < 1e-9) return a;
  return -1;
}

/** Exact cuts of closed solids; `handled` lists electrodes decided here (cut or missed), the rest are traced. */
function solidOutlines(scene: Scene, s: SliceResult): { outlines: Outline[]; handled: number[] } {
  const axes = sliceAxes(s.plane);
  const outlines: Outline[] = [];
  const handled: number[] = [];
  if (scene.space !== '3d' || !axes) return { outlines, handled };
  const [iu, iv, iw] = axes;
  const at = s.at;
  scene.electrodes.forEach((e, k) => {
    const sh = e.shape;
    let paths: number[][] | null = null; // null: not handled here
    if (sh.kind === 'sphere') {
      const d = at - sh.center[iw];
      paths = Math.abs(d) < sh.radius ? [circle(sh.center[iu], sh.center[iv], Math.sqrt(sh.radius ** 2 - d * d))] : [];
    } else if (sh.kind === 'box') {
      const c = sh.center;
      const h = sh.size.map((x) => x / 2);
      paths = Math.abs(at - c[iw]) <= h[iw] ? [rect(c[iu] - h[iu], c[iv] - h[iv], c[iu] + h[iu], c[iv] + h[iv])] : [];
    } else if (sh.kind === 'cylinder') {
      const axis = alignedAxis([sh.to[0] - sh.from[0], sh.to[1] - sh.from[1], sh.to[2] - sh.from[2]]);
      const a = sh.from;
      const b = sh.to;
      if (axis === iw) {
        const inside = at >= Math.min(a[iw], b[iw]) && at <= Math.max(a[iw], b[iw]);
        paths = inside ? [circle(a[iu], a[iv], sh.radius)] : [];
      } else if (axis >= 0) {
        const d = Math.abs(at - a[iw]);
        if (d >= sh.radius) paths = [];
        else {
          const h = Math.sqrt(sh.radius ** 2 - d * d);
          const other = axis === iu ? iv : iu;
          const [lo, hi] = [Math.min(a[axis], b[axis]), Math.max(a[axis], b[axis])];
          paths = [axis === iu ? rect(lo, a[other] - h, hi, a[other] + h) : rect(a[other] - h, lo, a[other] + h, hi)];
        }
      }
    } else if (sh.kind === 'torus') {
      const axis = alignedAxis(sh.axis);
      const c = sh.center;
      const d = at - c[iw];
      if (axis === iw) {
        // A cut across the axis: an annulus between radii major ± √(minor² − d²).
        paths = Math.abs(d) < sh.minor ? [circle(c[iu], c[iv], sh.major + Math.sqrt(sh.minor ** 2 - d * d)), circle(c[iu], c[iv], sh.major - Math.sqrt(sh.minor ** 2 - d * d))] : [];
      } else if (axis >= 0 && Math.abs(d) < 1e-9 * sh.major) {
        // A cut through the centre along the axis: the tube's two cross-sections.
        const other = axis === iu ? iv : iu;
        const offset = (sign: number) => (other === iu ? [c[iu] + sign * sh.major, c[iv]] : [c[iu], c[iv] + sign * sh.major]);
        paths = [1, -1].map((sign) => circle(offset(sign)[0], offset(sign)[1], sh.minor));
      } else if (axis >= 0 && Math.abs(d) >= sh.major + sh.minor) paths = [];
    }
    if (paths === null) return;
    handled.push(k);
    if (paths.length === 0) return;
    const hollow = 'hollow' in sh && sh.hollow;
    // A hollow shell is drawn as its wall only: repeat the first point so the stroke closes.
    outlines.push(hollow ? { electrode: k, paths: paths.map((p) => [...p, p[0], p[1]]), closed: false } : { electrode: k, paths, closed: true });
  });
  return { outlines, handled };
}

/** Closed outlines of each electrode's interior cells, in world (u, v) coordinates. */
export function maskOutlines(s: SliceResult): Outline[] {
  if (!s.inside || s.inside.length !== s.nu * s.nv || s.nu < 2 || s.nv < 2) return [];
  const present = new Set<number>();
  for (const k of s.inside) if (k >= 0) present.add(k);
  const out: Outline[] = [];
  for (const k of [...present].sort((a, b) => a - b)) {
    const indicator = Array.from(s.inside, (v) => (v === k ? 1 : 0));
    const [shape] = contours().size([s.nu, s.nv]).thresholds([0.5])(indicator);
    const paths: number[][] = [];
    for (const polygon of shape.coordinates) {
      for (const ring of polygon) paths.push(ring.flatMap(([gx, gy]) => [s.u0 + gx * s.du, s.v0 + gy * s.dv]));
    }
    if (paths.length > 0) out.push({ electrode: k, paths, closed: true });
  }
  return out;
}

/** Where thin sheets (plates, discs) of a 3d scene cut the slice: segments, or the whole sheet when it lies in the slice. */
export function thinOutlines(scene: Scene, s: SliceResult): Outline[] {
  const axes = sliceAxes(s.plane);
  if (scene.space !== '3d' || !axes) return [];
  const [iu, iv, iw] = axes;
  const out: Outline[] = [];
  scene.electrodes.forEach((e, k) => {
    const shape = e.shape;
    if (shape.kind === 'plate') {
      const n = AXIS[shape.normal];
      const others = [0, 1, 2].filter((a) => a !== n); // size (A, B) spans these, in x, y, z order
      const half = (a: number) => shape.size[others.indexOf(a)] / 2;
      const c = shape.center;
      if (n === iw) {
        if (Math.abs(c[iw] - s.at) > 1e-12) return;
        const [hu, hv] = [half(iu), half(iv)];
        out.push({ electrode: k, paths: [[c[iu] - hu, c[iv] - hv, c[iu] + hu, c[iv] - hv, c[iu] + hu, c[iv] + hv, c[iu] - hu, c[iv] + hv]], closed: true });
        return;
      }
      if (Math.abs(s.at - c[iw]) > half(iw)) return;
      const along = n === iu ? iv : iu; // the in-slice axis the cut runs along
      const h = half(along);
      const path = n === iu ? [c[iu], c[iv] - h, c[iu], c[iv] + h] : [c[iu] - h, c[iv], c[iu] + h, c[iv]];
      out.push({ electrode: k, paths: [path], closed: false });
    } else if (shape.kind === 'disc') {
      const seg = discCut(shape.center, shape.normal, shape.radius, iu, iv, iw, s.at);
      if (seg) out.push({ electrode: k, paths: [seg], closed: false });
    }
  });
  return out;
}

/**
 * The chord where a disc (centre c, normal n, radius R) meets the plane w = at, as [u0, v0, u1, v1].
 * Points of the disc's plane with w = at satisfy n_u(u − c_u) + n_v(v − c_v) + n_w(at − c_w) = 0; the one
 * nearest the centre is (c_u, c_v) − t·(n_u, n_v) with t = n_w(at − c_w)/(n_u² + n_v²), at distance
 * δ = √(t²(n_u² + n_v²) + (at − c_w)²) from it; the chord has half-length √(R² − δ²) along (−n_v, n_u).
 */
function discCut(c: Vec3, normal: Vec3, R: number, iu: number, iv: number, iw: number, at: number): number[] | null {
  const len = Math.hypot(normal[0], normal[1], normal[2]);
  if (!(len > 0)) return null;
  const [nu, nv, nw] = [normal[iu] / len, normal[iv] / len, normal[iw] / len];
  const inPlane = nu * nu + nv * nv;
  const dw = at - c[iw];
  if (inPlane < 1e-18) return null; // the disc is parallel to the slice
  const t = (nw * dw) / inPlane;
  const delta2 = t * t * inPlane + dw * dw;
  if (delta2 > R * R) return null;
  const half = Math.sqrt(R * R - delta2);
  const [pu, pv] = [c[iu] - t * nu, c[iv] - t * nv];
  const [du, dv] = [-nv / Math.sqrt(inPlane), nu / Math.sqrt(inPlane)];
  return [pu - half * du, pv - half * dv, pu + half * du, pv + half * dv];
}

/** Ground planes that cross a 3d slice, as lines across its window. */
export function groundTraces(scene: Scene, s: SliceResult): number[][] {
  const axes = sliceAxes(s.plane);
  if (scene.space !== '3d' || !axes) return [];
  const [iu, iv] = axes;
  const [u1, v1] = [s.u0 + s.nu * s.du, s.v0 + s.nv * s.dv];
  const out: number[][] = [];
  for (const g of scene.groundPlanes) {
    const a = AXIS[g.axis];
    if (a === iu && g.at >= s.u0 && g.at <= u1) out.push([g.at, s.v0, g.at, v1]);
    if (a === iv && g.at >= s.v0 && g.at <= v1) out.push([s.u0, g.at, u1, g.at]);
  }
  return out;
}
