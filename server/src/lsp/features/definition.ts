// Go to definition, find references and rename, for lets, electrodes, charges and probes,
// from the grammar's symbol table.
import type { Location, Position, Range, TextEdit, WorkspaceEdit } from 'vscode-languageserver';
import { keywordWords } from '../../../../grammar/lexer';
import { findSymbol, symbolAt, type SymbolEntry } from '../../../../grammar/symbols';
import { contains } from '../convert';
import type { DocumentState } from '../core';
import { FeatureError } from '../feature-error';

const NAME = /^[A-Za-z_][A-Za-z0-9_]*$/;

function symbolUnder(state: DocumentState, position: Position): SymbolEntry | undefined {
  return symbolAt(state.analysis.symbols, position);
}

export function definition(state: DocumentState, position: Position): Location | null {
  const s = symbolUnder(state, position);
  return s ? { uri: state.uri, range: s.nameRange } : null;
}

export function references(state: DocumentState, position: Position, includeDeclaration: boolean): Location[] {
  const s = symbolUnder(state, position);
  if (!s) return [];
  const ranges = includeDeclaration ? [s.nameRange, ...s.references] : s.references;
  return ranges.map((range) => ({ uri: state.uri, range }));
}

/** The name under the cursor, when it can be renamed. */
export function prepareRename(state: DocumentState, position: Position): { range: Range; placeholder: string } | null {
  const s = symbolUnder(state, position);
  if (!s) return null;
  const range = [s.nameRange, ...s.references].find((r) => contains(r, position)) ?? s.nameRange;
  return { range, placeholder: s.name };
}

export function rename(state: DocumentState, position: Position, newName: string): WorkspaceEdit | null {
  const s = symbolUnder(state, position);
  if (!s) return null;
  if (!NAME.test(newName)) throw new FeatureError(`'${newName}' is not a name: use letters, digits and _, starting with a letter or _.`);
  if (keywordWords.has(newName)) throw new FeatureError(`'${newName}' is a keyword of the language.`);
  const clash = findSymbol(state.analysis.symbols, newName);
  if (clash && clash !== s) throw new FeatureError(`'${newName}' is already the name of a ${clash.kind}.`);
  const edits: TextEdit[] = [s.nameRange, ...s.references].map((range) => ({ range, newText: newName }));
  return { changes: { [state.uri]: edits } };
}
