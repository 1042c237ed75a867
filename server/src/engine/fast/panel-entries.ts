// Matrix entries of the 3D panel system for the fast solver: the potential at collocation point i
// of a unit surface density on panel j,
//   A_ij = scale · (I_j(x_i) − I_j(x_i′)),   I_j(x) = ∫_Tj 1/|x − y| dA_y,
// with x_i′ the mirror image of x_i in an optional grounded plane (method of images: the mirrored
// panel carries the opposite charge; Jackson, Classical Electrodynamics, sec. 2.1-2.2).
// scale is 1/(4π ε) for densities in C/m². The panel integrals are the exact ones near the panel
// and a 7-point Gauss rule far from it (server/src/engine/kernels/triangle.ts).
import { panelPotential, type Panels } from '../kernels/triangle';
import type { EntrySource } from './aca';

export interface MirrorPlane {
  axis: 0 | 1 | 2;
  at: number;
}

export function panelEntrySource(P: Panels, points: Float64Array, scale: number, mirror: MirrorPlane | null = null): EntrySource {
  const at = (i: number, j: number): number => {
    const x = points[3 * i], y = points[3 * i + 1], z = points[3 * i + 2];
    let v = panelPotential(P, j, x, y, z);
    if (mirror) {
      const m = [x, y, z];
      m[mirror.axis] = 2 * mirror.at - m[mirror.axis];
      v -= panelPotential(P, j, m[0], m[1], m[2]);
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

/** Every panel's vertex coordinates (9 per panel), for cluster boxes that cover whole panels. */
export function panelExtent(P: Panels): { coords: Float64Array; stride: number } {
  return { coords: P.vertices, stride: 9 };
}
