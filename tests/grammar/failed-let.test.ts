// A let whose value cannot be evaluated reports its own error once; its uses add no second,
// misleading error (such as "used before its let").
import { describe, expect, it } from 'vitest';
import { analyzeText } from '../../grammar/index';

describe('a let that failed to evaluate', () => {
  it('reports only the unknown unit, not the uses of the let', () => {
    const text = 'let drive = 12 kv\nelectrode a sphere center (0, 0, 0) radius 5 mm potential drive\nlet half = drive / 2';
    const codes = analyzeText(text).diagnostics.map((d) => d.code);
    expect(codes).toEqual(['VS201']);
  });

  it('still reports a genuine use before the let', () => {
    const text = 'let half = drive / 2\nlet drive = 12 kV';
    expect(analyzeText(text).diagnostics.map((d) => d.code)).toEqual(['VS207']);
  });
});
