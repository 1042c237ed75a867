import { describe, expect, it } from 'vitest';
import { luFactor, luSolve } from '../../server/src/engine/linear/dense-lu';
import { createSolver, denseOperator } from '../../server/src/engine/linear/solver';

// A small system with a known exact solution (worked by hand, common practice):
//   2x +  y −  z =   8
//  −3x −  y + 2z = −11
//  −2x +  y + 2z =  −3      →  x = 2, y = 3, z = −1
// It needs a row interchange at the first step (|−3| > |2|), so partial pivoting is exercised.
const A3 = new Float64Array([2, 1, -1, -3, -1, 2, -2, 1, 2]);
const b3 = new Float64Array([8, -11, -3]);

// A deterministic well-conditioned test matrix: diagonally dominant, non-symmetric, larger than a block.
function testMatrix(n: number): Float64Array {
  const a = new Float64Array(n * n);
  let s = 12345;
  const rand = () => ((s = (s * 1103515245 + 12345) % 2147483648) / 2147483648) - 0.5;
  for (let i = 0; i < n; i++) for (let j = 0; j < n; j++) a[i * n + j] = rand() + (i === j ? n / 4 : 0) + 1 / (1 + Math.abs(i - j));
  return a;
}

describe('dense LU with partial pivoting', () => {
  it('solves a known 3×3 system exactly', () => {
    const f = luFactor(3, Float64Array.from(A3))!;
    const x = luSolve(f, b3);
    expect(x[0]).toBeCloseTo(2, 13);
    expect(x[1]).toBeCloseTo(3, 13);
    expect(x[2]).toBeCloseTo(-1, 13);
    expect(f.pivots[0]).toBe(1);
  });

  it('reproduces a chosen solution of a 300×300 system (several blocks) to 1e-12', () => {
    const n = 300;
    const a = testMatrix(n);
    const xTrue = Float64Array.from({ length: n }, (_, i) => Math.sin(i));
    const b = new Float64Array(n);
    denseOperator(n, a).apply(xTrue, b);
    const x = createSolver(denseOperator(n, a), 'dense-lu').solve([b])![0];
    for (let i = 0; i < n; i++) expect(Math.abs(x[i] - xTrue[i])).toBeLessThan(1e-12);
  });

  it('flags a singular matrix', () => {
    const f = luFactor(2, new Float64Array([1, 2, 2, 4]))!;
    expect(f.singular).toBe(true);
  });

  it('stops when cancelled', () => {
    expect(luFactor(100, testMatrix(100), () => true)).toBeNull();
  });
});

describe('GMRES on a dense operator', () => {
  it('agrees with LU to the requested tolerance, and a warm start from the answer needs no iteration', () => {
    const n = 200;
    const a = testMatrix(n);
    const b = Float64Array.from({ length: n }, (_, i) => Math.cos(i));
    const op = denseOperator(n, a);
    const xLu = createSolver(op, 'dense-lu').solve([b])![0];
    const g = createSolver(op, 'dense-gmres');
    const xG = g.solve([b], { tolerance: 1e-12 })![0];
    for (let i = 0; i < n; i++) expect(Math.abs(xG[i] - xLu[i])).toBeLessThan(1e-9);
    expect(g.iterations[0]).toBeGreaterThan(0);
    g.solve([b], { tolerance: 1e-8, initial: [xLu] });
    expect(g.iterations[0]).toBe(0);
  });
});

describe('block-Jacobi preconditioning', () => {
  it('GMRES with blocks over spatial groups reaches the LU answer in fewer iterations than with the diagonal', async () => {
    const { blockJacobi, spatialGroups } = await import('../../server/src/engine/linear/block-jacobi');
    // A smooth kernel matrix 1/(|p_i − p_j| + h) over points on a curve: strongly coupled neighbours (common practice test).
    const n = 300;
    const pts = new Float64Array(3 * n);
    for (let i = 0; i < n; i++) {
      const t = (2 * Math.PI * i) / n;
      pts.set([Math.cos(t), Math.sin(2 * t) * 0.5, 0.1 * t], 3 * i);
    }
    const a = new Float64Array(n * n);
    for (let i = 0; i < n; i++)
      for (let j = 0; j < n; j++) {
        const d = Math.hypot(pts[3 * i] - pts[3 * j], pts[3 * i + 1] - pts[3 * j + 1], pts[3 * i + 2] - pts[3 * j + 2]);
        a[i * n + j] = 1 / (d + 0.02);
      }
    const b = Float64Array.from({ length: n }, (_, i) => 1 + Math.sin(i));
    const plain = denseOperator(n, a);
    const groups = spatialGroups(pts, new Uint8Array(n), 32);
    expect(groups.reduce((s, g) => s + g.length, 0)).toBe(n);
    const blocked = { ...plain, precondition: blockJacobi(n, a, groups) };
    const xLu = createSolver(plain, 'dense-lu').solve([b])![0];
    const g1 = createSolver(plain, 'dense-gmres');
    const g2 = createSolver(blocked, 'dense-gmres');
    const x2 = g2.solve([b], { tolerance: 1e-11 })![0];
    g1.solve([b], { tolerance: 1e-11 });
    for (let i = 0; i < n; i++) expect(Math.abs(x2[i] - xLu[i])).toBeLessThan(1e-7 * Math.max(...xLu.map(Math.abs)));
    expect(g2.iterations[0]).toBeLessThan(g1.iterations[0]);
  });
});
