// A hierarchical matrix: the panel matrix split into blocks by a cluster tree, far blocks stored as
// low-rank factors from adaptive cross approximation, near blocks stored dense (their entries come
// from the exact panel integrals).
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
  /** rank columns of length m, one after another (single precision: see fillBlock). */
  U: Float32Array;
  /** rank rows of length n, one after another. */
  V: Float32Array;
}

/** A pair of clusters to be filled: dense (near) or low-rank (far). Positions are in tree order. */
export interface BlockTask {
  r0: number;
  m: number;
  c0: number;
  n: number;
  far: boolean;
}

export interface HMatrix {
  size: number;
  tree: ClusterTree;
  dense: DenseBlock[];
  lowRank: LowRankBlock[];
}

export interface HOptions {
  /** Admissibility parameter η. */
  eta: number;
  /** ACA tolerance per block, relative. */
  eps: number;
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
  // Blocks too small to gain from a low rank of ~8 or more are filled dense at once.
  if (task.far && (m * n) / (m + n) >= 8) {
    // Factors are kept in single precision: rounding (6e-8 relative) sits below the ACA tolerance
    // and halves the storage of the far field, the bulk of the matrix at large N.
    const f = acaBlock(src, order, r0, m, c0, n, eps);
    if (f) return { r0, m, c0, n, rank: f.rank, U: Float32Array.from(f.U), V: Float32Array.from(f.V) };
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

/** Assembles every block on this thread. */
export function assembleHMatrix(src: EntrySource, tree: ClusterTree, options: HOptions): HMatrix {
  const tasks = partitionBlocks(tree, options.eta);
  const H: HMatrix = { size: tree.order.length, tree, dense: [], lowRank: [] };
  for (const task of tasks) addBlock(H, fillBlock(src, tree.order, task, options.eps));
  return H;
}

export function addBlock(H: HMatrix, b: DenseBlock | LowRankBlock): void {
  if (isLowRank(b)) H.lowRank.push(b);
  else H.dense.push(b);
}

/** y = A·x in tree order (xp, yp indexed by tree position). yp is overwritten. */
export function hmatvecTreeOrder(H: HMatrix, xp: Float64Array, yp: Float64Array): void {
  yp.fill(0);
  for (const b of H.dense) {
    const { r0, m, c0, n, data } = b;
    for (let a = 0; a < m; a++) {
      let s = 0;
      const o = a * n;
      for (let k = 0; k < n; k++) s += data[o + k] * xp[c0 + k];
      yp[r0 + a] += s;
    }
  }
  for (const b of H.lowRank) {
    const { r0, m, c0, n, rank, U, V } = b;
    for (let l = 0; l < rank; l++) {
      let t = 0;
      const ov = l * n;
      for (let k = 0; k < n; k++) t += V[ov + k] * xp[c0 + k];
      const ou = l * m;
      for (let a = 0; a < m; a++) yp[r0 + a] += t * U[ou + a];
    }
  }
}

/** Numbers stored: dense entries and low-rank factor entries. */
export function hmatrixStorage(H: HMatrix): { dense: number; lowRank: number; bytes: number; maxRank: number; meanRank: number } {
  let dense = 0, lowRank = 0, maxRank = 0, rankSum = 0;
  for (const b of H.dense) dense += b.data.length;
  for (const b of H.lowRank) {
    lowRank += b.U.length + b.V.length;
    maxRank = Math.max(maxRank, b.rank);
    rankSum += b.rank;
  }
  return { dense, lowRank, bytes: 8 * dense + 4 * lowRank, maxRank, meanRank: H.lowRank.length ? rankSum / H.lowRank.length : 0 };
}
