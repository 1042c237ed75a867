// The Scene: what a .vscape file means, as plain JSON-serialisable data in SI units.
// Produced by analysis (grammar/analyze.ts), consumed by the engine, the CLI and the language server.
// Lengths in metres, potentials in volts, charges in coulombs, line charges in C/m, fields in V/m.

export type Vec2 = [number, number];
export type Vec3 = [number, number, number];

/** Zero-based line and character, as in the Language Server Protocol. */
export interface Position {
  line: number;
  character: number;
}
export interface Range {
  start: Position;
  end: Position;
}

export type Severity = 'error' | 'warning' | 'info';

export interface Diagnostic {
  /** A stable code of the project's own, e.g. "VS201"; every code is documented in docs/language.md. */
  code: string;
  severity: Severity;
  message: string;
  range: Range;
  /** Machine-readable help for quick fixes, e.g. { replacement: "kV" }. */
  data?: Record<string, unknown>;
}

export type Space = '3d' | 'axisymmetric' | 'planar';

export type Drive =
  | { kind: 'potential'; value: number } // V
  | { kind: 'charge'; value: number } // C (C/m in planar)
  | { kind: 'floating' };

export interface Medium {
  /** The named medium (`air`, `oil`...) or null for `medium permittivity X`. */
  name: string | null;
  /** Relative permittivity εr. */
  permittivity: number;
  /** Dielectric strength as a rough design figure, V/m, or null when none is known. */
  strength: number | null;
  /** Relative air density δ (1 at 20 °C and 101.325 kPa); used by corona checks. */
  density: number;
}

export type MeshSetting = { kind: 'size'; size: number } | { kind: 'preset'; preset: 'coarse' | 'normal' | 'fine' };

// ---- shapes, one union per space ----

/** Plate `size (A, B)` spans the two axes other than its normal, in x, y, z order (normal z: A along x, B along y). */
export type Shape3d =
  | { kind: 'sphere'; center: Vec3; radius: number; hollow: boolean }
  | { kind: 'box'; center: Vec3; size: Vec3; hollow: boolean }
  | { kind: 'cylinder'; from: Vec3; to: Vec3; radius: number; hollow: boolean }
  | { kind: 'disc'; center: Vec3; normal: Vec3; radius: number }
  | { kind: 'plate'; center: Vec3; size: Vec2; normal: 'x' | 'y' | 'z' }
  | { kind: 'torus'; center: Vec3; axis: Vec3; major: number; minor: number; hollow: boolean };

/** Points are (r, z); the axis of symmetry is r = 0. */
export type ShapeAxisymmetric =
  | { kind: 'sphere'; center: Vec2; radius: number; hollow: boolean }
  | { kind: 'disc'; center: Vec2; radius: number }
  | { kind: 'torus'; center: Vec2; major: number; minor: number; hollow: boolean }
  | { kind: 'cylinder'; from: Vec2; to: Vec2; radius: number; hollow: boolean }
  | { kind: 'revolve'; points: Vec2[]; closed: boolean; hollow: boolean };

/** Points are (x, y); everything is per unit length along z. */
export type ShapePlanar =
  | { kind: 'circle'; center: Vec2; radius: number; hollow: boolean }
  | { kind: 'rect'; center: Vec2; size: Vec2; hollow: boolean }
  | { kind: 'polygon'; points: Vec2[]; hollow: boolean }
  | { kind: 'strip'; from: Vec2; to: Vec2 };

export interface Electrode<S> {
  name: string;
  shape: S;
  drive: Drive;
  /** The whole statement, and the name alone. */
  range: Range;
  nameRange: Range;
}

// ---- free charges ----

export type Charge3d =
  | { kind: 'point'; name: string; at: Vec3; value: number; range: Range } // C
  | { kind: 'line'; name: string; from: Vec3; to: Vec3; density: number; range: Range } // C/m
  | { kind: 'ring'; name: string; center: Vec3; axis: Vec3; radius: number; density: number; range: Range }; // C/m

export type ChargeAxisymmetric =
  | { kind: 'point'; name: string; at: Vec2; value: number; range: Range } // on the axis, C
  | { kind: 'ring'; name: string; at: Vec2; density: number; range: Range }; // C/m along the ring

/** A `point` in planar is a line charge normal to the plane, C/m. */
export type ChargePlanar = { kind: 'point'; name: string; at: Vec2; density: number; range: Range };

export interface GroundPlane {
  axis: 'x' | 'y' | 'z';
  at: number;
  range: Range;
}

/**
 * A view plane. In 3d, `plane` names the two in-plane axes (first is horizontal) and `at` the third
 * coordinate. In planar it is always 'xy' at 0; in axisymmetric always 'rz' at 0 (r horizontal).
 * `cells` counts cells along the longer side; cells are square.
 */
export interface Slice {
  plane: 'xy' | 'xz' | 'yz' | 'rz';
  at: number;
  from: Vec2;
  to: Vec2;
  cells: number;
  range: Range;
}

export type Probe<P> =
  | { kind: 'point'; name: string; at: P; range: Range }
  | { kind: 'line'; name: string; from: P; to: P; samples: number; range: Range };

export interface Limit {
  field: number; // V/m
  range: Range;
}

export interface SceneCommon {
  title: string | null;
  medium: Medium;
  mesh: MeshSetting;
  groundPlanes: GroundPlane[];
  slices: Slice[];
  limit: Limit | null;
}

export interface Scene3d extends SceneCommon {
  space: '3d';
  electrodes: Electrode<Shape3d>[];
  charges: Charge3d[];
  probes: Probe<Vec3>[];
}
export interface SceneAxisymmetric extends SceneCommon {
  space: 'axisymmetric';
  electrodes: Electrode<ShapeAxisymmetric>[];
  charges: ChargeAxisymmetric[];
  probes: Probe<Vec2>[];
}
export interface ScenePlanar extends SceneCommon {
  space: 'planar';
  electrodes: Electrode<ShapePlanar>[];
  charges: ChargePlanar[];
  probes: Probe<Vec2>[];
}

export type Scene = Scene3d | SceneAxisymmetric | ScenePlanar;

/** Vacuum permittivity ε0 in F/m (CODATA 2022, NIST). */
export const EPSILON_0 = 8.8541878188e-12;
