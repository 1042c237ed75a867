// Tokens of the .vscape language: one ordered list, keywords before the identifier (with longer_alt).
// A unit is a token of its own, recognised only right after a number or a closing parenthesis
// (see `matchUnit`), so `150mm`, `12 kV`, `2.5 kV/mm` and `(0, 0, 300) mm` lex as quantities while
// `center (0,0,0) radius 5 mm` keeps `radius` a keyword.
import { createToken, Lexer, type IToken, type TokenType, type CustomPatternMatcherReturn } from 'chevrotain';
import type { Range } from './scene';
import { isUnitAtom } from './units';

// ---- token categories (never matched on their own) ----
export const StatementKw = createToken({ name: 'StatementKw', pattern: Lexer.NA });
export const AttrName = createToken({ name: 'AttrName', pattern: Lexer.NA, label: 'an attribute' });
export const FlagName = createToken({ name: 'FlagName', pattern: Lexer.NA, label: 'a flag' });
export const ShapeWord = createToken({ name: 'ShapeWord', pattern: Lexer.NA, label: 'a shape' });
export const KindWord = createToken({ name: 'KindWord', pattern: Lexer.NA, label: 'a kind (point, line, ring)' });
export const SpaceWord = createToken({ name: 'SpaceWord', pattern: Lexer.NA, label: 'a space (3d, axisymmetric, planar)' });
export const PresetWord = createToken({ name: 'PresetWord', pattern: Lexer.NA, label: 'a mesh preset (coarse, normal, fine)' });
export const AxisWord = createToken({ name: 'AxisWord', pattern: Lexer.NA, label: 'an axis (x, y, z)' });
export const PlaneWord = createToken({ name: 'PlaneWord', pattern: Lexer.NA, label: 'a plane (xy, xz, yz)' });
export const FuncName = createToken({ name: 'FuncName', pattern: Lexer.NA, label: 'a function' });
export const AdditiveOp = createToken({ name: 'AdditiveOp', pattern: Lexer.NA, label: "'+' or '-'" });
export const MultOp = createToken({ name: 'MultOp', pattern: Lexer.NA, label: "'*' or '/'" });
export const BinaryOp = createToken({ name: 'BinaryOp', pattern: Lexer.NA, label: 'an operator' });

// ---- trivia ----
export const WhiteSpace = createToken({ name: 'WhiteSpace', pattern: /[ \t\f\r\n\u00a0\ufeff]+/, group: Lexer.SKIPPED, line_breaks: true });
export const Comment = createToken({ name: 'Comment', pattern: /#[^\r\n]*/, group: 'comments' });

// ---- literals ----
export const StringLiteral = createToken({ name: 'StringLiteral', pattern: /"(?:[^"\\\r\n]|\\.)*"/, label: 'a string' });
export const UnterminatedString = createToken({ name: 'UnterminatedString', pattern: /"(?:[^"\\\r\n]|\\.)*\\?/, label: 'a string' });
export const ThreeD = createToken({ name: 'ThreeD', pattern: /3d(?![A-Za-z0-9_])/, categories: [SpaceWord], label: "'3d'" });
export const NumberLiteral = createToken({ name: 'NumberLiteral', pattern: /(?:\d+(?:\.\d*)?|\.\d+)(?:[eE][+-]?\d+)?/, label: 'a number' });

// ---- keywords ----
const keywordTokens: TokenType[] = [];
/** Every reserved word, in lexer order. */
export const keywordWords = new Set<string>();
export const Identifier = createToken({ name: 'Identifier', pattern: /[A-Za-z_][A-Za-z0-9_]*/, label: 'a name' });

function keyword(word: string, categories: TokenType[]): TokenType {
  const name = word[0].toUpperCase() + word.slice(1) + 'Kw';
  const token = createToken({ name, pattern: new RegExp(word), longer_alt: Identifier, categories, label: `'${word}'` });
  keywordTokens.push(token);
  keywordWords.add(word);
  return token;
}

export const SceneKw = keyword('scene', [StatementKw]);
export const SpaceKw = keyword('space', [StatementKw]);
export const MediumKw = keyword('medium', [StatementKw]);
export const MeshKw = keyword('mesh', [StatementKw]);
export const LetKw = keyword('let', [StatementKw]);
export const ElectrodeKw = keyword('electrode', [StatementKw]);
export const GroundKw = keyword('ground', [StatementKw]);
export const ChargeKw = keyword('charge', [StatementKw, AttrName]);
export const SliceKw = keyword('slice', [StatementKw]);
export const ProbeKw = keyword('probe', [StatementKw]);
export const LimitKw = keyword('limit', [StatementKw]);
export const SweepKw = keyword('sweep', [StatementKw]);

export const PlaneKw = keyword('plane', []);
for (const w of ['axisymmetric', 'planar']) keyword(w, [SpaceWord]);
for (const w of ['sphere', 'box', 'cylinder', 'disc', 'plate', 'torus', 'revolve', 'circle', 'rect', 'polygon', 'strip']) keyword(w, [ShapeWord]);
for (const w of ['point', 'line', 'ring']) keyword(w, [KindWord]);
for (const w of ['hollow', 'floating']) keyword(w, [FlagName]);
keyword('normal', [AttrName, PresetWord]);
for (const w of ['coarse', 'fine']) keyword(w, [PresetWord]);
for (const w of ['center', 'radius', 'size', 'axis', 'major', 'minor', 'from', 'to', 'at', 'value', 'density', 'samples', 'cells', 'potential', 'permittivity', 'strength', 'field', 'steps']) {
  keyword(w, [AttrName]);
}
for (const w of ['xy', 'xz', 'yz']) keyword(w, [PlaneWord]);
for (const w of ['x', 'y', 'z']) keyword(w, [AxisWord]);
for (const w of ['sqrt', 'min', 'max', 'abs']) keyword(w, [FuncName]);

// Longer keywords first where one is a prefix of another is handled by longer_alt + word boundaries:
// each keyword pattern must only match a whole word.
for (const t of keywordTokens) t.PATTERN = new RegExp(`${(t.PATTERN as RegExp).source}(?![A-Za-z0-9_])`);

// ---- units: a custom matcher, so the previous token decides ----
const WORD_RE = /[A-Za-z_\u00b5\u03bc][A-Za-z0-9_\u00b5\u03bc]*(?:\^-?\d+)?/y;
const COMPOUND_RE = /[/*][A-Za-z_\u00b5\u03bc][A-Za-z0-9_\u00b5\u03bc]*(?:\^-?\d+)?/y;

/**
 * A unit follows a number (any word that is not a keyword: an unknown one is reported with a
 * suggestion) or a closing parenthesis (only a unit made of known atoms). Compound units join atoms
 * with `/`, `*` and `^N` without spaces; a joined atom must be known, so `20 kV/gap` stays
 * `20 kV` divided by the name `gap`.
 */
function matchUnit(text: string, offset: number, tokens: IToken[]): CustomPatternMatcherReturn | null {
  const previous = tokens.length > 0 ? tokens[tokens.length - 1] : undefined;
  if (!previous) return null;
  const afterNumber = previous.tokenType === NumberLiteral;
  if (!afterNumber && previous.tokenType !== RParen) return null;
  WORD_RE.lastIndex = offset;
  const first = WORD_RE.exec(text);
  if (!first) return null;
  const firstAtom = first[0].replace(/\^.*$/, '');
  if (keywordWords.has(firstAtom)) return null;
  if (!afterNumber && !isUnitAtom(firstAtom)) return null;
  let end = offset + first[0].length;
  for (;;) {
    COMPOUND_RE.lastIndex = end;
    const more = COMPOUND_RE.exec(text);
    if (!more) break;
    const atom = more[0].slice(1).replace(/\^.*$/, '');
    if (!isUnitAtom(atom)) break;
    end += more[0].length;
  }
  return [text.slice(offset, end)];
}

export const Unit = createToken({
  name: 'Unit',
  pattern: { exec: matchUnit },
  line_breaks: false,
  start_chars_hint: [...'ABCDEFGHIJKLMNOPQRSTUVWXYZabcdefghijklmnopqrstuvwxyz_\u00b5\u03bc'],
  label: 'a unit',
});

// ---- punctuation ----
export const LParen = createToken({ name: 'LParen', pattern: /\(/, label: "'('" });
export const RParen = createToken({ name: 'RParen', pattern: /\)/, label: "')'" });
export const Comma = createToken({ name: 'Comma', pattern: /,/, label: "','" });
export const Equals = createToken({ name: 'Equals', pattern: /=/, label: "'='" });
export const Plus = createToken({ name: 'Plus', pattern: /\+/, categories: [AdditiveOp, BinaryOp], label: "'+'" });
export const Minus = createToken({ name: 'Minus', pattern: /-/, categories: [AdditiveOp, BinaryOp], label: "'-'" });
export const Star = createToken({ name: 'Star', pattern: /\*/, categories: [MultOp, BinaryOp], label: "'*'" });
export const Slash = createToken({ name: 'Slash', pattern: /\//, categories: [MultOp, BinaryOp], label: "'/'" });

export const allTokens: TokenType[] = [
  WhiteSpace,
  Comment,
  StringLiteral,
  UnterminatedString,
  ThreeD,
  NumberLiteral,
  Unit,
  ...keywordTokens,
  Identifier,
  LParen,
  RParen,
  Comma,
  Equals,
  Plus,
  Minus,
  Star,
  Slash,
  // categories last: they never match by themselves
  StatementKw,
  AttrName,
  FlagName,
  ShapeWord,
  KindWord,
  SpaceWord,
  PresetWord,
  AxisWord,
  PlaneWord,
  FuncName,
  AdditiveOp,
  MultOp,
  BinaryOp,
];

export const vscapeLexer = new Lexer(allTokens, { positionTracking: 'full', ensureOptimizations: true });

export interface SourceToken {
  /** Token type name: 'NumberLiteral', 'Unit', 'Identifier', 'ElectrodeKw', 'Comment', 'StringLiteral'... */
  type: string;
  /** Category names: 'StatementKw', 'AttrName', 'ShapeWord', 'FlagName', 'KindWord', 'AxisWord'... */
  categories: string[];
  text: string;
  offset: number;
  range: Range;
}

/** Every token of a text, comments included, in source order (for semantic highlighting). */
export function tokensOf(text: string): SourceToken[] {
  const lexed = vscapeLexer.tokenize(text);
  const all = [...lexed.tokens, ...(lexed.groups.comments ?? [])].sort((a, b) => a.startOffset - b.startOffset);
  return all.map((t) => ({
    type: t.tokenType.name,
    categories: (t.tokenType.CATEGORIES ?? []).map((c) => c.name),
    text: t.image,
    offset: t.startOffset,
    range: { start: { line: t.startLine! - 1, character: t.startColumn! - 1 }, end: { line: t.endLine! - 1, character: t.endColumn! } },
  }));
}
