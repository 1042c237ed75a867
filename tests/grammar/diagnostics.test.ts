import { describe, expect, it } from 'vitest';
import { DIAGNOSTIC_CODES, analyzeText } from '../../grammar/index';
import { checkDiagnostic } from './check';

// Each case: the code, and a scene with ⟦ ⟧ around the exact range the diagnostic must cover.
const cases: [string, string][] = [
  ['VS101', 'let a = 5 mm ⟦$⟧'],
  ['VS102', 'scene ⟦"Bench⟧'],
  ['VS103', 'let gap ⟦40⟧ mm'],
  ['VS104', '⟦electrod⟧ a sphere center (0, 0, 0) mm radius 5 mm potential 1 kV'],
  ['VS105', 'limit field 3 kV/mm ⟦7⟧'],
  ['VS106', 'scene "a⟦\\t⟧b"'],
  ['VS201', 'let drive = 12 ⟦kv⟧'],
  ['VS202', 'electrode a sphere center (0, 0, 0) radius ⟦5 kV⟧ potential 1 kV'],
  ['VS203', 'electrode a sphere center (0, 0, 0) radius ⟦5⟧ potential 1 kV'],
  ['VS204', 'let a = 5 mm ⟦+⟧ 2 kV'],
  ['VS205', 'electrode near sphere center (0, 0, 0) radius 5 mm floating\nelectrode far sphere center ⟦(0, 0, 5) km⟧ radius 5 mm floating'],
  ['VS206', 'let gap = 1 mm\nlet a = ⟦gapp⟧ / 2'],
  ['VS207', 'let a = ⟦b⟧ * 2\nlet b = 5 mm'],
  ['VS208', 'let a = 1 mm\nelectrode ⟦a⟧ sphere center (0, 0, 0) radius 5 mm floating'],
  ['VS209', 'electrode ⟦a⟧ sphere center (0, 0, 0) radius 5 mm'],
  ['VS210', 'electrode a sphere center (0, 0, 0) radius 5 mm potential 1 kV ⟦floating⟧'],
  ['VS211', 'electrode a ⟦sphere⟧ center (0, 0, 0) potential 1 kV'],
  ['VS212', 'electrode a disc center (0, 0, 0) normal z radius 5 mm ⟦hollow⟧ potential 1 kV'],
  ['VS213', 'electrode a ⟦spher⟧ center (0, 0, 0) radius 5 mm floating'],
  ['VS214', 'space planar\nelectrode a ⟦sphere⟧ center (0, 0) radius 5 mm floating'],
  ['VS215', 'electrode a sphere center (0, 0, 0) radius 5 mm ⟦radius⟧ 6 mm floating'],
  ['VS216', 'electrode a sphere center ⟦5 mm⟧ radius 5 mm floating'],
  ['VS217', 'slice xz at y = 0 from (-1, -1) m to (1, 1) m cells ⟦2.5⟧'],
  ['VS218', 'space 3d\n⟦space⟧ planar'],
  ['VS219', 'space axisymmetric\nelectrode a sphere center ⟦(5, 0) mm⟧ radius 2 mm floating'],
  ['VS220', 'electrode a sphere center (0, 0, 0) ⟦radius⟧ potential 1 kV'],
  ['VS221', 'slice xz at ⟦x⟧ = 0 from (-1, -1) m to (1, 1) m'],
  ['VS222', 'space planar\nelectrode a ⟦polygon⟧ (0, 0) mm (1, 0) mm floating'],
  ['VS223', 'space axisymmetric\nelectrode a revolve (5, 0) mm (5, 10) mm ⟦hollow⟧ floating'],
  ['VS224', 'medium permittivity ⟦0⟧'],
  ['VS225', 'let a = ⟦1 mm / 0⟧'],
  ['VS226', 'let a = ⟦sqrt(2 mm)⟧'],
  ['VS227', 'let drive = 3 kV\n⟦sweep⟧ drive from 1 kV to 5 kV steps 5'],
];

describe('every syntax and meaning code has a tested range', () => {
  it.each(cases)('%s on its offending token', (code, text) => {
    const d = checkDiagnostic(text, code);
    expect(d.severity).toBe(DIAGNOSTIC_CODES[code].severity);
    expect(d.message.length).toBeGreaterThan(10);
  });

  it('covers every VS1xx and VS2xx code of the registry', () => {
    const registered = Object.keys(DIAGNOSTIC_CODES).filter((c) => /^VS[12]/.test(c));
    expect(cases.map((c) => c[0]).sort()).toEqual(registered.sort());
  });

  it("triggers each code with the registry's own example", () => {
    for (const [code, info] of Object.entries(DIAGNOSTIC_CODES)) {
      if (!/^VS[12]/.test(code)) continue;
      expect(analyzeText(info.example).diagnostics.map((d) => d.code), `${code}: ${info.example}`).toContain(code);
    }
  });
});

describe('suggestion data for quick fixes', () => {
  it('offers the corrected unit', () => {
    expect(checkDiagnostic('let v = 12 ⟦kv⟧', 'VS201').data).toEqual({ replacement: 'kV' });
    expect(checkDiagnostic('let d = 3 ⟦MM⟧', 'VS201').data).toEqual({ replacement: 'mm' });
  });

  it('offers the unit used most in the file for a number without one', () => {
    const d = checkDiagnostic('let a = 1 cm\nlet b = 2 cm\nelectrode e sphere center (0, 0, 0) radius ⟦3⟧ floating', 'VS203');
    expect(d.data).toEqual({ unit: 'cm' });
  });

  it('offers the nearest name, shape, attribute and statement', () => {
    expect(checkDiagnostic('let gap = 1 mm\nlet a = ⟦gapp⟧', 'VS206').data).toEqual({ replacement: 'gap' });
    expect(checkDiagnostic('electrode a ⟦cilinder⟧ floating', 'VS213').data).toEqual({ replacement: 'cylinder' });
    expect(checkDiagnostic('electrode a sphere center (0, 0, 0) ⟦radus⟧ 5 mm floating', 'VS213').data).toEqual({ replacement: 'radius' });
    expect(checkDiagnostic('⟦electrod⟧ a sphere', 'VS104').data).toEqual({ replacement: 'electrode' });
  });

  it('says when a name belongs to an electrode rather than a let', () => {
    const d = checkDiagnostic('electrode top sphere center (0, 0, 0) radius 1 mm potential 1 kV\nlet v = ⟦top⟧ * 2', 'VS206');
    expect(d.message).toContain('an electrode, not a let');
  });

  it('lists every missing attribute', () => {
    expect(checkDiagnostic('electrode a ⟦torus⟧ center (0, 0, 0) floating', 'VS211').data).toEqual({ missing: ['axis', 'major', 'minor'] });
  });
});

describe('attributes and statements that do not belong', () => {
  it('rejects a ring charge in planar space', () => {
    checkDiagnostic('space planar\ncharge r ⟦ring⟧ at (0, 0) density 1 nC/m', 'VS214');
  });

  it('rejects a ground plane in axisymmetric space', () => {
    checkDiagnostic('space axisymmetric\nground plane at ⟦x⟧ = 0', 'VS214');
  });

  it('rejects a slice plane in planar space', () => {
    checkDiagnostic('space planar\nslice ⟦xy⟧ from (0, 0) mm to (1, 1) mm', 'VS214');
  });

  it('rejects a point charge value in planar space, where it is a density', () => {
    checkDiagnostic('space planar\ncharge w point at (0, 0) mm ⟦value⟧ 1 nC', 'VS212');
  });

  it('rejects a length where a charge is wanted and a charge without a unit', () => {
    checkDiagnostic('charge q point at (0, 0, 0) value ⟦5 mm⟧', 'VS202');
    checkDiagnostic('charge q point at (0, 0, 0) value ⟦5⟧', 'VS203');
  });

  it('reports a mismatch inside min and max', () => {
    checkDiagnostic('let a = max(1 mm, ⟦2 kV⟧)', 'VS204');
  });
});
