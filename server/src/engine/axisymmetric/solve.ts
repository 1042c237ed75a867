// `space axisymmetric`: every electrode is a surface of revolution about the z axis, described by its
// (r, z) profile. Rings of surface charge on the profile's elements (kernel: axisymmetric/ring.ts),
// free charges as rings or points on the axis, a ground plane z = c by image rings of opposite sign
// (an extension of language.md, which lists ground planes for 3d and planar: a plane normal to the
// axis keeps the symmetry). The shared pipeline is planar/solve2d.ts.
import type { SceneAxisymmetric } from '../../../../grammar/scene';
import { EPSILON_0 } from '../../../../grammar/scene';
import { characteristicLength } from '../../../../grammar/geometry';
import type { Result } from '../result';
import type { Mirror } from '../planar/bem2d';
import type { Element2d, Piece } from '../planar/elements';
import { solve2d, type FreeSource, type Solve2dOptions } from '../planar/solve2d';
import { addAxisPoint, addRing, addRingFast } from './ring';
import { profilePieces } from './profile';

/** Element size per preset, relative to the scene's characteristic length (half its largest side). */
export const AXISYMMETRIC_PRESETS = { coarse: 1 / 15, normal: 1 / 40, fine: 1 / 100 } as const;
/** Upper bound on elements at the fine level (dense LU on 2000 unknowns takes a few seconds). */
export const MAX_ELEMENTS_2D = 2000;

/** Charge per unit surface density on an element: ∫ 2πr ds (exact for segments and arcs). */
export function ringArea(el: Element2d): number {
  if (el.kind === 'line') return 2 * Math.PI * el.mx * el.length;
  const theta1 = el.theta0 + (el.dir * el.length) / el.radius;
  return 2 * Math.PI * (el.cx * el.length + el.dir * el.radius * el.radius * (Math.sin(theta1) - Math.sin(el.theta0)));
}

/**
 * Element size for a 2d scene: `mesh size` as given, or a preset of the characteristic length,
 * enlarged when the estimated element count would pass the limit (options.maxPanels, at most
 * MAX_ELEMENTS_2D).
 */
export function elementSize(
  scene: { mesh: SceneAxisymmetric['mesh'] },
  scale: number,
  pieces: Piece[],
  options: Solve2dOptions = {},
): { h: number; coarsened: boolean; maxElements: number } {
  let h = (scene.mesh.kind === 'size' ? scene.mesh.size : scale * AXISYMMETRIC_PRESETS[scene.mesh.preset]) * (options.meshScale ?? 1);
  if (!(h > 0) || !Number.isFinite(h)) h = scale * AXISYMMETRIC_PRESETS.normal;
  const total = pieces.reduce((s, p) => s + p.length, 0);
  const limit = Math.min(MAX_ELEMENTS_2D, options.maxPanels ?? MAX_ELEMENTS_2D);
  // Graded pieces carry up to π/2 more elements.
  const estimate = (1.6 * total) / h;
  if (estimate <= limit) return { h, coarsened: false, maxElements: limit };
  return { h: h * (estimate / limit), coarsened: true, maxElements: limit };
}

export function solveAxisymmetric(scene: SceneAxisymmetric, options: Solve2dOptions = {}): Result | null {
  const scale = characteristicLength(scene);
  const eps = EPSILON_0 * scene.medium.permittivity;
  // Degenerate shapes (reported by the geometry checks) contribute no elements: zero or non-finite
  // sizes, and profiles reaching r < 0 (a torus whose minor radius exceeds its major one).
  const pieces = scene.electrodes.flatMap((e, i) => profilePieces(e.shape, i, scale * 1e-9)).filter((p) => usablePiece(p, -scale * 1e-9));
  // Only a plane normal to the axis keeps the symmetry; the first one is used.
  const plane = scene.groundPlanes.find((g) => g.axis === 'z');
  const mirror: Mirror | null = plane ? { axis: 1, at: plane.at } : null;
  const free: FreeSource[] = [];
  for (const c of scene.charges) {
    if (c.kind === 'point') {
      // An off-axis point charge breaks the symmetry (a geometry diagnostic); it is left out here.
      if (Math.abs(c.at[0]) > scale * 1e-9) continue;
      const z = c.at[1];
      const w = c.value / eps;
      free.push({
        at: [0, z],
        value: c.value,
        total: c.value,
        add(r, zz, field, acc, self) {
          if (!self) addAxisPoint(z, r, zz, w, field, acc);
          if (mirror) addMirrored(acc, field, (a) => addAxisPoint(z, r, 2 * mirror.at - zz, w, field, a));
        },
      });
    } else {
      const [a, z] = c.at;
      const w = c.density / eps;
      free.push({
        at: [a, z],
        value: c.density * 2 * Math.PI * a,
        total: c.density * 2 * Math.PI * a,
        add(r, zz, field, acc, self) {
          if (!self) addRing(a, z, r, zz, w, field, acc);
          if (mirror) addMirrored(acc, field, (b) => addRing(a, z, r, 2 * mirror.at - zz, w, field, b));
        },
      });
    }
  }
  return solve2d(
    scene,
    {
      space: 'axisymmetric',
      kernel: addRing,
      gridKernel: addRingFast,
      line: null,
      mirror,
      infinityUnknown: false,
      pieces,
      ...elementSize(scene, scale, pieces, options),
      diagnostics: [],
      area: ringArea,
      free,
      scale,
      toSolver: (u, v) => [Math.abs(u), v, u < 0 ? -1 : 1],
    },
    options,
  );
}

/** A piece with a finite, positive length that stays at r ≥ rMin (rMin for the first coordinate; −∞ in planar). */
export function usablePiece(p: Piece, rMin = -Infinity): boolean {
  const numbers = [p.x0, p.y0, p.tx, p.ty, p.cx, p.cy, p.radius, p.theta0, p.length];
  if (!numbers.every(Number.isFinite) || !(p.length > 0)) return false;
  if (p.kind === 'line') return Math.min(p.x0, p.x0 + p.length * p.tx) >= rMin;
  // The arc's smallest first coordinate: at an end, or at θ = π if the arc passes it.
  const t1 = p.theta0 + (p.dir * p.length) / p.radius;
  const lo = Math.min(p.theta0, t1);
  const hi = Math.max(p.theta0, t1);
  const passesPi = Math.floor((hi - Math.PI) / (2 * Math.PI)) !== Math.floor((lo - Math.PI) / (2 * Math.PI)) || hi - lo >= 2 * Math.PI;
  const minX = passesPi ? p.cx - p.radius : Math.min(p.cx + p.radius * Math.cos(p.theta0), p.cx + p.radius * Math.cos(t1));
  return minX >= rMin;
}

/** Image of opposite sign in the plane z = c: φ_img(p) = −φ(Mp), E_img = −M·E(Mp). */
const imageScratch = new Float64Array(3);

function addMirrored(acc: Float64Array, field: boolean, add: (a: Float64Array) => void): void {
  const img = imageScratch;
  img[0] = img[1] = img[2] = 0;
  add(img);
  acc[0] -= img[0];
  if (field) {
    acc[1] -= img[1];
    acc[2] += img[2];
  }
}
