// Benchmark part "solve": the 3d solver on a sphere and a unit cube at about 500, 1,000 and 2,000
// panels. For each: assembly, linear solve and evaluation times (a 100 × 100 slice and a 50-point
// probe line), the solver used, memory (resident set and heap after the solve; peak RSS of the whole
// run at the end) and the capacitance error against the exact value (sphere: 4πε0·a, closed form;
// cube: 0.6606782·4πε0·side, Hwang and Mascagni, J. Appl. Phys. 95, 3798, 2004).
// Run: `npm run bench -- solve` (or `node dist/bench-solve.js`).
import { EPSILON_0, type Scene3d, type Shape3d } from '../grammar/scene';
import { solveScene } from '../server/src/engine/index';
import { meshForScene } from '../server/src/engine/mesh/index';

const C0 = 4 * Math.PI * EPSILON_0;
const R0 = { start: { line: 0, character: 0 }, end: { line: 0, character: 0 } };

function scene(shape: Shape3d, size: number): Scene3d {
  return {
    space: '3d',
    title: null,
    medium: { name: null, permittivity: 1, strength: null, density: 1 },
    mesh: { kind: 'size', size },
    groundPlanes: [],
    slices: [{ plane: 'xz', at: 0, from: [-2, -2], to: [2, 2], cells: 100, range: R0 }],
    limit: null,
    electrodes: [{ name: 'body', shape, drive: { kind: 'potential', value: 1 }, range: R0, nameRange: R0 }],
    charges: [],
    probes: [{ kind: 'line', name: 'axis', from: [0, 0, 0.6], to: [0, 0, 2], samples: 50, range: R0 }],
  };
}

/** The mesh size whose panel count is closest to the target (bisection on the size; counts are steps). */
function sizeFor(shape: Shape3d, target: number): number {
  let lo = 0.01, hi = 2;
  for (let i = 0; i < 30; i++) {
    const mid = Math.sqrt(lo * hi);
    const n = meshForScene(scene(shape, mid)).area.length;
    if (n > target) lo = mid;
    else hi = mid;
  }
  const nLo = meshForScene(scene(shape, lo)).area.length;
  const nHi = meshForScene(scene(shape, hi)).area.length;
  return Math.abs(nLo - target) < Math.abs(nHi - target) ? lo : hi;
}

const bodies: { name: string; shape: Shape3d; exact: number }[] = [
  { name: 'sphere a=1 m', shape: { kind: 'sphere', center: [0, 0, 0], radius: 1, hollow: false }, exact: C0 },
  { name: 'unit cube', shape: { kind: 'box', center: [0, 0, 0], size: [1, 1, 1], hollow: false }, exact: 0.6606782 * C0 },
];

const rows: string[][] = [['body', 'panels', 'solver', 'assembly ms', 'solve ms', 'eval ms', 'total ms', 'RSS MB', 'heap MB', 'C error']];
for (const body of bodies) {
  for (const target of [500, 1000, 2000]) {
    const s = scene(body.shape, sizeFor(body.shape, target));
    (globalThis as { gc?: () => void }).gc?.();
    const t0 = performance.now();
    const r = solveScene(s, { convergence: false })!;
    const total = performance.now() - t0;
    const t = r.stats.timings;
    const mem = process.memoryUsage();
    rows.push([
      body.name,
      String(r.stats.panels),
      r.stats.solver,
      (t['fine.assembly'] ?? 0).toFixed(0),
      (t['fine.solve'] ?? 0).toFixed(0),
      ((t.slices ?? 0) + (t.probes ?? 0)).toFixed(0),
      total.toFixed(0),
      (mem.rss / 2 ** 20).toFixed(0),
      (mem.heapUsed / 2 ** 20).toFixed(0),
      `${((r.electrodes[0].capacitance / body.exact - 1) * 100).toFixed(3)}%`,
    ]);
  }
}

const widths = rows[0].map((_, c) => Math.max(...rows.map((r) => r[c].length)));
for (const r of rows) console.log(r.map((x, c) => (c < 3 ? x.padEnd(widths[c]) : x.padStart(widths[c]))).join('  '));
console.log(`peak RSS of the run: ${(process.resourceUsage().maxRSS / 1024).toFixed(0)} MB`);
