// Formatting: one statement per line, normalised spacing inside statements, comments kept where
// they are (a comment inside a statement breaks it onto an indented continuation line), at most one
// blank line between statements. Only whitespace changes: the result is re-lexed and must give the
// same tokens, else nothing is changed. Formatting formatted text changes nothing (idempotent).
import type { FormattingOptions, TextEdit } from 'vscode-languageserver';
import type { DocumentState } from '../core';
import { isComment, lex, statementsOf, type Token } from '../tokens';

const OPERAND_END = new Set(['NumberLiteral', 'Unit', 'Identifier', 'RParen']);
const CONTINUATION = '  ';

/** The separator between two neighbouring code tokens of one statement. */
function separator(a: Token, b: Token, aIsUnary: boolean, beforeA: Token | undefined): string {
  if (b.type === 'Comma' || b.type === 'RParen' || a.type === 'LParen') return '';
  if (a.type === 'Comma') return ' ';
  if (b.type === 'LParen') return a.categories.includes('FuncName') ? '' : ' ';
  if (b.type === 'Unit' || a.type === 'Equals' || b.type === 'Equals') return ' ';
  // `*` and `/` bind tight (`gap/2`), except after a unit, where `kV / m` must not become the unit `kV/m`.
  if (b.type === 'Star' || b.type === 'Slash') return a.type === 'Unit' ? ' ' : '';
  if (a.type === 'Star' || a.type === 'Slash') return beforeA?.type === 'Unit' ? ' ' : '';
  if (a.type === 'Plus' || a.type === 'Minus') return aIsUnary ? '' : ' ';
  return ' ';
}

/** The formatted text, or null when the text cannot be formatted safely (it does not lex cleanly). */
export function formatText(text: string): string | null {
  const { tokens, hasLexErrors } = lex(text);
  if (hasLexErrors) return null;
  const eol = text.includes('\r\n') ? '\r\n' : '\n';
  const starts = new Set(statementsOf(tokens).map((s) => s[0]));
  const lines: string[] = [];
  let line = '';
  let previous: Token | undefined; // the previous token of any kind
  let previousCode: Token | undefined; // the previous code token of the current statement
  let beforePreviousCode: Token | undefined;
  let previousUnary = false;
  const flush = () => {
    if (line !== '') lines.push(line);
    line = '';
  };
  const blankBefore = (t: Token) => {
    if (previous && t.range.start.line - previous.range.end.line > 1 && lines.length > 0 && lines[lines.length - 1] !== '') {
      lines.push('');
    }
  };

  tokens.forEach((t, i) => {
    if (isComment(t)) {
      const comment = t.image.trimEnd();
      if (previous && previous.range.end.line === t.range.start.line && line !== '') {
        line += ' ' + comment;
      } else {
        flush();
        const next = tokens.slice(i + 1).find((n) => !isComment(n));
        const insideStatement = previousCode !== undefined && next !== undefined && !starts.has(next);
        if (!insideStatement) blankBefore(t);
        line = (insideStatement ? CONTINUATION : '') + comment;
      }
      flush();
    } else if (starts.has(t)) {
      flush();
      blankBefore(t);
      line = t.image;
      beforePreviousCode = undefined;
      previousCode = t;
      previousUnary = false;
    } else {
      const unary = (t.type === 'Plus' || t.type === 'Minus') && !(previousCode && OPERAND_END.has(previousCode.type));
      if (line === '') line = CONTINUATION + t.image;
      else line += (previousCode ? separator(previousCode, t, previousUnary, beforePreviousCode) : ' ') + t.image;
      beforePreviousCode = previousCode;
      previousCode = t;
      previousUnary = unary;
    }
    previous = t;
  });
  flush();
  while (lines.length > 0 && lines[lines.length - 1] === '') lines.pop();
  const out = lines.length > 0 ? lines.join(eol) + eol : '';

  // Safety: only whitespace may change.
  const before = tokens.map((t) => `${t.type}:${isComment(t) ? t.image.trimEnd() : t.image}`);
  const after = lex(out);
  if (after.hasLexErrors || after.tokens.length !== before.length) return null;
  for (let i = 0; i < before.length; i++) {
    const t = after.tokens[i];
    if (`${t.type}:${isComment(t) ? t.image.trimEnd() : t.image}` !== before[i]) return null;
  }
  return out;
}

/** One edit covering the part of the document that changes (or none). */
export function formatDocument(state: DocumentState, _options?: FormattingOptions): TextEdit[] {
  const text = state.document.getText();
  const formatted = formatText(text);
  if (formatted === null || formatted === text) return [];
  let start = 0;
  while (start < text.length && start < formatted.length && text[start] === formatted[start]) start++;
  let endOld = text.length;
  let endNew = formatted.length;
  while (endOld > start && endNew > start && text[endOld - 1] === formatted[endNew - 1]) {
    endOld--;
    endNew--;
  }
  const doc = state.document;
  return [{ range: { start: doc.positionAt(start), end: doc.positionAt(endOld) }, newText: formatted.slice(start, endNew) }];
}
