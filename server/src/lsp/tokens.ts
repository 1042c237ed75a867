// The document's tokens as the features need them: kind names, text, offsets and LSP ranges,
// comments included, in source order. Lexing is the grammar's (grammar/lexer.ts).
import type { IToken } from 'chevrotain';
import type { Range } from 'vscode-languageserver';
import * as L from '../../../grammar/lexer';

export interface Token {
  /** The chevrotain token type name: 'NumberLiteral', 'Unit', 'Identifier', 'ElectrodeKw', 'Comment'... */
  type: string;
  /** Category names: 'StatementKw', 'AttrName', 'ShapeWord', 'FlagName'... */
  categories: string[];
  image: string;
  /** Offsets in the text: [start, end). */
  start: number;
  end: number;
  range: Range;
}

export interface Lexed {
  /** Every token, comments included, in source order. */
  tokens: Token[];
  /** True when some text could not be lexed (an unknown character). */
  hasLexErrors: boolean;
}

function toToken(t: IToken): Token {
  const line = (t.startLine ?? 1) - 1;
  const character = (t.startColumn ?? 1) - 1;
  return {
    type: t.tokenType.name,
    categories: (t.tokenType.CATEGORIES ?? []).map((c) => c.name),
    image: t.image,
    start: t.startOffset,
    end: t.startOffset + t.image.length,
    // Tokens never span lines (strings and comments stop at the line end).
    range: { start: { line, character }, end: { line, character: character + t.image.length } },
  };
}

const cache = new Map<string, Lexed>();

/** Lexes the text (the last few texts are cached: several features ask for the same version). */
export function lex(text: string): Lexed {
  const hit = cache.get(text);
  if (hit) return hit;
  const result = L.vscapeLexer.tokenize(text);
  const all = [...result.tokens, ...(result.groups.comments ?? [])].sort((a, b) => a.startOffset - b.startOffset);
  const lexed: Lexed = { tokens: all.map(toToken), hasLexErrors: result.errors.length > 0 };
  if (cache.size > 8) cache.delete(cache.keys().next().value as string);
  cache.set(text, lexed);
  return lexed;
}

export const isStatementKeyword = (t: Token) => t.categories.includes('StatementKw');
export const isComment = (t: Token) => t.type === 'Comment';

/** The index of the token that contains the offset (or ends right at it), or -1. */
export function tokenIndexAt(tokens: Token[], offset: number): number {
  for (let i = 0; i < tokens.length; i++) {
    if (tokens[i].start <= offset && offset <= tokens[i].end) {
      // Prefer the token that starts at the offset over the one that ends there, unless that is punctuation.
      const next = tokens[i + 1];
      if (tokens[i].end === offset && next && next.start === offset && /^[A-Za-z_0-9.µμ]/.test(next.image)) return i + 1;
      return i;
    }
    if (tokens[i].start > offset) break;
  }
  return -1;
}

const DRIVES = new Set(['potential', 'charge', 'floating']);

/**
 * Splits tokens (comments excluded) into statements. A statement starts at a statement keyword;
 * `charge` inside an `electrode` statement that has no drive yet is that electrode's drive,
 * unless a name and a kind follow it (`charge beam line ...`).
 */
export function statementsOf(tokens: Token[]): Token[][] {
  const code = tokens.filter((t) => !isComment(t));
  const out: Token[][] = [];
  let current: Token[] | null = null;
  let electrodeWithoutDrive = false;
  code.forEach((t, i) => {
    const freeCharge = code[i + 1]?.type === 'Identifier' && code[i + 2]?.categories.includes('KindWord');
    const starts = isStatementKeyword(t) && !(t.image === 'charge' && electrodeWithoutDrive && !freeCharge);
    if (starts || !current) {
      current = [];
      out.push(current);
      electrodeWithoutDrive = t.image === 'electrode';
    } else if (DRIVES.has(t.image) && t.type !== 'Identifier') electrodeWithoutDrive = false;
    current.push(t);
  });
  return out;
}
