// The solve pipeline shared by the planar and axisymmetric engines: elements at two mesh levels →
// collocation matrix → one solve per electrode at 1 V and one for the free charges → drives
// (server/src/engine/drives.ts) → surface fields, capacitance matrix, energy, probes and slices →
// Result. Convergence figures come from the two levels (server/src/engine/convergence.ts; the error
// of curved constant-density elements falls as h², i.e. N^−2).
//
// Planar without a ground plane: the potential at infinity c is an extra unknown and the total
// charge an extra equation (methods.md). This removes the logarithmic divergence of a net charge and
// the degenerate-scale singularity of the ln kernel. With the total charge of the conductors and the
// free line charges at zero, the potential far away tends to c, so "ground" (0 V) keeps its meaning
// of a conductor held at 0 V; the Maxwell matrix then has zero row sums (per metre, a lone wire has
// no capacitance to infinity).
import type { Diagnostic, Drive, Range, SceneAxisymmetric, ScenePlanar, Vec2 } from '../../../../grammar/scene';
import { EPSILON_0 } from '../../../../grammar/scene';
import { insideElectrode, sceneBounds } from '../../../../grammar/geometry';
import { applyDrives } from '../drives';
import { changeBetweenLevels, richardson, NO_ESTIMATE } from '../convergence';
import { createSolver, denseOperator, type LinearSolver } from '../linear/solver';
import type { SolveOptions } from '../index';
import { postSolveChecks } from '../post-solve';
import { sliceGrid as sliceDimensions } from '../evaluate';
import { diagnostic } from '../../../../grammar/diagnostics';
import type { Convergence, ElectrodeResult, GapResult, Outline, ProbeResult, Result, SliceResult } from '../result';
import { addElement, assemble, FAR_RATIO, FAR_RULE, farRules, integrateCurve, type KernelAdd, type LineAdd, type Mirror } from './bem2d';
import { curvePoint, splitPiece, type Element2d, type Piece } from './elements';
import { gridBlocks, gridEvaluate, GRID_COARSE, GRID_FULL, type Grid2d } from './grid2d';

type Scene2d = SceneAxisymmetric | ScenePlanar;

/** The engine's SolveOptions (server/src/engine/index.ts), plus a mesh scale for tests. */
export interface Solve2dOptions extends Pick<SolveOptions, 'maxPanels' | 'maxGridCells' | 'level' | 'convergence' | 'isCancelled' | 'cache' | 'superpose'> {
  /** Multiplies the element size (tests and coarse previews). */
  meshScale?: number;
  /**
   * Set by warmStoredGrids2d (planar/warm.ts): build the stored values of drive-only edits for levels
   * already in the cache (none is factored), and say here whether they are complete.
   */
  warm?: { complete: boolean };
}

/**
 * A cache whose stored values are built in the background (planar/warm.ts, the language server's
 * idle work) carries this mark: its live solves never build them, but sum what is stored and
 * evaluate the rest afresh (one evaluation at most, the same values).
 */
export const BACKGROUND_BUILD = '2d-background-build';

/** Whether this solve may build missing stored values (see BACKGROUND_BUILD). */
function mayBuild(options: Solve2dOptions): boolean {
  return options.superpose === true || options.cache?.store.get(BACKGROUND_BUILD) !== true;
}

/** A free charge as the engine sees it: adds its potential and field (per ε, images included). */
export interface FreeSource {
  at: Vec2;
  /** Charge in C (axisymmetric point), C/m along a ring, or C/m (planar line). */
  value: number;
  /** Adds value/ε-weighted (φ, E_u, E_v) at (u, v) into acc; `self` leaves out the direct term. */
  add(u: number, v: number, field: boolean, acc: Float64Array, self: boolean): void;
  /** The charge it carries in the total-charge balance: C (axisymmetric) or C/m (planar). */
  total: number;
}

/** What a space contributes to the shared pipeline. */
export interface Space2d {
  space: 'axisymmetric' | 'planar';
  kernel: KernelAdd;
  /** The kernel over a whole straight element in closed form, where it has one (planar). */
  line: LineAdd | null;
  /** A cheaper form of the kernel for slice grids (relative error about 1e-8), where there is one. */
  gridKernel?: KernelAdd;
  mirror: Mirror | null;
  /** Planar with no ground plane: potential at infinity as an unknown, total charge as an equation. */
  infinityUnknown: boolean;
  pieces: Piece[];
  /** Element size of the reported (fine) level, and whether it was enlarged to fit the element limit. */
  h: number;
  coarsened: boolean;
  /** Most elements at the fine level (the element size grows to fit). */
  maxElements: number;
  /** Diagnostics the space raised while setting up (ignored ground planes...). */
  diagnostics: Diagnostic[];
  /** Charge per unit surface density: ∫2πr ds (axisymmetric) or the length (planar, per metre). */
  area(el: Element2d): number;
  free: FreeSource[];
  /** Scene length scale (scales the total-charge row). */
  scale: number;
  /** The points where fields are evaluated, mapped into the solver's half-plane, and back. */
  toSolver(u: number, v: number): [number, number, number]; // x, y, sign applied to E_u
}

interface Level {
  elements: Element2d[];
  /**
   * Reduced densities τ = σ/ε per unit drive: one per electrode, then the free-charge solution, then
   * (planar without ground) one carrying a net charge of 1 C with every electrode at 0 V.
   */
  units: Float64Array[];
  /** Potential at infinity of each unit solution (planar without ground), else 0. */
  infinity: number[];
  C: number[][];
  induced: number[];
  solver: string;
  /** Charge on each electrode of a density vector. */
  chargesOf(tau: Float64Array): number[];
  /** The cached factorization this level came from (it keys the stored slice grids). */
  factored: Factored;
}

/** An electrode's outline gets elements no larger than this fraction of its own size (half its box diagonal). */
const OWN_SIZE_FRACTION = 1 / 20;

/**
 * Elements of size about h, and no larger than a twentieth of their electrode's own size (so a small
 * electrode in a large scene is still resolved).
 */
function elementsFor(setup: Space2d, h: number): Element2d[] {
  // At most 20° of arc per element at the mesh size asked for; coarser levels (and meshes enlarged to
  // fit the element limit) allow up to 50°.
  const maxAngle = 0.35 * Math.min(2.5, Math.max(1, h / setup.h));
  const own = new Map<number, number>();
  for (const e of new Set(setup.pieces.map((p) => p.electrode))) {
    const q = new Float64Array(4);
    let minX = Infinity, minY = Infinity, maxX = -Infinity, maxY = -Infinity;
    for (const p of setup.pieces) {
      if (p.electrode !== e) continue;
      for (let i = 0; i <= 8; i++) {
        curvePoint(p, (p.length * i) / 8, q);
        minX = Math.min(minX, q[0]);
        maxX = Math.max(maxX, q[0]);
        minY = Math.min(minY, q[1]);
        maxY = Math.max(maxY, q[1]);
      }
    }
    own.set(e, 0.5 * Math.hypot(maxX - minX, maxY - minY) * OWN_SIZE_FRACTION * (h / setup.h));
  }
  return setup.pieces.flatMap((p) =>
    splitPiece(p, Math.min(h, own.get(p.electrode) || h), p.kind === 'arc' ? Math.max(2, Math.ceil(p.length / (p.radius * maxAngle))) : 1),
  );
}

/** Element counts by pieces and size (a drive-only edit then splits no outline to count). */
const elementCounts = new Map<string, number>();

function elementCount(setup: Space2d, h: number): number {
  const key = JSON.stringify([setup.pieces, setup.h, h]);
  let count = elementCounts.get(key);
  if (count === undefined) {
    count = elementsFor(setup, h).length;
    elementCounts.set(key, count);
    while (elementCounts.size > 64) elementCounts.delete(elementCounts.keys().next().value as string);
  }
  return count;
}

/** A factored level: what depends on the geometry alone, kept in the engine cache between solves. */
interface Factored {
  elements: Element2d[];
  solver: LinearSolver;
  size: number;
  /** Solutions (τ, then the potential at infinity when it is an unknown) for each electrode at 1 V. */
  solved: Float64Array[];
  /** The free charges' solution of the last use, by their signature. */
  free?: { key: string; x: Float64Array };
}

/** The drives and free charges of a factorization's last use. */
const lastUse2d = new WeakMap<Factored, string>();
/** The scene signature (slices, probes, free charges, limits) whose stored values are complete, per factorization. */
const completeFor = new WeakMap<Factored, string>();

/**
 * Stored values of one set of points for superposition (drive-only and free-charge-only edits): per
 * unit solution (electrode b at 1 V; then the raw net-charge solution, or null) `width` numbers per
 * point, and the free charges' values (their induced densities and their direct field) by their
 * signature. Built chunk by chunk, so that a build can stop and go on later; a chunk counts once
 * both its unit and its free values are done.
 */
interface Stored {
  vectors: (Float64Array | null)[];
  unitsDone: Uint8Array;
  free: { key: string; values: Float64Array; done: Uint8Array };
}

/** A set of points in chunks, and how to evaluate densities at the points of some chunks. */
interface PointSet {
  /** Point indices per chunk. */
  chunks: Int32Array[];
  points: number;
  width: number;
  /**
   * `width` values per point for each density (free charges added to those flagged in withFree), at
   * the points of chunks `ids` in order: the same values whichever chunks are asked together.
   */
  evaluate(taus: Float64Array[], withFree: boolean[], ids: number[]): Float64Array[] | null;
}

/** A slice's cells: the electrode each lies in (−1: none), and those evaluated, by chunk (grid2d.ts gridBlocks). */
interface SliceLayout {
  grid: Grid2d;
  reduced: boolean;
  inside: Int16Array;
  mask: Uint8Array;
  /** The cells evaluated, chunk after chunk; chunks hold positions in this list. */
  outside: Int32Array;
  chunks: Int32Array[];
}

/** Chunks of a slice grid's stored values (a build stops between chunks). */
const SLICE_CHUNKS = 32;

/** Per factorization: the stored values by point set (thin elements, probes, slices), and the slices' layouts. */
const stores2d = new WeakMap<Factored, Map<string, Stored>>();
const layouts2d = new WeakMap<Factored, Map<string, SliceLayout>>();

/** Most point sets stored per factorization. */
const STORED_SETS = 12;

/**
 * Most numbers one point set may store (8 bytes each, with as much again while it is built): a
 * larger set (many electrodes on a large slice grid) is evaluated afresh at every use instead.
 */
export const MAX_STORED_VALUES_2D = 1e7;

function storeOf(f: Factored, key: string, set: PointSet, units: number, create: boolean): Stored | null {
  let byKey = stores2d.get(f);
  const found = byKey?.get(key);
  if (found || !create) return found ?? null;
  if ((units + 1) * set.width * set.points > MAX_STORED_VALUES_2D) return null;
  if (!byKey) stores2d.set(f, (byKey = new Map()));
  const size = set.width * set.points;
  const stored: Stored = {
    vectors: Array.from({ length: units }, () => new Float64Array(size)),
    unitsDone: new Uint8Array(set.chunks.length),
    free: { key: '', values: new Float64Array(size), done: new Uint8Array(set.chunks.length) },
  };
  byKey.set(key, stored);
  while (byKey.size > STORED_SETS) byKey.delete(byKey.keys().next().value as string);
  return stored;
}

/** The unit densities of a level: per electrode at 1 V, then the raw net-charge solution (null without one). */
function unitDensities(level: Level, k: number): (Float64Array | null)[] {
  const f = level.factored;
  const n = level.elements.length;
  const units: (Float64Array | null)[] = f.solved.slice(0, k).map((x) => x.subarray(0, n));
  units.push(f.solved.length > k ? f.solved[k].subarray(0, n) : null);
  return units;
}

function scatter(values: Float64Array, into: Float64Array, set: PointSet, ids: number[]): void {
  const w = set.width;
  let o = 0;
  for (const c of ids) {
    for (const p of set.chunks[c]) {
      for (let q = 0; q < w; q++) into[w * p + q] = values[o++];
    }
  }
}

/**
 * Builds the missing chunks of a store: every unit solution and the free charges in one pass per
 * chunk, or (onePass) per kind of chunk (those missing everything, those missing only the free
 * values), which costs less but cannot stop partway. False when cancelled between passes; what was
 * built is kept.
 */
function buildStored(stored: Stored, set: PointSet, level: Level, k: number, freeKey: string, isCancelled?: () => boolean, onePass = false): boolean {
  if (stored.free.key !== freeKey) stored.free = { key: freeKey, values: new Float64Array(set.width * set.points), done: new Uint8Array(set.chunks.length) };
  const units = unitDensities(level, k);
  const missing: number[] = [];
  for (let c = 0; c < set.chunks.length; c++) if (!stored.unitsDone[c] || !stored.free.done[c]) missing.push(c);
  const passes = onePass ? [missing.filter((c) => !stored.unitsDone[c]), missing.filter((c) => stored.unitsDone[c])] : missing.map((c) => [c]);
  for (const ids of passes) {
    if (ids.length === 0) continue;
    if (isCancelled?.()) return false;
    const which = stored.unitsDone[ids[0]] ? [] : units.flatMap((u, b) => (u ? [b] : []));
    const taus = [...which.map((b) => units[b]!), level.units[k]];
    const values = set.evaluate(taus, taus.map((_, b) => b === taus.length - 1), ids);
    if (!values) return false;
    which.forEach((b, m) => scatter(values[m], stored.vectors[b]!, set, ids));
    scatter(values[values.length - 1], stored.free.values, set, ids);
    for (const c of ids) stored.unitsDone[c] = stored.free.done[c] = 1;
  }
  return true;
}

/**
 * The driven solution's values at a point set: Σ_b w_b·G_b + G_free where the store's chunks are
 * complete (w: the electrodes' potentials, then α/(ε·scale) for the net-charge solution), evaluated
 * afresh from the driven density tau elsewhere (one pass over those chunks), plus `offset` on the
 * first value of each point (the potential at infinity). Null when cancelled.
 */
function drivenValues(stored: Stored | null, set: PointSet, weights: number[], freeKey: string, tau: Float64Array, offset: number): Float64Array | null {
  const w = set.width;
  const out = new Float64Array(w * set.points);
  const usable = stored !== null && stored.free.key === freeKey;
  const missing: number[] = [];
  for (let c = 0; c < set.chunks.length; c++) {
    if (!usable || !stored.unitsDone[c] || !stored.free.done[c]) {
      missing.push(c);
      continue;
    }
    for (const p of set.chunks[c]) {
      for (let q = w * p; q < w * p + w; q++) {
        let v = stored.free.values[q];
        for (let b = 0; b < stored.vectors.length; b++) {
          const g = stored.vectors[b];
          if (g && weights[b] !== 0) v += weights[b] * g[q];
        }
        out[q] = v;
      }
    }
  }
  if (missing.length > 0) {
    const values = set.evaluate([tau], [true], missing);
    if (!values) return null;
    scatter(values[0], out, set, missing);
  }
  if (offset !== 0) for (let p = 0; p < set.points; p++) out[w * p] += offset;
  return out;
}

/**
 * Most elements of the 'coarse' level: twice the scene's element size, enlarged further to fit this.
 * The coarse picture is there to come first: its dense LU grows as N³, the matrix and the thin
 * elements' fields as N², so a budget bounds it at any mesh size (about 20 ms of LU here).
 * The full level and its convergence estimate are untouched.
 */
export const COARSE_ELEMENTS_2D = 256;

/** Most factored levels kept in the cache (each holds an N² matrix factorization). */
const CACHE_ENTRIES = 4;

function levelKey(setup: Space2d, h: number, k: number): string {
  return JSON.stringify([setup.space, setup.mirror, setup.infinityUnknown, h, k, setup.pieces]);
}

function factorLevel(setup: Space2d, elements: Element2d[], k: number, options: Solve2dOptions, timings: Record<string, number>, tag: string): Factored | null {
  let t = performance.now();
  const n = elements.length;
  const a = assemble(elements, setup.kernel, setup.mirror, options.isCancelled, setup.line);
  if (!a) return null;
  timings[`assemble${tag}`] = performance.now() - t;
  t = performance.now();
  const size = setup.infinityUnknown ? n + 1 : n;
  let matrix = a;
  if (setup.infinityUnknown) {
    matrix = new Float64Array(size * size);
    for (let i = 0; i < n; i++) {
      matrix.set(a.subarray(i * n, i * n + n), i * size);
      matrix[i * size + n] = 1; // + c, the potential at infinity
      matrix[n * size + i] = setup.area(elements[i]) / setup.scale; // Σ q_j / (ε·scale)
    }
  }
  const rhs: Float64Array[] = [];
  for (let e = 0; e < k; e++) {
    const b = new Float64Array(size);
    for (let i = 0; i < n; i++) if (elements[i].electrode === e) b[i] = 1;
    rhs.push(b);
  }
  // Every electrode at 0 V with a net charge of ε·scale on the conductors (rescaled per coulomb later).
  if (setup.infinityUnknown) {
    const b = new Float64Array(size);
    b[n] = 1;
    rhs.push(b);
  }
  // Dense LU throughout: 2d systems stay small (MAX_ELEMENTS_2D), one factorization serves every
  // right-hand side (and later drive-only edits, through the cache), and the planar system's
  // infinity row has a zero diagonal that Jacobi-preconditioned iterations handle poorly.
  const solver = createSolver(denseOperator(size, matrix), 'dense-lu');
  // No elements: nothing to solve (and the planar infinity row would be empty).
  const solved = n === 0 ? rhs.map((b) => new Float64Array(b.length)) : solver.solve(rhs, { isCancelled: options.isCancelled });
  if (!solved) return null;
  timings[`solve${tag}`] = performance.now() - t;
  return { elements, solver, size, solved };
}

function solveLevel(setup: Space2d, scene: Scene2d, h: number, eps: number, options: Solve2dOptions, timings: Record<string, number>, tag: string): Level | null {
  const k = scene.electrodes.length;
  const store = options.cache?.store;
  let cache = store?.get('2d') as Map<string, Factored> | undefined;
  if (store && !cache) {
    cache = new Map();
    store.set('2d', cache);
  }
  const key = levelKey(setup, h, k);
  let f = cache?.get(key) ?? null;
  if (f && cache) {
    // Most recently used last.
    cache.delete(key);
    cache.set(key, f);
    timings[`cached${tag}`] = 1;
  } else {
    // A warm-up builds stored values for what is cached; it factors nothing.
    if (options.warm) return null;
    f = factorLevel(setup, elementsFor(setup, h), k, options, timings, tag);
    if (!f) return null;
    if (cache) {
      cache.set(key, f);
      while (cache.size > CACHE_ENTRIES) cache.delete(cache.keys().next().value as string);
    }
  }
  const { elements, size } = f;
  const n = elements.length;
  // Free charges with every electrode at 0 V: the conductors carry −(total free charge) when
  // infinity is an unknown (all the flux ends on them).
  const freeKey = JSON.stringify([setup.free.map((fr) => [fr.at, fr.value]), eps]);
  if (f.free?.key !== freeKey) {
    const bFree = new Float64Array(size);
    const acc = new Float64Array(3);
    for (let i = 0; i < n; i++) {
      acc[0] = 0;
      for (const fr of setup.free) fr.add(elements[i].mx, elements[i].my, false, acc, false);
      bFree[i] = -acc[0];
    }
    if (setup.infinityUnknown) bFree[n] = -setup.free.reduce((s, fr) => s + fr.total, 0) / (eps * setup.scale);
    const freeSolved = n === 0 ? [new Float64Array(size)] : f.solver.solve([bFree], { isCancelled: options.isCancelled });
    if (!freeSolved) return null;
    f.free = { key: freeKey, x: freeSolved[0] };
  }
  const solved = [...f.solved.slice(0, k), f.free.x];
  if (f.solved.length > k) solved.push(f.solved[k].map((x) => x / (eps * setup.scale)));
  const units = solved.map((x) => x.subarray(0, n) as Float64Array);
  const infinity = solved.map((x) => (setup.infinityUnknown ? x[n] : 0));
  const areas = elements.map((el) => setup.area(el));
  const chargeOn = (tau: Float64Array): number[] => {
    const q = new Array<number>(k).fill(0);
    for (let i = 0; i < n; i++) q[elements[i].electrode] += eps * tau[i] * areas[i];
    return q;
  };
  const columns = units.slice(0, k).map(chargeOn);
  const C = Array.from({ length: k }, (_, i) => Array.from({ length: k }, (_, j) => columns[j][i]));
  const induced = chargeOn(units[k]);
  return { elements, units, infinity, C, induced, solver: f.solver.name, chargesOf: chargeOn, factored: f };
}

interface Driven {
  potentials: number[];
  charges: number[];
  tau: Float64Array;
  infinity: number;
  singular: boolean;
  /** Weight of the net-charge solution (planar without ground, every electrode floating or charge-driven), else 0. */
  alpha: number;
}

/**
 * Potentials and charges for the scene's drives. Planar without a ground plane and without any
 * electrode held at a potential: the potentials are fixed only up to a constant, chosen so that the
 * potential at infinity (the constant c) is 0; a nonzero net charge enters through the net-charge
 * solution.
 */
function drive(level: Level, drives: Drive[], infinityUnknown: boolean): Driven {
  const k = drives.length;
  let potentials: number[];
  let charges: number[];
  let singular = false;
  let alpha = 0; // net charge carried by the conductors beyond what the Σq = 0 solutions allow
  if (infinityUnknown && k > 0 && !drives.some((d) => d.kind === 'potential') && level.units.length > k + 1) {
    // Every electrode floating or charge-driven: unknowns V_1..V_k and the net charge α, with
    //   Σ_j C_ij V_j + α·q_N,i = Q_i − q_f,i  (each electrode's charge),
    //   Σ_j c_j V_j + α·c_N = −c_f            (the potential at infinity is 0 V).
    // With a nonzero net charge per metre the far potential really diverges; the figures are then
    // relative to the log kernel's zero at the scene's length scale (docs/methods-2d.md).
    const size = k + 1;
    const a = new Float64Array(size * size);
    const b = new Float64Array(size);
    const net = chargeVector(level, k + 1);
    const cScale = Math.max(...level.C.map((r, i) => Math.abs(r[i])), 1e-300);
    for (let i = 0; i < k; i++) {
      for (let j = 0; j < k; j++) a[i * size + j] = level.C[i][j];
      a[i * size + k] = net[i];
      const d = drives[i];
      b[i] = (d.kind === 'charge' ? d.value : 0) - level.induced[i];
    }
    for (let j = 0; j < k; j++) a[k * size + j] = level.infinity[j] * cScale;
    a[k * size + k] = level.infinity[k + 1] * cScale;
    b[k] = -level.infinity[k] * cScale;
    const x = solveSmall(size, a, b);
    if (!x) singular = true;
    potentials = x ? x.slice(0, k) : new Array<number>(k).fill(0);
    alpha = x ? x[k] : 0;
    charges = drives.map((_, i) => level.induced[i] + alpha * net[i] + level.C[i].reduce((s, c, j) => s + c * potentials[j], 0));
  } else {
    const sol = applyDrives(level.C, level.induced, drives);
    potentials = sol.potentials;
    charges = sol.charges;
    singular = sol.singular;
  }
  const n = level.elements.length;
  const tau = new Float64Array(n);
  let infinity = level.infinity[k] ?? 0;
  if (level.units[k]) tau.set(level.units[k]);
  const add = (weight: number, index: number) => {
    if (weight === 0) return;
    const u = level.units[index];
    for (let i = 0; i < n; i++) tau[i] += weight * u[i];
    infinity += weight * level.infinity[index];
  };
  for (let e = 0; e < k; e++) add(potentials[e], e);
  add(alpha, k + 1);
  return { potentials, charges, tau, infinity, singular, alpha };
}

/** Charge on each electrode of unit solution `index`. */
function chargeVector(level: Level, index: number): number[] {
  return level.chargesOf(level.units[index]);
}

/** Gaussian elimination with partial pivoting for a small dense system; null when singular. */
function solveSmall(n: number, a: Float64Array, b: Float64Array): number[] | null {
  const m = Float64Array.from(a);
  const x = Float64Array.from(b);
  for (let c = 0; c < n; c++) {
    let p = c;
    for (let r = c + 1; r < n; r++) if (Math.abs(m[r * n + c]) > Math.abs(m[p * n + c])) p = r;
    if (m[p * n + c] === 0) return null;
    if (p !== c) {
      for (let j = 0; j < n; j++) [m[c * n + j], m[p * n + j]] = [m[p * n + j], m[c * n + j]];
      [x[c], x[p]] = [x[p], x[c]];
    }
    for (let r = c + 1; r < n; r++) {
      const f = m[r * n + c] / m[c * n + c];
      for (let j = c; j < n; j++) m[r * n + j] -= f * m[c * n + j];
      x[r] -= f * x[c];
    }
  }
  for (let c = n - 1; c >= 0; c--) {
    let s = x[c];
    for (let j = c + 1; j < n; j++) s -= m[c * n + j] * x[j];
    x[c] = s / m[c * n + c];
  }
  return Array.from(x);
}

interface SurfacePeak {
  value: number;
  at: Vec2;
  edge: boolean;
}

/**
 * Surface field on every element: σ/ε along the outward normal on a solid conductor (the field
 * inside is zero); on a thin sheet or hollow shell the mean of the two faces' fields ± τ/2·n, the
 * larger face reported. Returns the peak per electrode.
 */
/**
 * Stored principal-value fields at thin elements per solution (superposition for drive-only edits,
 * as the slices): per electrode at 1 V, the raw net-charge solution, and the free charges.
 */
const thinStored = new WeakMap<Factored, { vectors: (Float64Array | null)[]; free: { key: string; values: Float64Array } | null }>();

/**
 * [Ex, Ey] of the principal-value field at every element (0 at closed ones) for each density of taus
 * (free charges added to those flagged in withFree), in one pass: each element's field at unit density
 * is evaluated once per point and scaled by every density.
 */
function thinFields(setup: Space2d, elements: Element2d[], far: Float64Array, taus: Float64Array[], withFree: boolean[], which: ArrayLike<number>): Float64Array[] {
  const K = taus.length;
  const outs = taus.map(() => new Float64Array(2 * which.length));
  const mid = new Float64Array(Math.max(3 * K, SCRATCH_2D));
  const plus = new Float64Array(Math.max(3 * K, SCRATCH_2D));
  const minus = new Float64Array(Math.max(3 * K, SCRATCH_2D));
  // A flag per density (no reads past the end of an array, which the JIT handles slowly).
  const none = taus.map(() => false);
  for (let m = 0; m < which.length; m++) {
    const i = which[m];
    const el = elements[i];
    if (!el.thin) continue;
    const delta = 1e-3 * el.length;
    // Elements beyond NEAR_THIN element lengths are smooth across the two points: the mean of their
    // fields there is the field at the midpoint within (δ/d)² ≈ 1e-7 of their share, so they are
    // evaluated once; nearer ones (the element itself among them) at both points.
    const near = { x: el.mx, y: el.my, r: NEAR_THIN * el.length };
    fieldsAt(setup, elements, far, taus, withFree, el.mx, el.my, mid, near, false);
    fieldsAt(setup, elements, far, taus, none, el.mx + delta * el.nx, el.my + delta * el.ny, plus, near, true);
    fieldsAt(setup, elements, far, taus, none, el.mx - delta * el.nx, el.my - delta * el.ny, minus, near, true);
    for (let b = 0; b < K; b++) {
      outs[b][2 * m] = mid[3 * b + 1] + 0.5 * (plus[3 * b + 1] + minus[3 * b + 1]);
      outs[b][2 * m + 1] = mid[3 * b + 2] + 0.5 * (plus[3 * b + 2] + minus[3 * b + 2]);
    }
  }
  return outs;
}

/**
 * Least length of per-density scratch arrays (as grid2d.ts SCRATCH): small typed arrays live on the
 * JavaScript heap, larger ones outside it, and code that has seen both runs slower.
 */
const SCRATCH_2D = 24;

/** Thin elements per chunk of the stored thin-element fields. */
const THIN_CHUNK = 16;

/** The thin elements of a level as a point set (two values each: the principal-value field). */
function thinSet(setup: Space2d, elements: Element2d[], far: Float64Array): PointSet {
  const thin: number[] = [];
  elements.forEach((el, i) => el.thin && thin.push(i));
  const chunks: Int32Array[] = [];
  for (let a = 0; a < thin.length; a += THIN_CHUNK) chunks.push(Int32Array.from(thin.slice(a, a + THIN_CHUNK)));
  return {
    chunks,
    points: elements.length,
    width: 2,
    evaluate: (taus, withFree, ids) => thinFields(setup, elements, far, taus, withFree, ids.flatMap((c) => [...chunks[c]])),
  };
}

/** Elements within this many lengths of a thin element are evaluated on both sides of it (thinFields). */
const NEAR_THIN = 3;

/**
 * As fieldAt (no potential at infinity) for several densities at once: (φ, E) of density b at
 * acc[3b ..]. With `near` given, only the elements (or images) within near.r of (near.x, near.y)
 * (keepNear) or only the others.
 */
function fieldsAt(
  setup: Space2d,
  elements: Element2d[],
  far: Float64Array,
  taus: Float64Array[],
  withFree: boolean[],
  x: number,
  y: number,
  acc: Float64Array,
  near: { x: number; y: number; r: number } | null = null,
  keepNear = false,
): void {
  acc.fill(0);
  const K = taus.length;
  const g = unitField;
  const mirror = setup.mirror;
  // Each element's (φ, E) at unit density, its image included, then weighted by every density: the
  // kernel loop does not depend on how many densities there are.
  const n = elements.length;
  if (unitScratch.length < 3 * n) unitScratch = new Float64Array(3 * n);
  const unit = unitScratch;
  unit.fill(0, 0, 3 * n);
  for (let j = 0; j < n; j++) {
    addUnit(setup, elements[j], j, far, x, y, 1, 1, 1, near, keepNear, false, unit, g);
    // Images of opposite sign: φ_img(p) = −φ(Mp), E_img(p) = −M·E(Mp).
    if (mirror) addUnit(setup, elements[j], j, far, mirror.axis === 0 ? 2 * mirror.at - x : x, mirror.axis === 1 ? 2 * mirror.at - y : y, -1, mirror.axis === 0 ? 1 : -1, mirror.axis === 1 ? 1 : -1, near, keepNear, true, unit, g);
  }
  for (let b = 0; b < K; b++) {
    const tau = taus[b];
    let s0 = 0, s1 = 0, s2 = 0;
    for (let j = 0; j < n; j++) {
      const t = tau[j];
      if (t === 0) continue;
      s0 += t * unit[3 * j];
      s1 += t * unit[3 * j + 1];
      s2 += t * unit[3 * j + 2];
    }
    acc[3 * b] += s0;
    acc[3 * b + 1] += s1;
    acc[3 * b + 2] += s2;
  }
  const free = new Float64Array(3);
  for (const f of setup.free) f.add(x, y, true, free, false);
  for (let b = 0; b < K; b++) {
    if (!withFree[b]) continue;
    acc[3 * b] += free[0];
    acc[3 * b + 1] += free[1];
    acc[3 * b + 2] += free[2];
  }
}

let unitScratch = new Float64Array(0);
const unitField = new Float64Array(3);

/**
 * Adds element j's (φ, E) at unit density at (px, py), times sign and the flips, into unit[3j ..]
 * (fieldsAt; a plain function, not a closure per call, so that the compiled caller keeps its call
 * target). With `near` given, only the elements (or images) within near.r of (near.x, near.y)
 * (keepNear) or only the others.
 */
function addUnit(
  setup: Space2d,
  el: Element2d,
  j: number,
  far: Float64Array,
  px: number,
  py: number,
  sign: number,
  flipX: number,
  flipY: number,
  near: { x: number; y: number; r: number } | null,
  keepNear: boolean,
  image: boolean,
  unit: Float64Array,
  g: Float64Array,
): void {
  const mirror = setup.mirror;
  if (near) {
    // The reference point goes where the target went (mirrored for an image).
    const rx = image && mirror!.axis === 0 ? 2 * mirror!.at - near.x : near.x;
    const ry = image && mirror!.axis === 1 ? 2 * mirror!.at - near.y : near.y;
    const reach = near.r + 0.5 * el.length;
    const isNear = (rx - el.mx) ** 2 + (ry - el.my) ** 2 <= reach * reach;
    if (isNear !== keepNear) return;
  }
  g[0] = g[1] = g[2] = 0;
  if ((px - el.mx) ** 2 + (py - el.my) ** 2 > (FAR_RATIO * el.length) ** 2) {
    for (let q = 0; q < FAR_RULE; q++) {
      const o = (j * FAR_RULE + q) * 3;
      setup.kernel(far[o], far[o + 1], px, py, far[o + 2], true, g);
    }
  } else if (setup.line && el.kind === 'line') setup.line(el, px, py, 1, true, g);
  else integrateCurve(el, 0, el.length, px, py, setup.kernel, 1, true, g);
  unit[3 * j] += sign * g[0];
  unit[3 * j + 1] += flipX * g[1];
  unit[3 * j + 2] += flipY * g[2];
}

/** How a solve uses stored values: whether to build missing ones, the free charges' signature, ε. */
interface StoredUse {
  build: boolean;
  /** Build in as few passes as possible (see buildStored). */
  onePass: boolean;
  freeKey: string;
  eps: number;
  isCancelled?: () => boolean;
}

/** Superposition weights of the unit solutions (unitDensities) for driven solution d. */
function weightsOf(d: Driven, eps: number, scale: number): number[] {
  return [...d.potentials, d.alpha / (eps * scale)];
}

/** The cached 3-point rules of an element list. */
const farCache = new WeakMap<Element2d[], Float64Array>();
function farOf(elements: Element2d[]): Float64Array {
  let far = farCache.get(elements);
  if (!far) farCache.set(elements, (far = farRules(elements)));
  return far;
}

/** Peak surface field per electrode; null when cancelled. */
function surfacePeaks(setup: Space2d, level: Level, d: Driven, k: number, use: StoredUse | null): SurfacePeak[] | null {
  const peaks: SurfacePeak[] = Array.from({ length: k }, () => ({ value: 0, at: [NaN, NaN] as Vec2, edge: false }));
  const { elements } = level;
  let summed: Float64Array | null = null;
  if (elements.some((el) => el.thin)) {
    const set = thinSet(setup, elements, farOf(elements));
    const units = k + 1;
    const stored = use ? storeOf(level.factored, 'thin', set, units, use.build) : null;
    if (stored && use?.build && !buildStored(stored, set, level, k, use.freeKey, use.isCancelled, use.onePass)) return null;
    summed = drivenValues(use ? stored : null, set, use ? weightsOf(d, use.eps, setup.scale) : [], use?.freeKey ?? '', d.tau, 0);
    if (!summed) return null;
  }
  for (let i = 0; i < elements.length; i++) {
    const el = elements[i];
    let magnitude: number;
    if (!el.thin) magnitude = Math.abs(d.tau[i]);
    else {
      // Principal-value field (thinFields): the mean of the fields a step δ = L/1000 to either side
      // along the normal, which cancels the ±τ/2 jump of the element's own density (O(δ²) error).
      const ex = summed![2 * i];
      const ey = summed![2 * i + 1];
      const half = 0.5 * d.tau[i];
      magnitude = Math.max(Math.hypot(ex + half * el.nx, ey + half * el.ny), Math.hypot(ex - half * el.nx, ey - half * el.ny));
    }
    const p = peaks[el.electrode];
    if (magnitude > p.value) {
      p.value = magnitude;
      p.at = [el.mx, el.my];
      p.edge = el.edge;
    }
  }
  return peaks;
}

// ---- outlines of electrodes in a slice ----

function pieceOutline(p: Piece): number[] {
  const steps = p.kind === 'arc' ? Math.max(2, Math.ceil(p.length / p.radius / (Math.PI / 72))) : 1;
  const path: number[] = [];
  const q = new Float64Array(4);
  for (let i = 0; i <= steps; i++) {
    curvePoint(p, (p.length * i) / steps, q);
    path.push(q[0], q[1]);
  }
  return path;
}

function samePoint(path: number[], i: number, j: number, tol: number): boolean {
  return Math.abs(path[i] - path[j]) <= tol && Math.abs(path[i + 1] - path[j + 1]) <= tol;
}

/** Joins consecutive paths whose ends meet into one polyline. */
function joinPaths(paths: number[][], tol: number): number[][] {
  const out: number[][] = [];
  for (const p of paths) {
    const last = out[out.length - 1];
    if (last && Math.abs(last[last.length - 2] - p[0]) <= tol && Math.abs(last[last.length - 1] - p[1]) <= tol) last.push(...p.slice(2));
    else out.push([...p]);
  }
  return out;
}

// ---- diagnostics after a solve (the same codes and wording as the 3d engine) ----

const ZERO_RANGE: Range = { start: { line: 0, character: 0 }, end: { line: 0, character: 0 } };

/** VS405 and VS409 here; the rest (VS401, VS402, VS404, corona, Paschen) in post-solve.ts. Returns the gaps. */
function postSolveDiagnostics(scene: Scene2d, setup: Space2d, electrodes: ElectrodeResult[], singular: boolean, diagnostics: Diagnostic[]): GapResult[] {
  if (setup.coarsened) {
    diagnostics.push(diagnostic('VS405', ZERO_RANGE, `Mesh coarsened to fit the element limit; figures are less accurate than the mesh setting asks.`));
  }
  if (singular) {
    diagnostics.push(diagnostic('VS409', ZERO_RANGE, 'The drive equations are singular: floating or fixed-charge electrodes could not be resolved; their potentials are reported as 0 V.'));
  }
  const checks = postSolveChecks(scene, electrodes, setup.free.reduce((s, f) => s + Math.abs(f.total), 0));
  diagnostics.push(...checks.diagnostics);
  electrodes.forEach((r, k) => (r.breakdown = checks.breakdown[k]));
  return checks.gaps;
}

/** The side of the mirror line the scene's content (electrodes and charges) is on: ±1, or 0 (no mirror, no content, on the line). */
function groundSide(scene: Scene2d, mirror: Mirror | null): number {
  const box = sceneBounds(scene);
  if (!mirror || !box) return 0;
  return Math.sign((box.min[mirror.axis] + box.max[mirror.axis]) / 2 - mirror.at);
}

/** A test for points on the far side of the mirror line from the scene's content. */
function behindGround(mirror: Mirror | null, side: number): (u: number, v: number) => boolean {
  if (!mirror || side === 0) return () => false;
  return (u, v) => Math.sign((mirror.axis === 0 ? u : v) - mirror.at) === -side;
}

// ---- the pipeline ----

export function solve2d(scene: Scene2d, setup: Space2d, options: Solve2dOptions = {}): Result | null {
  const t0 = performance.now();
  const timings: Record<string, number> = {};
  const eps = EPSILON_0 * scene.medium.permittivity;
  const k = scene.electrodes.length;
  const drives = scene.electrodes.map((e) => e.drive);
  const diagnostics: Diagnostic[] = [...setup.diagnostics];
  const levelCount = options.level === 'coarse' || options.convergence === false ? 1 : 2;
  // The coarse level doubles the element size; when that barely changes the count (a polyline
  // finer than the mesh), it is skipped and no convergence estimate is given.
  let hFine = options.level === 'coarse' ? 2 * setup.h : setup.h;
  // Enforce the element limit on the actual count (the size estimate cannot see per-electrode limits).
  let coarsened = setup.coarsened;
  for (let count = elementCount(setup, hFine), i = 0; count > setup.maxElements && i < 6; i++) {
    hFine *= (1.05 * count) / setup.maxElements;
    count = elementCount(setup, hFine);
    coarsened = true;
  }
  // The coarse picture's budget (its cost must not grow with the scene; see COARSE_ELEMENTS_2D).
  for (let count = elementCount(setup, hFine), i = 0; options.level === 'coarse' && count > COARSE_ELEMENTS_2D && i < 6; i++) {
    hFine *= (1.05 * count) / COARSE_ELEMENTS_2D;
    count = elementCount(setup, hFine);
  }
  const hs = [hFine];
  if (levelCount > 1 && elementCount(setup, 2 * hFine) < 0.8 * elementCount(setup, hFine)) hs.unshift(2 * hFine);
  const levels: Level[] = [];
  for (let l = 0; l < hs.length; l++) {
    const level = solveLevel(setup, scene, hs[l], eps, options, timings, l === hs.length - 1 ? '' : 'Coarse');
    if (!level) return null;
    levels.push(level);
  }
  const fine = levels[levels.length - 1];
  const coarse = levels.length > 1 ? levels[0] : null;
  const dFine = drive(fine, drives, setup.infinityUnknown);
  const dCoarse = coarse ? drive(coarse, drives, setup.infinityUnknown) : null;
  if (options.isCancelled?.()) return null;

  // A reused factorization with new drives or free charges: slices and thin-element fields by
  // superposition of stored values.
  const withoutRanges = (key: string, value: unknown) => (key === 'range' || key === 'nameRange' ? undefined : value);
  const freeSignature = JSON.stringify([scene.charges, scene.medium.permittivity], withoutRanges);
  // What a complete set of stored values serves: a warm-up finds it already built without re-running the pipeline.
  const storedSignature = JSON.stringify([scene.slices, scene.probes, freeSignature, options.maxGridCells ?? null, scene.electrodes.map((e) => e.shape)], withoutRanges);
  if (options.warm && levels.every((l) => completeFor.get(l.factored) === storedSignature)) {
    options.warm.complete = true;
    return null;
  }
  const used = lastUse2d.get(fine.factored);
  const superpose = (used !== undefined && used !== JSON.stringify([drives, freeSignature])) || stores2d.has(fine.factored) || options.superpose === true;
  lastUse2d.set(fine.factored, JSON.stringify([drives, freeSignature]));
  let t = performance.now();
  // A background-warmed cache (the language server) evaluating a full level afresh: every unit
  // solution goes through the same passes and is kept, so that the first drive-only edit sums them
  // (about 3× one density's cost on the slices, a little more on thin elements and probes).
  const keepUnits = !superpose && options.level !== 'coarse' && options.cache?.store.get(BACKGROUND_BUILD) === true;
  const stored: StoredUse | null = superpose || keepUnits ? { build: mayBuild(options) || keepUnits, onePass: keepUnits, freeKey: freeSignature, eps, isCancelled: options.isCancelled } : null;
  const peaks = surfacePeaks(setup, fine, dFine, k, stored);
  const peaksCoarse = coarse && dCoarse ? surfacePeaks(setup, coarse, dCoarse, k, stored) : null;
  if (!peaks || (coarse && !peaksCoarse)) return null;
  timings.surfaceField = performance.now() - t;
  const nFine = fine.elements.length;
  const nCoarse = coarse?.elements.length ?? 0;
  const conv = (f1: number, f2: number): Convergence => (coarse ? richardson(nCoarse, f1, nFine, f2, 2) : NO_ESTIMATE);

  const electrodes: ElectrodeResult[] = scene.electrodes.map((e, i) => {
    const peak = peaks[i];
    const peakCoarse = peaksCoarse?.[i];
    const maxFieldConvergence = !peakCoarse ? NO_ESTIMATE : peak.edge ? changeBetweenLevels(peakCoarse.value, peak.value) : conv(peakCoarse.value, peak.value);
    return {
      name: e.name,
      range: e.range,
      potential: dFine.potentials[i],
      charge: dFine.charges[i],
      maxField: peak.value,
      maxFieldAt: [...peak.at],
      maxFieldConvergence,
      maxFieldOnEdge: peak.edge,
      capacitance: fine.C[i][i],
      capacitanceConvergence: coarse ? conv(coarse.C[i][i], fine.C[i][i]) : NO_ESTIMATE,
    };
  });

  // Energy W = ½ΣQ_k·V_k + ½Σ_f q_f·φ_f, φ_f the potential at free charge f without its own direct term.
  const far = farOf(fine.elements);
  const acc = new Float64Array(3);
  let energy = 0;
  for (let i = 0; i < k; i++) energy += 0.5 * dFine.charges[i] * dFine.potentials[i];
  for (const f of setup.free) {
    const [x, y] = setup.toSolver(f.at[0], f.at[1]);
    acc[0] = setup.infinityUnknown ? dFine.infinity : 0;
    for (let j = 0; j < fine.elements.length; j++) {
      if (dFine.tau[j] !== 0) addElement(fine.elements[j], x, y, setup.kernel, setup.mirror, dFine.tau[j], false, acc, setup.line);
    }
    for (const g of setup.free) g.add(x, y, false, acc, g === f);
    energy += 0.5 * f.value * acc[0];
  }

  // Behind the ground plane (the side away from the scene) the grounded plane screens everything:
  // 0 V and no field there, as in 3d (the image values would be fictitious).
  const side = groundSide(scene, setup.mirror);
  const behind = behindGround(setup.mirror, side);
  // What decides which cells lie inside an electrode (the factorization's key holds the outlines only).
  const shapes = JSON.stringify(scene.electrodes.map((e) => e.shape));
  t = performance.now();
  const probeLists = scene.probes.map((p): Vec2[] =>
    p.kind === 'point'
      ? [p.at]
      : Array.from({ length: Math.max(2, p.samples) }, (_, s, all = Math.max(2, p.samples)) => {
          const f = s / (all - 1);
          return [p.from[0] + f * (p.to[0] - p.from[0]), p.from[1] + f * (p.to[1] - p.from[1])] as Vec2;
        }),
  );
  // Points inside an electrode take its potential; behind the ground plane 0 V; the rest are evaluated.
  const fixedAt = probeLists.map((points) => points.map((at) => {
    const inside = insideElectrode(scene, at);
    return inside >= 0 ? inside : behind(at[0], at[1]) ? -2 : -1;
  }));
  const open = probeLists.flatMap((points, i) => points.filter((_, m) => fixedAt[i][m] === -1));
  const probeSet: PointSet = {
    chunks: [Int32Array.from(open, (_, m) => m)],
    points: open.length,
    width: 3,
    evaluate(taus, withFree) {
      const outs = taus.map(() => new Float64Array(3 * open.length));
      const values = new Float64Array(Math.max(3 * taus.length, SCRATCH_2D));
      open.forEach((at, m) => {
        const [x, y, sign] = setup.toSolver(at[0], at[1]);
        fieldsAt(setup, fine.elements, far, taus, withFree, x, y, values);
        outs.forEach((out, b) => {
          out[3 * m] = values[3 * b];
          out[3 * m + 1] = sign * values[3 * b + 1];
          out[3 * m + 2] = values[3 * b + 2];
        });
      });
      return outs;
    },
  };
  let probeValues: Float64Array | null = null;
  if (open.length > 0) {
    const key = JSON.stringify(['probes', open]);
    const store = stored ? storeOf(fine.factored, key, probeSet, k + 1, stored.build) : null;
    if (store && stored?.build && !buildStored(store, probeSet, fine, k, freeSignature, options.isCancelled, stored.onePass)) return null;
    probeValues = drivenValues(stored ? store : null, probeSet, stored ? weightsOf(dFine, eps, setup.scale) : [], freeSignature, dFine.tau, setup.infinityUnknown ? dFine.infinity : 0);
    if (!probeValues) return null;
  }
  let nextOpen = 0;
  const probes: ProbeResult[] = scene.probes.map((p, i) => ({
    name: p.name,
    points: probeLists[i].map((at, m) => {
      const fixed = fixedAt[i][m];
      if (fixed >= 0) return { at: [...at], potential: dFine.potentials[fixed], field: [0, 0], fieldMagnitude: 0 };
      if (fixed === -2) return { at: [...at], potential: 0, field: [0, 0], fieldMagnitude: 0 };
      const o = 3 * nextOpen++;
      const [phi, eu, ev] = [probeValues![o], probeValues![o + 1], probeValues![o + 2]];
      return { at: [...at], potential: phi, field: [eu, ev], fieldMagnitude: Math.hypot(eu, ev) };
    }),
  }));
  timings.probes = performance.now() - t;

  t = performance.now();
  const slices: SliceResult[] = [];
  for (const s of scene.slices) {
    const slice = sliceGrid(scene, setup, fine, dFine, s);
    if (!slice) return null;
    slices.push(slice);
    if (options.isCancelled?.()) return null;
  }
  timings[superpose ? 'slicesSuperposed' : 'slices'] = performance.now() - t;

  const gaps = postSolveDiagnostics(scene, { ...setup, coarsened }, electrodes, dFine.singular, diagnostics);
  const names = scene.electrodes.map((e) => e.name);
  let asym = 0;
  let diag = 0;
  for (let i = 0; i < k; i++) {
    diag = Math.max(diag, Math.abs(fine.C[i][i]));
    for (let j = 0; j < k; j++) asym = Math.max(asym, Math.abs(fine.C[i][j] - fine.C[j][i]));
  }
  timings.total = performance.now() - t0;
  if (options.warm) options.warm.complete = true;
  // Every stored value this solve uses was built (or found) above.
  if (stored?.build) for (const l of levels) completeFor.set(l.factored, storedSignature);
  return {
    format: 'voltscape-result/1',
    space: setup.space,
    electrodes,
    capacitance: { names, matrix: fine.C.map((r) => [...r]), asymmetry: diag > 0 ? asym / diag : 0 },
    energy,
    probes,
    slices,
    gaps,
    diagnostics,
    stats: {
      panels: nFine,
      unknowns: setup.infinityUnknown ? nFine + 1 : nFine,
      solver: fine.solver,
      timings,
      levels: levels.map((l) => l.elements.length),
    },
  };

  /**
   * (φ, E_u, E_v) at the masked cells of a grid (3 per cell, scene coordinates, into outs): the
   * elements' densities taus by target-side interpolation (grid2d.ts), the free charges summed
   * directly where flagged in withFree.
   */
  function gridValues(elements: Element2d[], taus: Float64Array[], withFree: boolean[], grid: Grid2d, mask: Uint8Array, outs: Float64Array[]): void {
    const acc = new Float64Array(3);
    const fold = setup.space === 'axisymmetric';
    for (let idx = 0; idx < mask.length; idx++) {
      if (!mask[idx]) continue;
      const u = grid.u0 + ((idx % grid.nu) + 0.5) * grid.du;
      const y = grid.v0 + (Math.floor(idx / grid.nu) + 0.5) * grid.dv;
      // As setup.toSolver: axisymmetric cells at u < 0 see the half-plane mirrored.
      const x = fold ? Math.abs(u) : u;
      acc[0] = acc[1] = acc[2] = 0;
      for (const f of setup.free) f.add(x, y, true, acc, false);
      outs.forEach((out, b) => {
        const free = withFree[b];
        out[3 * idx] = free ? acc[0] : 0;
        out[3 * idx + 1] = free ? (fold && u < 0 ? -acc[1] : acc[1]) : 0;
        out[3 * idx + 2] = free ? acc[2] : 0;
      });
    }
    const accuracy = options.level === 'coarse' ? GRID_COARSE : GRID_FULL;
    gridEvaluate({ elements, taus, kernel: setup.gridKernel ?? setup.kernel, line: setup.line, mirror: setup.mirror, fold, logScale: setup.space === 'planar' ? setup.scale : undefined }, grid, mask, outs, accuracy);
  }

  /** A slice's cells (kept per factorization: they depend on the geometry alone); null when cancelled. */
  function sliceLayout(level: Level, s: Scene2d['slices'][number]): SliceLayout | null {
    const { nu, nv, du, dv, reduced } = sliceDimensions(s, options.maxGridCells ?? 250000);
    const u0 = Math.min(s.from[0], s.to[0]);
    const v0 = Math.min(s.from[1], s.to[1]);
    const key = JSON.stringify([s.plane, s.at, s.from, s.to, nu, nv, shapes, side]);
    let byKey = layouts2d.get(level.factored);
    const found = byKey?.get(key);
    if (found) return found;
    const size = nu * nv;
    const inside = new Int16Array(size).fill(-1);
    const mask = new Uint8Array(size);
    const point = [0, 0];
    let count = 0;
    for (let j = 0; j < nv; j++) {
      if ((j & 7) === 0 && options.isCancelled?.()) return null;
      for (let i = 0; i < nu; i++) {
        const idx = j * nu + i;
        point[0] = u0 + (i + 0.5) * du;
        point[1] = v0 + (j + 0.5) * dv;
        const e = insideElectrode(scene, point);
        inside[idx] = e;
        if (e < 0 && !behind(point[0], point[1])) {
          mask[idx] = 1;
          count++;
        }
      }
    }
    // Each cell evaluated gets its place in the point set; chunks follow gridEvaluate's blocks.
    const grid: Grid2d = { nu, nv, u0, v0, du, dv };
    const place = new Int32Array(size).fill(-1);
    const outside = new Int32Array(count);
    const chunks: Int32Array[] = [];
    let m = 0;
    for (const [i0, i1, j0, j1] of gridBlocks(grid, SLICE_CHUNKS)) {
      const start = m;
      for (let j = j0; j < j1; j++) {
        for (let i = i0; i < i1; i++) {
          const idx = j * nu + i;
          if (!mask[idx]) continue;
          place[idx] = m;
          outside[m++] = idx;
        }
      }
      if (m > start) chunks.push(Int32Array.from({ length: m - start }, (_, q) => start + q));
    }
    const layout: SliceLayout = { grid, reduced, inside, mask, outside, chunks };
    if (!byKey) layouts2d.set(level.factored, (byKey = new Map()));
    byKey.set(key, layout);
    while (byKey.size > STORED_SETS) byKey.delete(byKey.keys().next().value as string);
    return layout;
  }

  function sliceGrid(scene: Scene2d, setup: Space2d, level: Level, d: Driven, s: Scene2d['slices'][number]): SliceResult | null {
    const layout = sliceLayout(level, s);
    if (!layout) return null;
    const { grid, inside, outside, chunks } = layout;
    const { nu, nv, u0, v0, du, dv } = grid;
    const maxCells = options.maxGridCells ?? 250000;
    if (layout.reduced) diagnostics.push(diagnostic('VS408', s.range, `Slice grid reduced to ${nu} × ${nv} cells to stay within the grid-cell limit (${maxCells}).`));
    const size = nu * nv;
    // Behind the ground plane 0 V and no field; inside an electrode its potential.
    const potential = new Float64Array(size);
    const fieldU = new Float32Array(size);
    const fieldV = new Float32Array(size);
    const fieldMagnitude = new Float32Array(size);
    for (let idx = 0; idx < size; idx++) {
      const e = inside[idx];
      if (e < 0) continue;
      potential[idx] = d.potentials[e];
      fieldU[idx] = fieldV[idx] = fieldMagnitude[idx] = NaN;
    }
    const set: PointSet = {
      chunks,
      points: outside.length,
      width: 3,
      evaluate(taus, withFree, ids) {
        const mask = new Uint8Array(size);
        let count = 0;
        for (const c of ids) for (const m of chunks[c]) (mask[outside[m]] = 1), count++;
        const outs = taus.map(() => new Float64Array(3 * size));
        gridValues(level.elements, taus, withFree, grid, mask, outs);
        if (options.isCancelled?.()) return null;
        // Compact, in the order of the chunks' points.
        return outs.map((all) => {
          const out = new Float64Array(3 * count);
          let o = 0;
          for (const c of ids) for (const m of chunks[c]) out.set(all.subarray(3 * outside[m], 3 * outside[m] + 3), 3 * o++);
          return out;
        });
      },
    };
    const key = JSON.stringify(['slice', s.plane, s.at, s.from, s.to, nu, nv, outside.length]);
    const store = stored ? storeOf(level.factored, key, set, k + 1, stored.build) : null;
    if (store && stored?.build && !buildStored(store, set, level, k, freeSignature, options.isCancelled, stored.onePass)) return null;
    const values = drivenValues(stored ? store : null, set, stored ? weightsOf(d, eps, setup.scale) : [], freeSignature, d.tau, setup.infinityUnknown ? d.infinity : 0);
    if (!values) return null;
    for (let m = 0; m < outside.length; m++) {
      const idx = outside[m];
      const eu = values[3 * m + 1], ev = values[3 * m + 2];
      potential[idx] = values[3 * m];
      fieldU[idx] = eu;
      fieldV[idx] = ev;
      fieldMagnitude[idx] = Math.hypot(eu, ev);
    }
    const outlines: Outline[] = [];
    for (let e = 0; e < k; e++) {
      const paths = joinPaths(setup.pieces.filter((p) => p.electrode === e).map(pieceOutline), setup.scale * 1e-9);
      const closed = paths.length === 1 && samePoint(paths[0], 0, paths[0].length - 2, setup.scale * 1e-9);
      if (setup.space === 'axisymmetric' && u0 < 0) paths.push(...paths.map((path) => path.map((x, m) => (m % 2 === 0 ? -x : x))));
      outlines.push({ electrode: e, paths, closed });
    }
    const groundLines: number[][] = [];
    if (setup.mirror) {
      const c = setup.mirror.at;
      groundLines.push(setup.mirror.axis === 1 ? [u0, c, u0 + Math.abs(s.to[0] - s.from[0]), c] : [c, v0, c, v0 + Math.abs(s.to[1] - s.from[1])]);
    }
    // The layout is kept: the result gets its own copy of the electrode map (results move to other threads).
    return { plane: s.plane, at: s.at, nu, nv, u0, v0, du, dv, potential, fieldU, fieldV, fieldMagnitude, inside: Int16Array.from(inside), outlines, groundLines };
  }
}
