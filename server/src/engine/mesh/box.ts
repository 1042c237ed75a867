// Box: each face a tensor grid of graded lines, shared across faces so the surface is closed.
// Lines along each axis are graded geometrically toward both ends (the box's edges and corners).
import type { Vec3 } from '../../../../grammar/scene';
import { MeshBuilder } from './builder';
import { DEFAULT_OPTIONS, type MeshOptions, type SizeAt, gradedPoints } from './grading';
import type { Mesh } from './types';

/** Grid coordinates along each axis for a box, following sizeAt over the surface. */
export function boxLines(center: Vec3, size: Vec3, sizeAt: SizeAt, opts: MeshOptions): number[][] {
  const lo = size.map((s, a) => center[a] - s / 2);
  const cap = opts.relative * (Math.max(...size) / 2);
  return [0, 1, 2].map((a) => {
    const b = (a + 1) % 3, c = (a + 2) % 3;
    // Local size at coordinate s along axis a: the smallest target on the box's surface there,
    // sampled on the perimeter of the cross-section (corners and edge midpoints).
    const at = (s: number) => {
      let h = cap;
      for (const fb of [0, 0.5, 1]) {
        for (const fc of [0, 0.5, 1]) {
          if (fb === 0.5 && fc === 0.5) continue;
          const p: Vec3 = [0, 0, 0];
          p[a] = lo[a] + s;
          p[b] = lo[b] + fb * size[b];
          p[c] = lo[c] + fc * size[c];
          h = Math.min(h, sizeAt(p[0], p[1], p[2]));
        }
      }
      return h;
    };
    return gradedPoints(size[a], at, true, true, 1).map((s) => lo[a] + s);
  });
}

/** Adds the box's surface on the given grid lines; outward normals. Box edges are marked. */
export function addBox(b: MeshBuilder, lines: number[][], electrode: number, thin: boolean): void {
  const n = lines.map((l) => l.length - 1);
  const index = new Map<number, number>();
  const vertexAt = (ijk: number[]): number => {
    const key = ijk[0] + (n[0] + 1) * (ijk[1] + (n[1] + 1) * ijk[2]);
    const found = index.get(key);
    if (found !== undefined) return found;
    const bounds = ijk.filter((v, a) => v === 0 || v === n[a]).length;
    const v = b.vertex(lines[0][ijk[0]], lines[1][ijk[1]], lines[2][ijk[2]], bounds >= 2);
    index.set(key, v);
    return v;
  };
  for (let a = 0; a < 3; a++) {
    // In-plane axes u = a+1, v = a+2 (cyclic) satisfy u × v = +a: counter-clockwise seen from +a.
    const u = (a + 1) % 3, v = (a + 2) % 3;
    for (const side of [0, n[a]]) {
      const flip = side === 0;
      for (let i = 0; i < n[u]; i++) {
        for (let j = 0; j < n[v]; j++) {
          const p = (di: number, dj: number) => {
            const ijk = [0, 0, 0];
            ijk[a] = side;
            ijk[u] = i + di;
            ijk[v] = j + dj;
            return vertexAt(ijk);
          };
          // Split each cell along the diagonal that points toward the face's nearest corner,
          // so the pattern is symmetric about the face centre.
          const towardU = i < n[u] / 2 ? 1 : -1, towardV = j < n[v] / 2 ? 1 : -1;
          if (towardU === towardV) {
            b.triangle(p(0, 0), p(1, 0), p(0, 1), electrode, thin, flip);
            b.triangle(p(1, 0), p(1, 1), p(0, 1), electrode, thin, flip);
          } else {
            b.triangle(p(0, 0), p(1, 0), p(1, 1), electrode, thin, flip);
            b.triangle(p(0, 0), p(1, 1), p(0, 1), electrode, thin, flip);
          }
        }
      }
    }
  }
}

/** A lone box mesh at a uniform target size h (graded toward edges), for tests and benchmarks. */
export function boxMesh(center: Vec3, size: Vec3, h: number, hollow = false): Mesh {
  const b = new MeshBuilder();
  const lines = boxLines(center, size, () => h, { ...DEFAULT_OPTIONS, minSegments: 1 });
  addBox(b, lines, 0, hollow);
  return b.build();
}
