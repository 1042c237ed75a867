// The Result: everything a solve tells a consumer, as plain data in SI units.
// It crosses process boundaries (CLI JSON, worker thread, webview); see encodeResult in
// server/src/engine/result-json.ts for the explicit encoding of its typed arrays.
import type { Diagnostic, Range, Space } from '../../../grammar/scene';

/** A point in the scene's own coordinates: (x, y, z) in 3d, (r, z) in axisymmetric, (x, y) in planar. */
export type Point = number[];

export interface Convergence {
  /** Estimated relative error of the reported (finest-mesh) value, from two mesh levels; null if unknown. */
  relativeError: number | null;
  /** The value extrapolated from the mesh levels (Richardson), or null if not available. */
  extrapolated: number | null;
}

export interface ElectrodeResult {
  name: string;
  range: Range;
  potential: number; // V
  charge: number; // C (C/m in planar)
  /** Peak surface field magnitude, V/m, and where it sits. */
  maxField: number;
  maxFieldAt: Point;
  maxFieldConvergence: Convergence;
  /** True when the peak sits on a sharp edge, where the true field is singular and grows with refinement. */
  maxFieldOnEdge: boolean;
  /** Self capacitance C_kk of the Maxwell matrix, F (F/m in planar), with its convergence. */
  capacitance: number;
  capacitanceConvergence: Convergence;
  /** Breakdown checks of this electrode (server/src/engine/post-solve.ts); absent when not computed. */
  breakdown?: ElectrodeBreakdown;
}

/**
 * Margins are factors allowed / actual: above 1 the figure is clear, below 1 it is exceeded; null
 * when the check does not apply. Design aids, not allowables.
 */
export interface ElectrodeBreakdown {
  /** limit / peak field, or null without a `limit`. */
  limitMargin: number | null;
  /** medium strength / peak field, or null when the medium has none. */
  strengthMargin: number | null;
  /** Peek's corona-onset gradient (V/m, peak) at the electrode's radius of curvature; null unless a round electrode in air. */
  coronaOnset: number | null;
  /** The radius of curvature used for coronaOnset, m. */
  coronaRadius: number | null;
  /** coronaOnset / peak field. */
  coronaMargin: number | null;
}

/** A near-uniform gap and its Paschen estimate (server/src/engine/post-solve.ts). */
export interface GapResult {
  /** Electrode names; the second is 'ground plane' for a gap to the ground plane. */
  between: [string, string];
  /** Closest distance, m. */
  distance: number;
  /** |ΔV| across the gap, V. */
  voltage: number;
  /** Paschen sparking voltage at p = δ·101.325 kPa (20 °C) and this gap, V. */
  paschen: number;
  /** Whether the reduced field lies inside the range Paschen's constants were fitted over. */
  paschenValid: boolean;
  /** paschen / voltage, or null when there is no voltage across the gap. */
  margin: number | null;
}

export interface ProbePoint {
  at: Point;
  potential: number; // V
  /** Field vector in the scene's coordinates (V/m), and its magnitude. */
  field: number[];
  fieldMagnitude: number;
}
export interface ProbeResult {
  name: string;
  points: ProbePoint[];
}

/** An electrode's cross-section or outline in a slice, in the slice's (u, v) coordinates. */
export interface Outline {
  electrode: number; // index into electrodes
  /** Polylines, each a flat [u0, v0, u1, v1, ...] list. */
  paths: number[][];
  closed: boolean;
}

/**
 * A slice grid: values at cell centres, row-major, row 0 at v = v0 + dv/2 (bottom).
 * Cell (i, j) centre is (u0 + (i + 0.5)·du, v0 + (j + 0.5)·dv), index j·nu + i.
 */
export interface SliceResult {
  plane: 'xy' | 'xz' | 'yz' | 'rz';
  at: number;
  nu: number;
  nv: number;
  u0: number;
  v0: number;
  du: number;
  dv: number;
  potential: Float64Array; // V; inside a conductor its potential
  /** In-plane field components and magnitude of the full field, V/m (NaN inside conductors). */
  fieldU: Float32Array;
  fieldV: Float32Array;
  fieldMagnitude: Float32Array;
  /** Index of the electrode whose interior holds the cell centre, or -1. */
  inside: Int16Array;
  outlines: Outline[];
  /** Ground-plane traces in the slice: [u0, v0, u1, v1] each. */
  groundLines: number[][];
}

export interface CapacitanceMatrix {
  names: string[];
  /** Maxwell capacitance matrix, F (F/m in planar); ground and infinity are the reference. */
  matrix: number[][];
  /** max |C_ij − C_ji| / max |C_ii|: an accuracy indicator of collocation. */
  asymmetry: number;
}

export interface SolveStats {
  panels: number;
  unknowns: number;
  solver: string;
  /** Milliseconds by stage. */
  timings: Record<string, number>;
  /** Panels at each mesh level used for the convergence estimate, coarsest first. */
  levels: number[];
  /** Adaptive refinement (server/src/engine/adaptive.ts), when it was asked for; absent otherwise. */
  refinement?: RefinementStats;
}

/** What adaptive refinement did and the tolerance it reached, figure by figure. */
export interface RefinementStats {
  /** The tolerance asked for: largest relative change between rounds of any electrode's C_kk or peak field. */
  tolerance: number;
  /** Refinement rounds done (re-meshes after the first mesh). */
  rounds: number;
  /** Panels of each mesh solved, the first (the scene's own mesh) first. */
  panels: number[];
  /** Why it stopped: every figure within tolerance, the round limit, or the panel limit. */
  stop: 'tolerance' | 'rounds' | 'panels';
  /**
   * Per electrode (scene order): relative change of C_kk and of the peak surface field between the
   * last two rounds; null before a second round.
   */
  reached: { capacitance: (number | null)[]; maxField: (number | null)[] };
  /**
   * Per electrode: true when the peak field sits on a sharp edge, where it grows without bound under
   * refinement; it is left out of the tolerance and no longer refined once C_kk has converged.
   */
  singularPeak: boolean[];
  /** Per round (same order as panels), per electrode: C_kk (F) and peak surface field (V/m). */
  history: { capacitance: number[]; maxField: number[] }[];
}

export interface Result {
  format: 'voltscape-result/1';
  space: Space;
  electrodes: ElectrodeResult[];
  capacitance: CapacitanceMatrix;
  energy: number; // J (J/m in planar)
  probes: ProbeResult[];
  slices: SliceResult[];
  /** Near-uniform gaps with their Paschen estimate (only for air); absent when not computed. */
  gaps?: GapResult[];
  /** Diagnostics that need a solve: field limits, mesh warnings. */
  diagnostics: Diagnostic[];
  stats: SolveStats;
}
