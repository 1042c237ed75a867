// The registry of diagnostic codes. Every code the project reports is listed here once, with its
// severity, a one-line title and a scene fragment that triggers it; docs/language.md documents each.
// Ranges: VS1xx syntax, VS2xx names, units, expressions and statement meaning (grammar/analyze.ts),
// VS3xx geometry (grammar/geometry-checks.ts), VS4xx physics after a solve (the solver),
// VS5xx limits and settings (the language server).
import type { Diagnostic, Range, Severity } from './scene';

export interface CodeInfo {
  severity: Severity;
  title: string;
  /** A scene fragment that triggers the code. */
  example: string;
}

export const DIAGNOSTIC_CODES: Record<string, CodeInfo> = {
  // ---- VS1xx syntax (grammar/parser.ts) ----
  VS101: { severity: 'error', title: 'Character that is not part of the language', example: 'let a = 5 mm $' },
  VS102: { severity: 'error', title: 'String without its closing quote', example: 'scene "Bench' },
  VS103: { severity: 'error', title: 'Something else expected here', example: 'let gap 40 mm' },
  VS104: { severity: 'error', title: 'Line does not start a statement', example: 'electrod a sphere center (0, 0, 0) radius 5 mm potential 1 kV' },
  VS105: { severity: 'error', title: 'Unexpected text after a complete statement', example: 'limit field 3 kV/mm 7' },
  VS106: { severity: 'error', title: 'Unknown escape in a string', example: 'scene "a\\tb"' },

  // ---- VS2xx names, units, expressions, statement meaning (grammar/analyze.ts) ----
  VS201: { severity: 'error', title: 'Unknown unit', example: 'let drive = 12 kv' },
  VS202: { severity: 'error', title: 'Wrong dimension for this place', example: 'electrode a sphere center (0, 0, 0) radius 5 kV potential 1 kV' },
  VS203: { severity: 'error', title: 'Quantity written without a unit', example: 'electrode a sphere center (0, 0, 0) radius 5 potential 1 kV' },
  VS204: { severity: 'error', title: 'Dimensions do not match inside an expression', example: 'let a = 5 mm + 2 kV' },
  VS205: { severity: 'warning', title: 'Implausible magnitude for this scene', example: 'electrode far sphere center (0, 0, 5) km radius 5 mm floating' },
  VS206: { severity: 'error', title: 'Unknown name', example: 'let a = gapp / 2' },
  VS207: { severity: 'error', title: 'Name used before its let', example: 'let a = b * 2\nlet b = 5 mm' },
  VS208: { severity: 'error', title: 'Name defined twice', example: 'let a = 1 mm\nlet a = 2 mm' },
  VS209: { severity: 'error', title: 'Electrode without a drive', example: 'electrode a sphere center (0, 0, 0) radius 5 mm' },
  VS210: { severity: 'error', title: 'Electrode with more than one drive', example: 'electrode a sphere center (0, 0, 0) radius 5 mm potential 1 kV floating' },
  VS211: { severity: 'error', title: 'Required attribute missing', example: 'electrode a sphere center (0, 0, 0) potential 1 kV' },
  VS212: { severity: 'error', title: 'Attribute does not belong here', example: 'electrode a disc center (0, 0, 0) normal z radius 5 mm hollow potential 1 kV' },
  VS213: { severity: 'error', title: 'Unknown word (shape, kind, attribute, medium, space or preset)', example: 'electrode a spher center (0, 0, 0) radius 5 mm floating' },
  VS214: { severity: 'error', title: 'Not available in this space', example: 'space planar\nground plane at z = 0' },
  VS215: { severity: 'error', title: 'Attribute given twice', example: 'electrode a sphere center (0, 0, 0) radius 5 mm radius 6 mm floating' },
  VS216: { severity: 'error', title: 'Wrong kind of value (number, point, axis)', example: 'electrode a sphere center 5 mm radius 5 mm floating' },
  VS217: { severity: 'error', title: 'Count must be a positive whole number', example: 'slice xz at y = 0 from (-1, -1) m to (1, 1) m cells 2.5' },
  VS218: { severity: 'error', title: 'Setting given more than once', example: 'space 3d\nspace planar' },
  VS219: { severity: 'error', title: 'Point off the axis or at negative radius (axisymmetric)', example: 'space axisymmetric\nelectrode a sphere center (5, 0) mm radius 2 mm floating' },
  VS220: { severity: 'error', title: 'Attribute without its value', example: 'electrode a sphere center (0, 0, 0) radius potential 1 kV' },
  VS221: { severity: 'error', title: 'Slice plane and position do not agree', example: 'slice xz at x = 0 from (-1, -1) m to (1, 1) m' },
  VS222: { severity: 'error', title: 'Too few points in a profile', example: 'space planar\nelectrode a polygon (0, 0) mm (1, 0) mm floating' },
  VS223: { severity: 'error', title: 'Hollow needs a closed profile', example: 'space axisymmetric\nelectrode a revolve (5, 0) mm (5, 10) mm hollow floating' },
  VS224: { severity: 'error', title: 'Value out of its allowed range', example: 'medium permittivity 0' },
  VS225: { severity: 'error', title: 'Result is not a finite number', example: 'let a = 1 mm / 0' },
  VS226: { severity: 'error', title: 'Function or tuple used the wrong way', example: 'let a = sqrt(2 mm)' },
  VS227: { severity: 'info', title: 'A sweep is plotted live (coarse) and run in full by `voltscape sweep`', example: 'let drive = 3 kV\nsweep drive from 1 kV to 5 kV steps 5' },

  // ---- VS3xx geometry (grammar/geometry-checks.ts) ----
  VS301: { severity: 'error', title: 'Degenerate electrode shape (zero or negative size, zero normal or axis, major not above minor, from = to)', example: 'electrode a torus center (0, 0, 0) axis z major 5 mm minor 8 mm floating' },
  VS302: { severity: 'error', title: 'Degenerate free charge (line from = to, ring of zero radius or zero axis)', example: 'charge q line from (0, 0, 0) mm to (0, 0, 0) mm density 1 nC/m' },
  VS303: { severity: 'error', title: 'Electrodes with different drives overlap or touch', example: 'electrode a sphere center (0, 0, 0) radius 10 mm potential 1 kV\nelectrode b sphere center (15, 0, 0) mm radius 10 mm potential 0 V' },
  VS304: { severity: 'warning', title: 'Electrodes with the same drive overlap or touch (they act as one conductor)', example: 'electrode a sphere center (0, 0, 0) radius 10 mm potential 1 kV\nelectrode b sphere center (20, 0, 0) mm radius 10 mm potential 1 kV' },
  VS305: { severity: 'error', title: 'Free charge inside or on an electrode', example: 'electrode a sphere center (0, 0, 0) radius 10 mm floating\ncharge q point at (0, 0, 5) mm value 1 nC' },
  VS306: { severity: 'error', title: 'Electrode crosses or touches the ground plane', example: 'electrode a sphere center (0, 0, 5) mm radius 10 mm potential 1 kV\nground plane at z = 0' },
  VS307: { severity: 'error', title: 'More than one ground plane (only one is supported in this version)', example: 'ground plane at z = 0\nground plane at x = 1 m' },
  VS308: { severity: 'warning', title: 'Slice that meets no electrode and no charge', example: 'electrode a sphere center (0, 0, 0) radius 10 mm potential 1 kV\nslice xy at z = 1 m from (-1, -1) m to (1, 1) m' },
  VS309: { severity: 'warning', title: 'Probe far outside the scene (beyond its bounding box grown by its size)', example: 'electrode a sphere center (0, 0, 0) radius 10 mm potential 1 kV\nprobe p point at (0, 0, 1) m' },
  VS310: { severity: 'warning', title: 'Probe inside a conductor (it reads the conductor’s potential and no field)', example: 'electrode a sphere center (0, 0, 0) radius 10 mm potential 1 kV\nprobe p point at (0, 0, 2) mm' },
  VS311: { severity: 'error', title: 'Free charge on or across the ground plane', example: 'ground plane at z = 0\ncharge q line from (0, 0, -5) mm to (0, 0, 5) mm density 1 nC/m' },

  // ---- VS4xx physics after a solve (server/src/engine) ----
  VS401: { severity: 'error', title: 'Peak field on an electrode over the `limit` (design aid only; follow applicable standards, local codes and licensed practice)', example: 'electrode a sphere center (0, 0, 0) radius 1 mm potential 10 kV\nlimit field 1 kV/mm' },
  VS402: { severity: 'warning', title: 'Peak field on an electrode over the medium\u2019s dielectric strength (design aid only; follow applicable standards, local codes and licensed practice)', example: 'medium air\nelectrode a sphere center (0, 0, 0) radius 1 mm potential 10 kV' },
  VS403: { severity: 'warning', title: 'Mesh too coarse for the smallest gap (a gap narrower than a panel)', example: 'mesh size 5 mm\nelectrode a sphere center (0, 0, 0) radius 10 mm potential 1 kV\nelectrode b sphere center (22, 0, 0) mm radius 10 mm potential 0 V' },
  VS404: { severity: 'warning', title: 'Floating electrode with nothing to charge it (no drive, no free charge)', example: 'electrode a sphere center (0, 0, 0) radius 10 mm floating' },
  VS405: { severity: 'warning', title: 'Mesh coarsened to fit the panel limit', example: 'mesh size 0.05 mm\nelectrode a sphere center (0, 0, 0) radius 50 mm potential 1 kV' },
  VS406: { severity: 'warning', title: 'Second ground plane on the same axis ignored by the solver', example: 'ground plane at z = 0\nground plane at z = 1 m' },
  VS408: { severity: 'warning', title: 'Slice grid reduced to fit the grid-cell limit', example: 'slice xz at y = 0 from (-1, -1) m to (1, 1) m cells 5000' },
  VS409: { severity: 'warning', title: 'Drive equations singular: floating or fixed-charge potentials unresolved', example: '(an electrode with no capacitance; never expected for a meshable scene)' },
  VS410: { severity: 'warning', title: 'Peak field on a round electrode in air over Peek\u2019s corona onset (design aid, not an allowable; follow applicable standards, local codes and licensed practice)', example: 'space axisymmetric\nmedium air\nelectrode a sphere center (0, 0) radius 10 mm potential 45 kV' },
  VS411: { severity: 'warning', title: 'Voltage across a near-uniform air gap over its Paschen sparking voltage (design aid, not an allowable; follow applicable standards, local codes and licensed practice)', example: 'space axisymmetric\nmedium air\nelectrode a sphere center (0, 11) mm radius 10 mm potential 8 kV\nground plane at z = 0' },

  // ---- VS5xx limits and settings (server/src/lsp) ----
  VS501: { severity: 'warning', title: 'Live solve stopped at the time limit (setting voltscape.maxSolveTime)', example: 'mesh size 0.2 mm\nelectrode a sphere center (0, 0, 0) radius 200 mm potential 1 kV' },
  VS502: { severity: 'warning', title: 'Live solve failed; the last picture stays', example: '(an internal failure of the solver; never expected)' },
};

/** A diagnostic with the registry's severity for its code. */
export function diagnostic(code: string, range: Range, message: string, data?: Record<string, unknown>): Diagnostic {
  const severity = DIAGNOSTIC_CODES[code]?.severity ?? 'error';
  return data ? { code, severity, message, range, data } : { code, severity, message, range };
}

export function hasErrors(diagnostics: readonly Diagnostic[]): boolean {
  return diagnostics.some((d) => d.severity === 'error');
}
