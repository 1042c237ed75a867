import { beforeAll, describe, expect, it } from 'vitest';
import type { MarkupContent } from 'vscode-languageserver';
import { EPSILON_0 } from '../../grammar/scene';
import { documentState, type DocumentState } from '../../server/src/lsp/core';
import { hover } from '../../server/src/lsp/features/hover';
import { inlayHints } from '../../server/src/lsp/features/inlay-hints';
import { stateAt } from './cursor';
import { solvedState } from './solved';

function text(input: string): string | null {
  const { state, position } = stateAt(input);
  const h = hover(state, position);
  return h ? (h.contents as MarkupContent).value : null;
}

describe('hover on quantities and lets', () => {
  it('shows a quantity in SI and in a convenient unit', () => {
    expect(text('let r = 15|00 mm')).toContain('1.5 m');
    expect(text('limit field 2.|5 kV/mm')).toContain('2.5e6 V/m = 2.5 kV/mm');
    expect(text('let c = 120|0 pF')).toContain('1.2 nF');
  });

  it('shows one component of a tuple with the unit written after it', () => {
    const t = text('electrode a sphere center (0, 0, 3|00) mm radius 5 mm floating');
    expect(t).toContain('component 3');
    expect(t).toContain('0.3 m');
  });

  it('shows what a unit means when the cursor is on it', () => {
    expect(text('let d = (gap + 1) m|m\nlet gap = 1')).toMatch(/mm.*length.*0\.001 m/s);
  });

  it("shows a let's value and dimension, at its definition and at a use", () => {
    expect(text('let g|ap = 40 mm')).toMatch(/let gap.*0\.04 m = 40 mm.*length/s);
    expect(text('let gap = 40 mm\nlet half = ga|p/2')).toContain('40 mm');
    expect(text('let gap = 40 mm\nlet hal|f = gap/2')).toContain('20 mm');
  });

  it('says an electrode is not solved yet when there is no result', () => {
    expect(text('electrode h|ot sphere center (0, 0, 0) mm radius 10 mm potential 1 kV')).toContain('Not solved yet');
  });

  it('shows nothing on plain keywords', () => {
    expect(text('elec|trode hot sphere center (0, 0, 0) mm radius 10 mm potential 1 kV')).toBeNull();
  });
});

describe('solved figures in hover and inlay hints', () => {
  // An isolated sphere of radius a at potential V: C = 4πε0·a, surface field V/a
  // (references.md, closed forms: isolated sphere). a = 10 mm, V = 1 kV.
  const scene = 'mesh coarse\nelectrode hot sphere center (0, 0, 0) mm radius 10 mm potential 1 kV\n';
  let state: DocumentState;
  beforeAll(() => {
    state = solvedState(scene);
  });

  it('shows potential, charge, capacitance and peak field with location, convergence and the caution', () => {
    const h = hover(state, { line: 1, character: 12 })!;
    const value = (h.contents as MarkupContent).value;
    expect(value).toContain('| potential | 1 kV |');
    const pF = Number(/capacitance[^|]*\| ([\d.]+) pF/.exec(value)![1]);
    // Coarse mesh: within 3 % of 4πε0·a = 1.1127 pF.
    expect(Math.abs(pF * 1e-12 - 4 * Math.PI * EPSILON_0 * 0.01) / (4 * Math.PI * EPSILON_0 * 0.01)).toBeLessThan(0.03);
    const field = Number(/peak field \| ([\d.]+) kV\/mm/.exec(value)![1]);
    // V/a = 0.1 kV/mm; the peak of a faceted coarse mesh sits somewhat above the smooth value.
    expect(field).toBeGreaterThan(0.09);
    expect(field).toBeLessThan(0.13);
    expect(value).toMatch(/peak at \| \(.*\) mm/);
    expect(value).toMatch(/\(±[\d.]+%\)|\(n\/a\)/);
    expect(value).toContain('High voltage kills');
    expect(value).toContain('solved for version 1 (coarse mesh');
  });

  it('puts the solved figures after each electrode statement', () => {
    const hints = inlayHints(state);
    expect(hints).toHaveLength(1);
    expect(hints[0].position).toEqual({ line: 1, character: 68 });
    const m = /^φ 1 kV · Q ([\d.]+) nC · Emax [\d.]+ kV\/mm$/.exec(hints[0].label as string);
    expect(m, hints[0].label as string).not.toBeNull();
    // Q = C·V = 4πε0·a·V = 1.1127 nC (same closed form), within 3 % on the coarse mesh.
    expect(Math.abs(Number(m![1]) - 1.1127) / 1.1127).toBeLessThan(0.03);
  });

  it('marks the figures stale once the text has changed', () => {
    const edited = documentState(scene.replace('1 kV', '2 kV'), state.uri, 2);
    edited.solved = state.solved;
    expect(inlayHints(edited)[0].label).toMatch(/\(stale\)$/);
    expect((hover(edited, { line: 1, character: 12 })!.contents as MarkupContent).value).toContain('stale');
  });

  it('gives no hints outside the asked range or without a result', () => {
    expect(inlayHints(state, { start: { line: 0, character: 0 }, end: { line: 0, character: 5 } })).toEqual([]);
    expect(inlayHints(documentState(scene))).toEqual([]);
  });
});
