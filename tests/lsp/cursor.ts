// Test helpers for the language-server features: a cursor marker `|` in the input text.
import type { Position } from 'vscode-languageserver';
import { documentState, type DocumentState } from '../../server/src/lsp/core';

/** The text without its `|` marker, and the marker's position. */
export function withCursor(input: string): { text: string; position: Position } {
  const at = input.indexOf('|');
  if (at < 0) throw new Error('test input needs a | cursor marker');
  const text = input.slice(0, at) + input.slice(at + 1);
  const before = text.slice(0, at).split('\n');
  return { text, position: { line: before.length - 1, character: before[before.length - 1].length } };
}

/** A document state (analysis only, nothing solved) and the cursor position. */
export function stateAt(input: string): { state: DocumentState; position: Position } {
  const { text, position } = withCursor(input);
  return { state: documentState(text), position };
}
