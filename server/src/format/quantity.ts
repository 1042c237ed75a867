// Quantities for people: an SI value shown in the unit that suits its magnitude
// (pF or nF, kV/mm or V/m, mm or m, µJ or J). Shared by the CLI report, the SVG legends and
// the language server's hover, so a figure reads the same everywhere.
// Values come in SI (metres, volts, coulombs, farads, joules, V/m); nothing here converts back.

export type QuantityKind =
  | 'length'
  | 'potential'
  | 'charge'
  | 'lineCharge' // C/m
  | 'surfaceCharge' // C/m²
  | 'capacitance'
  | 'capacitancePerLength' // F/m
  | 'field' // V/m
  | 'energy'
  | 'energyPerLength' // J/m
  | 'force'
  | 'time'; // seconds

export interface Unit {
  /** The symbol printed after the number. */
  symbol: string;
  /** SI value of one of this unit. */
  scale: number;
  /** Smallest magnitude (SI) shown in this unit; the largest unit whose `from` is not above the magnitude wins. */
  from: number;
}

const prefixScale: Record<string, number> = {
  a: 1e-18, f: 1e-15, p: 1e-12, n: 1e-9, µ: 1e-6, m: 1e-3, '': 1, k: 1e3, M: 1e6, G: 1e9,
};

// Unit ladders, smallest first. `from` is usually the unit's own scale, except for fields, where
// high-voltage practice reads kV/mm from 0.1 kV/mm up (common practice).
const ladders: Record<QuantityKind, Unit[]> = {
  length: [
    { symbol: 'nm', scale: 1e-9, from: 0 },
    { symbol: 'µm', scale: 1e-6, from: 1e-6 },
    { symbol: 'mm', scale: 1e-3, from: 1e-3 },
    { symbol: 'm', scale: 1, from: 1 },
    { symbol: 'km', scale: 1e3, from: 1e4 },
  ],
  potential: [
    { symbol: 'µV', scale: 1e-6, from: 0 },
    { symbol: 'mV', scale: 1e-3, from: 1e-3 },
    { symbol: 'V', scale: 1, from: 1 },
    { symbol: 'kV', scale: 1e3, from: 1e3 },
    { symbol: 'MV', scale: 1e6, from: 1e6 },
  ],
  charge: ladder('C', ['f', 'p', 'n', 'µ', 'm', '']),
  lineCharge: ladder('C/m', ['f', 'p', 'n', 'µ', 'm', '']),
  surfaceCharge: ladder('C/m²', ['p', 'n', 'µ', 'm', '']),
  capacitance: ladder('F', ['a', 'f', 'p', 'n', 'µ', 'm', '']),
  capacitancePerLength: ladder('F/m', ['f', 'p', 'n', 'µ', '']),
  field: [
    { symbol: 'V/m', scale: 1, from: 0 },
    { symbol: 'kV/m', scale: 1e3, from: 1e3 },
    { symbol: 'kV/mm', scale: 1e6, from: 1e5 },
    { symbol: 'MV/mm', scale: 1e9, from: 1e9 },
  ],
  energy: ladder('J', ['p', 'n', 'µ', 'm', '', 'k', 'M']),
  energyPerLength: ladder('J/m', ['p', 'n', 'µ', 'm', '', 'k']),
  force: ladder('N', ['p', 'n', 'µ', 'm', '', 'k']),
  time: [
    { symbol: 'µs', scale: 1e-6, from: 0 },
    { symbol: 'ms', scale: 1e-3, from: 1e-3 },
    { symbol: 's', scale: 1, from: 1 },
  ],
};

function ladder(base: string, prefixes: string[]): Unit[] {
  return prefixes.map((p, i) => ({ symbol: p + base, scale: prefixScale[p], from: i === 0 ? 0 : prefixScale[p] }));
}

/** The unit that suits a magnitude (SI) of a kind. Zero and non-finite values take the SI base unit. */
export function chooseUnit(kind: QuantityKind, magnitude: number): Unit {
  const units = ladders[kind];
  const m = Math.abs(magnitude);
  if (!Number.isFinite(m) || m === 0) return units.find((u) => u.scale === 1) ?? units[0];
  // Rounding to the shown digits can carry a value into the next unit (999.96 mm -> 1000 mm): compare with a small margin.
  let chosen = units[0];
  for (const u of units) if (m >= u.from * (1 - 5e-5)) chosen = u;
  return chosen;
}

export interface FormatOptions {
  /** Significant digits, default 4. */
  digits?: number;
  /** Force a unit (one of the kind's symbols), e.g. to print a column in one unit. */
  unit?: Unit;
}

/** A number with `digits` significant digits, without exponent where sensible, without trailing zeros after rounding. */
export function formatNumber(x: number, digits = 4): string {
  if (Number.isNaN(x)) return 'n/a';
  if (!Number.isFinite(x)) return x > 0 ? '∞' : '−∞';
  if (x === 0) return '0';
  const rounded = Number(x.toPrecision(digits));
  const a = Math.abs(rounded);
  let s: string;
  if (a >= 1e-3 && a < 10 ** Math.max(digits, 6)) {
    const decimals = Math.max(0, digits - 1 - Math.floor(Math.log10(a)));
    s = rounded.toFixed(Math.min(decimals, 20));
    // toFixed may round up into one more digit; that is fine. Trim zeros only after a decimal point.
    if (s.includes('.')) s = s.replace(/0+$/, '').replace(/\.$/, '');
  } else {
    s = x.toExponential(digits - 1).replace(/\.?0+e/, 'e').replace('e+', 'e');
  }
  return s.replace(/^-/, '−');
}

/** `value` (SI) in the unit that suits it, e.g. formatQuantity(1.113e-10, 'capacitance') === "111.3 pF". */
export function formatQuantity(value: number, kind: QuantityKind, options: FormatOptions = {}): string {
  if (!Number.isFinite(value)) return formatNumber(value);
  const unit = options.unit ?? chooseUnit(kind, value);
  return `${formatNumber(value / unit.scale, options.digits ?? 4)} ${unit.symbol}`;
}

/** A point (SI, metres) with all components in one length unit chosen by the largest: "(12.5, 0, −30) mm". */
export function formatPoint(point: readonly number[], options: FormatOptions = {}): string {
  const largest = point.reduce((m, c) => Math.max(m, Math.abs(c)), 0);
  const unit = options.unit ?? chooseUnit('length', largest);
  const digits = options.digits ?? 4;
  // Components much smaller than the largest are rounding noise of the solver's coordinates: show them as 0.
  const parts = point.map((c) => (Math.abs(c) < largest * 1e-9 ? '0' : formatNumber(c / unit.scale, digits)));
  return `(${parts.join(', ')}) ${unit.symbol}`;
}

/** A relative error as a percentage with a ± sign, "±0.12%", or "n/a" when unknown. */
export function formatRelative(relativeError: number | null | undefined): string {
  if (relativeError === null || relativeError === undefined || !Number.isFinite(relativeError)) return 'n/a';
  const pct = Math.abs(relativeError) * 100;
  if (pct === 0) return '±0%';
  if (pct < 0.01) return '<0.01%';
  return `±${formatNumber(pct, 2)}%`;
}
