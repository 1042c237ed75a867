// Torus: rings around the tube, stepped around the major circle, alternate rings turned by half a
// step so the panels are nearly equilateral. Every vertex lies on the true surface.
import type { Vec3 } from '../../../../grammar/scene';
import { MeshBuilder, zipRings } from './builder';
import { type MeshOptions, type SizeAt, basisAround, unit3 } from './grading';

const TAU = 2 * Math.PI;

/** Point of the torus at major angle th and tube angle ph. */
function torusPoint(c: Vec3, e1: Vec3, e2: Vec3, w: Vec3, R: number, r: number, th: number, ph: number): Vec3 {
  const rho = R + r * Math.cos(ph), h = r * Math.sin(ph);
  const ct = Math.cos(th), st = Math.sin(th);
  return [0, 1, 2].map((k) => c[k] + rho * (ct * e1[k] + st * e2[k]) + h * w[k]) as Vec3;
}

export function addTorus(
  b: MeshBuilder,
  center: Vec3,
  axis: Vec3,
  major: number,
  minor: number,
  sizeAt: SizeAt,
  opts: MeshOptions,
  electrode: number,
  thin: boolean,
): void {
  const w = unit3(axis);
  const [e1, e2] = basisAround(w);
  let h = opts.relative * (major + minor);
  for (let i = 0; i < 16; i++) {
    for (let j = 0; j < 4; j++) {
      const p = torusPoint(center, e1, e2, w, major, minor, (TAU * i) / 16, (TAU * j) / 4);
      h = Math.min(h, sizeAt(p[0], p[1], p[2]));
    }
  }
  const nTube = Math.max(opts.minSegments, Math.ceil((TAU * minor) / h - 1e-9));
  // Around the major circle, measured on the ring of tube centres; at most maxAspect times the tube step.
  const hMajor = Math.min(h, opts.maxAspect * ((TAU * minor) / nTube));
  let nMajor = Math.max(opts.minSegments, Math.ceil((TAU * major) / hMajor - 1e-9));
  if (nMajor % 2 === 1) nMajor++; // even, so the alternating half-step turns close up around the ring
  const rings: { idx: number[]; offset: number }[] = [];
  for (let k = 0; k < nMajor; k++) {
    const offset = k % 2 === 1 ? Math.PI / nTube : 0;
    const idx: number[] = [];
    for (let j = 0; j < nTube; j++) {
      const p = torusPoint(center, e1, e2, w, major, minor, (TAU * k) / nMajor, offset + (TAU * j) / nTube);
      idx.push(b.vertex(p[0], p[1], p[2]));
    }
    rings.push({ idx, offset });
  }
  // The chart (tube angle, major angle) is left-handed about the outward normal, hence flip.
  for (let k = 0; k < nMajor; k++) {
    const a = rings[k], c = rings[(k + 1) % nMajor];
    zipRings(b, a.idx, a.offset, c.idx, c.offset, electrode, thin, true);
  }
}
