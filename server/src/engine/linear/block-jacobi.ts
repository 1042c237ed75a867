// Block-Jacobi preconditioning of a dense system (Saad, Iterative Methods for Sparse Linear Systems,
// 2nd ed., sec. 10.1): M = the diagonal blocks of A over groups of unknowns, each factored by LU, so
// M⁻¹·r solves every block on its own. With groups of nearby panels the blocks hold the strongest
// (near-field) couplings, and GMRES needs a fraction of the iterations of a plain diagonal scaling.
// Generic: the caller chooses the groups (any partition of 0..n−1).
import { luFactor, luSolveInPlace, type LuFactors } from './dense-lu';

export function blockJacobi(n: number, matrix: Float64Array, groups: readonly Int32Array[]): (r: Float64Array, z: Float64Array) => void {
  const factors: LuFactors[] = groups.map((g) => {
    const m = g.length;
    const a = new Float64Array(m * m);
    for (let i = 0; i < m; i++) for (let j = 0; j < m; j++) a[i * m + j] = matrix[g[i] * n + g[j]];
    return luFactor(m, a)!;
  });
  const b = new Float64Array(Math.max(0, ...groups.map((g) => g.length)));
  return (r, z) => {
    for (let k = 0; k < groups.length; k++) {
      const g = groups[k], f = factors[k];
      if (f.singular) {
        for (let i = 0; i < g.length; i++) z[g[i]] = r[g[i]];
        continue;
      }
      const x = b.subarray(0, g.length);
      for (let i = 0; i < g.length; i++) x[i] = r[g[i]];
      luSolveInPlace(f, x);
      for (let i = 0; i < g.length; i++) z[g[i]] = x[i];
    }
  };
}

/**
 * Groups of at most `size` points that lie close together: runs of spatialOrder (points ordered by
 * a label, e.g. the electrode, and then along a Morton curve).
 */
export function spatialGroups(points: Float64Array, labels: ArrayLike<number>, size: number): Int32Array[] {
  return cutRuns(spatialOrder(points, labels), size);
}

/** Consecutive runs of at most `size` entries of an order. */
export function cutRuns(order: Int32Array, size: number): Int32Array[] {
  const groups: Int32Array[] = [];
  for (let s = 0; s < order.length; s += size) groups.push(order.slice(s, s + size));
  return groups;
}

/**
 * The points ordered by a label (e.g. the electrode) and then along a Morton (Z-order) curve of their
 * coordinates, so that runs of the order are groups of nearby points (Samet, Foundations of
 * Multidimensional and Metric Data Structures, 2006, sec. 2.1.1.2; from memory).
 */
export function spatialOrder(points: Float64Array, labels: ArrayLike<number>): Int32Array {
  const n = points.length / 3;
  const min = [Infinity, Infinity, Infinity], max = [-Infinity, -Infinity, -Infinity];
  for (let i = 0; i < n; i++) {
    for (let c = 0; c < 3; c++) {
      min[c] = Math.min(min[c], points[3 * i + c]);
      max[c] = Math.max(max[c], points[3 * i + c]);
    }
  }
  const span = Math.max(max[0] - min[0], max[1] - min[1], max[2] - min[2]) || 1;
  const key = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    let code = 0;
    const q = [0, 1, 2].map((c) => Math.min(1023, Math.floor(((points[3 * i + c] - min[c]) / span) * 1024)));
    for (let bit = 9; bit >= 0; bit--) for (let c = 0; c < 3; c++) code = code * 2 + ((q[c] >> bit) & 1);
    key[i] = labels[i] * 2 ** 30 + code;
  }
  return Int32Array.from({ length: n }, (_, i) => i).sort((a, b) => key[a] - key[b]);
}
