// The geometry codes through the whole grammar (text → Scene → checks), each on its exact range,
// marked ⟦ ⟧ in the scene text; and each registry example triggers its own code.
import { describe, expect, it } from 'vitest';
import { DIAGNOSTIC_CODES, analyzeText } from '../../grammar/index';
import { checkDiagnostic } from '../grammar/check';

const cases: [string, string][] = [
  ['VS301', 'electrode ⟦hoop⟧ torus center (0, 0, 0) axis z major 5 mm minor 8 mm floating'],
  ['VS302', 'electrode a sphere center (0, 0, 0) radius 1 mm floating\n⟦charge q line from (0, 0, 5) mm to (0, 0, 5) mm density 1 nC/m⟧'],
  ['VS303', 'electrode a sphere center (0, 0, 0) radius 10 mm potential 1 kV\nelectrode ⟦b⟧ box center (15, 0, 0) mm size (10, 10, 10) mm potential 0 V'],
  ['VS304', 'electrode a sphere center (0, 0, 0) radius 10 mm potential 1 kV\nelectrode ⟦b⟧ sphere center (20, 0, 0) mm radius 10 mm potential 1 kV'],
  ['VS305', 'electrode a cylinder from (0, 0, -10) mm to (0, 0, 10) mm radius 5 mm floating\n⟦charge q ring center (0, 0, 0) axis x radius 8 mm density 1 nC/m⟧'],
  ['VS306', 'electrode ⟦a⟧ disc center (0, 0, 5) mm normal x radius 10 mm potential 1 kV\nground plane at z = 0'],
  ['VS307', 'electrode a sphere center (0, 0, 50) mm radius 10 mm potential 1 kV\nground plane at z = 0\n⟦ground plane at x = -1 m⟧'],
  ['VS308', 'electrode a sphere center (0, 0, 0) radius 10 mm potential 1 kV\n⟦slice xy at z = 1 m from (-1, -1) m to (1, 1) m⟧'],
  ['VS309', 'electrode a sphere center (0, 0, 0) radius 10 mm potential 1 kV\n⟦probe p point at (0, 0, 1) m⟧'],
  ['VS310', 'electrode a sphere center (0, 0, 0) radius 10 mm potential 1 kV\n⟦probe p point at (0, 0, 2) mm⟧'],
  ['VS311', 'electrode a sphere center (0, 0, 50) mm radius 10 mm potential 1 kV\nground plane at z = 0\n⟦charge q point at (5, 5, 0) mm value 1 nC⟧'],
];

describe('geometry codes through the grammar', () => {
  it.each(cases)('%s on its range', (code, text) => {
    const d = checkDiagnostic(text, code);
    expect(d.severity).toBe(DIAGNOSTIC_CODES[code].severity);
  });

  it('covers every VS3xx code of the registry', () => {
    const registered = Object.keys(DIAGNOSTIC_CODES).filter((c) => /^VS3/.test(c));
    expect(cases.map((c) => c[0]).sort()).toEqual(registered.sort());
  });

  it("triggers each code with the registry's own example", () => {
    for (const [code, info] of Object.entries(DIAGNOSTIC_CODES)) {
      if (!/^VS3/.test(code)) continue;
      expect(analyzeText(info.example).diagnostics.map((d) => d.code), `${code}: ${info.example}`).toContain(code);
    }
  });

  it('finds the beam of the design example running through its shield cylinder', () => {
    // The language reference's example: a beam along y = z = 0 from x = −200 to 200 mm passes the
    // shield's axis at x = −150 mm (radius 12 mm), so it runs inside the shield.
    const text = [
      'electrode shield cylinder from (-150, 0, -90) mm to (-150, 0, 90) mm radius 12 mm floating',
      'charge beam line from (-200, 0, 0) mm to (200, 0, 0) mm density -0.2 nC/m',
    ].join('\n');
    expect(analyzeText(text).diagnostics.map((d) => d.code)).toEqual(['VS305']);
    expect(analyzeText(text.replace('(-200, 0, 0) mm to (200, 0, 0)', '(-200, 15, 0) mm to (200, 15, 0)')).diagnostics).toEqual([]);
  });
});
