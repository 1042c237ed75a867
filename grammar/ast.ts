// The syntax tree of a scene, with an LSP range (0-based line and character) on every node.
// Built from the parser's CST; every child may be missing because error recovery leaves holes.
import { EOF, type CstNode, type IToken } from 'chevrotain';
import type { Position, Range } from './scene';

export type StatementKind =
  | 'scene'
  | 'space'
  | 'medium'
  | 'mesh'
  | 'let'
  | 'electrode'
  | 'ground'
  | 'charge'
  | 'slice'
  | 'probe'
  | 'limit'
  | 'sweep';

/** A single word: a keyword, a name, a shape, an attribute name, a unit, an axis. */
export interface Word {
  kind: 'word';
  role: 'keyword' | 'name' | 'head' | 'attribute' | 'unit' | 'axis' | 'function';
  text: string;
  range: Range;
}

export interface StringNode {
  kind: 'string';
  /** The text between the quotes with escapes resolved. */
  value: string;
  range: Range;
  /** Escapes other than \" and \\ (reported by the parser). */
  badEscapes: Range[];
}

export type Expr =
  | { kind: 'number'; value: number; text: string; range: Range }
  | { kind: 'name'; name: string; range: Range }
  | { kind: 'unary'; op: '+' | '-'; operand: Expr | null; range: Range }
  | { kind: 'binary'; op: '+' | '-' | '*' | '/'; left: Expr | null; right: Expr | null; opRange: Range; range: Range }
  | { kind: 'call'; fn: Word; args: Expr[]; range: Range }
  /** `( a )` or the tuple `( a, b, c )`. */
  | { kind: 'group'; items: Expr[]; range: Range }
  /** A number or group followed by a unit: `150 mm`, `(0, 0, 300) mm`. */
  | { kind: 'unit'; operand: Expr | null; unit: Word; range: Range };

/** `normal z` or `at y = 0`. */
export interface AxisValue {
  kind: 'axis';
  axis: Word;
  expr: Expr | null;
  /** True when `=` was written. */
  equals: boolean;
  range: Range;
}

export type Value = Expr | AxisValue;

export interface Attribute {
  kind: 'attribute';
  name: Word;
  value: Value | null;
  range: Range;
}

export interface Statement {
  kind: 'statement';
  type: StatementKind;
  keyword: Word;
  /** The statement's own name (`let NAME`, `electrode NAME`...). */
  name: Word | null;
  /** The shape, kind, space mode, plane, medium name or mesh preset right after the keyword (and name). */
  head: Word | null;
  /** `scene "Title"`. */
  title: StringNode | null;
  /** Points of `revolve P P P` and `polygon P P P`. */
  points: Expr[];
  /** `let NAME = EXPR`. */
  value: Expr | null;
  attributes: Attribute[];
  range: Range;
  /** True when the parser recovered from a syntax error inside this statement. */
  broken: boolean;
}

export interface SceneAst {
  kind: 'scene';
  statements: Statement[];
  range: Range;
}

export type AstNode = SceneAst | Statement | Attribute | Word | StringNode | Expr | AxisValue;

// ---- ranges ----

export function tokenRange(t: IToken): Range {
  return {
    start: { line: t.startLine! - 1, character: t.startColumn! - 1 },
    end: { line: t.endLine! - 1, character: t.endColumn! },
  };
}

export function spanRange(a: Range, b: Range): Range {
  return { start: a.start, end: b.end };
}

export function comparePositions(a: Position, b: Position): number {
  return a.line !== b.line ? a.line - b.line : a.character - b.character;
}

export function containsPosition(r: Range, p: Position): boolean {
  return comparePositions(r.start, p) <= 0 && comparePositions(p, r.end) <= 0;
}

/** A token that is really in the text (error recovery inserts virtual ones). */
export function isReal(t: IToken | undefined): t is IToken {
  return !!t && t.tokenType !== EOF && !t.isInsertedInRecovery && Number.isFinite(t.startOffset) && Number.isFinite(t.startLine);
}

// ---- CST → AST ----

type Children = Record<string, (CstNode | IToken)[] | undefined>;

function tok(ctx: Children, name: string, i = 0): IToken | undefined {
  const t = ctx[name]?.[i] as IToken | undefined;
  return isReal(t) ? t : undefined;
}
function toks(ctx: Children, name: string): IToken[] {
  return ((ctx[name] ?? []) as IToken[]).filter(isReal);
}
function node(ctx: Children, name: string, i = 0): Children | undefined {
  return (ctx[name]?.[i] as CstNode | undefined)?.children as Children | undefined;
}
function nodes(ctx: Children, name: string): Children[] {
  return ((ctx[name] ?? []) as CstNode[]).map((n) => n.children as Children);
}

function word(t: IToken | undefined, role: Word['role']): Word | null {
  return t ? { kind: 'word', role, text: t.image, range: tokenRange(t) } : null;
}

/** Unescapes `\"` and `\\`; other escapes are kept literally and reported. */
function stringNode(t: IToken): StringNode {
  const range = tokenRange(t);
  const inner = t.image.slice(1, -1);
  const badEscapes: Range[] = [];
  let value = '';
  for (let i = 0; i < inner.length; i++) {
    const c = inner[i];
    if (c === '\\' && i + 1 < inner.length) {
      const next = inner[i + 1];
      if (next === '"' || next === '\\') value += next;
      else {
        value += c + next;
        const at = range.start.character + 1 + i;
        badEscapes.push({ start: { line: range.start.line, character: at }, end: { line: range.start.line, character: at + 2 } });
      }
      i++;
    } else value += c;
  }
  return { kind: 'string', value, range, badEscapes };
}

/** The range from `first` to the furthest end among the given ranges. */
function extend(first: Range, rest: (Range | null | undefined)[]): Range {
  let end = first.end;
  for (const r of rest) if (r && comparePositions(r.end, end) > 0) end = r.end;
  return { start: first.start, end };
}

function expression(ctx: Children | undefined): Expr | null {
  if (!ctx) return null;
  const atoms = ((ctx.atom ?? []) as CstNode[]).map((a) => atom(a.children as Children));
  const ops = (ctx.BinaryOp ?? []) as IToken[];
  // Precedence: * and / bind tighter than + and -; both associate to the left.
  const terms: (Expr | null)[] = [atoms[0] ?? null];
  const addOps: IToken[] = [];
  for (let i = 0; i < ops.length; i++) {
    const right = atoms[i + 1] ?? null;
    if (ops[i].image === '*' || ops[i].image === '/') terms[terms.length - 1] = fold([terms[terms.length - 1], right], [ops[i]]);
    else {
      addOps.push(ops[i]);
      terms.push(right);
    }
  }
  return fold(terms, addOps);
}

/** Left-associative chain `t0 op0 t1 op1 t2 ...`. */
function fold(terms: (Expr | null)[], ops: IToken[]): Expr | null {
  let acc = terms[0] ?? null;
  for (let i = 0; i < ops.length; i++) {
    const op = ops[i];
    const right = terms[i + 1] ?? null;
    if (!isReal(op)) {
      acc = acc ?? right;
      continue;
    }
    const opRange = tokenRange(op);
    const range = spanRange(acc?.range ?? opRange, right?.range ?? opRange);
    acc = { kind: 'binary', op: op.image as '+' | '-' | '*' | '/', left: acc, right, opRange, range };
  }
  return acc;
}

function atom(ctx: Children): Expr | null {
  const sign = tok(ctx, 'AdditiveOp');
  if (sign) {
    const inner = node(ctx, 'atom');
    const operand = inner ? atom(inner) : null;
    const opRange = tokenRange(sign);
    return { kind: 'unary', op: sign.image as '+' | '-', operand, range: spanRange(opRange, operand?.range ?? opRange) };
  }
  return withUnit(primary(ctx), tok(ctx, 'Unit'));
}

function withUnit(operand: Expr | null, unitToken: IToken | undefined): Expr | null {
  const unit = word(unitToken, 'unit');
  if (!unit) return operand;
  return { kind: 'unit', operand, unit, range: spanRange(operand?.range ?? unit.range, unit.range) };
}

function primary(ctx: Children): Expr | null {
  const num = tok(ctx, 'NumberLiteral');
  if (num) return { kind: 'number', value: Number(num.image), text: num.image, range: tokenRange(num) };
  const id = tok(ctx, 'Identifier');
  if (id) return { kind: 'name', name: id.image, range: tokenRange(id) };
  const fnTok = tok(ctx, 'FuncName');
  const g = node(ctx, 'group');
  if (fnTok) {
    const fn = word(fnTok, 'function')!;
    const inner = g ? group(g) : null;
    const args = inner?.kind === 'group' ? inner.items : [];
    return { kind: 'call', fn, args, range: extend(fn.range, [inner?.range]) };
  }
  return g ? group(g) : null;
}

function group(ctx: Children): Expr | null {
  const items = nodes(ctx, 'expression').map(expression).filter((e): e is Expr => !!e);
  const open = tok(ctx, 'LParen');
  const close = tok(ctx, 'RParen');
  const first = open ? tokenRange(open) : items[0]?.range;
  if (!first) return null;
  return { kind: 'group', items, range: extend(first, [...items.map((i) => i.range), close ? tokenRange(close) : null]) };
}

/** The value part of an attribute's children. */
function value(ctx: Children): Value | null {
  const axisTok = tok(ctx, 'AxisWord');
  if (axisTok) {
    const axis = word(axisTok, 'axis')!;
    const expr = expression(node(ctx, 'expression'));
    const equals = !!tok(ctx, 'Equals');
    return { kind: 'axis', axis, expr, equals, range: spanRange(axis.range, expr?.range ?? axis.range) };
  }
  return expression(node(ctx, 'expression'));
}

function attribute(ctx: Children): Attribute | null {
  const nameTok = tok(ctx, 'FlagName') ?? tok(ctx, 'AttrName') ?? tok(ctx, 'Identifier');
  if (!nameTok) return null;
  const name = word(nameTok, 'attribute')!;
  const v = value(ctx);
  return { kind: 'attribute', name, value: v, range: spanRange(name.range, v?.range ?? name.range) };
}

const STATEMENT_RULES: Record<string, StatementKind> = {
  sceneStatement: 'scene',
  spaceStatement: 'space',
  mediumStatement: 'medium',
  meshStatement: 'mesh',
  letStatement: 'let',
  electrodeStatement: 'electrode',
  groundStatement: 'ground',
  chargeStatement: 'charge',
  sliceStatement: 'slice',
  probeStatement: 'probe',
  limitStatement: 'limit',
  sweepStatement: 'sweep',
};

function statement(cst: CstNode): Statement | null {
  const ctx = cst.children as Children;
  for (const rule in STATEMENT_RULES) {
    const inner = node(ctx, rule);
    if (!inner) continue;
    const type = STATEMENT_RULES[rule];
    const keywordTok = ((inner[Object.keys(inner).find((k) => k.endsWith('Kw') && k !== 'PlaneKw') ?? ''] ?? []) as IToken[])[0];
    if (!isReal(keywordTok)) return null;
    const keyword = word(keywordTok, 'keyword')!;
    const headCtx = node(inner, 'shapeWord') ?? node(inner, 'kindWord');
    let head: Word | null = null;
    let name: Word | null = null;
    if (headCtx) {
      head = word(tok(headCtx, 'ShapeWord') ?? tok(headCtx, 'KindWord') ?? tok(headCtx, 'Identifier'), 'head');
      name = word(tok(inner, 'Identifier'), 'name');
    } else if (type === 'medium' || type === 'space') {
      head = word(tok(inner, 'Identifier') ?? tok(inner, 'SpaceWord'), 'head');
    } else if (type === 'mesh') {
      head = word(tok(inner, 'PresetWord'), 'head');
    } else if (type === 'slice') {
      head = word(tok(inner, 'PlaneWord'), 'head');
    } else if (type === 'ground') {
      head = word(tok(inner, 'PlaneKw'), 'keyword');
    } else {
      name = word(tok(inner, 'Identifier'), 'name');
    }
    const titleTok = tok(inner, 'StringLiteral');
    const title = titleTok ? stringNode(titleTok) : null;
    const points = nodes(inner, 'pointList')
      .map((p) => {
        const g = node(p, 'group');
        return withUnit(g ? group(g) : null, tok(p, 'Unit'));
      })
      .filter((e): e is Expr => !!e);
    const letValue = type === 'let' ? expression(node(inner, 'expression')) : null;
    const attributes = nodes(inner, 'attribute').map(attribute).filter((a): a is Attribute => !!a);
    const range = extend(keyword.range, [name?.range, head?.range, title?.range, ...points.map((p) => p.range), letValue?.range, ...attributes.map((a) => a.range), ...toks(inner, 'Identifier').map(tokenRange), ...toks(inner, 'Equals').map(tokenRange), ...toks(inner, 'PlaneKw').map(tokenRange)]);
    return { kind: 'statement', type, keyword, name, head, title, points, value: letValue, attributes, range, broken: false };
  }
  return null;
}

/** The statements of one parsed chunk. */
export function statementsFromCst(cst: CstNode): Statement[] {
  const ctx = cst.children as Children;
  return ((ctx.statement ?? []) as CstNode[]).map(statement).filter((s): s is Statement => !!s);
}

// ---- finding nodes ----

function childrenOf(n: AstNode): AstNode[] {
  switch (n.kind) {
    case 'scene':
      return n.statements;
    case 'statement': {
      const out: AstNode[] = [n.keyword];
      if (n.name) out.push(n.name);
      if (n.head) out.push(n.head);
      if (n.title) out.push(n.title);
      out.push(...n.points);
      if (n.value) out.push(n.value);
      out.push(...n.attributes);
      return out;
    }
    case 'attribute':
      return n.value ? [n.name, n.value] : [n.name];
    case 'axis':
      return n.expr ? [n.axis, n.expr] : [n.axis];
    case 'unary':
      return n.operand ? [n.operand] : [];
    case 'binary':
      return [n.left, n.right].filter((e): e is Expr => !!e);
    case 'call':
      return [n.fn, ...n.args];
    case 'group':
      return n.items;
    case 'unit':
      return n.operand ? [n.operand, n.unit] : [n.unit];
    default:
      return [];
  }
}

/** The chain of nodes under a position, outermost (the scene) first and innermost last. */
export function pathAt(ast: SceneAst, position: Position): AstNode[] {
  const path: AstNode[] = [ast];
  let current: AstNode = ast;
  for (;;) {
    const next: AstNode | undefined = childrenOf(current).find((c) => containsPosition(c.range, position));
    if (!next) return path;
    path.push(next);
    current = next;
  }
}

/** The innermost node under a position (the scene itself when nothing narrower is there). */
export function nodeAt(ast: SceneAst, position: Position): AstNode {
  const path = pathAt(ast, position);
  return path[path.length - 1];
}

/** Visits every expression below a node, outer before inner. */
export function forEachExpr(n: AstNode, f: (e: Expr) => void): void {
  for (const c of childrenOf(n)) {
    if (c.kind !== 'word' && c.kind !== 'string' && c.kind !== 'attribute' && c.kind !== 'axis' && c.kind !== 'statement' && c.kind !== 'scene') f(c);
    forEachExpr(c, f);
  }
}
