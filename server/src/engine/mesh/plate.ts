// Plate: a thin axis-aligned rectangle, a tensor grid graded toward all four edges.
// Normal along +x, +y or +z; boundary vertices are marked as edges.
import type { Vec2, Vec3 } from '../../../../grammar/scene';
import { MeshBuilder } from './builder';
import { type MeshOptions, type SizeAt, gradedPoints } from './grading';

export function addPlate(
  b: MeshBuilder,
  center: Vec3,
  size: Vec2,
  normal: 'x' | 'y' | 'z',
  sizeAt: SizeAt,
  opts: MeshOptions,
  electrode: number,
): void {
  const a = { x: 0, y: 1, z: 2 }[normal];
  // In-plane axes u = a+1, v = a+2 (cyclic): u × v = +a, so (u, v) counter-clockwise gives the +a normal.
  const u = (a + 1) % 3, v = (a + 2) % 3;
  // `size` spans the two in-plane axes in x, y, z order.
  const span = [0, 0, 0];
  span[Math.min(u, v)] = size[0];
  span[Math.max(u, v)] = size[1];
  const cap = opts.relative * (Math.max(size[0], size[1]) / 2);
  const lo = center.map((x, k) => x - span[k] / 2);
  const lines = [u, v].map((ax) => {
    const other = ax === u ? v : u;
    const sizeAlong = (s: number) => {
      let h = cap;
      for (const f of [0, 0.5, 1]) {
        const p: Vec3 = [...center];
        p[ax] = lo[ax] + s;
        p[other] = lo[other] + f * span[other];
        h = Math.min(h, sizeAt(p[0], p[1], p[2]));
      }
      return h;
    };
    return gradedPoints(span[ax], sizeAlong, true, true, 1).map((s) => lo[ax] + s);
  });
  const [lu, lv] = lines;
  const nu = lu.length - 1, nv = lv.length - 1;
  const idx: number[] = [];
  for (let j = 0; j <= nv; j++) {
    for (let i = 0; i <= nu; i++) {
      const p: Vec3 = [...center];
      p[u] = lu[i];
      p[v] = lv[j];
      idx.push(b.vertex(p[0], p[1], p[2], i === 0 || j === 0 || i === nu || j === nv));
    }
  }
  const at = (i: number, j: number) => idx[j * (nu + 1) + i];
  for (let j = 0; j < nv; j++) {
    for (let i = 0; i < nu; i++) {
      // Diagonals toward the nearest corner keep the pattern symmetric about the centre.
      if (i < nu / 2 === j < nv / 2) {
        b.triangle(at(i, j), at(i + 1, j), at(i, j + 1), electrode, true);
        b.triangle(at(i + 1, j), at(i + 1, j + 1), at(i, j + 1), electrode, true);
      } else {
        b.triangle(at(i, j), at(i + 1, j), at(i + 1, j + 1), electrode, true);
        b.triangle(at(i, j), at(i + 1, j + 1), at(i, j + 1), electrode, true);
      }
    }
  }
}
