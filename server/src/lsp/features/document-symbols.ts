// Document symbols: every statement as an outline entry, named things by their names.
import { SymbolKind, type DocumentSymbol } from 'vscode-languageserver';
import type { Statement, StatementKind } from '../../../../grammar/ast';
import type { DocumentState } from '../core';

const KIND: Record<StatementKind, SymbolKind> = {
  scene: SymbolKind.File,
  space: SymbolKind.Namespace,
  medium: SymbolKind.Property,
  mesh: SymbolKind.Property,
  let: SymbolKind.Constant,
  electrode: SymbolKind.Object,
  ground: SymbolKind.Struct,
  charge: SymbolKind.Event,
  slice: SymbolKind.Interface,
  probe: SymbolKind.Field,
  limit: SymbolKind.Property,
  sweep: SymbolKind.Operator,
};

const DRIVES = new Set(['potential', 'charge', 'floating']);

function detail(s: Statement): string {
  const drive = s.attributes.find((a) => DRIVES.has(a.name.text));
  if (s.type === 'electrode') return [s.head?.text, drive?.name.text].filter(Boolean).join(', ');
  if (s.type === 'charge' || s.type === 'probe') return s.head?.text ?? '';
  return s.type;
}

function label(s: Statement): string {
  if (s.name) return s.name.text;
  if (s.type === 'scene') return s.title ? `scene "${s.title.value}"` : 'scene';
  if (s.type === 'ground') return 'ground plane';
  return [s.keyword.text, s.head?.text].filter(Boolean).join(' ');
}

export function documentSymbols(state: DocumentState): DocumentSymbol[] {
  return state.analysis.ast.statements.map((s) => ({
    name: label(s),
    detail: detail(s),
    kind: KIND[s.type] ?? SymbolKind.Null,
    range: s.range,
    selectionRange: s.name?.range ?? s.keyword.range,
  }));
}
