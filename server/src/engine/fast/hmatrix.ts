// A hierarchical matrix: the panel matrix split into blocks by a cluster tree, far blocks stored as
// low-rank factors from adaptive cross approximation, near blocks stored dense (their entries come
// from the exact panel integrals). Blocks are packed into flat shared arrays in single precision,
// so that worker threads read them without a copy and the product streams through memory.
//
// Why this and not a treecode: a solve needs one product per GMRES iteration and one set of
// iterations per electrode, so the product must be cheap and accurate (1e-7 or better, so that the
// charges agree with dense LU to 1e-5). A treecode recomputes every far interaction at every
// product; at that accuracy its expansions are large (hundreds of proxy points per cluster, Wang,
// Krasny and Tlupova 2020). Hierarchical blocks compressed by ACA (Bebendorf 2000) pay for the
// entries once and make each product a pass over O(N log N) stored numbers, with the tolerance set
// per block. The same near blocks then give the block-diagonal preconditioner for free.
//
// Block partition: a pair of clusters (s, t) is admissible (far) when
//   min(diam s, diam t) ≤ η · dist(s, t)
// (standard admissibility, Hackbusch, "Hierarchical Matrices", 2015, sec. 4.2); otherwise the pair
// is split, and a pair of leaves is stored dense. Storage and work are O(N log N) for fixed ε.
import { acaBlock, type EntrySource } from './aca';
import { arenaAlloc, arenaFloat32, arenaInt32, type Arena, type ProductKernel } from './arena';
import { boxDiameter, boxDistance, type ClusterTree } from './cluster-tree';

export interface DenseBlock {
  r0: number;
  m: number;
  c0: number;
  n: number;
  /** Row-major m×n. */
  data: Float64Array;
}
export interface LowRankBlock {
  r0: number;
  m: number;
  c0: number;
  n: number;
  rank: number;
  /** rank columns of length m, one after another. */
  U: Float64Array;
  /** rank rows of length n, one after another. */
  V: Float64Array;
}

/** A pair of clusters to be filled: dense (near) or low-rank (far). Positions are in tree order. */
export interface BlockTask {
  r0: number;
  m: number;
  c0: number;
  n: number;
  far: boolean;
}

/**
 * Blocks packed in flat shared arrays. Per block, 6 numbers in `heads`: r0, m, c0, n, rank (−1 for
 * a dense block) and the offset of its numbers in `values`: a dense block row-major (m·n), a
 * low-rank one U (rank columns of length m) then V (rank rows of length n).
 *
 * Single precision throughout: its rounding (6e-8 relative) sits below the ACA tolerance, and it
 * halves the storage and the memory traffic of every product.
 */
export interface BlockPack {
  heads: Int32Array;
  count: number;
  values: Float32Array;
  /** True when heads and values are views into the H-matrix's arena (their byte offsets are addresses there). */
  wasm: boolean;
}

export interface HMatrix {
  size: number;
  tree: ClusterTree;
  packs: BlockPack[];
  /** The shared memory the packs live in, for the SIMD kernel (arena.ts); null: plain shared buffers. */
  arena: Arena | null;
}

/** Splits the matrix into near and far blocks. Rows and columns share one tree (a square system). */
export function partitionBlocks(tree: ClusterTree, eta: number): BlockTask[] {
  const tasks: BlockTask[] = [];
  const diam = new Float64Array(tree.nodeCount);
  for (let v = 0; v < tree.nodeCount; v++) diam[v] = boxDiameter(tree, v);
  const stack: number[] = [0, 0];
  while (stack.length > 0) {
    const t = stack.pop()!;
    const s = stack.pop()!;
    const rs = tree.start[s], m = tree.count[s], cs = tree.start[t], n = tree.count[t];
    if (s !== t && Math.min(diam[s], diam[t]) <= eta * boxDistance(tree, s, tree, t)) {
      tasks.push({ r0: rs, m, c0: cs, n, far: true });
      continue;
    }
    const sLeaf = tree.left[s] < 0, tLeaf = tree.left[t] < 0;
    if (sLeaf && tLeaf) {
      tasks.push({ r0: rs, m, c0: cs, n, far: false });
    } else if (sLeaf) {
      stack.push(s, tree.left[t], s, tree.right[t]);
    } else if (tLeaf) {
      stack.push(tree.left[s], t, tree.right[s], t);
    } else {
      const sl = tree.left[s], sr = tree.right[s], tl = tree.left[t], tr = tree.right[t];
      stack.push(sl, tl, sl, tr, sr, tl, sr, tr);
    }
  }
  return tasks;
}

/** Fills one block: a dense block, or ACA factors (dense when ACA would not save storage). */
export function fillBlock(src: EntrySource, order: Int32Array, task: BlockTask, eps: number): DenseBlock | LowRankBlock {
  const { r0, m, c0, n } = task;
  // Blocks that a rank of 16 would not shrink are filled dense at once: far blocks need ranks of
  // 12-16 at this tolerance, so ACA on them nearly always ran to its limit first and was thrown
  // away (measured at 10k panels: 99% of 8,300 tries on blocks with a side of 19-20 panels, a
  // fifth of ACA's time; 3% on sides of 38-39).
  if (task.far && (m * n) / (m + n) >= 16) {
    const f = acaBlock(src, order, r0, m, c0, n, eps);
    if (f) return { r0, m, c0, n, rank: f.rank, U: f.U, V: f.V };
  }
  const data = new Float64Array(m * n);
  const row = new Float64Array(n);
  for (let a = 0; a < m; a++) {
    src.row(order[r0 + a], order, c0, n, row);
    data.set(row, a * n);
  }
  return { r0, m, c0, n, data };
}

export function isLowRank(b: DenseBlock | LowRankBlock): b is LowRankBlock {
  return (b as LowRankBlock).U !== undefined;
}

/**
 * Packs blocks as they come: each pack is gathered in a private buffer of about `capacity`
 * numbers, then stored at its exact size in the arena (or, without one or past its 4 GiB, in a
 * shared buffer of its own).
 */
export class PackWriter {
  readonly packs: BlockPack[] = [];
  private heads: Int32Array;
  private values: Float32Array;
  private count = 0;
  private used = 0;

  constructor(
    private readonly arena: Arena | null = null,
    private readonly capacity = 1 << 22,
    private readonly maxBlocks = 1 << 14,
  ) {
    this.heads = new Int32Array(6 * maxBlocks);
    this.values = new Float32Array(capacity);
  }

  add(b: DenseBlock | LowRankBlock): void {
    const low = isLowRank(b);
    const size = low ? b.rank * (b.m + b.n) : b.m * b.n;
    if (this.count === this.maxBlocks || this.used + size > this.values.length) {
      this.close();
      if (size > this.values.length) this.values = new Float32Array(size);
    }
    const h = 6 * this.count++;
    this.heads[h] = b.r0;
    this.heads[h + 1] = b.m;
    this.heads[h + 2] = b.c0;
    this.heads[h + 3] = b.n;
    this.heads[h + 4] = low ? b.rank : -1;
    this.heads[h + 5] = this.used;
    if (low) {
      this.values.set(b.U, this.used);
      this.values.set(b.V, this.used + b.U.length);
    } else this.values.set(b.data, this.used);
    this.used += size;
  }

  finish(): BlockPack[] {
    this.close();
    return this.packs;
  }

  private close(): void {
    if (this.count === 0) return;
    this.packs.push(storePack(this.arena, this.heads.subarray(0, 6 * this.count), this.count, this.values.subarray(0, this.used)));
    this.count = 0;
    this.used = 0;
    if (this.values.length > this.capacity) this.values = new Float32Array(this.capacity);
  }
}

function storePack(arena: Arena | null, heads: Int32Array, count: number, values: Float32Array): BlockPack {
  if (arena) {
    const h = arenaAlloc(arena, heads.byteLength);
    const v = h < 0 ? -1 : arenaAlloc(arena, values.byteLength);
    if (v >= 0) {
      const H = arenaInt32(arena, h, heads.length), V = arenaFloat32(arena, v, values.length);
      H.set(heads);
      V.set(values);
      return { heads: H, count, values: V, wasm: true };
    }
  }
  return { heads: sharedCopy(heads), count, values: sharedCopy(values), wasm: false };
}

function sharedCopy<T extends Float32Array | Int32Array>(a: T): T {
  const C = a.constructor as new (b: SharedArrayBuffer) => T;
  const out = new C(new SharedArrayBuffer(a.byteLength));
  (out as unknown as { set(x: T): void }).set(a);
  return out;
}

/**
 * ys[v·n + i] += Σ_j A_ij · xs[v·n + j] over blocks [b0, b1) of one pack, for the K vectors stacked
 * in xs and ys (tree order). One pass over the stored numbers serves all K vectors, four or two at
 * a time in the inner loops (each stored number is loaded once per group).
 *
 * With `kernel` (which the caller passes only when xs and ys are views into the arena too), a pack
 * in the arena goes through the SIMD kernel, four or two vectors a pass; the rest in JavaScript.
 */
export function packProduct(p: BlockPack, b0: number, b1: number, xs: Float64Array, ys: Float64Array, K: number, n: number, kernel?: ProductKernel | null): void {
  if (kernel && p.wasm) {
    const H = p.heads.byteOffset, A = p.values.byteOffset, X = xs.byteOffset, Y = ys.byteOffset, step = 8 * n;
    let v = 0;
    for (; v + 3 < K; v += 4) {
      const o = v * step;
      kernel.blocks4(H, b0, b1, A, X + o, Y + o, X + o + step, Y + o + step, X + o + 2 * step, Y + o + 2 * step, X + o + 3 * step, Y + o + 3 * step);
    }
    for (; v + 1 < K; v += 2) kernel.blocks2(H, b0, b1, A, X + v * step, Y + v * step, X + (v + 1) * step, Y + (v + 1) * step);
    if (v < K) kernel.blocks1(H, b0, b1, A, X + v * step, Y + v * step);
    return;
  }
  let v = 0;
  for (; v + 3 < K; v += 4) packProductQuad(p, b0, b1, xs, ys, v * n, n);
  if (v + 1 < K) {
    packProductPair(p, b0, b1, xs, ys, v * n, (v + 1) * n);
    v += 2;
  }
  if (v < K) packProductOne(p, b0, b1, xs, ys, v * n);
}

/** One vector at offset o of xs and ys. */
function packProductOne(p: BlockPack, b0: number, b1: number, xs: Float64Array, ys: Float64Array, o: number): void {
  const H = p.heads, A = p.values;
  for (let b = b0; b < b1; b++) {
    const h = 6 * b;
    const r0 = H[h] + o, m = H[h + 1], c0 = H[h + 2] + o, nc = H[h + 3], rank = H[h + 4], off = H[h + 5];
    if (rank < 0) {
      for (let a = 0; a < m; a++) {
        const ro = off + a * nc;
        let s = 0;
        for (let k = 0; k < nc; k++) s += A[ro + k] * xs[c0 + k];
        ys[r0 + a] += s;
      }
    } else {
      const vOff = off + rank * m;
      for (let l = 0; l < rank; l++) {
        const ov = vOff + l * nc, ou = off + l * m;
        let t = 0;
        for (let k = 0; k < nc; k++) t += A[ov + k] * xs[c0 + k];
        for (let a = 0; a < m; a++) ys[r0 + a] += t * A[ou + a];
      }
    }
  }
}

/** Four vectors at offsets o, o + n, o + 2n, o + 3n of xs and ys, in one pass. */
function packProductQuad(p: BlockPack, b0: number, b1: number, xs: Float64Array, ys: Float64Array, o: number, n: number): void {
  const H = p.heads, A = p.values;
  for (let b = b0; b < b1; b++) {
    const h = 6 * b;
    const r0 = H[h], m = H[h + 1], c0 = H[h + 2], nc = H[h + 3], rank = H[h + 4], off = H[h + 5];
    const x1 = o + c0, x2 = x1 + n, x3 = x2 + n, x4 = x3 + n;
    const y1 = o + r0, y2 = y1 + n, y3 = y2 + n, y4 = y3 + n;
    if (rank < 0) {
      for (let a = 0; a < m; a++) {
        const ro = off + a * nc;
        let s1 = 0, s2 = 0, s3 = 0, s4 = 0;
        for (let k = 0; k < nc; k++) {
          const e = A[ro + k];
          s1 += e * xs[x1 + k];
          s2 += e * xs[x2 + k];
          s3 += e * xs[x3 + k];
          s4 += e * xs[x4 + k];
        }
        ys[y1 + a] += s1;
        ys[y2 + a] += s2;
        ys[y3 + a] += s3;
        ys[y4 + a] += s4;
      }
    } else {
      const vOff = off + rank * m;
      for (let l = 0; l < rank; l++) {
        const ov = vOff + l * nc, ou = off + l * m;
        let t1 = 0, t2 = 0, t3 = 0, t4 = 0;
        for (let k = 0; k < nc; k++) {
          const e = A[ov + k];
          t1 += e * xs[x1 + k];
          t2 += e * xs[x2 + k];
          t3 += e * xs[x3 + k];
          t4 += e * xs[x4 + k];
        }
        for (let a = 0; a < m; a++) {
          const u = A[ou + a];
          ys[y1 + a] += t1 * u;
          ys[y2 + a] += t2 * u;
          ys[y3 + a] += t3 * u;
          ys[y4 + a] += t4 * u;
        }
      }
    }
  }
}

/** Two vectors at offsets o1 and o2 of xs and ys, in one pass. */
function packProductPair(p: BlockPack, b0: number, b1: number, xs: Float64Array, ys: Float64Array, o1: number, o2: number): void {
  const H = p.heads, A = p.values;
  for (let b = b0; b < b1; b++) {
    const h = 6 * b;
    const r0 = H[h], m = H[h + 1], c0 = H[h + 2], nc = H[h + 3], rank = H[h + 4], off = H[h + 5];
    const x1 = o1 + c0, x2 = o2 + c0, y1 = o1 + r0, y2 = o2 + r0;
    if (rank < 0) {
      for (let a = 0; a < m; a++) {
        const ro = off + a * nc;
        let s1 = 0, s2 = 0;
        for (let k = 0; k < nc; k++) {
          const e = A[ro + k];
          s1 += e * xs[x1 + k];
          s2 += e * xs[x2 + k];
        }
        ys[y1 + a] += s1;
        ys[y2 + a] += s2;
      }
    } else {
      const vOff = off + rank * m;
      for (let l = 0; l < rank; l++) {
        const ov = vOff + l * nc, ou = off + l * m;
        let t1 = 0, t2 = 0;
        for (let k = 0; k < nc; k++) {
          const e = A[ov + k];
          t1 += e * xs[x1 + k];
          t2 += e * xs[x2 + k];
        }
        for (let a = 0; a < m; a++) {
          const u = A[ou + a];
          ys[y1 + a] += t1 * u;
          ys[y2 + a] += t2 * u;
        }
      }
    }
  }
}

/** Calls `visit` for every stored block: rank −1 for dense. */
export function forEachBlock(
  H: HMatrix,
  visit: (r0: number, m: number, c0: number, n: number, rank: number, values: Float32Array, offset: number) => void,
): void {
  for (const p of H.packs) {
    for (let b = 0; b < p.count; b++) {
      const h = 6 * b;
      visit(p.heads[h], p.heads[h + 1], p.heads[h + 2], p.heads[h + 3], p.heads[h + 4], p.values, p.heads[h + 5]);
    }
  }
}

/** Numbers stored: dense entries and low-rank factor entries. */
export function hmatrixStorage(H: HMatrix): { dense: number; lowRank: number; bytes: number; maxRank: number; meanRank: number; blocks: number } {
  let dense = 0, lowRank = 0, maxRank = 0, rankSum = 0, lowBlocks = 0, blocks = 0;
  forEachBlock(H, (_r0, m, _c0, n, rank) => {
    blocks++;
    if (rank < 0) dense += m * n;
    else {
      lowRank += rank * (m + n);
      maxRank = Math.max(maxRank, rank);
      rankSum += rank;
      lowBlocks++;
    }
  });
  return { dense, lowRank, bytes: 4 * (dense + lowRank), maxRank, meanRank: lowBlocks ? rankSum / lowBlocks : 0, blocks };
}
