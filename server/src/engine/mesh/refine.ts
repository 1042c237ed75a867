// Local refinement of a curved body's triangles by longest-edge bisection (Rivara, Int. J. Numer.
// Methods Eng. 20, 1984): every edge longer than the target size where it sits is split at its
// midpoint, which is then pushed onto the true surface; a triangle with any split edge also has its
// longest edge split (repeated until nothing changes), so each triangle splits into 2, 3 or 4 along
// its longest edge first. Neighbours split the same edges, so the surface stays closed and
// conforming, and the angles stay bounded away from zero.
import type { SizeAt } from './grading';

export type Vec3 = [number, number, number];

/** A triangulated surface being refined: flat vertex coordinates and counter-clockwise triangles. */
export interface Patchwork {
  xyz: number[];
  triangles: [number, number, number][];
}

const key = (a: number, b: number) => (a < b ? a * 4294967296 + b : b * 4294967296 + a);

function length(s: Patchwork, a: number, b: number): number {
  const p = s.xyz;
  return Math.hypot(p[3 * a] - p[3 * b], p[3 * a + 1] - p[3 * b + 1], p[3 * a + 2] - p[3 * b + 2]);
}

/** Index of the longest edge k (from corner k to corner k+1), ties broken by the vertex pair so neighbours agree. */
function longest(s: Patchwork, t: [number, number, number]): number {
  let best = 0, bestLen = -1, bestKey = -1;
  for (let k = 0; k < 3; k++) {
    const a = t[k], b = t[(k + 1) % 3];
    const l = length(s, a, b), kk = key(a, b);
    if (l > bestLen * (1 + 1e-12) || (Math.abs(l - bestLen) <= 1e-12 * l && kk > bestKey)) {
      best = k;
      bestLen = l;
      bestKey = kk;
    }
  }
  return best;
}

/**
 * Refines until no edge is longer than `factor` times sizeAt at its midpoint (at most `maxPasses`
 * passes, and never beyond `maxTriangles`). `project` moves a new midpoint onto the true surface.
 */
export function refineToSize(
  s: Patchwork,
  sizeAt: SizeAt,
  project: (p: Vec3) => Vec3,
  factor = 1,
  maxPasses = 12,
  maxTriangles = 400_000,
): void {
  for (let pass = 0; pass < maxPasses && s.triangles.length < maxTriangles; pass++) {
    const marked = new Set<number>();
    for (const t of s.triangles) {
      for (let k = 0; k < 3; k++) {
        const a = t[k], b = t[(k + 1) % 3];
        const p = s.xyz;
        const h = sizeAt((p[3 * a] + p[3 * b]) / 2, (p[3 * a + 1] + p[3 * b + 1]) / 2, (p[3 * a + 2] + p[3 * b + 2]) / 2);
        if (length(s, a, b) > factor * h) marked.add(key(a, b));
      }
    }
    if (marked.size === 0) return;
    // Closure: a triangle with any marked edge must also split its longest edge.
    for (let changed = true; changed; ) {
      changed = false;
      for (const t of s.triangles) {
        const k = longest(s, t);
        const lk = key(t[k], t[(k + 1) % 3]);
        if (marked.has(lk)) continue;
        if (marked.has(key(t[0], t[1])) || marked.has(key(t[1], t[2])) || marked.has(key(t[2], t[0]))) {
          marked.add(lk);
          changed = true;
        }
      }
    }
    const midpoint = new Map<number, number>();
    const mid = (a: number, b: number): number => {
      const kk = key(a, b);
      const found = midpoint.get(kk);
      if (found !== undefined) return found;
      const p = s.xyz;
      const q = project([(p[3 * a] + p[3 * b]) / 2, (p[3 * a + 1] + p[3 * b + 1]) / 2, (p[3 * a + 2] + p[3 * b + 2]) / 2]);
      s.xyz.push(q[0], q[1], q[2]);
      const index = s.xyz.length / 3 - 1;
      midpoint.set(kk, index);
      return index;
    };
    const isMarked = (u: number, v: number) => marked.has(key(u, v));
    // Splits triangle t across its edge k (corner k to corner k+1) at that edge's midpoint.
    const bisect = (t: [number, number, number], k: number): [number, number, number][] => {
      const a = t[k], b = t[(k + 1) % 3], c = t[(k + 2) % 3];
      const m = mid(a, b);
      return [[a, m, c], [m, b, c]];
    };
    const next: [number, number, number][] = [];
    for (const t of s.triangles) {
      if (!isMarked(t[0], t[1]) && !isMarked(t[1], t[2]) && !isMarked(t[2], t[0])) {
        next.push(t);
        continue;
      }
      // The longest edge first (marked, by the closure); then the halves' remaining original edges.
      const k = longest(s, t);
      const c = t[(k + 2) % 3];
      const [first, second] = bisect(t, k);
      // first = (a, m, c): its original edge is c → a (index 2); second = (m, b, c): b → c (index 1).
      if (isMarked(c, first[0])) next.push(...bisect(first, 2));
      else next.push(first);
      if (isMarked(second[1], c)) next.push(...bisect(second, 1));
      else next.push(second);
    }
    s.triangles = next;
  }
}
