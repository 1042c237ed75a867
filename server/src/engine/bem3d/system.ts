// The 3d boundary-element system: flat panels with constant charge density, collocation at the
// centroids (or, for curved bodies, at the centroids moved onto the true surface: collocation.ts),
// ground planes by images.
//
// Unknowns are scaled densities x_j = σ_j/(ε0·εr) (V/m: on a closed conductor this is the normal
// surface field itself), so the system does not depend on the medium:
//   φ(r) = Σ_j x_j · (1/4π) · Σ_images sign · I_j(image(r)),    A_ij = φ-kernel at centroid i,
// with I_j = ∫_Tj 1/R dA (server/src/engine/kernels/triangle.ts). Reflecting the observation point
// instead of the panel gives the same integral, since every image is an isometry.
import type { Mesh } from '../mesh/types';
import { panelPotential, panelPotentialAndGradient, preparePanels, type Panels } from '../kernels/triangle';
import { reflect, type Image } from './images';
import { createFarRule, type FarRule } from '../kernels/far-rule';

export const INV_4PI = 1 / (4 * Math.PI);

export interface Bem3dSystem {
  mesh: Mesh;
  panels: Panels;
  images: Image[];
  /** Collocation points (the panel centroids, or those given), 3 per panel. */
  points: Float64Array;
  n: number;
  /** Normal-field rows at thin panels, filled by assembleDense (field.ts surfaceFields uses them). */
  thinRows?: ThinRows;
}

/**
 * The normal gradient of the potential at thin panels' centroids, one row per panel:
 *   rows[t·n + j] = n_t · ∇φ_j(c_t),   φ_j = (1/4π)·Σ_images sign·I_j(image(r)),
 * so that n_t·∇φ(c_t) = Σ_j rows[t·n + j]·x_j (the principal value on panel t itself). Filled while
 * the matrix row at the same point is computed (one kernel pass gives both), for the thin panels
 * whose collocation point is their centroid.
 */
/** Most numbers kept in ThinRows (8 bytes each: 64 MB); a larger system keeps none. */
export const THIN_ROWS_MAX_ENTRIES = 8e6;

export interface ThinRows {
  panels: Int32Array;
  rows: Float64Array;
}

export function createSystem(mesh: Mesh, images: Image[], points?: Float64Array): Bem3dSystem {
  const panels = preparePanels(mesh);
  return { mesh, panels, images, points: points ?? panels.centroid, n: panels.count };
}

/** One matrix entry A_ij. */
export function entry(sys: Bem3dSystem, i: number, j: number): number {
  const p = sys.points;
  const r = [0, 0, 0];
  let sum = 0;
  for (const im of sys.images) {
    reflect(im, p[3 * i], p[3 * i + 1], p[3 * i + 2], r);
    sum += im.sign * panelPotential(sys.panels, j, r[0], r[1], r[2]);
  }
  return sum * INV_4PI;
}

/**
 * Entries of an earlier system's matrix that still hold: panels of electrodes that an edit left
 * alone (the same triangles and collocation points, the same images) keep their entries with each
 * other, since an entry depends only on its panel and its point (bem3d/reuse.ts finds them).
 */
export interface MatrixReuse {
  matrix: Float64Array;
  n: number;
  /** The earlier index of each panel, −1 for a panel that is new. */
  from: Int32Array;
  thinRows?: ThinRows;
}

/**
 * The dense matrix, row-major, A_ij = (1/4π)·Σ_images sign·I_j(image(p_i)); null when cancelled
 * (polled every few rows). Also fills sys.thinRows (see ThinRows): thin panels' rows first, with
 * their normal gradients, then the others (fillDenseRows). Entries between kept panels are copied
 * from `reuse` when given.
 */
export function assembleDense(sys: Bem3dSystem, isCancelled?: () => boolean, reuse?: MatrixReuse | null): Float64Array | null {
  const n = sys.n;
  // Shared memory, so that worker threads can fill rows of it in place (fillRows).
  const A = new Float64Array(new SharedArrayBuffer(8 * n * n));
  const P = sys.panels;
  const p = sys.points;
  const { mesh, images } = sys;
  const c = mesh.centroid;
  let thin: number[] = [];
  for (let i = 0; i < n; i++) {
    if (mesh.thin[i] && p[3 * i] === c[3 * i] && p[3 * i + 1] === c[3 * i + 1] && p[3 * i + 2] === c[3 * i + 2]) thin.push(i);
  }
  // Too many to keep beside the matrix: surface fields fall back to sums over all panels.
  if (thin.length * n > THIN_ROWS_MAX_ENTRIES) thin = [];
  const isThin = new Uint8Array(n);
  for (const i of thin) isThin[i] = 1;
  const thinRows: ThinRows = { panels: Int32Array.from(thin), rows: new Float64Array(new SharedArrayBuffer(8 * thin.length * n)) };
  // Reused rows and columns (kept panels), and the columns every reused row still needs (new panels).
  const from = reuse?.from ?? null;
  const fresh = from ? Int32Array.from({ length: n }, (_, j) => j).filter((j) => from[j] < 0) : null;
  const kept = from ? Int32Array.from({ length: n }, (_, j) => j).filter((j) => from[j] >= 0) : new Int32Array(0);
  const oldThin = new Int32Array(reuse?.n ?? 0).fill(-1);
  reuse?.thinRows?.panels.forEach((i, t) => (oldThin[i] = t));
  // Kept columns in runs that are consecutive in both numberings (an electrode's panels are), so a
  // row is copied a run at a time (TypedArray.set: a block copy, some 10× faster than one by one).
  const runs: number[] = []; // [new start, old start, length]*
  for (let k = 0; k < kept.length; k++) {
    const j = kept[k], r = runs.length - 3;
    if (r >= 0 && runs[r] + runs[r + 2] === j && runs[r + 1] + runs[r + 2] === from![j]) runs[r + 2]++;
    else runs.push(j, from![j], 1);
  }
  const copyRow = (target: Float64Array, at: number, source: Float64Array, sourceAt: number) => {
    for (let r = 0; r < runs.length; r += 3) {
      const o = sourceAt + runs[r + 1];
      target.set(source.subarray(o, o + runs[r + 2]), at + runs[r]);
    }
  };

  // Thin rows: kept ones whose earlier matrix had them copy their kept columns and compute the new
  // ones; the others compute every column.
  const thinFresh: number[] = [], thinAll: number[] = [];
  for (let t = 0; t < thin.length; t++) {
    const i = thin[t];
    const oi = from ? from[i] : -1;
    const ot = oi >= 0 ? oldThin[oi] : -1;
    if (ot >= 0) {
      copyRow(A, i * n, reuse!.matrix, oi * reuse!.n);
      copyRow(thinRows.rows, t * n, reuse!.thinRows!.rows, ot * reuse!.n);
      thinFresh.push(t);
    } else thinAll.push(t);
  }
  const thinPanels = thinRows.panels;
  if (thinFresh.length > 0 && !fillThin(P, p, mesh.normal, images, thinPanels, Int32Array.from(thinFresh), A, thinRows.rows, isCancelled, fresh!)) return null;
  if (!fillThin(P, p, mesh.normal, images, thinPanels, Int32Array.from(thinAll), A, thinRows.rows, isCancelled)) return null;
  // The other rows: kept ones copy their kept columns and compute the rest; new ones compute all.
  const copied: number[] = [];
  const whole: number[] = [];
  for (let i = 0; i < n; i++) {
    if (isThin[i]) continue;
    if (from && from[i] >= 0) copied.push(i);
    else whole.push(i);
  }
  for (const i of copied) copyRow(A, i * n, reuse!.matrix, from![i] * reuse!.n);
  if (copied.length > 0 && !fillRows(P, p, images, Int32Array.from(copied), A, isCancelled, fresh!)) return null;
  if (!fillRows(P, p, images, Int32Array.from(whole), A, isCancelled)) return null;
  sys.thinRows = thinRows;
  return A;
}

/** Fills rows of a dense matrix: fillDenseRows here, or on several threads once registered. */
export type RowFiller = typeof fillDenseRows;

let fillRows: RowFiller = fillDenseRows;

/**
 * Fast-solver hook (owned by server/src/engine/fast/bem3d.ts): lets the fast module's worker
 * threads fill rows of the shared dense matrix (fast/jobs.ts runRows).
 */
export function registerRowFiller(filler: RowFiller): void {
  fillRows = filler;
}

/** Fills thin panels' rows and their normal-field rows: fillThinRows here, or on several threads. */
export type ThinRowFiller = typeof fillThinRows;

let fillThin: ThinRowFiller = fillThinRows;

/** Fast-solver hook (owned by server/src/engine/fast/bem3d.ts), as registerRowFiller. */
export function registerThinRowFiller(filler: ThinRowFiller): void {
  fillThin = filler;
}

/**
 * For the thin panels thinPanels[t], t in `slots`: row thinPanels[t] of A (potential entries) and
 * row t of `gradient` (the normal field entries, n each), in the given columns (all when absent).
 * Plain arrays only, so that a worker thread can fill rows of shared matrices. False when cancelled.
 */
export function fillThinRows(
  P: Panels,
  points: Float64Array,
  normals: Float64Array,
  images: readonly Image[],
  thinPanels: Int32Array,
  slots: Int32Array,
  A: Float64Array,
  gradient: Float64Array,
  isCancelled?: () => boolean,
  cols?: Int32Array,
): boolean {
  const n = P.count;
  const I = images.length;
  const sign = Float64Array.from(images, (im) => im.sign);
  const rx = new Float64Array(I), ry = new Float64Array(I), rz = new Float64Array(I);
  // Per image, the factors of the normal gradient through the reflection (the chain rule:
  // ∂/∂x_c of f(flip·x + shift) = flip_c·(∂f)_c).
  const gnx = new Float64Array(I), gny = new Float64Array(I), gnz = new Float64Array(I);
  const r = [0, 0, 0];
  const g = new Float64Array(4);
  for (let s = 0; s < slots.length; s++) {
    if ((s & 63) === 0 && isCancelled?.()) return false;
    const t = slots[s], i = thinPanels[t], row = i * n, out = t * n;
    const nx = normals[3 * i], ny = normals[3 * i + 1], nz = normals[3 * i + 2];
    for (let k = 0; k < I; k++) {
      reflect(images[k], points[3 * i], points[3 * i + 1], points[3 * i + 2], r);
      rx[k] = r[0];
      ry[k] = r[1];
      rz[k] = r[2];
      gnx[k] = images[k].sign * images[k].flip[0] * nx;
      gny[k] = images[k].sign * images[k].flip[1] * ny;
      gnz[k] = images[k].sign * images[k].flip[2] * nz;
    }
    // The potential and its normal gradient in one pass.
    const count = cols ? cols.length : n;
    for (let m = 0; m < count; m++) {
      const j = cols ? cols[m] : m;
      let v = 0, gn = 0;
      for (let k = 0; k < I; k++) {
        panelPotentialAndGradient(P, j, rx[k], ry[k], rz[k], g);
        v += sign[k] * g[0];
        gn += gnx[k] * g[1] + gny[k] * g[2] + gnz[k] * g[3];
      }
      A[row + j] = INV_4PI * v;
      gradient[out + j] = INV_4PI * gn;
    }
  }
  return true;
}

const farRules = new WeakMap<Panels, { points: Float64Array; rule: FarRule; all: Int32Array } | null>();

/** The far rule of a panel set with its collocation points, made once per panel set on this thread (null without WebAssembly). */
function farRuleFor(P: Panels, points: Float64Array): { rule: FarRule; all: Int32Array } | null {
  let f = farRules.get(P);
  if (f === undefined || (f && f.points !== points)) {
    const rule = createFarRule(P, points);
    f = rule ? { points, rule, all: Int32Array.from({ length: P.count }, (_, j) => j) } : null;
    farRules.set(P, f);
  }
  return f;
}

/**
 * Fills the given rows of the dense matrix A (n×n, row-major) with the potential entries, in the
 * given columns (all when absent). Plain arrays only, so that a worker thread could fill rows of a
 * shared matrix. False when cancelled.
 */
export function fillDenseRows(
  P: Panels,
  points: Float64Array,
  images: readonly Image[],
  rows: Int32Array,
  A: Float64Array,
  isCancelled?: () => boolean,
  cols?: Int32Array,
): boolean {
  const n = P.count;
  const I = images.length;
  const sign = Float64Array.from(images, (im) => im.sign);
  const rx = new Float64Array(I), ry = new Float64Array(I), rz = new Float64Array(I);
  const r = [0, 0, 0];
  // The far entries from kernels/far-rule.ts (the same numbers to the bit), the rest from
  // panelPotential; summed over the images in order, then scaled, as below without it.
  const far = rows.length > 1 ? farRuleFor(P, points) : null;
  const list = cols ?? far?.all;
  const count = cols ? cols.length : n;
  const v = far ? new Float64Array(count) : null;
  for (let t = 0; t < rows.length; t++) {
    if ((t & 63) === 0 && isCancelled?.()) return false;
    const i = rows[t], row = i * n;
    for (let k = 0; k < I; k++) {
      reflect(images[k], points[3 * i], points[3 * i + 1], points[3 * i + 2], r);
      rx[k] = r[0];
      ry[k] = r[1];
      rz[k] = r[2];
    }
    if (far && v && list) {
      v.fill(0);
      for (let k = 0; k < I; k++) far.rule.addRow(rx[k], ry[k], rz[k], list, 0, count, sign[k], v);
      for (let m = 0; m < count; m++) A[row + list[m]] = INV_4PI * v[m];
      continue;
    }
    if (cols) {
      for (let m = 0; m < cols.length; m++) {
        const j = cols[m];
        let w = 0;
        for (let k = 0; k < I; k++) w += sign[k] * panelPotential(P, j, rx[k], ry[k], rz[k]);
        A[row + j] = INV_4PI * w;
      }
      continue;
    }
    if (I === 1) {
      const x = rx[0], y = ry[0], z = rz[0];
      for (let j = 0; j < n; j++) A[row + j] = INV_4PI * panelPotential(P, j, x, y, z);
      continue;
    }
    for (let j = 0; j < n; j++) {
      let w = 0;
      for (let k = 0; k < I; k++) w += sign[k] * panelPotential(P, j, rx[k], ry[k], rz[k]);
      A[row + j] = INV_4PI * w;
    }
  }
  return true;
}

/** Accuracy of far-field evaluation: 'precise' keeps the 7-point rule, 'grid' uses the centroid rule far away. */
export type EvalMode = 'precise' | 'grid';
/**
 * Beyond this many panel diameters the 'grid' mode uses the one-point (centroid) rule: relative error
 * at most 1e-3 per panel at 5 diameters (measured over random directions), less in sums, where the
 * errors of differently oriented panels partly cancel. Enough for contour plots; probes use 'precise'.
 */
export const GRID_FAR_RATIO = 5;

/**
 * Potential (V) and its gradient (V/m, so the field is its negative) at (x, y, z) of the scaled
 * densities xs, written to out[0..3] as [φ, ∂φ/∂x, ∂φ/∂y, ∂φ/∂z]. On a panel's own plane the normal
 * derivative is the principal value (the average of the two sides).
 */
export function surfacePotentialAndGradient(
  sys: Bem3dSystem,
  xs: Float64Array,
  x: number,
  y: number,
  z: number,
  out: Float64Array,
  mode: EvalMode = 'precise',
): void {
  const P = sys.panels;
  const c = P.centroid;
  const r = [0, 0, 0];
  const g = new Float64Array(4);
  let phi = 0, gx = 0, gy = 0, gz = 0;
  const farRatioSq = GRID_FAR_RATIO * GRID_FAR_RATIO;
  for (const im of sys.images) {
    reflect(im, x, y, z, r);
    const rx = r[0], ry = r[1], rz = r[2];
    let p = 0, ax = 0, ay = 0, az = 0;
    for (let j = 0; j < P.count; j++) {
      const w = xs[j];
      if (w === 0) continue;
      const dx = rx - c[3 * j], dy = ry - c[3 * j + 1], dz = rz - c[3 * j + 2];
      const d2 = dx * dx + dy * dy + dz * dz;
      if (mode === 'grid' && d2 > farRatioSq * P.diameter[j] * P.diameter[j]) {
        const inv = 1 / Math.sqrt(d2);
        const q = w * P.area[j] * inv;
        p += q;
        const q3 = q * inv * inv;
        ax -= q3 * dx;
        ay -= q3 * dy;
        az -= q3 * dz;
        continue;
      }
      panelPotentialAndGradient(P, j, rx, ry, rz, g);
      p += w * g[0];
      ax += w * g[1];
      ay += w * g[2];
      az += w * g[3];
    }
    // The chain rule through the reflection: ∂/∂x_k of f(flip·x + shift) = flip_k·(∂f)_k.
    phi += im.sign * p;
    gx += im.sign * im.flip[0] * ax;
    gy += im.sign * im.flip[1] * ay;
    gz += im.sign * im.flip[2] * az;
  }
  out[0] = phi * INV_4PI;
  out[1] = gx * INV_4PI;
  out[2] = gy * INV_4PI;
  out[3] = gz * INV_4PI;
}
