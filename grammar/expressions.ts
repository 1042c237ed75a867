// Evaluation of quantities: numbers with units, `let` names, + - * /, unary minus, parentheses,
// tuples and the functions sqrt, min, max, abs. Values are SI numbers with a dimension over
// (length, potential, charge). A plain 0 fits any dimension. Mistakes become diagnostics, never throws.
import type { Expr } from './ast';
import { diagnostic } from './diagnostics';
import type { Diagnostic, Range } from './scene';
import {
  DIMENSIONLESS,
  addDim,
  applyUnit,
  closest,
  describeDim,
  evaluateUnit,
  isDimensionless,
  isUnitAtom,
  sameDim,
  scaleDim,
  splitUnit,
  subDim,
  suggestUnit,
  type Dim,
} from './units';

export interface Quantity {
  /** SI value. */
  value: number;
  dim: Dim;
  range: Range;
}

export type EvalValue = { kind: 'scalar'; q: Quantity; range: Range } | { kind: 'tuple'; items: Quantity[]; range: Range };

export interface LetBinding {
  value: EvalValue;
  /** Called for every resolved reference, for the symbol table. */
  onReference?: (range: Range) => void;
}

export interface EvalContext {
  /** Names usable at this point (lets defined earlier). */
  lets: ReadonlyMap<string, LetBinding>;
  /** Every let name of the file, so a forward use is told apart from a typo. */
  allLetNames: ReadonlySet<string>;
  /** Lets defined earlier whose value could not be evaluated (their own error is already reported). */
  failedLets: Set<string>;
  /** Names of electrodes, charges and probes, which have no value in expressions. */
  otherNames: ReadonlyMap<string, string>;
  diagnostics: Diagnostic[];
  /** How often each unit is written, for suggestions of a likely unit. */
  unitUse: Map<string, number>;
}

/** A zero written without a unit fits any dimension. */
export function isWildcardZero(q: Quantity): boolean {
  return q.value === 0 && isDimensionless(q.dim);
}

function scalar(value: number, dim: Dim, range: Range): EvalValue {
  return { kind: 'scalar', q: { value, dim, range }, range };
}

function finite(v: EvalValue | null, range: Range, ctx: EvalContext): EvalValue | null {
  if (!v) return null;
  const values = v.kind === 'scalar' ? [v.q.value] : v.items.map((q) => q.value);
  if (values.every(Number.isFinite)) return v;
  ctx.diagnostics.push(diagnostic('VS225', range, 'This expression does not give a finite number (a division by zero or an overflow).'));
  return null;
}

/** Evaluates an expression; returns null when it is broken (the reason is already in ctx.diagnostics). */
export function evaluate(e: Expr | null, ctx: EvalContext): EvalValue | null {
  if (!e) return null;
  switch (e.kind) {
    case 'number':
      return Number.isFinite(e.value) ? scalar(e.value, DIMENSIONLESS, e.range) : finite(scalar(e.value, DIMENSIONLESS, e.range), e.range, ctx);
    case 'name':
      return evaluateName(e.name, e.range, ctx);
    case 'unary': {
      const v = evaluate(e.operand, ctx);
      if (!v || e.op === '+') return v ? { ...v, range: e.range } : null;
      return mapValue(v, e.range, (q) => ({ value: 0 - q.value, dim: q.dim, range: q.range }));
    }
    case 'group': {
      const items = e.items.map((i) => evaluate(i, ctx));
      if (items.some((i) => !i)) return null;
      if (items.length === 1) return { ...items[0]!, range: e.range };
      const qs: Quantity[] = [];
      for (const item of items) {
        if (item!.kind === 'tuple') {
          ctx.diagnostics.push(diagnostic('VS226', item!.range, 'A tuple cannot contain another tuple.'));
          return null;
        }
        qs.push(item!.q);
      }
      return { kind: 'tuple', items: qs, range: e.range };
    }
    case 'unit':
      return evaluateWithUnit(e.operand, e.unit.text, e.unit.range, e.range, ctx);
    case 'binary':
      return finite(evaluateBinary(e.op, evaluate(e.left, ctx), evaluate(e.right, ctx), e.opRange, e.range, ctx), e.range, ctx);
    case 'call':
      return finite(evaluateCall(e.fn.text, e.args, e.fn.range, e.range, ctx), e.range, ctx);
  }
}

function evaluateName(name: string, range: Range, ctx: EvalContext): EvalValue | null {
  const binding = ctx.lets.get(name);
  if (binding) {
    binding.onReference?.(range);
    return binding.value.kind === 'scalar'
      ? { kind: 'scalar', q: { ...binding.value.q, range }, range }
      : { kind: 'tuple', items: binding.value.items.map((q) => ({ ...q, range })), range };
  }
  if (ctx.failedLets.has(name)) return null;
  if (ctx.allLetNames.has(name)) {
    ctx.diagnostics.push(diagnostic('VS207', range, `'${name}' is used before its let; move the let above this line.`, { name }));
    return null;
  }
  const other = ctx.otherNames.get(name);
  if (other) {
    ctx.diagnostics.push(diagnostic('VS206', range, `'${name}' is ${other === 'electrode' ? 'an' : 'a'} ${other}, not a let: only let names have a value in expressions.`, { name }));
    return null;
  }
  if (isUnitAtom(name)) {
    ctx.diagnostics.push(diagnostic('VS206', range, `'${name}' is a unit, not a name: write a number before it (e.g. 1 ${name}).`, { unit: name }));
    return null;
  }
  const near = closest(name, ctx.lets.keys());
  ctx.diagnostics.push(
    diagnostic('VS206', range, `Unknown name '${name}'.${near ? ` Did you mean '${near}'?` : ' Names are defined with let before their use.'}`, near ? { replacement: near } : undefined),
  );
  return null;
}

function evaluateWithUnit(operand: Expr | null, unitText: string, unitRange: Range, range: Range, ctx: EvalContext): EvalValue | null {
  const v = evaluate(operand, ctx);
  const unit = evaluateUnit(unitText);
  if (!unit) {
    const suggestion = suggestUnit(unitText);
    const parts = splitUnit(unitText);
    const unknown = parts?.filter((p) => !p.known).map((p) => p.atom) ?? [unitText];
    ctx.diagnostics.push(
      diagnostic(
        'VS201',
        unitRange,
        `Unknown unit '${unknown.join("', '")}'.${suggestion ? ` Did you mean '${suggestion}'?` : ' Units are atoms such as mm, kV, nC, pF joined by / * ^N.'}`,
        suggestion ? { replacement: suggestion } : undefined,
      ),
    );
    return null;
  }
  ctx.unitUse.set(unitText, (ctx.unitUse.get(unitText) ?? 0) + 1);
  if (!v) return null;
  return finite(mapValue(v, range, (q) => ({ value: applyUnit(q.value, unit), dim: addDim(q.dim, unit.dim), range: q.range })), range, ctx);
}

function mapValue(v: EvalValue, range: Range, f: (q: Quantity) => Quantity): EvalValue {
  return v.kind === 'scalar' ? { kind: 'scalar', q: { ...f(v.q), range }, range } : { kind: 'tuple', items: v.items.map(f), range };
}

function mismatch(a: Quantity, b: Quantity, opRange: Range, what: string, ctx: EvalContext): null {
  ctx.diagnostics.push(
    diagnostic('VS204', opRange, `Cannot ${what} ${describeDim(a.dim)} and ${describeDim(b.dim)}: the dimensions differ.`, {
      left: a.dim,
      right: b.dim,
    }),
  );
  return null;
}

/** a ± b: same dimension, or one side a plain zero. */
function addQ(a: Quantity, b: Quantity, sign: 1 | -1, opRange: Range, range: Range, ctx: EvalContext): Quantity | null {
  const dim = isWildcardZero(a) ? b.dim : isWildcardZero(b) ? a.dim : a.dim;
  if (!isWildcardZero(a) && !isWildcardZero(b) && !sameDim(a.dim, b.dim)) return mismatch(a, b, opRange, sign > 0 ? 'add' : 'subtract', ctx);
  return { value: a.value + sign * b.value, dim, range };
}

function evaluateBinary(op: '+' | '-' | '*' | '/', a: EvalValue | null, b: EvalValue | null, opRange: Range, range: Range, ctx: EvalContext): EvalValue | null {
  if (!a || !b) return null;
  if (op === '+' || op === '-') {
    const sign = op === '+' ? 1 : -1;
    if (a.kind === 'scalar' && b.kind === 'scalar') {
      const q = addQ(a.q, b.q, sign, opRange, range, ctx);
      return q ? { kind: 'scalar', q, range } : null;
    }
    if (a.kind === 'tuple' && b.kind === 'tuple' && a.items.length === b.items.length) {
      const items: Quantity[] = [];
      for (let i = 0; i < a.items.length; i++) {
        const q = addQ(a.items[i], b.items[i], sign, opRange, a.items[i].range, ctx);
        if (!q) return null;
        items.push(q);
      }
      return { kind: 'tuple', items, range };
    }
    ctx.diagnostics.push(diagnostic('VS226', opRange, `'${op}' needs two single values or two tuples of the same length.`));
    return null;
  }
  const combine = (x: Quantity, y: Quantity, r: Range): Quantity =>
    op === '*' ? { value: x.value * y.value, dim: addDim(x.dim, y.dim), range: r } : { value: x.value / y.value, dim: subDim(x.dim, y.dim), range: r };
  if (a.kind === 'scalar' && b.kind === 'scalar') return { kind: 'scalar', q: combine(a.q, b.q, range), range };
  if (a.kind === 'tuple' && b.kind === 'scalar') return { kind: 'tuple', items: a.items.map((q) => combine(q, b.q, q.range)), range };
  if (a.kind === 'scalar' && b.kind === 'tuple' && op === '*') return { kind: 'tuple', items: b.items.map((q) => combine(a.q, q, q.range)), range };
  ctx.diagnostics.push(diagnostic('VS226', opRange, `'${op}' between tuples is not defined: scale a tuple by a single value instead.`));
  return null;
}

function evaluateCall(fn: string, args: Expr[], fnRange: Range, range: Range, ctx: EvalContext): EvalValue | null {
  const values = args.map((a) => evaluate(a, ctx));
  if (values.some((v) => !v)) return null;
  const qs: Quantity[] = [];
  for (const v of values) {
    if (v!.kind === 'tuple') {
      ctx.diagnostics.push(diagnostic('VS226', v!.range, `${fn} takes single values, not a tuple.`));
      return null;
    }
    qs.push(v!.q);
  }
  if ((fn === 'sqrt' || fn === 'abs') && qs.length !== 1) {
    ctx.diagnostics.push(diagnostic('VS226', fnRange, `${fn} takes exactly one value; found ${qs.length}.`));
    return null;
  }
  if (qs.length === 0) {
    ctx.diagnostics.push(diagnostic('VS226', fnRange, `${fn} needs at least one value.`));
    return null;
  }
  switch (fn) {
    case 'abs':
      return scalar(Math.abs(qs[0].value), qs[0].dim, range);
    case 'sqrt': {
      const q = qs[0];
      if (q.dim.some((e) => e % 2 !== 0)) {
        ctx.diagnostics.push(diagnostic('VS226', range, `sqrt of ${describeDim(q.dim)} has no dimension in whole powers.`));
        return null;
      }
      if (q.value < 0) {
        ctx.diagnostics.push(diagnostic('VS225', range, 'sqrt of a negative value is not a real number.'));
        return null;
      }
      return scalar(Math.sqrt(q.value), scaleDim(q.dim, 0.5), range);
    }
    default: {
      // min and max: every argument of one dimension (a plain zero fits any).
      const dimOf = qs.find((q) => !isWildcardZero(q))?.dim ?? DIMENSIONLESS;
      for (const q of qs) if (!isWildcardZero(q) && !sameDim(q.dim, dimOf)) return mismatch(qs.find((x) => !isWildcardZero(x))!, q, q.range, `compare`, ctx);
      const pick = qs.reduce((best, q) => (fn === 'min' ? (q.value < best.value ? q : best) : q.value > best.value ? q : best));
      return scalar(pick.value, dimOf, range);
    }
  }
}

/** The unit most often written for a dimension in this file, or a sensible default. */
export function likelyUnit(dim: Dim, ctx: Pick<EvalContext, 'unitUse'>, fallback: string): string {
  let best = fallback;
  let count = 0;
  for (const [unit, n] of ctx.unitUse) {
    const u = evaluateUnit(unit);
    if (u && n > count && sameDim(u.dim, dim)) {
      best = unit;
      count = n;
    }
  }
  return best;
}
