import { readdirSync, readFileSync } from 'node:fs';
import { join } from 'node:path';
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { formatText, formatDocument } from '../../server/src/lsp/features/formatting';
import { documentState } from '../../server/src/lsp/core';

function check(input: string, expected: string) {
  const once = formatText(input);
  expect(once).toBe(expected);
  // Idempotent: formatting formatted text changes nothing.
  expect(formatText(once!)).toBe(expected);
}

describe('formatting', () => {
  it('normalises spacing inside a statement', () => {
    check(
      'electrode  hot sphere center( 0,0 ,gap/2 )mm radius 5mm   potential -drive / 2\n',
      'electrode hot sphere center (0, 0, gap/2) mm radius 5 mm potential -drive/2\n',
    );
  });

  it('puts spaces around = and binary + and -, none after a unary minus', () => {
    check('let a=-3 mm+ 2mm\nground plane at z=-120mm\n', 'let a = -3 mm + 2 mm\nground plane at z = -120 mm\n');
  });

  it('keeps a function call tight and a keyword apart from its tuple', () => {
    check('let r = sqrt (2) * max( 1 mm,2 mm )\n', 'let r = sqrt(2)*max(1 mm, 2 mm)\n');
  });

  it('does not glue a unit to a following division (kV / m stays a division by a name)', () => {
    check('let m = 2\nlet e = 4 kV / m\n', 'let m = 2\nlet e = 4 kV / m\n');
  });

  it('puts one statement per line', () => {
    check('space 3d medium air mesh coarse\n', 'space 3d\nmedium air\nmesh coarse\n');
  });

  it('joins a statement written over several lines', () => {
    check('electrode a sphere\n   center (0, 0, 0) mm\n   radius 5 mm floating\n', 'electrode a sphere center (0, 0, 0) mm radius 5 mm floating\n');
  });

  it('keeps an electrode charge drive inside its statement but splits a free charge off', () => {
    check(
      'electrode a sphere center (0,0,0) mm radius 5 mm charge 1 nC charge b point at (0,0,9) mm value 1 nC\n',
      'electrode a sphere center (0, 0, 0) mm radius 5 mm charge 1 nC\ncharge b point at (0, 0, 9) mm value 1 nC\n',
    );
  });

  it('keeps comments: full-line, trailing, and inside a statement', () => {
    check(
      '# title comment\nspace 3d   # mode\n\n\n\nelectrode a sphere # the hot one\n center (0,0,0) mm radius 5 mm potential 1 kV\n',
      '# title comment\nspace 3d # mode\n\nelectrode a sphere # the hot one\n  center (0, 0, 0) mm radius 5 mm potential 1 kV\n',
    );
  });

  it('keeps Windows line ends', () => {
    check('space 3d\r\nmedium  air\r\n', 'space 3d\r\nmedium air\r\n');
  });

  it('leaves text that does not lex alone', () => {
    expect(formatText('let a = 5 mm $\n')).toBeNull();
    expect(formatDocument(documentState('let a  = 5 mm $\n'))).toEqual([]);
  });

  it('answers one edit covering only the changed part', () => {
    const state = documentState('space 3d\nmedium  air\nmesh coarse\n');
    expect(formatDocument(state)).toEqual([
      { range: { start: { line: 1, character: 7 }, end: { line: 1, character: 8 } }, newText: '' },
    ]);
  });

  it('changes nothing in formatted text', () => {
    expect(formatDocument(documentState('space 3d\nmedium air\n'))).toEqual([]);
  });
});

describe('formatting, over the samples and random spacing', () => {
  const root = join(__dirname, '../..');
  const samples = readdirSync(join(root, 'samples')).filter((f) => f.endsWith('.vscape'));

  it('formats every sample idempotently, changing only whitespace', () => {
    expect(samples.length).toBeGreaterThan(0);
    for (const f of samples) {
      const text = readFileSync(join(root, 'samples', f), 'utf8');
      const once = formatText(text);
      expect(once, f).not.toBeNull();
      expect(formatText(once!), f).toBe(once);
      expect(once!.replace(/\s+/g, ''), f).toBe(text.replace(/\s+/g, ''));
    }
  });

  it('gives the same text whatever the spacing between tokens (property, fast-check)', () => {
    const text = readFileSync(join(root, 'samples', samples[0]), 'utf8');
    const canonical = formatText(text)!;
    // Re-space the canonical text: each run of spaces becomes 1–3 spaces, and a space is added
    // after some '(' and before some ',' — never inside a word, a number or a unit.
    fc.assert(
      fc.property(fc.array(fc.integer({ min: 1, max: 3 }), { minLength: 64, maxLength: 64 }), (widths) => {
        let k = 0;
        const respace = (code: string) =>
          code.replace(/ +/g, () => ' '.repeat(widths[k++ % widths.length])).replace(/\(/g, () => (widths[k++ % widths.length] === 2 ? '( ' : '('));
        // Strings and comments are kept verbatim; only the code between them is re-spaced.
        const respaced = canonical
          .split('\n')
          .map((line) => line.split(/("(?:[^"\\]|\\.)*"|#.*$)/).map((part, i) => (i % 2 === 1 ? part : respace(part))).join(''))
          .join('\n');
        expect(formatText(respaced)).toBe(canonical);
      }),
      { numRuns: 50 },
    );
  });
});
