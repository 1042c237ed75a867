// Two-level preconditioner over clusters of the tree.
//
// Local level, block Jacobi: M₁ = blockdiag(A_ss) for a set of disjoint clusters s covering all
// unknowns, each block factored by LU with partial pivoting (Saad, "Iterative Methods for Sparse
// Linear Systems", 2003, sec. 10.1). The blocks hold every interaction inside a patch of the
// surface, so M₁⁻¹ removes the strong local coupling of the first-kind operator: the oscillating
// densities with small eigenvalues.
//
// Coarse level: one unknown per cluster, a constant density over it. With P the N×B matrix of
// cluster indicators, the Galerkin matrix A_c = Pᵀ A P (B×B) is summed straight from the stored
// blocks (a dense block adds its entries, a low-rank block U Vᵀ adds (PᵀU)(PᵀV)ᵀ), in one pass over
// the storage. The two levels are added (two-level additive Schwarz, Smith, Bjørstad and Gropp,
// "Domain Decomposition", 1996, ch. 5; for first-kind boundary integral operators, Heuer, Numer.
// Math. 2001):
//   M⁻¹ r = M₁⁻¹ r + P A_c⁻¹ Pᵀ r.
// Block Jacobi alone leaves the smooth densities spread over many clusters, whose eigenvalues
// span L_surface / L_cluster ~ √(N / blockSize), so its GMRES count grows with N; the coarse
// solve takes those out and keeps the count nearly flat (measured in scripts/bench-fast.ts).
import { forEachBlock, type HMatrix } from './hmatrix';

export interface BlockJacobi {
  /** Per block: first tree position and size. */
  start: Int32Array;
  size: Int32Array;
  /** LU factors (row-major, unit lower part implied) and pivots, per block. */
  lu: Float64Array[];
  pivot: Int32Array[];
  /** The coarse level: LU of A_c (B×B, B = number of blocks) and its pivots; null for one block. */
  coarse: { lu: Float64Array; pivot: Int32Array; work: Float64Array } | null;
}

/**
 * Chooses the largest clusters holding at most `blockSize` unknowns, gathers their diagonal blocks
 * from the H-matrix (dense blocks copied, low-rank blocks expanded) and factors them.
 */
export function buildBlockJacobi(H: HMatrix, blockSize: number, withCoarse = true): BlockJacobi {
  const t = H.tree;
  const starts: number[] = [];
  const sizes: number[] = [];
  const stack = [0];
  while (stack.length > 0) {
    const v = stack.pop()!;
    if (t.count[v] <= blockSize || t.left[v] < 0) {
      starts.push(t.start[v]);
      sizes.push(t.count[v]);
    } else stack.push(t.right[v], t.left[v]);
  }
  // Blocks in tree order; owner[p] = block holding tree position p.
  const idx = starts.map((_, k) => k).sort((a, b) => starts[a] - starts[b]);
  const start = Int32Array.from(idx.map((k) => starts[k]));
  const size = Int32Array.from(idx.map((k) => sizes[k]));
  const owner = new Int32Array(H.size);
  for (let k = 0; k < start.length; k++) owner.fill(k, start[k], start[k] + size[k]);
  const blocks = Array.from(size, (s) => new Float64Array(s * s));
  const inside = (r0: number, m: number, c0: number, n: number): number => {
    const k = owner[r0];
    return owner[c0] === k && owner[r0 + m - 1] === k && owner[c0 + n - 1] === k ? k : -1;
  };
  forEachBlock(H, (r0, m, c0, n, rank, values, off) => {
    const k = inside(r0, m, c0, n);
    if (k < 0) return;
    const s = size[k], B = blocks[k], ro = r0 - start[k], co = c0 - start[k];
    if (rank < 0) {
      for (let a = 0; a < m; a++) for (let c = 0; c < n; c++) B[(ro + a) * s + co + c] = values[off + a * n + c];
      return;
    }
    const vOff = off + rank * m;
    for (let l = 0; l < rank; l++) {
      for (let a = 0; a < m; a++) {
        const u = values[off + l * m + a];
        const o = (ro + a) * s + co;
        for (let c = 0; c < n; c++) B[o + c] += u * values[vOff + l * n + c];
      }
    }
  });
  const pivot = blocks.map((B, k) => luFactor(B, size[k]));
  const B = start.length;
  let coarse: BlockJacobi['coarse'] = null;
  if (withCoarse && B > 1) {
    const Ac = galerkinCoarse(H, owner, B);
    coarse = { lu: Ac, pivot: luFactor(Ac, B), work: new Float64Array(B) };
  }
  return { start, size, lu: blocks, pivot, coarse };
}

/** A_c = Pᵀ A P: A_c[I][J] = Σ_{i∈I, j∈J} A_ij, from the H-matrix's blocks (row-major B×B). */
function galerkinCoarse(H: HMatrix, owner: Int32Array, B: number): Float64Array {
  const Ac = new Float64Array(B * B);
  forEachBlock(H, (r0, m, c0, n, rank, values, off) => {
    if (rank < 0) {
      for (let a = 0; a < m; a++) {
        const o = owner[r0 + a] * B, d = off + a * n;
        for (let c = 0; c < n; c++) Ac[o + owner[c0 + c]] += values[d + c];
      }
      return;
    }
    // A low-rank block spans whole clusters on both sides (tree order): sum its factors per cluster.
    const I0 = owner[r0], I1 = owner[r0 + m - 1], J0 = owner[c0], J1 = owner[c0 + n - 1];
    const ni = I1 - I0 + 1, nj = J1 - J0 + 1, vOff = off + rank * m;
    const us = new Float64Array(rank * ni), vs = new Float64Array(rank * nj);
    for (let l = 0; l < rank; l++) {
      for (let a = 0; a < m; a++) us[l * ni + owner[r0 + a] - I0] += values[off + l * m + a];
      for (let c = 0; c < n; c++) vs[l * nj + owner[c0 + c] - J0] += values[vOff + l * n + c];
    }
    for (let I = 0; I < ni; I++) {
      for (let J = 0; J < nj; J++) {
        let s = 0;
        for (let l = 0; l < rank; l++) s += us[l * ni + I] * vs[l * nj + J];
        Ac[(I0 + I) * B + J0 + J] += s;
      }
    }
  });
  return Ac;
}

/** z = M⁻¹·r in tree order. */
export function applyBlockJacobi(P: BlockJacobi, r: Float64Array, z: Float64Array): void {
  for (let k = 0; k < P.start.length; k++) {
    const s0 = P.start[k], n = P.size[k];
    for (let i = 0; i < n; i++) z[s0 + i] = r[s0 + i];
    luSolve(P.lu[k], P.pivot[k], n, z, s0);
  }
  const c = P.coarse;
  if (!c) return;
  // z += P A_c⁻¹ Pᵀ r: sum r over each cluster, solve the coarse system, spread back as constants.
  const w = c.work, B = P.start.length;
  for (let k = 0; k < B; k++) {
    let s = 0;
    for (let i = P.start[k], e = i + P.size[k]; i < e; i++) s += r[i];
    w[k] = s;
  }
  luSolve(c.lu, c.pivot, B, w, 0);
  for (let k = 0; k < B; k++) {
    const v = w[k];
    for (let i = P.start[k], e = i + P.size[k]; i < e; i++) z[i] += v;
  }
}

/** Solves in place with LU factors from luFactor: x[at .. at+n) ← A⁻¹ x[at .. at+n). */
function luSolve(A: Float64Array, piv: Int32Array, n: number, x: Float64Array, at: number): void {
  for (let i = 0; i < n; i++) {
    const p = piv[i];
    if (p !== i) {
      const tmp = x[at + i];
      x[at + i] = x[at + p];
      x[at + p] = tmp;
    }
  }
  for (let i = 0; i < n; i++) {
    let s = x[at + i];
    const o = i * n;
    for (let j = 0; j < i; j++) s -= A[o + j] * x[at + j];
    x[at + i] = s;
  }
  for (let i = n - 1; i >= 0; i--) {
    let s = x[at + i];
    const o = i * n;
    for (let j = i + 1; j < n; j++) s -= A[o + j] * x[at + j];
    x[at + i] = s / A[o + i];
  }
}

/** In-place LU with partial pivoting of a row-major n×n matrix; returns the row swaps. */
export function luFactor(A: Float64Array, n: number): Int32Array {
  const piv = new Int32Array(n);
  for (let k = 0; k < n; k++) {
    let p = k, big = Math.abs(A[k * n + k]);
    for (let i = k + 1; i < n; i++) {
      const v = Math.abs(A[i * n + k]);
      if (v > big) {
        big = v;
        p = i;
      }
    }
    piv[k] = p;
    if (p !== k) {
      for (let j = 0; j < n; j++) {
        const t = A[k * n + j];
        A[k * n + j] = A[p * n + j];
        A[p * n + j] = t;
      }
    }
    const d = A[k * n + k];
    if (d === 0) continue;
    for (let i = k + 1; i < n; i++) {
      const f = (A[i * n + k] /= d);
      if (f === 0) continue;
      const oi = i * n, ok = k * n;
      for (let j = k + 1; j < n; j++) A[oi + j] -= f * A[ok + j];
    }
  }
  return piv;
}
