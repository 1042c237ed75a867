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
// The residual updates, K²(m + n)/2 of the work, run in WebAssembly SIMD (aca-kernel.wat).
import acaKernelBytes from './aca-kernel.wat';

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

/** y[b] −= Σ_{l<k} c_l·A_l[b]: the residual update (aca-kernel.wat), on one Float64Array by index. */
type Residual = (y: number, len: number, a: number, aStride: number, c: number, cStride: number, k: number) => void;

/**
 * Room for one block's factors, pivot row and pivot column on this thread: a WebAssembly memory
 * for the SIMD residual kernel, or a plain array where WebAssembly is missing. `reserve` returns
 * the view over it all (a new one whenever it grew), or null when it cannot grow.
 */
interface Scratch {
  reserve(doubles: number): Float64Array | null;
  residual: Residual;
}

let scratch: Scratch | undefined;

function threadScratch(): Scratch {
  if (scratch) return scratch;
  let view = new Float64Array(0);
  try {
    const memory = new WebAssembly.Memory({ initial: 16 });
    const k = new WebAssembly.Instance(new WebAssembly.Module(acaKernelBytes), { env: { memory } }).exports as unknown as { residual: Residual };
    view = new Float64Array(memory.buffer);
    scratch = {
      reserve(doubles) {
        if (8 * doubles > memory.buffer.byteLength) {
          try {
            memory.grow(Math.ceil((8 * doubles - memory.buffer.byteLength) / 65536));
          } catch {
            return null;
          }
        }
        if (view.buffer !== memory.buffer) view = new Float64Array(memory.buffer);
        return view;
      },
      residual: (y, len, a, aStride, c, cStride, n) => k.residual(8 * y, len, 8 * a, 8 * aStride, 8 * c, 8 * cStride, n),
    };
  } catch {
    scratch = {
      reserve(doubles) {
        if (doubles > view.length) {
          const grown = new Float64Array(Math.max(doubles, 2 * view.length));
          grown.set(view);
          view = grown;
        }
        return view;
      },
      residual: (y, len, a, aStride, c, cStride, n) => {
        for (let l = 0; l < n; l++) {
          const cl = view[c + l * cStride];
          if (cl === 0) continue;
          const o = a + l * aStride;
          for (let b = 0; b < len; b++) view[y + b] -= cl * view[o + b];
        }
      },
    };
  }
  return scratch;
}

/**
 * Approximates the block with rows order[r0 .. r0+m) and columns order[c0 .. c0+n).
 * Returns null when the rank needed would make the factors no smaller than the dense block.
 * The factors returned are views into this thread's scratch memory: use them before the next call.
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
  const S = threadScratch();
  // Layout (doubles): the pivot row (n), the pivot column (m), then U[l·m + a] and V[l·n + b]
  // for cap terms each; when cap doubles V moves up, U grows in place.
  const ROW = 0, COL = n, U = n + m;
  let cap = Math.min(maxRank, 16);
  let V = U + cap * m;
  let A = S.reserve(V + cap * n);
  if (!A) return null;
  let k = 0;
  const usedRow = new Uint8Array(m);
  let norm2 = 0;
  let i = 0;
  let zeroRows = 0;
  while (k < maxRank) {
    usedRow[i] = 1;
    src.row(order[r0 + i], order, c0, n, A.subarray(ROW, ROW + n));
    S.residual(ROW, n, V, n, U + i, m, k);
    let j = 0, best = -1;
    for (let b = 0; b < n; b++) {
      const a = Math.abs(A[ROW + b]);
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
      const wider = Math.min(maxRank, 2 * cap);
      A = S.reserve(U + wider * (m + n));
      if (!A) return null;
      A.copyWithin(U + wider * m, V, V + cap * n);
      V = U + wider * m;
      cap = wider;
    }
    const inv = 1 / A[ROW + j];
    const ov = V + k * n, ou = U + k * m;
    for (let b = 0; b < n; b++) A[ov + b] = A[ROW + b] * inv;
    src.col(order[c0 + j], order, r0, m, A.subarray(COL, COL + m));
    S.residual(COL, m, U, m, V + j, n, k);
    A.copyWithin(ou, COL, COL + m);
    let nu2 = 0, nv2 = 0;
    for (let a = 0; a < m; a++) nu2 += A[COL + a] * A[COL + a];
    for (let b = 0; b < n; b++) nv2 += A[ov + b] * A[ov + b];
    norm2 += nu2 * nv2;
    k++;
    if (nu2 * nv2 <= eps * eps * norm2) break;
    // Next pivot row: the largest entry of the new column among the rows not used yet.
    let next = -1, big = -1;
    for (let a = 0; a < m; a++) {
      if (usedRow[a]) continue;
      const x = Math.abs(A[COL + a]);
      if (x > big) {
        big = x;
        next = a;
      }
    }
    if (next < 0) break;
    i = next;
  }
  if (k >= maxRank) return null;
  return { rank: k, U: A.subarray(U, U + k * m), V: A.subarray(V, V + k * n) };
}

function nextUnused(used: Uint8Array, from: number): number {
  for (let a = 1; a <= used.length; a++) {
    const i = (from + a) % used.length;
    if (!used[i]) return i;
  }
  return -1;
}
