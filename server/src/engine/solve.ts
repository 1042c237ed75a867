// The 3d solve: mesh levels → unit solutions (cached) → drives → surface fields, capacitance,
// energy, convergence, probes, slices and the post-solve diagnostics → Result.
//
// Energy (textbook electrostatics, e.g. Jackson sec. 1.11, W = ½∫ρφ dV with each free charge's
// infinite self-energy left out):
//   W = ½·Σ_k Q_k·V_k + ½·Σ_f Σ_s q_s·φ_f'(p_s),
// where the inner sum runs over quadrature samples s of free charge f (kernels/free-charges.ts
// chargeSamples) and φ_f' is the potential at p_s of everything but f itself: the panel charges, every
// other free charge, and all image charges (f's own images included: that is its interaction with
// the ground plane).
import { conductorDistance } from '../../../grammar/geometry';
import type { Diagnostic, Range, Scene3d } from '../../../grammar/scene';
import { EPSILON_0 } from '../../../grammar/scene';
import { diagnostic } from '../../../grammar/diagnostics';
import { formatQuantity } from '../format/quantity';
import { potentialAndField, surfaceFields, type FieldState3d } from './bem3d/field';
import { imageSet, reflect, type Image } from './bem3d/images';
import { solveLevel, warmCandidate, type FreeSolution, type Level3d } from './bem3d/level';
import { INV_4PI } from './bem3d/system';
import { changeBetweenLevels, NO_ESTIMATE, richardson, TWO_LEVEL_SAFETY } from './convergence';
import { applyDrives } from './drives';
import { COARSE_GRID, evaluateProbes, evaluateSlices, FULL_GRID } from './evaluate';
import { chargePotential, chargeSamples, chargeTotal } from './kernels/free-charges';
import { panelPotential } from './kernels/triangle';
import { chooseSolver, DENSE_MAX_UNKNOWNS, needsDenseMatrix, type SolverKind } from './linear/solver';
import { meshForScene } from './mesh/index';
import { postSolveChecks } from './post-solve';
import { superposedProbes, superposedSlices, superposedSurfaceFields, useSuperposition } from './superpose';
import type { Mesh } from './mesh/types';
import type { Convergence, ElectrodeResult, Result } from './result';

export { SAFETY_CAUTION } from './post-solve';
const ZERO_RANGE: Range = { start: { line: 0, character: 0 }, end: { line: 0, character: 0 } };

/** Caches of the 3d path: meshes and solved levels by geometry key (a few recent geometries only). */
export interface Cache3d {
  meshes: Map<string, { mesh: Mesh; scale: number; coarsened: boolean }>;
  levels: Map<string, Level3d>;
}

export function createCache3d(): Cache3d {
  return { meshes: new Map(), levels: new Map() };
}

/** Keeps at most `max` entries, dropping the oldest (Maps iterate in insertion order). */
function remember<V>(map: Map<string, V>, key: string, value: V, max: number): void {
  map.delete(key);
  map.set(key, value);
  while (map.size > max) map.delete(map.keys().next().value as string);
}

/** The geometry that a mesh level depends on: shapes, ground planes, mesh setting. */
export function geometryKey(scene: Scene3d): string {
  return JSON.stringify({
    shapes: scene.electrodes.map((e) => e.shape),
    ground: scene.groundPlanes.map((g) => [g.axis, g.at]),
    mesh: scene.mesh,
  });
}

export interface Solve3dOptions {
  maxPanels: number;
  maxGridCells: number;
  level: 'coarse' | 'full';
  convergence: boolean;
  isCancelled?: () => boolean;
  cache: Cache3d;
  solver?: SolverKind | 'auto';
  /** Use stored per-electrode grids now (see SolveOptions.superpose). */
  superpose?: boolean;
  /** Given meshes (coarsest first) with their cache keys, instead of the scene's levels (adaptive.ts). */
  meshes?: { mesh: Mesh; key: string }[];
  /** Most panels of the 'coarse' level (default COARSE_MAX_PANELS; see coarseMesh). */
  coarsePanels?: number;
}

/**
 * The mesh at a level scale, coarsened uniformly until it fits the panel limit (and, for a dense
 * solver, the dense limit). Cached by geometry, scale and limit.
 */
function levelMesh(scene: Scene3d, scale: number, maxPanels: number, cache: Cache3d, kind: SolverKind | 'auto' | undefined) {
  const key = `${geometryKey(scene)}|${scale}|${maxPanels}|${kind ?? 'auto'}`;
  const hit = cache.meshes.get(key);
  if (hit) return hit;
  let s = scale;
  let mesh = meshForScene(scene, s);
  let coarsened = false;
  for (let tries = 0; tries < 6; tries++) {
    const n = mesh.area.length;
    const solver = chooseSolver(n, { kind });
    const limit = needsDenseMatrix(solver) ? Math.min(maxPanels, DENSE_MAX_UNKNOWNS) : maxPanels;
    if (n <= limit) break;
    s *= Math.sqrt(n / limit) * 1.05;
    mesh = meshForScene(scene, s);
    coarsened = true;
  }
  const entry = { mesh, scale: s, coarsened };
  remember(cache.meshes, key, entry, 8);
  return entry;
}

/**
 * The coarse level's panel budget. The coarse picture is there to come first, so its cost must not
 * grow with the scene: the coarse level is the scale-2 mesh (about 4× fewer panels than the scene's
 * mesh) when that has at most this many panels, else the first mesh of the scales 2·2^(k/4),
 * k = 1, 2, ... (each about 0.7× the panels of the one before) that has. Assembly and the dense
 * solve grow as N², the slices as N·log N, so this bounds the coarse picture at any scene size
 * (measured in scripts/bench-lsp.ts: see DEVELOPERS.md, live editing). The scales are a fixed
 * ladder, so that an edit that leaves the panel count near the same keeps the same scale, and with
 * it the matrix entries of the electrodes it left alone (bem3d/reuse.ts).
 */
export const COARSE_MAX_PANELS = 600;
const COARSE_SCALE_STEP = 2 ** 0.25;
/** Rungs of the ladder tried at most (scale 2 to 2·2^(12/4) = 16): beyond, the shapes' fewest-segments floors decide the count. */
const COARSE_MAX_STEPS = 12;

/** The coarse level's mesh: the scale-2 mesh, or a coarser rung of the ladder that fits the budget (see COARSE_MAX_PANELS). */
function coarseMesh(scene: Scene3d, budget: number, maxPanels: number, cache: Cache3d, kind: SolverKind | 'auto' | undefined) {
  const base = levelMesh(scene, 2, maxPanels, cache, kind);
  const n = base.mesh.area.length;
  if (n <= budget || base.coarsened) return base;
  const key = `${geometryKey(scene)}|coarse ${budget}|${maxPanels}|${kind ?? 'auto'}`;
  const hit = cache.meshes.get(key);
  if (hit) return hit;
  // Panels go about as scale⁻², so the rung that should fit is k = ⌈2·log2(n/budget)⌉; finer ones are not tried.
  let k = Math.max(1, Math.min(COARSE_MAX_STEPS, Math.ceil(2 * Math.log2(n / budget))));
  let best = { mesh: meshForScene(scene, 2 * COARSE_SCALE_STEP ** k), scale: 2 * COARSE_SCALE_STEP ** k, coarsened: false };
  while (best.mesh.area.length > budget && k < COARSE_MAX_STEPS) {
    k++;
    const scale = 2 * COARSE_SCALE_STEP ** k;
    const mesh = meshForScene(scene, scale);
    // Counts step down unevenly (the shapes' fewest-segments floors): a rung no smaller is passed over.
    if (mesh.area.length < best.mesh.area.length) best = { mesh, scale, coarsened: false };
  }
  remember(cache.meshes, key, best, 8);
  return best;
}

export interface LevelOutcome {
  level: Level3d;
  panels: number;
  potentials: number[];
  charges: number[];
  capacitance: number[][];
  state: FieldState3d;
  field: Float64Array;
  /** Peak surface field per electrode: value and panel index (−1 if it has no panels). */
  peak: { value: number; panel: number }[];
  singular: boolean;
  /** True when fields come from stored per-solution values (superpose.ts): a reused level with new drives. */
  superposed: boolean;
  /** Milliseconds spent on this level in this solve (empty when everything came from the cache). */
  timings: Record<string, number>;
}

export function solveAt(scene: Scene3d, mesh: Mesh, key: string, images: Image[], o: Solve3dOptions): LevelOutcome | null {
  const eps = EPSILON_0 * scene.medium.permittivity;
  const K = scene.electrodes.length;
  const cached = o.cache.levels.get(key) ?? null;
  const freeBefore = cached?.free ?? null;
  // A new mesh after a geometry edit: warm-start from the cached level nearest in size (bem3d/level.ts).
  const warm = cached ? null : warmCandidate(o.cache.levels.values(), K, mesh.area.length);
  const level = solveLevel(scene, mesh, images, cached, { kind: o.solver, isCancelled: o.isCancelled, warm });
  if (!level) return null;
  // Timings of this solve only: nothing for work reused from the cache.
  const timings: Record<string, number> = {};
  if (!cached) Object.assign(timings, level.timings);
  else if (level.free && level.free !== freeBefore && level.timings.freeSolve !== undefined) timings.freeSolve = level.timings.freeSolve;
  remember(o.cache.levels, key, level, 4);
  const capacitance = level.raw.map((row) => row.map((c) => eps * c));
  // Induced charge from the free charges: ε0·Σx·a, the same in every medium (x was solved for εr = 1).
  const induced = level.free ? level.free.induced.map((s) => EPSILON_0 * s) : new Array<number>(K).fill(0);
  // An electrode without panels (a degenerate shape, reported by the geometry checks) takes no part.
  const meshed = new Uint8Array(K);
  for (let j = 0; j < mesh.electrode.length; j++) meshed[mesh.electrode[j]] = 1;
  const drives = applyDrives(
    capacitance,
    induced,
    scene.electrodes.map((e, k) => (meshed[k] ? e.drive : { kind: 'potential', value: 0 })),
  );
  const x = new Float64Array(level.sys.n);
  drives.potentials.forEach((v, k) => {
    if (v === 0) return;
    const u = level.unit[k];
    for (let j = 0; j < x.length; j++) x[j] += v * u[j];
  });
  if (level.free) {
    const f = level.free.x, inv = 1 / scene.medium.permittivity;
    for (let j = 0; j < x.length; j++) x[j] += inv * f[j];
  }
  const state: FieldState3d = { sys: level.sys, x, charges: scene.charges, images, permittivity: scene.medium.permittivity };
  // A reused level with new drives or free charges: fields by superposition of stored values.
  const signature = JSON.stringify([drives.potentials, level.free?.key ?? null, scene.medium.permittivity]);
  const superposed = useSuperposition(level, signature) || o.superpose === true;
  const field = superposed ? superposedSurfaceFields(scene, level, images, x, drives.potentials) : surfaceFields(state);
  const peak = Array.from({ length: K }, () => ({ value: 0, panel: -1 }));
  for (let j = 0; j < field.length; j++) {
    const p = peak[mesh.electrode[j]];
    if (p.panel < 0 || field[j] > p.value) {
      p.value = field[j];
      p.panel = j;
    }
  }
  return {
    level,
    panels: level.sys.n,
    potentials: drives.potentials,
    charges: drives.charges,
    capacitance,
    state,
    field,
    peak,
    singular: drives.singular,
    superposed,
    timings,
  };
}

/**
 * The panels' potential (with images) at given points, per solution of a level: its unit solutions,
 * then the free charges' own (for εr = 1). The potential is linear in the densities, so that of the
 * drives' densities x = Σ V_k·unit_k + free/εr is Σ V_k·values[k] + values[K]/εr. Kept per level
 * (for the free charges' samples: the energy of a drive-only edit is then a weighted sum, not a sum
 * over all panels). One pass: each panel's integral is computed once and weighted by every solution.
 */
const samplePotentials = new WeakMap<Level3d, { key: string; free: FreeSolution | null; values: Float64Array[] }>();

function panelPotentials(level: Level3d, images: Image[], points: readonly number[][], key: string): Float64Array[] {
  const kept = samplePotentials.get(level);
  if (kept && kept.key === key && kept.free === level.free) return kept.values;
  const xs = level.free ? [...level.unit, level.free.x] : level.unit;
  const V = xs.length;
  const values = xs.map(() => new Float64Array(points.length));
  const P = level.sys.panels;
  const r = [0, 0, 0];
  const acc = new Float64Array(V);
  points.forEach((p, s) => {
    for (const im of images) {
      reflect(im, p[0], p[1], p[2], r);
      acc.fill(0);
      for (let j = 0; j < P.count; j++) {
        const g = panelPotential(P, j, r[0], r[1], r[2]);
        for (let v = 0; v < V; v++) acc[v] += xs[v][j] * g;
      }
      for (let v = 0; v < V; v++) values[v][s] += im.sign * acc[v] * INV_4PI;
    }
  });
  samplePotentials.set(level, { key, free: level.free, values });
  return values;
}

/** W = ½ΣQ·V + ½Σ q_s·φ'(p_s) (see the header). */
function energy(scene: Scene3d, out: LevelOutcome, images: Image[]): number {
  let w = 0;
  out.charges.forEach((q, k) => (w += 0.5 * q * out.potentials[k]));
  if (scene.charges.length === 0) return w;
  const k = 1 / (4 * Math.PI * EPSILON_0 * scene.medium.permittivity);
  const samples = scene.charges.map(chargeSamples);
  const points = samples.flatMap((c) => c.points);
  // The panels' part of φ' at every sample, for these drives (see panelPotentials).
  const unit = panelPotentials(out.level, images, points, JSON.stringify(points));
  const K = out.potentials.length;
  const phiPanels = (s: number) => {
    let phi = 0;
    for (let e = 0; e < K; e++) if (out.potentials[e] !== 0) phi += out.potentials[e] * unit[e][s];
    if (out.level.free) phi += unit[K][s] / scene.medium.permittivity;
    return phi;
  };
  const r = [0, 0, 0];
  let at = 0;
  scene.charges.forEach((_f, fi) => {
    const { points, charges } = samples[fi];
    points.forEach((p, s) => {
      let phi = phiPanels(at++);
      images.forEach((im, ii) => {
        reflect(im, p[0], p[1], p[2], r);
        scene.charges.forEach((g, gi) => {
          if (ii === 0 && gi === fi) return; // no self-energy
          phi += k * im.sign * chargePotential(g, r[0], r[1], r[2]);
        });
      });
      w += 0.5 * charges[s] * phi;
    });
  });
  return w;
}

/**
 * Smallest gaps between electrodes (and to ground planes) against the panel size beside them, at the
 * mesh setting's own size (a coarse-level solve scales its panels back by `scale`), one warning per
 * pair. Panel size: √(2·area), the leg of a right isosceles panel of that area.
 */
function gapDiagnostics(scene: Scene3d, mesh: Mesh, scale: number, diagnostics: Diagnostic[]): void {
  for (const w of worstGaps(scene, mesh, scale)) {
    if (w.ratio >= GAP_PANELS) continue;
    const e = scene.electrodes[w.a];
    diagnostics.push(
      diagnostic(
        'VS403',
        e.nameRange,
        `Mesh too coarse for the gap of ${formatQuantity(w.gap, 'length')} between ${e.name} and ${w.other}: panels there are about ` +
          `${formatQuantity(w.h, 'length')} across. Set a mesh size of ${formatQuantity(w.gap / GAP_PANELS, 'length')} or less for reliable fields.`,
      ),
    );
  }
}

interface WorstGap {
  ratio: number;
  gap: number;
  h: number;
  a: number;
  other: string;
}

/** Each mesh's worst gaps, by scale: they depend on the geometry alone, which a mesh stands for (a drive edit reuses them). */
const gapsOfMesh = new WeakMap<Mesh, { scale: number; names: string; worst: WorstGap[] }>();

/** The smallest gap per pair against the panel size beside it (see gapDiagnostics). */
function worstGaps(scene: Scene3d, mesh: Mesh, scale: number): WorstGap[] {
  const names = JSON.stringify(scene.electrodes.map((e) => e.name));
  const kept = gapsOfMesh.get(mesh);
  if (kept && kept.scale === scale && kept.names === names) return kept.worst;
  const K = scene.electrodes.length;
  const c = mesh.centroid;
  const worst = new Map<string, WorstGap>();
  const consider = (key: string, a: number, other: string, gap: number, h: number) => {
    const w = worst.get(key);
    if (!w || gap / h < w.ratio) worst.set(key, { ratio: gap / h, gap, h, a, other });
  };
  for (let j = 0; j < mesh.area.length; j++) {
    const a = mesh.electrode[j];
    const p = [c[3 * j], c[3 * j + 1], c[3 * j + 2]];
    const h = Math.sqrt(2 * mesh.area[j]) / scale;
    for (let b = 0; b < K; b++) {
      if (b === a) continue;
      const gap = conductorDistance(scene, b, p);
      if (gap >= 0) consider(a < b ? `${a}|${b}` : `${b}|${a}`, a, scene.electrodes[b].name, gap, h);
    }
    for (const g of scene.groundPlanes) {
      consider(`${a}|ground`, a, 'the ground plane', Math.abs(p[{ x: 0, y: 1, z: 2 }[g.axis]] - g.at), h);
    }
  }
  const list = [...worst.values()];
  gapsOfMesh.set(mesh, { scale, names, worst: list });
  return list;
}
/** A gap should span at least this many panel sizes (common practice for collocation BEM). */
export const GAP_PANELS = 1;

/** Solves a 3d scene; null when cancelled. */
export function solve3d(scene: Scene3d, o: Solve3dOptions): Result | null {
  const t0 = performance.now();
  const diagnostics: Diagnostic[] = [];
  const timings: Record<string, number> = {};
  const { images, ignored } = imageSet(scene.groundPlanes);
  for (const g of ignored) {
    diagnostics.push(diagnostic('VS406', g.range, `Only one ground plane per axis is supported: this plane at ${g.axis} = ${formatQuantity(g.at, 'length')} is ignored.`));
  }
  const geometry = geometryKey(scene);
  // Level scales: 'coarse' is the scale-2 mesh within the coarse panel budget (coarseMesh) alone;
  // 'full' is scale 1, with scale 2 for the estimate.
  const scales = o.level === 'coarse' ? [2] : o.convergence ? [2, 1] : [1];
  const outcomes: LevelOutcome[] = [];
  let coarsened = false;
  let fineScale = 1;
  let t = performance.now();
  const budget = o.coarsePanels ?? COARSE_MAX_PANELS;
  const levels = o.meshes ?? scales.map((scale) => {
    const m = o.level === 'coarse' ? coarseMesh(scene, budget, o.maxPanels, o.cache, o.solver) : levelMesh(scene, scale, o.maxPanels, o.cache, o.solver);
    coarsened ||= m.coarsened;
    fineScale = m.scale;
    return { mesh: m.mesh, key: `${geometry}|${m.scale}|${o.solver ?? 'auto'}` };
  });
  for (const l of levels) {
    const out = solveAt(scene, l.mesh, l.key, images, o);
    if (!out) return null;
    outcomes.push(out);
  }
  timings.solve = performance.now() - t;
  const fine = outcomes[outcomes.length - 1];
  const coarse = outcomes.length > 1 && outcomes[0].panels < fine.panels ? outcomes[0] : null;
  Object.assign(timings, Object.fromEntries(Object.entries(fine.timings).map(([k, v]) => [`fine.${k}`, v])));
  if (coarse) Object.assign(timings, Object.fromEntries(Object.entries(coarse.timings).map(([k, v]) => [`coarse.${k}`, v])));
  if (coarsened) {
    diagnostics.push(
      diagnostic('VS405', ZERO_RANGE, `Mesh coarsened to ${fine.panels} panels to stay within the panel limit; figures are less accurate than the mesh setting asks.`),
    );
  }
  if (fine.singular) {
    diagnostics.push(diagnostic('VS409', ZERO_RANGE, 'The drive equations are singular: floating or fixed-charge electrodes could not be resolved; their potentials are reported as 0 V.'));
  }

  const K = scene.electrodes.length;
  const mesh = fine.level.mesh;
  const electrodes: ElectrodeResult[] = scene.electrodes.map((e, k) => {
    const p = fine.peak[k];
    const onEdge = p.panel >= 0 && mesh.onEdge[p.panel] === 1;
    const at = p.panel >= 0 ? [mesh.centroid[3 * p.panel], mesh.centroid[3 * p.panel + 1], mesh.centroid[3 * p.panel + 2]] : [NaN, NaN, NaN];
    let capConv: Convergence = NO_ESTIMATE;
    let fieldConv: Convergence = NO_ESTIMATE;
    if (coarse) {
      capConv = richardson(coarse.panels, coarse.capacitance[k][k], fine.panels, fine.capacitance[k][k], 1, TWO_LEVEL_SAFETY);
      fieldConv = onEdge
        ? changeBetweenLevels(coarse.peak[k].value, p.value)
        : richardson(coarse.panels, coarse.peak[k].value, fine.panels, p.value, 1, TWO_LEVEL_SAFETY);
    }
    return {
      name: e.name,
      range: e.range,
      potential: fine.potentials[k],
      charge: fine.charges[k],
      maxField: p.value,
      maxFieldAt: at,
      maxFieldConvergence: fieldConv,
      maxFieldOnEdge: onEdge,
      capacitance: fine.capacitance[k][k],
      capacitanceConvergence: capConv,
    };
  });

  let asymmetry = 0;
  let diag = 0;
  for (let i = 0; i < K; i++) {
    diag = Math.max(diag, Math.abs(fine.capacitance[i][i]));
    for (let j = 0; j < K; j++) asymmetry = Math.max(asymmetry, Math.abs(fine.capacitance[i][j] - fine.capacitance[j][i]));
  }

  t = performance.now();
  const W = energy(scene, fine, images);
  timings.energy = performance.now() - t;
  t = performance.now();
  const probes = fine.superposed ? superposedProbes(scene, fine.level, images, fine.potentials) : evaluateProbes(scene, fine.state, fine.potentials);
  timings.probes = performance.now() - t;
  t = performance.now();
  // The coarse (live) picture sums its grids faster (evaluate.ts COARSE_GRID); the full one as always.
  const grid = o.level === 'coarse' ? COARSE_GRID : FULL_GRID;
  const slices = fine.superposed
    ? superposedSlices(scene, fine.level, images, fine.potentials, o.maxGridCells, diagnostics, o.isCancelled, grid, fine.state)
    : evaluateSlices(scene, fine.state, fine.potentials, o.maxGridCells, diagnostics, o.isCancelled, grid);
  if (!slices) return null;
  // Named apart when the grids came from stored per-solution values (superpose.ts).
  timings[fine.superposed ? 'slicesSuperposed' : 'slices'] = performance.now() - t;

  // ---- post-solve checks (post-solve.ts): floating, limit, strength, corona, Paschen ----
  const freeAbs = scene.charges.reduce((s, c) => s + Math.abs(chargeTotal(c)), 0);
  const checks = postSolveChecks(scene, electrodes, freeAbs);
  diagnostics.push(...checks.diagnostics);
  electrodes.forEach((r, k) => (r.breakdown = checks.breakdown[k]));
  gapDiagnostics(scene, mesh, fineScale, diagnostics);

  timings.total = performance.now() - t0;
  return {
    format: 'voltscape-result/1',
    space: '3d',
    electrodes,
    capacitance: { names: scene.electrodes.map((e) => e.name), matrix: fine.capacitance, asymmetry: diag > 0 ? asymmetry / diag : 0 },
    energy: W,
    probes,
    slices,
    gaps: checks.gaps,
    diagnostics,
    stats: {
      panels: fine.panels,
      unknowns: fine.panels,
      solver: fine.level.kind,
      timings,
      levels: outcomes.map((x) => x.panels),
    },
  };
}

// For tests and the benchmark: the field anywhere of a solved state.
export { potentialAndField };
