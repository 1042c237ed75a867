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
// the direct sum. Runs of elements along a side act on distant blocks through a few proxy charges
// along their arc length (Clusters below); the planar ln kernel gathers far sources into complex
// Taylor series instead of interpolation points. One code serves the ring kernel and the ln kernel,
// several densities at once (superposition), images of a ground plane and (axisymmetric) cells at
// r < 0, which see the mirror image of the half-plane.
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

/**
 * The sources: densities τ on the elements (several at once: one pass serves them all, each kernel
 * evaluation shared), their images in a grounded mirror line, the kernel.
 */
export interface GridSources {
  elements: Element2d[];
  taus: Float64Array[];
  kernel: KernelAdd;
  /** The kernel over a whole straight element in closed form, if it has one (bem2d.ts LineAdd). */
  line?: LineAdd | null;
  mirror: Mirror | null;
  /** Axisymmetric: a cell at u < 0 takes the values at |u|, with E_u reversed. */
  fold: boolean;
  /** The kernel is the planar −ln(ρ/ℓ)/(2π) with this ℓ: far units go into complex Taylor expansions. */
  logScale?: number;
}

/** How the grid is summed: interpolation points per block side and the separations. */
export interface GridAccuracy {
  /** Interpolation points per block side (any kernel). */
  order: number;
  /** Powers kept in the ln kernel's expansions. */
  terms: number;
  /** Distance from a block, in its half-diagonals, beyond which a source is interpolated. */
  separation: number;
  /**
   * The same for the ln kernel's expansions, whose error is about (1 + s)^−terms for separation s
   * (see Expansion): they can take sources much nearer than interpolation can.
   */
  expansionSeparation: number;
}
/**
 * About 1e-6 of the direct sum on the tests' scenes (the full picture); the expansions at separation
 * 1 err by about 2^−24 ≈ 6e-8 of the far part (measured 1.5e-7 of the largest field).
 */
export const GRID_FULL: GridAccuracy = { order: 8, terms: 24, separation: 2, expansionSeparation: 1 };
/** About 1e-4, far below a coarse mesh's own error (the live picture; expansions 2^−14 ≈ 6e-5, measured 2.6e-5). */
export const GRID_COARSE: GridAccuracy = { order: 6, terms: 14, separation: 1.5, expansionSeparation: 1 };

/**
 * Least length of the per-density scratch arrays: small typed arrays live on the JavaScript heap and
 * larger ones outside it, and code that has seen both (one density and several) runs slower.
 */
const SCRATCH = 24;

/** Blocks of at most this many cells are leaves (summed cell by cell). */
const LEAF_CELLS = 16;
/**
 * The same with expansions: a block's re-centred series costs little (terms² per density), so
 * smaller leaves pay off, leaving fewer elements near enough to be summed cell by cell.
 */
const EXPANSION_LEAF_CELLS = 8;

/**
 * Gauss rules by distance d from an element's midpoint, in squared element lengths: 2 points beyond
 * 8 lengths (direct sums and interpolation points), 3 beyond 4 lengths, 5 beyond 1.5, closer the
 * adaptive rule of bem2d.ts. An n-point Gauss rule errs by about
 * ρ^−2n for an integrand analytic inside the Bernstein ellipse ρ (Trefethen, ATAP ch. 19); the kernel
 * is singular at the target, ρ ≈ 2d/L + √((2d/L)² + 1): 16 at 4 lengths (ρ^−6 ≈ 6e-8), 6.2 at 1.5
 * (ρ^−10 ≈ 1e-8) of that element's share.
 */
const NEAR3 = 16;
const NEAR5 = 2.25;
/** ρ ≈ 32 at 8 lengths: ρ^−4 ≈ 1e-6 of the element's share. */
const NEAR2 = 64;

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
  /** The block is done with t (its memory may serve a later block). */
  release(t: T): void;
}

/**
 * Runs of elements along one curve (a whole side or arc, split into consecutive elements), cut by
 * bisection into clusters. A cluster well away from a block acts through p ≤ order proxy charges at
 * Chebyshev points of its arc length s, Q_k = Σ_elements τ·∫ ℓ_k(s) ds (ℓ_k the Lagrange basis; the
 * elements' 3-point rules integrate it exactly for order ≤ 6 and within ρ^−6 beyond): the kernel
 * along the curve is smooth in s for a target beyond CLUSTER_SEPARATION half-lengths, so it is
 * interpolated in s (the same barycentric formula on the source side).
 */
interface Clusters {
  /** Per cluster: its first and past-last element. */
  first: Int32Array;
  last: Int32Array;
  /** Arc-length offset of each element from the start of its run. */
  offset: Float64Array;
  /**
   * Proxy sets per cluster, one per order of PROXY_ORDERS up to the accuracy's order (the last the
   * full one), made at their first use (proxySet); q: p charges per density, set for evaluation
   * `stamp` (setCharges).
   */
  proxies: (Proxies | undefined)[][];
  /** The element each cluster's run starts at (its curve), and the cluster's arc-length span on it. */
  base: Int32Array;
  s0: Float64Array;
  s1: Float64Array;
  /** Child items of each cluster (clusters or elements, as item ids). */
  children: number[][];
  /** Whether the cluster may act through its proxies (an arc cluster must turn by at most MAX_TURN). */
  usable: boolean[];
  /** Top-level items: a root cluster per run, or the elements of short runs. */
  roots: number[];
  centreX: number[];
  centreY: number[];
  radius: number[];
}

/** Elements per leaf cluster; a cluster needs a target this many of its half-lengths away. */
const CLUSTER_LEAF = 4;
const CLUSTER_SEPARATION = 3;
/**
 * Most turning (radians) of an arc cluster that acts through proxies. Along an arc of radius R the
 * kernel's singularity in s lies only about R·ln(D/R) off the real line (D the target's distance from
 * the arc's centre), not D: a strongly curved cluster interpolates poorly in s however far the target.
 */
const MAX_TURN = 0.5;

/**
 * Proxy orders a cluster keeps. Interpolation along s errs by about ρ^−p with ρ = t + √(t² + 1),
 * t = d/r the target's distance in cluster half-lengths; a far pair takes the fewest proxies that
 * match the full order at the closest separation allowed, p·ln ρ ≥ order·ln ρ(CLUSTER_SEPARATION).
 */
const PROXY_ORDERS = [3, 4, 5, 6, 8];
const proxyOrders = (order: number) => [...PROXY_ORDERS.filter((p) => p < order), order];
const rho = (t: number) => t + Math.sqrt(t * t + 1);
/** A near cluster longer than this fraction of a block's half-diagonal (squared) is opened at the block. */
const OPEN = 0.25;

function sameCurve(a: Element2d, b: Element2d, tol: number): boolean {
  if (a.kind !== b.kind || a.electrode !== b.electrode) return false;
  const end = new Float64Array(4);
  curvePoint(a, a.length, end);
  if (Math.abs(end[0] - b.x0) > tol || Math.abs(end[1] - b.y0) > tol) return false;
  if (a.kind === 'line') return Math.abs(a.tx - b.tx) < 1e-12 && Math.abs(a.ty - b.ty) < 1e-12;
  return a.dir === b.dir && Math.abs(a.cx - b.cx) <= tol && Math.abs(a.cy - b.cy) <= tol && Math.abs(a.radius - b.radius) <= tol;
}

interface Proxies {
  x: Float64Array;
  y: Float64Array;
  s: Float64Array;
  w: Float64Array;
  q: Float64Array;
  stamp: number;
}

function buildClusters(elements: Element2d[], order: number): Clusters {
  const n = elements.length;
  const first: number[] = [], last: number[] = [], children: number[][] = [], roots: number[] = [], usable: boolean[] = [];
  const centreX: number[] = [], centreY: number[] = [], radius: number[] = [];
  const proxies: Clusters['proxies'] = [];
  const bases: number[] = [], s0s: number[] = [], s1s: number[] = [];
  const offset = new Float64Array(n);
  const size = elements.reduce((m, el) => Math.max(m, Math.abs(el.x0), Math.abs(el.y0)), 0) || 1;
  const point = new Float64Array(4);
  const make = (start: number, a: number, b: number): number => {
    if (b - a <= CLUSTER_LEAF) {
      const items: number[] = [];
      for (let j = a; j < b; j++) items.push(j);
      return b - a === 1 ? a : -1 - pushCluster(start, a, b, items);
    }
    const mid = (a + b) >> 1;
    const left = make(start, a, mid);
    const right = make(start, mid, b);
    return -1 - pushCluster(start, a, b, [left, right].flatMap((x) => (x >= 0 ? [x] : [n + (-1 - x)])));
  };
  const pushCluster = (start: number, a: number, b: number, items: number[]): number => {
    const base = elements[start];
    const s0 = offset[a], s1 = offset[b - 1] + elements[b - 1].length;
    curvePoint(base, 0.5 * (s0 + s1), point);
    const c = first.length;
    first.push(a);
    last.push(b);
    children.push(items);
    usable.push(base.kind === 'line' || (s1 - s0) <= MAX_TURN * base.radius);
    centreX.push(point[0]);
    centreY.push(point[1]);
    radius.push(0.5 * (s1 - s0));
    bases.push(start);
    s0s.push(s0);
    s1s.push(s1);
    proxies.push(new Array(proxyOrders(order).length));
    return c;
  };
  for (let a = 0; a < n; ) {
    let b = a + 1;
    offset[a] = 0;
    while (b < n && sameCurve(elements[b - 1], elements[b], 1e-9 * size)) {
      offset[b] = offset[b - 1] + elements[b - 1].length;
      b++;
    }
    const root = make(a, a, b);
    roots.push(root >= 0 ? root : n + (-1 - root));
    a = b;
  }
  return {
    first: Int32Array.from(first),
    last: Int32Array.from(last),
    offset,
    proxies,
    base: Int32Array.from(bases),
    s0: Float64Array.from(s0s),
    s1: Float64Array.from(s1s),
    children,
    usable,
    roots,
    centreX,
    centreY,
    radius,
  };
}

const proxyPoint = new Float64Array(4);

/** Proxy set `set` of cluster k (p = proxyOrders(order)[set] Chebyshev points of its arc length), made at its first use. */
function proxySet(c: Clusters, elements: Element2d[], k: number, set: number, order: number): Proxies {
  let px = c.proxies[k][set];
  if (px) return px;
  const p = proxyOrders(order)[set];
  const s0 = c.s0[k], s1 = c.s1[k];
  const sx = new Float64Array(p), sy = new Float64Array(p), ss = new Float64Array(p);
  for (let m = 0; m < p; m++) {
    ss[m] = 0.5 * (s0 + s1) - 0.5 * (s1 - s0) * Math.cos((m * Math.PI) / (p - 1));
    curvePoint(elements[c.base[k]], ss[m], proxyPoint);
    sx[m] = proxyPoint[0];
    sy[m] = proxyPoint[1];
  }
  const w = Float64Array.from({ length: p }, (_, m) => (m % 2 === 0 ? 1 : -1) * (m === 0 || m === p - 1 ? 0.5 : 1));
  px = { x: sx, y: sy, s: ss, w, q: new Float64Array(0), stamp: -1 };
  c.proxies[k][set] = px;
  return px;
}

/** Evaluations so far: a proxy set's charges belong to the evaluation whose number they carry. */
let evaluations = 0;

/** What depends on the elements alone (Gauss points, clusters), kept per element list and order. */
const geometries = new WeakMap<Element2d[], Map<number, { rule2: Float64Array; rule3: Float64Array; rule5: Float64Array; clusters: Clusters }>>();

function geometryOf(elements: Element2d[], order: number): { rule2: Float64Array; rule3: Float64Array; rule5: Float64Array; clusters: Clusters } {
  let byOrder = geometries.get(elements);
  if (!byOrder) geometries.set(elements, (byOrder = new Map()));
  let g = byOrder.get(order);
  if (!g) byOrder.set(order, (g = { rule2: curveRules(elements, 2), rule3: curveRules(elements, 3), rule5: curveRules(elements, 5), clusters: buildClusters(elements, order) }));
  return g;
}

/** Sets a proxy set's charges for densities taus (3-point Gauss rule per element): q[b·p + k], for evaluation `stamp`. */
function setCharges(c: Clusters, k: number, px: Proxies, elements: Element2d[], taus: Float64Array[], stamp: number): void {
  const rule = gaussLegendre(3);
  const l = chargeBasis;
  const K = taus.length;
  const p = px.s.length;
  if (px.q.length !== p * K) px.q = new Float64Array(p * K);
  else px.q.fill(0);
  for (let j = c.first[k]; j < c.last[k]; j++) {
    const L = elements[j].length;
    for (let g = 0; g < 3; g++) {
      basis(c.offset[j] + L * rule.nodes[g], px.s, px.w, l);
      const lw = L * rule.weights[g];
      for (let b = 0; b < K; b++) {
        const q = taus[b][j] * lw;
        if (q === 0) continue;
        for (let m = 0; m < p; m++) px.q[b * p + m] += q * l[m];
      }
    }
  }
  px.stamp = stamp;
}

const chargeBasis = new Float64Array(64);

/**
 * Adds (φ, E_u, E_v) at every cell with mask[idx] ≠ 0 into outs[b][3·idx ..] for each density
 * taus[b] (scene coordinates; per unit ε, as the kernel). Returns the interaction counts.
 */
export function gridEvaluate(src: GridSources, grid: Grid2d, mask: Uint8Array, outs: Float64Array[], accuracy: GridAccuracy = GRID_FULL): GridCounts {
  const { elements, taus, kernel, mirror, fold } = src;
  const { nu, nv, u0, v0, du, dv } = grid;
  const counts: GridCounts = { direct: 0, gathered: 0 };
  const n = elements.length;
  const K = taus.length;
  /** Values per point: (φ, E_u, E_v) for each density. */
  const W = 3 * K;
  if (n === 0 || K === 0) return counts;
  const { rule2, rule3, rule5, clusters } = geometryOf(elements, accuracy.order);
  const stamp = ++evaluations;
  /** Cluster k's proxy set `set` with this evaluation's charges. */
  const charged = (k: number, set: number): Proxies => {
    const px = proxySet(clusters, elements, k, set, accuracy.order);
    if (px.stamp !== stamp) setCharges(clusters, k, px, elements, taus, stamp);
    return px;
  };
  // Elements carrying charge in any density.
  const active = new Uint8Array(n);
  for (const tau of taus) for (let j = 0; j < n; j++) if (tau[j] !== 0) active[j] = 1;
  const nc = clusters.first.length;
  // Items: id < n an element, id ≥ n cluster id − n; item = 2·id + (1 for the image in the mirror).
  const ids = n + nc;
  const cx = new Float64Array(2 * ids);
  const cy = new Float64Array(2 * ids);
  const rad = new Float64Array(2 * ids);
  const place = (id: number, x: number, y: number, r: number) => {
    cx[2 * id] = x;
    cy[2 * id] = y;
    rad[2 * id] = rad[2 * id + 1] = r;
    if (mirror) {
      cx[2 * id + 1] = mirror.axis === 0 ? 2 * mirror.at - x : x;
      cy[2 * id + 1] = mirror.axis === 1 ? 2 * mirror.at - y : y;
    }
  };
  // An element lies within half its arc length of its midpoint; a cluster within half its length of its centre.
  elements.forEach((el, j) => place(j, el.mx, el.my, 0.5 * el.length));
  for (let k = 0; k < nc; k++) place(n + k, clusters.centreX[k], clusters.centreY[k], clusters.radius[k]);
  // A far cluster's item carries the proxy set it acts through: coded = item + stride·set.
  const stride = 2 * ids;
  const orders = proxyOrders(accuracy.order);
  const needed = accuracy.order * Math.log(rho(CLUSTER_SEPARATION));
  const items: number[] = [];
  for (const id of clusters.roots) {
    items.push(2 * id);
    if (mirror) items.push(2 * id + 1);
  }
  /** Every element item under `item` (the item itself for an element), into outList. */
  const expand = (item: number, outList: number[]) => {
    const id = item >> 1;
    if (id < n) {
      if (active[id]) outList.push(item);
      return;
    }
    for (const child of clusters.children[id - n]) expand(2 * child + (item & 1), outList);
  };

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

  const acc = new Float64Array(Math.max(W, SCRATCH));
  const img = new Float64Array(Math.max(W, SCRATCH));
  const g = new Float64Array(3);
  const line = src.line ?? null;
  /** Adds item's (φ, E_x, E_y) per density at solver point (x, y) into acc (images with their signs). */
  const addItem = (coded: number, x: number, y: number) => {
    const set = Math.floor(coded / stride);
    const item = coded - set * stride;
    if (item & 1) {
      const m = mirror!;
      img.fill(0);
      addSource(item >> 1, set, m.axis === 0 ? 2 * m.at - x : x, m.axis === 1 ? 2 * m.at - y : y, img);
      for (let o = 0; o < W; o += 3) {
        acc[o] -= img[o];
        acc[o + 1] += m.axis === 0 ? img[o + 1] : -img[o + 1];
        acc[o + 2] += m.axis === 1 ? img[o + 2] : -img[o + 2];
      }
    } else addSource(item >> 1, set, x, y, acc);
  };
  const addSource = (id: number, set: number, x: number, y: number, into: Float64Array) => {
    if (id >= n) {
      const px = charged(id - n, set);
      const p = px.s.length;
      for (let k = 0; k < p; k++) {
        g[0] = g[1] = g[2] = 0;
        kernel(px.x[k], px.y[k], x, y, 1, true, g);
        for (let b = 0, o = 0; b < K; b++, o += 3) {
          const q = px.q[b * p + k];
          into[o] += q * g[0];
          into[o + 1] += q * g[1];
          into[o + 2] += q * g[2];
        }
      }
      return;
    }
    // The element's field at unit density, then scaled by each density.
    const el = elements[id];
    g[0] = g[1] = g[2] = 0;
    const dx = x - el.mx;
    const dy = y - el.my;
    const d2 = dx * dx + dy * dy;
    const l2 = el.length * el.length;
    if (d2 > NEAR2 * l2) {
      const o = id * 6;
      kernel(rule2[o], rule2[o + 1], x, y, rule2[o + 2], true, g);
      kernel(rule2[o + 3], rule2[o + 4], x, y, rule2[o + 5], true, g);
    } else if (d2 > NEAR3 * l2) {
      const o = id * 9;
      kernel(rule3[o], rule3[o + 1], x, y, rule3[o + 2], true, g);
      kernel(rule3[o + 3], rule3[o + 4], x, y, rule3[o + 5], true, g);
      kernel(rule3[o + 6], rule3[o + 7], x, y, rule3[o + 8], true, g);
    } else if (line && el.kind === 'line') line(el, x, y, 1, true, g);
    else if (d2 > NEAR5 * l2) {
      const o = id * 15;
      for (let q = 0; q < 15; q += 3) kernel(rule5[o + q], rule5[o + q + 1], x, y, rule5[o + q + 2], true, g);
    } else integrateCurve(el, 0, el.length, x, y, kernel, 1, true, g);
    for (let b = 0, o = 0; b < K; b++, o += 3) {
      const t = taus[b][id];
      into[o] += t * g[0];
      into[o + 1] += t * g[1];
      into[o + 2] += t * g[2];
    }
  };
  /** Sum of items list[0 .. count) at scene point (u, v), scene components, into acc. */
  const sumAt = (list: number[], count: number, u: number, v: number) => {
    acc.fill(0);
    const x = fold ? Math.abs(u) : u;
    for (let k = 0; k < count; k++) addItem(list[k], x, v);
    if (fold && u < 0) for (let o = 1; o < W; o += 3) acc[o] = -acc[o];
  };

  const farField: FarField<Nodes | Expansion> =
    src.logScale !== undefined
      ? (expansionField(accuracy.terms, src.logScale, elements, taus, rule3, rule5, charged, cx, cy, mirror, stride) as FarField<Nodes | Expansion>)
      : (interpolationField(accuracy.order, W, sumAt, acc) as FarField<Nodes | Expansion>);
  const separation = src.logScale !== undefined ? accuracy.expansionSeparation : accuracy.separation;
  const sep2 = separation * separation;
  const leafCells = src.logScale !== undefined ? EXPANSION_LEAF_CELLS : LEAF_CELLS;
  const clusterSep2 = CLUSTER_SEPARATION * CLUSTER_SEPARATION;

  /**
   * Block of cells [i0, i1) × [j0, j1). `parent`: what was gathered above, or null. The items still
   * to place are list[0 .. count).
   */
  const visit = (i0: number, i1: number, j0: number, j1: number, parent: Nodes | Expansion | null, list: number[]): void => {
    if (cellsIn(i0, i1, j0, j1) === 0) return;
    const ua = u0 + (i0 + 0.5) * du, ub = u0 + (i1 - 0.5) * du;
    const va = v0 + (j0 + 0.5) * dv, vb = v0 + (j1 - 0.5) * dv;
    if ((i1 - i0) * (j1 - j0) <= leafCells) {
      // Leaf: what was gathered above plus every remaining element, cell by cell.
      const units: number[] = [];
      for (const item of list) expand(item, units);
      for (let j = j0; j < j1; j++) {
        const v = v0 + (j + 0.5) * dv;
        for (let i = i0; i < i1; i++) {
          const idx = j * nu + i;
          if (!mask[idx]) continue;
          const u = u0 + (i + 0.5) * du;
          sumAt(units, units.length, u, v);
          counts.direct += units.length;
          if (parent) farField.addAt(parent, u, v, acc);
          for (let b = 0; b < K; b++) {
            const out = outs[b];
            out[3 * idx] += acc[3 * b];
            out[3 * idx + 1] += acc[3 * b + 1];
            out[3 * idx + 2] += acc[3 * b + 2];
          }
        }
      }
      return;
    }
    // Separate the items: far ones are gathered here, near ones go on to the children (a near
    // cluster larger than the block is opened here first).
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
    const stack = list.slice();
    while (stack.length > 0) {
      const item = stack.pop()!;
      const id = item >> 1;
      if (id < n && !active[id]) continue;
      const ex = Math.max(ra - cx[item], 0, cx[item] - rb);
      const ey = Math.max(va - cy[item], 0, cy[item] - vb);
      const d2 = ex * ex + ey * ey;
      const r = rad[item];
      const d = Math.sqrt(d2) - r;
      const separated = d > 0 && d * d >= sep2 * halfDiag2;
      if (id >= n) {
        const usable = clusters.usable[id - n];
        if (usable && separated && d * d >= clusterSep2 * r * r) {
          const lnRho = Math.log(rho(d / r));
          let set = 0;
          while (orders[set] * lnRho < needed) set++;
          far.push(item + stride * set);
        }
        else if (!usable || r * r > OPEN * halfDiag2) for (const child of clusters.children[id - n]) stack.push(2 * child + (item & 1));
        else near.push(item);
      } else if (separated && d2 > NEAR5 * 4 * r * r) far.push(item);
      // Separated, and (for the expansion's fixed rules) beyond 1.5 element lengths of every cell.
      else near.push(item);
    }
    let here = parent;
    if (far.length > 0) {
      here = farField.make(ua, ub, i1 - i0, va, vb, j1 - j0);
      if (parent) farField.carry(parent, here);
      farField.gather(here, far, far.length);
      counts.gathered += far.length;
    }
    if (splitsU(grid, i0, i1, j0, j1)) {
      const mid = (i0 + i1) >> 1;
      visit(i0, mid, j0, j1, here, near);
      visit(mid, i1, j0, j1, here, near);
    } else {
      const mid = (j0 + j1) >> 1;
      visit(i0, i1, j0, mid, here, near);
      visit(i0, i1, mid, j1, here, near);
    }
    if (here && here !== parent) farField.release(here);
  };
  visit(0, nu, 0, nv, null, items);
  return counts;
}

/** How a block of cells [i0, i1) × [j0, j1) is bisected: across its longer side (between cell centres), never across a side one cell wide. */
function splitsU(grid: Grid2d, i0: number, i1: number, j0: number, j1: number): boolean {
  const ua = grid.u0 + (i0 + 0.5) * grid.du, ub = grid.u0 + (i1 - 0.5) * grid.du;
  const va = grid.v0 + (j0 + 0.5) * grid.dv, vb = grid.v0 + (j1 - 0.5) * grid.dv;
  return i1 - i0 > 1 && (ub - ua >= vb - va || j1 - j0 === 1);
}

/**
 * The grid's blocks at the first depth of gridEvaluate's bisection that has at least `count` of them,
 * as cell ranges [i0, i1, j0, j1]. A cell's values do not depend on which other cells are masked
 * (every choice in gridEvaluate follows the blocks, not the mask), so evaluating these blocks one at
 * a time gives the same values as one pass, at the cost of their common ancestors' far fields only:
 * a build that can stop between blocks and go on later.
 */
export function gridBlocks(grid: Grid2d, count: number): [number, number, number, number][] {
  let blocks: [number, number, number, number][] = [[0, grid.nu, 0, grid.nv]];
  while (blocks.length < count) {
    const next: [number, number, number, number][] = [];
    for (const [i0, i1, j0, j1] of blocks) {
      if (i1 - i0 <= 1 && j1 - j0 <= 1) next.push([i0, i1, j0, j1]);
      else if (splitsU(grid, i0, i1, j0, j1)) {
        const mid = (i0 + i1) >> 1;
        next.push([i0, mid, j0, j1], [mid, i1, j0, j1]);
      } else {
        const mid = (j0 + j1) >> 1;
        next.push([i0, i1, j0, mid], [i0, i1, mid, j1]);
      }
    }
    if (next.length === blocks.length) break;
    blocks = next;
  }
  return blocks;
}

// ---- interpolation points (any kernel) ----

function interpolationField(p: number, width: number, sumAt: (list: number[], count: number, u: number, v: number) => void, acc: Float64Array): FarField<Nodes> {
  return {
    make: (ua, ub, cellsU, va, vb, cellsV) => makeNodes(ua, ub, cellsU, va, vb, cellsV, p, width),
    carry: carryDown,
    gather(t, list, count) {
      const { pu, pv, nu, nv, values } = t;
      for (let a = 0; a < pu; a++) {
        for (let b = 0; b < pv; b++) {
          sumAt(list, count, nu[a], nv[b]);
          const o = width * (a * pv + b);
          for (let c = 0; c < width; c++) values[o + c] += acc[c];
        }
      }
    },
    addAt: interpolateInto,
    release() {},
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
 * ρ = |z − z_B|/|z_s − z_B| ≤ 1/(1 + expansionSeparation), times about `terms` for the field. A child takes its parent's series re-centred
 * (Taylor shift, exact).
 */
interface Expansion {
  zx: number;
  zy: number;
  /** Half-diagonal of the block's cell centres. */
  reach: number;
  /** Coefficients per density: index b·(terms + 1) + k. */
  re: Float64Array;
  im: Float64Array;
}

function expansionField(
  terms: number,
  scale: number,
  elements: Element2d[],
  taus: Float64Array[],
  rule3: Float64Array,
  rule5: Float64Array,
  charged: (cluster: number, set: number) => Proxies,
  cx: Float64Array,
  cy: Float64Array,
  mirror: Mirror | null,
  stride: number,
): FarField<Expansion> {
  const inv2pi = 1 / (2 * Math.PI);
  const K = taus.length;
  const T = terms + 1;
  const qs = new Float64Array(Math.max(K, SCRATCH));
  const spare: Expansion[] = [];
  /** Adds sources at (xs, ys) with charge qs[b]·sign for each density b. */
  const addSource = (t: Expansion, xs: number, ys: number, sign: number) => {
    const ax = xs - t.zx, ay = ys - t.zy;
    const a2 = ax * ax + ay * ay;
    const log = 0.5 * Math.log(a2 / (scale * scale));
    // 1/a, then its powers.
    const ix = ax / a2, iy = -ay / a2;
    for (let b = 0; b < K; b++) {
      const c = sign * qs[b] * inv2pi;
      if (c === 0) continue;
      const o = b * T;
      t.re[o] -= c * log;
      let px = ix, py = iy;
      for (let k = 1; k <= terms; k++) {
        t.re[o + k] += (c / k) * px;
        t.im[o + k] += (c / k) * py;
        const nx = px * ix - py * iy;
        py = px * iy + py * ix;
        px = nx;
      }
    }
  };
  return {
    make(ua, ub, _cu, va, vb) {
      const zx = 0.5 * (ua + ub), zy = 0.5 * (va + vb), reach = 0.5 * Math.hypot(ub - ua, vb - va);
      // Only the blocks on the current path hold series: a few arrays serve the whole walk.
      const t = spare.pop();
      if (!t) return { zx, zy, reach, re: new Float64Array(K * T), im: new Float64Array(K * T) };
      t.zx = zx;
      t.zy = zy;
      t.reach = reach;
      t.re.fill(0);
      t.im.fill(0);
      return t;
    },
    carry(parent, child) {
      const re = child.re, im = child.im;
      re.set(parent.re);
      im.set(parent.im);
      // Σ c_k (z − P)^k = Σ d_k (z − C)^k: repeated synthetic division by t = C − P.
      const tx = child.zx - parent.zx, ty = child.zy - parent.zy;
      for (let o = 0; o < K * T; o += T) {
        for (let i = 0; i < terms; i++) {
          for (let k = o + terms - 1; k >= o + i; k--) {
            re[k] += tx * re[k + 1] - ty * im[k + 1];
            im[k] += tx * im[k + 1] + ty * re[k + 1];
          }
        }
      }
    },
    gather(t, list, count) {
      const n = elements.length;
      for (let i = 0; i < count; i++) {
        const set = Math.floor(list[i] / stride);
        const unit = list[i] - set * stride;
        const j = unit >> 1;
        const image = (unit & 1) === 1;
        const sign = image ? -1 : 1;
        const place = (x: number, y: number) => {
          if (image) {
            if (mirror!.axis === 0) x = 2 * mirror!.at - x;
            else y = 2 * mirror!.at - y;
          }
          addSource(t, x, y, sign);
        };
        if (j >= n) {
          const px = charged(j - n, set);
          const p = px.s.length;
          for (let k = 0; k < p; k++) {
            for (let b = 0; b < K; b++) qs[b] = px.q[b * p + k];
            place(px.x[k], px.y[k]);
          }
          continue;
        }
        // The 3-point rule beyond 4 element lengths of every cell, else the 5-point one (see NEAR3).
        const gap = Math.max(0, Math.hypot(cx[unit] - t.zx, cy[unit] - t.zy) - t.reach);
        const length = elements[j].length;
        const three = gap * gap > NEAR3 * length * length;
        const rule = three ? rule3 : rule5;
        const points = three ? 3 : 5;
        for (let m = 0; m < points; m++) {
          const o = (j * points + m) * 3;
          for (let b = 0; b < K; b++) qs[b] = taus[b][j] * rule[o + 2];
          place(rule[o], rule[o + 1]);
        }
      }
    },
    addAt(t, u, v, acc) {
      const zx = u - t.zx, zy = v - t.zy;
      const re = t.re, im = t.im;
      for (let b = 0; b < K; b++) {
        const o = b * T;
        let wr = re[o + terms], wi = im[o + terms];
        let dr = terms * re[o + terms], di = terms * im[o + terms];
        for (let k = terms - 1; k >= 0; k--) {
          const r = wr * zx - wi * zy + re[o + k];
          wi = wr * zy + wi * zx + im[o + k];
          wr = r;
          if (k >= 1) {
            const s = dr * zx - di * zy + k * re[o + k];
            di = dr * zy + di * zx + k * im[o + k];
            dr = s;
          }
        }
        acc[3 * b] += wr;
        acc[3 * b + 1] -= dr;
        acc[3 * b + 2] += di;
      }
    },
    release(t) {
      spare.push(t);
    },
  };
}

/** Interpolation points of a block (tensor product) and the values gathered there (`width` per point). */
interface Nodes {
  pu: number;
  pv: number;
  width: number;
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

function makeNodes(ua: number, ub: number, cellsU: number, va: number, vb: number, cellsV: number, p: number, width: number): Nodes {
  const su = sidePoints(ua, ub, cellsU, p);
  const sv = sidePoints(va, vb, cellsV, p);
  return { pu: su.x.length, pv: sv.x.length, width, nu: su.x, nv: sv.x, wu: su.w, wv: sv.w, values: new Float64Array(width * su.x.length * sv.x.length) };
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
  const { pu, pv, values, width } = n;
  if (width === 3) {
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
    return;
  }
  for (let a = 0; a < pu; a++) {
    const la = lu[a];
    if (la === 0) continue;
    for (let b = 0; b < pv; b++) {
      const w = la * lv[b];
      if (w === 0) continue;
      const o = width * (a * pv + b);
      for (let c = 0; c < width; c++) acc[c] += w * values[o + c];
    }
  }
}

/** Sets the child's values to the parent's interpolant at the child's points. */
function carryDown(parent: Nodes, child: Nodes): void {
  const width = child.width;
  const acc = new Float64Array(width);
  for (let a = 0; a < child.pu; a++) {
    for (let b = 0; b < child.pv; b++) {
      acc.fill(0);
      interpolateInto(parent, child.nu[a], child.nv[b], acc);
      child.values.set(acc, width * (a * child.pv + b));
    }
  }
}
