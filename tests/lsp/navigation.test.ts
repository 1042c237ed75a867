import { describe, expect, it } from 'vitest';
import { SymbolKind } from 'vscode-languageserver';
import { definition, prepareRename, references, rename } from '../../server/src/lsp/features/definition';
import { documentSymbols } from '../../server/src/lsp/features/document-symbols';
import { FeatureError } from '../../server/src/lsp/feature-error';
import { stateAt } from './cursor';

const SCENE = `let gap = 40 mm
let drive = 8 kV
electrode upper plate center (0, 0, gap/2) size (160, 60) mm normal z potential drive/2
electrode lower plate center (0, 0, -gap/2) size (160, 60) mm normal z potential -drive/2
probe mid point at (0, 0, 0) mm
`;

function at(marker: string) {
  // Put the cursor on the first occurrence of `marker` (text of the form "pre|post").
  const plain = marker.replace('|', '');
  const i = SCENE.indexOf(plain);
  return stateAt(SCENE.slice(0, i) + marker + SCENE.slice(i + plain.length));
}

describe('definition, references and rename', () => {
  it('goes from a use of a let to its definition', () => {
    const { state, position } = at('gap/|2) size (160, 60) mm normal z potential drive/2');
    expect(position.line).toBe(2);
    const { state: s2, position: p2 } = at('0, g|ap/2) size');
    expect(definition(s2, p2)).toEqual({ uri: s2.uri, range: { start: { line: 0, character: 4 }, end: { line: 0, character: 7 } } });
    expect(definition(state, { line: 2, character: 0 })).toBeNull();
  });

  it('finds every use of a let, with or without its definition', () => {
    const { state, position } = at('let g|ap');
    const lines = (include: boolean) => references(state, position, include).map((l) => `${l.range.start.line}:${l.range.start.character}`);
    expect(lines(true)).toEqual(['0:4', '2:36', '3:37']);
    expect(lines(false)).toEqual(['2:36', '3:37']);
  });

  it('renames a let at its definition and every use', () => {
    const { state, position } = at('potential dr|ive/2\nelectrode lower');
    expect(prepareRename(state, position)?.placeholder).toBe('drive');
    const edit = rename(state, position, 'bias')!;
    const edits = edit.changes![state.uri];
    expect(edits.map((e) => `${e.range.start.line}:${e.range.start.character}=${e.newText}`)).toEqual(['1:4=bias', '2:80=bias', '3:82=bias']);
  });

  it('renames an electrode at its definition', () => {
    const { state, position } = at('electrode up|per');
    expect(rename(state, position, 'top')!.changes![state.uri]).toEqual([
      { range: { start: { line: 2, character: 10 }, end: { line: 2, character: 15 } }, newText: 'top' },
    ]);
  });

  it('refuses a new name that is not a name, is a keyword, or is taken', () => {
    const { state, position } = at('let g|ap');
    expect(() => rename(state, position, '2gap')).toThrow(FeatureError);
    expect(() => rename(state, position, 'radius')).toThrow(/keyword/);
    expect(() => rename(state, position, 'drive')).toThrow(/already/);
  });

  it('has nothing to rename on a keyword', () => {
    const { state, position } = at('elec|trode upper');
    expect(prepareRename(state, position)).toBeNull();
    expect(rename(state, position, 'x2')).toBeNull();
  });
});

describe('document symbols', () => {
  it('lists every statement, named things by name, with their kinds', () => {
    const { state } = stateAt('|' + SCENE);
    const symbols = documentSymbols(state);
    expect(symbols.map((s) => [s.name, s.kind, s.detail])).toEqual([
      ['gap', SymbolKind.Constant, 'let'],
      ['drive', SymbolKind.Constant, 'let'],
      ['upper', SymbolKind.Object, 'plate, potential'],
      ['lower', SymbolKind.Object, 'plate, potential'],
      ['mid', SymbolKind.Field, 'point'],
    ]);
    expect(symbols[2].selectionRange).toEqual({ start: { line: 2, character: 10 }, end: { line: 2, character: 15 } });
  });
});
