// Block-Jacobi preconditioner over clusters of the tree: M = blockdiag(A_ss) for a set of disjoint
// clusters s covering all unknowns, each block factored by LU with partial pivoting (Saad,
// "Iterative Methods for Sparse Linear Systems", 2003, sec. 10.1). The blocks hold every
// interaction inside a patch of the surface, near and far, so M⁻¹ removes the strong local
// coupling of the first-kind operator and the GMRES iteration count stays nearly flat as N grows
// (measured in scripts/bench-fast.ts).
import type { HMatrix } from './hmatrix';

export interface BlockJacobi {
  /** Per block: first tree position and size. */
  start: Int32Array;
  size: Int32Array;
  /** LU factors (row-major, unit lower part implied) and pivots, per block. */
  lu: Float64Array[];
  pivot: Int32Array[];
}

/**
 * Chooses the largest clusters holding at most `blockSize` unknowns, gathers their diagonal blocks
 * from the H-matrix (dense blocks copied, low-rank blocks expanded) and factors them.
 */
export function buildBlockJacobi(H: HMatrix, blockSize: number): BlockJacobi {
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
  for (const b of H.dense) {
    const k = inside(b.r0, b.m, b.c0, b.n);
    if (k < 0) continue;
    const s = size[k], B = blocks[k], ro = b.r0 - start[k], co = b.c0 - start[k];
    for (let a = 0; a < b.m; a++) for (let c = 0; c < b.n; c++) B[(ro + a) * s + co + c] = b.data[a * b.n + c];
  }
  for (const b of H.lowRank) {
    const k = inside(b.r0, b.m, b.c0, b.n);
    if (k < 0) continue;
    const s = size[k], B = blocks[k], ro = b.r0 - start[k], co = b.c0 - start[k];
    for (let l = 0; l < b.rank; l++) {
      for (let a = 0; a < b.m; a++) {
        const u = b.U[l * b.m + a];
        const o = (ro + a) * s + co;
        for (let c = 0; c < b.n; c++) B[o + c] += u * b.V[l * b.n + c];
      }
    }
  }
  const pivot = blocks.map((B, k) => luFactor(B, size[k]));
  return { start, size, lu: blocks, pivot };
}

/** z = M⁻¹·r in tree order. */
export function applyBlockJacobi(P: BlockJacobi, r: Float64Array, z: Float64Array): void {
  for (let k = 0; k < P.start.length; k++) {
    const s0 = P.start[k], n = P.size[k], A = P.lu[k], piv = P.pivot[k];
    for (let i = 0; i < n; i++) z[s0 + i] = r[s0 + i];
    for (let i = 0; i < n; i++) {
      const p = piv[i];
      if (p !== i) {
        const tmp = z[s0 + i];
        z[s0 + i] = z[s0 + p];
        z[s0 + p] = tmp;
      }
    }
    for (let i = 0; i < n; i++) {
      let s = z[s0 + i];
      for (let j = 0; j < i; j++) s -= A[i * n + j] * z[s0 + j];
      z[s0 + i] = s;
    }
    for (let i = n - 1; i >= 0; i--) {
      let s = z[s0 + i];
      for (let j = i + 1; j < n; j++) s -= A[i * n + j] * z[s0 + j];
      z[s0 + i] = s / A[i * n + i];
    }
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
