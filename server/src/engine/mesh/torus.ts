// Torus: rings around the tube, stepped around the major circle, alternate rings turned by half a
// step so the panels are nearly equilateral. Every vertex lies on the true surface.
import type { Vec3 } from '../../../../grammar/scene';
import { MeshBuilder, zipRings } from './builder';
import { BODY_PANEL_LIMIT, type MeshOptions, REFINE_FACTOR, type SizeAt, basisAround, unit3 } from './grading';
import { refineToSize } from './refine';

const TAU = 2 * Math.PI;

/** Point of the torus at major angle th and tube angle ph. */
function torusPoint(c: Vec3, e1: Vec3, e2: Vec3, w: Vec3, R: number, r: number, th: number, ph: number): Vec3 {
  const rho = R + r * Math.cos(ph), h = r * Math.sin(ph);
  const ct = Math.cos(th), st = Math.sin(th);
  return [0, 1, 2].map((k) => c[k] + rho * (ct * e1[k] + st * e2[k]) + h * w[k]) as Vec3;
}

/**
 * Adds a torus following sizeAt: a grid at the largest target sampled over it (all there is when the
 * target is uniform), refined locally by longest-edge bisection with new vertices on the true surface.
 */
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
  const cap = opts.relative * (major + minor);
  const samples: number[] = [];
  for (let i = 0; i < 16; i++) {
    for (let j = 0; j < 4; j++) {
      const p = torusPoint(center, e1, e2, w, major, minor, (TAU * i) / 16, (TAU * j) / 4);
      samples.push(Math.min(cap, sizeAt(p[0], p[1], p[2])));
    }
  }
  // The grid at the largest sampled target, refined wherever an edge is too long for the local target.
  const part = new MeshBuilder();
  addTorusGrid(part, center, w, e1, e2, major, minor, Math.max(...samples), opts, electrode, thin);
  const pw = part.patchwork();
  // Closest point on the torus: out from the tube's centre circle by the minor radius.
  const project = (p: Vec3): Vec3 => {
    const q = [p[0] - center[0], p[1] - center[1], p[2] - center[2]];
    const h = q[0] * w[0] + q[1] * w[1] + q[2] * w[2];
    const radial = [q[0] - h * w[0], q[1] - h * w[1], q[2] - h * w[2]];
    const rl = Math.hypot(radial[0], radial[1], radial[2]);
    const ring = radial.map((x) => (major * x) / rl);
    const d = [q[0] - ring[0], q[1] - ring[1], q[2] - ring[2]];
    const dl = Math.hypot(d[0], d[1], d[2]);
    return [0, 1, 2].map((k) => center[k] + ring[k] + (minor * d[k]) / dl) as Vec3;
  };
  refineToSize(pw, (x, y, z) => Math.min(cap, sizeAt(x, y, z)), project, REFINE_FACTOR);
  b.addPatchwork(pw, electrode, thin);
}

/** The torus as rings around the tube at uniform target size h. */
function addTorusGrid(
  b: MeshBuilder,
  center: Vec3,
  w: Vec3,
  e1: Vec3,
  e2: Vec3,
  major: number,
  minor: number,
  h: number,
  opts: MeshOptions,
  electrode: number,
  thin: boolean,
): void {
  const nTube = Math.max(opts.minSegments, Math.ceil((TAU * minor) / h - 1e-9));
  // Around the major circle, measured on the ring of tube centres; at most maxAspect times the tube step.
  // (and never so short that a slender ring gets more than BODY_PANEL_LIMIT panels).
  const hMajor = Math.min(h, Math.max(opts.maxAspect * ((TAU * minor) / nTube), (2 * nTube * TAU * major) / BODY_PANEL_LIMIT));
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
