// Block-Jacobi preconditioning of a dense system (Saad, Iterative Methods for Sparse Linear Systems,
// 2nd ed., sec. 10.1): M = the diagonal blocks of A over groups of unknowns, each factored by LU, so
// M⁻¹·r solves every block on its own. With groups of nearby panels the blocks hold the strongest
// (near-field) couplings, and GMRES needs a fraction of the iterations of a plain diagonal scaling.
// Generic: the caller chooses the groups (any partition of 0..n−1).
import { luFactor, luSolve, type LuFactors } from './dense-lu';

export function blockJacobi(n: number, matrix: Float64Array, groups: readonly Int32Array[]): (r: Float64Array, z: Float64Array) => void {
  const factors: LuFactors[] = groups.map((g) => {
    const m = g.length;
    const a = new Float64Array(m * m);
    for (let i = 0; i < m; i++) for (let j = 0; j < m; j++) a[i * m + j] = matrix[g[i] * n + g[j]];
    return luFactor(m, a)!;
  });
  return (r, z) => {
    groups.forEach((g, k) => {
      const f = factors[k];
      const b = new Float64Array(g.length);
      for (let i = 0; i < g.length; i++) b[i] = r[g[i]];
      if (f.singular) {
        for (let i = 0; i < g.length; i++) z[g[i]] = b[i];
        return;
      }
      const x = luSolve(f, b);
      for (let i = 0; i < g.length; i++) z[g[i]] = x[i];
    });
  };
}

/**
 * Groups of at most `size` points that lie close together: points are ordered by a label (e.g. the
 * electrode) and then along a Morton (Z-order) curve of their coordinates, and cut into runs.
 */
export function spatialGroups(points: Float64Array, labels: ArrayLike<number>, size: number): Int32Array[] {
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
  const order = Array.from({ length: n }, (_, i) => i).sort((a, b) => key[a] - key[b]);
  const groups: Int32Array[] = [];
  for (let s = 0; s < n; s += size) groups.push(Int32Array.from(order.slice(s, s + size)));
  return groups;
}
