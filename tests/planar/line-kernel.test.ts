import { describe, expect, it } from 'vitest';
import { integrateCurve } from '../../server/src/engine/planar/bem2d';
import { lineCurve } from '../../server/src/engine/planar/elements';
import { lineChargeKernel, lineSegmentKernel } from '../../server/src/engine/planar/solve';

describe('straight elements of the line-charge kernel in closed form', () => {
  it('gives the textbook field of a uniformly charged infinite strip on its mid-plane', () => {
    // A strip of width 2a with surface charge σ (a segment in the planar cross-section) gives
    // E = σ/(π·ε)·atan(a/z) at distance z on its mid-plane: the line-charge field σ·du/(2πε·r)
    // summed across the strip (textbook electrostatics, from memory). Here per unit σ/ε.
    const a = 0.3, z = 0.17;
    const el = lineCurve(0.5 - a, 1, 0.5 + a, 1);
    const acc = new Float64Array(3);
    lineSegmentKernel(1)(el, 0.5, 1 + z, 1, true, acc);
    expect(Math.abs(acc[1])).toBeLessThan(1e-15);
    expect(Math.abs(acc[2] / (Math.atan(a / z) / Math.PI) - 1)).toBeLessThan(1e-13);
  });

  it('agrees with adaptive quadrature of the point kernel near, far and in line with the element', () => {
    // Reference: the engine's adaptive Gauss quadrature (bem2d.ts integrateCurve), the slow exact sum.
    const scale = 0.7;
    const el = lineCurve(0.1, -0.2, 0.4, 0.2);
    const targets = [
      [0.3, 0.05], [0.2, 0.3], [1.5, -2], [40, 25], [0.1 - 0.3, -0.2 - 0.4], [0.4 + 0.03, 0.2 + 0.04], [0.25 + 1e-4, 0], [-3, 0.01],
    ];
    for (const [x, y] of targets) {
      const exact = new Float64Array(3), quad = new Float64Array(3);
      lineSegmentKernel(scale)(el, x, y, 1.3, true, exact);
      integrateCurve(el, 0, el.length, x, y, lineChargeKernel(scale), 1.3, true, quad);
      expect(Math.abs(exact[0] - quad[0])).toBeLessThan(1e-10 * Math.max(1, Math.abs(quad[0])));
      expect(Math.hypot(exact[1] - quad[1], exact[2] - quad[2])).toBeLessThan(1e-9 * Math.hypot(quad[1], quad[2]));
    }
  });
});
