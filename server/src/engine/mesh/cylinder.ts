// Cylinder: a side of rings graded toward both rims, closed by two disc caps graded toward the rims.
// Every vertex lies on the true surface; rim vertices are marked as edges.
import type { Vec3 } from '../../../../grammar/scene';
import { MeshBuilder, zipRings } from './builder';
import { addRing, fillDisc, sizeOnCircle } from './disc';
import { BODY_PANEL_LIMIT, type MeshOptions, type SizeAt, basisAround, gradedPoints, unit3 } from './grading';

const TAU = 2 * Math.PI;

export function addCylinder(
  b: MeshBuilder,
  from: Vec3,
  to: Vec3,
  radius: number,
  sizeAt: SizeAt,
  opts: MeshOptions,
  electrode: number,
  thin: boolean,
): void {
  const axis: Vec3 = [to[0] - from[0], to[1] - from[1], to[2] - from[2]];
  const length = Math.hypot(axis[0], axis[1], axis[2]);
  const w = unit3(axis);
  const [e1, e2] = basisAround(w);
  const at = (t: number): Vec3 => [from[0] + t * w[0], from[1] + t * w[1], from[2] + t * w[2]];
  const cap = opts.relative * Math.max(radius, length / 2);
  // Around: the smaller of the target on either rim, the body's own cap, and the fewest segments.
  const hAround = Math.min(cap, (TAU * radius) / opts.minSegments, sizeOnCircle(sizeAt, from, e1, e2, radius), sizeOnCircle(sizeAt, to, e1, e2, radius));
  const n = Math.max(opts.minSegments, Math.ceil((TAU * radius) / hAround - 1e-9));
  // Along: the target on the circle there, but panels at most maxAspect times longer than wide.
  // (and never so short that a long thin wire gets more than BODY_PANEL_LIMIT panels).
  const longest = Math.max(opts.maxAspect * ((TAU * radius) / n), (2 * n * length) / BODY_PANEL_LIMIT);
  const along = (t: number) => Math.min(cap, longest, sizeOnCircle(sizeAt, at(t), e1, e2, radius));
  const ts = gradedPoints(length, along, true, true, 2);
  const rings: { idx: number[]; offset: number }[] = [];
  for (let k = 0; k < ts.length; k++) {
    const rim = k === 0 || k === ts.length - 1;
    const offset = rim || k % 2 === 0 ? 0 : Math.PI / n;
    rings.push({ idx: addRing(b, at(ts[k]), e1, e2, radius, n, offset, rim), offset });
  }
  // Side: (angle, t) is right-handed about the outward radial direction.
  for (let k = 0; k + 1 < rings.length; k++) {
    zipRings(b, rings[k].idx, rings[k].offset, rings[k + 1].idx, rings[k + 1].offset, electrode, thin, false);
  }
  const capSize = (c: Vec3) => (rho: number) => Math.min(cap, (TAU * radius) / opts.minSegments, sizeOnCircle(sizeAt, c, e1, e2, rho));
  // Caps: outward normals −w at `from`, +w at `to`.
  fillDisc(b, from, e1, e2, radius, rings[0].idx, capSize(from), electrode, thin, true);
  fillDisc(b, to, e1, e2, radius, rings[rings.length - 1].idx, capSize(to), electrode, thin, false);
}
