// Discs: flat circular sheets filled by concentric rings, graded toward the rim.
// Used for the thin `disc` electrode and for the caps of a cylinder.
import type { Vec3 } from '../../../../grammar/scene';
import { MeshBuilder, zipRings } from './builder';
import { type MeshOptions, type SizeAt, basisAround, gradedPoints, unit3 } from './grading';

const TAU = 2 * Math.PI;

/** Point at radius rho and angle th in the plane through c spanned by e1, e2. */
export function onCircle(c: Vec3, e1: Vec3, e2: Vec3, rho: number, th: number): Vec3 {
  const cs = Math.cos(th), sn = Math.sin(th);
  return [c[0] + rho * (cs * e1[0] + sn * e2[0]), c[1] + rho * (cs * e1[1] + sn * e2[1]), c[2] + rho * (cs * e1[2] + sn * e2[2])];
}

/** Smallest target size on the circle of radius rho (8 samples). */
export function sizeOnCircle(sizeAt: SizeAt, c: Vec3, e1: Vec3, e2: Vec3, rho: number): number {
  let h = Infinity;
  for (let k = 0; k < 8; k++) {
    const p = onCircle(c, e1, e2, rho, (TAU * k) / 8);
    h = Math.min(h, sizeAt(p[0], p[1], p[2]));
  }
  return h;
}

/** Adds a ring of n vertices at radius rho, vertex j at angle offset + 2πj/n. */
export function addRing(b: MeshBuilder, c: Vec3, e1: Vec3, e2: Vec3, rho: number, n: number, offset: number, onEdge: boolean): number[] {
  const ring: number[] = [];
  for (let j = 0; j < n; j++) {
    const p = onCircle(c, e1, e2, rho, offset + (TAU * j) / n);
    ring.push(b.vertex(p[0], p[1], p[2], onEdge));
  }
  return ring;
}

/**
 * Fills the disc inside a given rim ring (vertex j at angle 2πj/n): rings at the radii of a
 * distribution graded toward the rim, each with about 2πr/h vertices (never more than the rim),
 * alternate rings turned by half a step, a fan at the centre. Counter-clockwise about e1 × e2,
 * or about −(e1 × e2) when `flip`.
 */
export function fillDisc(
  b: MeshBuilder,
  c: Vec3,
  e1: Vec3,
  e2: Vec3,
  radius: number,
  rim: number[],
  size: (rho: number) => number,
  electrode: number,
  thin: boolean,
  flip: boolean,
): void {
  const radii = gradedPoints(radius, size, false, true, 2);
  const m = radii.length - 1;
  const rings: { idx: number[]; offset: number }[] = [];
  for (let k = 1; k < m; k++) {
    const rho = radii[k];
    const n = Math.min(rim.length, Math.max(6, Math.round((TAU * rho) / size(rho))));
    const offset = (m - k) % 2 === 1 ? Math.PI / n : 0;
    rings.push({ idx: addRing(b, c, e1, e2, rho, n, offset, false), offset });
  }
  rings.push({ idx: rim, offset: 0 });
  const centre = b.vertex(c[0], c[1], c[2]);
  const first = rings[0];
  for (let j = 0; j < first.idx.length; j++) {
    b.triangle(centre, first.idx[j], first.idx[(j + 1) % first.idx.length], electrode, thin, flip);
  }
  // The chart (angle, radius) is left-handed about e1 × e2, hence the reversed flag.
  for (let k = 0; k + 1 < rings.length; k++) {
    zipRings(b, rings[k].idx, rings[k].offset, rings[k + 1].idx, rings[k + 1].offset, electrode, thin, !flip);
  }
}

/** Adds a thin disc electrode: normal as given, rim marked as an edge. */
export function addDisc(
  b: MeshBuilder,
  center: Vec3,
  normal: Vec3,
  radius: number,
  sizeAt: SizeAt,
  opts: MeshOptions,
  electrode: number,
): void {
  const w = unit3(normal);
  const [e1, e2] = basisAround(w);
  const cap = Math.min(opts.relative * radius, (TAU * radius) / opts.minSegments);
  const size = (rho: number) => Math.min(cap, sizeOnCircle(sizeAt, center, e1, e2, rho));
  const n = Math.max(opts.minSegments, Math.ceil((TAU * radius) / size(radius) - 1e-9));
  const rim = addRing(b, center, e1, e2, radius, n, 0, true);
  fillDisc(b, center, e1, e2, radius, rim, size, electrode, true, false);
}
