// Which potentials to draw as equipotentials, and the colour of each band between them.
// Levels are spread evenly in asinh(φ/φ0) (methods.md, "Contours"): close to linear for |φ| ≪ φ0,
// logarithmic for |φ| ≫ φ0, so the lines do not crowd around point charges and small conductors.
import type { Result, SliceResult } from '../engine/result';

export interface LevelPlan {
  /** Lowest and highest potential drawn; the grid is clamped to this range before contouring. */
  lo: number;
  hi: number;
  /** The asinh scale φ0, V. */
  phi0: number;
  /** Contour levels, ascending, strictly between lo and hi. */
  levels: number[];
}

/** q-quantile (0..1) of the finite values outside conductors, or NaN when there are none. */
function quantile(slices: readonly SliceResult[], q: number): number {
  const values: number[] = [];
  for (const s of slices) {
    for (let i = 0; i < s.potential.length; i++) {
      const v = s.potential[i];
      if (Number.isFinite(v) && (s.inside?.[i] ?? -1) < 0) values.push(v);
    }
  }
  if (values.length === 0) return NaN;
  values.sort((a, b) => a - b);
  return values[Math.min(values.length - 1, Math.max(0, Math.round(q * (values.length - 1))))];
}

/**
 * Plans levels shared by every slice of a result (so panels compare). The range covers every
 * electrode's potential and 0 (ground and infinity), widened to the 1st and 99th percentiles of the
 * grids so that free charges show without their singular peaks setting the scale.
 */
export function planLevels(result: Result, count = 14): LevelPlan {
  let lo = 0;
  let hi = 0;
  for (const e of result.electrodes) {
    if (Number.isFinite(e.potential)) {
      lo = Math.min(lo, e.potential);
      hi = Math.max(hi, e.potential);
    }
  }
  const p01 = quantile(result.slices, 0.01);
  const p99 = quantile(result.slices, 0.99);
  if (Number.isFinite(p01)) lo = Math.min(lo, p01);
  if (Number.isFinite(p99)) hi = Math.max(hi, p99);
  const extent = Math.max(Math.abs(lo), Math.abs(hi));
  if (!(extent > 0)) return { lo: 0, hi: 0, phi0: 1, levels: [] };
  // φ0 a fifth of the largest potential: mild compression near the conductors, more room far out.
  const phi0 = extent / 5;
  // A level at a conductor's own potential only retraces its surface (and frays along it on a grid): leave it out.
  const potentials = result.electrodes.map((e) => e.potential).filter(Number.isFinite);
  const levels = asinhLevels(lo, hi, phi0, count).filter((v) => potentials.every((p) => Math.abs(v - p) > 1e-3 * extent));
  return { lo, hi, phi0, levels };
}

/** `count` intervals evenly spaced in asinh(φ/φ0) between lo and hi; returns the inner boundaries, rounded to 2 significant digits. */
export function asinhLevels(lo: number, hi: number, phi0: number, count: number): number[] {
  const a = Math.asinh(lo / phi0);
  const b = Math.asinh(hi / phi0);
  const out: number[] = [];
  for (let i = 1; i < count; i++) {
    const v = roundSignificant(phi0 * Math.sinh(a + ((b - a) * i) / count), 2);
    if (v > lo && v < hi && (out.length === 0 || v > out[out.length - 1])) out.push(v);
  }
  return out;
}

export function roundSignificant(x: number, digits: number): number {
  if (x === 0 || !Number.isFinite(x)) return x;
  const p = 10 ** (digits - 1 - Math.floor(Math.log10(Math.abs(x))));
  return Math.round(x * p) / p;
}

// A diverging palette of our own: deep slate through sea-glass to warm paper at 0 V, then sand,
// terracotta and oxblood for positive potentials.
const stops: [number, [number, number, number]][] = [
  [-1, [27, 50, 74]],
  [-0.6, [47, 112, 128]],
  [-0.25, [150, 200, 190]],
  [0, [246, 241, 230]],
  [0.25, [240, 196, 128]],
  [0.6, [205, 106, 70]],
  [1, [110, 30, 50]],
];

/** Colour of a potential: t = asinh(φ/φ0)/asinh(M/φ0) in [−1, 1] mapped through the palette. */
export function potentialColour(phi: number, plan: LevelPlan): string {
  const extent = Math.max(Math.abs(plan.lo), Math.abs(plan.hi)) || 1;
  const t = Math.max(-1, Math.min(1, Math.asinh(phi / plan.phi0) / Math.asinh(extent / plan.phi0)));
  for (let i = 1; i < stops.length; i++) {
    const [t1, c1] = stops[i];
    const [t0, c0] = stops[i - 1];
    if (t <= t1) {
      const f = (t - t0) / (t1 - t0);
      const c = c0.map((x, k) => Math.round(x + (c1[k] - x) * f));
      return `#${c.map((x) => x.toString(16).padStart(2, '0')).join('')}`;
    }
  }
  return '#6e1e32';
}
