// Contour levels: potentials spread evenly in asinh(φ/φ0), field strengths log-spaced.

/** The q-quantile (0..1) of the finite values of `values` where `keep(i)` holds; NaN when there are none. */
export function quantile(values: ArrayLike<number>, q: number, keep: (i: number) => boolean = () => true): number {
  const xs: number[] = [];
  for (let i = 0; i < values.length; i++) {
    const v = values[i];
    if (Number.isFinite(v) && keep(i)) xs.push(v);
  }
  if (xs.length === 0) return NaN;
  xs.sort((a, b) => a - b);
  return xs[Math.min(xs.length - 1, Math.max(0, Math.round(q * (xs.length - 1))))];
}

/**
 * The potential range to draw: the electrodes' potentials together with the 1st–99th percentile of
 * the grid outside conductors. Clamping the grid to it keeps a free point charge from spending every
 * level on its own singular peak (common practice for plotting singular fields).
 */
export function potentialRange(
  potential: ArrayLike<number>,
  inside: ArrayLike<number>,
  electrodePotentials: number[],
): [number, number] {
  const outside = (i: number) => inside[i] < 0;
  let lo = quantile(potential, 0.01, outside);
  let hi = quantile(potential, 0.99, outside);
  for (const p of electrodePotentials) {
    if (!Number.isFinite(p)) continue;
    lo = Number.isFinite(lo) ? Math.min(lo, p) : p;
    hi = Number.isFinite(hi) ? Math.max(hi, p) : p;
  }
  if (!Number.isFinite(lo) || !Number.isFinite(hi)) return [0, 0];
  return [lo, hi];
}

/** Rounds to two significant figures, so labels read cleanly. */
function round2(v: number): number {
  return v === 0 ? 0 : Number(v.toPrecision(2));
}

/**
 * `count` potential levels strictly inside (lo, hi), evenly spaced in t = asinh(φ/φ0) with
 * φ0 = max(|lo|, |hi|)/10: nearly linear for small potentials, logarithmic for large ones, so levels do
 * not crowd where the potential climbs steeply (methods.md, "Contours and field lines").
 */
export function potentialLevels(lo: number, hi: number, count = 15): number[] {
  if (!(hi > lo)) return [];
  const phi0 = Math.max(Math.abs(lo), Math.abs(hi)) / 10;
  const t0 = Math.asinh(lo / phi0);
  const t1 = Math.asinh(hi / phi0);
  const out: number[] = [];
  for (let k = 1; k <= count; k++) {
    const v = round2(phi0 * Math.sinh(t0 + ((t1 - t0) * k) / (count + 1)));
    if (v > lo && v < hi && (out.length === 0 || v > out[out.length - 1])) out.push(v);
  }
  return out;
}

/**
 * Log-spaced field levels within [lo, hi] (V/m, lo > 0) on a 1–2–5 ladder, or a finer
 * 1–1.5–2–3–5–7 ladder when the range spans less than two decades.
 */
export function fieldLevels(lo: number, hi: number): number[] {
  if (!(hi > lo) || !(lo > 0)) return [];
  const decades = Math.log10(hi / lo);
  const ladder = decades < 2 ? [1, 1.5, 2, 3, 5, 7] : decades < 5 ? [1, 2, 5] : [1];
  const out: number[] = [];
  for (let e = Math.floor(Math.log10(lo)); e <= Math.ceil(Math.log10(hi)); e++) {
    for (const m of ladder) {
      const v = m * 10 ** e;
      if (v > lo && v < hi) out.push(Number(v.toPrecision(3)));
    }
  }
  return out;
}
