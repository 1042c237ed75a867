// The boundary-element core shared by the planar and axisymmetric engines: first-kind integral
// equation for the surface charge on curved elements (segments and exact arcs, constant density,
// midpoint collocation), with a kernel per space:
//   planar        G = −ln(ρ/ℓ)/(2π)            (line charge per metre; methods.md "Planar")
//   axisymmetric  G = a·K(m)/(π·d)             (a ring of radius a; see axisymmetric/ring.ts)
// both per unit reduced density τ = σ/ε and unit arc length. Both kernels share the singular part
// −ln(ρ)/(2π) as ρ → 0 (a ring looks like a line charge from close by: a/d → ½), which is removed
// and integrated exactly on the element itself:  ∫₀^L ln|s − L/2| ds = L·(ln(L/2) − 1);
// the smooth rest goes to Gauss–Legendre with nodes clustered at the collocation point.
// Other elements use Gauss rules chosen by distance, bisecting near the target.
import { gaussLegendre } from '../special/gauss-legendre';
import { curvePoint, type Curve2d, type Element2d } from './elements';

/** Adds w·(G, E_x, E_y) at (x, y) of a unit reduced density at source point (xs, ys) into acc[0..2]. */
export type KernelAdd = (xs: number, ys: number, x: number, y: number, w: number, field: boolean, acc: Float64Array) => void;

/**
 * Adds w·(G, E_x, E_y) at (x, y) of unit reduced density on a whole straight element, in closed form
 * (a kernel may offer one; it then replaces the adaptive quadrature on near straight elements; far
 * ones keep the cheaper fixed Gauss rule).
 */
export type LineAdd = (el: Curve2d, x: number, y: number, w: number, field: boolean, acc: Float64Array) => void;

/** Coefficient of −ln ρ in both kernels, per unit reduced density: 1/(2π). */
export const LOG_COEFFICIENT = 1 / (2 * Math.PI);

/** A grounded mirror line (coordinate `axis` = `at`): image sources of opposite sign. */
export interface Mirror {
  axis: 0 | 1;
  at: number;
}

const scratch = new Float64Array(4);

/** Adds the integral over arc length [sA, sB] of element el of the kernel at (x, y), times w. */
export function integrateCurve(
  el: Curve2d,
  sA: number,
  sB: number,
  x: number,
  y: number,
  kernel: KernelAdd,
  w: number,
  field: boolean,
  acc: Float64Array,
  depth = 0,
): void {
  const len = sB - sA;
  curvePoint(el, 0.5 * (sA + sB), scratch);
  const dist = Math.hypot(x - scratch[0], y - scratch[1]);
  let n: number;
  if (dist > 10 * len) n = 3;
  else if (dist > 4 * len) n = 5;
  else if (dist > 1.5 * len || depth >= 24) n = 8;
  else {
    const mid = 0.5 * (sA + sB);
    integrateCurve(el, sA, mid, x, y, kernel, w, field, acc, depth + 1);
    integrateCurve(el, mid, sB, x, y, kernel, w, field, acc, depth + 1);
    return;
  }
  const rule = gaussLegendre(n);
  for (let k = 0; k < n; k++) {
    curvePoint(el, sA + len * rule.nodes[k], scratch);
    kernel(scratch[0], scratch[1], x, y, w * len * rule.weights[k], field, acc);
  }
}

const imageScratch = new Float64Array(3);

/** Adds the whole element's w·(G, E) at (x, y): in closed form when the kernel has one for straight elements, else by quadrature. */
export function addCurve(el: Curve2d, x: number, y: number, kernel: KernelAdd, line: LineAdd | null, w: number, field: boolean, acc: Float64Array): void {
  if (line && el.kind === 'line') line(el, x, y, w, field, acc);
  else integrateCurve(el, 0, el.length, x, y, kernel, w, field, acc);
}

/** Adds the potential and field at (x, y) of unit reduced density on el, and of its image when mirrored. */
export function addElement(el: Curve2d, x: number, y: number, kernel: KernelAdd, mirror: Mirror | null, w: number, field: boolean, acc: Float64Array, line: LineAdd | null = null): void {
  addCurve(el, x, y, kernel, line, w, field, acc);
  if (!mirror) return;
  // Image of opposite sign: φ_img(p) = −φ(Mp), E_img(p) = −M·E(Mp).
  const img = imageScratch;
  img[0] = img[1] = img[2] = 0;
  const mx = mirror.axis === 0 ? 2 * mirror.at - x : x;
  const my = mirror.axis === 1 ? 2 * mirror.at - y : y;
  addCurve(el, mx, my, kernel, line, w, field, img);
  acc[0] -= img[0];
  if (field) {
    acc[1] += mirror.axis === 0 ? img[1] : -img[1];
    acc[2] += mirror.axis === 1 ? img[2] : -img[2];
  }
}

const SELF_RULE = 12;

/**
 * Potential at el's own collocation point (its midpoint) of unit reduced density on el:
 *   ∫ G ds = ∫ [G + ln|s − L/2|/(2π)] ds − L·(ln(L/2) − 1)/(2π),
 * the bracket integrated on each half with s − L/2 = ±(L/2)·u², which clusters Gauss nodes at the
 * collocation point and leaves an integrand like u³·ln u.
 */
export function selfPotential(el: Element2d, kernel: KernelAdd): number {
  const L = el.length;
  const half = 0.5 * L;
  const rule = gaussLegendre(SELF_RULE);
  const acc = new Float64Array(3);
  let sum = 0;
  for (const side of [-1, 1]) {
    for (let k = 0; k < SELF_RULE; k++) {
      const u = rule.nodes[k];
      const t = half * u * u;
      curvePoint(el, half + side * t, scratch);
      acc[0] = 0;
      kernel(scratch[0], scratch[1], el.mx, el.my, 1, false, acc);
      sum += rule.weights[k] * (acc[0] + LOG_COEFFICIENT * Math.log(t)) * L * u;
    }
  }
  return sum - LOG_COEFFICIENT * L * (Math.log(half) - 1);
}

/**
 * The collocation matrix A (row-major n×n, n = elements): A_ij = potential at collocation point i
 * of unit reduced density on element j (with its image when mirrored).
 */
export function assemble(elements: Element2d[], kernel: KernelAdd, mirror: Mirror | null, isCancelled?: () => boolean, line: LineAdd | null = null): Float64Array | null {
  const n = elements.length;
  const a = new Float64Array(n * n);
  const acc = new Float64Array(3);
  const far = farRules(elements);
  for (let i = 0; i < n; i++) {
    if (isCancelled && (i & 31) === 0 && isCancelled()) return null;
    const ei = elements[i];
    const row = i * n;
    addRow(elements, far, kernel, line, ei.mx, ei.my, i, 1, a, row, acc);
    a[row + i] += selfPotential(ei, kernel);
    if (mirror) {
      const mx = mirror.axis === 0 ? 2 * mirror.at - ei.mx : ei.mx;
      const my = mirror.axis === 1 ? 2 * mirror.at - ei.my : ei.my;
      addRow(elements, far, kernel, line, mx, my, -1, -1, a, row, acc);
    }
  }
  return a;
}

/** Beyond this many element lengths from the target an element's cached 3-point rule is used. */
export const FAR_RATIO = 12;
export const FAR_RULE = 3;

/** The 3-point Gauss rule of every element: x, y, weight·length per point. */
export function farRules(elements: Element2d[]): Float64Array {
  const rule = gaussLegendre(FAR_RULE);
  const out = new Float64Array(elements.length * FAR_RULE * 3);
  const p = new Float64Array(4);
  elements.forEach((el, j) => {
    for (let q = 0; q < FAR_RULE; q++) {
      curvePoint(el, el.length * rule.nodes[q], p);
      const o = (j * FAR_RULE + q) * 3;
      out[o] = p[0];
      out[o + 1] = p[1];
      out[o + 2] = el.length * rule.weights[q];
    }
  });
  return out;
}

/** a[row + j] += sign · (potential at (x, y) of unit density on element j), for every j but `skip`. */
function addRow(elements: Element2d[], far: Float64Array, kernel: KernelAdd, line: LineAdd | null, x: number, y: number, skip: number, sign: number, a: Float64Array, row: number, acc: Float64Array): void {
  for (let j = 0; j < elements.length; j++) {
    if (j === skip) continue;
    const el = elements[j];
    acc[0] = 0;
    const dx = x - el.mx;
    const dy = y - el.my;
    const reach = FAR_RATIO * el.length;
    if (dx * dx + dy * dy > reach * reach) {
      const o = j * FAR_RULE * 3;
      kernel(far[o], far[o + 1], x, y, far[o + 2], false, acc);
      kernel(far[o + 3], far[o + 4], x, y, far[o + 5], false, acc);
      kernel(far[o + 6], far[o + 7], x, y, far[o + 8], false, acc);
    } else if (line && el.kind === 'line') line(el, x, y, 1, false, acc);
    else integrateCurve(el, 0, el.length, x, y, kernel, 1, false, acc);
    a[row + j] += sign * acc[0];
  }
}
