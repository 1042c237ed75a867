// Semantic tokens: every token by its role. Names are told apart by what they name (a let, an
// electrode, a charge, a probe), with `declaration` where they are defined.
import type { SemanticTokens, SemanticTokensLegend } from 'vscode-languageserver';
import type { DocumentState } from '../core';
import { lex, statementsOf, type Token } from '../tokens';

const TYPES = ['keyword', 'number', 'string', 'comment', 'operator', 'function', 'property', 'enumMember', 'type', 'variable', 'class', 'event', 'interface'] as const;
const MODIFIERS = ['declaration', 'readonly'] as const;
type TokenKind = (typeof TYPES)[number];

export const semanticTokensLegend: SemanticTokensLegend = { tokenTypes: [...TYPES], tokenModifiers: [...MODIFIERS] };

const BY_SYMBOL: Record<string, TokenKind> = { let: 'variable', electrode: 'class', charge: 'event', probe: 'interface' };
const HEAD_WORDS = ['ShapeWord', 'KindWord', 'SpaceWord', 'PresetWord', 'AxisWord', 'PlaneWord'];
const OPERATORS = new Set(['Plus', 'Minus', 'Star', 'Slash', 'Equals']);

function kindOf(t: Token, statementStart: boolean, previous: Token | undefined): TokenKind | null {
  if (t.type === 'Comment') return 'comment';
  if (t.type === 'NumberLiteral') return 'number';
  if (t.type === 'StringLiteral' || t.type === 'UnterminatedString') return 'string';
  if (t.type === 'Unit') return 'type';
  if (OPERATORS.has(t.type)) return 'operator';
  if (t.categories.includes('FuncName')) return 'function';
  if (statementStart || t.type === 'PlaneKw' || t.type === 'ThreeD') return t.type === 'ThreeD' ? 'enumMember' : 'keyword';
  // `mesh normal`: the preset, not the attribute.
  if (t.image === 'normal' && previous?.image === 'mesh') return 'enumMember';
  if (t.categories.includes('AttrName') || t.categories.includes('FlagName')) return 'property';
  if (HEAD_WORDS.some((c) => t.categories.includes(c))) return 'enumMember';
  return null;
}

export function semanticTokens(state: DocumentState): SemanticTokens {
  const { tokens } = lex(state.document.getText());
  const starts = new Set(statementsOf(tokens).map((s) => s[0]));
  const symbols = state.analysis.symbols.entries;
  const kindByName = new Map<string, string>();
  for (const s of symbols) if (!kindByName.has(s.name)) kindByName.set(s.name, s.kind);
  const declarations = new Set(symbols.map((s) => `${s.nameRange.start.line}:${s.nameRange.start.character}`));

  const data: number[] = [];
  let line = 0;
  let character = 0;
  let previous: Token | undefined;
  for (const t of tokens) {
    let kind: TokenKind | null;
    let modifiers = 0;
    if (t.type === 'Identifier') {
      const symbolKind = kindByName.get(t.image);
      kind = symbolKind ? BY_SYMBOL[symbolKind] : null;
      if (kind && declarations.has(`${t.range.start.line}:${t.range.start.character}`)) modifiers |= 1;
      if (kind === 'variable') modifiers |= 2;
    } else kind = kindOf(t, starts.has(t), previous);
    if (t.type !== 'Comment') previous = t;
    if (!kind) continue;
    const { line: l, character: c } = t.range.start;
    data.push(l - line, l === line ? c - character : c, t.image.length, TYPES.indexOf(kind), modifiers);
    line = l;
    character = c;
  }
  return { data };
}
