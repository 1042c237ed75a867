// Checks after a solve, shared by the 3d and 2d engines: the floating electrode with nothing to
// charge it (VS404), each electrode's peak field against the `limit` (VS401) and the medium's
// strength (VS402), corona onset on round electrodes by Peek's law (VS410) and the Paschen estimate
// for near-uniform gaps (VS411), with the margins for the Result. The formulas are in breakdown.ts.
// Every figure here is a design aid, not an allowable.
//
// Conventions:
// - The scene's potentials are taken as peak (crest) values; Peek's gradient is a peak value too.
// - Corona and Paschen apply to air only (a medium named `air`); other media get no such figures.
// - Radius of curvature of a round electrode: sphere radius, cylinder radius, torus minor radius,
//   planar circle radius. Peek's parallel-wire constants are used for all of them (breakdown.ts);
//   Peek gave spheres their own constants, which this check does not use.
// - Air pressure for Paschen: p = δ·101.325 kPa (δ·760 Torr), i.e. δ read as at 20 °C.
// - Near-uniform gap: the closest distance d between two bodies is at most NEAR_UNIFORM times the
//   smaller of their bluntness radii (radius of curvature for round bodies; half the smallest side of
//   a flat face for boxes, plates, rectangles and strips; a disc's radius; a ground plane: infinite).
//   Polygons and revolved profiles are not judged (their corners have no stated radius).
import { electrodeBounds } from '../../../grammar/geometry';
import { electrodeGap } from '../../../grammar/geometry-checks';
import { diagnostic } from '../../../grammar/diagnostics';
import type { Diagnostic, Scene } from '../../../grammar/scene';
import { formatNumber, formatPoint, formatQuantity } from '../format/quantity';
import { paschenValidRange, paschenVoltage, peekOnsetField } from './breakdown';
import { unchargedFloating } from './drives';
import type { ElectrodeBreakdown, ElectrodeResult, GapResult } from './result';

/** The caution of the field-limit messages (VS401, VS402). */
export const SAFETY_CAUTION = 'Design aid only; follow applicable standards, local codes and licensed practice.';
/** The caution of the breakdown estimates (VS410, VS411) and the report's breakdown section. */
export const BREAKDOWN_CAUTION_SHORT = 'Design aid, not an allowable; follow applicable standards, local codes and licensed practice.';

/** Standard atmosphere, Pa (the pressure at δ = 1 and 20 °C). */
export const STANDARD_PRESSURE = 101325;

/**
 * A gap counts as near-uniform when d ≤ NEAR_UNIFORM · (smaller bluntness radius). Our own
 * criterion: a sphere of radius R at d = R/5 over a plane has a peak field of 1.14·V/d (1.07·V/d at
 * R/10), by the image-charge series (Jackson sec. 2.2; tests/breakdown/post-solve.test.ts), so the
 * field across the gap is near-uniform and Paschen's uniform-field formula is a fair first estimate.
 */
export const NEAR_UNIFORM = 0.2;

/** The second name of a gap to the ground plane (electrode names cannot contain a space). */
export const GROUND = 'ground plane';

export interface PostSolveOutput {
  diagnostics: Diagnostic[];
  /** One per electrode, in scene order. */
  breakdown: ElectrodeBreakdown[];
  /** Near-uniform gaps (air only). */
  gaps: GapResult[];
}

const EDGE_NOTE = ' The peak sits on a sharp edge, where the computed field grows as the mesh is refined; model the edge radius for a meaningful figure.';

/** Whether corona and Paschen figures apply: air only. */
export function isAir(scene: Scene): boolean {
  return scene.medium.name === 'air';
}

/** allowed / actual as a factor; null when either is missing or the actual value is zero. */
function factor(allowed: number | null, actual: number): number | null {
  if (allowed === null || !(allowed > 0) || !Number.isFinite(allowed) || !(Math.abs(actual) > 0) || !Number.isFinite(actual)) return null;
  return allowed / Math.abs(actual);
}

/** Radius of curvature of a round electrode (for Peek's law), or null for other shapes. */
export function roundRadius(scene: Scene, i: number): number | null {
  const s = scene.electrodes[i].shape;
  switch (s.kind) {
    case 'sphere':
    case 'cylinder':
    case 'circle':
      return s.radius;
    case 'torus':
      return s.minor;
    default:
      return null;
  }
}

/** Bluntness radius for the near-uniform criterion (see the top of this file), or null when not judged. */
export function bluntnessRadius(scene: Scene, i: number): number | null {
  const round = roundRadius(scene, i);
  if (round !== null) return round;
  const s = scene.electrodes[i].shape;
  switch (s.kind) {
    case 'disc':
      return s.radius;
    case 'box':
      return Math.min(...s.size) / 2;
    case 'plate':
    case 'rect':
      return Math.min(...s.size) / 2;
    case 'strip':
      return Math.hypot(s.to[0] - s.from[0], s.to[1] - s.from[1]) / 2;
    default:
      return null;
  }
}

/** Index of a ground plane's axis among the scene's coordinates, or -1 when the space has no such plane. */
function groundAxis(scene: Scene, axis: 'x' | 'y' | 'z'): number {
  if (scene.space === 'axisymmetric') return axis === 'z' ? 1 : -1;
  const k = { x: 0, y: 1, z: 2 }[axis];
  return scene.space === 'planar' && k > 1 ? -1 : k;
}

/** Runs every check after a solve. `freeChargeAbs` is Σ|q| of the free charges (for VS404). */
export function postSolveChecks(scene: Scene, electrodes: readonly ElectrodeResult[], freeChargeAbs: number): PostSolveOutput {
  const diagnostics: Diagnostic[] = [];
  for (const k of unchargedFloating(scene.electrodes.map((e) => e.drive), freeChargeAbs)) {
    const e = scene.electrodes[k];
    diagnostics.push(diagnostic('VS404', e.nameRange, `Floating electrode ${e.name} has nothing to charge it: no electrode is driven and there is no free charge, so it sits at 0 V.`));
  }
  const air = isAir(scene);
  const density = scene.medium.density;
  const breakdown = electrodes.map((r, k): ElectrodeBreakdown => {
    const e = scene.electrodes[k];
    const edge = r.maxFieldOnEdge ? EDGE_NOTE : '';
    const where = ` at ${scene.space === 'axisymmetric' ? '(r, z) = ' : ''}${formatPoint(r.maxFieldAt)}`;
    if (scene.limit && r.maxField > scene.limit.field) {
      diagnostics.push(
        diagnostic(
          'VS401',
          e.nameRange,
          `Peak field ${formatQuantity(r.maxField, 'field')} on ${e.name}${where} exceeds the limit ${formatQuantity(scene.limit.field, 'field')}.${edge} ${SAFETY_CAUTION}`,
          { maxField: r.maxField, limit: scene.limit.field },
        ),
      );
    } else if (scene.medium.strength !== null && r.maxField > scene.medium.strength) {
      diagnostics.push(
        diagnostic(
          'VS402',
          e.nameRange,
          `Peak field ${formatQuantity(r.maxField, 'field')} on ${e.name}${where} is above the rough strength of the medium (${formatQuantity(scene.medium.strength, 'field')}): expect breakdown or corona.${edge} ${SAFETY_CAUTION}`,
          { maxField: r.maxField, strength: scene.medium.strength },
        ),
      );
    }
    const radius = air && k < scene.electrodes.length ? roundRadius(scene, k) : null;
    const onset = radius !== null && radius > 0 ? peekOnsetField(radius, density) : NaN;
    const coronaOnset = Number.isFinite(onset) ? onset : null;
    if (coronaOnset !== null && r.maxField > coronaOnset) {
      diagnostics.push(
        diagnostic(
          'VS410',
          e.nameRange,
          `Peak field ${formatQuantity(r.maxField, 'field')} on ${e.name}${where} is above Peek's corona onset ${formatQuantity(coronaOnset, 'field')} ` +
            `for a smooth round conductor of radius ${formatQuantity(radius!, 'length')} in air of relative density ${formatNumber(density, 3)} ` +
            `(margin ${formatNumber(coronaOnset / r.maxField, 3)}×; potentials read as peak values): expect corona; a rough or dirty surface starts lower.${edge} ${BREAKDOWN_CAUTION_SHORT}`,
          { maxField: r.maxField, coronaOnset, radius, density },
        ),
      );
    }
    return {
      limitMargin: factor(scene.limit?.field ?? null, r.maxField),
      strengthMargin: factor(scene.medium.strength, r.maxField),
      coronaOnset,
      coronaRadius: coronaOnset !== null ? radius : null,
      coronaMargin: coronaOnset !== null ? factor(coronaOnset, r.maxField) : null,
    };
  });
  const gaps = air ? nearUniformGaps(scene, electrodes) : [];
  const [pdLow, pdHigh] = paschenValidRange();
  for (const g of gaps) {
    if (!(g.voltage > g.paschen)) continue;
    const toGround = g.between[1] === GROUND;
    const target = scene.electrodes.find((e) => e.name === g.between[toGround ? 0 : 1])!;
    const other = toGround ? 'the ground plane' : g.between[0];
    const validity = g.paschenValid
      ? ''
      : ` This gap is outside the range Paschen's constants were fitted over (p·d from ${formatNumber(pdLow, 3)} to ${formatNumber(pdHigh, 3)} Torr·cm): treat the figure as a rough guide.`;
    diagnostics.push(
      diagnostic(
        'VS411',
        target.nameRange,
        `The near-uniform gap of ${formatQuantity(g.distance, 'length')} between ${target.name} and ${other} holds ${formatQuantity(g.voltage, 'potential')}, ` +
          `above its Paschen sparking voltage of about ${formatQuantity(g.paschen, 'potential')} (air at ${formatNumber(scene.medium.density, 3)}×101.325 kPa, 20 °C; margin ${formatNumber(g.margin ?? 0, 3)}×): expect a spark-over.${validity} ${BREAKDOWN_CAUTION_SHORT}`,
        { distance: g.distance, voltage: g.voltage, paschen: g.paschen },
      ),
    );
  }
  return { diagnostics, breakdown, gaps };
}

/**
 * Near-uniform gaps between electrodes and to the ground planes, with their Paschen estimates.
 * A gap of width d between A and B is left out when a third electrode lies closer than d to both:
 * it sits in the gap and splits it (its own gaps are then listed instead).
 */
export function nearUniformGaps(scene: Scene, electrodes: readonly ElectrodeResult[]): GapResult[] {
  const pressure = scene.medium.density * STANDARD_PRESSURE;
  const K = Math.min(scene.electrodes.length, electrodes.length);
  const blunt = scene.electrodes.map((_, i) => bluntnessRadius(scene, i));
  const bounds = scene.electrodes.map((_, i) => electrodeBounds(scene, i));
  /** Distance between electrodes i and j when it is below `within`, else Infinity. */
  const between = (i: number, j: number, within: number): number => {
    if (!(within > 0) || boundsApart(bounds[i], bounds[j]) > within) return Infinity;
    const d = electrodeGap(scene, i, j, within, -Infinity);
    return d <= within ? d : Infinity;
  };
  // A ground plane's distance from electrode i (NaN when the electrode crosses it: a geometry error).
  const planeDistance = (i: number, k: number, at: number): number => {
    const lo = bounds[i].min[k] - at, hi = bounds[i].max[k] - at;
    return lo > 0 ? lo : hi < 0 ? -hi : NaN;
  };
  const planes: { k: number; at: number }[] = [];
  const used = new Set<string>();
  for (const g of scene.groundPlanes) {
    const k = groundAxis(scene, g.axis);
    if (k < 0 || used.has(g.axis)) continue; // the solver uses the first plane per axis
    used.add(g.axis);
    planes.push({ k, at: g.at });
  }
  // Candidates: j ≥ 0 an electrode, j < 0 the plane −j − 1.
  const candidates: { i: number; j: number; d: number }[] = [];
  for (let j = 0; j < K; j++) {
    for (let i = 0; i < j; i++) {
      const ri = blunt[i], rj = blunt[j];
      if (ri === null || rj === null) continue;
      const d = between(i, j, NEAR_UNIFORM * Math.min(ri, rj));
      if (d > 0 && Number.isFinite(d)) candidates.push({ i, j, d });
    }
  }
  planes.forEach((plane, n) => {
    for (let i = 0; i < K; i++) {
      const r = blunt[i];
      const d = planeDistance(i, plane.k, plane.at);
      if (r !== null && d > 0 && d <= NEAR_UNIFORM * r) candidates.push({ i, j: -n - 1, d });
    }
  });
  const out: GapResult[] = [];
  for (const { i, j, d } of candidates) {
    const split = scene.electrodes.some((_, c) => {
      if (c === i || c === j || c >= K) return false;
      const toOther = j >= 0 ? between(j, c, d) : planeDistance(c, planes[-j - 1].k, planes[-j - 1].at);
      return toOther < d && between(i, c, d) < d;
    });
    if (split) continue;
    const voltage = Math.abs(electrodes[i].potential - (j >= 0 ? electrodes[j].potential : 0));
    const p = paschenVoltage(pressure, d);
    out.push({
      between: [scene.electrodes[i].name, j >= 0 ? scene.electrodes[j].name : GROUND],
      distance: d,
      voltage,
      paschen: p.voltage,
      paschenValid: p.valid,
      margin: factor(p.voltage, voltage),
    });
  }
  return out;
}

/** Distance between two bounding boxes (0 when they overlap). */
function boundsApart(a: { min: number[]; max: number[] }, b: { min: number[]; max: number[] }): number {
  let out = 0;
  for (let k = 0; k < a.min.length; k++) out = Math.max(out, b.min[k] - a.max[k], a.min[k] - b.max[k]);
  return out;
}
