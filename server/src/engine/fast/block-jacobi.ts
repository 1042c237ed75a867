// Two-level preconditioner over clusters of the tree.
//
// Local level, block Jacobi: M₁ = blockdiag(A_ss) for a set of disjoint clusters s covering all
// unknowns, each block factored by LU with partial pivoting (Saad, "Iterative Methods for Sparse
// Linear Systems", 2003, sec. 10.1). The blocks hold every interaction inside a patch of the
// surface, so M₁⁻¹ removes the strong local coupling of the first-kind operator: the oscillating
// densities with small eigenvalues.
//
// Coarse level: one unknown per coarse cluster (at most MAX_COARSE of them), a constant density
// over it. With R summing a vector over each cluster, A·Rᵀ (N×G) is summed straight from the stored
// blocks (a dense block adds its entries, a low-rank block U Vᵀ adds U·(R V)ᵀ) in one pass over the
// storage, and A_c = R·A·Rᵀ from it. The levels are combined multiplicatively, coarse first (the
// hybrid two-level Schwarz method; Toselli and Widlund, "Domain Decomposition Methods", 2005,
// sec. 2.5.2, from memory):
//   M⁻¹ = Q + M₁⁻¹ (I − A Q),  Q = Rᵀ A_c⁻¹ R,
// which needs no product with A, since A·Q = (A·Rᵀ) A_c⁻¹ R. Block Jacobi alone leaves the smooth
// densities spread over many blocks, whose eigenvalues span L_surface / L_block ~ √(N / blockSize),
// so its GMRES count grows with N. Measured on a sphere beside a box, GMRES to 1e-8: 31 rounds at
// 4k panels with block Jacobi alone; with the coarse level 21 at 4k and 20 at 16k (an additive
// coarse level, M₁⁻¹ + Q, gave 23 and 31-36: it barely helped).
import { forEachBlock, type HMatrix } from './hmatrix';

export interface BlockJacobi {
  /** Per block: first tree position and size. */
  start: Int32Array;
  size: Int32Array;
  /** LU factors (row-major, unit lower part implied) and pivots, per block. */
  lu: Float64Array[];
  pivot: Int32Array[];
  /** The coarse level; null when there is one cluster only. */
  coarse: Coarse | null;
}

/**
 * Coarse clusters (runs of tree positions), LU of A_c = R A Rᵀ (G×G) and A·Rᵀ (N×G, single
 * precision): R sums a vector over each cluster, Rᵀ spreads one value per cluster.
 */
interface Coarse {
  G: number;
  start: Int32Array;
  size: Int32Array;
  lu: Float64Array;
  pivot: Int32Array;
  AR: Float32Array;
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
  let coarse: Coarse | null = null;
  if (withCoarse) {
    const cs = clusters(H, Math.max(blockSize, Math.ceil(H.size / MAX_COARSE)));
    if (cs.start.length > 1) coarse = buildCoarse(H, cs.start, cs.size);
  }
  return { start, size, lu: blocks, pivot, coarse };
}

/** Most coarse clusters, about: A·Rᵀ holds N × G numbers (100 MB at 100k panels) and costs N·G per step. */
const MAX_COARSE = 256;

/** The largest tree clusters with at most `most` unknowns, in tree order. */
function clusters(H: HMatrix, most: number): { start: Int32Array; size: Int32Array } {
  const t = H.tree;
  const starts: number[] = [];
  const sizes: number[] = [];
  const stack = [0];
  while (stack.length > 0) {
    const v = stack.pop()!;
    if (t.count[v] <= most || t.left[v] < 0) {
      starts.push(t.start[v]);
      sizes.push(t.count[v]);
    } else stack.push(t.right[v], t.left[v]);
  }
  const idx = starts.map((_, k) => k).sort((a, b) => starts[a] - starts[b]);
  return { start: Int32Array.from(idx.map((k) => starts[k])), size: Int32Array.from(idx.map((k) => sizes[k])) };
}

/** A·Rᵀ from the stored blocks (a low-rank block U Vᵀ adds U·(R Vᵀ)ᵀ), then A_c = R·(A·Rᵀ). */
function buildCoarse(H: HMatrix, start: Int32Array, size: Int32Array): Coarse {
  const G = start.length, N = H.size;
  const owner = new Int32Array(N);
  for (let k = 0; k < G; k++) owner.fill(k, start[k], start[k] + size[k]);
  const AR = new Float32Array(N * G);
  forEachBlock(H, (r0, m, c0, n, rank, values, off) => {
    if (rank < 0) {
      for (let a = 0; a < m; a++) {
        const o = (r0 + a) * G, d = off + a * n;
        for (let c = 0; c < n; c++) AR[o + owner[c0 + c]] += values[d + c];
      }
      return;
    }
    // The block's columns span whole clusters J0..J1 (tree order): sum V's rows per cluster.
    const J0 = owner[c0], nj = owner[c0 + n - 1] - J0 + 1, vOff = off + rank * m;
    const vs = new Float64Array(rank * nj);
    for (let l = 0; l < rank; l++) for (let c = 0; c < n; c++) vs[l * nj + owner[c0 + c] - J0] += values[vOff + l * n + c];
    for (let a = 0; a < m; a++) {
      const o = (r0 + a) * G + J0;
      for (let J = 0; J < nj; J++) {
        let s = 0;
        for (let l = 0; l < rank; l++) s += values[off + l * m + a] * vs[l * nj + J];
        AR[o + J] += s;
      }
    }
  });
  const Ac = new Float64Array(G * G);
  for (let p = 0; p < N; p++) {
    const I = owner[p] * G, o = p * G;
    for (let J = 0; J < G; J++) Ac[I + J] += AR[o + J];
  }
  return { G, start, size, lu: Ac, pivot: luFactor(Ac, G), AR };
}

/**
 * z = M⁻¹·r in tree order: with the coarse level, y = A_c⁻¹·R·r, r′ = r − (A·Rᵀ)·y,
 * z = M₁⁻¹·r′ + Rᵀ·y; without it, z = M₁⁻¹·r.
 */
export function applyBlockJacobi(P: BlockJacobi, r: Float64Array, z: Float64Array): void {
  applyBlockJacobiMany(P, [r], [z]);
}

/** zs[v] = M⁻¹·rs[v] for several vectors, with one pass over A·Rᵀ for each pair of them. */
export function applyBlockJacobiMany(P: BlockJacobi, rs: Float64Array[], zs: Float64Array[]): void {
  const c = P.coarse;
  const K = rs.length;
  let rr = rs;
  let ys: Float64Array[] = [];
  if (c) {
    const { G, AR } = c;
    ys = rs.map((r) => {
      const y = new Float64Array(G);
      for (let k = 0; k < G; k++) {
        let s = 0;
        for (let i = c.start[k], e = i + c.size[k]; i < e; i++) s += r[i];
        y[k] = s;
      }
      luSolve(c.lu, c.pivot, G, y, 0);
      return y;
    });
    rr = rs.map((r) => Float64Array.from(r));
    const N = rr[0].length;
    for (let v = 0; v < K; v += 2) {
      if (v + 1 < K) {
        const y1 = ys[v], y2 = ys[v + 1], r1 = rr[v], r2 = rr[v + 1];
        for (let p = 0; p < N; p++) {
          let s1 = 0, s2 = 0;
          const o = p * G;
          for (let J = 0; J < G; J++) {
            const a = AR[o + J];
            s1 += a * y1[J];
            s2 += a * y2[J];
          }
          r1[p] -= s1;
          r2[p] -= s2;
        }
      } else {
        const y1 = ys[v], r1 = rr[v];
        for (let p = 0; p < N; p++) {
          let s1 = 0;
          const o = p * G;
          for (let J = 0; J < G; J++) s1 += AR[o + J] * y1[J];
          r1[p] -= s1;
        }
      }
    }
  }
  for (let v = 0; v < K; v++) {
    const z = zs[v], r = rr[v];
    for (let k = 0; k < P.start.length; k++) {
      const s0 = P.start[k], n = P.size[k];
      for (let i = 0; i < n; i++) z[s0 + i] = r[s0 + i];
      luSolve(P.lu[k], P.pivot[k], n, z, s0);
    }
    if (!c) continue;
    const y = ys[v];
    for (let k = 0; k < c.G; k++) {
      const val = y[k];
      for (let i = c.start[k], e = i + c.size[k]; i < e; i++) z[i] += val;
    }
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
