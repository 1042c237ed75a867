// The shared quantity formatter: the unit suits the magnitude, digits are significant, signs are typographic.
import { describe, expect, it } from 'vitest';
import { chooseUnit, formatNumber, formatPoint, formatQuantity, formatRelative } from '../../server/src/format/quantity';

describe('formatQuantity', () => {
  it('shows capacitance in pF below a nanofarad and in nF above', () => {
    // 4πε0·0.1 m = 11.1265 pF (isolated sphere, references.md "Closed forms").
    expect(formatQuantity(1.11265e-11, 'capacitance')).toBe('11.13 pF');
    expect(formatQuantity(2.2e-9, 'capacitance')).toBe('2.2 nF');
    expect(formatQuantity(4.7e-15, 'capacitance')).toBe('4.7 fF');
  });

  it('shows fields in kV/mm from 0.1 kV/mm up and in V/m or kV/m below', () => {
    expect(formatQuantity(3e6, 'field')).toBe('3 kV/mm');
    expect(formatQuantity(1.5e5, 'field')).toBe('0.15 kV/mm');
    expect(formatQuantity(4.2e4, 'field')).toBe('42 kV/m');
    expect(formatQuantity(12.5, 'field')).toBe('12.5 V/m');
  });

  it('shows lengths in mm below a metre and in m above', () => {
    expect(formatQuantity(0.04, 'length')).toBe('40 mm');
    expect(formatQuantity(2.5, 'length')).toBe('2.5 m');
    expect(formatQuantity(25e-6, 'length')).toBe('25 µm');
  });

  it('shows energy in µJ, mJ or J by magnitude', () => {
    expect(formatQuantity(5.007e-3, 'energy')).toBe('5.007 mJ');
    expect(formatQuantity(3.2e-6, 'energy')).toBe('3.2 µJ');
    expect(formatQuantity(12, 'energy')).toBe('12 J');
  });

  it('shows potentials with a true minus sign and in kV from a kilovolt', () => {
    expect(formatQuantity(-4000, 'potential')).toBe('−4 kV');
    expect(formatQuantity(999, 'potential')).toBe('999 V');
    expect(formatQuantity(0, 'potential')).toBe('0 V');
  });

  it('moves to the next unit when rounding would print 1000 of the smaller one', () => {
    expect(formatQuantity(0.99999, 'length')).toBe('1 m');
  });

  it('honours a forced unit and a digit count', () => {
    const pF = chooseUnit('capacitance', 1e-12);
    expect(formatQuantity(2.2e-9, 'capacitance', { unit: pF })).toBe('2200 pF');
    expect(formatQuantity(1 / 3, 'potential', { digits: 2 })).toBe('330 mV');
  });

  it('prints per-metre kinds with their own units', () => {
    expect(formatQuantity(5e-9, 'lineCharge')).toBe('5 nC/m');
    expect(formatQuantity(2.4e-11, 'capacitancePerLength')).toBe('24 pF/m');
  });

  it('says n/a for NaN and ∞ for infinity instead of a unit', () => {
    expect(formatQuantity(NaN, 'field')).toBe('n/a');
    expect(formatQuantity(Infinity, 'field')).toBe('∞');
  });
});

describe('formatNumber', () => {
  it('keeps the requested significant digits and trims trailing zeros', () => {
    expect(formatNumber(111.26, 4)).toBe('111.3');
    expect(formatNumber(2.5, 4)).toBe('2.5');
    expect(formatNumber(0.0012345, 3)).toBe('0.00123');
  });
  it('falls back to an exponent for very small or very large numbers', () => {
    expect(formatNumber(1.5e-7, 3)).toBe('1.5e-7');
    expect(formatNumber(-2.25e9, 3)).toBe('−2.25e9');
  });
});

describe('formatPoint and formatRelative', () => {
  it('prints a point in one unit chosen by its largest component', () => {
    expect(formatPoint([0.0125, 0, -0.03])).toBe('(12.5, 0, −30) mm');
    expect(formatPoint([1.2, 0.5])).toBe('(1.2, 0.5) m');
  });
  it('treats components far below the largest as zero', () => {
    expect(formatPoint([0.1, 1e-15, 0])).toBe('(100, 0, 0) mm');
  });
  it('prints relative errors as percentages', () => {
    expect(formatRelative(0.0033)).toBe('±0.33%');
    expect(formatRelative(null)).toBe('n/a');
    expect(formatRelative(1e-6)).toBe('<0.01%');
  });
});
