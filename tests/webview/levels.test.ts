// Contour levels and number formatting of the preview (pure functions).
import { describe, expect, it } from 'vitest';
import { fieldLevels, potentialLevels, potentialRange } from '../../client/webview/levels';
import { formatField, formatPotential, engineering } from '../../client/webview/format';

describe('potentialLevels', () => {
  it('spreads levels evenly in asinh(φ/φ0), φ0 = max|φ|/10, within two significant figures', () => {
    const levels = potentialLevels(-10e3, 10e3, 15);
    expect(levels.length).toBe(15);
    const phi0 = 1e3;
    const t = levels.map((v) => Math.asinh(v / phi0));
    const step = (Math.asinh(10) * 2) / 16;
    for (let k = 0; k < t.length; k++) {
      // Rounding to two significant figures moves a level by at most 5 % of itself.
      expect(Math.abs(t[k] - (-Math.asinh(10) + step * (k + 1)))).toBeLessThan(0.06);
    }
  });

  it('puts more levels near zero than near the extreme when the range is wide', () => {
    const levels = potentialLevels(0, 100e3, 10);
    const below10 = levels.filter((v) => v < 10e3).length;
    const above90 = levels.filter((v) => v > 90e3).length;
    expect(below10).toBeGreaterThan(above90 + 2);
  });

  it('returns strictly increasing levels strictly inside the range, and none for an empty range', () => {
    const levels = potentialLevels(-2e3, 7.3e3);
    for (let k = 1; k < levels.length; k++) expect(levels[k]).toBeGreaterThan(levels[k - 1]);
    expect(levels[0]).toBeGreaterThan(-2e3);
    expect(levels[levels.length - 1]).toBeLessThan(7.3e3);
    expect(potentialLevels(5, 5)).toEqual([]);
  });
});

describe('potentialRange', () => {
  it('clamps a singular spike (a point charge) to the 99th percentile but keeps the electrode potentials', () => {
    const n = 1000;
    const potential = new Float64Array(n).map((_, i) => (i / n) * 100);
    potential[500] = 1e9; // a cell next to a point charge
    const inside = new Int16Array(n).fill(-1);
    const [lo, hi] = potentialRange(potential, inside, [-50, 120]);
    expect(lo).toBe(-50);
    expect(hi).toBe(120);
  });
});

describe('fieldLevels', () => {
  it('is log-spaced on a 1-2-5 ladder over several decades', () => {
    expect(fieldLevels(1.5e3, 3e6)).toEqual([2e3, 5e3, 1e4, 2e4, 5e4, 1e5, 2e5, 5e5, 1e6, 2e6]);
  });
  it('uses a finer ladder for a narrow range', () => {
    expect(fieldLevels(90e3, 1.1e6)).toEqual([1e5, 1.5e5, 2e5, 3e5, 5e5, 7e5, 1e6]);
  });
});

describe('formatting', () => {
  it('writes potentials and fields in the units of high-voltage work', () => {
    expect(formatPotential(-12500)).toBe('−12.5 kV');
    expect(formatPotential(0.5)).toBe('500 mV');
    expect(formatField(3e6)).toBe('3 kV/mm');
    expect(formatField(4.2e4)).toBe('42 V/mm');
    expect(engineering(5.53e-12, 'F')).toBe('5.53 pF');
  });
});
