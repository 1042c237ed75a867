import { describe, expect, it } from 'vitest';
import { panelPotential, preparePanels } from '../../server/src/engine/kernels/triangle';
import { createFarRule } from '../../server/src/engine/kernels/far-rule';
import { panelEntrySource } from '../../server/src/engine/fast/panel-entries';
import { fillDenseRows, INV_4PI } from '../../server/src/engine/bem3d/system';
import type { Image } from '../../server/src/engine/bem3d/images';
import { boxSurface, icosphere, joinMeshes } from './fixtures';

// A sphere and a long box: observation points from on the panels to many diameters away, so every
// rule of triangle.ts (closed form, 7, 6, 4 and 3 points) is met.
const mesh = joinMeshes([icosphere(0.5, 3, [0, 0, 0], 0), boxSurface([4, 0.6, 0.6], 10, [3, 0, 0], 1)]);
const P = preparePanels(mesh);
const N = P.count;
const all = Int32Array.from({ length: N }, (_, j) => N - 1 - j);
const ground = [
  { sign: 1, flip: [1, 1, 1], shift: [0, 0, 0] },
  { sign: -1, flip: [1, 1, -1], shift: [0, 0, -2] },
];

describe('far-field panel integrals in WebAssembly (kernels/far-rule.wat)', () => {
  it('gives the Gauss-rule entries of triangle.ts to the bit, and NaN exactly where triangle.ts takes the closed form', () => {
    const far = createFarRule(P, mesh.centroid)!;
    expect(far).not.toBeNull();
    let computed = 0, left = 0;
    for (let i = 0; i < N; i += 97) {
      const x = mesh.centroid[3 * i], y = mesh.centroid[3 * i + 1], z = mesh.centroid[3 * i + 2];
      const I = far.row(x, y, z, all, 0, N);
      for (let k = 0; k < N; k++) {
        const j = all[k];
        const d2 = (x - P.centroid[3 * j]) ** 2 + (y - P.centroid[3 * j + 1]) ** 2 + (z - P.centroid[3 * j + 2]) ** 2;
        // triangle.ts: the closed form within FAR_RATIO diameters (farSq), a Gauss rule beyond.
        expect(Number.isNaN(I[k])).toBe(d2 <= P.farSq[j]);
        if (Number.isNaN(I[k])) left++;
        else {
          computed++;
          expect(I[k]).toBe(panelPotential(P, j, x, y, z));
        }
      }
    }
    expect(computed).toBeGreaterThan(10 * left);
    expect(left).toBeGreaterThan(0);
  });

  it('makes the fast solver’s matrix entries exactly those of triangle.ts, with and without a ground plane', () => {
    for (const images of [undefined, ground]) {
      const src = panelEntrySource(P, mesh.centroid, 0.25, images);
      const exact = (i: number, j: number) => {
        const x = mesh.centroid[3 * i], y = mesh.centroid[3 * i + 1], z = mesh.centroid[3 * i + 2];
        let v = 0;
        for (const im of images ?? [ground[0]]) v += im.sign * panelPotential(P, j, im.flip[0] * x + im.shift[0], im.flip[1] * y + im.shift[1], im.flip[2] * z + im.shift[2]);
        return 0.25 * v;
      };
      const row = new Float64Array(N), col = new Float64Array(N);
      for (let a = 0; a < N; a += 131) {
        src.row(a, all, 3, N - 3, row);
        for (let k = 0; k < N - 3; k++) expect(row[k]).toBe(exact(a, all[3 + k]));
        src.col(a, all, 5, N - 5, col);
        for (let k = 0; k < N - 5; k++) expect(col[k]).toBe(exact(all[5 + k], a));
      }
    }
  });

  it('fills the dense 3D matrix rows exactly as triangle.ts alone, with and without a ground plane, all or some columns', () => {
    for (const images of [[ground[0]], ground] as Image[][]) {
      const rows = Int32Array.from({ length: 40 }, (_, t) => (t * 37) % N);
      const cols = Int32Array.from({ length: 300 }, (_, t) => (t * 11) % N);
      for (const only of [undefined, cols]) {
        const A = new Float64Array(N * N);
        expect(fillDenseRows(P, mesh.centroid, images, rows, A, undefined, only)).toBe(true);
        for (const i of rows) {
          for (const j of only ?? all) {
            let v = 0;
            for (const im of images) v += im.sign * panelPotential(P, j, im.flip[0] * mesh.centroid[3 * i] + im.shift[0], im.flip[1] * mesh.centroid[3 * i + 1] + im.shift[1], im.flip[2] * mesh.centroid[3 * i + 2] + im.shift[2]);
            expect(A[i * N + j]).toBe(INV_4PI * v);
          }
        }
      }
    }
  });
});
