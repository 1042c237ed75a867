import { describe, expect, it } from 'vitest';
import { potentialExact, preparePanels } from '../../server/src/engine/kernels/triangle';
import { farPanelPotential, farRule, THREE_POINT_RATIO } from '../../server/src/engine/fast/panel-entries';

// A small linear congruential generator (Park and Miller, CACM 31, 1988) for repeatable shapes.
function generator(seed: number): () => number {
  let s = seed;
  return () => (s = (s * 16807) % 2147483647) / 2147483647;
}

describe('far entries of the fast solver', () => {
  it('match the closed form (Wilton et al. 1984) within 2e-7 from 25 diameters out, over random triangles and directions', () => {
    const rnd = generator(7);
    let worst = 0, tried = 0;
    while (tried < 1500) {
      const v = Float64Array.from({ length: 9 }, rnd);
      const P = preparePanels({ vertices: v, triangles: new Uint32Array([0, 1, 2]) });
      const d = P.diameter[0];
      // Shapes a mesher makes: area at least 0.15 d² (no slivers; the equilateral has 0.43 d²).
      if (P.area[0] < 0.15 * d * d) continue;
      tried++;
      const F = farRule(P);
      const u = [rnd() - 0.5, rnd() - 0.5, rnd() - 0.5];
      const len = Math.hypot(u[0], u[1], u[2]);
      const r = THREE_POINT_RATIO * d * (1 + 1e-9 + 2 * rnd());
      const x = [0, 1, 2].map((c) => P.centroid[c] + (r * u[c]) / len);
      const exact = potentialExact(P, 0, x[0], x[1], x[2]);
      worst = Math.max(worst, Math.abs(farPanelPotential(P, F, 0, x[0], x[1], x[2]) - exact) / exact);
    }
    expect(worst).toBeLessThan(2e-7);
    // And the rule is really in use there (not the 7-point one): it differs from it measurably.
    expect(worst).toBeGreaterThan(1e-10);
  });
});
