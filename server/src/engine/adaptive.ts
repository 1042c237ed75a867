// Adaptive refinement of a 3d scene's mesh: solve, mark panels, halve the target size there, re-mesh,
// re-solve, until every electrode's self capacitance C_kk and peak surface field change between rounds
// by less than a tolerance (or a round or panel limit is hit). The last two rounds then go through the
// ordinary 3d solve (solve.ts) as its two levels, so fields, slices, probes, checks and the two-level
// convergence estimate all come from the refined meshes; stats.refinement reports what was reached.
//
// Marking, each round:
// - peaks: panels whose surface field is at least PEAK_FRACTION of their electrode's peak;
// - capacitance: for each unit solution (electrode k at 1 V, the rest at 0), the indicator
//   η_j = A_j·(max_i |σ_j − σ_i| + GEOMETRY_WEIGHT·|σ_j|·θ_j²) over the panels i sharing a vertex with j:
//   the charge misplaced by a density jump (a jump indicator is common practice for piecewise-constant
//   densities) plus the flat-panel geometry error, which goes as (s/ρ)² with ρ the radius of curvature
//   and θ_j (the largest angle between j's normal and a neighbour's) ≈ s/ρ; marked in
//   bulk: the largest η until their Σ η² reaches BULK_FRACTION of the total (Dörfler, SIAM J. Numer.
//   Anal. 33, 1106, 1996). Only for electrodes whose C_kk has not yet converged.
// A marked panel j of size s_j puts a ball of radius BALL_RADIUS·s_j with target size s_j/2 into the
// size function; balls accumulate over rounds, so the size function is the previous mesh's plus the
// new refinement. Spheres and tori refine locally by bisection; the other shapes follow the size
// function line by line (mesh/index.ts).
//
// A peak on a sharp edge is singular (methods.md): it grows with every refinement and never converges,
// so it is left out of the tolerance, and its electrode's peak is no longer refined once that
// electrode's C_kk has converged; singularPeak says so.
import type { Scene3d } from '../../../grammar/scene';
import { imageSet } from './bem3d/images';
import { meshPlan, meshScene, type SizeAt } from './mesh/index';
import type { Mesh } from './mesh/types';
import type { RefinementStats, Result } from './result';
import { geometryKey, solve3d, solveAt, type LevelOutcome, type Solve3dOptions } from './solve';

export interface AdaptiveOptions {
  /** Largest relative change between rounds of any C_kk or (non-singular) peak field, e.g. 1e-3. */
  tolerance: number;
  /** Most refinement rounds after the first mesh (default DEFAULT_MAX_ROUNDS). */
  maxRounds?: number;
}

export const DEFAULT_MAX_ROUNDS = 4;
/** Panels with a field at or above this fraction of their electrode's peak are refined. */
export const PEAK_FRACTION = 0.8;
/** Dörfler bulk fraction of the capacitance indicator. */
export const BULK_FRACTION = 0.5;
/**
 * Weight of the geometry term: flat panels put a sphere's capacitance −4/N low (methods.md), and with
 * N ≈ 4πa²/(√3/4·s²) that is about 0.14·(s/a)² relative, spread evenly over the panels.
 */
export const GEOMETRY_WEIGHT = 0.14;
/** Radius of a refinement ball, in panel sizes: it covers the marked panel and the edges it shares. */
export const BALL_RADIUS = 1.25;

interface Ball {
  x: number;
  y: number;
  z: number;
  r: number;
  /** Target size inside the ball, m. */
  h: number;
}

/** Edge of the equilateral triangle with a panel's area: s = √(4A/√3) (common practice). */
function panelSize(area: number): number {
  return Math.sqrt((4 * area) / Math.sqrt(3));
}

/** base(p) lowered to the target of every ball holding p; balls found through a uniform grid hash. */
export function sizeWithBalls(base: SizeAt, balls: readonly Ball[]): SizeAt {
  if (balls.length === 0) return base;
  const cell = Math.max(...balls.map((b) => b.r));
  const grid = new Map<number, Ball[]>();
  const hash = (i: number, j: number, k: number) => (Math.imul(i, 73856093) ^ Math.imul(j, 19349663) ^ Math.imul(k, 83492791)) | 0;
  for (const b of balls) {
    const i0 = Math.floor((b.x - b.r) / cell), i1 = Math.floor((b.x + b.r) / cell);
    const j0 = Math.floor((b.y - b.r) / cell), j1 = Math.floor((b.y + b.r) / cell);
    const k0 = Math.floor((b.z - b.r) / cell), k1 = Math.floor((b.z + b.r) / cell);
    for (let i = i0; i <= i1; i++)
      for (let j = j0; j <= j1; j++)
        for (let k = k0; k <= k1; k++) {
          const key = hash(i, j, k);
          const list = grid.get(key);
          if (list) list.push(b);
          else grid.set(key, [b]);
        }
  }
  return (x, y, z) => {
    let h = base(x, y, z);
    const list = grid.get(hash(Math.floor(x / cell), Math.floor(y / cell), Math.floor(z / cell)));
    if (list) for (const b of list) if (b.h < h && (x - b.x) ** 2 + (y - b.y) ** 2 + (z - b.z) ** 2 <= b.r * b.r) h = b.h;
    return h;
  };
}

/** For each panel, the panels sharing a vertex with it (CSR lists). */
function vertexNeighbours(mesh: Mesh): { start: Int32Array; list: Int32Array } {
  const n = mesh.area.length;
  const nv = mesh.vertices.length / 3;
  const count = new Int32Array(nv + 1);
  for (const v of mesh.triangles) count[v + 1]++;
  for (let v = 0; v < nv; v++) count[v + 1] += count[v];
  const byVertex = new Int32Array(mesh.triangles.length);
  const fill = count.slice(0, nv);
  mesh.triangles.forEach((v, t) => (byVertex[fill[v]++] = Math.floor(t / 3)));
  const lists: number[][] = Array.from({ length: n }, () => []);
  for (let p = 0; p < n; p++) {
    const seen = new Set<number>();
    for (let c = 0; c < 3; c++) {
      const v = mesh.triangles[3 * p + c];
      for (let q = count[v]; q < count[v + 1]; q++) if (byVertex[q] !== p) seen.add(byVertex[q]);
    }
    lists[p] = [...seen];
  }
  const start = new Int32Array(n + 1);
  lists.forEach((l, p) => (start[p + 1] = start[p] + l.length));
  const list = new Int32Array(start[n]);
  lists.forEach((l, p) => list.set(l, start[p]));
  return { start, list };
}

/** Marks panels for refinement (see the header); `fieldDone[k]`/`capDone[k]` turn off an electrode's criteria. */
export function markPanels(mesh: Mesh, out: LevelOutcome, fieldDone: boolean[], capDone: boolean[]): Uint8Array {
  const n = mesh.area.length;
  const marked = new Uint8Array(n);
  for (let j = 0; j < n; j++) {
    const k = mesh.electrode[j];
    if (!fieldDone[k] && out.peak[k].value > 0 && out.field[j] >= PEAK_FRACTION * out.peak[k].value) marked[j] = 1;
  }
  const nb = vertexNeighbours(mesh);
  const eta = new Float64Array(n);
  const order = Array.from({ length: n }, (_, j) => j);
  // θ_j²: the largest squared angle (≈ 2(1 − cos)) between j's normal and a neighbour's on the same electrode.
  const theta2 = new Float64Array(n);
  const nr = mesh.normal;
  for (let j = 0; j < n; j++) {
    for (let q = nb.start[j]; q < nb.start[j + 1]; q++) {
      const i = nb.list[q];
      if (mesh.electrode[i] !== mesh.electrode[j]) continue;
      const cos = nr[3 * j] * nr[3 * i] + nr[3 * j + 1] * nr[3 * i + 1] + nr[3 * j + 2] * nr[3 * i + 2];
      theta2[j] = Math.max(theta2[j], 2 * (1 - cos));
    }
  }
  out.level.unit.forEach((u, k) => {
    if (capDone[k]) return;
    let total = 0;
    for (let j = 0; j < n; j++) {
      let jump = 0;
      for (let q = nb.start[j]; q < nb.start[j + 1]; q++) jump = Math.max(jump, Math.abs(u[j] - u[nb.list[q]]));
      eta[j] = mesh.area[j] * (jump + GEOMETRY_WEIGHT * Math.abs(u[j]) * theta2[j]);
      total += eta[j] * eta[j];
    }
    if (total === 0) return;
    order.sort((a, b) => eta[b] - eta[a]);
    let sum = 0;
    for (const j of order) {
      if (sum >= BULK_FRACTION * total) break;
      marked[j] = 1;
      sum += eta[j] * eta[j];
    }
  });
  return marked;
}

function historyOf(out: LevelOutcome): RefinementStats['history'][number] {
  return { capacitance: out.capacitance.map((row, k) => row[k]), maxField: out.peak.map((p) => p.value) };
}

function relativeChange(before: number, after: number): number | null {
  if (!Number.isFinite(before) || !Number.isFinite(after)) return null;
  if (after === 0) return before === 0 ? 0 : null;
  return Math.abs(after - before) / Math.abs(after);
}

/** A cheap fingerprint of a mesh, for its cache key (the marking depends on the drives, not only the geometry). */
function fingerprint(mesh: Mesh): string {
  let s = 0;
  for (let j = 0; j < mesh.centroid.length; j++) s += mesh.centroid[j] * ((j % 7) + 1);
  return `${mesh.area.length}:${s.toPrecision(15)}`;
}

/** The adaptive 3d solve; null when cancelled. `o.maxPanels` bounds the refined mesh. */
export function solveAdaptive(scene: Scene3d, o: Solve3dOptions, adaptive: AdaptiveOptions): Result | null {
  const t0 = performance.now();
  const tolerance = adaptive.tolerance;
  const maxRounds = Math.max(0, Math.floor(adaptive.maxRounds ?? DEFAULT_MAX_ROUNDS));
  const K = scene.electrodes.length;
  const { images } = imageSet(scene.groundPlanes);
  const plan = meshPlan(scene, 1);
  const geometry = geometryKey(scene);
  const balls: Ball[] = [];
  const solved: { mesh: Mesh; key: string; out: LevelOutcome }[] = [];
  const reached: RefinementStats['reached'] = { capacitance: new Array(K).fill(null), maxField: new Array(K).fill(null) };
  const singularPeak = new Array<boolean>(K).fill(false);
  const capDone = new Array<boolean>(K).fill(false);
  const fieldDone = new Array<boolean>(K).fill(false);
  let stop: RefinementStats['stop'] = 'rounds';
  for (let round = 0; ; round++) {
    const mesh = meshScene(scene, sizeWithBalls(plan.sizeAt, balls), plan.options);
    if (mesh.area.length > o.maxPanels) {
      stop = 'panels';
      break;
    }
    const key = `${geometry}|adaptive|${fingerprint(mesh)}|${o.solver ?? 'auto'}`;
    const out = solveAt(scene, mesh, key, images, o);
    if (!out) return null;
    solved.push({ mesh, key, out });
    if (round > 0) {
      const prev = solved[solved.length - 2].out;
      let worst = 0;
      for (let k = 0; k < K; k++) {
        const c = relativeChange(prev.capacitance[k][k], out.capacitance[k][k]);
        const f = relativeChange(prev.peak[k].value, out.peak[k].value);
        // A figure's change counts only while its own criterion drives the refinement: once it is
        // within tolerance it keeps that change, since later rounds refine elsewhere for other figures
        // and move it less than its remaining error (measured: a sphere over a plane's C_kk moved 8e-5
        // in such a round while 1.3e-3 from the reference).
        if (!capDone[k]) reached.capacitance[k] = c;
        if (!fieldDone[k]) reached.maxField[k] = f;
        singularPeak[k] = out.peak[k].panel >= 0 && mesh.onEdge[out.peak[k].panel] === 1;
        capDone[k] ||= c !== null && c < tolerance;
        fieldDone[k] ||= (f !== null && f < tolerance) || (singularPeak[k] && capDone[k]);
        worst = Math.max(worst, reached.capacitance[k] ?? Infinity, singularPeak[k] ? 0 : (reached.maxField[k] ?? Infinity));
      }
      if (worst < tolerance) {
        stop = 'tolerance';
        break;
      }
    }
    if (round >= maxRounds) break;
    const marked = markPanels(mesh, out, fieldDone, capDone);
    for (let j = 0; j < marked.length; j++) {
      if (!marked[j]) continue;
      const s = panelSize(mesh.area[j]);
      balls.push({ x: mesh.centroid[3 * j], y: mesh.centroid[3 * j + 1], z: mesh.centroid[3 * j + 2], r: BALL_RADIUS * s, h: s / 2 });
    }
  }
  // The scene's own mesh alone is over the panel limit: the ordinary solve coarsens it (and says so).
  if (solved.length === 0) {
    const result = solve3d(scene, o);
    if (result) result.stats.refinement = { tolerance, rounds: 0, panels: [], stop, reached, singularPeak, history: solved.map(({ out }) => historyOf(out)) };
    return result;
  }
  const last = solved.slice(-2).map(({ mesh, key }) => ({ mesh, key }));
  const result = solve3d(scene, { ...o, meshes: last });
  if (!result) return null;
  // The final pass reuses the rounds' solved levels: its own timings leave out the rounds, so add them.
  result.stats.timings.refinement = performance.now() - t0 - (result.stats.timings.total ?? 0);
  result.stats.timings.total = performance.now() - t0;
  result.stats.refinement = { tolerance, rounds: solved.length - 1, panels: solved.map((s) => s.out.panels), stop, reached, singularPeak, history: solved.map(({ out }) => historyOf(out)) };
  return result;
}
