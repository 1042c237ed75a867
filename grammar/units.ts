// Units and dimensions. Every quantity carries a dimension over three base quantities:
// length L (metre), potential V (volt) and charge Q (coulomb). Exponents are small integers.
// Derived: field V/L, capacitance Q/V (farad), energy Q·V (joule), force Q·V/L (newton).

/** Exponents of [length, potential, charge]. */
export type Dim = readonly [number, number, number];

export const DIMENSIONLESS: Dim = [0, 0, 0];
export const LENGTH: Dim = [1, 0, 0];
export const POTENTIAL: Dim = [0, 1, 0];
export const CHARGE: Dim = [0, 0, 1];
export const FIELD: Dim = [-1, 1, 0];
export const LINE_CHARGE: Dim = [-1, 0, 1];
export const SURFACE_CHARGE: Dim = [-2, 0, 1];
export const CAPACITANCE: Dim = [0, -1, 1];
export const ENERGY: Dim = [0, 1, 1];
export const FORCE: Dim = [-1, 1, 1];

export interface UnitAtom {
  /** As written, e.g. "kV". */
  symbol: string;
  /** Multiply a value in this unit by `factor` to get SI (factor = mantissa · 10^exponent). */
  factor: number;
  mantissa: number;
  exponent: number;
  dim: Dim;
  /** What it measures, for completion and hover. */
  quantity: string;
}

// Prefixes "where they make sense" for each base unit. Both micro signs (U+00B5 and U+03BC) and
// the ASCII `u` spell micro.
const PREFIX: Record<string, number> = { p: -12, n: -9, u: -6, 'µ': -6, 'μ': -6, m: -3, c: -2, '': 0, k: 3, M: 6, G: 9 };
const BASES: { base: string; dim: Dim; quantity: string; prefixes: string[] }[] = [
  { base: 'm', dim: LENGTH, quantity: 'length', prefixes: ['m', 'c', '', 'u', 'µ', 'μ', 'n', 'k', 'M'] },
  { base: 'V', dim: POTENTIAL, quantity: 'potential', prefixes: ['k', '', 'm', 'M', 'u', 'µ', 'μ', 'G'] },
  { base: 'C', dim: CHARGE, quantity: 'charge', prefixes: ['n', 'p', 'u', 'µ', 'μ', 'm', ''] },
  { base: 'F', dim: CAPACITANCE, quantity: 'capacitance', prefixes: ['p', 'n', 'u', 'µ', 'μ', 'm', ''] },
  { base: 'J', dim: ENERGY, quantity: 'energy', prefixes: ['m', 'u', 'µ', 'μ', '', 'k'] },
  { base: 'N', dim: FORCE, quantity: 'force', prefixes: ['m', 'u', 'µ', 'μ', '', 'k'] },
];

function buildTable(): Map<string, UnitAtom> {
  const table = new Map<string, UnitAtom>();
  for (const b of BASES) {
    for (const p of b.prefixes) {
      const symbol = p + b.base;
      // SI prefix factors applied to the SI base unit; exact decimal scalings.
      table.set(symbol, { symbol, factor: 10 ** PREFIX[p], mantissa: 1, exponent: PREFIX[p], dim: b.dim, quantity: b.quantity });
    }
  }
  // The international inch is exactly 25.4 mm (NIST, SP 811, appendix B; the 1959 agreement).
  table.set('in', { symbol: 'in', factor: 0.0254, mantissa: 0.0254, exponent: 0, dim: LENGTH, quantity: 'length' });
  return table;
}

/** Every unit atom the language knows, in a stable order (common ones first). */
export const unitTable: ReadonlyMap<string, UnitAtom> = buildTable();

export function isUnitAtom(word: string): boolean {
  return unitTable.has(word);
}

// One atom of a compound unit: a word, optionally raised to an integer power.
const ATOM_RE = /([/*]?)([A-Za-z_\u00b5\u03bc][A-Za-z0-9_\u00b5\u03bc]*)(?:\^(-?\d+))?/y;

export interface UnitPart {
  op: '' | '/' | '*';
  atom: string;
  power: number;
  /** Offset of the atom inside the unit text. */
  offset: number;
  known: boolean;
}

/** Splits a compound unit such as `kV/mm` or `C/m^2` into its atoms; null when the text is not unit-shaped. */
export function splitUnit(text: string): UnitPart[] | null {
  const parts: UnitPart[] = [];
  let at = 0;
  while (at < text.length) {
    ATOM_RE.lastIndex = at;
    const m = ATOM_RE.exec(text);
    if (!m || m[0].length === 0) return null;
    const op = m[1] as '' | '/' | '*';
    if ((parts.length === 0) !== (op === '')) return null;
    const power = m[3] === undefined ? 1 : Number(m[3]);
    parts.push({ op, atom: m[2], power, offset: at + m[1].length, known: unitTable.has(m[2]) });
    at += m[0].length;
  }
  return parts.length > 0 ? parts : null;
}

export interface UnitValue {
  /** factor = mantissa · 10^exponent; kept apart so decimal values convert without extra rounding. */
  factor: number;
  mantissa: number;
  exponent: number;
  dim: Dim;
}

/** value · unit in SI: scaling by a power of ten divides for negative powers, so 150 mm is exactly 0.15. */
export function applyUnit(value: number, unit: UnitValue): number {
  const v = value * unit.mantissa;
  return unit.exponent >= 0 ? v * 10 ** unit.exponent : v / 10 ** -unit.exponent;
}

const unitCache = new Map<string, UnitValue | null>();

/** Factor to SI and dimension of a unit text, or null when any atom is unknown. */
export function evaluateUnit(text: string): UnitValue | null {
  let hit = unitCache.get(text);
  if (hit === undefined) {
    hit = computeUnit(text);
    if (unitCache.size > 1000) unitCache.clear();
    unitCache.set(text, hit);
  }
  return hit;
}

function computeUnit(text: string): UnitValue | null {
  const parts = splitUnit(text);
  if (!parts) return null;
  let mantissa = 1;
  let exponent = 0;
  let dim: Dim = DIMENSIONLESS;
  for (const p of parts) {
    const atom = unitTable.get(p.atom);
    if (!atom) return null;
    const power = (p.op === '/' ? -1 : 1) * p.power;
    mantissa *= atom.mantissa ** power;
    exponent += atom.exponent * power;
    dim = addDim(dim, scaleDim(atom.dim, power));
  }
  return { factor: mantissa * 10 ** exponent, mantissa, exponent, dim };
}

/** The dimension of a unit text such as `kV/mm`, or null when it is not a known unit. */
export function dimensionOf(unitText: string): Dim | null {
  return evaluateUnit(unitText)?.dim ?? null;
}

/** A known atom for an unknown one: same letters ignoring case (common units first), else one edit away. */
export function suggestAtom(atom: string): string | null {
  const normalized = atom.replace(/[\u00b5\u03bc]/g, 'u');
  const lower = normalized.toLowerCase();
  for (const symbol of unitTable.keys()) if (symbol.toLowerCase() === lower) return symbol;
  for (const symbol of unitTable.keys()) if (symbol.length > 1 && editDistance(symbol, normalized) === 1) return symbol;
  return null;
}

/** A corrected unit text for one with unknown atoms, or null when no atom has a suggestion. */
export function suggestUnit(text: string): string | null {
  const parts = splitUnit(text);
  if (!parts) return null;
  let out = '';
  for (const p of parts) {
    const atom = p.known ? p.atom : suggestAtom(p.atom);
    if (!atom) return null;
    out += p.op + atom + (p.power !== 1 ? `^${p.power}` : '');
  }
  return out;
}

export function addDim(a: Dim, b: Dim): Dim {
  return [a[0] + b[0], a[1] + b[1], a[2] + b[2]];
}
export function subDim(a: Dim, b: Dim): Dim {
  return [a[0] - b[0], a[1] - b[1], a[2] - b[2]];
}
export function scaleDim(a: Dim, k: number): Dim {
  return [a[0] * k + 0, a[1] * k + 0, a[2] * k + 0];
}
export function sameDim(a: Dim, b: Dim): boolean {
  return a[0] === b[0] && a[1] === b[1] && a[2] === b[2];
}
export function isDimensionless(a: Dim): boolean {
  return a[0] === 0 && a[1] === 0 && a[2] === 0;
}

const NAMED: { dim: Dim; name: string; unit: string }[] = [
  { dim: DIMENSIONLESS, name: 'a plain number', unit: '' },
  { dim: LENGTH, name: 'a length', unit: 'm' },
  { dim: POTENTIAL, name: 'a potential', unit: 'V' },
  { dim: CHARGE, name: 'a charge', unit: 'C' },
  { dim: FIELD, name: 'a field', unit: 'V/m' },
  { dim: LINE_CHARGE, name: 'a line charge', unit: 'C/m' },
  { dim: SURFACE_CHARGE, name: 'a surface charge', unit: 'C/m^2' },
  { dim: CAPACITANCE, name: 'a capacitance', unit: 'F' },
  { dim: ENERGY, name: 'an energy', unit: 'J' },
  { dim: FORCE, name: 'a force', unit: 'N' },
  { dim: [2, 0, 0], name: 'an area', unit: 'm^2' },
];

/** The SI unit text of a dimension, e.g. `V/m`, `m^2*C`; empty for dimensionless. */
export function siUnitOf(dim: Dim): string {
  const known = NAMED.find((n) => sameDim(n.dim, dim));
  if (known) return known.unit;
  const symbols = ['m', 'V', 'C'];
  const up: string[] = [];
  const down: string[] = [];
  dim.forEach((e, i) => {
    if (e > 0) up.push(symbols[i] + (e !== 1 ? `^${e}` : ''));
    if (e < 0) down.push(symbols[i] + (e !== -1 ? `^${-e}` : ''));
  });
  return (up.length ? up.join('*') : '1') + (down.length ? '/' + down.join('/') : '');
}

/** Words for a dimension in messages: "a length (m)", "a field (V/m)". */
export function describeDim(dim: Dim): string {
  const known = NAMED.find((n) => sameDim(n.dim, dim));
  if (known) return known.unit ? `${known.name} (${known.unit})` : known.name;
  return `a quantity in ${siUnitOf(dim)}`;
}

/** Levenshtein distance, for did-you-mean suggestions. */
export function editDistance(a: string, b: string): number {
  if (a === b) return 0;
  if (Math.abs(a.length - b.length) > 3) return Math.abs(a.length - b.length);
  let prev = Array.from({ length: b.length + 1 }, (_, j) => j);
  for (let i = 1; i <= a.length; i++) {
    const cur = [i];
    for (let j = 1; j <= b.length; j++) {
      cur[j] = Math.min(prev[j] + 1, cur[j - 1] + 1, prev[j - 1] + (a[i - 1] === b[j - 1] ? 0 : 1));
    }
    prev = cur;
  }
  return prev[b.length];
}

/** The closest candidate within a small edit distance (scaled to the word's length), or null. */
export function closest(word: string, candidates: Iterable<string>): string | null {
  const limit = word.length <= 3 ? 1 : word.length <= 6 ? 2 : 3;
  let best: string | null = null;
  let bestDistance = limit + 1;
  const lower = word.toLowerCase();
  for (const c of candidates) {
    const d = c.toLowerCase() === lower ? 0.5 : editDistance(word, c);
    if (d < bestDistance) {
      best = c;
      bestDistance = d;
    }
  }
  return best;
}
