// Test helpers: a scene with ⟦ ⟧ markers around the range a diagnostic must cover.
import { expect } from 'vitest';
import { analyzeText, type Analysis } from '../../grammar/index';
import type { Diagnostic, Range } from '../../grammar/scene';

/** Removes ⟦ and ⟧ from the text and returns the range they enclosed. */
export function marked(text: string): { text: string; range: Range } {
  const open = text.indexOf('⟦');
  const close = text.indexOf('⟧');
  if (open < 0 || close < open) throw new Error('test text needs ⟦ ⟧ markers');
  const clean = text.replace('⟦', '').replace('⟧', '');
  const pos = (offset: number) => {
    const before = clean.slice(0, offset);
    const line = before.split('\n').length - 1;
    return { line, character: offset - (before.lastIndexOf('\n') + 1) };
  };
  return { text: clean, range: { start: pos(open), end: pos(close - 1) } };
}

/** Asserts that analysing the marked text reports `code` exactly on the marked range; returns that diagnostic. */
export function checkDiagnostic(markedText: string, code: string): Diagnostic {
  const { text, range } = marked(markedText);
  const analysis = analyzeText(text);
  const hit = analysis.diagnostics.find((d) => d.code === code && sameRange(d.range, range));
  if (!hit) {
    const found = analysis.diagnostics.map((d) => `${d.code} ${fmt(d.range)} ${d.message}`).join('\n');
    expect.fail(`expected ${code} at ${fmt(range)} in:\n${text}\nfound:\n${found || '(none)'}`);
  }
  return hit!;
}

/** Analyses text that must have no diagnostics at all. */
export function clean(text: string): Analysis {
  const analysis = analyzeText(text);
  expect(analysis.diagnostics.map((d) => `${d.code} ${fmt(d.range)} ${d.message}`)).toEqual([]);
  return analysis;
}

export function sameRange(a: Range, b: Range): boolean {
  return a.start.line === b.start.line && a.start.character === b.start.character && a.end.line === b.end.line && a.end.character === b.end.character;
}

function fmt(r: Range): string {
  return `${r.start.line}:${r.start.character}-${r.end.line}:${r.end.character}`;
}

/** Relative closeness for SI values (floating-point conversions of decimal text). */
export function near(actual: number, expected: number, rel = 1e-12): void {
  expect(Math.abs(actual - expected)).toBeLessThanOrEqual(rel * Math.max(Math.abs(expected), 1e-300));
}

/** The example scene of the design (a scenario of the project's own). */
export const DEFLECTOR = `scene "Electrostatic deflector bench"
space 3d
medium air
mesh size 6 mm

let gap = 40 mm
let drive = 8 kV

electrode upper plate center (0, 0, gap/2) size (160, 60) mm normal z potential drive/2
electrode lower plate center (0, 0, -gap/2) size (160, 60) mm normal z potential -drive/2
electrode shield cylinder from (-150, 0, -90) mm to (-150, 0, 90) mm radius 12 mm floating
ground plane at z = -120 mm

charge beam line from (-200, 0, 0) mm to (200, 0, 0) mm density -0.2 nC/m

slice xz at y = 0 from (-220, -130) mm to (220, 130) mm cells 220
probe midline line from (0, 0, -gap/2) to (0, 0, gap/2) samples 100
limit field 1.5 kV/mm
`;
