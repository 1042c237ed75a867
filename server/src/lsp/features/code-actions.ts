// Code actions (quick fixes) for our diagnostics:
// - a misspelt unit, name or word with a suggestion (Diagnostic.data.replacement): change it;
// - a quantity written without a unit (VS203, Diagnostic.data.unit): add the unit;
// - a name defined twice (VS208): rename the second definition to a free name.
import { CodeActionKind, type CodeAction, type Diagnostic, type Range } from 'vscode-languageserver';
import { findSymbol } from '../../../../grammar/symbols';
import { comparePositions } from '../convert';
import type { DocumentState } from '../core';

function overlaps(a: Range, b: Range): boolean {
  return comparePositions(a.start, b.end) <= 0 && comparePositions(b.start, a.end) <= 0;
}

function fix(state: DocumentState, title: string, diagnostic: Diagnostic, range: Range, newText: string, preferred = true): CodeAction {
  return {
    title,
    kind: CodeActionKind.QuickFix,
    diagnostics: [diagnostic],
    isPreferred: preferred,
    edit: { changes: { [state.uri]: [{ range, newText }] } },
  };
}

/** A name like `name_2` that nothing in the document uses yet. */
function freeName(state: DocumentState, name: string): string {
  for (let i = 2; ; i++) {
    const candidate = `${name}_${i}`;
    if (!findSymbol(state.analysis.symbols, candidate) && !state.document.getText().includes(candidate)) return candidate;
  }
}

export function codeActions(state: DocumentState, range: Range, diagnostics: Diagnostic[]): CodeAction[] {
  const actions: CodeAction[] = [];
  for (const d of diagnostics) {
    if (d.source !== 'voltscape' || !overlaps(d.range, range)) continue;
    const data = (d.data ?? {}) as Record<string, unknown>;
    const current = state.document.getText(d.range);
    if (typeof data.replacement === 'string' && data.replacement !== current) {
      actions.push(fix(state, `Change '${current}' to '${data.replacement}'`, d, d.range, data.replacement));
    } else if (d.code === 'VS203' && typeof data.unit === 'string') {
      actions.push(fix(state, `Add the unit '${data.unit}'`, d, { start: d.range.end, end: d.range.end }, ` ${data.unit}`));
    } else if (d.code === 'VS208' && /^[A-Za-z_][A-Za-z0-9_]*$/.test(current)) {
      const name = freeName(state, current);
      actions.push(fix(state, `Rename this '${current}' to '${name}'`, d, d.range, name, false));
    }
  }
  return actions;
}
