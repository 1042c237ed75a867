import { describe, expect, it } from 'vitest';
import { addRing } from '../../server/src/engine/axisymmetric/ring';
import { addElement, type KernelAdd, type Mirror } from '../../server/src/engine/planar/bem2d';
import { arcCurve, lineCurve, splitPiece, type Piece } from '../../server/src/engine/planar/elements';
import { gridEvaluate, GRID_COARSE, GRID_FULL, type Grid2d, type GridAccuracy } from '../../server/src/engine/planar/grid2d';
import { lineChargeKernel } from '../../server/src/engine/planar/solve';

// Reference: the engine's own direct summation with adaptive quadrature, cell by cell (style.md:
// test the fast method against the clear O(N²) one), images and the r < 0 mirror applied as
// solve2d.ts does for probes.
const pieces: Piece[] = [
  { ...lineCurve(0.1, 0.3, 1, 0.3), electrode: 0, thin: true, gradeStart: false, gradeEnd: true },
  { ...arcCurve(0.6, 2, 0.5, -Math.PI / 2, Math.PI / 2), electrode: 1, thin: false, gradeStart: false, gradeEnd: false },
  { ...lineCurve(0.2, -1, 2.6, -1.2), electrode: 2, thin: true, gradeStart: true, gradeEnd: true },
  // A whole small circle: one run of arc elements turning by 2π (clusters along it must stay short).
  { ...arcCurve(2.2, 0.9, 0.25, 0, 2 * Math.PI), electrode: 3, thin: false, gradeStart: false, gradeEnd: false },
];

const references = new Map<string, Float64Array>();

function compare(kernel: KernelAdd, accuracy: GridAccuracy, options: { mirror?: Mirror; fold?: boolean; logScale?: number }, name: string) {
  const elements = pieces.flatMap((p) => splitPiece(p, 0.08));
  const tau = Float64Array.from(elements, (_, i) => 1 + 0.8 * Math.sin(0.37 * i));
  // Cells from u = −0.7 (mirrored when folded) to 3.1, v from −1.9 to 2.9: some on the elements' lines.
  const grid: Grid2d = { nu: 51, nv: 64, u0: -0.7, v0: -1.9, du: 0.075, dv: 0.075 };
  const size = grid.nu * grid.nv;
  const mask = new Uint8Array(size);
  // Leave out a block of cells (as inside a conductor) and every cell within 0.02 of an element's midpoint.
  for (let idx = 0; idx < size; idx++) {
    const i = idx % grid.nu, j = Math.floor(idx / grid.nu);
    const u = grid.u0 + (i + 0.5) * grid.du, v = grid.v0 + (j + 0.5) * grid.dv;
    const x = options.fold ? Math.abs(u) : u;
    mask[idx] = (i >= 27 && i < 34 && j >= 40 && j < 47) || elements.some((el) => Math.hypot(x - el.mx, v - el.my) < 0.02) ? 0 : 1;
  }
  const fast = new Float64Array(3 * size);
  const counts = gridEvaluate({ elements, taus: [tau], kernel, mirror: options.mirror ?? null, fold: options.fold ?? false, logScale: options.logScale }, grid, mask, [fast], accuracy);
  let reference = references.get(name);
  if (!reference) {
    reference = new Float64Array(3 * size);
    const acc = new Float64Array(3);
    for (let idx = 0; idx < size; idx++) {
      if (!mask[idx]) continue;
      const u = grid.u0 + ((idx % grid.nu) + 0.5) * grid.du, v = grid.v0 + (Math.floor(idx / grid.nu) + 0.5) * grid.dv;
      acc.fill(0);
      elements.forEach((el, j) => addElement(el, options.fold ? Math.abs(u) : u, v, kernel, options.mirror ?? null, tau[j], true, acc));
      if (options.fold && u < 0) acc[1] = -acc[1];
      reference.set(acc, 3 * idx);
    }
    references.set(name, reference);
  }
  let phiScale = 0, fieldScale = 0, phiErr = 0, fieldErr = 0, skipped = 0;
  for (let idx = 0; idx < size; idx++) {
    if (!mask[idx]) {
      if (fast[3 * idx] !== 0) skipped++;
      continue;
    }
    const acc = reference.subarray(3 * idx, 3 * idx + 3);
    phiScale = Math.max(phiScale, Math.abs(acc[0]));
    fieldScale = Math.max(fieldScale, Math.hypot(acc[1], acc[2]));
    phiErr = Math.max(phiErr, Math.abs(fast[3 * idx] - acc[0]));
    fieldErr = Math.max(fieldErr, Math.hypot(fast[3 * idx + 1] - acc[1], fast[3 * idx + 2] - acc[2]));
  }
  return { phi: phiErr / phiScale, field: fieldErr / fieldScale, skipped, counts, direct: size * elements.length * (options.mirror ? 2 : 1) };
}

describe('slice grids by target-side interpolation and expansions, against the direct sum', () => {
  const cases: [string, KernelAdd, { mirror?: Mirror; fold?: boolean; logScale?: number }][] = [
    ['ring kernel, cells at r < 0 mirrored', addRing, { fold: true }],
    ['ring kernel with a ground plane z = −1.5', addRing, { fold: true, mirror: { axis: 1, at: -1.5 } }],
    ['ln kernel by interpolation', lineChargeKernel(1.3), {}],
    ['ln kernel by complex expansions', lineChargeKernel(1.3), { logScale: 1.3 }],
    ['ln kernel by expansions with a ground plane x = −0.8', lineChargeKernel(1.3), { logScale: 1.3, mirror: { axis: 0, at: -0.8 } }],
  ];
  for (const [name, kernel, options] of cases) {
    it(`${name}: within 1e-6 (full) and 1e-4 (coarse) of the largest value, with far fewer element visits`, () => {
      const full = compare(kernel, GRID_FULL, options, name);
      expect(full.phi).toBeLessThan(1e-6);
      expect(full.field).toBeLessThan(1e-6);
      expect(full.skipped).toBe(0);
      const coarse = compare(kernel, GRID_COARSE, options, name);
      expect(coarse.phi).toBeLessThan(1e-4);
      expect(coarse.field).toBeLessThan(1e-4);
      // The point of the method: most element-cell pairs are never visited one by one.
      expect(coarse.counts.direct).toBeLessThan(0.1 * coarse.direct);
    });
  }
});

describe('several densities in one pass', () => {
  it('gives each density what a pass of its own gives (ring kernel with images, and the ln kernel)', () => {
    // The grid is linear in the densities and the pass shares each kernel evaluation between them:
    // common practice for superposition; checked here against separate passes.
    const elements = pieces.flatMap((p) => splitPiece(p, 0.1));
    const taus = [0.3, 1.1, 2.9].map((f) => Float64Array.from(elements, (_, i) => Math.cos(f * i) + (i % 5 === 0 ? 0 : 0.5)));
    const grid: Grid2d = { nu: 30, nv: 40, u0: -0.7, v0: -1.9, du: 0.13, dv: 0.12 };
    const mask = new Uint8Array(grid.nu * grid.nv).fill(1);
    for (const [kernel, extra] of [
      [addRing, { fold: true, mirror: { axis: 1, at: -1.5 } as Mirror }],
      [lineChargeKernel(1.3), { fold: false, mirror: null, logScale: 1.3 }],
    ] as const) {
      const together = taus.map(() => new Float64Array(3 * mask.length));
      gridEvaluate({ elements, taus, kernel, ...extra }, grid, mask, together, GRID_COARSE);
      taus.forEach((tau, b) => {
        const alone = new Float64Array(3 * mask.length);
        gridEvaluate({ elements, taus: [tau], kernel, ...extra }, grid, mask, [alone], GRID_COARSE);
        let scale = 0, diff = 0;
        alone.forEach((x, i) => {
          scale = Math.max(scale, Math.abs(x));
          diff = Math.max(diff, Math.abs(x - together[b][i]));
        });
        expect(diff).toBeLessThan(1e-12 * scale);
      });
    }
  });
});
