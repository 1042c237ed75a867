// The parser: one CstParser instance, reused for every statement of every parse.
// The grammar is deliberately generic: every statement is a keyword, an optional name and head word,
// then `attribute value` pairs. What belongs where is decided by analysis, which gives far better
// messages ("a disc cannot be hollow") than a grammar error could.
import { CstParser, EOF, tokenMatcher, type CstNode, type IParserErrorMessageProvider, type IToken, type TokenType } from 'chevrotain';
import * as T from './lexer';
import { comparePositions, isReal, statementsFromCst, tokenRange, type Statement } from './ast';
import { diagnostic } from './diagnostics';
import type { Diagnostic } from './scene';
import { closest } from './units';

/** Readable text for a token type in our messages. */
export function describeTokenType(t: TokenType): string {
  if (t === EOF) return 'the end of the statement';
  return t.LABEL ?? t.name;
}

function describeToken(tok: IToken): string {
  if (tok.tokenType === EOF) return 'the end of the statement';
  return `'${tok.image}'`;
}

/** First tokens of an expression, said in one word in messages. */
const VALUE_STARTERS = new Set([T.AdditiveOp, T.Plus, T.Minus, T.NumberLiteral, T.Identifier, T.FuncName, T.LParen].map(describeTokenType));

function listExpected(types: TokenType[]): string {
  let labels = [...new Set(types.map(describeTokenType))];
  if (labels.includes(describeTokenType(T.NumberLiteral)) && labels.includes(describeTokenType(T.LParen))) {
    labels = [...labels.filter((l) => !VALUE_STARTERS.has(l)), 'a value (a number, a name or a tuple)'];
  }
  if (labels.length <= 1) return labels[0] ?? 'something else';
  if (labels.length > 5) return labels.slice(0, 5).join(', ') + ' or more';
  return labels.slice(0, -1).join(', ') + ' or ' + labels[labels.length - 1];
}

const UNEXPECTED = 'Unexpected ';
function unexpectedMessage(tok: IToken): string {
  return `${UNEXPECTED}${describeToken(tok)}: expected an attribute or the end of the statement.`;
}

const messages: IParserErrorMessageProvider = {
  buildMismatchTokenMessage({ expected, actual }) {
    if (expected === T.Identifier && T.keywordWords.has(actual.image)) {
      return `Expected a name but found '${actual.image}', a reserved word; choose another name.`;
    }
    if (expected === EOF) return unexpectedMessage(actual);
    return `Expected ${describeTokenType(expected)} but found ${describeToken(actual)}.`;
  },
  buildNotAllInputParsedMessage({ firstRedundant }) {
    return unexpectedMessage(firstRedundant);
  },
  buildNoViableAltMessage({ expectedPathsPerAlt, actual }) {
    const firsts = expectedPathsPerAlt.flatMap((alt) => alt.map((path) => path[0])).filter((t): t is TokenType => !!t);
    return `Expected ${listExpected(firsts)} but found ${describeToken(actual[0])}.`;
  },
  buildEarlyExitMessage({ expectedIterationPaths, actual }) {
    const firsts = expectedIterationPaths.map((p) => p[0]).filter((t): t is TokenType => !!t);
    return `Expected ${listExpected(firsts)} but found ${describeToken(actual[0])}.`;
  },
};

class VscapeParser extends CstParser {
  constructor() {
    super(T.allTokens, { recoveryEnabled: true, errorMessageProvider: messages, maxLookahead: 1 });
    this.performSelfAnalysis();
  }

  /** One or more statements: the tokens of one chunk (see chunkStatements). */
  public statements = this.RULE('statements', () => {
    this.MANY(() => this.SUBRULE(this.statement));
  });

  public statement = this.RULE('statement', () => {
    this.OR([
      { ALT: () => this.SUBRULE(this.sceneStatement) },
      { ALT: () => this.SUBRULE(this.spaceStatement) },
      { ALT: () => this.SUBRULE(this.mediumStatement) },
      { ALT: () => this.SUBRULE(this.meshStatement) },
      { ALT: () => this.SUBRULE(this.letStatement) },
      { ALT: () => this.SUBRULE(this.electrodeStatement) },
      { ALT: () => this.SUBRULE(this.groundStatement) },
      { ALT: () => this.SUBRULE(this.chargeStatement) },
      { ALT: () => this.SUBRULE(this.sliceStatement) },
      { ALT: () => this.SUBRULE(this.probeStatement) },
      { ALT: () => this.SUBRULE(this.limitStatement) },
      { ALT: () => this.SUBRULE(this.sweepStatement) },
    ]);
  });

  private sceneStatement = this.RULE('sceneStatement', () => {
    this.CONSUME(T.SceneKw);
    this.OPTION(() => this.CONSUME(T.StringLiteral));
  });

  private spaceStatement = this.RULE('spaceStatement', () => {
    this.CONSUME(T.SpaceKw);
    this.OPTION(() => this.OR([{ ALT: () => this.CONSUME(T.SpaceWord) }, { ALT: () => this.CONSUME(T.Identifier) }]));
  });

  private mediumStatement = this.RULE('mediumStatement', () => {
    this.CONSUME(T.MediumKw);
    this.OPTION(() => this.CONSUME(T.Identifier));
    this.attributeList();
  });

  private meshStatement = this.RULE('meshStatement', () => {
    this.CONSUME(T.MeshKw);
    this.OPTION(() => this.CONSUME(T.PresetWord));
    this.attributeList();
  });

  private letStatement = this.RULE('letStatement', () => {
    this.CONSUME(T.LetKw);
    this.CONSUME(T.Identifier);
    this.CONSUME(T.Equals);
    this.SUBRULE(this.expression);
  });

  private electrodeStatement = this.RULE('electrodeStatement', () => {
    this.CONSUME(T.ElectrodeKw);
    this.CONSUME(T.Identifier);
    this.SUBRULE(this.shapeWord);
    this.MANY(() => this.SUBRULE(this.pointList));
    this.attributeList();
  });

  private groundStatement = this.RULE('groundStatement', () => {
    this.CONSUME(T.GroundKw);
    this.CONSUME(T.PlaneKw);
    this.attributeList();
  });

  private chargeStatement = this.RULE('chargeStatement', () => {
    this.CONSUME(T.ChargeKw);
    this.CONSUME(T.Identifier);
    this.SUBRULE(this.kindWord);
    this.attributeList();
  });

  private sliceStatement = this.RULE('sliceStatement', () => {
    this.CONSUME(T.SliceKw);
    this.OPTION(() => this.CONSUME(T.PlaneWord));
    this.attributeList();
  });

  private probeStatement = this.RULE('probeStatement', () => {
    this.CONSUME(T.ProbeKw);
    this.CONSUME(T.Identifier);
    this.SUBRULE(this.kindWord);
    this.attributeList();
  });

  private limitStatement = this.RULE('limitStatement', () => {
    this.CONSUME(T.LimitKw);
    this.attributeList();
  });

  private sweepStatement = this.RULE('sweepStatement', () => {
    this.CONSUME(T.SweepKw);
    this.CONSUME(T.Identifier);
    this.attributeList();
  });

  /** A shape word; a plain name is accepted so analysis can suggest the right word. */
  private shapeWord = this.RULE('shapeWord', () => {
    this.OR([{ ALT: () => this.CONSUME(T.ShapeWord) }, { ALT: () => this.CONSUME(T.Identifier) }]);
  });

  /** A charge or probe kind; a plain name is accepted so analysis can suggest the right word. */
  private kindWord = this.RULE('kindWord', () => {
    this.OR([{ ALT: () => this.CONSUME(T.KindWord) }, { ALT: () => this.CONSUME(T.Identifier) }]);
  });

  /** A point of a `revolve` or `polygon` profile: a tuple with an optional unit. */
  private pointList = this.RULE('pointList', () => {
    this.SUBRULE(this.group);
    this.OPTION(() => this.CONSUME(T.Unit));
  });

  /** The attributes that end every statement (a helper, not a rule, to keep the tree shallow). */
  private attributeList(): void {
    this.MANY9(() => this.SUBRULE9(this.attribute));
  }

  /** `hollow`, `floating`, or `name value?` where the value is an axis (`normal z`), an axis equation (`at y = 0`) or an expression. */
  private attribute = this.RULE('attribute', () => {
    this.OR([
      { ALT: () => this.CONSUME(T.FlagName) },
      {
        ALT: () => {
          this.OR2([{ ALT: () => this.CONSUME(T.AttrName) }, { ALT: () => this.CONSUME(T.Identifier) }]);
          this.OPTION(() =>
            this.OR3([
              {
                ALT: () => {
                  this.CONSUME(T.AxisWord);
                  this.OPTION2(() => {
                    this.CONSUME(T.Equals);
                    this.SUBRULE(this.expression);
                  });
                },
              },
              { ALT: () => this.SUBRULE2(this.expression) },
            ]),
          );
        },
      },
    ]);
  });

  /** Operands joined by binary operators; precedence is applied when the AST is built (grammar/ast.ts). */
  public expression = this.RULE('expression', () => {
    this.SUBRULE(this.atom);
    this.MANY(() => {
      this.CONSUME(T.BinaryOp);
      this.SUBRULE2(this.atom);
    });
  });

  /** A signed operand, or a number, name, call or group with an optional unit. */
  private atom = this.RULE('atom', () => {
    this.OR([
      {
        ALT: () => {
          this.CONSUME(T.AdditiveOp);
          this.SUBRULE(this.atom);
        },
      },
      {
        ALT: () => {
          this.OR2([
            { ALT: () => this.CONSUME(T.NumberLiteral) },
            { ALT: () => this.CONSUME(T.Identifier) },
            {
              ALT: () => {
                this.CONSUME(T.FuncName);
                this.SUBRULE(this.group);
              },
            },
            { ALT: () => this.SUBRULE2(this.group) },
          ]);
          this.OPTION(() => this.CONSUME(T.Unit));
        },
      },
    ]);
  });

  /** `( expr, expr, ... )`: a parenthesised expression, a tuple, or a function's arguments. */
  private group = this.RULE('group', () => {
    this.CONSUME(T.LParen);
    this.SUBRULE(this.expression);
    this.MANY(() => {
      this.CONSUME(T.Comma);
      this.SUBRULE2(this.expression);
    });
    this.CONSUME(T.RParen);
  });
}

/** The single parser instance; `parseStatements` resets its input for each chunk. */
export const parser = new VscapeParser();

export interface ChunkParse {
  cst: CstNode;
  errors: { message: string; token: IToken; previous: IToken | undefined; kind: string }[];
}

/** Parses the tokens of one chunk (one or more statements). */
export function parseStatements(tokens: IToken[]): ChunkParse {
  parser.input = tokens;
  const cst = parser.statements();
  const errors = parser.errors.map((e) => ({
    message: e.message,
    token: e.token,
    previous: (e as { previousToken?: IToken }).previousToken,
    kind: e.name,
  }));
  return { cst, errors };
}

// ---- whole-file parsing: split into statements, parse each, collect diagnostics ----

/** Statement keywords, which start a new statement when they begin a line. */
const STATEMENT_WORDS = ['scene', 'space', 'medium', 'mesh', 'let', 'electrode', 'ground', 'charge', 'slice', 'probe', 'limit', 'sweep'];

function startsLine(tokens: IToken[], i: number): boolean {
  return i === 0 || tokens[i].startLine! > tokens[i - 1].endLine!;
}

/**
 * Splits the tokens into chunks, each starting at a statement keyword at the start of a line, so a
 * mistake in one statement never hides the next. `charge` at the start of a line continues an
 * electrode (its drive, `charge Q`) unless it is followed by a fresh name and a kind; a word at the
 * start of a line that is one typo away from a statement keyword starts a (broken) chunk of its own.
 */
export function chunkStatements(tokens: IToken[]): IToken[][] {
  const chunks: IToken[][] = [];
  const letNames = new Set<string>();
  let current: IToken[] = [];
  for (let i = 0; i < tokens.length; i++) {
    const t = tokens[i];
    if (t.tokenType === T.LetKw && tokens[i + 1]?.tokenType === T.Identifier) letNames.add(tokens[i + 1].image);
    let starts = false;
    if (startsLine(tokens, i) && current.length > 0) {
      if (t.tokenType === T.ChargeKw) starts = !continuesElectrode(tokens, i, current, letNames);
      else if (tokenMatcher(t, T.StatementKw)) starts = true;
      else if (t.tokenType === T.Identifier && !letNames.has(t.image)) starts = nearStatementWord(t.image) !== null && tokens[i + 1]?.tokenType === T.Identifier;
    }
    if (starts) {
      chunks.push(current);
      current = [];
    }
    current.push(t);
  }
  if (current.length > 0) chunks.push(current);
  return chunks;
}

function continuesElectrode(tokens: IToken[], i: number, current: IToken[], letNames: Set<string>): boolean {
  if (current[0].tokenType !== T.ElectrodeKw) return false;
  const next = tokens[i + 1];
  if (!next || next.startLine !== tokens[i].startLine) return false;
  if (next.tokenType !== T.Identifier) return true;
  return letNames.has(next.image) && !tokenMatcher(tokens[i + 2] ?? next, T.KindWord);
}

/** The statement keyword one typo away from a word, or null. */
export function nearStatementWord(word: string): string | null {
  if (word.length < 3) return null;
  return closest(word, STATEMENT_WORDS);
}

interface ChunkResult {
  statements: Statement[];
  diagnostics: Diagnostic[];
}

/**
 * Parsed chunks by position and text. A keystroke changes one statement, so the others come from
 * here (a chunk's parse depends only on its own text and where it starts). Bounded: cleared when full.
 */
const chunkCache = new Map<string, ChunkResult>();
const CHUNK_CACHE_LIMIT = 20_000;

/** Forgets every cached chunk (for benchmarks that time a cold parse). */
export function clearParseCache(): void {
  chunkCache.clear();
}

function parseChunk(text: string, chunk: IToken[]): ChunkResult {
  const first = chunk[0];
  const last = chunk[chunk.length - 1];
  const key = `${first.startLine}:${first.startColumn}:${text.slice(first.startOffset, last.endOffset! + 1)}`;
  const hit = chunkCache.get(key);
  if (hit) return hit;
  const parsed = parseStatements(chunk);
  const diagnostics: Diagnostic[] = [];
  const seen = new Set<string>();
  for (const e of parsed.errors) {
    const at = isReal(e.token) ? e.token : last;
    const range = tokenRange(at);
    const where = `${range.start.line}:${range.start.character}`;
    if (seen.has(where)) continue;
    seen.add(where);
    const code = e.kind === 'NotAllInputParsedException' || e.message.startsWith(UNEXPECTED) ? 'VS105' : 'VS103';
    diagnostics.push(diagnostic(code, range, e.message));
  }
  const statements = statementsFromCst(parsed.cst);
  // A statement the parser had to repair is marked, so analysis does not pile its own errors on top.
  for (const d of diagnostics) {
    const owner = statements.filter((s) => comparePositions(s.range.start, d.range.start) <= 0).pop() ?? statements[0];
    if (owner) owner.broken = true;
  }
  for (const s of statements) {
    if (s.title) for (const r of s.title.badEscapes) diagnostics.push(diagnostic('VS106', r, 'Unknown escape: strings allow only \\" and \\\\.'));
  }
  const result = { statements, diagnostics };
  if (chunkCache.size >= CHUNK_CACHE_LIMIT) chunkCache.clear();
  chunkCache.set(key, result);
  return result;
}

export interface ParsedText {
  statements: Statement[];
  diagnostics: Diagnostic[];
  /** Tokens handed to the parser (no comments, no unterminated strings). */
  tokens: IToken[];
  comments: IToken[];
}

/** Lexes and parses a whole file; never throws for any text. The statements are shared with a cache: treat them as read-only. */
export function parseText(text: string): ParsedText {
  const lexed = T.vscapeLexer.tokenize(text);
  const diagnostics: Diagnostic[] = [];
  for (const e of lexed.errors) {
    const line = (e.line ?? 1) - 1;
    const character = (e.column ?? 1) - 1;
    const ch = text.substr(e.offset, 1);
    diagnostics.push(
      diagnostic('VS101', { start: { line, character }, end: { line, character: character + Math.max(1, e.length) } }, `Unexpected character '${ch}'${e.length > 1 ? ` (and ${e.length - 1} more)` : ''}: not part of the language.`),
    );
  }
  const tokens: IToken[] = [];
  for (const t of lexed.tokens) {
    if (t.tokenType === T.UnterminatedString) {
      diagnostics.push(diagnostic('VS102', tokenRange(t), 'This string has no closing quote; strings end on the same line.'));
    } else tokens.push(t);
  }
  const statements: Statement[] = [];
  for (const chunk of chunkStatements(tokens)) {
    const first = chunk[0];
    if (!tokenMatcher(first, T.StatementKw)) {
      const near = first.tokenType === T.Identifier ? nearStatementWord(first.image) : null;
      const message = near
        ? `Unknown statement '${first.image}'. Did you mean '${near}'?`
        : `'${first.image}' does not start a statement; a statement begins with a keyword such as electrode, charge, let or slice.`;
      diagnostics.push(diagnostic('VS104', tokenRange(first), message, near ? { replacement: near } : undefined));
      continue;
    }
    const parsed = parseChunk(text, chunk);
    diagnostics.push(...parsed.diagnostics.map((d) => ({ ...d })));
    statements.push(...parsed.statements);
  }
  return { statements, diagnostics, tokens, comments: lexed.groups.comments ?? [] };
}
