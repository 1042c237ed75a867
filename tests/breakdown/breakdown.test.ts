import { describe, expect, it } from 'vitest';
import {
  breakdownMargins,
  coronaMargin,
  fieldMargin,
  paschenMinimum,
  paschenValidRange,
  paschenVoltage,
  PA_PER_TORR,
  PEEK_COAXIAL,
  peekOnsetField,
} from '../../server/src/engine/breakdown';

describe("Peek's law for corona onset", () => {
  it('gives 30·(1 + 0.301) = 39.03 kV/cm at r = 1 cm, δ = 1 (parallel-wire constants)', () => {
    // Peek, Dielectric Phenomena in High-Voltage Engineering (1929): g = g0·δ·(1 + c/√(δr)).
    expect(peekOnsetField(0.01, 1)).toBeCloseTo(39.03e5, 6);
  });

  it('gives 31·(1 + 0.308) kV/cm at r = 1 cm with the coaxial constants', () => {
    // Peek (1929), coaxial cylinders.
    expect(peekOnsetField(0.01, 1, PEEK_COAXIAL)).toBeCloseTo(31 * 1.308 * 1e5, 6);
  });

  it('rises for thin wires and falls with air density as the formula says', () => {
    // Peek (1929): at r = 1 mm, g = 30·(1 + 0.301/√0.1) kV/cm; at δ = 0.8, r = 1 cm, g = 24·(1 + 0.301/√0.8).
    expect(peekOnsetField(0.001, 1)).toBeCloseTo(30 * (1 + 0.301 / Math.sqrt(0.1)) * 1e5, 4);
    expect(peekOnsetField(0.01, 0.8)).toBeCloseTo(24 * (1 + 0.301 / Math.sqrt(0.8)) * 1e5, 4);
    expect(peekOnsetField(0.001, 1)).toBeGreaterThan(peekOnsetField(0.01, 1));
  });

  it('tends to g0·δ for a large radius, about the 3 kV/mm of air in a uniform field', () => {
    // Peek (1929) limit r → ∞; air breaks down near 3 kV/mm in a uniform field (common practice).
    expect(peekOnsetField(1000, 1) / 3e6).toBeCloseTo(1, 2);
  });

  it('returns NaN for a non-positive radius or density', () => {
    // Outside the formula's domain (common practice: no figure rather than a wrong one).
    expect(peekOnsetField(0)).toBeNaN();
    expect(peekOnsetField(0.01, -1)).toBeNaN();
  });
});

describe("Paschen's law for air (A = 15 /(cm·Torr), B = 365 V/(cm·Torr), γ = 0.01)", () => {
  it('has its minimum where the formula puts it: pd = e·ln(101)/15 ≈ 0.8364 Torr·cm, V ≈ 305.3 V', () => {
    // Setting dV/d(pd) = 0 in V = B·pd/(ln(A·pd) − ln ln(1 + 1/γ)) (Bazelyan and Raizer, Spark Discharge).
    const min = paschenMinimum();
    expect(min.pdTorrCm).toBeCloseTo((Math.E * Math.log(101)) / 15, 12);
    expect(min.pdTorrCm).toBeCloseTo(0.83635, 4);
    expect(min.voltage).toBeCloseTo(305.27, 1);
    // And the voltage there is a minimum of the function itself.
    const at = (pd: number) => paschenVoltage(PA_PER_TORR, pd / 100).voltage;
    expect(at(min.pdTorrCm)).toBeCloseTo(min.voltage, 9);
    expect(at(min.pdTorrCm * 0.9)).toBeGreaterThan(min.voltage);
    expect(at(min.pdTorrCm * 1.1)).toBeGreaterThan(min.voltage);
  });

  it('evaluates the formula at pd = 10 Torr·cm: 3650/(ln 150 − ln ln 101) ≈ 1059 V, inside the fit range', () => {
    // Bazelyan and Raizer, Spark Discharge (formula); E/p fit range 100–800 V/(cm·Torr) (Raizer, from memory).
    const r = paschenVoltage(10 * PA_PER_TORR, 0.01); // 10 Torr, 1 cm
    expect(r.pdTorrCm).toBeCloseTo(10, 12);
    expect(r.voltage).toBeCloseTo(3650 / (Math.log(150) - Math.log(Math.log(101))), 9);
    expect(r.valid).toBe(true);
  });

  it('predicts no breakdown left of the asymptote A·pd = ln(1 + 1/γ)', () => {
    // The denominator vanishes at pd = ln(101)/15 ≈ 0.3077 Torr·cm (Townsend's criterion cannot be met).
    expect(paschenVoltage(0.2 * PA_PER_TORR, 0.01).voltage).toBe(Infinity);
  });

  it('flags centimetre gaps at 1 atm as outside the fit (pd = 760 Torr·cm)', () => {
    // references.md: "a fit, good near its minimum and poor at centimetre gaps at 1 atm".
    const r = paschenVoltage(101325, 0.01);
    expect(r.pdTorrCm).toBeCloseTo(760, 9);
    expect(r.valid).toBe(false);
    const [lo, hi] = paschenValidRange();
    expect(lo).toBeLessThan(1);
    expect(hi).toBeGreaterThan(10);
    expect(hi).toBeLessThan(760);
    // At the ends of the valid range E/p equals the ends of the fit range.
    expect(paschenVoltage(PA_PER_TORR, hi / 100).reducedField).toBeCloseTo(100, 9);
    expect(paschenVoltage(PA_PER_TORR, lo / 100).reducedField).toBeCloseTo(800, 9);
  });
});

describe('field margins', () => {
  it('reports peak/allowed and the unused fraction, flagging an exceeded allowance', () => {
    // Definition (common practice): margin = 1 − peak/allowed.
    const m = fieldMargin(2e6, 3e6)!;
    expect(m.ratio).toBeCloseTo(2 / 3, 15);
    expect(m.margin).toBeCloseTo(1 / 3, 15);
    expect(m.exceeded).toBe(false);
    expect(fieldMargin(4e6, 3e6)!.exceeded).toBe(true);
    expect(fieldMargin(1, 0)).toBeNull();
  });

  it('gives margins against a limit and a medium strength, each optional', () => {
    // Air about 3 kV/mm (common practice); a limit of 1.5 kV/mm.
    const m = breakdownMargins(2e6, 1.5e6, 3e6);
    expect(m.limit!.exceeded).toBe(true);
    expect(m.strength!.margin).toBeCloseTo(1 / 3, 12);
    expect(breakdownMargins(2e6, null, null)).toEqual({ limit: null, strength: null });
  });

  it('gives a corona margin against Peek onset for a round conductor', () => {
    // Peek (1929) at r = 1 cm, δ = 1: 39.03 kV/cm.
    expect(coronaMargin(3.903e6, 0.01)!.ratio).toBeCloseTo(1, 9);
  });
});
