// Benchmark part "solve": the 3d solver on a sphere and a unit cube at about 500, 1,000 and 2,000
// panels. For each: assembly, linear solve and evaluation times (a 100 × 100 slice and a 50-point
// probe line), the solver used, memory (resident set and heap after the solve; peak RSS of the whole
// run at the end) and the capacitance error against the exact value (sphere: 4πε0·a, closed form;
// cube: 0.6606782·4πε0·side, Hwang and Mascagni, J. Appl. Phys. 95, 3798, 2004).
// Then the live (coarse) picture of the 3d samples as the editor asks for it (level 'coarse', slice
// grids capped at 64 × 64 cells, panel limit 8,000), and of a 5,000-panel scene (beam-deflector at
// mesh size 4.8 mm: 5,000 panels at full level, 1,388 at the coarse one): the median of three
// solves with fresh caches, by stage, with the GMRES iterations per right-hand side and the load
// average (the machine is shared: compare figures taken at similar loads); then one edit (the first
// electrode with a center moved 1 mm, the cache kept as in the editor).
// Run: `npm run bench -- solve` (or `node dist/bench-solve.js`).
import { readFileSync, readdirSync } from 'node:fs';
import { loadavg } from 'node:os';
import { join } from 'node:path';
import { analyzeText } from '../grammar/index';
import { EPSILON_0, type Scene3d, type Shape3d } from '../grammar/scene';
import { createEngineCache, solveScene } from '../server/src/engine/index';
import { meshForScene } from '../server/src/engine/mesh/index';
import type { Cache3d } from '../server/src/engine/solve';

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

// ---- the live (coarse) picture ----
const samples = join(__dirname, '..', 'samples');
const live: { name: string; text: string }[] = readdirSync(samples)
  .filter((f) => f.endsWith('.vscape'))
  .sort()
  .map((f) => ({ name: f.replace('.vscape', ''), text: readFileSync(join(samples, f), 'utf8') }))
  .filter((s) => /^space 3d/m.test(s.text));
const beam = live.find((s) => s.name === 'beam-deflector');
if (beam) live.push({ name: 'beam-deflector 4.8 mm', text: beam.text.replace(/^mesh size .*$/m, 'mesh size 4.8 mm') });

const liveRows: string[][] = [['scene', 'panels', 'solver', 'assembly', 'solve', 'slices', 'other', 'total ms', 'iterations', 'edit ms', 'edit iterations']];
/**
 * The scene with its first electrode whose center starts with a number moved 1 mm along x (a typical
 * keystroke): the number plus one, as written or with a unit added, whichever the language accepts.
 */
function moved(text: string): string {
  const line = text.split('\n').find((l) => /^electrode .*center \(-?[\d.]+/.test(l));
  if (!line) return text;
  for (const unit of ['', ' mm']) {
    const edited = text.replace(line, line.replace(/center \((-?[\d.]+)/, (_, x: string) => `center (${Number(x) + 1}${unit}`));
    if (!analyzeText(edited).diagnostics.some((d) => d.severity === 'error')) return edited;
  }
  return text;
}
const median = (xs: number[]) => [...xs].sort((a, b) => a - b)[Math.floor(xs.length / 2)];
for (const s of live) {
  const parsed = analyzeText(s.text).scene;
  const runs: { t: Record<string, number>; total: number; panels: number; solver: string; iterations: number[] }[] = [];
  let cache = createEngineCache();
  for (let rep = 0; rep < 3; rep++) {
    cache = createEngineCache();
    const t0 = performance.now();
    const r = solveScene(parsed, { level: 'coarse', cache, maxGridCells: 4096, maxPanels: 8000 });
    const total = performance.now() - t0;
    if (!r) continue;
    const level = [...((cache.store.get('3d') as Cache3d | undefined)?.levels.values() ?? [])][0];
    runs.push({ t: r.stats.timings, total, panels: r.stats.panels, solver: r.stats.solver, iterations: level?.iterations ?? [] });
  }
  if (runs.length === 0) continue;
  // Then an edit of one electrode's position with the last run's cache kept (as in the editor).
  const t1 = performance.now();
  const edited = solveScene(analyzeText(moved(s.text)).scene, { level: 'coarse', cache, maxGridCells: 4096, maxPanels: 8000 });
  const editMs = performance.now() - t1;
  const editLevel = [...((cache.store.get('3d') as Cache3d | undefined)?.levels.values() ?? [])].pop();
  const m = (f: (x: (typeof runs)[number]) => number) => median(runs.map(f)).toFixed(0);
  const stage = (x: (typeof runs)[number]) => (x.t['fine.assembly'] ?? 0) + (x.t['fine.solve'] ?? 0) + (x.t['fine.freeSolve'] ?? 0) + (x.t.slices ?? 0);
  liveRows.push([
    s.name,
    String(runs[0].panels),
    runs[0].solver,
    m((x) => x.t['fine.assembly'] ?? 0),
    m((x) => (x.t['fine.solve'] ?? 0) + (x.t['fine.freeSolve'] ?? 0)),
    m((x) => x.t.slices ?? 0),
    m((x) => x.total - stage(x)),
    m((x) => x.total),
    runs[0].iterations.join(',') || '-',
    edited ? editMs.toFixed(0) : '-',
    editLevel?.iterations?.join(',') || '-',
  ]);
}
console.log(`\nlive (coarse) picture, median of 3 (ms); load average ${loadavg().map((l) => l.toFixed(2)).join(' ')}`);
const liveWidths = liveRows[0].map((_, c) => Math.max(...liveRows.map((r) => r[c].length)));
for (const r of liveRows) console.log(r.map((x, c) => (c === 0 || c === 2 ? x.padEnd(liveWidths[c]) : x.padStart(liveWidths[c]))).join('  '));
