// Matrix entries of the 3D panel system for the fast solver: the potential at collocation point i
// of a unit surface density on panel j, summed over the images of grounded planes,
//   A_ij = scale · Σ_images sign · I_j(image(x_i)),   I_j(x) = ∫_Tj 1/|x − y| dA_y,
// image(x) = flip·x + shift (method of images, Jackson, Classical Electrodynamics, sec. 2.1-2.2;
// reflecting the observation point instead of the panel gives the same integral). The identity
// (sign +1) is one of the images. The panel integrals are exact near the panel and a 7-point
// Gauss rule far from it (server/src/engine/kernels/triangle.ts). This is the same entry as the 3D
// system's (server/src/engine/bem3d/system.ts) with scale 1/(4π), except very far from the panel:
// beyond THREE_POINT_RATIO diameters from its centroid the 3-point rule of degree 2 (Dunavant, Int.
// J. Numer. Methods Eng. 21, 1129, 1985: barycentric (2/3, 1/6, 1/6) and permutations, weights 1/3)
// replaces the 7-point one. Its relative error there is below 2e-7 (measured over random triangles
// and directions in tests/fast/panel-entries.test.ts), the 7-point rule's own bound at its 3
// diameters, and most entries the H-matrix computes are that far: assembly spends fewer than half
// the square roots on them.
import { potentialExact, potentialGauss, type Panels } from '../kernels/triangle';
import type { EntrySource } from './aca';

/** One image: x′ = flip·x + shift, charge times sign. */
export interface ImageMap {
  sign: number;
  flip: readonly number[];
  shift: readonly number[];
}

export const IDENTITY: ImageMap[] = [{ sign: 1, flip: [1, 1, 1], shift: [0, 0, 0] }];

/** Distance from the centroid, in panel diameters, beyond which the 3-point rule is used. */
export const THREE_POINT_RATIO = 25;

/** Per panel: the 3-point rule's points (9 numbers), its weight (area/3) and squared switch distance. */
export interface FarRule {
  points: Float64Array;
  weight: Float64Array;
  farSq: Float64Array;
}

export function farRule(P: Panels): FarRule {
  const points = new Float64Array(9 * P.count), weight = new Float64Array(P.count), farSq = new Float64Array(P.count);
  const v = P.vertices;
  for (let j = 0; j < P.count; j++) {
    for (let q = 0; q < 3; q++) {
      for (let c = 0; c < 3; c++) {
        // Barycentric 2/3 at vertex q, 1/6 at the other two.
        points[9 * j + 3 * q + c] = (2 / 3) * v[9 * j + 3 * q + c] + (1 / 6) * (v[9 * j + 3 * ((q + 1) % 3) + c] + v[9 * j + 3 * ((q + 2) % 3) + c]);
      }
    }
    weight[j] = P.area[j] / 3;
    farSq[j] = (THREE_POINT_RATIO * P.diameter[j]) ** 2;
  }
  return { points, weight, farSq };
}

/** ∫_Tj 1/|x − y| dA_y: the 3-point rule very far from the panel, else as the 3D system's entry. */
export function farPanelPotential(P: Panels, F: FarRule, j: number, x: number, y: number, z: number): number {
  const c = P.centroid;
  const dx = x - c[3 * j], dy = y - c[3 * j + 1], dz = z - c[3 * j + 2];
  const r2 = dx * dx + dy * dy + dz * dz;
  if (r2 <= F.farSq[j]) return r2 > P.farSq[j] ? potentialGauss(P, j, x, y, z) : potentialExact(P, j, x, y, z);
  const g = F.points, o = 9 * j;
  const ax = x - g[o], ay = y - g[o + 1], az = z - g[o + 2];
  const bx = x - g[o + 3], by = y - g[o + 4], bz = z - g[o + 5];
  const cx = x - g[o + 6], cy = y - g[o + 7], cz = z - g[o + 8];
  return F.weight[j] * (1 / Math.sqrt(ax * ax + ay * ay + az * az) + 1 / Math.sqrt(bx * bx + by * by + bz * bz) + 1 / Math.sqrt(cx * cx + cy * cy + cz * cz));
}

export function panelEntrySource(P: Panels, points: Float64Array, scale: number, images: readonly ImageMap[] = IDENTITY): EntrySource {
  const plain = images.length === 1 && images[0].sign === 1 && images[0].flip.every((f) => f === 1) && images[0].shift.every((s) => s === 0);
  const F = farRule(P);
  const at = plain
    ? (i: number, j: number): number => scale * farPanelPotential(P, F, j, points[3 * i], points[3 * i + 1], points[3 * i + 2])
    : (i: number, j: number): number => {
        const x = points[3 * i], y = points[3 * i + 1], z = points[3 * i + 2];
        let v = 0;
        for (const im of images) {
          v += im.sign * farPanelPotential(P, F, j, im.flip[0] * x + im.shift[0], im.flip[1] * y + im.shift[1], im.flip[2] * z + im.shift[2]);
        }
        return scale * v;
      };
  return {
    row(i, cols, c0, n, out) {
      for (let k = 0; k < n; k++) out[k] = at(i, cols[c0 + k]);
    },
    col(j, rows, r0, m, out) {
      for (let k = 0; k < m; k++) out[k] = at(rows[r0 + k], j);
    },
  };
}

/** What each unknown's cluster box must cover: its panel's vertices and its collocation point. */
export function panelExtent(P: Panels, points: Float64Array = P.centroid): { coords: Float64Array; stride: number } {
  const coords = new Float64Array(12 * P.count);
  for (let j = 0; j < P.count; j++) {
    coords.set(P.vertices.subarray(9 * j, 9 * j + 9), 12 * j);
    coords.set(points.subarray(3 * j, 3 * j + 3), 12 * j + 9);
  }
  return { coords, stride: 12 };
}
