// Analysis: from statements to the Scene (plain SI data), with diagnostics for names, units,
// dimensions and what belongs where. Lenient: every statement that can be evaluated reaches the
// Scene; broken ones are skipped after their diagnostics. One pass in statement order (a let is
// usable after its definition), so the cost is linear in the file.
import type { Attribute, Expr, SceneAst, Statement, Value, Word } from './ast';
import { diagnostic } from './diagnostics';
import { evaluate, isWildcardZero, likelyUnit, type EvalContext, type EvalValue, type LetBinding, type Quantity } from './expressions';
import type { ParsedText } from './parser';
import type {
  Charge3d,
  ChargeAxisymmetric,
  ChargePlanar,
  Diagnostic,
  Drive,
  Electrode,
  GroundPlane,
  Limit,
  Medium,
  MeshSetting,
  Probe,
  Range,
  Scene,
  Shape3d,
  ShapeAxisymmetric,
  ShapePlanar,
  Slice,
  Space,
  Vec2,
  Vec3,
} from './scene';
import type { SymbolEntry, SymbolKind, SymbolTable } from './symbols';
import {
  CHARGE,
  DIMENSIONLESS,
  FIELD,
  LENGTH,
  LINE_CHARGE,
  POTENTIAL,
  closest,
  describeDim,
  isDimensionless,
  sameDim,
  type Dim,
} from './units';

// ---- the language's vocabulary (also used by completion and hover) ----

/** What an attribute's value must be. A trailing `?` marks an optional attribute. */
export type Want =
  | 'length'
  | 'potential'
  | 'charge'
  | 'lineCharge'
  | 'field'
  | 'point'
  | 'axisPoint'
  | 'plane2'
  | 'size2'
  | 'size3'
  | 'vector'
  | 'axis'
  | 'axisEq'
  | 'count'
  | 'number'
  /** Any single quantity; its dimension is checked by the statement (a sweep's ends). */
  | 'quantity';

export interface ShapeSpec {
  /** Required attributes (all of them) and their values. */
  attrs: Record<string, Want>;
  /** May take `hollow`. */
  hollow: boolean;
  /** Minimum number of profile points written right after the shape word. */
  points?: number;
}

export const STATEMENTS = ['scene', 'space', 'medium', 'mesh', 'let', 'electrode', 'ground', 'charge', 'slice', 'probe', 'limit', 'sweep'] as const;
export const SPACES: Space[] = ['3d', 'axisymmetric', 'planar'];
export const DRIVES = ['potential', 'charge', 'floating'] as const;
export const MESH_PRESETS = ['coarse', 'normal', 'fine'] as const;
export const SLICE_PLANES = ['xy', 'xz', 'yz'] as const;

export const SHAPES: Record<Space, Record<string, ShapeSpec>> = {
  '3d': {
    sphere: { attrs: { center: 'point', radius: 'length' }, hollow: true },
    box: { attrs: { center: 'point', size: 'size3' }, hollow: true },
    cylinder: { attrs: { from: 'point', to: 'point', radius: 'length' }, hollow: true },
    disc: { attrs: { center: 'point', normal: 'vector', radius: 'length' }, hollow: false },
    plate: { attrs: { center: 'point', size: 'size2', normal: 'axis' }, hollow: false },
    torus: { attrs: { center: 'point', axis: 'vector', major: 'length', minor: 'length' }, hollow: true },
  },
  axisymmetric: {
    sphere: { attrs: { center: 'axisPoint', radius: 'length' }, hollow: true },
    disc: { attrs: { center: 'axisPoint', radius: 'length' }, hollow: false },
    torus: { attrs: { center: 'axisPoint', major: 'length', minor: 'length' }, hollow: true },
    cylinder: { attrs: { from: 'axisPoint', to: 'axisPoint', radius: 'length' }, hollow: true },
    revolve: { attrs: {}, hollow: true, points: 2 },
  },
  planar: {
    circle: { attrs: { center: 'point', radius: 'length' }, hollow: true },
    rect: { attrs: { center: 'point', size: 'size2' }, hollow: true },
    polygon: { attrs: {}, hollow: true, points: 3 },
    strip: { attrs: { from: 'point', to: 'point' }, hollow: false },
  },
};

export const CHARGE_KINDS: Record<Space, Record<string, Record<string, Want>>> = {
  '3d': {
    point: { at: 'point', value: 'charge' },
    line: { from: 'point', to: 'point', density: 'lineCharge' },
    ring: { center: 'point', axis: 'vector', radius: 'length', density: 'lineCharge' },
  },
  axisymmetric: {
    point: { at: 'axisPoint', value: 'charge' },
    ring: { at: 'point', density: 'lineCharge' },
  },
  planar: {
    point: { at: 'point', density: 'lineCharge' },
  },
};

export const PROBE_KINDS: Record<string, Record<string, Want>> = {
  point: { at: 'point' },
  line: { from: 'point', to: 'point', 'samples?': 'count' },
};

export interface MediumSpec {
  permittivity: number;
  /** V/m, a rough design figure (common practice), or null. */
  strength: number | null;
  note: string;
}

/**
 * Named media. Relative permittivities and dielectric strengths are common practice figures
 * (rough guides, never design allowables): air about 3 kV/mm in a uniform field at standard
 * conditions; SF6 about 8.9 kV/mm at 1 bar; mineral oil about 10 kV/mm, varying widely with condition.
 */
export const MEDIA: Record<string, MediumSpec> = {
  vacuum: { permittivity: 1, strength: null, note: 'no breakdown figure' },
  air: { permittivity: 1.0006, strength: 3e6, note: 'about 3 kV/mm in a uniform field at standard conditions' },
  sf6: { permittivity: 1.002, strength: 8.9e6, note: 'about 8.9 kV/mm at 1 bar' },
  oil: { permittivity: 2.2, strength: 10e6, note: 'about 10 kV/mm; varies widely with condition' },
};

/** Attributes of the statements other than electrodes, charges and probes. */
export const STATEMENT_ATTRIBUTES: Record<string, Record<string, Want>> = {
  medium: { 'permittivity?': 'number', 'strength?': 'field', 'density?': 'number' },
  mesh: { 'size?': 'length' },
  ground: { at: 'axisEq' },
  slice: { 'at?': 'axisEq', from: 'plane2', to: 'plane2', 'cells?': 'count' },
  limit: { field: 'field' },
  sweep: { from: 'quantity', to: 'quantity', steps: 'count' },
};

const FLAGS = ['hollow', 'floating'];

/** Every attribute word of the language. */
export const ATTRIBUTE_WORDS: string[] = (() => {
  const words = new Set<string>(['potential', 'charge', ...FLAGS]);
  const add = (attrs: Record<string, Want>) => Object.keys(attrs).forEach((k) => words.add(k.replace('?', '')));
  for (const s of SPACES) {
    Object.values(SHAPES[s]).forEach((spec) => add(spec.attrs));
    Object.values(CHARGE_KINDS[s]).forEach(add);
  }
  Object.values(PROBE_KINDS).forEach(add);
  Object.values(STATEMENT_ATTRIBUTES).forEach(add);
  return [...words];
})();

/** Attributes each electrode shape takes in a space (drives and `hollow` included). */
export function attributesOfShape(space: Space, shape: string): string[] {
  const spec = SHAPES[space][shape];
  if (!spec) return [];
  return [...Object.keys(spec.attrs), ...(spec.hollow ? ['hollow'] : []), ...DRIVES];
}

const DEFAULT_SAMPLES = 50;
const DEFAULT_CELLS = 100;
const MAGNITUDE_RATIO = 1e4;

export interface SweepSpec {
  /** The let whose value is swept. */
  name: string;
  /** SI values, in the let's dimension. */
  from: number;
  to: number;
  steps: number;
  dim: Dim;
  range: Range;
  nameRange: Range;
}

export interface Analysis {
  ast: SceneAst;
  scene: Scene;
  diagnostics: Diagnostic[];
  symbols: SymbolTable;
  /** `sweep` statements: parsed and checked, run by `voltscape sweep` (not part of the Scene). */
  sweeps: SweepSpec[];
}

// ---- analysis state ----

interface State {
  space: Space;
  ctx: EvalContext;
  lets: Map<string, LetBinding>;
  symbols: SymbolEntry[];
  symbolByName: Map<string, SymbolEntry>;
  /** Nonzero lengths written in geometry, for the magnitude check. */
  lengths: { value: number; range: Range }[];
  diagnostics: Diagnostic[];
}

type Read = Map<string, { attr: Attribute; value: unknown }>;

function push(st: State, code: string, range: Range, message: string, data?: Record<string, unknown>) {
  st.diagnostics.push(diagnostic(code, range, message, data));
}

function article(word: string): string {
  return /^[aeiou]/.test(word) ? `an ${word}` : `a ${word}`;
}

function listWords(words: string[]): string {
  const ws = words.map((w) => `'${w}'`);
  return ws.length <= 1 ? (ws[0] ?? '') : ws.slice(0, -1).join(', ') + ' and ' + ws[ws.length - 1];
}

const WANT_DIM: Partial<Record<Want, Dim>> = {
  length: LENGTH,
  potential: POTENTIAL,
  charge: CHARGE,
  lineCharge: LINE_CHARGE,
  field: FIELD,
  number: DIMENSIONLESS,
  count: DIMENSIONLESS,
};
const FALLBACK_UNIT: Record<string, string> = { '1,0,0': 'mm', '0,1,0': 'kV', '0,0,1': 'nC', '-1,1,0': 'kV/mm', '-1,0,1': 'nC/m' };

function unitHint(st: State, dim: Dim): string {
  return likelyUnit(dim, st.ctx, FALLBACK_UNIT[dim.join(',')] ?? '');
}

/** Checks one quantity against a dimension; reports VS203 (no unit) or VS202 (wrong dimension). */
function checkDim(st: State, q: Quantity, dim: Dim, what: string, range: Range): boolean {
  if (sameDim(q.dim, dim) || isWildcardZero(q)) return true;
  if (isDimensionless(q.dim)) {
    const unit = unitHint(st, dim);
    push(st, 'VS203', range, `${what} needs ${describeDim(dim)}: write a unit after the number${unit ? `, e.g. ${unit}` : ''}.`, { unit });
  } else {
    push(st, 'VS202', range, `${what} needs ${describeDim(dim)}, but this is ${describeDim(q.dim)}.`, { expected: dim, found: q.dim });
  }
  return false;
}

function evalExpr(st: State, e: Expr | null): EvalValue | null {
  return evaluate(e, st.ctx);
}

function scalarOf(st: State, v: EvalValue, what: string): Quantity | null {
  if (v.kind === 'scalar') return v.q;
  push(st, 'VS216', v.range, `${what} takes a single value, not a tuple of ${v.items.length}.`);
  return null;
}

function pointSize(st: State): number {
  return st.space === '3d' ? 3 : 2;
}

function coordsText(n: number, space: Space): string {
  if (n === 3) return 'three coordinates (x, y, z)';
  return space === 'axisymmetric' ? 'two coordinates (r, z)' : 'two coordinates (x, y)';
}

/** A tuple of `n` lengths. */
function readLengths(st: State, v: EvalValue, n: number, what: string, shapeText: string): number[] | null {
  if (v.kind === 'scalar') {
    push(st, 'VS216', v.range, `${what} needs ${shapeText}, written as a tuple such as (0, 0, 10) mm.`);
    return null;
  }
  if (v.items.length !== n) {
    push(st, 'VS216', v.range, `${what} needs ${shapeText}; found ${v.items.length} value${v.items.length === 1 ? '' : 's'}.`);
    return null;
  }
  const nonzero = v.items.filter((q) => !isWildcardZero(q));
  if (nonzero.length > 0 && nonzero.every((q) => isDimensionless(q.dim))) {
    const unit = unitHint(st, LENGTH);
    push(st, 'VS203', v.range, `${what} needs lengths: write a unit after the tuple, e.g. ${unit}.`, { unit });
    return null;
  }
  let ok = true;
  for (const q of v.items) ok = checkDim(st, q, LENGTH, `Each coordinate of ${what}`, q.range) && ok;
  if (!ok) return null;
  for (const q of v.items) if (q.value !== 0) st.lengths.push({ value: Math.abs(q.value), range: v.range });
  return v.items.map((q) => q.value);
}

/** Converts an attribute value to what the attribute needs; null (after a diagnostic) when it cannot. */
function convert(st: State, want: Want, value: Value, what: string): unknown {
  if (value.kind === 'axis') {
    if (want === 'axis') return value.axis.text;
    if (want === 'vector') {
      const i = 'xyz'.indexOf(value.axis.text);
      const v: number[] = [0, 0, 0];
      v[i] = 1;
      return v;
    }
    if (want === 'axisEq') {
      if (!value.equals || !value.expr) {
        push(st, 'VS216', value.range, `${what} needs an equation such as '${value.axis.text} = 0'.`);
        return null;
      }
      const v = evalExpr(st, value.expr);
      if (!v) return null;
      const q = scalarOf(st, v, what);
      if (!q || !checkDim(st, q, LENGTH, what, v.range)) return null;
      if (q.value !== 0) st.lengths.push({ value: Math.abs(q.value), range: v.range });
      return { axis: value.axis.text, at: q.value, axisRange: value.axis.range };
    }
    push(st, 'VS216', value.range, `${what} takes ${wantText(st, want)}, not an axis.`);
    return null;
  }
  if (want === 'axisEq') {
    push(st, 'VS216', value.range, `${what} needs an equation such as 'z = 0'.`);
    return null;
  }
  const v = evalExpr(st, value);
  if (!v) return null;
  switch (want) {
    case 'point':
    case 'axisPoint': {
      const n = pointSize(st);
      const p = readLengths(st, v, n, what, coordsText(n, st.space));
      if (!p) return null;
      if (st.space === 'axisymmetric' && want === 'axisPoint' && p[0] !== 0) {
        push(st, 'VS219', v.range, `${what} must lie on the axis in axisymmetric space: its r (first coordinate) must be 0.`);
        return null;
      }
      if (st.space === 'axisymmetric' && p[0] < 0) {
        push(st, 'VS219', v.range, `${what} has a negative radius r; in axisymmetric space r ≥ 0.`);
        return null;
      }
      return p;
    }
    case 'plane2':
      return readLengths(st, v, 2, what, 'two coordinates in the slice plane');
    case 'size2':
      return readLengths(st, v, 2, what, 'two lengths (A, B)');
    case 'size3':
      return readLengths(st, v, 3, what, 'three lengths (A, B, C)');
    case 'vector': {
      const n = pointSize(st);
      if (v.kind === 'scalar' || v.items.length !== n) {
        push(st, 'VS216', v.range, `${what} needs a direction: an axis (x, y, z) or a tuple of ${n} plain numbers.`);
        return null;
      }
      let ok = true;
      for (const q of v.items) ok = checkDim(st, q, DIMENSIONLESS, `Each component of ${what}`, q.range) && ok;
      if (!ok) return null;
      // Unit vector u = v / |v|; the zero vector is left as zero (the geometry checks report it).
      const norm = Math.hypot(...v.items.map((q) => q.value));
      return v.items.map((q) => (norm > 0 ? q.value / norm : 0));
    }
    case 'axis': {
      if (v.kind === 'tuple' && v.items.length === 3 && v.items.every((q) => isDimensionless(q.dim))) {
        const nonzero = v.items.map((q, i) => (q.value !== 0 ? i : -1)).filter((i) => i >= 0);
        if (nonzero.length === 1) return 'xyz'[nonzero[0]];
      }
      push(st, 'VS216', v.range, `${what} must be one of the axes x, y or z.`);
      return null;
    }
    case 'quantity':
      return scalarOf(st, v, what);
    case 'count': {
      const q = scalarOf(st, v, what);
      if (!q) return null;
      if (!isDimensionless(q.dim) || !Number.isInteger(q.value) || q.value < 1) {
        push(st, 'VS217', v.range, `${what} must be a positive whole number without a unit.`);
        return null;
      }
      return q.value;
    }
    default: {
      const q = scalarOf(st, v, what);
      if (!q || !checkDim(st, q, WANT_DIM[want]!, what, v.range)) return null;
      if (want === 'length' && q.value !== 0) st.lengths.push({ value: Math.abs(q.value), range: v.range });
      return q.value;
    }
  }
}

function wantText(st: State, want: Want): string {
  switch (want) {
    case 'point':
    case 'axisPoint':
      return `a point with ${coordsText(pointSize(st), st.space)}`;
    case 'plane2':
      return 'a point in the slice plane';
    case 'size2':
      return 'two lengths';
    case 'size3':
      return 'three lengths';
    case 'vector':
      return 'a direction';
    case 'axis':
      return 'an axis (x, y or z)';
    case 'axisEq':
      return "an equation such as 'z = 0'";
    case 'count':
      return 'a whole number';
    case 'quantity':
      return 'a value';
    default:
      return describeDim(WANT_DIM[want]!);
  }
}

/**
 * Reads the attributes of a statement against what it allows. Reports unknown words (VS213), words
 * that belong elsewhere (VS212), repeats (VS215), missing values (VS220) and missing required
 * attributes (VS211, on `missingAt`). Returns the converted values by attribute name.
 */
function readAttributes(st: State, stmt: Statement, allowed: Record<string, Want>, flags: string[], where: string, missingAt: Range): Read {
  const wants = new Map<string, Want>();
  const required: string[] = [];
  for (const [key, want] of Object.entries(allowed)) {
    const name = key.replace('?', '');
    wants.set(name, want);
    if (!key.endsWith('?')) required.push(name);
  }
  const read: Read = new Map();
  const known = [...wants.keys(), ...flags];
  for (const attr of stmt.attributes) {
    const name = attr.name.text;
    if (!wants.has(name) && !flags.includes(name)) {
      if (ATTRIBUTE_WORDS.includes(name)) {
        push(st, 'VS212', attr.name.range, `'${name}' does not belong to ${where}; it takes ${listWords(known)}.`, { attribute: name });
      } else {
        const near = closest(name, known);
        push(st, 'VS213', attr.name.range, `Unknown attribute '${name}' for ${where}.${near ? ` Did you mean '${near}'?` : ` It takes ${listWords(known)}.`}`, near ? { replacement: near } : undefined);
      }
      continue;
    }
    if (read.has(name)) {
      push(st, 'VS215', attr.name.range, `'${name}' is given twice.`, { attribute: name });
      continue;
    }
    if (flags.includes(name)) {
      if (attr.value) push(st, 'VS216', attr.value.range, `'${name}' takes no value.`);
      read.set(name, { attr, value: true });
      continue;
    }
    if (!attr.value) {
      push(st, 'VS220', attr.name.range, `'${name}' needs a value: ${wantText(st, wants.get(name)!)}.`);
      read.set(name, { attr, value: null });
      continue;
    }
    read.set(name, { attr, value: convert(st, wants.get(name)!, attr.value, `'${name}'`) });
  }
  const missing = required.filter((r) => !read.has(r));
  if (missing.length > 0) {
    push(st, 'VS211', missingAt, `${where[0].toUpperCase() + where.slice(1)} needs ${listWords(missing)}.`, { missing });
  }
  return read;
}

/** True when every required attribute was read and converted. */
function complete(read: Read, allowed: Record<string, Want>): boolean {
  return Object.keys(allowed).every((k) => k.endsWith('?') || (read.has(k) && read.get(k)!.value !== null));
}

function declare(st: State, kind: SymbolKind, name: Word, stmt: Statement, value: SymbolEntry['value']): boolean {
  const existing = st.symbolByName.get(name.text);
  if (existing) {
    push(st, 'VS208', name.range, `'${name.text}' is already defined (as ${article(existing.kind)} on line ${existing.nameRange.start.line + 1}).`, {
      name: name.text,
    });
    return false;
  }
  const entry: SymbolEntry = { name: name.text, kind, nameRange: name.range, statementRange: stmt.range, value, references: [] };
  st.symbols.push(entry);
  st.symbolByName.set(name.text, entry);
  return true;
}

function headIn(st: State, stmt: Statement, options: string[], what: string): string | null {
  if (!stmt.head) return null;
  if (options.includes(stmt.head.text)) return stmt.head.text;
  const near = closest(stmt.head.text, options);
  push(st, 'VS213', stmt.head.range, `Unknown ${what} '${stmt.head.text}'.${near ? ` Did you mean '${near}'?` : ` Expected ${listWords(options)}.`}`, near ? { replacement: near } : undefined);
  return null;
}

// ---- statements ----

interface Builder {
  title: { value: string | null; range: Range | null };
  medium: Medium;
  mediumAt: Range | null;
  mesh: MeshSetting;
  meshAt: Range | null;
  limit: Limit | null;
  groundPlanes: GroundPlane[];
  slices: Slice[];
  electrodes: Electrode<unknown>[];
  charges: unknown[];
  probes: Probe<unknown>[];
  sweeps: SweepSpec[];
}

function once(st: State, previous: Range | null, stmt: Statement): boolean {
  if (!previous) return true;
  push(st, 'VS218', stmt.keyword.range, `'${stmt.type}' is already given on line ${previous.start.line + 1}; only one is allowed.`);
  return false;
}

function analyzeLet(st: State, stmt: Statement) {
  if (!stmt.name) return;
  const v = evalExpr(st, stmt.value);
  const value: SymbolEntry['value'] = v ? { si: v.kind === 'scalar' ? v.q.value : v.items.map((q) => q.value), dim: v.kind === 'scalar' ? v.q.dim : (v.items[0]?.dim ?? DIMENSIONLESS) } : null;
  if (!declare(st, 'let', stmt.name, stmt, value)) return;
  if (!v) st.ctx.failedLets.add(stmt.name.text);
  if (v) {
    const entry = st.symbolByName.get(stmt.name.text)!;
    st.lets.set(stmt.name.text, { value: v, onReference: (r) => entry.references.push(r) });
  }
}

function analyzeMedium(st: State, b: Builder, stmt: Statement) {
  if (!once(st, b.mediumAt, stmt)) return;
  b.mediumAt = stmt.keyword.range;
  const name = headIn(st, stmt, Object.keys(MEDIA), 'medium');
  if (stmt.head && !name) return;
  const read = readAttributes(st, stmt, STATEMENT_ATTRIBUTES.medium, [], 'a medium', stmt.keyword.range);
  const permittivity = read.get('permittivity')?.value as number | null | undefined;
  const strength = read.get('strength')?.value as number | null | undefined;
  const density = read.get('density')?.value as number | null | undefined;
  if (!name && permittivity === undefined) {
    push(st, 'VS211', stmt.keyword.range, "A medium needs a name (vacuum, air, sf6, oil) or 'permittivity X'.", { missing: ['permittivity'] });
    return;
  }
  if (permittivity === null || strength === null || density === null) return;
  if (permittivity !== undefined && !(permittivity >= 1)) {
    push(st, 'VS224', read.get('permittivity')!.attr.value!.range, 'A relative permittivity is at least 1 for any ordinary dielectric.');
    return;
  }
  if (strength !== undefined && !(strength > 0)) {
    push(st, 'VS224', read.get('strength')!.attr.value!.range, 'A dielectric strength must be positive.');
    return;
  }
  if (density !== undefined && !(density > 0)) {
    push(st, 'VS224', read.get('density')!.attr.value!.range, 'The relative air density must be positive (1 at 20 °C and 101.325 kPa).');
    return;
  }
  const spec = name ? MEDIA[name] : null;
  b.medium = {
    name,
    permittivity: permittivity ?? spec?.permittivity ?? 1,
    strength: strength ?? spec?.strength ?? null,
    density: density ?? 1,
  };
}

function analyzeMesh(st: State, b: Builder, stmt: Statement) {
  if (!once(st, b.meshAt, stmt)) return;
  b.meshAt = stmt.keyword.range;
  const preset = headIn(st, stmt, [...MESH_PRESETS], 'mesh preset');
  if (stmt.head && !preset) return;
  const read = readAttributes(st, stmt, STATEMENT_ATTRIBUTES.mesh, [], 'mesh', stmt.keyword.range);
  const size = read.get('size');
  if (preset && size) {
    push(st, 'VS212', size.attr.name.range, "Give either a mesh preset or 'size', not both.");
    return;
  }
  if (preset) b.mesh = { kind: 'preset', preset: preset as 'coarse' | 'normal' | 'fine' };
  else if (size) {
    if (typeof size.value !== 'number') return;
    if (!(size.value > 0)) {
      push(st, 'VS224', size.attr.value!.range, 'The mesh size must be positive.');
      return;
    }
    b.mesh = { kind: 'size', size: size.value };
  } else push(st, 'VS211', stmt.keyword.range, "mesh needs 'size Q' or a preset (coarse, normal, fine).", { missing: ['size'] });
}

function analyzeLimit(st: State, b: Builder, stmt: Statement) {
  if (!once(st, b.limit?.range ?? null, stmt)) return;
  const read = readAttributes(st, stmt, STATEMENT_ATTRIBUTES.limit, [], 'a limit', stmt.keyword.range);
  const field = read.get('field')?.value;
  if (typeof field !== 'number') return;
  if (!(field > 0)) {
    push(st, 'VS224', read.get('field')!.attr.value!.range, 'A field limit must be positive.');
    return;
  }
  b.limit = { field, range: stmt.range };
}

function analyzeGround(st: State, b: Builder, stmt: Statement) {
  const read = readAttributes(st, stmt, STATEMENT_ATTRIBUTES.ground, [], 'a ground plane', stmt.keyword.range);
  const at = read.get('at')?.value as { axis: 'x' | 'y' | 'z'; at: number; axisRange: Range } | null | undefined;
  if (!at) return;
  if (st.space === 'planar' && at.axis === 'z') {
    push(st, 'VS214', at.axisRange, 'In planar space a ground plane is a line x = Q or y = Q.');
    return;
  }
  // In axisymmetric space only a plane across the axis keeps the symmetry.
  if (st.space === 'axisymmetric' && at.axis !== 'z') {
    push(st, 'VS214', at.axisRange, 'In axisymmetric space a ground plane must cross the axis: z = Q.');
    return;
  }
  b.groundPlanes.push({ axis: at.axis, at: at.at, range: stmt.range });
}

function analyzeSlice(st: State, b: Builder, stmt: Statement) {
  const inPlane = st.space !== '3d';
  if (inPlane && stmt.head) {
    push(st, 'VS214', stmt.head.range, `In ${st.space} space a slice lies in the ${st.space === 'planar' ? 'x-y' : 'r-z'} plane itself; leave the plane out.`);
    return;
  }
  const read = readAttributes(st, stmt, STATEMENT_ATTRIBUTES.slice, [], 'a slice', stmt.keyword.range);
  const at = read.get('at');
  if (inPlane && at) {
    push(st, 'VS214', at.attr.name.range, `In ${st.space} space a slice has no 'at'; leave it out.`);
    return;
  }
  let plane: Slice['plane'] = st.space === 'planar' ? 'xy' : 'rz';
  let position = 0;
  if (!inPlane) {
    if (!stmt.head) {
      push(st, 'VS211', stmt.keyword.range, 'A slice in 3d needs its plane (xy, xz or yz) right after slice.', { missing: ['plane'] });
      return;
    }
    plane = stmt.head.text as Slice['plane'];
    const normal = 'xyz'.replace(plane[0], '').replace(plane[1], '');
    if (!at) {
      push(st, 'VS211', stmt.keyword.range, `A slice in 3d needs its position: at ${normal} = Q.`, { missing: ['at'] });
      return;
    }
    const eq = at.value as { axis: string; at: number; axisRange: Range } | null;
    if (!eq) return;
    if (eq.axis !== normal) {
      push(st, 'VS221', eq.axisRange, `The ${plane} slice is placed along ${normal}: write 'at ${normal} = Q'.`, { replacement: normal });
      return;
    }
    position = eq.at;
  }
  if (!complete(read, STATEMENT_ATTRIBUTES.slice)) return;
  const cells = read.get('cells');
  if (cells && cells.value === null) return;
  b.slices.push({
    plane,
    at: position,
    from: read.get('from')!.value as Vec2,
    to: read.get('to')!.value as Vec2,
    cells: (cells?.value as number | undefined) ?? DEFAULT_CELLS,
    range: stmt.range,
  });
}

function analyzeSweep(st: State, b: Builder, stmt: Statement) {
  if (!stmt.name) return;
  const target = st.symbolByName.get(stmt.name.text);
  const binding = st.lets.get(stmt.name.text);
  if (!target || target.kind !== 'let') {
    const near = closest(stmt.name.text, st.lets.keys());
    push(st, 'VS206', stmt.name.range, `A sweep varies a let; '${stmt.name.text}' is not one.${near ? ` Did you mean '${near}'?` : ''}`, near ? { replacement: near } : undefined);
    return;
  }
  target.references.push(stmt.name.range);
  const read = readAttributes(st, stmt, STATEMENT_ATTRIBUTES.sweep, [], 'a sweep', stmt.keyword.range);
  push(st, 'VS227', stmt.keyword.range, `Sweep of '${stmt.name.text}': the preview plots a quick live sweep on a coarse mesh; run \`voltscape sweep FILE\` for the full figures. The scene itself is solved at the let's own value.`);
  if (!complete(read, STATEMENT_ATTRIBUTES.sweep)) return;
  if (!binding || binding.value.kind !== 'scalar') return;
  const dim = binding.value.q.dim;
  const ends: number[] = [];
  for (const key of ['from', 'to']) {
    const q = read.get(key)!.value as Quantity;
    if (!checkDim(st, q, dim, `'${key}' of a sweep of '${stmt.name.text}'`, read.get(key)!.attr.value!.range)) return;
    ends.push(q.value);
  }
  const steps = read.get('steps')!.value as number;
  b.sweeps.push({ name: stmt.name.text, from: ends[0], to: ends[1], steps, dim, range: stmt.range, nameRange: stmt.name.range });
}

function readDrive(st: State, read: Read, stmt: Statement): Drive | null | undefined {
  const present = DRIVES.filter((d) => read.has(d));
  if (present.length === 0) {
    push(st, 'VS209', stmt.name?.range ?? stmt.keyword.range, `Electrode '${stmt.name?.text ?? ''}' has no drive: add 'potential Q', 'charge Q' or 'floating'.`);
    return null;
  }
  if (present.length > 1) {
    const second = stmt.attributes.filter((a) => (DRIVES as readonly string[]).includes(a.name.text))[1];
    push(st, 'VS210', second.name.range, `Electrode '${stmt.name?.text ?? ''}' has more than one drive (${present.join(', ')}); keep exactly one.`);
    return null;
  }
  const d = present[0];
  if (d === 'floating') return { kind: 'floating' };
  const value = read.get(d)!.value;
  if (typeof value !== 'number') return undefined;
  return { kind: d, value };
}

/** `revolve P P P mm`: a unit after the last point applies to earlier points written without one. */
function profilePoints(points: Expr[]): Expr[] {
  const last = points[points.length - 1];
  if (!last || last.kind !== 'unit' || points.slice(0, -1).some((p) => p.kind === 'unit')) return points;
  return points.map((p, i) => (i === points.length - 1 ? p : { kind: 'unit', operand: p, unit: last.unit, range: p.range }));
}

function analyzeElectrode(st: State, b: Builder, stmt: Statement) {
  if (!stmt.name || !stmt.head) return;
  const declared = declare(st, 'electrode', stmt.name, stmt, null);
  const shapes = SHAPES[st.space];
  const shape = stmt.head.text;
  const spec = shapes[shape];
  if (!spec) {
    const elsewhere = SPACES.filter((s) => SHAPES[s][shape]);
    if (elsewhere.length > 0) {
      push(st, 'VS214', stmt.head.range, `'${shape}' is not a shape of ${st.space} space; it takes ${listWords(Object.keys(shapes))}.`);
    } else {
      const near = closest(shape, Object.keys(shapes));
      push(st, 'VS213', stmt.head.range, `Unknown shape '${shape}'.${near ? ` Did you mean '${near}'?` : ` Shapes in ${st.space} space: ${listWords(Object.keys(shapes))}.`}`, near ? { replacement: near } : undefined);
    }
    return;
  }
  let points: number[][] | null = null;
  if (spec.points) {
    points = [];
    for (const p of profilePoints(stmt.points)) {
      const pt = convert(st, 'point', p, 'A profile point') as number[] | null;
      if (!pt) points = null;
      else points?.push(pt);
    }
    if (points && points.length < spec.points) {
      push(st, 'VS222', stmt.head.range, `${article(shape)[0].toUpperCase() + article(shape).slice(1)} needs at least ${spec.points} points; found ${points.length}.`);
      points = null;
    }
  } else if (stmt.points.length > 0) {
    push(st, 'VS216', stmt.points[0].range, `${article(shape)} takes no list of points; give its attributes by name.`);
  }
  const flags = spec.hollow ? ['hollow', 'floating'] : ['floating'];
  const allowed: Record<string, Want> = { ...spec.attrs, 'potential?': 'potential', 'charge?': st.space === 'planar' ? 'lineCharge' : 'charge' };
  const read = readAttributes(st, stmt, allowed, flags, `${article(shape)} in ${st.space} space`, stmt.head.range);
  const drive = readDrive(st, read, stmt);
  if (!declared || !drive || !complete(read, spec.attrs) || (spec.points && !points)) return;
  const hollow = read.has('hollow');
  const get = (k: string) => read.get(k)!.value as never;
  let built: Shape3d | ShapeAxisymmetric | ShapePlanar;
  if (shape === 'revolve') {
    const pts = points as Vec2[];
    const first = pts[0];
    const last = pts[pts.length - 1];
    // Closed: the swept surface encloses a volume (both ends on the axis, or the profile returns to its start).
    const closed = (first[0] === 0 && last[0] === 0) || (first[0] === last[0] && first[1] === last[1]);
    if (hollow && !closed) {
      push(st, 'VS223', read.get('hollow')!.attr.name.range, 'Only a closed profile can be hollow: start and end it on the axis (r = 0), or end it where it starts.');
      return;
    }
    built = { kind: 'revolve', points: pts, closed, hollow };
  } else if (shape === 'polygon') {
    const pts = (points as Vec2[]).slice();
    const a = pts[0];
    const z = pts[pts.length - 1];
    if (pts.length > 3 && a[0] === z[0] && a[1] === z[1]) pts.pop(); // closed implicitly; a repeated first point is dropped
    built = { kind: 'polygon', points: pts, hollow };
  } else {
    const fields: Record<string, unknown> = { kind: shape };
    for (const k of Object.keys(spec.attrs)) fields[k] = get(k);
    if (spec.hollow) fields.hollow = hollow;
    built = fields as unknown as Shape3d;
  }
  b.electrodes.push({ name: stmt.name.text, shape: built, drive, range: stmt.range, nameRange: stmt.name.range });
}

function analyzeCharge(st: State, b: Builder, stmt: Statement) {
  if (!stmt.name || !stmt.head) return;
  const declared = declare(st, 'charge', stmt.name, stmt, null);
  const kinds = CHARGE_KINDS[st.space];
  const kind = stmt.head.text;
  const attrs = kinds[kind];
  if (!attrs) {
    if (['point', 'line', 'ring'].includes(kind)) {
      push(st, 'VS214', stmt.head.range, `${article(kind)[0].toUpperCase() + article(kind).slice(1)} charge is not available in ${st.space} space; it takes ${listWords(Object.keys(kinds))}.`);
    } else {
      const near = closest(kind, Object.keys(kinds));
      push(st, 'VS213', stmt.head.range, `Unknown charge kind '${kind}'.${near ? ` Did you mean '${near}'?` : ` Kinds in ${st.space} space: ${listWords(Object.keys(kinds))}.`}`, near ? { replacement: near } : undefined);
    }
    return;
  }
  const where = `${article(kind)} charge in ${st.space} space`;
  const read = readAttributes(st, stmt, attrs, [], where, stmt.head.range);
  if (!declared || !complete(read, attrs)) return;
  const c: Record<string, unknown> = { kind, name: stmt.name.text };
  for (const k of Object.keys(attrs)) c[k] = read.get(k)!.value;
  c.range = stmt.range;
  b.charges.push(c);
}

function analyzeProbe(st: State, b: Builder, stmt: Statement) {
  if (!stmt.name || !stmt.head) return;
  const declared = declare(st, 'probe', stmt.name, stmt, null);
  const kind = stmt.head.text;
  const attrs = PROBE_KINDS[kind];
  if (!attrs) {
    const near = closest(kind, Object.keys(PROBE_KINDS));
    push(st, kind === 'ring' ? 'VS212' : 'VS213', stmt.head.range, `A probe is a 'point' or a 'line'${near && kind !== 'ring' ? `; did you mean '${near}'?` : '.'}`, near ? { replacement: near } : undefined);
    return;
  }
  const read = readAttributes(st, stmt, attrs, [], `${article(kind)} probe`, stmt.head.range);
  if (!declared || !complete(read, attrs)) return;
  const samples = read.get('samples');
  if (samples && samples.value === null) return;
  if (kind === 'point') b.probes.push({ kind: 'point', name: stmt.name.text, at: read.get('at')!.value, range: stmt.range });
  else
    b.probes.push({
      kind: 'line',
      name: stmt.name.text,
      from: read.get('from')!.value,
      to: read.get('to')!.value,
      samples: (samples?.value as number | undefined) ?? DEFAULT_SAMPLES,
      range: stmt.range,
    });
}

/** Lengths far above the scene's typical length (a `km` among `mm`s) get a warning. */
function checkMagnitudes(st: State) {
  if (st.lengths.length < 2) return;
  const sorted = st.lengths.map((l) => l.value).sort((a, b) => a - b);
  // The lower median, so one huge value among two cannot hide itself.
  const median = sorted[Math.floor((sorted.length - 1) / 2)];
  const seen = new Set<string>();
  for (const l of st.lengths) {
    if (l.value <= MAGNITUDE_RATIO * median) continue;
    const key = JSON.stringify(l.range);
    if (seen.has(key)) continue;
    seen.add(key);
    push(st, 'VS205', l.range, `This length (${l.value.toPrecision(3)} m) is over 10^4 times the scene's typical length (${median.toPrecision(3)} m); check its unit.`, {
      value: l.value,
      typical: median,
    });
  }
}

function analyzeStatement(st: State, b: Builder, s: Statement) {
  switch (s.type) {
    case 'scene':
      if (once(st, b.title.range, s)) b.title = { value: s.title?.value ?? null, range: s.keyword.range };
      break;
    case 'space':
      break;
    case 'medium':
      analyzeMedium(st, b, s);
      break;
    case 'mesh':
      analyzeMesh(st, b, s);
      break;
    case 'let':
      analyzeLet(st, s);
      break;
    case 'electrode':
      analyzeElectrode(st, b, s);
      break;
    case 'ground':
      analyzeGround(st, b, s);
      break;
    case 'charge':
      analyzeCharge(st, b, s);
      break;
    case 'slice':
      analyzeSlice(st, b, s);
      break;
    case 'probe':
      analyzeProbe(st, b, s);
      break;
    case 'limit':
      analyzeLimit(st, b, s);
      break;
    case 'sweep':
      analyzeSweep(st, b, s);
      break;
  }
}

/** Analyses parsed statements into a Scene with diagnostics. Never throws for any input. */
export function analyze(parsed: ParsedText, range: Range): Omit<Analysis, 'diagnostics'> & { diagnostics: Diagnostic[] } {
  const diagnostics: Diagnostic[] = [...parsed.diagnostics];
  const statements = parsed.statements;
  const ast: SceneAst = { kind: 'scene', statements, range };

  // The space decides everything else, so it is read first.
  let space: Space = '3d';
  let spaceAt: Range | null = null;
  const lets = new Map<string, LetBinding>();
  const st: State = {
    space,
    lets,
    ctx: {
      lets,
      allLetNames: new Set(statements.filter((s) => s.type === 'let' && s.name).map((s) => s.name!.text)),
      failedLets: new Set(),
      otherNames: new Map(statements.filter((s) => (s.type === 'electrode' || s.type === 'charge' || s.type === 'probe') && s.name).map((s) => [s.name!.text, s.type])),
      diagnostics,
      unitUse: new Map(),
    },
    symbols: [],
    symbolByName: new Map(),
    lengths: [],
    diagnostics,
  };
  for (const s of statements) {
    if (s.type !== 'space') continue;
    if (!once(st, spaceAt, s)) continue;
    spaceAt = s.keyword.range;
    if (!s.head) {
      push(st, 'VS211', s.keyword.range, 'space needs a mode: 3d, axisymmetric or planar.', { missing: ['mode'] });
      continue;
    }
    const mode = headIn(st, s, SPACES, 'space');
    if (mode) space = mode as Space;
  }
  st.space = space;

  const b: Builder = {
    title: { value: null, range: null },
    medium: { name: 'vacuum', permittivity: 1, strength: null, density: 1 },
    mediumAt: null,
    mesh: { kind: 'preset', preset: 'normal' },
    meshAt: null,
    limit: null,
    groundPlanes: [],
    slices: [],
    electrodes: [],
    charges: [],
    probes: [],
    sweeps: [],
  };

  for (const s of statements) {
    const before = diagnostics.length;
    analyzeStatement(st, b, s);
    // After a syntax error in the statement, its meaning errors are mostly echoes of it: keep the syntax error alone.
    if (s.broken) diagnostics.length = before;
  }
  checkMagnitudes(st);

  const common = {
    title: b.title.value,
    medium: b.medium,
    mesh: b.mesh,
    groundPlanes: b.groundPlanes,
    slices: b.slices,
    limit: b.limit,
  };
  let scene: Scene;
  if (space === '3d') {
    scene = { space, ...common, electrodes: b.electrodes as Electrode<Shape3d>[], charges: b.charges as Charge3d[], probes: b.probes as Probe<Vec3>[] };
  } else if (space === 'axisymmetric') {
    scene = { space, ...common, electrodes: b.electrodes as Electrode<ShapeAxisymmetric>[], charges: b.charges as ChargeAxisymmetric[], probes: b.probes as Probe<Vec2>[] };
  } else {
    scene = { space, ...common, electrodes: b.electrodes as Electrode<ShapePlanar>[], charges: b.charges as ChargePlanar[], probes: b.probes as Probe<Vec2>[] };
  }
  return { ast, scene, diagnostics, symbols: { entries: st.symbols }, sweeps: b.sweeps };
}
