import { describe, expect, it } from 'vitest';
import { analyzeText, nodeAt, pathAt } from '../../grammar/index';
import { parseText } from '../../grammar/parser';
import { DEFLECTOR } from './check';

const noSyntaxErrors = (text: string) => {
  const parsed = parseText(text);
  expect(parsed.diagnostics.map((d) => d.message)).toEqual([]);
  return parsed;
};

describe('parser', () => {
  it('parses the example scene into its fourteen statements', () => {
    const parsed = noSyntaxErrors(DEFLECTOR);
    expect(parsed.statements.map((s) => s.type)).toEqual([
      'scene', 'space', 'medium', 'mesh', 'let', 'let', 'electrode', 'electrode', 'electrode', 'ground', 'charge', 'slice', 'probe', 'limit',
    ]);
  });

  it('parses every 3d shape, charge kind, probe and the hollow flag', () => {
    noSyntaxErrors(`space 3d
electrode a sphere center (0, 0, 0) mm radius 5 mm hollow potential 1 kV
electrode b box center (0, 0, 0) mm size (1, 2, 3) mm charge 2 nC
electrode c cylinder from (0, 0, 0) mm to (0, 0, 1) mm radius 1 mm floating
electrode d disc center (0, 0, 0) mm normal (0, 0, 1) radius 5 mm floating
electrode e plate center (0, 0, 0) mm size (1, 2) mm normal x floating
electrode f torus center (0, 0, 0) mm axis z major 10 mm minor 1 mm floating
charge p point at (1, 2, 3) mm value 1 nC
charge l line from (0, 0, 0) mm to (1, 0, 0) mm density 1 nC/m
charge r ring center (0, 0, 0) mm axis (0, 0, 1) radius 5 mm density 2 nC/m
probe q point at (0, 0, 0)
`);
  });

  it('parses axisymmetric shapes, revolve profiles and ring charges', () => {
    noSyntaxErrors(`space axisymmetric
electrode a sphere center (0, 10) mm radius 5 mm potential 1 kV
electrode b revolve (0, 0) mm (10, 0) mm (10, 20) mm (0, 20) mm hollow potential 0
charge r ring at (30, 5) mm density 1 nC/m
slice from (0, -10) mm to (40, 40) mm cells 50
`);
  });

  it('parses planar shapes, polygons, strips and line charges', () => {
    noSyntaxErrors(`space planar
electrode a circle center (0, 0) mm radius 5 mm potential 1 kV
electrode b rect center (20, 0) mm size (4, 8) mm hollow floating
electrode c polygon (0, 30) (10, 30) (5, 40) mm charge 1 nC/m
electrode d strip from (-10, -20) mm to (10, -20) mm potential 0
charge w point at (0, 15) mm density 1 nC/m
ground plane at y = -50 mm
`);
  });

  it('accepts the medium density and the reserved sweep statement', () => {
    const parsed = noSyntaxErrors('medium air density 0.95\nlet v = 1 kV\nsweep v from 1 kV to 5 kV steps 5');
    expect(parsed.statements.map((s) => s.type)).toEqual(['medium', 'let', 'sweep']);
  });

  it('lets a statement continue over several lines, including an electrode charge drive', () => {
    const parsed = noSyntaxErrors(`let q0 = 2 nC
electrode a sphere
  center (0, 0, 0) mm
  radius 5 mm
  charge q0
electrode b sphere center (0, 0, 20) mm radius 5 mm
  charge 1 nC`);
    expect(parsed.statements.map((s) => s.type)).toEqual(['let', 'electrode', 'electrode']);
    expect(parsed.statements[1].attributes.map((a) => a.name.text)).toEqual(['center', 'radius', 'charge']);
  });

  it('applies * and / before + and -, left to right', () => {
    const expr = parseText('let a = 1 - 2 * 3 / 4 + 5').statements[0].value!;
    // ((1 - ((2 * 3) / 4)) + 5)
    expect(expr.kind).toBe('binary');
    if (expr.kind !== 'binary') return;
    expect(expr.op).toBe('+');
    const left = expr.left!;
    expect(left.kind === 'binary' && left.op).toBe('-');
    expect(analyzeText('let a = 1 - 2 * 3 / 4 + 5').symbols.entries[0].value!.si).toBe(4.5);
  });

  it('puts a source range on statements, names, attributes, numbers and units', () => {
    const parsed = parseText('electrode top sphere center (0, 0, 5) mm radius 2.5 mm potential 3 kV');
    const s = parsed.statements[0];
    expect(s.range).toEqual({ start: { line: 0, character: 0 }, end: { line: 0, character: 69 } });
    expect(s.name!.range).toEqual({ start: { line: 0, character: 10 }, end: { line: 0, character: 13 } });
    const radius = s.attributes[1];
    expect(radius.range).toEqual({ start: { line: 0, character: 41 }, end: { line: 0, character: 54 } });
    const value = radius.value!;
    expect(value.kind).toBe('unit');
    if (value.kind !== 'unit') return;
    expect(value.unit.range).toEqual({ start: { line: 0, character: 52 }, end: { line: 0, character: 54 } });
    expect(value.operand!.range).toEqual({ start: { line: 0, character: 48 }, end: { line: 0, character: 51 } });
  });

  it('finds the innermost node under a cursor', () => {
    const a = analyzeText('let gap = 40 mm\nelectrode e sphere center (0, 0, gap) radius 5 mm floating');
    const n = nodeAt(a.ast, { line: 1, character: 34 });
    expect(n.kind).toBe('name');
    expect(n.kind === 'name' && n.name).toBe('gap');
    const kinds = pathAt(a.ast, { line: 1, character: 34 }).map((x) => x.kind);
    expect(kinds).toEqual(['scene', 'statement', 'attribute', 'group', 'name']);
    expect(nodeAt(a.ast, { line: 0, character: 13 }).kind).toBe('word'); // the unit `mm`
  });
});
