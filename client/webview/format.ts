// Number formatting with engineering units for the preview's labels, legend and readout.

/** SI prefixes from giga to femto, largest first. */
export const prefixes: [number, string][] = [
  [1e9, 'G'],
  [1e6, 'M'],
  [1e3, 'k'],
  [1, ''],
  [1e-3, 'm'],
  [1e-6, 'µ'],
  [1e-9, 'n'],
  [1e-12, 'p'],
  [1e-15, 'f'],
];

/** `value` with `digits` significant figures, without trailing zeros ("1.5", "-20", "0.003"). */
export function significant(value: number, digits = 3): string {
  if (!Number.isFinite(value)) return '—';
  if (value === 0) return '0';
  const s = Number(value.toPrecision(digits));
  return String(s).replace('-', '−');
}

/** A value with an SI prefix chosen so the mantissa is in [1, 1000): engineering(1234, 'V') = "1.23 kV". */
export function engineering(value: number, unit: string, digits = 3): string {
  if (!Number.isFinite(value)) return '—';
  const a = Math.abs(value);
  if (a === 0) return `0 ${unit}`;
  for (const [scale, prefix] of prefixes) {
    if (a >= scale * 0.9995) return `${significant(value / scale, digits)} ${prefix}${unit}`;
  }
  const [scale, prefix] = prefixes[prefixes.length - 1];
  return `${significant(value / scale, digits)} ${prefix}${unit}`;
}

export const formatPotential = (volts: number, digits = 3): string => engineering(volts, 'V', digits);

/** Field strength in the units high-voltage work reads them in: kV/mm down to 0.1 kV/mm, then V/mm, then V/m. */
export function formatField(voltsPerMetre: number, digits = 3): string {
  const a = Math.abs(voltsPerMetre);
  if (!Number.isFinite(a)) return '—';
  if (a >= 1e5) return `${significant(voltsPerMetre / 1e6, digits)} kV/mm`;
  if (a >= 1e2) return `${significant(voltsPerMetre / 1e3, digits)} V/mm`;
  return `${significant(voltsPerMetre, digits)} V/m`;
}

/** A length in millimetres below 10 m, else in metres. */
export function formatLength(metres: number, digits = 4): string {
  if (!Number.isFinite(metres)) return '—';
  if (Math.abs(metres) < 10) return `${significant(metres * 1e3, digits)} mm`;
  return `${significant(metres, digits)} m`;
}

/** Unit and scale for axis ticks over a span of `span` metres. */
export function lengthAxisUnit(span: number): { unit: string; scale: number } {
  return span < 10 ? { unit: 'mm', scale: 1e3 } : { unit: 'm', scale: 1 };
}
