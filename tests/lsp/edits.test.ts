import { describe, expect, it } from 'vitest';
import type { Diagnostic } from 'vscode-languageserver';
import { documentState } from '../../server/src/lsp/core';
import { codeActions } from '../../server/src/lsp/features/code-actions';
import { documentDiagnostics } from '../../server/src/lsp/features/diagnostics';
import { semanticTokens, semanticTokensLegend } from '../../server/src/lsp/features/semantic-tokens';

/** The text after applying the first quick fix for the diagnostic with `code`. */
function fixed(text: string, code: string): { title: string; text: string } {
  const state = documentState(text);
  const diagnostics: Diagnostic[] = documentDiagnostics(state);
  const d = diagnostics.find((x) => x.code === code);
  expect(d, `expected a ${code} diagnostic, got ${diagnostics.map((x) => x.code).join(', ')}`).toBeDefined();
  const [action] = codeActions(state, d!.range, [d!]);
  expect(action).toBeDefined();
  const [edit] = action.edit!.changes![state.uri];
  const start = state.document.offsetAt(edit.range.start);
  const end = state.document.offsetAt(edit.range.end);
  return { title: action.title, text: text.slice(0, start) + edit.newText + text.slice(end) };
}

describe('code actions', () => {
  it('fixes a misspelt unit from the diagnostic data', () => {
    expect(fixed('let drive = 12 kv\n', 'VS201')).toEqual({ title: "Change 'kv' to 'kV'", text: 'let drive = 12 kV\n' });
  });

  it('adds a missing unit', () => {
    const r = fixed('electrode a sphere center (0, 0, 0) mm radius 5 potential 1 kV\n', 'VS203');
    expect(r.text).toBe('electrode a sphere center (0, 0, 0) mm radius 5 mm potential 1 kV\n');
  });

  it('renames a duplicate definition to a free name', () => {
    const r = fixed('let a = 1 mm\nlet a = 2 mm\nlet a_2 = 3 mm\n', 'VS208');
    expect(r.text).toBe('let a = 1 mm\nlet a_3 = 2 mm\nlet a_2 = 3 mm\n');
  });

  it('offers nothing for diagnostics outside the range or from elsewhere', () => {
    const state = documentState('let drive = 12 kv\n');
    const d = documentDiagnostics(state)[0];
    expect(codeActions(state, { start: { line: 3, character: 0 }, end: { line: 3, character: 0 } }, [d])).toEqual([]);
    expect(codeActions(state, d.range, [{ ...d, source: 'other' }])).toEqual([]);
  });
});

describe('semantic tokens', () => {
  function decode(text: string): string[] {
    const { data } = semanticTokens(documentState(text));
    const out: string[] = [];
    let line = 0;
    let character = 0;
    for (let i = 0; i < data.length; i += 5) {
      line += data[i];
      character = data[i] === 0 ? character + data[i + 1] : data[i + 1];
      const lineText = text.split('\n')[line];
      const mods = semanticTokensLegend.tokenModifiers.filter((_, k) => data[i + 4] & (1 << k));
      out.push(`${lineText.slice(character, character + data[i + 2])}:${semanticTokensLegend.tokenTypes[data[i + 3]]}${mods.length ? '.' + mods.join('.') : ''}`);
    }
    return out;
  }

  it('tells names apart by what they name, with declarations marked', () => {
    expect(decode('let gap = 4 mm # half\nelectrode top sphere center (0, 0, gap) radius 1 mm charge 2 nC\n')).toEqual([
      'let:keyword',
      'gap:variable.declaration.readonly',
      '=:operator',
      '4:number',
      'mm:type',
      '# half:comment',
      'electrode:keyword',
      'top:class.declaration',
      'sphere:enumMember',
      'center:property',
      '0:number',
      '0:number',
      'gap:variable.readonly',
      'radius:property',
      '1:number',
      'mm:type',
      'charge:property',
      '2:number',
      'nC:type',
    ]);
  });
});
