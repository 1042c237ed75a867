import { afterAll, describe, expect, it } from 'vitest';
import { build } from 'esbuild';
import { watPlugin } from '../../scripts/wat.mjs';
import { preparePanels } from '../../server/src/engine/kernels/triangle';
import { buildPanelSolver, parallelBuildWork } from '../../server/src/engine/fast/panel-solver';
import { buildBlockJacobi } from '../../server/src/engine/fast/block-jacobi';
import { FieldEvaluator } from '../../server/src/engine/fast/field-evaluator';
import { closeFastPool, fastThreads, setFastWorkerScript } from '../../server/src/engine/fast/pool';
import { boxSurface, icosphere, joinMeshes } from './fixtures';
import { assembleDense, createSystem } from '../../server/src/engine/bem3d/system';
import { imageSet } from '../../server/src/engine/bem3d/images';
import { denseProductParallel } from '../../server/src/engine/fast/bem3d';
import { denseProductHere } from '../../server/src/engine/linear/solver';

const ZERO = { start: { line: 0, character: 0 }, end: { line: 0, character: 0 } };

// Worker threads cannot load TypeScript: bundle the worker entry the way the build does.
const code = (await build({ entryPoints: ['server/src/engine/fast/worker.ts'], bundle: true, platform: 'node', format: 'cjs', write: false, plugins: [watPlugin] })).outputFiles[0].text;

const EPS0 = 8.8541878188e-12; // CODATA 2022 (references.md)
// A grounded plane z = −1.5: the identity and the mirror image with opposite sign.
const GROUND = [
  { sign: 1, flip: [1, 1, 1], shift: [0, 0, 0] },
  { sign: -1, flip: [1, 1, -1], shift: [0, 0, -3] },
];
const mesh = joinMeshes([icosphere(1, 2), boxSurface([1, 1, 1], 6, [2.5, 0, 0], 1)]);
const P = preparePanels(mesh);
const sys = { vertices: mesh.vertices, triangles: mesh.triangles, points: mesh.centroid, scale: 1 / (4 * Math.PI * EPS0), images: GROUND };

afterAll(() => {
  setFastWorkerScript(null);
  closeFastPool();
});

describe('worker threads give the same numbers as one thread', () => {
  it('fills the H-matrix blocks on two threads with the same product', () => {
    setFastWorkerScript({ code });
    expect(fastThreads(2)).toBe(2);
    const two = buildPanelSolver(sys, { threads: 2 }, P)!;
    const one = buildPanelSolver(sys, { threads: 1 }, P)!;
    expect(two.stats.blocks).toBe(one.stats.blocks);
    const x = Float64Array.from({ length: P.count }, (_, i) => Math.sin(i));
    const y1 = new Float64Array(P.count), y2 = new Float64Array(P.count);
    one.apply(x, y1);
    two.apply(x, y2);
    // The same blocks by the same arithmetic, summed in another order: equal to rounding.
    let e = 0, s = 0;
    for (let i = 0; i < P.count; i++) {
      e = Math.max(e, Math.abs(y1[i] - y2[i]));
      s = Math.max(s, Math.abs(y1[i]));
    }
    expect(e / s).toBeLessThan(1e-12);
  });

  it('solves on two threads (product and preconditioner shared) as on one', () => {
    setFastWorkerScript({ code });
    const two = buildPanelSolver(sys, { threads: 2, blockSize: 32 }, P)!;
    const one = buildPanelSolver(sys, { threads: 1, blockSize: 32 }, P)!;
    const rhs = [0, 1].map((e) => Float64Array.from(mesh.electrode, (o) => (o === e ? 1 : 0)));
    const a = two.solveMany(rhs, [], { tol: 1e-10 })!, b = one.solveMany(rhs, [], { tol: 1e-10 })!;
    for (let k = 0; k < 2; k++) {
      expect(a[k].info.converged && b[k].info.converged).toBe(true);
      // The same arithmetic except the order in which the threads' product slices are added.
      expect(Math.abs(a[k].info.iterations - b[k].info.iterations)).toBeLessThanOrEqual(1);
      let e = 0, n = 0;
      for (let i = 0; i < P.count; i++) {
        e += (a[k].x[i] - b[k].x[i]) ** 2;
        n += b[k].x[i] ** 2;
      }
      expect(Math.sqrt(e / n)).toBeLessThan(1e-9);
    }
  });

  it('builds the preconditioner (local blocks and the coarse level) on two threads exactly as on one', () => {
    setFastWorkerScript({ code });
    const S = buildPanelSolver(sys, { threads: 1 }, P)!;
    // Blocks of 32 and a coarse level of many clusters: several row bands, blocks across them.
    const one = buildBlockJacobi(S.H, 32, true);
    const two = buildBlockJacobi(S.H, 32, true, parallelBuildWork(2));
    expect(one.coarse!.G).toBeGreaterThan(4);
    expect(two.coarse!.G).toBe(one.coarse!.G);
    expect(Array.from(two.pivot)).toEqual(Array.from(one.pivot));
    // Each row band is summed in the same block order on whichever thread: bit for bit.
    expect(two.lu.every((v, i) => v === one.lu[i])).toBe(true);
    expect(two.coarse!.AR.every((v, i) => v === one.coarse!.AR[i])).toBe(true);
    expect(one.coarse!.AR.some((v) => v !== 0)).toBe(true);
  });

  it('evaluates a grid on two threads exactly as on one', () => {
    setFastWorkerScript({ code });
    const sigma = Float64Array.from({ length: P.count }, (_, j) => 1 + mesh.centroid[3 * j + 1]);
    const G = 64;
    const pts = new Float64Array(3 * G * G);
    for (let k = 0; k < G * G; k++) pts.set([-2 + (6 * (k % G)) / G, -2 + (4 * Math.floor(k / G)) / G, 0.2], 3 * k);
    const two = new FieldEvaluator(mesh, sigma, sys.scale, sys.images, { threads: 2 }, P).evaluate(pts);
    const one = new FieldEvaluator(mesh, sigma, sys.scale, sys.images, { threads: 1 }, P).evaluate(pts);
    expect(Array.from(two.potential)).toEqual(Array.from(one.potential));
    expect(Array.from(two.field)).toEqual(Array.from(one.field));
  });
});

describe('evaluation with a grounded plane', () => {
  it('gives zero potential on the plane and a field normal to it (method of images, Jackson sec. 2.1)', () => {
    const sigma = Float64Array.from({ length: P.count }, (_, j) => 1 + mesh.centroid[3 * j]);
    const E = new FieldEvaluator(mesh, sigma, sys.scale, sys.images, { threads: 1 }, P);
    const above = E.at(0.3, 0.2, 0);
    for (const [x, y] of [[0, 0], [2, 1], [-3, 0.5]]) {
      const [phi, ex, ey] = E.at(x, y, -1.5);
      expect(Math.abs(phi)).toBeLessThan(1e-12 * Math.abs(above[0]));
      expect(Math.hypot(ex, ey)).toBeLessThan(1e-12 * Math.hypot(above[1], above[2], above[3]));
    }
  });
});

describe('dense rows on two threads', () => {
  it('fills the dense 3D matrix on two threads exactly as on one, ground plane included, with and without thin panels', () => {
    // Importing the fast module registers its row fillers with the dense assembly (bem3d/system.ts).
    const images = imageSet([{ axis: 'z', at: -1.5, range: ZERO }]).images;
    // Every panel marked thin (as a plate's would be): their rows carry the normal field too.
    for (const thin of [mesh.thin, new Uint8Array(mesh.thin.length).fill(1)]) {
      const m = { ...mesh, thin };
      setFastWorkerScript(null);
      const sysOne = createSystem(m, images);
      const one = assembleDense(sysOne)!;
      setFastWorkerScript({ code });
      expect(fastThreads()).toBe(2);
      const sysTwo = createSystem(m, images);
      const two = assembleDense(sysTwo)!;
      expect(two.buffer instanceof SharedArrayBuffer).toBe(true);
      const same = (a: Float64Array, b: Float64Array) => a.length === b.length && a.every((v, k) => v === b[k]);
      expect(same(one, two)).toBe(true);
      expect(one.some((v) => v !== 0)).toBe(true);
      expect(same(sysOne.thinRows!.rows, sysTwo.thinRows!.rows)).toBe(true);
      if (thin[0]) expect(sysOne.thinRows!.rows.some((v) => v !== 0)).toBe(true);
    }
  });
});

describe('dense products on two threads', () => {
  it('give exactly the one-thread product for 1 to 5 vectors', () => {
    setFastWorkerScript({ code });
    const n = 503;
    const A = new Float64Array(new SharedArrayBuffer(8 * n * n)).map((_, k) => Math.sin(k * 0.013) + (k % (n + 1) === 0 ? 5 : 0));
    for (let K = 1; K <= 5; K++) {
      const xs = Array.from({ length: K }, (_, v) => Float64Array.from({ length: n }, (_, i) => Math.cos(i * 0.1 + v)));
      const one = xs.map(() => new Float64Array(n)), two = xs.map(() => new Float64Array(n));
      denseProductHere(n, A, xs, one);
      denseProductParallel(n, A, xs, two);
      for (let v = 0; v < K; v++) expect(Array.from(two[v])).toEqual(Array.from(one[v]));
    }
  });
});
