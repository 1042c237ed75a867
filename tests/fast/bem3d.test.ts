import { describe, expect, it } from 'vitest';
import { potentialAndField } from '../../server/src/engine/bem3d/field';
import { imageSet } from '../../server/src/engine/bem3d/images';
import { assembleDense, createSystem, surfacePotentialAndGradient } from '../../server/src/engine/bem3d/system';
import { chooseSolver, createSolver, denseOperator, FAST_MIN_UNKNOWNS } from '../../server/src/engine/linear/solver';
import { FAST_KIND, fastOperator } from '../../server/src/engine/fast/bem3d';
import { transferSolution } from '../../server/src/engine/fast/transfer';
import { boxSurface, icosphere, joinMeshes } from './fixtures';

const R0 = { start: { line: 0, character: 0 }, end: { line: 0, character: 0 } };

describe('the fast solver inside the 3D solver', () => {
  it('is chosen above FAST_MIN_UNKNOWNS and the dense methods below', () => {
    expect(chooseSolver(FAST_MIN_UNKNOWNS + 1)).toBe(FAST_KIND);
    expect(chooseSolver(FAST_MIN_UNKNOWNS)).not.toBe(FAST_KIND);
    expect(chooseSolver(FAST_MIN_UNKNOWNS + 1, { kind: 'dense-gmres' })).toBe('dense-gmres');
  });

  it('solves the 3D system with a ground plane like dense LU, within 1e-5 on charges', () => {
    // A sphere and a box over the grounded plane z = −0.8 (images from bem3d/images.ts).
    const mesh = joinMeshes([icosphere(0.5, 2, [0, 0, 0], 0), boxSurface([0.6, 0.6, 0.6], 6, [1.3, 0, 0.1], 1)]);
    const { images } = imageSet([{ axis: 'z', at: -0.8, range: R0 }]);
    const sys = createSystem(mesh, images);
    const rhs = [0, 1].map((e) => Float64Array.from(mesh.electrode, (o) => (o === e ? 1 : 0)));
    const dense = createSolver(denseOperator(sys.n, assembleDense(sys)!), 'dense-lu').solve(rhs)!;
    const fastSolver = createSolver(fastOperator(sys)!, FAST_KIND);
    const fast = fastSolver.solve(rhs, { tolerance: 1e-10 })!;
    expect(fastSolver.name).toBe(FAST_KIND);
    for (let k = 0; k < 2; k++) {
      let worst = 0, big = 0, q = 0, qRef = 0;
      for (let j = 0; j < sys.n; j++) {
        worst = Math.max(worst, Math.abs(fast[k][j] - dense[k][j]) * mesh.area[j]);
        big = Math.max(big, Math.abs(dense[k][j]) * mesh.area[j]);
        if (mesh.electrode[j] === k) {
          q += fast[k][j] * mesh.area[j];
          qRef += dense[k][j] * mesh.area[j];
        }
      }
      expect(worst / big).toBeLessThan(1e-5);
      expect(Math.abs(q - qRef) / qRef).toBeLessThan(1e-6);
    }
    // Warm start from the solution: at most one iteration.
    fastSolver.solve(rhs, { initial: fast, tolerance: 1e-10 });
    expect(Math.max(...fastSolver.iterations)).toBeLessThanOrEqual(1);
  });

  it('evaluates large systems by the treecode, within 1e-4 of the direct sum (probes) and 3e-3 (grids)', () => {
    const mesh = icosphere(1, 4); // 5120 panels, above the threshold
    const { images } = imageSet([{ axis: 'z', at: -1.5, range: R0 }]);
    const sys = createSystem(mesh, images);
    const x = Float64Array.from({ length: sys.n }, (_, j) => 1 + 0.4 * mesh.centroid[3 * j]);
    const state = { sys, x, charges: [], images, permittivity: 1 };
    const ref = new Float64Array(4);
    const scalePhi = Math.abs((surfacePotentialAndGradient(sys, x, 0, 0, 0, ref), ref[0]));
    for (const p of [[1.3, 0.2, 0.1], [0, -2, 1], [0.2, 0.3, 1.05], [-1.2, 0, -1]]) {
      surfacePotentialAndGradient(sys, x, p[0], p[1], p[2], ref, 'precise');
      const precise = potentialAndField(state, p[0], p[1], p[2], 'precise');
      const grid = potentialAndField(state, p[0], p[1], p[2], 'grid');
      expect(Math.abs(precise[0] - ref[0]) / scalePhi).toBeLessThan(1e-4);
      expect(Math.abs(grid[0] - ref[0]) / scalePhi).toBeLessThan(3e-3);
      const g = Math.hypot(ref[1], ref[2], ref[3]);
      expect(Math.hypot(precise[1] + ref[1], precise[2] + ref[2], precise[3] + ref[3]) / g).toBeLessThan(1e-3);
    }
  });
});

describe('cancellation and warm starts', () => {
  it('stops assembly and GMRES when cancelled', () => {
    const mesh = icosphere(1, 2);
    const sys = createSystem(mesh, imageSet([]).images);
    expect(fastOperator(sys, () => true)).toBeNull();
    const solver = createSolver(fastOperator(sys)!, FAST_KIND);
    let polls = 0;
    expect(solver.solve([new Float64Array(sys.n).fill(1)], { isCancelled: () => ++polls > 3 })).toBeNull();
  });

  it('starts an edited mesh (the sphere grown by 2%) from the earlier solution and needs fewer iterations', () => {
    const coarse = icosphere(1, 3), fine = icosphere(1.02, 3);
    const sc = createSystem(coarse, imageSet([]).images), sf = createSystem(fine, imageSet([]).images);
    const xc = createSolver(fastOperator(sc)!, FAST_KIND).solve([new Float64Array(sc.n).fill(1)])![0];
    const start = transferSolution(coarse, xc, fine);
    const solver = createSolver(fastOperator(sf)!, FAST_KIND);
    const b = [new Float64Array(sf.n).fill(1)];
    solver.solve(b, { tolerance: 1e-8 });
    const cold = solver.iterations[0];
    solver.solve(b, { tolerance: 1e-8, initial: [start] });
    expect(solver.iterations[0]).toBeLessThan(cold);
  });
});
