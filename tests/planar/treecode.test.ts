import { describe, expect, it } from 'vitest';
import { addRing } from '../../server/src/engine/axisymmetric/ring';
import { integrateCurve, type KernelAdd } from '../../server/src/engine/planar/bem2d';
import { arcCurve, lineCurve, splitPiece, type Piece } from '../../server/src/engine/planar/elements';
import { lineChargeKernel } from '../../server/src/engine/planar/solve';
import { buildTree, setDensities, treeEvaluate } from '../../server/src/engine/planar/treecode2d';

const pieces: Piece[] = [
  { ...lineCurve(0, 0, 1, 0), electrode: 0, thin: true, gradeStart: false, gradeEnd: true },
  { ...arcCurve(0, 2, 0.5, -Math.PI / 2, Math.PI / 2), electrode: 1, thin: false, gradeStart: false, gradeEnd: false },
  { ...lineCurve(0.2, -1, 3, -1.2), electrode: 2, thin: true, gradeStart: true, gradeEnd: true },
];

function compare(kernel: KernelAdd): { phi: number; field: number } {
  const elements = pieces.flatMap((p) => splitPiece(p, 0.02));
  const tau = Float64Array.from(elements, (_, i) => 1 + 0.8 * Math.sin(0.37 * i));
  const tree = buildTree(elements);
  setDensities(tree, tau);
  let phi = 0, field = 0;
  for (let k = 0; k < 40; k++) {
    // A fixed scatter of targets over the scene, some close to the elements.
    const x = 0.05 + 2.9 * ((k * 0.618034) % 1), y = -1.9 + 4.6 * ((k * 0.414214) % 1);
    const fast = new Float64Array(3), direct = new Float64Array(3);
    treeEvaluate(tree, kernel, x, y, fast);
    elements.forEach((el, j) => integrateCurve(el, 0, el.length, x, y, kernel, tau[j], true, direct));
    phi = Math.max(phi, Math.abs(fast[0] - direct[0]) / Math.abs(direct[0]));
    field = Math.max(field, Math.hypot(fast[1] - direct[1], fast[2] - direct[2]) / Math.hypot(direct[1], direct[2]));
  }
  return { phi, field };
}

describe('2d treecode (barycentric Lagrange proxies) against the direct sum', () => {
  // Reference: the engine's own direct summation with adaptive quadrature (style.md: test the fast
  // method against the clear O(N²) one). Wang, Krasny and Tlupova (2020) report errors of this order
  // for 8 points per side at θ = 0.5.
  it('agrees for the ring kernel to 1e-5 in potential and field', () => {
    const e = compare(addRing);
    expect(e.phi).toBeLessThan(1e-5);
    expect(e.field).toBeLessThan(1e-5);
  });
  it('agrees for the line-charge kernel to 1e-5 in potential and field', () => {
    const e = compare(lineChargeKernel(1));
    expect(e.phi).toBeLessThan(1e-5);
    expect(e.field).toBeLessThan(1e-5);
  });
});
