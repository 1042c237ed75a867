import { describe, expect, it } from 'vitest';
import { preparePanels } from '../../server/src/engine/kernels/triangle';
import { panelEntrySource, panelExtent } from '../../server/src/engine/fast/panel-entries';
import { buildFastSolver, productHere } from '../../server/src/engine/fast/fast-solver';
import { denseMatrix, denseMatvec, denseSolve } from '../../server/src/engine/fast/direct';
import { buildClusterTree } from '../../server/src/engine/fast/cluster-tree';
import { acaBlock } from '../../server/src/engine/fast/aca';
import { boxSurface, icosphere, joinMeshes } from './fixtures';

const EPS0 = 8.8541878188e-12; // CODATA 2022 (references.md)
const K = 1 / (4 * Math.PI * EPS0);

function relNorm(a: Float64Array, b: Float64Array): number {
  let e = 0, n = 0;
  for (let i = 0; i < a.length; i++) {
    e += (a[i] - b[i]) ** 2;
    n += b[i] ** 2;
  }
  return Math.sqrt(e / n);
}

// A sphere (radius 0.5 m, 320 panels) and a cube (0.6 m side, 432 panels) side by side: two
// electrodes, curved and flat panels, edges and corners. 752 unknowns.
const mesh = joinMeshes([icosphere(0.5, 2, [0, 0, 0], 0), boxSurface([0.6, 0.6, 0.6], 6, [1.2, 0.1, 0], 1)]);
const P = preparePanels(mesh);
const n = P.count;
const src = panelEntrySource(P, mesh.centroid, K);
const dense = denseMatrix(src, n);
// Small leaves and blocks so that this small problem has several tree levels and far blocks.
const fast = buildFastSolver(src, mesh.centroid, panelExtent(P), { leafSize: 24, blockSize: 64 })!;

describe('cluster tree', () => {
  it('orders every point once and keeps each node inside its box', () => {
    const t = buildClusterTree(mesh.centroid, 16, panelExtent(P));
    const seen = new Uint8Array(n);
    for (const i of t.order) seen[i]++;
    expect(seen.every((c) => c === 1)).toBe(true);
    for (let v = 0; v < t.nodeCount; v++) {
      for (let k = t.start[v]; k < t.start[v] + t.count[v]; k++) {
        for (let c = 0; c < 3; c++) {
          const x = mesh.centroid[3 * t.order[k] + c];
          expect(x).toBeGreaterThanOrEqual(t.boxMin[3 * v + c]);
          expect(x).toBeLessThanOrEqual(t.boxMax[3 * v + c]);
        }
      }
      if (t.left[v] >= 0) expect(t.count[t.left[v]] + t.count[t.right[v]]).toBe(t.count[v]);
      else expect(t.count[v]).toBeLessThanOrEqual(16);
    }
  });
});

describe('adaptive cross approximation', () => {
  it('approximates the block between the sphere and the cube to its tolerance', () => {
    // Rows: sphere panels; columns: cube panels (well separated). Compare with the exact block.
    const rows: number[] = [], cols: number[] = [];
    for (let i = 0; i < n; i++) (mesh.electrode[i] === 0 ? rows : cols).push(i);
    const order = Int32Array.from([...rows, ...cols]);
    const m = rows.length, k = cols.length;
    const f = acaBlock(src, order, 0, m, m, k, 1e-6)!;
    expect(f).not.toBeNull();
    expect(f.rank).toBeLessThan(Math.min(m, k) / 3);
    let e = 0, s = 0;
    for (let a = 0; a < m; a++) {
      for (let b = 0; b < k; b++) {
        let approx = 0;
        for (let l = 0; l < f.rank; l++) approx += f.U[l * m + a] * f.V[l * k + b];
        const exact = dense[rows[a] * n + cols[b]];
        e += (approx - exact) ** 2;
        s += exact ** 2;
      }
    }
    // The true error of ACA runs a few times its tolerance (methods.md): allow 10×.
    expect(Math.sqrt(e / s)).toBeLessThan(1e-5);
  });
});

describe('hierarchical matrix on 2352 panels', () => {
  it('stores under two thirds of the dense matrix and multiplies like the direct sum to 1e-6', () => {
    const sphere = boxSurface([1, 1, 1], 14);
    const Q = preparePanels(sphere);
    const big = panelEntrySource(Q, sphere.centroid, K);
    const S = buildFastSolver(big, sphere.centroid, panelExtent(Q))!;
    const N = Q.count;
    expect(S.stats.denseEntries + S.stats.lowRankEntries).toBeLessThan((2 / 3) * N * N);
    const x = new Float64Array(N).map((_, i) => Math.cos(i * 0.11) + 0.5);
    const y = new Float64Array(N);
    S.apply(x, y);
    // Direct sum over all panels for 40 rows spread over the box.
    const all = Int32Array.from({ length: N }, (_, j) => j);
    const row = new Float64Array(N);
    let e = 0, s = 0;
    for (let i = 0; i < N; i += 59) {
      big.row(i, all, 0, N, row);
      let d = 0;
      for (let j = 0; j < N; j++) d += row[j] * x[j];
      e += (d - y[i]) ** 2;
      s += d * d;
    }
    expect(Math.sqrt(e / s)).toBeLessThan(1e-6);
  });
});

describe('fast solver against dense LU', () => {
  it('multiplies like the dense matrix to 1e-7', () => {
    const x = new Float64Array(n).map((_, i) => Math.sin(i * 0.37) + 0.3);
    const y = new Float64Array(n);
    fast.apply(x, y);
    expect(relNorm(y, denseMatvec(dense, x))).toBeLessThan(1e-7);
  });

  it('gives the same panel charges and capacitance matrix as dense LU within 1e-5', () => {
    const rhs = [0, 1].map((e) => Float64Array.from(mesh.electrode, (o) => (o === e ? 1 : 0)));
    const ref = denseSolve(Float64Array.from(dense), n, rhs);
    const C = [[0, 0], [0, 0]], Cref = [[0, 0], [0, 0]];
    for (let e = 0; e < 2; e++) {
      const { x, info } = fast.solve(rhs[e])!;
      expect(info.converged).toBe(true);
      // Panel charges q = σ·area, compared panel by panel relative to the largest.
      let worst = 0, big = 0;
      for (let i = 0; i < n; i++) {
        worst = Math.max(worst, Math.abs(x[i] - ref[e][i]) * mesh.area[i]);
        big = Math.max(big, Math.abs(ref[e][i]) * mesh.area[i]);
        C[mesh.electrode[i]][e] += x[i] * mesh.area[i];
        Cref[mesh.electrode[i]][e] += ref[e][i] * mesh.area[i];
      }
      expect(worst / big).toBeLessThan(1e-5);
    }
    for (let a = 0; a < 2; a++) for (let b = 0; b < 2; b++) expect(Math.abs(C[a][b] - Cref[a][b]) / Cref[a][a]).toBeLessThan(1e-5);
    // Properties of every Maxwell capacitance matrix (Smythe, Static and Dynamic Electricity, ch. 2):
    // positive diagonal, negative off-diagonal, each row sum positive (charge on a body at 1 V with
    // the others at 1 V too). And a grounded body nearby raises the sphere's self capacitance above
    // the lone sphere's 4πε0·a (references.md), less the 4/N flat-panel deficit (methods.md).
    expect(C[0][1]).toBeLessThan(0);
    expect(C[1][0]).toBeLessThan(0);
    expect(C[0][0] + C[0][1]).toBeGreaterThan(0);
    expect(C[1][1] + C[1][0]).toBeGreaterThan(0);
    expect(C[0][0] / (4 * Math.PI * EPS0 * 0.5)).toBeGreaterThan(1 - 4 / 320);
  });

  it('converges at once from a warm start at the solution, and in fewer iterations from a near one', () => {
    const b = Float64Array.from(mesh.electrode, (o) => (o === 0 ? 1 : 0));
    const cold = fast.solve(b)!;
    const hot = fast.solve(b, cold.x)!;
    expect(hot.info.iterations).toBeLessThanOrEqual(1);
    // An edit that changes the drive by 1% starts from the old solution and needs fewer steps.
    const b2 = b.map((v) => v * 1.01);
    const warm = fast.solve(b2, cold.x)!;
    const again = fast.solve(b2)!;
    expect(warm.info.iterations).toBeLessThan(again.info.iterations);
  });
});

describe('two-level preconditioner', () => {
  it('needs fewer GMRES iterations with the coarse level than block Jacobi alone, to the same answer', () => {
    // Hybrid two-level Schwarz (block-jacobi.ts): the coarse solve removes the smooth densities
    // spread over many blocks, which block Jacobi alone leaves to the Krylov iteration.
    const oneLevel = buildFastSolver(src, mesh.centroid, panelExtent(P), { leafSize: 24, blockSize: 64, coarseLevel: false })!;
    const b = Float64Array.from(mesh.electrode, (o) => (o === 0 ? 1 : 0));
    const two = fast.solve(b, null, { tol: 1e-10 })!;
    const one = oneLevel.solve(b, null, { tol: 1e-10 })!;
    expect(two.info.converged && one.info.converged).toBe(true);
    expect(two.info.iterations).toBeLessThan(one.info.iterations);
    expect(relNorm(two.x, one.x)).toBeLessThan(1e-8);
  });

  it('solves several right-hand sides in lockstep exactly as one at a time', () => {
    const rhs = [0, 1].map((e) => Float64Array.from(mesh.electrode, (o) => (o === e ? 1 : 0)));
    const many = fast.solveMany(rhs)!;
    rhs.forEach((b, k) => {
      const one = fast.solve(b)!;
      expect(many[k].info.iterations).toBe(one.info.iterations);
      expect(relNorm(many[k].x, one.x)).toBeLessThan(1e-12);
    });
  });
});

describe('the product of several stacked vectors', () => {
  it('equals one product per vector for 1 to 6 vectors (groups of four, two and one)', () => {
    const N = fast.H.size;
    for (let K = 1; K <= 6; K++) {
      const xs = Float64Array.from({ length: K * N }, (_, i) => Math.sin(0.7 * i) + 0.2);
      const ys = new Float64Array(K * N);
      productHere(fast.H, xs, ys, K);
      for (let v = 0; v < K; v++) {
        const y = new Float64Array(N);
        productHere(fast.H, xs.slice(v * N, (v + 1) * N), y, 1);
        expect(relNorm(ys.slice(v * N, (v + 1) * N), y)).toBeLessThan(1e-13);
      }
    }
  });
});

describe('the SIMD product kernel (product-kernel.wat)', () => {
  it('keeps the blocks in its arena and multiplies like the plain JavaScript product to 1e-13, for 1 to 5 vectors', () => {
    // The same blocks twice: in the WebAssembly arena, and in ordinary shared buffers (the reference).
    const plain = buildFastSolver(src, mesh.centroid, panelExtent(P), { leafSize: 24, blockSize: 64, simd: false })!;
    expect(fast.H.arena).not.toBeNull();
    expect(fast.H.packs.every((p) => p.wasm)).toBe(true);
    expect(plain.H.arena).toBeNull();
    expect(plain.stats.blocks).toBe(fast.stats.blocks);
    const N = fast.H.size;
    // Leaves of 24 and blocks of every size: row lengths hit the kernel's groups of eight, four and one.
    for (let Kv = 1; Kv <= 5; Kv++) {
      const xs = Float64Array.from({ length: Kv * N }, (_, i) => Math.cos(0.3 * i) - 0.1);
      const a = new Float64Array(Kv * N), b = new Float64Array(Kv * N);
      productHere(fast.H, xs, a, Kv);
      productHere(plain.H, xs, b, Kv);
      expect(relNorm(a, b)).toBeLessThan(1e-13);
    }
  });

  it('solves like plain JavaScript with the preconditioner in the arena (single-precision factors), to the solver tolerance', () => {
    const plain = buildFastSolver(src, mesh.centroid, panelExtent(P), { leafSize: 24, blockSize: 64, simd: false })!;
    const b = Float64Array.from(mesh.electrode, (o) => (o === 0 ? 1 : 0));
    const a = fast.solve(b, null, { tol: 1e-10 })!, r = plain.solve(b, null, { tol: 1e-10 })!;
    expect(a.info.converged && r.info.converged).toBe(true);
    // The factors differ by single-precision rounding only: about as many rounds, the same answer.
    expect(Math.abs(a.info.iterations - r.info.iterations)).toBeLessThanOrEqual(1);
    expect(relNorm(a.x, r.x)).toBeLessThan(1e-8);
  });
});
