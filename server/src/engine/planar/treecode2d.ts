// A kernel-independent treecode for evaluating the 2d engines' fields on slice grids: the barycentric
// Lagrange treecode of Wang, Krasny and Tlupova (Commun. Comput. Phys. 28, 2020), in its simplest form.
// The elements are split by bisection into a binary tree of boxes. For a target well away from a box
// (box radius < θ·distance, and every element of the box far enough for its 3-point rule), the box's
// sources are replaced by p×p proxy charges at Chebyshev points of the second kind, weighted by the
// Lagrange basis at each source (barycentric form, Berrut and Trefethen, SIAM Review 46, 2004); near
// boxes are summed directly, and near elements integrated adaptively as everywhere else. One code
// serves the ln kernel and the ring kernel.
import { gaussLegendre } from '../special/gauss-legendre';
import { integrateCurve, type KernelAdd } from './bem2d';
import { curvePoint, type Element2d } from './elements';

/** Interpolation points per box side, opening angle, elements per leaf. */
export const TREE_ORDER = 8;
export const TREE_THETA = 0.5;
const LEAF_SIZE = 24;
/** Beyond this many element lengths an element's 3-point rule is used (as in solve2d.ts). */
const FAR_RATIO = 12;
const RULE = 3;

interface Box {
  /** Elements of the box: order[start .. end). */
  start: number;
  end: number;
  cx: number;
  cy: number;
  radius: number;
  maxLength: number;
  /** Chebyshev points along x and y. */
  px: Float64Array;
  py: Float64Array;
  /** Proxy charges, p×p, index kx·p + ky (set per density). */
  q: Float64Array;
  children: [number, number] | null;
}

export interface Tree2d {
  elements: Element2d[];
  order: Int32Array;
  boxes: Box[];
  /** Source points of the 3-point rules: x, y, w·length per point, RULE per element. */
  sources: Float64Array;
  /** τ-weighted source charges, RULE per element (set per density). */
  charges: Float64Array;
  tau: Float64Array;
}

function chebyshev(a: number, b: number, p: number): Float64Array {
  const out = new Float64Array(p);
  for (let k = 0; k < p; k++) out[k] = 0.5 * (a + b) + 0.5 * (b - a) * Math.cos((k * Math.PI) / (p - 1));
  return out;
}

// Barycentric weights of Chebyshev points of the second kind: (−1)^k, halved at both ends.
const baryWeights = (p: number) => Float64Array.from({ length: p }, (_, k) => (k % 2 === 0 ? 1 : -1) * (k === 0 || k === p - 1 ? 0.5 : 1));

/** Lagrange basis values at x over nodes s (barycentric formula), written into out. */
function lagrange(x: number, s: Float64Array, w: Float64Array, out: Float64Array): void {
  const p = s.length;
  let sum = 0;
  for (let k = 0; k < p; k++) {
    const d = x - s[k];
    if (d === 0) {
      out.fill(0);
      out[k] = 1;
      return;
    }
    out[k] = w[k] / d;
    sum += out[k];
  }
  for (let k = 0; k < p; k++) out[k] /= sum;
}

export function buildTree(elements: Element2d[]): Tree2d {
  const n = elements.length;
  const rule = gaussLegendre(RULE);
  const sources = new Float64Array(n * RULE * 3);
  const tmp = new Float64Array(4);
  elements.forEach((el, j) => {
    for (let q = 0; q < RULE; q++) {
      curvePoint(el, el.length * rule.nodes[q], tmp);
      const o = (j * RULE + q) * 3;
      sources[o] = tmp[0];
      sources[o + 1] = tmp[1];
      sources[o + 2] = el.length * rule.weights[q];
    }
  });
  const order = Int32Array.from({ length: n }, (_, i) => i);
  const boxes: Box[] = [];
  const make = (start: number, end: number): number => {
    let minX = Infinity, minY = Infinity, maxX = -Infinity, maxY = -Infinity, maxLength = 0;
    for (let i = start; i < end; i++) {
      const j = order[i];
      maxLength = Math.max(maxLength, elements[j].length);
      for (let q = 0; q < RULE; q++) {
        const o = (j * RULE + q) * 3;
        minX = Math.min(minX, sources[o]);
        maxX = Math.max(maxX, sources[o]);
        minY = Math.min(minY, sources[o + 1]);
        maxY = Math.max(maxY, sources[o + 1]);
      }
    }
    // Pad a flat box so its Chebyshev points stay distinct.
    const pad = 1e-9 * Math.max(maxX - minX, maxY - minY, 1e-300);
    minX -= pad;
    maxX += pad;
    minY -= pad;
    maxY += pad;
    const index = boxes.length;
    const box: Box = {
      start,
      end,
      cx: 0.5 * (minX + maxX),
      cy: 0.5 * (minY + maxY),
      radius: 0.5 * Math.hypot(maxX - minX, maxY - minY),
      maxLength,
      px: chebyshev(minX, maxX, TREE_ORDER),
      py: chebyshev(minY, maxY, TREE_ORDER),
      q: new Float64Array(TREE_ORDER * TREE_ORDER),
      children: null,
    };
    boxes.push(box);
    if (end - start > LEAF_SIZE) {
      // Split at the median of the element midpoints along the longer side.
      const alongX = maxX - minX >= maxY - minY;
      const key = (j: number) => (alongX ? elements[j].mx : elements[j].my);
      const part = Array.from(order.subarray(start, end)).sort((a, b) => key(a) - key(b));
      order.set(part, start);
      const mid = (start + end) >> 1;
      const a = make(start, mid);
      const b = make(mid, end);
      box.children = [a, b];
    }
    return index;
  };
  if (n > 0) make(0, n);
  return { elements, order, boxes, sources, charges: new Float64Array(n * RULE), tau: new Float64Array(n) };
}

/** Sets the densities τ: the sources' charges and every box's proxy charges. */
export function setDensities(tree: Tree2d, tau: Float64Array): void {
  tree.tau = tau;
  const { sources, charges, order, boxes } = tree;
  for (let j = 0; j < tree.elements.length; j++) {
    for (let q = 0; q < RULE; q++) charges[j * RULE + q] = tau[j] * sources[(j * RULE + q) * 3 + 2];
  }
  const w = baryWeights(TREE_ORDER);
  const lx = new Float64Array(TREE_ORDER);
  const ly = new Float64Array(TREE_ORDER);
  for (const box of boxes) {
    box.q.fill(0);
    for (let i = box.start; i < box.end; i++) {
      const j = order[i];
      for (let q = 0; q < RULE; q++) {
        const c = charges[j * RULE + q];
        if (c === 0) continue;
        const o = (j * RULE + q) * 3;
        lagrange(sources[o], box.px, w, lx);
        lagrange(sources[o + 1], box.py, w, ly);
        for (let a = 0; a < TREE_ORDER; a++) {
          const ca = c * lx[a];
          if (ca === 0) continue;
          for (let b = 0; b < TREE_ORDER; b++) box.q[a * TREE_ORDER + b] += ca * ly[b];
        }
      }
    }
  }
}

const stack: number[] = [];

/** Adds the potential and field at (x, y) of all elements' densities into acc. */
export function treeEvaluate(tree: Tree2d, kernel: KernelAdd, x: number, y: number, acc: Float64Array): void {
  const { boxes, order, elements, sources, charges, tau } = tree;
  if (boxes.length === 0) return;
  stack.length = 0;
  stack.push(0);
  while (stack.length > 0) {
    const box = boxes[stack.pop()!];
    const dist = Math.hypot(x - box.cx, y - box.cy);
    const far = box.radius < TREE_THETA * dist && dist - box.radius > FAR_RATIO * box.maxLength;
    const count = box.end - box.start;
    if (far && count * RULE > TREE_ORDER * TREE_ORDER) {
      for (let a = 0; a < TREE_ORDER; a++) {
        for (let b = 0; b < TREE_ORDER; b++) kernel(box.px[a], box.py[b], x, y, box.q[a * TREE_ORDER + b], true, acc);
      }
    } else if (box.children && !far) {
      stack.push(box.children[0], box.children[1]);
    } else {
      for (let i = box.start; i < box.end; i++) {
        const j = order[i];
        if (tau[j] === 0) continue;
        const el = elements[j];
        if (Math.hypot(x - el.mx, y - el.my) > FAR_RATIO * el.length) {
          for (let q = 0; q < RULE; q++) {
            const o = (j * RULE + q) * 3;
            kernel(sources[o], sources[o + 1], x, y, charges[j * RULE + q], true, acc);
          }
        } else integrateCurve(el, 0, el.length, x, y, kernel, tau[j], true, acc);
      }
    }
  }
}
