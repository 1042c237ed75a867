// Local panel size and its grading toward sharp edges and rims.

/** Target panel edge length (m) at a point; the same code builds uniform, graded and refined meshes. */
export type SizeAt = (x: number, y: number, z: number) => number;

export interface MeshOptions {
  /**
   * Cap on the panel size relative to each body's own half-extent (its radius for a sphere or disc),
   * so a small body beside a large one keeps enough panels. Infinity turns the cap off.
   */
  relative: number;
  /** Fewest segments around any circle (sphere, cylinder, disc, torus), so thin wires keep their shape. */
  minSegments: number;
  /** Longest panel side over shortest, allowed where a curved body is much longer than it is thick. */
  maxAspect: number;
  /** A guard against runaway sizes: beyond about this many panels the whole mesh is coarsened uniformly. */
  maxPanels: number;
}

/**
 * Most panels the aspect limit may put on one thin body (a long fine wire or slender ring): beyond
 * it, panels along the body grow longer instead, so meshing never runs away.
 */
export const BODY_PANEL_LIMIT = 100_000;

export const DEFAULT_OPTIONS: MeshOptions = { relative: Infinity, minSegments: 12, maxAspect: 4, maxPanels: 200_000 };

/**
 * Grading toward edges (common practice for singular edge charge, cf. methods.md): the panel at an
 * edge or rim is EDGE_RATIO times the local target size, and each panel away from the edge is at most
 * GROWTH times the one before it, until the target size is reached. With 0.25 and 1.5 the sequence
 * is h/4, 0.375h, 0.56h, 0.84h, h: about two extra panels at each graded end.
 */
export const EDGE_RATIO = 0.25;
/**
 * Ratio of the largest to the smallest target over a sphere or torus beyond which it is meshed at
 * the larger size and refined locally (refine.ts: edges up to REFINE_FACTOR times the target there),
 * rather than uniformly at the smallest.
 */
export const REFINE_FACTOR = 1.5;
export const GROWTH = 1.5;

/**
 * Points 0 = s0 < s1 < … < sn = length along a segment, spaced to follow the local target size
 * `size(s)`, graded geometrically toward a start and/or end that lies on an edge.
 * The count is the smallest n with every step at or below the graded target (within sampling),
 * and at least `minCount`. Steps follow by equidistributing ∫ ds / h(s).
 */
export function gradedPoints(
  length: number,
  size: (s: number) => number,
  gradeStart: boolean,
  gradeEnd: boolean,
  minCount = 1,
): number[] {
  const hStart = size(0), hEnd = size(length);
  // Steps h_e·q^k (q = GROWTH) reach distance d = h_e(q^k − 1)/(q − 1) after k steps, so the step
  // count per unit length is dk/dd = (q − 1)/(ln q·(h_e + (q − 1)d)): equidistributing with the local
  // size g(d) = (h_e + (q − 1)d)·ln q/(q − 1) reproduces the geometric sequence exactly.
  const shape = Math.log(GROWTH) / (GROWTH - 1);
  const graded = (s: number, h: number) => {
    let g = h;
    if (gradeStart) g = Math.min(g, (EDGE_RATIO * hStart + (GROWTH - 1) * s) * shape);
    if (gradeEnd) g = Math.min(g, (EDGE_RATIO * hEnd + (GROWTH - 1) * (length - s)) * shape);
    return g;
  };
  // Sample finely enough to resolve the smallest graded panel.
  let hMin = Infinity;
  for (let k = 0; k <= 32; k++) hMin = Math.min(hMin, size((length * k) / 32));
  if (gradeStart || gradeEnd) hMin *= EDGE_RATIO;
  const m = Math.min(20000, Math.max(64, Math.ceil((8 * length) / Math.max(hMin, 1e-300))));
  const cumulative = new Float64Array(m + 1);
  let prev = 1 / graded(0, size(0));
  for (let k = 1; k <= m; k++) {
    const s = (length * k) / m;
    const cur = 1 / graded(s, size(s));
    cumulative[k] = cumulative[k - 1] + ((prev + cur) / 2) * (length / m);
    prev = cur;
  }
  const total = cumulative[m];
  const n = Math.max(minCount, Math.ceil(total - 1e-6));
  const points = [0];
  let k = 0;
  for (let i = 1; i < n; i++) {
    const target = (total * i) / n;
    while (cumulative[k + 1] < target) k++;
    const f = (target - cumulative[k]) / (cumulative[k + 1] - cumulative[k] || 1);
    points.push((length * (k + f)) / m);
  }
  points.push(length);
  return points;
}

/** The smallest value of sizeAt over a list of points. */
export function minSize(sizeAt: SizeAt, points: [number, number, number][]): number {
  let h = Infinity;
  for (const p of points) h = Math.min(h, sizeAt(p[0], p[1], p[2]));
  return h;
}

export { basisAround, unit3 } from '../../../../grammar/geometry';
