// Adaptive cross approximation of one admissible matrix block (Bebendorf, "Approximation of
// boundary element matrices", Numer. Math. 86, 565-589, 2000), with partial pivoting:
//
//   A ≈ S_k = Σ_{l<k} u_l v_lᵀ, where v_k = R_k(i_k, :)/R_k(i_k, j_k) and u_k = R_k(:, j_k),
//   R_k = A − S_k the residual, j_k = argmax_j |R_k(i_k, j)|, i_{k+1} = argmax_i |u_k(i)| (unused rows).
//
// It stops when ‖u_k‖·‖v_k‖ ≤ ε·‖S_k‖_F, with ‖S_k‖_F² estimated by Σ_l ‖u_l‖²‖v_l‖², i.e. the
// exact update ‖S_k‖² = ‖S_{k−1}‖² + 2 Σ_{l<k} (u_l·u_k)(v_l·v_k) + ‖u_k‖²‖v_k‖² without its cross
// terms (common practice: they cost as much as the residual updates, half of ACA's own arithmetic,
// and change the estimate little because successive crosses are nearly orthogonal; the fast-vs-dense
// agreement is checked in tests/fast and scripts/bench-fast.ts).
// Only k rows and k columns of A are ever computed: O(k²(m + n)) work and O(k(m + n)) storage.
// The true error ran a few times ε in practice (methods.md), so callers pass a margin.

/** Computes matrix entries for the fast solver; indices are the caller's own (original) numbering. */
export interface EntrySource {
  /** out[k] = A(i, cols[c0 + k]) for k < n. */
  row(i: number, cols: Int32Array, c0: number, n: number, out: Float64Array): void;
  /** out[k] = A(rows[r0 + k], j) for k < m. */
  col(j: number, rows: Int32Array, r0: number, m: number, out: Float64Array): void;
}

/** A rank-k block u·vᵀ: U holds k columns of length m one after another, V k rows of length n. */
export interface LowRankFactors {
  rank: number;
  U: Float64Array;
  V: Float64Array;
}

/**
 * Approximates the block with rows order[r0 .. r0+m) and columns order[c0 .. c0+n).
 * Returns null when the rank needed would make the factors no smaller than the dense block.
 */
export function acaBlock(
  src: EntrySource,
  order: Int32Array,
  r0: number,
  m: number,
  c0: number,
  n: number,
  eps: number,
): LowRankFactors | null {
  const maxRank = Math.floor((m * n) / (m + n));
  // Factors in flat buffers that grow by doubling: U[l·m + a], V[l·n + b].
  let cap = Math.min(maxRank, 16);
  let U = new Float64Array(cap * m);
  let V = new Float64Array(cap * n);
  let k = 0;
  const usedRow = new Uint8Array(m);
  let norm2 = 0;
  let i = 0;
  let zeroRows = 0;
  const row = new Float64Array(n);
  const col = new Float64Array(m);
  while (k < maxRank) {
    usedRow[i] = 1;
    src.row(order[r0 + i], order, c0, n, row);
    for (let l = 0; l < k; l++) {
      const ui = U[l * m + i];
      if (ui === 0) continue;
      const o = l * n;
      for (let b = 0; b < n; b++) row[b] -= ui * V[o + b];
    }
    let j = 0, best = -1;
    for (let b = 0; b < n; b++) {
      const a = Math.abs(row[b]);
      if (a > best) {
        best = a;
        j = b;
      }
    }
    if (!(best > 0)) {
      // A row already reproduced exactly: try the next unused row; give up after a few.
      if (++zeroRows > 3 && k > 0) break;
      i = nextUnused(usedRow, i);
      if (i < 0) break;
      continue;
    }
    if (k === cap) {
      cap = Math.min(maxRank, 2 * cap);
      const U2 = new Float64Array(cap * m), V2 = new Float64Array(cap * n);
      U2.set(U);
      V2.set(V);
      U = U2;
      V = V2;
    }
    const inv = 1 / row[j];
    const ov = k * n, ou = k * m;
    for (let b = 0; b < n; b++) V[ov + b] = row[b] * inv;
    src.col(order[c0 + j], order, r0, m, col);
    for (let l = 0; l < k; l++) {
      const vj = V[l * n + j];
      if (vj === 0) continue;
      const o = l * m;
      for (let a = 0; a < m; a++) col[a] -= vj * U[o + a];
    }
    U.set(col, ou);
    let nu2 = 0, nv2 = 0;
    for (let a = 0; a < m; a++) nu2 += col[a] * col[a];
    for (let b = 0; b < n; b++) nv2 += V[ov + b] * V[ov + b];
    norm2 += nu2 * nv2;
    k++;
    if (nu2 * nv2 <= eps * eps * norm2) break;
    // Next pivot row: the largest entry of the new column among the rows not used yet.
    let next = -1, big = -1;
    for (let a = 0; a < m; a++) {
      if (usedRow[a]) continue;
      const x = Math.abs(col[a]);
      if (x > big) {
        big = x;
        next = a;
      }
    }
    if (next < 0) break;
    i = next;
  }
  if (k >= maxRank) return null;
  return { rank: k, U: U.subarray(0, k * m), V: V.subarray(0, k * n) };
}

function nextUnused(used: Uint8Array, from: number): number {
  for (let a = 1; a <= used.length; a++) {
    const i = (from + a) % used.length;
    if (!used[i]) return i;
  }
  return -1;
}
