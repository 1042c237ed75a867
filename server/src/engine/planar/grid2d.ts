// Potential and field of the 2d engines' element densities on a slice grid, by interpolation on the
// target side: the cluster-particle form of the barycentric Lagrange treecode (Vaughn, Wilson and
// Krasny, "A GPU-accelerated barycentric Lagrange treecode", IPDPSW 2020; Wang, Krasny and Tlupova,
// Commun. Comput. Phys. 28, 2020, for the particle-cluster form).
//
// The grid is split by bisection into blocks of cells. An element well away from a block (its
// distance to the block at least SEPARATION times the block's half-diagonal) has a smooth potential
// and field over the block, so its contribution is summed at the block's p×p Chebyshev points only
// (with the element's own precise rule) and carried to the cells by tensor-product barycentric
// Lagrange interpolation (Berrut and Trefethen, SIAM Review 46, 2004); a child block takes its
// parent's interpolant at its own points. Elements near a block go on to its children, and at the
// leaves they are summed at every cell as in the direct sum. Chebyshev interpolation of a function
// analytic within distance d of a box of half-width a converges like ρ^−p, ρ = d/a + √((d/a)² + 1)
// (Trefethen, Approximation Theory and Approximation Practice, ch. 8): with d ≥ 2a and p = 8,
// ρ^−p ≈ 1e-5 per level, well within the slices' contouring needs; the tests check the grid against
// the direct sum. One code serves the ring kernel and the ln kernel, images of a ground plane and
// (axisymmetric) cells at r < 0, which see the mirror image of the half-plane.
import { gaussLegendre } from '../special/gauss-legendre';
import { integrateCurve, type KernelAdd, type LineAdd, type Mirror } from './bem2d';
import { curvePoint, type Element2d } from './elements';

/** A slice grid: cell (i, j) has its centre at (u0 + (i + ½)du, v0 + (j + ½)dv), index j·nu + i. */
export interface Grid2d {
  nu: number;
  nv: number;
  u0: number;
  v0: number;
  du: number;
  dv: number;
}

/** The sources: densities τ on the elements, their images in a grounded mirror line, the kernel. */
export interface GridSources {
  elements: Element2d[];
  tau: Float64Array;
  kernel: KernelAdd;
  /** The kernel over a whole straight element in closed form, if it has one (bem2d.ts LineAdd). */
  line?: LineAdd | null;
  mirror: Mirror | null;
  /** Axisymmetric: a cell at u < 0 takes the values at |u|, with E_u reversed. */
  fold: boolean;
  /** The kernel is the planar −ln(ρ/ℓ)/(2π) with this ℓ: far units go into complex Taylor expansions. */
  logScale?: number;
}

/** How the grid is summed: interpolation points per block side and the separation for interpolation. */
export interface GridAccuracy {
  /** Interpolation points per block side (any kernel). */
  order: number;
  /** Powers kept in the ln kernel's expansions. */
  terms: number;
  separation: number;
}
/** About 1e-6 of the direct sum on the tests' scenes (the full picture). */
export const GRID_FULL: GridAccuracy = { order: 8, terms: 24, separation: 2 };
/** About 1e-4, far below a coarse mesh's own error (the live picture). */
export const GRID_COARSE: GridAccuracy = { order: 6, terms: 14, separation: 1.5 };

/** Blocks of at most this many cells are leaves (summed cell by cell). */
const LEAF_CELLS = 16;

/**
 * Gauss rules by distance d from an element's midpoint, in squared element lengths: 3 points beyond
 * 4 lengths, 5 beyond 1.5, closer the adaptive rule of bem2d.ts. An n-point Gauss rule errs by about
 * ρ^−2n for an integrand analytic inside the Bernstein ellipse ρ (Trefethen, ATAP ch. 19); the kernel
 * is singular at the target, ρ ≈ 2d/L + √((2d/L)² + 1): 16 at 4 lengths (ρ^−6 ≈ 6e-8), 6.2 at 1.5
 * (ρ^−10 ≈ 1e-8) of that element's share.
 */
const NEAR3 = 16;
const NEAR5 = 2.25;

/** An n-point Gauss rule on every element: x, y, weight·length per point. */
function curveRules(elements: Element2d[], n: number): Float64Array {
  const rule = gaussLegendre(n);
  const out = new Float64Array(elements.length * n * 3);
  const p = new Float64Array(4);
  elements.forEach((el, j) => {
    for (let q = 0; q < n; q++) {
      curvePoint(el, el.length * rule.nodes[q], p);
      const o = (j * n + q) * 3;
      out[o] = p[0];
      out[o + 1] = p[1];
      out[o + 2] = el.length * rule.weights[q];
    }
  });
  return out;
}

/** Counts of interactions, for tests and benchmarks. */
export interface GridCounts {
  /** Element (or image) contributions summed at single cells. */
  direct: number;
  /** Element (or image) contributions gathered by a block (at its points, or into its expansion). */
  gathered: number;
}

/** What a block keeps of the units gathered at it and above (interpolation points, or an expansion). */
interface FarField<T> {
  /** A block's empty representation over the cell centres [ua, ub] × [va, vb]. */
  make(ua: number, ub: number, cellsU: number, va: number, vb: number, cellsV: number): T;
  /** Sets child to what parent represents. */
  carry(parent: T, child: T): void;
  /** Adds units list[0 .. count) (all separated from the block). */
  gather(t: T, list: number[], count: number): void;
  /** Adds the represented (φ, E_u, E_v) at scene point (u, v) to acc. */
  addAt(t: T, u: number, v: number, acc: Float64Array): void;
}

/**
 * Adds (φ, E_u, E_v) at every cell with mask[idx] ≠ 0 into out[3·idx ..] (scene coordinates; per
 * unit ε, as the kernel). Returns the interaction counts.
 */
export function gridEvaluate(src: GridSources, grid: Grid2d, mask: Uint8Array, out: Float64Array, accuracy: GridAccuracy = GRID_FULL): GridCounts {
  const { elements, tau, kernel, mirror, fold } = src;
  const { nu, nv, u0, v0, du, dv } = grid;
  const counts: GridCounts = { direct: 0, gathered: 0 };
  const rule3 = curveRules(elements, 3);
  const rule5 = curveRules(elements, 5);
  // Units: element j (unit 2j) and its image (unit 2j + 1); their centres and radii in solver coordinates.
  const units: number[] = [];
  const cx = new Float64Array(2 * elements.length);
  const cy = new Float64Array(2 * elements.length);
  const rad = new Float64Array(2 * elements.length);
  elements.forEach((el, j) => {
    if (tau[j] === 0) return;
    // The element lies within half its arc length of its midpoint.
    cx[2 * j] = el.mx;
    cy[2 * j] = el.my;
    rad[2 * j] = 0.5 * el.length;
    units.push(2 * j);
    if (mirror) {
      cx[2 * j + 1] = mirror.axis === 0 ? 2 * mirror.at - el.mx : el.mx;
      cy[2 * j + 1] = mirror.axis === 1 ? 2 * mirror.at - el.my : el.my;
      rad[2 * j + 1] = 0.5 * el.length;
      units.push(2 * j + 1);
    }
  });
  if (units.length === 0) return counts;

  // Cells to evaluate, as a summed-area table (the count in any block in O(1)).
  const table = new Int32Array((nu + 1) * (nv + 1));
  for (let j = 0; j < nv; j++) {
    let row = 0;
    for (let i = 0; i < nu; i++) {
      row += mask[j * nu + i] ? 1 : 0;
      table[(j + 1) * (nu + 1) + i + 1] = table[j * (nu + 1) + i + 1] + row;
    }
  }
  const cellsIn = (i0: number, i1: number, j0: number, j1: number) =>
    table[j1 * (nu + 1) + i1] - table[j0 * (nu + 1) + i1] - table[j1 * (nu + 1) + i0] + table[j0 * (nu + 1) + i0];

  const acc = new Float64Array(3);
  const img = new Float64Array(3);
  /** Adds unit's (φ, E_x, E_y) at solver point (x, y) into acc (images with their signs). */
  const addUnit = (unit: number, x: number, y: number) => {
    const j = unit >> 1;
    const el = elements[j];
    if (unit & 1) {
      const m = mirror!;
      img[0] = img[1] = img[2] = 0;
      addElementAt(el, j, m.axis === 0 ? 2 * m.at - x : x, m.axis === 1 ? 2 * m.at - y : y, img);
      acc[0] -= img[0];
      acc[1] += m.axis === 0 ? img[1] : -img[1];
      acc[2] += m.axis === 1 ? img[2] : -img[2];
    } else addElementAt(el, j, x, y, acc);
  };
  const line = src.line ?? null;
  const addElementAt = (el: Element2d, j: number, x: number, y: number, into: Float64Array) => {
    const t = tau[j];
    if (line && el.kind === 'line') {
      line(el, x, y, t, true, into);
      return;
    }
    const dx = x - el.mx;
    const dy = y - el.my;
    const d2 = dx * dx + dy * dy;
    const l2 = el.length * el.length;
    if (d2 > NEAR3 * l2) {
      const o = j * 9;
      kernel(rule3[o], rule3[o + 1], x, y, t * rule3[o + 2], true, into);
      kernel(rule3[o + 3], rule3[o + 4], x, y, t * rule3[o + 5], true, into);
      kernel(rule3[o + 6], rule3[o + 7], x, y, t * rule3[o + 8], true, into);
    } else if (d2 > NEAR5 * l2) {
      const o = j * 15;
      for (let q = 0; q < 15; q += 3) kernel(rule5[o + q], rule5[o + q + 1], x, y, t * rule5[o + q + 2], true, into);
    } else integrateCurve(el, 0, el.length, x, y, kernel, t, true, into);
  };
  /** Sum of units list[from .. to) at scene point (u, v), scene components, into acc. */
  const sumAt = (list: number[], from: number, to: number, u: number, v: number) => {
    acc[0] = acc[1] = acc[2] = 0;
    const x = fold ? Math.abs(u) : u;
    for (let k = from; k < to; k++) addUnit(list[k], x, v);
    if (fold && u < 0) acc[1] = -acc[1];
  };

  const farField: FarField<Nodes | Expansion> =
    src.logScale !== undefined
      ? (expansionField(accuracy.terms, src.logScale, elements, tau, rule3, rule5, cx, cy, mirror) as FarField<Nodes | Expansion>)
      : (interpolationField(accuracy.order, sumAt, acc) as FarField<Nodes | Expansion>);
  const sep2 = accuracy.separation * accuracy.separation;

  /**
   * Block of cells [i0, i1) × [j0, j1). `parent`: what was gathered above, or null. The units still
   * to place are list[0 .. count).
   */
  const visit = (i0: number, i1: number, j0: number, j1: number, parent: Nodes | Expansion | null, list: number[], count: number): void => {
    if (cellsIn(i0, i1, j0, j1) === 0) return;
    const ua = u0 + (i0 + 0.5) * du, ub = u0 + (i1 - 0.5) * du;
    const va = v0 + (j0 + 0.5) * dv, vb = v0 + (j1 - 0.5) * dv;
    if ((i1 - i0) * (j1 - j0) <= LEAF_CELLS) {
      // Leaf: what was gathered above plus every remaining unit, cell by cell.
      for (let j = j0; j < j1; j++) {
        const v = v0 + (j + 0.5) * dv;
        for (let i = i0; i < i1; i++) {
          const idx = j * nu + i;
          if (!mask[idx]) continue;
          const u = u0 + (i + 0.5) * du;
          sumAt(list, 0, count, u, v);
          counts.direct += count;
          if (parent) farField.addAt(parent, u, v, acc);
          out[3 * idx] += acc[0];
          out[3 * idx + 1] += acc[1];
          out[3 * idx + 2] += acc[2];
        }
      }
      return;
    }
    // Separate the units: far ones are gathered here, near ones go on to the children.
    const hu = 0.5 * (ub - ua), hv = 0.5 * (vb - va);
    const halfDiag2 = hu * hu + hv * hv;
    // The block as the solver sees it (folded onto r ≥ 0 in axisymmetric).
    let ra = ua, rb = ub;
    if (fold && ub <= 0) {
      ra = -ub;
      rb = -ua;
    } else if (fold && ua < 0) {
      ra = 0;
      rb = Math.max(-ua, ub);
    }
    const near: number[] = [];
    const far: number[] = [];
    for (let k = 0; k < count; k++) {
      const unit = list[k];
      const ex = Math.max(ra - cx[unit], 0, cx[unit] - rb);
      const ey = Math.max(va - cy[unit], 0, cy[unit] - vb);
      const d2 = ex * ex + ey * ey;
      const d = Math.sqrt(d2) - rad[unit];
      // Separated, and (for the expansion's fixed rules) beyond 1.5 element lengths of every cell.
      if (d > 0 && d * d >= sep2 * halfDiag2 && d2 > NEAR5 * 4 * rad[unit] * rad[unit]) far.push(unit);
      else near.push(unit);
    }
    let here = parent;
    if (far.length > 0) {
      here = farField.make(ua, ub, i1 - i0, va, vb, j1 - j0);
      if (parent) farField.carry(parent, here);
      farField.gather(here, far, far.length);
      counts.gathered += far.length;
    }
    // Bisect the longer side.
    if (i1 - i0 > 1 && (ub - ua >= vb - va || j1 - j0 === 1)) {
      const mid = (i0 + i1) >> 1;
      visit(i0, mid, j0, j1, here, near, near.length);
      visit(mid, i1, j0, j1, here, near, near.length);
    } else {
      const mid = (j0 + j1) >> 1;
      visit(i0, i1, j0, mid, here, near, near.length);
      visit(i0, i1, mid, j1, here, near, near.length);
    }
  };
  visit(0, nu, 0, nv, null, units, units.length);
  return counts;
}

// ---- interpolation points (any kernel) ----

function interpolationField(p: number, sumAt: (list: number[], from: number, to: number, u: number, v: number) => void, acc: Float64Array): FarField<Nodes> {
  return {
    make: (ua, ub, cellsU, va, vb, cellsV) => makeNodes(ua, ub, cellsU, va, vb, cellsV, p),
    carry: carryDown,
    gather(t, list, count) {
      const { pu, pv, nu, nv, values } = t;
      for (let a = 0; a < pu; a++) {
        for (let b = 0; b < pv; b++) {
          sumAt(list, 0, count, nu[a], nv[b]);
          const o = 3 * (a * pv + b);
          values[o] += acc[0];
          values[o + 1] += acc[1];
          values[o + 2] += acc[2];
        }
      }
    },
    addAt: interpolateInto,
  };
}

// ---- complex Taylor expansions (the ln kernel) ----

/**
 * For the ln kernel the potential of the far units is the real part of an analytic function:
 * per unit ε, a source q at z_s gives w(z) = −(q/2π)·log((z − z_s)/ℓ), φ = Re w, E_x − i·E_y = −w′(z).
 * About a block's centre z_B (|z − z_B| < |z_s − z_B|; e.g. Greengard and Rokhlin, J. Comput. Phys. 73,
 * 1987, lemma 2.4):
 *   w(z) = −(q/2π)·ln(|z_s − z_B|/ℓ) + Σ_{k≥1} (q/2π)·(z − z_B)^k / (k·(z_s − z_B)^k)
 * (up to an imaginary constant), truncated after `terms` powers: the error is about ρ^terms with
 * ρ = |z − z_B|/|z_s − z_B| ≤ 1/(1 + separation). A child takes its parent's series re-centred
 * (Taylor shift, exact).
 */
interface Expansion {
  zx: number;
  zy: number;
  /** Half-diagonal of the block's cell centres. */
  reach: number;
  re: Float64Array;
  im: Float64Array;
}

function expansionField(terms: number, scale: number, elements: Element2d[], tau: Float64Array, rule3: Float64Array, rule5: Float64Array, cx: Float64Array, cy: Float64Array, mirror: Mirror | null): FarField<Expansion> {
  const inv2pi = 1 / (2 * Math.PI);
  const addSource = (t: Expansion, xs: number, ys: number, q: number) => {
    const ax = xs - t.zx, ay = ys - t.zy;
    const a2 = ax * ax + ay * ay;
    const c = q * inv2pi;
    t.re[0] -= 0.5 * c * Math.log(a2 / (scale * scale));
    // 1/a, then its powers.
    const ix = ax / a2, iy = -ay / a2;
    let px = ix, py = iy;
    for (let k = 1; k <= terms; k++) {
      t.re[k] += (c / k) * px;
      t.im[k] += (c / k) * py;
      const nx = px * ix - py * iy;
      py = px * iy + py * ix;
      px = nx;
    }
  };
  return {
    make(ua, ub, _cu, va, vb) {
      return { zx: 0.5 * (ua + ub), zy: 0.5 * (va + vb), reach: 0.5 * Math.hypot(ub - ua, vb - va), re: new Float64Array(terms + 1), im: new Float64Array(terms + 1) };
    },
    carry(parent, child) {
      const re = child.re, im = child.im;
      re.set(parent.re);
      im.set(parent.im);
      // Σ c_k (z − P)^k = Σ d_k (z − C)^k: repeated synthetic division by t = C − P.
      const tx = child.zx - parent.zx, ty = child.zy - parent.zy;
      for (let i = 0; i < terms; i++) {
        for (let k = terms - 1; k >= i; k--) {
          re[k] += tx * re[k + 1] - ty * im[k + 1];
          im[k] += tx * im[k + 1] + ty * re[k + 1];
        }
      }
    },
    gather(t, list, count) {
      for (let n = 0; n < count; n++) {
        const unit = list[n];
        const j = unit >> 1;
        const image = (unit & 1) === 1;
        const q = image ? -tau[j] : tau[j];
        // The 3-point rule beyond 4 element lengths of every cell, else the 5-point one (see NEAR3).
        const gap = Math.max(0, Math.hypot(cx[unit] - t.zx, cy[unit] - t.zy) - t.reach);
        const length = elements[j].length;
        const three = gap * gap > NEAR3 * length * length;
        const rule = three ? rule3 : rule5;
        const points = three ? 3 : 5;
        for (let m = 0; m < points; m++) {
          const b = (j * points + m) * 3;
          let xs = rule[b], ys = rule[b + 1];
          if (image) {
            if (mirror!.axis === 0) xs = 2 * mirror!.at - xs;
            else ys = 2 * mirror!.at - ys;
          }
          addSource(t, xs, ys, q * rule[b + 2]);
        }
      }
    },
    addAt(t, u, v, acc) {
      const zx = u - t.zx, zy = v - t.zy;
      const re = t.re, im = t.im;
      let wr = re[terms], wi = im[terms];
      let dr = terms * re[terms], di = terms * im[terms];
      for (let k = terms - 1; k >= 0; k--) {
        const r = wr * zx - wi * zy + re[k];
        wi = wr * zy + wi * zx + im[k];
        wr = r;
        if (k >= 1) {
          const s = dr * zx - di * zy + k * re[k];
          di = dr * zy + di * zx + k * im[k];
          dr = s;
        }
      }
      acc[0] += wr;
      acc[1] -= dr;
      acc[2] += di;
    },
  };
}

/** Interpolation points of a block (tensor product) and the values gathered there (3 per point). */
interface Nodes {
  pu: number;
  pv: number;
  nu: Float64Array;
  nv: Float64Array;
  wu: Float64Array;
  wv: Float64Array;
  values: Float64Array;
}

/**
 * Points along one side: the cell centres themselves when there are at most p of them (exact), else
 * p Chebyshev points of the second kind, with their barycentric weights (Berrut and Trefethen 2004:
 * (−1)^k, halved at both ends, for Chebyshev points; 1/Π(x_k − x_m) in general).
 */
function sidePoints(a: number, b: number, cells: number, p: number): { x: Float64Array; w: Float64Array } {
  if (cells <= p) {
    const x = Float64Array.from({ length: cells }, (_, k) => (cells === 1 ? a : a + ((b - a) * k) / (cells - 1)));
    // Equispaced: w_k = (−1)^k·C(n−1, k).
    const w = new Float64Array(cells);
    let binom = 1;
    for (let k = 0; k < cells; k++) {
      w[k] = (k % 2 === 0 ? 1 : -1) * binom;
      binom = (binom * (cells - 1 - k)) / (k + 1);
    }
    return { x, w };
  }
  const x = Float64Array.from({ length: p }, (_, k) => 0.5 * (a + b) - 0.5 * (b - a) * Math.cos((k * Math.PI) / (p - 1)));
  const w = Float64Array.from({ length: p }, (_, k) => (k % 2 === 0 ? 1 : -1) * (k === 0 || k === p - 1 ? 0.5 : 1));
  return { x, w };
}

function makeNodes(ua: number, ub: number, cellsU: number, va: number, vb: number, cellsV: number, p: number): Nodes {
  const su = sidePoints(ua, ub, cellsU, p);
  const sv = sidePoints(va, vb, cellsV, p);
  return { pu: su.x.length, pv: sv.x.length, nu: su.x, nv: sv.x, wu: su.w, wv: sv.w, values: new Float64Array(3 * su.x.length * sv.x.length) };
}

/** Lagrange basis values at x over points s with barycentric weights w, into out (length of s). */
function basis(x: number, s: Float64Array, w: Float64Array, out: Float64Array): void {
  const n = s.length;
  let sum = 0;
  for (let k = 0; k < n; k++) {
    const d = x - s[k];
    if (d === 0) {
      out.fill(0, 0, n);
      out[k] = 1;
      return;
    }
    out[k] = w[k] / d;
    sum += out[k];
  }
  for (let k = 0; k < n; k++) out[k] /= sum;
}

const lu = new Float64Array(64);
const lv = new Float64Array(64);

/** Adds the block's interpolant at (u, v) to acc[0..2]. */
function interpolateInto(n: Nodes, u: number, v: number, acc: Float64Array): void {
  basis(u, n.nu, n.wu, lu);
  basis(v, n.nv, n.wv, lv);
  const { pu, pv, values } = n;
  let f0 = 0, f1 = 0, f2 = 0;
  for (let a = 0; a < pu; a++) {
    const la = lu[a];
    if (la === 0) continue;
    let g0 = 0, g1 = 0, g2 = 0;
    for (let b = 0; b < pv; b++) {
      const lb = lv[b];
      const o = 3 * (a * pv + b);
      g0 += lb * values[o];
      g1 += lb * values[o + 1];
      g2 += lb * values[o + 2];
    }
    f0 += la * g0;
    f1 += la * g1;
    f2 += la * g2;
  }
  acc[0] += f0;
  acc[1] += f1;
  acc[2] += f2;
}

/** Sets the child's values to the parent's interpolant at the child's points. */
function carryDown(parent: Nodes, child: Nodes): void {
  const acc = new Float64Array(3);
  for (let a = 0; a < child.pu; a++) {
    for (let b = 0; b < child.pv; b++) {
      acc[0] = acc[1] = acc[2] = 0;
      interpolateInto(parent, child.nu[a], child.nv[b], acc);
      child.values.set(acc, 3 * (a * child.pv + b));
    }
  }
}
