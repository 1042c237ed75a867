// Benchmark part "fast": the hierarchical-matrix GMRES solver and the treecode evaluation.
// - dense (the 3D system's dense matrix and the solver chooseSolver would pick without the fast
//   one) against fast, side by side at about 1k, 2k and 4k panels: time, memory, agreement of the
//   capacitance matrix and panel charges, ratio;
// - fast alone at about 16k, 64k and 100k panels, and the exponent of time against N (4k to 64k);
// - a 256 × 256 slice evaluated from 20,480 panels, on one thread and on all;
// - the speed-up of block filling on all threads against one.
// The scene: a sphere (radius 1 m, geodesic mesh) and a box (1.6 × 1.2 × 1 m) beside it, two
// electrodes, each solved at 1 V with the other at 0 V (two right-hand sides).
// Run: `npm run bench -- fast`, or `node --expose-gc dist/bench-fast.js [--small] [parts...] [--sizes=a,b]`
// with parts among dense, alone, slice, threads (default: all) and sizes for the "alone" part.
import { loadavg } from 'node:os';
import { isMainThread } from 'node:worker_threads';
import { createSystem, assembleDense, INV_4PI } from '../server/src/engine/bem3d/system';
import { createSolver, denseOperator, chooseSolver } from '../server/src/engine/linear/solver';
import type { Mesh } from '../server/src/engine/mesh/types';
import { buildPanelSolver } from '../server/src/engine/fast/panel-solver';
import { FieldEvaluator } from '../server/src/engine/fast/field-evaluator';
import { closeFastPool, fastThreads, setFastWorkerScript } from '../server/src/engine/fast/pool';
import { isFastWorker, startFastWorker } from '../server/src/engine/fast/worker';
import { hmatrixStorage } from '../server/src/engine/fast/hmatrix';
import { FAST_TOLERANCE } from '../server/src/engine/fast/bem3d';
import { boxSurface, icosphere, joinMeshes } from '../tests/fast/fixtures';

const IDENTITY = [{ sign: 1, flip: [1, 1, 1], shift: [0, 0, 0] }];

/** About n panels: a geodesic sphere with about half of them, a box of square cells with the rest. */
function scene(n: number): Mesh {
  let level = 0;
  while (Math.abs(320 * 4 ** (level + 1) - n / 2) < Math.abs(320 * 4 ** level - n / 2)) level++;
  const sphere = 20 * 4 ** (level + 2);
  const cells = Math.max(2, Math.round(Math.sqrt((n - sphere) / 12)));
  return joinMeshes([icosphere(1, level + 2, [0, 0, 0], 0), boxSurface([1.6, 1.2, 1], cells, [2.4, 0.2, 0], 1)]);
}

function rhs(mesh: Mesh): Float64Array[] {
  return [0, 1].map((e) => Float64Array.from(mesh.electrode, (o) => (o === e ? 1 : 0)));
}

/** Capacitance matrix in units of 4πε0 (metres): raw[i][k] = Σ_{panels of i} x_k·area (scaled densities, system.ts). */
function capacitance(mesh: Mesh, xs: Float64Array[]): number[][] {
  const C = [[0, 0], [0, 0]];
  xs.forEach((x, k) => {
    for (let j = 0; j < x.length; j++) C[mesh.electrode[j]][k] += (x[j] * mesh.area[j]) / (4 * Math.PI);
  });
  return C;
}

function rssMB(): number {
  return process.memoryUsage().rss / 2 ** 20;
}
function gc(): void {
  (globalThis as { gc?: () => void }).gc?.();
}

interface FastRun {
  n: number;
  ms: number;
  /** CPU time of the whole process (all threads). */
  cpuMs: number;
  assembleMs: number;
  solveMs: number;
  iterations: number[];
  storeMB: number;
  rssMB: number;
  meanRank: number;
  xs: Float64Array[];
}

/** Builds and solves both right-hand sides; `tol` defaults to the 3D solver's own GMRES tolerance. */
function runFast(mesh: Mesh, threads?: number, tol = FAST_TOLERANCE): FastRun {
  gc();
  const t0 = performance.now();
  const cpu0 = process.cpuUsage();
  const S = buildPanelSolver({ vertices: mesh.vertices, triangles: mesh.triangles, points: mesh.centroid, scale: INV_4PI, images: IDENTITY }, { threads })!;
  const t1 = performance.now();
  // Both right-hand sides in lockstep (one pass over the H-matrix per GMRES round), as the 3D solver does.
  const rs = S.solveMany(rhs(mesh), [], { tol })!;
  const xs = rs.map((r) => r.x);
  const iterations = rs.map((r) => r.info.iterations);
  const t2 = performance.now();
  const cpu = process.cpuUsage(cpu0);
  const store = hmatrixStorage(S.H);
  return { n: mesh.area.length, ms: t2 - t0, cpuMs: (cpu.user + cpu.system) / 1000, assembleMs: t1 - t0, solveMs: t2 - t1, iterations, storeMB: store.bytes / 2 ** 20, rssMB: rssMB(), meanRank: store.meanRank, xs };
}

function runDense(mesh: Mesh): { ms: number; kind: string; storeMB: number; rssMB: number; xs: Float64Array[] } {
  gc();
  const t0 = performance.now();
  const sys = createSystem(mesh, IDENTITY.map((im) => ({ sign: im.sign, flip: im.flip as [number, number, number], shift: im.shift as [number, number, number] })));
  const A = assembleDense(sys)!;
  // The method the 3D solver picks for a dense matrix of this size.
  const kind = chooseSolver(sys.n, { kind: sys.n <= 400 ? 'dense-lu' : 'dense-gmres' });
  const solver = createSolver(denseOperator(sys.n, A), kind);
  const xs = solver.solve(rhs(mesh), { tolerance: 1e-10 })!;
  return { ms: performance.now() - t0, kind, storeMB: A.byteLength / 2 ** 20, rssMB: rssMB(), xs };
}

const f = (x: number, d = 0) => x.toFixed(d);
const e = (x: number) => x.toExponential(1);

function main(): void {
  const args = process.argv.slice(2);
  const small = args.includes('--small');
  const parts = args.filter((a) => !a.startsWith('--'));
  const want = (p: string) => parts.length === 0 || parts.includes(p);
  const sizesArg = args.find((a) => a.startsWith('--sizes='));
  setFastWorkerScript({ file: __filename });
  const threads = fastThreads();
  console.log(`threads: ${threads} (calling thread included); times in ms on this machine, memory in MiB`);
  console.log(`load average at start (1, 5, 15 min): ${loadavg().map((x) => x.toFixed(1)).join(', ')} — other work on the machine slows every figure`);
  if (want('dense')) denseAgainstFast(small);
  if (want('alone')) fastAlone(sizesArg ? sizesArg.slice(8).split(',').map(Number) : small ? [4000, 16000] : [4000, 16000, 64000, 100000]);
  if (want('slice')) slice(threads);
  if (want('threads') && threads > 1) threadSpeedup(threads);
  console.log(`load average at end: ${loadavg().map((x) => x.toFixed(1)).join(', ')}`);
  closeFastPool();
}

function denseAgainstFast(small: boolean): void {
  console.log('\n-- dense against fast (2 right-hand sides, GMRES to 1e-10) --');
  console.log('panels | dense ms (method)      store  rss | fast ms (assemble+solve) its    store  rss | time ratio | ΔC rel   Δq max rel');
  for (const target of small ? [1000] : [1000, 2000, 4000]) {
    const mesh = scene(target);
    const d = runDense(mesh);
    const fr = runFast(mesh, undefined, 1e-10);
    const Cd = capacitance(mesh, d.xs), Cf = capacitance(mesh, fr.xs);
    let dC = 0;
    for (let i = 0; i < 2; i++) for (let k = 0; k < 2; k++) dC = Math.max(dC, Math.abs(Cd[i][k] - Cf[i][k]) / Math.abs(Cd[i][i]));
    let dq = 0, big = 0;
    for (let k = 0; k < 2; k++) {
      for (let j = 0; j < fr.n; j++) {
        dq = Math.max(dq, Math.abs(d.xs[k][j] - fr.xs[k][j]) * mesh.area[j]);
        big = Math.max(big, Math.abs(d.xs[k][j]) * mesh.area[j]);
      }
    }
    console.log(
      `${String(fr.n).padStart(6)} | ${f(d.ms).padStart(8)} (${d.kind.padEnd(11)}) ${f(d.storeMB, 1).padStart(6)} ${f(d.rssMB).padStart(4)} | ` +
        `${f(fr.ms).padStart(7)} (${f(fr.assembleMs)}+${f(fr.solveMs)}) ${fr.iterations.join('/').padStart(5)} ${f(fr.storeMB, 1).padStart(6)} ${f(fr.rssMB).padStart(4)} | ` +
        `${f(d.ms / fr.ms, 2).padStart(10)} | ${e(dC)}  ${e(dq / big)}`,
    );
  }

}

function fastAlone(sizes: number[]): void {
  console.log(`\n-- fast alone (GMRES to ${FAST_TOLERANCE}, the 3D solver's tolerance; CPU: all threads of the process, which other work on the machine does not inflate as much as wall time) --`);
  console.log('panels | total ms  assemble  solve | CPU ms | GMRES its | mean rank | H store MiB | rss MiB | C11 (4πε0·m)');
  const fit: [number, number][] = [];
  for (const target of sizes) {
    const mesh = scene(target);
    const r = runFast(mesh);
    const C = capacitance(mesh, r.xs);
    if (target <= 64000) fit.push([Math.log(r.n), Math.log(r.ms)]);
    console.log(
      `${String(r.n).padStart(6)} | ${f(r.ms).padStart(8)} ${f(r.assembleMs).padStart(9)} ${f(r.solveMs).padStart(6)} | ${f(r.cpuMs).padStart(6)} | ${r.iterations.join('/').padStart(9)} | ${f(r.meanRank, 1).padStart(9)} | ${f(r.storeMB, 0).padStart(11)} | ${f(r.rssMB).padStart(7)} | ${C[0][0].toFixed(5)}`,
    );
  }
  const mx = fit.reduce((s, p) => s + p[0], 0) / fit.length, my = fit.reduce((s, p) => s + p[1], 0) / fit.length;
  const slope = fit.reduce((s, p) => s + (p[0] - mx) * (p[1] - my), 0) / fit.reduce((s, p) => s + (p[0] - mx) ** 2, 0);
  if (fit.length >= 2) {
    console.log(`fitted exponent of total time against N (${fit.length} sizes from ${f(Math.exp(fit[0][0]))} to ${f(Math.exp(fit[fit.length - 1][0]))} panels): ${slope.toFixed(2)}`);
  }
}

function slice(threads: number): void {
  console.log('\n-- slice 256 × 256 from 20,480 panels (sphere, uneven density; plane z = 0.1 through it) --');
  const sphere = icosphere(1, 5);
  const sigma = Float64Array.from({ length: sphere.area.length }, (_, j) => 1 + 0.5 * sphere.centroid[3 * j] + 0.3 * sphere.centroid[3 * j + 2] ** 2);
  const G = 256;
  const pts = new Float64Array(3 * G * G);
  for (let k = 0; k < G * G; k++) pts.set([-2 + (4 * ((k % G) + 0.5)) / G, -2 + (4 * (Math.floor(k / G) + 0.5)) / G, 0.1], 3 * k);
  for (const th of threads > 1 ? [1, threads] : [1]) {
    const t0 = performance.now();
    const E = new FieldEvaluator(sphere, sigma, INV_4PI, IDENTITY, { threads: th });
    const t1 = performance.now();
    E.evaluate(pts); // warm-up (and, on several threads, the first copy of the tree to shared memory)
    const runs: number[] = [];
    for (let k = 0; k < 3; k++) {
      const s = performance.now();
      E.evaluate(pts);
      runs.push(performance.now() - s);
    }
    console.log(`threads ${th}: tree ${f(t1 - t0)} ms, evaluation best of 3: ${f(Math.min(...runs))} ms (runs ${runs.map((x) => f(x)).join(', ')})`);
  }

}

function threadSpeedup(threads: number): void {
  console.log('\n-- block filling on all threads against one (16k panels) --');
  const mesh = scene(16000);
  const one = runFast(mesh, 1);
  const all = runFast(mesh, threads);
  console.log(`assembly: 1 thread ${f(one.assembleMs)} ms, ${threads} threads ${f(all.assembleMs)} ms, speed-up ${(one.assembleMs / all.assembleMs).toFixed(2)}`);
}

if (isFastWorker()) startFastWorker();
else if (isMainThread) main();
