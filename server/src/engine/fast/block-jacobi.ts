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
// blocks (a dense block adds its entries, a low-rank block U Vᵀ adds U·(R V)ᵀ), in row bands that
// threads share, and A_c = R·A·Rᵀ from it. The levels are combined multiplicatively, coarse first (the
// hybrid two-level Schwarz method; Toselli and Widlund, "Domain Decomposition Methods", 2005,
// sec. 2.5.2, from memory):
//   M⁻¹ = Q + M₁⁻¹ (I − A Q),  Q = Rᵀ A_c⁻¹ R,
// which needs no product with A, since A·Q = (A·Rᵀ) A_c⁻¹ R. Block Jacobi alone leaves the smooth
// densities spread over many blocks, whose eigenvalues span L_surface / L_block ~ √(N / blockSize),
// so its GMRES count grows with N. Measured on a sphere beside a box, GMRES to 1e-8: 31 rounds at
// 4k panels with block Jacobi alone; with the coarse level 21 at 4k and 20 at 16k (an additive
// coarse level, M₁⁻¹ + Q, gave 23 and 31-36: it barely helped).
//
// With an arena (arena.ts), the factors and A·Rᵀ are kept there in single precision (the factors are
// computed in double, then rounded: M stays one fixed linear operator, a few 1e-8 from the double
// one, which is all a preconditioner needs), and every row of the solves is a dot product of the
// SIMD kernel (product-kernel.wat dot1).
import type { BlockPack, HMatrix } from './hmatrix';
import { arenaAlloc, arenaFloat32, arenaFloat64, kernelFor, type Arena, type ProductKernel } from './arena';

/**
 * What applying the two levels to a range of blocks needs: plain arrays (the large ones in shared
 * memory), so that worker threads can apply blocks too (fast/jobs.ts runPrecondition).
 */
export interface BlockSolveData {
  /** Per block: first tree position and size. */
  start: Int32Array;
  size: Int32Array;
  /** All blocks' LU factors one after another (row-major, unit lower part implied); block k from luOff[k]. */
  lu: Float64Array | Float32Array;
  luOff: Int32Array;
  /** Row swaps of all blocks, block k's at positions start[k] .. start[k] + size[k]. */
  pivot: Int32Array;
  /** The coarse level's A·Rᵀ (N×G) and the coarse cluster of each tree position; null without it. */
  coarse: { G: number; AR: Float32Array; owner: Int32Array } | null;
  /**
   * The arena's memory when lu (single precision) and AR are views into it: the vectors passed to
   * applyBlocks must then be too, and the rows go through the SIMD kernel.
   */
  memory: WebAssembly.Memory | null;
}

export interface BlockJacobi extends BlockSolveData {
  /** The coarse level's clusters and the LU of A_c; null when there is one cluster only. */
  coarseSolve: Coarse | null;
  arena: Arena | null;
}

/**
 * Applies the local level (and the coarse level's A·Rᵀ and Rᵀ parts) to blocks [k0, k1) of K
 * stacked vectors: zs ← M₁⁻¹ (rs − (A·Rᵀ)·ys) + Rᵀ·ys on those blocks' rows. ys holds the coarse
 * solutions A_c⁻¹·R·r (K×G stacked), rs and zs K×N stacked, tree order.
 */
export type BlockSolveRunner = (P: BlockSolveData, ys: Float64Array, rs: Float64Array, zs: Float64Array, K: number) => void;

/** Coarse clusters (runs of tree positions) and the LU of A_c = R A Rᵀ (G×G). */
interface Coarse {
  G: number;
  start: Int32Array;
  size: Int32Array;
  lu: Float64Array;
  pivot: Int32Array;
}

/**
 * What building the local level needs (plain arrays, the large ones shared, so that worker threads
 * can build blocks too: fast/jobs.ts runFactor). Block k of `lu` (size[k]², from luOff[k]) is
 * gathered from the stored blocks inside it (pairs pack, block at inside[2·insideStart[k]] ..
 * inside[2·insideStart[k + 1]]) and factored by luFactor, its row swaps to pivot[start[k] ..].
 */
export interface LocalBuild {
  packs: BlockPack[];
  insideStart: Int32Array;
  inside: Int32Array;
  lu: Float64Array;
  luOff: Int32Array;
  size: Int32Array;
  start: Int32Array;
  pivot: Int32Array;
}

/** Builds all blocks here or on several threads; false when it could not finish (a thread failed): the caller then builds them again here. */
export type BlockFactorRunner = (b: LocalBuild) => boolean;

export const factorHere: BlockFactorRunner = (b) => {
  factorBlocks(b, 0, b.size.length);
  return true;
};

/** Blocks [k0, k1) of the local level: gathered (dense blocks copied, low-rank blocks expanded), then factored. */
export function factorBlocks(b: LocalBuild, k0: number, k1: number): void {
  for (let k = k0; k < k1; k++) {
    const s = b.size[k], B = b.lu.subarray(b.luOff[k], b.luOff[k] + s * s);
    B.fill(0);
    for (let e = b.insideStart[k]; e < b.insideStart[k + 1]; e++) {
      const p = b.packs[b.inside[2 * e]], h = 6 * b.inside[2 * e + 1], H = p.heads, values = p.values;
      const r0 = H[h], m = H[h + 1], c0 = H[h + 2], n = H[h + 3], rank = H[h + 4], off = H[h + 5];
      const ro = r0 - b.start[k], co = c0 - b.start[k];
      if (rank < 0) {
        for (let a = 0; a < m; a++) for (let c = 0; c < n; c++) B[(ro + a) * s + co + c] = values[off + a * n + c];
        continue;
      }
      const vOff = off + rank * m;
      for (let l = 0; l < rank; l++) {
        for (let a = 0; a < m; a++) {
          const u = values[off + l * m + a];
          const o = (ro + a) * s + co;
          for (let c = 0; c < n; c++) B[o + c] += u * values[vOff + l * n + c];
        }
      }
    }
    b.pivot.set(luFactor(B, s), b.start[k]);
  }
}

/**
 * What summing A·Rᵀ needs (shared, for worker threads: fast/jobs.ts runCoarse): rows are cut into
 * bands (band t: rows bands[t] .. bands[t + 1]), each summed over every stored block that meets it,
 * so that no two threads write the same rows.
 */
export interface CoarseBuild {
  packs: BlockPack[];
  AR: Float32Array;
  owner: Int32Array;
  G: number;
  bands: Int32Array;
}

/** Sums all bands here or on several threads; false when a thread failed (the caller clears AR and sums here). */
export type CoarseRunner = (c: CoarseBuild) => boolean;

export const coarseHere: CoarseRunner = (c) => {
  coarseBands(c, 0, c.bands.length - 1);
  return true;
};

/** How the building work is spread over threads; each part defaults to the calling thread alone. */
export interface BuildWork {
  factor?: BlockFactorRunner;
  coarse?: CoarseRunner;
}

/**
 * Chooses the largest clusters holding at most `blockSize` unknowns, gathers their diagonal blocks
 * from the H-matrix and factors them; then the coarse level.
 */
export function buildBlockJacobi(H: HMatrix, blockSize: number, withCoarse = true, work: BuildWork = {}): BlockJacobi {
  // Blocks in tree order; owner[p] = block holding tree position p.
  const { start, size } = clusters(H, blockSize);
  const owner = new Int32Array(H.size);
  for (let k = 0; k < start.length; k++) owner.fill(k, start[k], start[k] + size[k]);
  const luOff = new Int32Array(new SharedArrayBuffer(4 * start.length));
  let total = 0;
  for (let k = 0; k < start.length; k++) {
    luOff[k] = total;
    total += size[k] * size[k];
  }
  // The stored blocks inside each block, grouped by block (counting sort).
  const insideStart = new Int32Array(new SharedArrayBuffer(4 * (start.length + 1)));
  const found: number[] = [];
  H.packs.forEach((p, q) => {
    for (let b = 0; b < p.count; b++) {
      const h = 6 * b, r0 = p.heads[h], m = p.heads[h + 1], c0 = p.heads[h + 2], n = p.heads[h + 3];
      const k = owner[r0];
      if (owner[c0] !== k || owner[r0 + m - 1] !== k || owner[c0 + n - 1] !== k) continue;
      found.push(k, q, b);
      insideStart[k + 1]++;
    }
  });
  for (let k = 0; k < start.length; k++) insideStart[k + 1] += insideStart[k];
  const inside = new Int32Array(new SharedArrayBuffer(4 * Math.max(1, (2 * found.length) / 3)));
  const next = insideStart.slice(0, start.length);
  for (let e = 0; e < found.length; e += 3) {
    const at = next[found[e]]++;
    inside[2 * at] = found[e + 1];
    inside[2 * at + 1] = found[e + 2];
  }
  const local: LocalBuild = {
    packs: H.packs,
    insideStart,
    inside,
    lu: new Float64Array(new SharedArrayBuffer(8 * total)),
    luOff,
    size: shared(size),
    start: shared(start),
    pivot: new Int32Array(new SharedArrayBuffer(4 * H.size)),
  };
  if (!(work.factor ?? factorHere)(local)) factorHere(local);
  const { lu, pivot } = local;
  let coarse: BlockSolveData['coarse'] = null;
  let coarseSolve: Coarse | null = null;
  let coarseInArena = true;
  if (withCoarse) {
    const cs = clusters(H, Math.max(blockSize, Math.ceil(H.size / MAX_COARSE)));
    if (cs.start.length > 1) ({ coarse, coarseSolve, inArena: coarseInArena } = buildCoarse(H, cs.start, cs.size, start, work.coarse ?? coarseHere));
  }
  // The factors go to the arena (rounded to single precision) when A·Rᵀ is there too, or there is none.
  const lu32 = H.arena && coarseInArena ? arenaCopy32(H.arena, lu) : null;
  const arena = lu32 ? H.arena : null;
  return { start, size, lu: lu32 ?? lu, luOff, pivot, coarse, coarseSolve, arena, memory: arena ? arena.memory : null };
}

function shared(a: Int32Array): Int32Array {
  const out = new Int32Array(new SharedArrayBuffer(a.byteLength));
  out.set(a);
  return out;
}

/** A single-precision copy in the arena; null past its 4 GiB. */
function arenaCopy32(arena: Arena, a: Float64Array): Float32Array | null {
  const at = arenaAlloc(arena, 4 * a.length);
  if (at < 0) return null;
  const out = arenaFloat32(arena, at, a.length);
  out.set(a);
  return out;
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

/**
 * A·Rᵀ from the stored blocks (a low-rank block U Vᵀ adds U·(R Vᵀ)ᵀ), in row bands (the local
 * level's blocks, `bandStart`, grouped into about 64 bands), then A_c = R·(A·Rᵀ).
 */
function buildCoarse(
  H: HMatrix,
  start: Int32Array,
  size: Int32Array,
  bandStart: Int32Array,
  runner: CoarseRunner,
): { coarse: NonNullable<BlockSolveData['coarse']>; coarseSolve: Coarse; inArena: boolean } {
  const G = start.length, N = H.size;
  const owner = new Int32Array(new SharedArrayBuffer(4 * N));
  for (let k = 0; k < G; k++) owner.fill(k, start[k], start[k] + size[k]);
  // In the arena when there is one (fresh arena space is zero), so that the SIMD kernel reaches it.
  const at = H.arena ? arenaAlloc(H.arena, 4 * N * G) : -1;
  const AR = at >= 0 ? arenaFloat32(H.arena!, at, N * G) : new Float32Array(new SharedArrayBuffer(4 * N * G));
  const step = Math.max(1, Math.ceil(bandStart.length / 64));
  const cuts: number[] = [];
  for (let k = 0; k < bandStart.length; k += step) cuts.push(bandStart[k]);
  cuts.push(N);
  const build: CoarseBuild = { packs: H.packs, AR, owner, G, bands: shared(Int32Array.from(cuts)) };
  if (!runner(build)) {
    AR.fill(0);
    coarseHere(build);
  }
  const Ac = new Float64Array(G * G);
  for (let p = 0; p < N; p++) {
    const I = owner[p] * G, o = p * G;
    for (let J = 0; J < G; J++) Ac[I + J] += AR[o + J];
  }
  return { coarse: { G, AR, owner }, coarseSolve: { G, start, size, lu: Ac, pivot: luFactor(Ac, G) }, inArena: at >= 0 };
}

/**
 * Bands [t0, t1) of a CoarseBuild: each band's rows of A·Rᵀ summed over the stored blocks that meet
 * them. `sums` keeps each low-rank block's R·V (its V rows summed per coarse cluster) for the
 * other bands the block meets, on this thread (pass the same map for all bands of one build).
 */
export function coarseBands(c: CoarseBuild, t0: number, t1: number, sums = new Map<number, Float64Array>()): void {
  const { AR, owner, G } = c;
  for (let t = t0; t < t1; t++) {
    const B0 = c.bands[t], B1 = c.bands[t + 1];
    for (let q = 0; q < c.packs.length; q++) {
      const p = c.packs[q];
      const H = p.heads, values = p.values;
      for (let b = 0; b < p.count; b++) {
        const h = 6 * b, r0 = H[h], m = H[h + 1];
        if (r0 >= B1 || r0 + m <= B0) continue;
        const c0 = H[h + 2], n = H[h + 3], rank = H[h + 4], off = H[h + 5];
        // The rows of this block inside the band: a0 .. a1.
        const a0 = Math.max(0, B0 - r0), a1 = Math.min(m, B1 - r0);
        if (rank < 0) {
          // Columns inside one coarse cluster (the usual case: a leaf within a larger cluster): row sums.
          const J = owner[c0];
          if (owner[c0 + n - 1] === J) {
            for (let a = a0; a < a1; a++) {
              let s = 0;
              for (let k = 0, d = off + a * n; k < n; k++) s += values[d + k];
              AR[(r0 + a) * G + J] += s;
            }
          } else {
            for (let a = a0; a < a1; a++) {
              const o = (r0 + a) * G, d = off + a * n;
              for (let k = 0; k < n; k++) AR[o + owner[c0 + k]] += values[d + k];
            }
          }
          continue;
        }
        // The block's columns span whole clusters J0..J1 (tree order): sum V's rows per cluster.
        const J0 = owner[c0], nj = owner[c0 + n - 1] - J0 + 1, vOff = off + rank * m, key = q * 65536 + b;
        let vs = sums.get(key);
        if (!vs) {
          vs = new Float64Array(rank * nj);
          for (let l = 0; l < rank; l++) for (let k = 0; k < n; k++) vs[l * nj + owner[c0 + k] - J0] += values[vOff + l * n + k];
          if (a0 > 0 || a1 < m) sums.set(key, vs);
        }
        // AR[r0 + a][J0 + J] += Σ_l U_l[a]·vs_l[J], one factor column at a time (contiguous rows).
        for (let l = 0; l < rank; l++) {
          const ou = off + l * m, ov = l * nj;
          for (let a = a0; a < a1; a++) {
            const u = values[ou + a], o = (r0 + a) * G + J0;
            for (let J = 0; J < nj; J++) AR[o + J] += u * vs[ov + J];
          }
        }
      }
    }
  }
}

/**
 * z = M⁻¹·r in tree order: with the coarse level, y = A_c⁻¹·R·r, r′ = r − (A·Rᵀ)·y,
 * z = M₁⁻¹·r′ + Rᵀ·y; without it, z = M₁⁻¹·r.
 */
export function applyBlockJacobi(P: BlockJacobi, r: Float64Array, z: Float64Array): void {
  applyBlockJacobiMany(P, [r], [z]);
}

/** The blocks on the calling thread. */
export const blockSolveHere: BlockSolveRunner = (P, ys, rs, zs, K) => applyBlocks(P, ys, rs, zs, K, 0, P.start.length);

/** zs[v] = M⁻¹·rs[v] for several vectors: coarse solves here, the blocks by `runner`. */
export function applyBlockJacobiMany(P: BlockJacobi, rs: Float64Array[], zs: Float64Array[], runner: BlockSolveRunner = blockSolveHere): void {
  const K = rs.length, N = P.pivot.length;
  const c = P.coarseSolve;
  const G = c ? c.G : 0;
  const { ys, rs: rsS, zs: zsS } = solveVectors(P, K);
  if (c) {
    rs.forEach((r, v) => {
      const o = v * G;
      for (let k = 0; k < G; k++) {
        let s = 0;
        for (let i = c.start[k], e = i + c.size[k]; i < e; i++) s += r[i];
        ys[o + k] = s;
      }
      luSolve(c.lu, 0, c.pivot, 0, G, ys, o);
    });
  }
  rs.forEach((r, v) => rsS.set(r, v * N));
  runner(P, ys, rsS, zsS, K);
  zs.forEach((z, v) => z.set(zsS.subarray(v * N, (v + 1) * N)));
}

const vectorAreas = new WeakMap<BlockJacobi, { ys: Float64Array; rs: Float64Array; zs: Float64Array }>();

/** The stacked vectors of one application (shared): in the arena when the factors are, kept per preconditioner and grown with K. */
function solveVectors(P: BlockJacobi, K: number): { ys: Float64Array; rs: Float64Array; zs: Float64Array } {
  const N = P.pivot.length, G = P.coarseSolve ? P.coarseSolve.G : 0;
  const nY = Math.max(1, K * G), nR = K * N;
  let a = vectorAreas.get(P);
  if (!a || a.ys.length < nY || a.rs.length < nR) {
    const arena = P.memory ? P.arena : null;
    const at = arena ? arenaAlloc(arena, 8 * (nY + 2 * nR)) : -1;
    const all = at >= 0 ? arenaFloat64(arena!, at, nY + 2 * nR) : new Float64Array(new SharedArrayBuffer(8 * (nY + 2 * nR)));
    // Past the arena's 4 GiB: the vectors stay outside it, so the rows go through plain JavaScript
    // (which reads the factors in the arena like any array).
    if (at < 0) P.memory = null;
    a = { ys: all.subarray(0, nY), rs: all.subarray(nY, nY + nR), zs: all.subarray(nY + nR, nY + 2 * nR) };
    vectorAreas.set(P, a);
  }
  return { ys: a.ys.subarray(0, nY), rs: a.rs.subarray(0, nR), zs: a.zs.subarray(0, nR) };
}

/** See BlockSolveRunner: blocks [k0, k1) of K stacked vectors (with the SIMD kernel when P.memory is set). */
export function applyBlocks(P: BlockSolveData, ys: Float64Array, rs: Float64Array, zs: Float64Array, K: number, k0: number, k1: number): void {
  const kernel = P.memory ? kernelFor(P.memory) : null;
  if (kernel) return applyBlocksKernel(P, ys, rs, zs, K, k0, k1, kernel);
  const N = P.pivot.length, c = P.coarse;
  for (let k = k0; k < k1; k++) {
    const s0 = P.start[k], n = P.size[k];
    for (let v = 0; v < K; v++) {
      const o = v * N;
      if (c) {
        const { G, AR } = c, yo = v * G;
        for (let p = s0; p < s0 + n; p++) {
          let s = 0;
          const a = p * G;
          for (let J = 0; J < G; J++) s += AR[a + J] * ys[yo + J];
          zs[o + p] = rs[o + p] - s;
        }
      } else for (let p = s0; p < s0 + n; p++) zs[o + p] = rs[o + p];
      luSolve(P.lu, P.luOff[k], P.pivot, s0, n, zs, o + s0);
      if (c) for (let p = s0; p < s0 + n; p++) zs[o + p] += ys[v * c.G + c.owner[p]];
    }
  }
}

/**
 * applyBlocks with every row a dot product of the SIMD kernel: lu (single precision) and A·Rᵀ are
 * views into the arena, and so are ys, rs and zs (their byte offsets are addresses there).
 */
function applyBlocksKernel(P: BlockSolveData, ys: Float64Array, rs: Float64Array, zs: Float64Array, K: number, k0: number, k1: number, kernel: ProductKernel): void {
  const N = P.pivot.length, c = P.coarse, lu = P.lu, piv = P.pivot, dot = kernel.dot1;
  const LU = lu.byteOffset, Z = zs.byteOffset;
  for (let k = k0; k < k1; k++) {
    const s0 = P.start[k], n = P.size[k], a0 = P.luOff[k];
    for (let v = 0; v < K; v++) {
      const o = v * N + s0;
      // z = r − (A·Rᵀ)·y on the block's rows.
      if (c) {
        const G = c.G, AR = c.AR.byteOffset, Y = ys.byteOffset + 8 * v * G;
        for (let i = 0; i < n; i++) zs[o + i] = rs[o + i] - dot(AR + 4 * (s0 + i) * G, Y, G);
      } else for (let i = 0; i < n; i++) zs[o + i] = rs[o + i];
      // LU solve in place (as luSolve): row swaps, then L (unit diagonal) forward, U backward.
      for (let i = 0; i < n; i++) {
        const p = piv[s0 + i];
        if (p !== i) {
          const t = zs[o + i];
          zs[o + i] = zs[o + p];
          zs[o + p] = t;
        }
      }
      const X = Z + 8 * o;
      for (let i = 1; i < n; i++) zs[o + i] -= dot(LU + 4 * (a0 + i * n), X, i);
      for (let i = n - 1; i >= 0; i--) {
        const d = a0 + i * n + i;
        zs[o + i] = (zs[o + i] - dot(LU + 4 * (d + 1), X + 8 * (i + 1), n - 1 - i)) / lu[d];
      }
      if (c) for (let i = 0; i < n; i++) zs[o + i] += ys[v * c.G + c.owner[s0 + i]];
    }
  }
}

/**
 * Solves in place with LU factors from luFactor: x[at .. at+n) ← A⁻¹ x[at .. at+n), the factors
 * at A[a ..] (row-major n×n) and the row swaps at piv[p .. p+n).
 */
function luSolve(A: Float64Array | Float32Array, a: number, piv: Int32Array, p0: number, n: number, x: Float64Array, at: number): void {
  for (let i = 0; i < n; i++) {
    const p = piv[p0 + i];
    if (p !== i) {
      const tmp = x[at + i];
      x[at + i] = x[at + p];
      x[at + p] = tmp;
    }
  }
  for (let i = 0; i < n; i++) {
    let s = x[at + i];
    const o = a + i * n;
    for (let j = 0; j < i; j++) s -= A[o + j] * x[at + j];
    x[at + i] = s;
  }
  for (let i = n - 1; i >= 0; i--) {
    let s = x[at + i];
    const o = a + i * n;
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
