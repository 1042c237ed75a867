import { describe, expect, it } from 'vitest';
import { analyzeText } from '../../grammar/index';

describe('error recovery', () => {
  it('reports three independent mistakes and still builds the statements after them', () => {
    const text = `space 3d
let gap 40 mm
electrode a sphere center (0, 0, 0) mm radius 5 kv potential 1 kV
electrode b sphere center (0, 0, 30) mm radius 5 mm potential 2 kV
electrode c sphere center (0, 0, 60) mm radius 5 mm potential 1 kV floating extra!
electrode d sphere center (0, 0, 90) mm radius 5 mm floating
probe p point at (0, 0, 15) mm`;
    const a = analyzeText(text);
    const byLine = a.diagnostics.map((d) => `${d.range.start.line}:${d.code}`);
    expect(byLine).toContain('1:VS103'); // missing '='
    expect(byLine).toContain('2:VS201'); // unknown unit kv
    expect(byLine).toContain('4:VS101'); // '!'
    expect(a.scene.electrodes.map((e) => e.name)).toEqual(['b', 'd']);
    expect(a.scene.probes.map((p) => p.name)).toEqual(['p']);
  });

  it('re-synchronises at the next statement keyword at the start of a line', () => {
    const a = analyzeText('electrode a sphere center (0, 0 radius 5 mm floating\nelectrode b sphere center (0, 0, 40) mm radius 5 mm floating');
    expect(a.diagnostics.some((d) => d.range.start.line === 0 && d.code === 'VS103')).toBe(true);
    expect(a.scene.electrodes.map((e) => e.name)).toEqual(['b']);
  });

  it('skips a line that does not start a statement and carries on', () => {
    const a = analyzeText('hello world\nlet a = 1 mm\n(1, 2)\nlet b = a * 2');
    expect(a.diagnostics.map((d) => `${d.range.start.line}:${d.code}`)).toEqual(['0:VS104', '2:VS105']);
    expect(a.symbols.entries.map((e) => e.value!.si)).toEqual([0.001, 0.002]);
  });

  it('reads two statements written on one line', () => {
    const a = analyzeText('space planar medium oil');
    expect(a.diagnostics).toEqual([]);
    expect([a.scene.space, a.scene.medium.name]).toEqual(['planar', 'oil']);
  });

  it('does not let an unfinished statement swallow the next line', () => {
    const a = analyzeText('electrode a sphere center\nlet r = 5 mm\nelectrode b sphere center (0, 0, 0) radius r floating');
    expect(a.scene.electrodes.map((e) => e.name)).toEqual(['b']);
    const errors = a.diagnostics.filter((d) => d.severity === 'error');
    expect(errors.map((d) => d.code).sort()).toEqual(['VS209', 'VS211', 'VS220']);
    expect(errors.every((d) => d.range.start.line === 0)).toBe(true);
  });

  it('reports a syntax error alone, without the meaning errors it causes in the same statement', () => {
    const a = analyzeText('electrode a sphere center (0, 0 radius 5 mm floating\nslice xz at y 0 from (0, 0) m to (1, 1) m');
    expect(a.diagnostics.map((d) => `${d.range.start.line}:${d.range.start.character}:${d.code}`)).toEqual(['0:32:VS103', '1:14:VS105']);
  });

  it('names what was expected in words of the language', () => {
    expect(analyzeText('let a = 5 *').diagnostics[0].message).toBe('Expected a value (a number, a name or a tuple) but found the end of the statement.');
    expect(analyzeText('electrode sphere center (0, 0, 0) radius 1 mm floating').diagnostics[0].message).toContain("'sphere', a reserved word");
  });

  it('gives the same ranges for CRLF line ends and after a byte-order mark', () => {
    const lf = 'let a = 1 kv\nlet b = 2 kv';
    const ranges = (t: string) => analyzeText(t).diagnostics.map((d) => JSON.stringify(d.range));
    expect(ranges(lf.replace('\n', '\r\n'))).toEqual(ranges(lf));
    expect(ranges('\ufeff' + lf)[1]).toEqual(ranges(lf)[1]);
  });

  it('counts positions in UTF-16 code units, as LSP does, past wide characters', () => {
    // An emoji is two UTF-16 code units.
    const a = analyzeText('let a = 1 kv # 🔌🔌\nscene "⚡🔌 bench');
    const at = (code: string) => a.diagnostics.find((d) => d.code === code)!.range;
    expect(at('VS201')).toEqual({ start: { line: 0, character: 10 }, end: { line: 0, character: 12 } });
    expect(at('VS102')).toEqual({ start: { line: 1, character: 6 }, end: { line: 1, character: 16 } });
  });
});
