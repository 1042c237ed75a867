// Breakdown checks as pure functions: Peek's corona-onset gradient for smooth round conductors,
// Paschen's sparking voltage for a uniform gap, and field margins against a limit or a medium's
// strength. SI in and out (V, m, Pa, V/m); the classical formulas' own units (cm, Torr) stay inside.
// These are design aids only: the figures defer to applicable standards, local codes, testing and
// licensed practice.

/** The caution every figure of this module carries when shown to a user. */
export const BREAKDOWN_CAUTION =
  'Breakdown and corona estimates are rough design aids; follow applicable standards, local codes, testing and licensed practice.';

/** Pascals per torr (1 Torr = 101325/760 Pa, by definition). */
export const PA_PER_TORR = 101325 / 760;

// ---- Peek's law ----

export interface PeekConstants {
  /** g0, peak gradient in kV/cm at δ = 1 for a large radius. */
  g0KvPerCm: number;
  /** c in cm^½. */
  cSqrtCm: number;
}

/**
 * Peek's constants (F. W. Peek, Dielectric Phenomena in High-Voltage Engineering, 1929), peak values:
 * parallel wires g0 = 30 kV/cm, c = 0.301 cm^½; coaxial cylinders g0 = 31 kV/cm, c = 0.308 cm^½
 * (within the ranges references.md gives; which pair goes with which case is from memory).
 * The default is the parallel-wire set: electrodes in open air face other conductors at a distance,
 * which is that case, and its g0 is the lower, so the check errs on the safe side.
 */
export const PEEK_PARALLEL_WIRES: PeekConstants = { g0KvPerCm: 30, cSqrtCm: 0.301 };
export const PEEK_COAXIAL: PeekConstants = { g0KvPerCm: 31, cSqrtCm: 0.308 };

/**
 * Peek's law, corona-onset surface gradient of a smooth round conductor of radius r in air of relative
 * density δ (1 at 20 °C and 101.325 kPa): g = g0·δ·(1 + c/√(δ·r)), r in cm, g in kV/cm (peak)
 * (Peek, 1929). An optional surface factor m ≤ 1 (1 for a polished surface; Peek's irregularity
 * factor) scales the result. Returns V/m (peak); NaN for a non-positive radius or density.
 */
export function peekOnsetField(radius: number, density = 1, constants: PeekConstants = PEEK_PARALLEL_WIRES, surfaceFactor = 1): number {
  if (!(radius > 0) || !(density > 0) || !(surfaceFactor > 0)) return NaN;
  const rCm = radius * 100;
  const gKvPerCm = surfaceFactor * constants.g0KvPerCm * density * (1 + constants.cSqrtCm / Math.sqrt(density * rCm));
  return gKvPerCm * 1e5; // kV/cm → V/m
}

// ---- Paschen's law ----

export interface PaschenGas {
  /** A in 1/(cm·Torr). */
  a: number;
  /** B in V/(cm·Torr). */
  b: number;
  /** Secondary-emission coefficient γ. */
  gamma: number;
  /** Range of reduced field E/p, V/(cm·Torr), over which A and B were fitted. */
  fitRange: [number, number];
}

/**
 * Air: A = 15 /(cm·Torr), B = 365 V/(cm·Torr), γ ≈ 0.01 (Bazelyan and Raizer, Spark Discharge; the
 * constants of Townsend's first coefficient α/p = A·exp(−B·p/E)). The fit holds for
 * E/p ≈ 100–800 V/(cm·Torr) (Raizer, Gas Discharge Physics, table 4.1 — from memory).
 */
export const PASCHEN_AIR: PaschenGas = { a: 15, b: 365, gamma: 0.01, fitRange: [100, 800] };

export interface PaschenEstimate {
  /** Sparking voltage, V; Infinity where the formula predicts no breakdown (left of its asymptote). */
  voltage: number;
  /** The product p·d in Torr·cm. */
  pdTorrCm: number;
  /** Reduced field at breakdown E/p = V/(p·d), V/(cm·Torr). */
  reducedField: number;
  /** Whether E/p lies inside the range the constants were fitted over. */
  valid: boolean;
}

/**
 * Paschen's law for a uniform gap d at pressure p:
 *   V = B·pd / (ln(A·pd) − ln(ln(1 + 1/γ)))   (Bazelyan and Raizer, Spark Discharge),
 * from Townsend's criterion γ·(e^{αd} − 1) = 1 with α = A·p·exp(−B·p/E). pressure in Pa, gap in m.
 * Its minimum lies at A·pd = e·ln(1 + 1/γ) with V_min = B·pd_min. At 1 atm and centimetre gaps
 * (pd of hundreds of Torr·cm) it is outside its fit and reads high or low; `valid` says so.
 */
export function paschenVoltage(pressure: number, gap: number, gas: PaschenGas = PASCHEN_AIR): PaschenEstimate {
  const pd = (pressure / PA_PER_TORR) * (gap * 100);
  const denominator = Math.log(gas.a * pd) - Math.log(Math.log(1 + 1 / gas.gamma));
  if (!(pd > 0) || !(denominator > 0)) return { voltage: Infinity, pdTorrCm: pd, reducedField: NaN, valid: false };
  const voltage = (gas.b * pd) / denominator;
  const reducedField = voltage / pd;
  return { voltage, pdTorrCm: pd, reducedField, valid: reducedField >= gas.fitRange[0] && reducedField <= gas.fitRange[1] };
}

/** Location and value of the Paschen minimum implied by the formula: pd in Torr·cm, V in volts. */
export function paschenMinimum(gas: PaschenGas = PASCHEN_AIR): { pdTorrCm: number; voltage: number } {
  const pd = (Math.E * Math.log(1 + 1 / gas.gamma)) / gas.a;
  return { pdTorrCm: pd, voltage: gas.b * pd };
}

/** The p·d range (Torr·cm) over which the formula's reduced field stays inside the gas's fit range. */
export function paschenValidRange(gas: PaschenGas = PASCHEN_AIR): [number, number] {
  // E/p = B/(ln(A·pd) − C) with C = ln(ln(1 + 1/γ)): solve for pd at each end of the fit range.
  const c = Math.log(Math.log(1 + 1 / gas.gamma));
  const pdAt = (reducedField: number) => Math.exp(gas.b / reducedField + c) / gas.a;
  return [pdAt(gas.fitRange[1]), pdAt(gas.fitRange[0])];
}

// ---- margins ----

export interface FieldMargin {
  /** peak / allowed. */
  ratio: number;
  /** 1 − peak/allowed: the fraction of the allowed field still unused (negative when exceeded). */
  margin: number;
  exceeded: boolean;
}

/** Margin of a peak field against an allowed field (a `limit`, a medium's strength or a Peek onset). */
export function fieldMargin(peak: number, allowed: number): FieldMargin | null {
  if (!(allowed > 0) || !Number.isFinite(peak)) return null;
  const ratio = Math.abs(peak) / allowed;
  return { ratio, margin: 1 - ratio, exceeded: ratio > 1 };
}

/** Margins of a peak field against the scene's limit and the medium's strength (either may be absent). */
export function breakdownMargins(peak: number, limit: number | null, strength: number | null): { limit: FieldMargin | null; strength: FieldMargin | null } {
  return {
    limit: limit === null ? null : fieldMargin(peak, limit),
    strength: strength === null ? null : fieldMargin(peak, strength),
  };
}

/** Margin of a smooth round conductor's peak surface field against Peek's corona onset. */
export function coronaMargin(peak: number, radius: number, density = 1, constants: PeekConstants = PEEK_PARALLEL_WIRES): FieldMargin | null {
  return fieldMargin(peak, peekOnsetField(radius, density, constants));
}
