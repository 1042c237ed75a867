// Geometry checks on a Scene: degenerate shapes, electrodes that overlap or touch, free charges in
// or on conductors, ground-plane crossings, extra ground planes, slices and probes that miss
// everything. Codes VS301–VS311 (grammar/diagnostics.ts, docs/language.md).
//
// How contact is decided. Each electrode is a set of conducting material: a solid's volume, or
// only the surface of a thin sheet or hollow shell (a body inside a hollow shell is fine unless it
// reaches the shell itself). The gap between two electrodes is the least "conductor distance" of
// one (negative inside a solid) over the other's surface, taken both ways:
// - exact where cheap: a solid sphere (or circle) against anything, gap = d_B(centre) − radius,
//   since our signed distances are exact Euclidean distances; two spheres; two solid boxes;
// - otherwise a sampled search: each surface is a set of parametric patches, cut into cells;
//   a cell whose centre value minus its reach (the largest distance from its centre to its corners,
//   times 1.5) stays above the tolerance cannot touch and is dropped (the
//   distance is 1-Lipschitz), the rest are split best-first within a budget, and the best few
//   points are then polished by a local pattern search. This finds tangent contact to rounding
//   error; a contact the search has not found when its budget runs out is not reported.
// Runs on every keystroke: O(n²) over electrodes, with bounding-box rejection before any search.
import { DIAGNOSTIC_CODES } from './diagnostics';
import {
  type Bounds,
  basisAround,
  characteristicLength,
  conductorDistance,
  conductorDistanceFunction,
  electrodeBounds,
  electrodeIsThin,
  insideElectrode,
  outlineCurvesPlanar,
  profileCurvesAxisymmetric,
  sceneBounds,
  surfacePatches3d,
  unit3,
} from './geometry';
import type { Diagnostic, Drive, Range, Scene, Severity, Vec2, Vec3 } from './scene';

function diag(code: string, fallback: Severity, message: string, range: Range): Diagnostic {
  const severity = DIAGNOSTIC_CODES[code]?.severity ?? fallback;
  return { code, severity, message, range };
}

const finite = (...xs: number[]) => xs.every((x) => Number.isFinite(x));
const sameVec = (a: number[], b: number[]) => a.length === b.length && a.every((x, i) => x === b[i]);
const isZeroVec = (a: number[]) => a.every((x) => x === 0);

/** Whether every number in a plain value (numbers, arrays, objects) is finite. */
function numbersFinite(v: unknown): boolean {
  if (typeof v === 'number') return Number.isFinite(v);
  if (Array.isArray(v)) return v.every(numbersFinite);
  if (v && typeof v === 'object') return Object.values(v).every(numbersFinite);
  return true;
}

// ---------------------------------------------------------------- degenerate shapes (VS301, VS302)

/** Why a shape is degenerate, or null when it is fine. */
function degenerateReason(shape: Scene['electrodes'][number]['shape']): string | null {
  if (!numbersFinite(shape)) return 'one of its values is not a finite number';
  switch (shape.kind) {
    case 'sphere':
    case 'circle':
      return shape.radius > 0 && finite(shape.radius) ? null : 'its radius must be positive';
    case 'box':
    case 'rect':
    case 'plate':
      return shape.size.every((s) => s > 0 && finite(s)) ? null : 'every side of its size must be positive';
    case 'cylinder':
      if (!(shape.radius > 0 && finite(shape.radius))) return 'its radius must be positive';
      return sameVec(shape.from, shape.to) ? "its 'from' and 'to' are the same point" : null;
    case 'disc':
      if (!(shape.radius > 0 && finite(shape.radius))) return 'its radius must be positive';
      return 'normal' in shape && isZeroVec(shape.normal) ? 'its normal is the zero vector' : null;
    case 'torus':
      if ('axis' in shape && isZeroVec(shape.axis)) return 'its axis is the zero vector';
      if (!(shape.minor > 0 && finite(shape.minor))) return 'its minor radius must be positive';
      return shape.major > shape.minor && finite(shape.major)
        ? null
        : 'its major radius must be larger than its minor radius (else the ring closes on itself)';
    case 'strip':
      return sameVec(shape.from, shape.to) ? "its 'from' and 'to' are the same point" : null;
    case 'polygon':
      if (shape.points.length < 3) return 'a polygon needs at least three points';
      return Math.abs(polygonArea(shape.points)) > 0 ? null : 'its points enclose no area';
    case 'revolve': {
      if (shape.points.length < 2) return 'a profile needs at least two points';
      if (shape.points.some((p) => p[0] < 0)) return 'a profile point has a negative radius r';
      if (shape.closed && Math.abs(polygonArea(shape.points)) === 0) return 'its closed profile encloses no area';
      let length = 0;
      for (let i = 1; i < shape.points.length; i++) {
        length += Math.hypot(shape.points[i][0] - shape.points[i - 1][0], shape.points[i][1] - shape.points[i - 1][1]);
      }
      return length > 0 ? null : 'its profile has zero length';
    }
  }
}

/** Shoelace formula for the signed area of a simple polygon (common practice). */
function polygonArea(points: Vec2[]): number {
  let a = 0;
  for (let i = 0; i < points.length; i++) {
    const p = points[i];
    const q = points[(i + 1) % points.length];
    a += p[0] * q[1] - q[0] * p[1];
  }
  return a / 2;
}

function chargeDegenerate(c: Scene['charges'][number]): string | null {
  if (c.kind === 'line') return sameVec(c.from, c.to) ? "its 'from' and 'to' are the same point" : null;
  if (c.kind === 'ring' && 'axis' in c) {
    if (!(c.radius > 0)) return 'its radius must be positive';
    if (isZeroVec(c.axis)) return 'its axis is the zero vector';
  }
  if (c.kind === 'ring' && !('axis' in c) && !(c.at[0] > 0)) return 'its radius r must be positive';
  return null;
}

// ---------------------------------------------------------------- the sampled search

/** A parametric piece of a surface or curve: (s, t) ∈ [0, 1]² (t ignored for curves) to a point. */
interface Patch {
  dims: 1 | 2;
  at: (s: number, t: number) => number[];
}

interface Cell {
  s: number;
  t: number;
  hs: number; // half-widths in parameter space
  ht: number;
  value: number;
  reach: number;
}

function dist(a: number[], b: number[]): number {
  let acc = 0;
  for (let k = 0; k < a.length; k++) acc += (a[k] - b[k]) ** 2;
  return Math.sqrt(acc);
}
const ENDS = [[-1, 0], [1, 0]];
const CORNERS = [[-1, -1], [1, -1], [-1, 1], [1, 1]];
/**
 * A cell's reach is its largest corner distance times this factor: the margin covers the bulge of a
 * curved patch between its corners (at most a few percent at the starting cell sizes used here).
 */
const REACH_FACTOR = 1.5;

/**
 * The least value of f over the patches, searched as described at the top of this file. Returns
 * early once a value below `stopBelow` is found (contact is certain), and never spends more than
 * `budget` evaluations of f on the split phase.
 */
function minimumOver(patches: Patch[], f: (p: number[]) => number, tolerance: number, stopBelow: number, budget = 2500): number {
  let best = Infinity;
  const evaluate = (patch: Patch, s: number, t: number, hs: number, ht: number): Cell & { patch: Patch } => {
    const c = patch.at(s, t);
    const value = f(c);
    let reach = 0;
    for (const [a, b] of patch.dims === 1 ? ENDS : CORNERS) reach = Math.max(reach, dist(c, patch.at(s + a * hs, t + b * ht)));
    best = Math.min(best, value);
    return { s, t, hs, ht, value, reach: REACH_FACTOR * reach, patch };
  };
  let cells: (Cell & { patch: Patch })[] = [];
  for (const patch of patches) {
    const n = patch.dims === 1 ? 24 : 8;
    for (let i = 0; i < n; i++) {
      for (let j = 0; j < (patch.dims === 1 ? 1 : n); j++) {
        cells.push(evaluate(patch, (i + 0.5) / n, patch.dims === 1 ? 0 : (j + 0.5) / n, 0.5 / n, patch.dims === 1 ? 0 : 0.5 / n));
      }
    }
  }
  let spent = cells.length;
  // Polish the best starting point first: tangent contact is usually found right there.
  const start = cells.reduce((a, b) => (b.value < a.value ? b : a), cells[0]);
  if (start && start.value - start.reach <= tolerance) best = Math.min(best, patternSearch(start.patch, f, start));
  if (best < stopBelow) return best;
  const settled: (Cell & { patch: Patch })[] = [];
  while (cells.length > 0 && best >= stopBelow && spent < budget) {
    const next: (Cell & { patch: Patch })[] = [];
    cells.sort((a, b) => a.value - a.reach - (b.value - b.reach));
    for (const cell of cells) {
      if (cell.value - cell.reach > tolerance) continue; // cannot come within the tolerance
      if (cell.reach < tolerance || spent >= budget || best < stopBelow) {
        settled.push(cell);
        continue;
      }
      const hs = cell.hs / 2, ht = cell.ht / 2;
      const kids = cell.patch.dims === 1 ? [[-1, 0], [1, 0]] : [[-1, -1], [1, -1], [-1, 1], [1, 1]];
      for (const [a, b] of kids) next.push(evaluate(cell.patch, cell.s + a * hs, cell.t + b * ht, hs, ht));
      spent += kids.length;
    }
    cells = next;
  }
  if (best < stopBelow) return best;
  // Polish the two most promising points with a local pattern search in parameter space.
  const seeds = [...cells, ...settled].filter((c) => c.value - c.reach <= tolerance).sort((a, b) => a.value - b.value).slice(0, 2);
  for (const seed of seeds) best = Math.min(best, patternSearch(seed.patch, f, seed));
  return best;
}

function patternSearch(patch: Patch, f: (p: number[]) => number, seed: Cell): number {
  let s = seed.s, t = seed.t, value = seed.value;
  let step = Math.max(seed.hs, seed.ht);
  const clamp = (x: number) => Math.min(1, Math.max(0, x));
  const moves = patch.dims === 1 ? [[1, 0], [-1, 0]] : [[1, 0], [-1, 0], [0, 1], [0, -1], [1, 1], [-1, -1], [1, -1], [-1, 1]];
  for (let iter = 0; iter < 300 && step > 1e-13; iter++) {
    let improved = false;
    for (const [a, b] of moves) {
      const ns = clamp(s + a * step), nt = clamp(t + b * step);
      const v = f(patch.at(ns, nt));
      if (v < value) {
        value = v;
        s = ns;
        t = nt;
        improved = true;
        break;
      }
    }
    if (!improved) step /= 2;
  }
  return value;
}

// ---------------------------------------------------------------- shapes as patches

function electrodePatches(scene: Scene, i: number): Patch[] {
  switch (scene.space) {
    case '3d':
      return surfacePatches3d(scene.electrodes[i].shape).map((at) => ({ dims: 2 as const, at }));
    case 'axisymmetric':
      return profileCurvesAxisymmetric(scene.electrodes[i].shape).map((at) => ({ dims: 1 as const, at: (s: number) => at(s) }));
    case 'planar':
      return outlineCurvesPlanar(scene.electrodes[i].shape).map((at) => ({ dims: 1 as const, at: (s: number) => at(s) }));
  }
}

/** A solid ball or disc of the plane, when the electrode is one (centre and radius), for exact tests. */
function solidRound(scene: Scene, i: number): { center: number[]; radius: number } | null {
  const s = scene.electrodes[i].shape;
  if ((s.kind === 'sphere' || s.kind === 'circle') && !s.hollow) return { center: s.center, radius: s.radius };
  return null;
}

function boundsGap(a: Bounds, b: Bounds): number {
  let out = 0;
  for (let k = 0; k < a.min.length; k++) out = Math.max(out, b.min[k] - a.max[k], a.min[k] - b.max[k]);
  return out;
}

/**
 * Signed gap between electrodes i and j: negative when they overlap, about 0 when they touch.
 * The sampled search refines only near values within `tolerance`, and returns early below
 * `stopBelow` (contact checks); pass −Infinity for the least distance of a gap under `tolerance`.
 */
export function electrodeGap(scene: Scene, i: number, j: number, tolerance: number, stopBelow = tolerance): number {
  const si = scene.electrodes[i].shape, sj = scene.electrodes[j].shape;
  // Two spheres (or circles), solid or hollow: exact.
  if ((si.kind === 'sphere' || si.kind === 'circle') && (sj.kind === 'sphere' || sj.kind === 'circle')) {
    const d = dist(si.center, sj.center), a = si.radius, b = sj.radius;
    if (!si.hollow && !sj.hollow) return d - a - b;
    if (si.hollow && sj.hollow) return Math.max(d - a - b, Math.abs(a - b) - d);
    // Shell of radius s against a ball of radius r: the distance from the shell to the ball's centre, less r.
    const [shell, ball] = si.hollow ? [a, b] : [b, a];
    return Math.abs(d - shell) - ball;
  }
  const round = solidRound(scene, i) ?? solidRound(scene, j);
  if (round) {
    const other = solidRound(scene, i) ? j : i;
    return conductorDistance(scene, other, round.center) - round.radius;
  }
  // Two solid boxes (or rectangles): exact from their bounds.
  const boxy = (k: number) => {
    const s = scene.electrodes[k].shape;
    return (s.kind === 'box' || s.kind === 'rect') && !s.hollow;
  };
  if (boxy(i) && boxy(j)) {
    const a = electrodeBounds(scene, i), b = electrodeBounds(scene, j);
    const gaps = a.min.map((_, k) => Math.max(b.min[k] - a.max[k], a.min[k] - b.max[k]));
    const max = Math.max(...gaps);
    return max < 0 ? max : Math.hypot(...gaps.map((g) => Math.max(g, 0)));
  }
  // Stop at the first sign of contact: whether it is touching or overlap only changes the wording.
  const stop = stopBelow;
  const ij = minimumOver(electrodePatches(scene, i), conductorDistanceFunction(scene, j), tolerance, stop);
  if (ij < stop) return ij;
  const ji = minimumOver(electrodePatches(scene, j), conductorDistanceFunction(scene, i), tolerance, stop);
  return Math.min(ij, ji);
}

function sameDrive(a: Drive, b: Drive): boolean {
  if (a.kind === 'floating' || b.kind === 'floating') return a.kind === b.kind;
  return a.kind === b.kind && a.value === b.value;
}

function describeDrive(d: Drive): string {
  return d.kind === 'floating' ? 'floating' : d.kind === 'potential' ? `at ${d.value} V` : `carrying ${d.value} C`;
}

// ---------------------------------------------------------------- checks

interface Context {
  scene: Scene;
  /** Electrodes that can be checked (not degenerate). */
  ok: boolean[];
  bounds: Bounds[];
  tolerance: number;
  out: Diagnostic[];
}

/** VS303 (different drives) and VS304 (same drive): electrodes that overlap or touch. Reported on the later one. */
function checkOverlaps(cx: Context): void {
  const { scene, ok, bounds, tolerance } = cx;
  const n = scene.electrodes.length;
  for (let j = 0; j < n; j++) {
    if (!ok[j]) continue;
    for (let i = 0; i < j; i++) {
      if (!ok[i] || boundsGap(bounds[i], bounds[j]) > tolerance) continue;
      const gap = electrodeGap(scene, i, j, tolerance);
      if (gap > tolerance) continue;
      const a = scene.electrodes[i], b = scene.electrodes[j];
      const thin = electrodeIsThin(scene, i) || electrodeIsThin(scene, j);
      const how = gap < -tolerance ? 'overlaps' : thin ? 'touches or crosses' : 'touches';
      if (sameDrive(a.drive, b.drive)) {
        cx.out.push(diag('VS304', 'warning', `Electrode '${b.name}' ${how} '${a.name}' (same drive): they act as one conductor; merge them or leave a gap.`, b.nameRange));
      } else {
        cx.out.push(
          diag(
            'VS303',
            'error',
            `Electrode '${b.name}' (${describeDrive(b.drive)}) ${how} '${a.name}' (${describeDrive(a.drive)}): conductors in contact cannot hold different drives. Leave a gap between them.`,
            b.nameRange,
          ),
        );
      }
    }
  }
}

/** The parts of a free charge as patches (a point is a one-point patch). */
function chargePatches(scene: Scene, k: number): Patch[] {
  const c = scene.charges[k];
  if (c.kind === 'point') return [{ dims: 1, at: () => [...c.at] }];
  if (c.kind === 'line') return [{ dims: 1, at: (s) => c.from.map((x, m) => x + s * (c.to[m] - x)) }];
  if ('axis' in c) {
    const [e1, e2] = basisAround(unit3(c.axis));
    return [
      {
        dims: 1,
        at: (s) => c.center.map((x, m) => x + c.radius * (Math.cos(2 * Math.PI * s) * e1[m] + Math.sin(2 * Math.PI * s) * e2[m])),
      },
    ];
  }
  return [{ dims: 1, at: () => [...c.at] }];
}

function chargeBoundsOf(scene: Scene, k: number): Bounds {
  const pts: number[][] = [];
  for (const patch of chargePatches(scene, k)) for (let s = 0; s <= 1; s += 1 / 16) pts.push(patch.at(s, 0));
  const c = scene.charges[k];
  // A ring's bounds from 17 samples can miss its extremes by up to r(1 − cos(π/16)); pad for that.
  const pad = c.kind === 'ring' && 'radius' in c ? c.radius * 0.02 : 0;
  return {
    min: pts[0].map((_, m) => Math.min(...pts.map((p) => p[m])) - pad),
    max: pts[0].map((_, m) => Math.max(...pts.map((p) => p[m])) + pad),
  };
}

const KIND_WORD = { point: 'Point charge', line: 'Line charge', ring: 'Ring charge' } as const;

/** VS305: a free charge inside or on an electrode (its potential there would be infinite). */
function checkCharges(cx: Context, chargeOk: boolean[]): void {
  const { scene, ok, bounds, tolerance } = cx;
  scene.charges.forEach((c, k) => {
    if (!chargeOk[k]) return;
    const cb = chargeBoundsOf(scene, k);
    for (let i = 0; i < scene.electrodes.length; i++) {
      if (!ok[i] || boundsGap(bounds[i], cb) > tolerance) continue;
      const patches = chargePatches(scene, k);
      const d = c.kind === 'point'
        ? conductorDistance(scene, i, [...c.at])
        : minimumOver(patches, conductorDistanceFunction(scene, i), tolerance, tolerance);
      if (d > tolerance) continue;
      const where = d < -tolerance ? 'inside' : 'on';
      const part = c.kind === 'point' ? '' : d < -tolerance ? ' runs' : ' touches';
      const what = part ? `${KIND_WORD[c.kind]} '${c.name}'${part} ${where === 'inside' ? 'inside' : 'the surface of'}` : `${KIND_WORD[c.kind]} '${c.name}' lies ${where === 'inside' ? 'inside' : 'on the surface of'}`;
      cx.out.push(diag('VS305', 'error', `${what} electrode '${scene.electrodes[i].name}': a free charge must sit in the medium, clear of every conductor.`, c.range));
      return;
    }
  });
}

/** VS306 (electrodes) and VS311 (free charges) crossing or touching a ground plane; VS307 extra planes. */
function checkGroundPlanes(cx: Context, chargeOk: boolean[]): void {
  const { scene, ok, bounds, tolerance } = cx;
  scene.groundPlanes.forEach((g, gi) => {
    if (gi > 0) {
      cx.out.push(
        diag('VS307', 'error', 'Only one ground plane is supported in this version; this one would be ignored. Model the second grounded surface as an electrode at 0 V.', g.range),
      );
    }
    // Coordinates: (x, y, z) in 3d, (x, y) in planar, (r, z) in axisymmetric (only z planes there).
    const k = scene.space === 'axisymmetric' ? (g.axis === 'z' ? 1 : -1) : { x: 0, y: 1, z: 2 }[g.axis];
    if (k < 0 || (scene.space === 'planar' && k > 1)) return;
    const plane = `${g.axis} = ${g.at} m`;
    scene.electrodes.forEach((e, i) => {
      if (!ok[i]) return;
      const lo = bounds[i].min[k], hi = bounds[i].max[k];
      if (lo > g.at + tolerance || hi < g.at - tolerance) return;
      const crosses = lo < g.at - tolerance && hi > g.at + tolerance;
      const flat = hi - lo <= tolerance;
      const how = crosses ? 'crosses' : flat ? 'lies in' : 'touches';
      cx.out.push(diag('VS306', 'error', `Electrode '${e.name}' ${how} the ground plane ${plane}: keep every electrode on one side of it, clear of it.`, e.nameRange));
    });
    scene.charges.forEach((c, m) => {
      if (!chargeOk[m]) return;
      const b = chargeBoundsOf(scene, m);
      if (b.min[k] > g.at + tolerance || b.max[k] < g.at - tolerance) return;
      cx.out.push(diag('VS311', 'error', `Charge '${c.name}' meets the ground plane ${plane}: a free charge must sit clear of it.`, c.range));
    });
  });
}

/** Distance from a point to the axis-aligned rectangle [min, max] (any dimension). */
function boxPointDistance(p: number[], b: Bounds): number {
  return Math.sqrt(p.reduce((acc, x, k) => acc + Math.max(b.min[k] - x, 0, x - b.max[k]) ** 2, 0));
}

/**
 * VS308: a slice whose window, thickened by 5% of its larger side all round (and on both sides of
 * its plane in 3d), meets no electrode and no free charge: what it shows is empty or nearly so.
 */
function checkSlices(cx: Context, chargeOk: boolean[]): void {
  const { scene, ok, bounds } = cx;
  for (const slice of scene.slices) {
    const [u0, v0] = slice.from, [u1, v1] = slice.to;
    if (!finite(u0, v0, u1, v1, slice.at)) continue;
    const margin = 0.05 * Math.max(Math.abs(u1 - u0), Math.abs(v1 - v0));
    // The window as an axis-aligned box in the scene's coordinates.
    const window: Bounds = (() => {
      const lo = [Math.min(u0, u1), Math.min(v0, v1)], hi = [Math.max(u0, u1), Math.max(v0, v1)];
      if (scene.space !== '3d') return { min: lo, max: hi };
      const axes = slice.plane === 'xy' ? [0, 1, 2] : slice.plane === 'xz' ? [0, 2, 1] : [1, 2, 0];
      const min = [0, 0, 0], max = [0, 0, 0];
      min[axes[0]] = lo[0]; max[axes[0]] = hi[0];
      min[axes[1]] = lo[1]; max[axes[1]] = hi[1];
      min[axes[2]] = slice.at; max[axes[2]] = slice.at;
      return { min, max };
    })();
    // In axisymmetric space the view may show negative r as the mirror image.
    const mirrored = (p: number[]) => (scene.space === 'axisymmetric' ? [[p[0], p[1]], [-p[0], p[1]]] : [p]);
    const hit = scene.electrodes.some((_, i) => {
      if (!ok[i]) return false;
      const b = bounds[i];
      const grown: Bounds = scene.space === 'axisymmetric'
        ? { min: [-b.max[0] - margin, b.min[1] - margin], max: [b.max[0] + margin, b.max[1] + margin] }
        : { min: b.min.map((x) => x - margin), max: b.max.map((x) => x + margin) };
      if (boundsGap(grown, window) > 0) return false;
      // The window as a patch over (s, t); the least conductor distance over it.
      const patch: Patch = {
        dims: 2,
        at: (s, t) => {
          const u = u0 + s * (u1 - u0), v = v0 + t * (v1 - v0);
          if (scene.space !== '3d') return [u, v];
          return slice.plane === 'xy' ? [u, v, slice.at] : slice.plane === 'xz' ? [u, slice.at, v] : [slice.at, u, v];
        },
      };
      return minimumOver([patch], conductorDistanceFunction(scene, i), margin, margin, 600) <= margin;
    });
    if (hit) continue;
    const chargeHit = scene.charges.some((_, m) => {
      if (!chargeOk[m]) return false;
      return minimumOver(chargePatches(scene, m), (p) => Math.min(...mirrored(p).map((q) => boxPointDistance(q, window))), margin, margin, 600) <= margin;
    });
    if (chargeHit) continue;
    cx.out.push(diag('VS308', 'warning', 'This slice meets no electrode and no charge: its window shows nothing of the scene. Move it or widen it.', slice.range));
  }
}

/**
 * VS309: a probe outside the scene's bounding box grown by the box's own size (it reads only the
 * far field); VS310: a probe point strictly inside a solid conductor (it reads that conductor's
 * potential and no field). A line probe gets VS310 only when every one of its points is inside.
 */
function checkProbes(cx: Context): void {
  const { scene, tolerance } = cx;
  const box = sceneBounds(scene);
  if (!box) return;
  const size = Math.max(...box.max.map((x, k) => x - box.min[k]), tolerance);
  const grown: Bounds = { min: box.min.map((x) => x - size), max: box.max.map((x) => x + size) };
  const strictlyInside = (p: number[]): number => {
    const i = insideElectrode(scene, p, 0);
    return i >= 0 && conductorDistance(scene, i, p) < -tolerance ? i : -1;
  };
  for (const probe of scene.probes) {
    const pts: number[][] = probe.kind === 'point'
      ? [[...probe.at]]
      : Array.from({ length: Math.max(2, probe.samples) }, (_, k) =>
          probe.from.map((x, m) => x + (k / (Math.max(2, probe.samples) - 1)) * (probe.to[m] - x)),
        );
    if (pts.some((p) => !finite(...p))) continue;
    const line: Bounds = { min: pts[0].map((_, m) => Math.min(...pts.map((p) => p[m]))), max: pts[0].map((_, m) => Math.max(...pts.map((p) => p[m]))) };
    // In axisymmetric space the probe may be given at negative r (the mirror image).
    const lineAbs = scene.space === 'axisymmetric'
      ? { min: [Math.min(...pts.map((p) => Math.abs(p[0]))), line.min[1]], max: [Math.max(...pts.map((p) => Math.abs(p[0]))), line.max[1]] }
      : line;
    const far = probe.kind === 'point' ? boxPointDistance(scene.space === 'axisymmetric' ? [Math.abs(pts[0][0]), pts[0][1]] : pts[0], grown) > 0 : boundsGap(lineAbs, grown) > 0;
    if (far) {
      cx.out.push(
        diag('VS309', 'warning', `Probe '${probe.name}' lies far outside the scene (beyond its bounding box grown by its own size): it will read only the far field.`, probe.range),
      );
      continue;
    }
    const inside = pts.map(strictlyInside);
    if (inside.every((i) => i >= 0)) {
      const names = [...new Set(inside)].map((i) => `'${scene.electrodes[i].name}'`).join(', ');
      const what = probe.kind === 'point' ? 'lies inside electrode' : 'lies wholly inside electrode';
      cx.out.push(
        diag('VS310', 'warning', `Probe '${probe.name}' ${what}${inside.length > 1 && new Set(inside).size > 1 ? 's' : ''} ${names}: it will read the conductor's own potential and no field.`, probe.range),
      );
    }
  }
}

/** Every geometry diagnostic of a scene. Pure and fast; never throws. */
export function checkGeometry(scene: Scene): Diagnostic[] {
  const out: Diagnostic[] = [];
  const ok = scene.electrodes.map((e) => {
    const reason = degenerateReason(e.shape);
    if (reason) out.push(diag('VS301', 'error', `Electrode '${e.name}' is degenerate: ${reason}.`, e.nameRange));
    return !reason;
  });
  const chargeOk = scene.charges.map((c) => {
    const reason = chargeDegenerate(c);
    if (reason) out.push(diag('VS302', 'error', `${KIND_WORD[c.kind]} '${c.name}' is degenerate: ${reason}.`, c.range));
    const { range: _range, ...values } = c;
    return !reason && numbersFinite(values);
  });
  try {
    const cx: Context = {
      scene,
      ok,
      bounds: scene.electrodes.map((_, i) => (ok[i] ? electrodeBounds(scene, i) : { min: [], max: [] })),
      tolerance: 1e-9 * characteristicLength(scene),
      out,
    };
    checkOverlaps(cx);
    checkCharges(cx, chargeOk);
    checkGroundPlanes(cx, chargeOk);
    checkSlices(cx, chargeOk);
    checkProbes(cx);
  } catch {
    // A geometry question we could not answer must not stop analysis; the degenerate checks stand.
  }
  return out;
}
