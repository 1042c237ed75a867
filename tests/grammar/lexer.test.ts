import { describe, expect, it } from 'vitest';
import { tokensOf } from '../../grammar/index';

const kinds = (text: string) => tokensOf(text).map((t) => `${t.type}:${t.text}`);

describe('lexer', () => {
  it('reads numbers in every written form', () => {
    expect(kinds('12 0.5 .5 2e-3 1.5E6')).toEqual(['NumberLiteral:12', 'NumberLiteral:0.5', 'NumberLiteral:.5', 'NumberLiteral:2e-3', 'NumberLiteral:1.5E6']);
  });

  it('reads a unit right after a number, with or without a space', () => {
    expect(kinds('150mm 12 kV 2.5 kV/mm 1 C/m^2')).toEqual([
      'NumberLiteral:150',
      'Unit:mm',
      'NumberLiteral:12',
      'Unit:kV',
      'NumberLiteral:2.5',
      'Unit:kV/mm',
      'NumberLiteral:1',
      'Unit:C/m^2',
    ]);
  });

  it('reads the micro sign and the letter u as micro', () => {
    expect(kinds('3 µm 4 uC')).toEqual(['NumberLiteral:3', 'Unit:µm', 'NumberLiteral:4', 'Unit:uC']);
  });

  it('reads a unit after a tuple but never swallows the keyword that follows', () => {
    expect(kinds('(0, 0, 300) mm')).toContain('Unit:mm');
    expect(kinds('center (0,0,0) radius 5 mm')).toEqual([
      'CenterKw:center',
      'LParen:(',
      'NumberLiteral:0',
      'Comma:,',
      'NumberLiteral:0',
      'Comma:,',
      'NumberLiteral:0',
      'RParen:)',
      'RadiusKw:radius',
      'NumberLiteral:5',
      'Unit:mm',
    ]);
  });

  it('takes any non-keyword word after a number as a unit (unknown ones are checked later)', () => {
    expect(kinds('12 kv')).toEqual(['NumberLiteral:12', 'Unit:kv']);
    expect(kinds('5 radius')).toEqual(['NumberLiteral:5', 'RadiusKw:radius']);
  });

  it('after a closing parenthesis takes only known units, so names stay names', () => {
    expect(kinds('(1, 2) gap')).toEqual(['LParen:(', 'NumberLiteral:1', 'Comma:,', 'NumberLiteral:2', 'RParen:)', 'Identifier:gap']);
  });

  it('stops a compound unit before an unknown atom: 20 kV/gap is 20 kV divided by gap', () => {
    expect(kinds('20 kV/gap')).toEqual(['NumberLiteral:20', 'Unit:kV', 'Slash:/', 'Identifier:gap']);
    expect(kinds('drive/2')).toEqual(['Identifier:drive', 'Slash:/', 'NumberLiteral:2']);
  });

  it('tells keywords from names that merely start with one', () => {
    expect(kinds('sphere spheres x xy x1 3d')).toEqual(['SphereKw:sphere', 'Identifier:spheres', 'XKw:x', 'XyKw:xy', 'Identifier:x1', 'ThreeD:3d']);
  });

  it('keeps comments and strings with escapes as single tokens', () => {
    const toks = tokensOf('scene "a \\"b\\" \\\\ c" # note (1, 2)');
    expect(toks.map((t) => t.type)).toEqual(['SceneKw', 'StringLiteral', 'Comment']);
    expect(toks[2].range).toEqual({ start: { line: 0, character: 21 }, end: { line: 0, character: 34 } });
  });

  it('gives LSP ranges (0-based, end exclusive) across lines', () => {
    const t = tokensOf('let a = 1\n  let bb = 2 mm').find((x) => x.text === 'bb')!;
    expect(t.range).toEqual({ start: { line: 1, character: 6 }, end: { line: 1, character: 8 } });
  });
});
