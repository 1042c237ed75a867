// Matrix entries of the 3D panel system for the fast solver: the potential at collocation point i
// of a unit surface density on panel j, summed over the images of grounded planes,
//   A_ij = scale · Σ_images sign · I_j(image(x_i)),   I_j(x) = ∫_Tj 1/|x − y| dA_y,
// image(x) = flip·x + shift (method of images, Jackson, Classical Electrodynamics, sec. 2.1-2.2;
// reflecting the observation point instead of the panel gives the same integral). The identity
// (sign +1) is one of the images. The panel integrals are exact near the panel and by
// Gauss rules far from it, fewer points the farther (server/src/engine/kernels/triangle.ts). This is
// the same entry as the 3D system's (server/src/engine/bem3d/system.ts) with scale 1/(4π).
import { panelPotential, type Panels } from '../kernels/triangle';
import { createFarRule } from '../kernels/far-rule';
import type { EntrySource } from './aca';

/** One image: x′ = flip·x + shift, charge times sign. */
export interface ImageMap {
  sign: number;
  flip: readonly number[];
  shift: readonly number[];
}

export const IDENTITY: ImageMap[] = [{ sign: 1, flip: [1, 1, 1], shift: [0, 0, 0] }];

export function panelEntrySource(P: Panels, points: Float64Array, scale: number, images: readonly ImageMap[] = IDENTITY): EntrySource {
  const plain = images.length === 1 && images[0].sign === 1 && images[0].flip.every((f) => f === 1) && images[0].shift.every((s) => s === 0);
  const at = plain
    ? (i: number, j: number): number => scale * panelPotential(P, j, points[3 * i], points[3 * i + 1], points[3 * i + 2])
    : (i: number, j: number): number => {
        const x = points[3 * i], y = points[3 * i + 1], z = points[3 * i + 2];
        let v = 0;
        for (const im of images) {
          v += im.sign * panelPotential(P, j, im.flip[0] * x + im.shift[0], im.flip[1] * y + im.shift[1], im.flip[2] * z + im.shift[2]);
        }
        return scale * v;
      };
  const far = createFarRule(P, points);
  if (!far) {
    return {
      row(i, cols, c0, n, out) {
        for (let k = 0; k < n; k++) out[k] = at(i, cols[c0 + k]);
      },
      col(j, rows, r0, m, out) {
        for (let k = 0; k < m; k++) out[k] = at(rows[r0 + k], j);
      },
    };
  }
  // The far entries from far-rule.ts (the same numbers to the bit), the rest from panelPotential;
  // summed over the images in the same order as `at`, then scaled (0 + 1·v and v·scale are exact,
  // so a plain system gets `at`'s numbers too).
  return {
    row(i, cols, c0, n, out) {
      const x = points[3 * i], y = points[3 * i + 1], z = points[3 * i + 2];
      out.fill(0, 0, n);
      for (const im of images) far.addRow(im.flip[0] * x + im.shift[0], im.flip[1] * y + im.shift[1], im.flip[2] * z + im.shift[2], cols, c0, n, im.sign, out);
      for (let k = 0; k < n; k++) out[k] *= scale;
    },
    col(j, rows, r0, m, out) {
      out.fill(0, 0, m);
      for (const im of images) far.addCol(j, rows, r0, m, im.flip, im.shift, im.sign, out);
      for (let k = 0; k < m; k++) out[k] *= scale;
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
