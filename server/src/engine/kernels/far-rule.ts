// The far-field panel integrals I_j(r) = ∫_Tj 1/|r − r'| dA' in WebAssembly (far-rule.wat): the
// Gauss rules of triangle.ts, computed the same way to the bit, about three times faster than the
// JavaScript (measured on far rows: 23 against 80 ns an entry). Entries within FAR_RATIO diameters
// come back as NaN: triangle.ts panelPotential computes those by the closed form. One instance per
// panel set and thread, in a private memory: the table (704 bytes a panel), the points, the last
// index array seen (copied once: the fast solver passes its tree order every time) and room for
// one row or column.
import farRuleBytes from './far-rule.wat';
import { FROM_3_SQ, FROM_4_SQ, FROM_6_SQ, GAUSS_POINTS, panelPotential, type Panels } from './triangle';

export interface FarRule {
  /** I over panels cols[c0 .. c0+n) at (x, y, z): a view valid until the next call, NaN where triangle.ts takes the closed form. */
  row(x: number, y: number, z: number, cols: Int32Array, c0: number, n: number): Float64Array;
  /** I over panel j at the points rows[r0 .. r0+m) moved to flip·p + shift (an image; the identity: 1, 0): as row. */
  col(j: number, rows: Int32Array, r0: number, m: number, flip: readonly number[], shift: readonly number[]): Float64Array;
  /** out[k] += sign · I over panel cols[c0 + k] at (x, y, z), k < n: row, with triangle.ts's closed form where it gives NaN. */
  addRow(x: number, y: number, z: number, cols: Int32Array, c0: number, n: number, sign: number, out: Float64Array): void;
  /** out[k] += sign · I over panel j at point rows[r0 + k] moved to flip·p + shift, k < m: col, with the closed form where it gives NaN. */
  addCol(j: number, rows: Int32Array, r0: number, m: number, flip: readonly number[], shift: readonly number[], sign: number, out: Float64Array): void;
}

interface Exports {
  row(x: number, y: number, z: number, table: number, cols: number, n: number, out: number): void;
  col(t: number, points: number, rows: number, m: number, out: number, fx: number, fy: number, fz: number, sx: number, sy: number, sz: number): void;
}

const ROW_BYTES = 704;
let compiled: WebAssembly.Module | null | undefined;

/** The far rule for panels P and observation points (3 per point), or null where WebAssembly is missing. */
export function createFarRule(P: Panels, points: Float64Array): FarRule | null {
  if (compiled === undefined) {
    try {
      compiled = new WebAssembly.Module(farRuleBytes);
    } catch {
      compiled = null;
    }
  }
  if (!compiled) return null;
  const N = P.count, Np = points.length / 3, most = Math.max(N, Np);
  const TABLE = 64, POINTS = TABLE + ROW_BYTES * N, INDEX = POINTS + 24 * Np, OUT = INDEX + 4 * most + 8 - ((4 * most) % 8);
  const bytes = OUT + 8 * most;
  let memory: WebAssembly.Memory, k: Exports;
  try {
    memory = new WebAssembly.Memory({ initial: Math.ceil(bytes / 65536) });
    k = new WebAssembly.Instance(compiled, { env: { memory } }).exports as unknown as Exports;
  } catch {
    return null;
  }
  const table = new Float64Array(memory.buffer, TABLE, (ROW_BYTES / 8) * N);
  for (let j = 0; j < N; j++) {
    const o = (ROW_BYTES / 8) * j, h2 = P.diameterSq[j];
    table[o] = P.centroid[3 * j];
    table[o + 1] = P.centroid[3 * j + 1];
    table[o + 2] = P.centroid[3 * j + 2];
    table[o + 3] = FROM_3_SQ * h2;
    table[o + 4] = FROM_4_SQ * h2;
    table[o + 5] = FROM_6_SQ * h2;
    table[o + 6] = P.farSq[j];
    // The panel's Gauss points (x, y, z, weight) from byte 64, in triangle.ts's order.
    for (let q = 0; q < GAUSS_POINTS; q++) {
      const g = GAUSS_POINTS * j + q, t = o + 8 + 4 * q;
      table[t] = P.gauss[3 * g];
      table[t + 1] = P.gauss[3 * g + 1];
      table[t + 2] = P.gauss[3 * g + 2];
      table[t + 3] = P.gaussWeight[g];
    }
  }
  new Float64Array(memory.buffer, POINTS, 3 * Np).set(points);
  const index = new Int32Array(memory.buffer, INDEX, most);
  const out = new Float64Array(memory.buffer, OUT, most);
  let indexed: Int32Array | null = null;
  const use = (a: Int32Array) => {
    if (a !== indexed) {
      index.set(a.subarray(0, Math.min(a.length, most)));
      indexed = a;
    }
  };
  const rule: FarRule = {
    row(x, y, z, cols, c0, n) {
      use(cols);
      k.row(x, y, z, TABLE, INDEX + 4 * c0, n, OUT);
      return out.subarray(0, n);
    },
    col(j, rows, r0, m, flip, shift) {
      use(rows);
      k.col(TABLE + ROW_BYTES * j, POINTS, INDEX + 4 * r0, m, OUT, flip[0], flip[1], flip[2], shift[0], shift[1], shift[2]);
      return out.subarray(0, m);
    },
    addRow(x, y, z, cols, c0, n, sign, into) {
      const I = rule.row(x, y, z, cols, c0, n);
      for (let a = 0; a < n; a++) {
        const v = I[a];
        into[a] += sign * (v === v ? v : panelPotential(P, cols[c0 + a], x, y, z));
      }
    },
    addCol(j, rows, r0, m, flip, shift, sign, into) {
      const I = rule.col(j, rows, r0, m, flip, shift);
      for (let a = 0; a < m; a++) {
        let v = I[a];
        if (v !== v) {
          const p = 3 * rows[r0 + a];
          v = panelPotential(P, j, flip[0] * points[p] + shift[0], flip[1] * points[p + 1] + shift[1], flip[2] * points[p + 2] + shift[2]);
        }
        into[a] += sign * v;
      }
    },
  };
  return rule;
}
