import { describe, expect, it } from 'vitest';
import { gmres, gmresMany, type BatchOperator } from '../../server/src/engine/linear/gmres';
import { createSolver, denseOperator, denseProductMany } from '../../server/src/engine/linear/solver';

// A smooth kernel matrix 1/(|p_i − p_j| + h) over points on a space curve: strongly coupled
// neighbours, like a boundary-element matrix (common practice test); non-symmetric by a row scaling.
function kernelMatrix(n: number): Float64Array {
  const pts = Array.from({ length: n }, (_, i) => {
    const t = (2 * Math.PI * i) / n;
    return [Math.cos(t), 0.5 * Math.sin(2 * t), 0.1 * t];
  });
  const a = new Float64Array(n * n);
  for (let i = 0; i < n; i++)
    for (let j = 0; j < n; j++) a[i * n + j] = (1 + 0.3 * Math.sin(i)) / (Math.hypot(pts[i][0] - pts[j][0], pts[i][1] - pts[j][1], pts[i][2] - pts[j][2]) + 0.02);
  return a;
}

/** The dense operator as a batch operator that counts its passes and the vectors in each. */
function countingBatch(n: number, a: Float64Array): BatchOperator & { passes: number[] } {
  const op = denseOperator(n, a);
  const passes: number[] = [];
  return {
    n,
    passes,
    applyMany(xs, ys) {
      passes.push(xs.length);
      for (let k = 0; k < xs.length; k++) op.apply(xs[k], ys[k]);
    },
  };
}

const n = 240;
const a = kernelMatrix(n);
const rhs = [
  Float64Array.from({ length: n }, (_, i) => 1 + Math.sin(i)),
  Float64Array.from({ length: n }, (_, i) => (i < n / 2 ? 1 : 0)),
  new Float64Array(n), // zero: done at once
  Float64Array.from({ length: n }, (_, i) => Math.cos(0.1 * i)),
];
const jacobi = (r: Float64Array, z: Float64Array) => {
  for (let i = 0; i < n; i++) z[i] = r[i] / a[i * n + i];
};

describe('GMRES for several right-hand sides in lockstep', () => {
  // A short restart (8) so that every system restarts and the final true-residual check runs.
  const options = { tolerance: 1e-10, restart: 8, precondition: jacobi };

  it('gives each system exactly what the one-system GMRES gives (solution, iterations, residual)', () => {
    const batch = gmresMany(countingBatch(n, a), rhs, options)!;
    rhs.forEach((b, k) => {
      const one = gmres(denseOperator(n, a), b, options)!;
      expect(batch[k].iterations).toBe(one.iterations);
      expect(batch[k].residual).toBe(one.residual);
      expect(batch[k].converged).toBe(one.converged);
      expect(Array.from(batch[k].x)).toEqual(Array.from(one.x));
    });
    expect(batch[2].iterations).toBe(0);
    expect(Math.min(batch[0].iterations, batch[1].iterations, batch[3].iterations)).toBeGreaterThan(8);
  });

  it('agrees with LU to the tolerance', () => {
    const batch = gmresMany(countingBatch(n, a), rhs, options)!;
    const lu = createSolver(denseOperator(n, a), 'dense-lu').solve(rhs)!;
    rhs.forEach((_, k) => {
      const scale = Math.max(1e-300, ...lu[k].map(Math.abs));
      for (let i = 0; i < n; i++) expect(Math.abs(batch[k].x[i] - lu[k][i])).toBeLessThan(1e-7 * scale);
      expect(batch[k].converged).toBe(true);
      expect(batch[k].residual).toBeLessThanOrEqual(1e-9);
    });
  });

  it('serves every running system with one operator pass per round, dropping systems as they finish', () => {
    const op = countingBatch(n, a);
    const batch = gmresMany(op, rhs, options)!;
    const products = batch.map((r) => r.iterations);
    // Rounds: as many as the longest system needs; products: each system's own (iterations plus residuals).
    expect(op.passes.length).toBeLessThan(products.reduce((s, p) => s + p, 0));
    expect(op.passes.length).toBeGreaterThanOrEqual(Math.max(...products));
    expect(op.passes[0]).toBe(3);
    expect(op.passes[op.passes.length - 1]).toBeLessThan(3);
    for (let i = 1; i < op.passes.length; i++) expect(op.passes[i]).toBeLessThanOrEqual(op.passes[i - 1]);
  });

  it('starts from given solutions: the answer as a warm start needs no iteration', () => {
    const first = gmresMany(countingBatch(n, a), rhs, { tolerance: 1e-11 })!;
    const again = gmresMany(countingBatch(n, a), rhs, { tolerance: 1e-8, initial: first.map((r) => r.x) })!;
    for (const r of again) expect(r.iterations).toBe(0);
  });

  it('returns null when cancelled', () => {
    let polls = 0;
    expect(gmresMany(countingBatch(n, a), rhs, { tolerance: 1e-12, isCancelled: () => ++polls > 3 })).toBeNull();
  });
});

describe('dense product of several vectors', () => {
  it('equals the one-vector products exactly, for 1 to 7 vectors (groups of four, two and one)', () => {
    const m = 37;
    const A = kernelMatrix(m);
    const op = denseOperator(m, A);
    for (let count = 1; count <= 7; count++) {
      const xs = Array.from({ length: count }, (_, k) => Float64Array.from({ length: m }, (_, i) => Math.sin(3 * i + k)));
      const ys = xs.map(() => new Float64Array(m));
      denseProductMany(m, A, xs, ys);
      xs.forEach((x, k) => {
        const y = new Float64Array(m);
        op.apply(x, y);
        expect(Array.from(ys[k])).toEqual(Array.from(y));
      });
    }
  });
});

describe('two-level preconditioner on a boundary-element matrix', () => {
  it('halves the GMRES iterations of block-Jacobi alone on a sphere beside a box, to the LU answer', async () => {
    const { meshForScene } = await import('../../server/src/engine/mesh/index');
    const { createSystem, assembleDense } = await import('../../server/src/engine/bem3d/system');
    const { blockJacobi, cutRuns, spatialOrder } = await import('../../server/src/engine/linear/block-jacobi');
    const { twoLevel } = await import('../../server/src/engine/linear/two-level');
    const { electrode, scene3d, sphere } = await import('./scenes');
    const scene = scene3d({
      electrodes: [electrode('s', sphere([0, 0, 0], 0.1)), electrode('b', { kind: 'box', center: [0.3, 0, 0], size: [0.1, 0.2, 0.15], hollow: false })],
      mesh: { kind: 'size', size: 0.12 },
    });
    const sys = createSystem(meshForScene(scene), [{ sign: 1, flip: [1, 1, 1], shift: [0, 0, 0] }]);
    const m = sys.n;
    expect(m).toBeGreaterThan(150);
    const A = assembleDense(sys)!;
    const b = Float64Array.from({ length: m }, (_, i) => (sys.mesh.electrode[i] === 0 ? 1 : 0));
    const order = spatialOrder(sys.points, sys.mesh.electrode);
    const op = denseOperator(m, A);
    const plain = gmres(op, b, { tolerance: 1e-9, precondition: blockJacobi(m, A, cutRuns(order, 32)) })!;
    const pc = twoLevel(m, A, order, 32, 4);
    const two = gmres(op, b, { tolerance: 1e-9, precondition: pc.apply })!;
    const lu = createSolver(op, 'dense-lu').solve([b])![0];
    const scale = Math.max(...lu.map(Math.abs));
    for (let i = 0; i < m; i++) expect(Math.abs(two.x[i] - lu[i])).toBeLessThan(1e-6 * scale);
    expect(two.converged).toBe(true);
    // Measured: 400 panels, 26 iterations with blocks alone, 11 with the coarse correction.
    expect(two.iterations).toBeLessThanOrEqual(0.5 * plain.iterations);
    // Batched: the same vectors through applyMany as through apply one by one, and the same solves.
    const rs = [b, Float64Array.from(b, (v, i) => v - Math.cos(i)), Float64Array.from(b, (_, i) => Math.sin(i))];
    const batch = rs.map(() => new Float64Array(m));
    pc.applyMany(rs, batch);
    rs.forEach((r, k) => {
      const z = new Float64Array(m);
      pc.apply(r, z);
      expect(Array.from(batch[k])).toEqual(Array.from(z));
    });
    const many = gmresMany({ n: m, applyMany: (xs, ys) => xs.forEach((x, k) => op.apply(x, ys[k])) }, rs, { tolerance: 1e-9, precondition: pc.apply, preconditionMany: pc.applyMany })!;
    rs.forEach((r, k) => {
      const one = gmres(op, r, { tolerance: 1e-9, precondition: pc.apply })!;
      expect(many[k].iterations).toBe(one.iterations);
      expect(Array.from(many[k].x)).toEqual(Array.from(one.x));
    });
  });
});
