// Property-based robustness: whatever is typed, analysis returns data (never throws), finishes
// quickly, keeps every diagnostic range inside the document and every Scene number finite.
import { readFileSync, readdirSync } from 'node:fs';
import { join } from 'node:path';
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { analyzeText } from '../../grammar/index';
import type { Range } from '../../grammar/scene';
import { DEFLECTOR } from './check';

const samplesDir = join(__dirname, '../../samples');
const samples = readdirSync(samplesDir)
  .filter((f) => f.endsWith('.vscape'))
  .map((f) => readFileSync(join(samplesDir, f), 'utf8'));

const FRAGMENTS = [
  DEFLECTOR,
  `space axisymmetric
medium sf6 density 0.9
let r0 = 12 mm
electrode core cylinder from (0, -100) mm to (0, 50) mm radius r0 potential 36 kV
electrode can revolve (0, -120) (80, -120) (80, 80) (0, 80) mm hollow potential 0
charge ions ring at (30, 110) mm density 0.2 nC/m
slice from (0, -130) mm to (100, 100) mm cells 80
probe gap line from (r0, 0) to (80 mm, 0) samples 20
limit field 8 kV/mm`,
  `space planar
medium permittivity 2.3 strength 20 kV/mm
electrode a circle center (0, 0) mm radius 5 mm potential 1 kV
electrode b polygon (20, 0) (30, 0) (25, 8) mm floating
electrode c strip from (-20, -20) mm to (20, -20) mm charge -1 nC/m
charge w point at (0, 15) mm density 1 nC/m
ground plane at y = -40 mm
let v = 2 kV
sweep v from 1 kV to 3 kV steps 3`,
];
const CORPUS = [...samples, ...FRAGMENTS];

const TOKENS = [
  'scene', 'space', '3d', 'axisymmetric', 'planar', 'medium', 'air', 'mesh', 'size', 'fine', 'let', '=', 'electrode', 'ground', 'plane',
  'charge', 'slice', 'probe', 'limit', 'field', 'sweep', 'sphere', 'box', 'disc', 'plate', 'revolve', 'polygon', 'point', 'line', 'ring',
  'center', 'radius', 'normal', 'axis', 'from', 'to', 'at', 'hollow', 'floating', 'potential', 'density', 'value', 'cells', 'samples',
  'x', 'y', 'z', 'xz', '(', ')', ',', '+', '-', '*', '/', '0', '5', '.5', '2e-3', '1e308', 'mm', 'kV', 'kV/mm', 'nC/m', 'kv', 'µm', 'sqrt', 'max',
  'a', 'b', 'gap', '"t"', '"', '#c', '\n', '\n', '\n', '  ', '$', '\\',
];

function insideDocument(text: string, r: Range): boolean {
  const lines = text.split(/\r\n|\r|\n/);
  const ok = (p: { line: number; character: number }) =>
    Number.isInteger(p.line) && Number.isInteger(p.character) && p.line >= 0 && p.line < lines.length && p.character >= 0 && p.character <= lines[p.line].length;
  const ordered = r.start.line < r.end.line || (r.start.line === r.end.line && r.start.character <= r.end.character);
  return ok(r.start) && ok(r.end) && ordered;
}

function finiteEverywhere(value: unknown): boolean {
  if (typeof value === 'number') return Number.isFinite(value);
  if (Array.isArray(value)) return value.every(finiteEverywhere);
  if (value && typeof value === 'object') return Object.values(value).every(finiteEverywhere);
  return true;
}

/** Analyses the text and checks the properties every input must have. */
function holds(text: string): boolean {
  const t0 = performance.now();
  const a = analyzeText(text);
  const elapsed = performance.now() - t0;
  expect(elapsed).toBeLessThan(2000); // bounded: a few ms normally; generous for a loaded machine
  for (const d of a.diagnostics) {
    if (!insideDocument(text, d.range)) expect.fail(`${d.code} range ${JSON.stringify(d.range)} outside the document:\n${JSON.stringify(text)}`);
  }
  expect(finiteEverywhere(a.scene)).toBe(true);
  return true;
}

const mutation = fc.oneof(
  fc.record({ kind: fc.constant('delete' as const), at: fc.nat(), length: fc.integer({ min: 1, max: 12 }) }),
  fc.record({ kind: fc.constant('insert' as const), at: fc.nat(), text: fc.oneof(fc.string({ maxLength: 4 }), fc.constantFrom(...TOKENS)) }),
  fc.record({ kind: fc.constant('replace' as const), at: fc.nat(), text: fc.constantFrom(...TOKENS) }),
);

function mutate(text: string, edits: { kind: string; at: number; length?: number; text?: string }[]): string {
  let s = text;
  for (const e of edits) {
    const at = s.length === 0 ? 0 : e.at % (s.length + 1);
    if (e.kind === 'delete') s = s.slice(0, at) + s.slice(at + (e.length ?? 1));
    else if (e.kind === 'insert') s = s.slice(0, at) + (e.text ?? '') + s.slice(at);
    else {
      // Replace the word under the position by a token.
      const m = /^[^\s()]*/.exec(s.slice(at))!;
      s = s.slice(0, at) + (e.text ?? '') + s.slice(at + m[0].length);
    }
  }
  return s;
}

describe('analysis never fails, whatever is typed', () => {
  it('has samples and fragments to mutate', () => {
    expect(samples.length).toBeGreaterThan(0);
  });

  it('survives random text', () => {
    fc.assert(fc.property(fc.string({ maxLength: 200, unit: 'binary' }), holds), { numRuns: 100 });
  });

  it('survives random token soup', () => {
    fc.assert(
      fc.property(fc.array(fc.constantFrom(...TOKENS), { maxLength: 80 }), fc.array(fc.constantFrom(' ', '', '\n'), { minLength: 80, maxLength: 80 }), (toks, seps) =>
        holds(toks.map((t, i) => t + seps[i]).join('')),
      ),
      { numRuns: 100 },
    );
  });

  it('survives character and token mutations of every sample and fragment', () => {
    fc.assert(
      fc.property(fc.integer({ min: 0, max: CORPUS.length - 1 }), fc.array(mutation, { minLength: 1, maxLength: 6 }), (i, edits) => holds(mutate(CORPUS[i], edits))),
      { numRuns: 8 * CORPUS.length },
    );
  });

  it('keeps the unmutated corpus free of syntax and meaning errors', () => {
    for (const text of CORPUS) {
      const errors = analyzeText(text).diagnostics.filter((d) => /^VS[12]/.test(d.code) && d.severity === 'error');
      expect(errors).toEqual([]);
    }
  });
});
