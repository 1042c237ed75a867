import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import {
  DRIVES,
  MEDIA,
  SHAPES,
  STATEMENTS,
  analyzeText,
  attributesOfShape,
  dimensionOf,
  keywordWords,
  tokensOf,
  unitTable,
} from '../../grammar/index';
import { clearParseCache, parseText } from '../../grammar/parser';
import { DEFLECTOR } from './check';

describe('public API for the language server', () => {
  it('lists statements, shapes per space, attributes per shape, drives and media', () => {
    expect(STATEMENTS).toContain('electrode');
    expect(Object.keys(SHAPES.planar)).toEqual(['circle', 'rect', 'polygon', 'strip']);
    expect(attributesOfShape('3d', 'torus')).toEqual(['center', 'axis', 'major', 'minor', 'hollow', 'potential', 'charge', 'floating']);
    expect(attributesOfShape('3d', 'disc')).not.toContain('hollow');
    expect([...DRIVES]).toEqual(['potential', 'charge', 'floating']);
    expect(Object.keys(MEDIA)).toEqual(['vacuum', 'air', 'sf6', 'oil']);
    for (const s of STATEMENTS) expect(keywordWords.has(s), s).toBe(true);
  });

  it('offers unit atoms with factor and dimension for completion', () => {
    expect(unitTable.get('kV')).toMatchObject({ factor: 1000, dim: [0, 1, 0] });
    expect(dimensionOf('kV/mm')).toEqual([-1, 1, 0]);
  });

  it('gives semantic tokens with their categories, comments included', () => {
    const toks = tokensOf('electrode e sphere radius 5 mm # note');
    expect(toks.map((t) => t.type)).toEqual(['ElectrodeKw', 'Identifier', 'SphereKw', 'RadiusKw', 'NumberLiteral', 'Unit', 'Comment']);
    expect(toks[0].categories).toContain('StatementKw');
    expect(toks[2].categories).toContain('ShapeWord');
    expect(toks[3].categories).toContain('AttrName');
  });
});

describe('reuse of parsed statements between edits', () => {
  const strip = (x: unknown) => JSON.parse(JSON.stringify(x));

  it('gives the same statements and diagnostics as a cold parse after an edit', () => {
    const before = DEFLECTOR;
    const after = DEFLECTOR.replace('let drive = 8 kV', 'let drive = 9 kv').replace('scene', '# new first line\nscene');
    parseText(before);
    const warm = strip(parseText(after));
    clearParseCache();
    const cold = strip(parseText(after));
    expect(warm.statements).toEqual(cold.statements);
    expect(warm.diagnostics).toEqual(cold.diagnostics);
    expect(analyzeText(after).diagnostics.find((d) => d.code === 'VS201')!.range.start.line).toBe(7);
  });

  it('does not let a consumer edit of diagnostics leak into the next parse', () => {
    const text = 'let a = 1 mm $';
    parseText(text).diagnostics[0].message = 'changed';
    expect(parseText(text).diagnostics[0].message).not.toBe('changed');
  });
});

describe('editor grammar files', () => {
  const root = join(__dirname, '../../grammar');
  it('has a TextMate grammar whose patterns are valid regular expressions', () => {
    const tm = JSON.parse(readFileSync(join(root, 'vscape.tmLanguage.json'), 'utf8'));
    expect(tm.scopeName).toBe('source.vscape');
    const patterns: string[] = [];
    const walk = (x: unknown) => {
      if (Array.isArray(x)) x.forEach(walk);
      else if (x && typeof x === 'object') {
        for (const [k, v] of Object.entries(x)) {
          if ((k === 'match' || k === 'begin' || k === 'end') && typeof v === 'string') patterns.push(v);
          else walk(v);
        }
      }
    };
    walk(tm);
    expect(patterns.length).toBeGreaterThan(10);
    for (const p of patterns) expect(() => new RegExp(p, 'u'), p).not.toThrow();
    const quantity = new RegExp(tm.repository.quantity.match);
    expect(quantity.exec('radius 2.5 kV/mm')?.slice(1, 3)).toEqual(['2.5', 'kV/mm']);
    expect(quantity.exec('at 5 radius')?.[2]).toBeUndefined();
  });

  it('has a language configuration with # comments and bracket pairs', () => {
    const conf = JSON.parse(readFileSync(join(root, 'language-configuration.json'), 'utf8'));
    expect(conf.comments.lineComment).toBe('#');
    expect(conf.brackets).toEqual([['(', ')']]);
    expect(conf.autoClosingPairs.map((p: { open: string }) => p.open)).toEqual(['(', '"']);
  });
});
