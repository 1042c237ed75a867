import { describe, expect, it } from 'vitest';
import {
  CAPACITANCE,
  CHARGE,
  ENERGY,
  FIELD,
  FORCE,
  LENGTH,
  LINE_CHARGE,
  POTENTIAL,
  SURFACE_CHARGE,
  applyUnit,
  dimensionOf,
  evaluateUnit,
  splitUnit,
  suggestUnit,
  unitTable,
} from '../../grammar/units';

const si = (value: number, unit: string) => applyUnit(value, evaluateUnit(unit)!);

describe('unit atoms', () => {
  it('knows the lengths, potentials, charges, capacitances, energies and forces of the language', () => {
    for (const u of ['m', 'cm', 'mm', 'um', 'µm', 'in', 'V', 'mV', 'kV', 'MV', 'C', 'mC', 'uC', 'µC', 'nC', 'pC', 'F', 'uF', 'nF', 'pF', 'J', 'mJ', 'uJ', 'N', 'mN']) {
      expect(unitTable.has(u), u).toBe(true);
    }
  });

  it('converts SI prefixes by exact powers of ten', () => {
    expect(si(150, 'mm')).toBe(0.15);
    expect(si(12, 'kV')).toBe(12000);
    expect(si(5, 'nC')).toBe(5e-9);
    expect(si(3, 'pF')).toBe(3e-12);
    expect(si(2, 'MV')).toBe(2e6);
    expect(si(7, 'µm')).toBe(7e-6);
    expect(si(7, 'um')).toBe(7e-6);
    expect(si(7, 'μm')).toBe(7e-6); // Greek mu (U+03BC) as well as the micro sign (U+00B5)
  });

  it('takes the inch as exactly 0.0254 m (NIST SP 811, the international inch of 1959)', () => {
    expect(si(1, 'in')).toBe(0.0254);
    expect(si(10, 'in')).toBeCloseTo(0.254, 15);
  });
});

describe('compound units', () => {
  it('divides, multiplies and raises atoms', () => {
    expect(si(2.5, 'kV/mm')).toBe(2.5e6);
    expect(si(1, 'C/m^2')).toBe(1);
    expect(si(3, 'kV/cm')).toBe(3e5);
    expect(si(1, 'MV/m')).toBe(1e6);
    expect(si(5, 'nC/m')).toBe(5e-9);
    expect(si(1, 'nC/mm^2')).toBeCloseTo(1e-3, 15);
    expect(si(1, 'mm*kV')).toBe(1);
  });

  it('gives each compound its dimension over (L, V, Q)', () => {
    expect(dimensionOf('mm')).toEqual(LENGTH);
    expect(dimensionOf('kV')).toEqual(POTENTIAL);
    expect(dimensionOf('uC')).toEqual(CHARGE);
    expect(dimensionOf('kV/mm')).toEqual(FIELD);
    expect(dimensionOf('nC/m')).toEqual(LINE_CHARGE);
    expect(dimensionOf('C/m^2')).toEqual(SURFACE_CHARGE);
    // Capacitance Q/V, energy Q·V, force Q·V/L.
    expect(dimensionOf('pF')).toEqual(CAPACITANCE);
    expect(dimensionOf('C/V')).toEqual(CAPACITANCE);
    expect(dimensionOf('mJ')).toEqual(ENERGY);
    expect(dimensionOf('C*V')).toEqual(ENERGY);
    expect(dimensionOf('N')).toEqual(FORCE);
    expect(dimensionOf('J/m')).toEqual(FORCE);
  });

  it('agrees that a farad times a volt is a coulomb and a joule per coulomb a volt', () => {
    expect(si(1, 'F*V')).toBe(1);
    expect(dimensionOf('F*V')).toEqual(CHARGE);
    expect(dimensionOf('J/C')).toEqual(POTENTIAL);
  });

  it('rejects unknown atoms and text that is not unit-shaped', () => {
    expect(evaluateUnit('kv')).toBeNull();
    expect(dimensionOf('furlong')).toBeNull();
    expect(splitUnit('/mm')).toBeNull();
    expect(splitUnit('mm//m')).toBeNull();
  });
});

describe('unit suggestions', () => {
  it('fixes the case of a known unit', () => {
    expect(suggestUnit('kv')).toBe('kV');
    expect(suggestUnit('MM')).toBe('mm');
    expect(suggestUnit('KV/MM')).toBe('kV/mm');
    expect(suggestUnit('nc/m')).toBe('nC/m');
  });

  it('offers nothing for a word far from every unit', () => {
    expect(suggestUnit('banana')).toBeNull();
  });
});
