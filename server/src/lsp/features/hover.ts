// Hover: a quantity in SI and in a convenient unit; a `let` with its value; an electrode with its
// solved potential, charge, capacitance and peak field (with where it sits and how converged it is);
// a probe with its solved potential and field.
import { MarkupKind, type Hover, type Position, type Range } from 'vscode-languageserver';
import { pathAt, type AstNode, type Expr } from '../../../../grammar/ast';
import { symbolAt, type SymbolEntry } from '../../../../grammar/symbols';
import { describeDim, evaluateUnit, siUnitOf, type Dim } from '../../../../grammar/units';
import type { Space } from '../../../../grammar/scene';
import { formatNumber, formatPoint, formatQuantity } from '../../format/quantity';
import type { DocumentState } from '../core';
import { CAUTION, electrodeFigures, quantityKindOf } from '../figures';

function markdown(lines: string[], range: Range): Hover {
  return { contents: { kind: MarkupKind.Markdown, value: lines.join('\n') }, range };
}

/** "0.15 m" in SI and "150 mm" in the unit that suits the magnitude. */
function describeValue(si: number, dim: Dim): string {
  const kind = quantityKindOf(dim);
  const siText = `${formatNumber(si, 6)}${siUnitOf(dim) ? ' ' + siUnitOf(dim) : ''}`;
  if (!kind) return siText;
  const nice = formatQuantity(si, kind, { digits: 6 });
  return nice === siText ? siText : `${siText} = ${nice}`;
}

function quantityHover(path: AstNode[]): Hover | null {
  // The innermost `value unit` around the cursor.
  let i = path.length - 1;
  while (i >= 0 && path[i].kind !== 'unit') i--;
  if (i < 0) return null;
  const node = path[i] as Extract<Expr, { kind: 'unit' }>;
  const unit = evaluateUnit(node.unit.text);
  if (!unit) return null;
  const what = describeDim(unit.dim);
  const operand = node.operand;
  if (operand?.kind === 'number') {
    const si = operand.value * unit.factor;
    return markdown([`**${operand.text} ${node.unit.text}**: ${what}`, '', describeValue(si, unit.dim)], node.range);
  }
  if (operand?.kind === 'group') {
    const numbers = operand.items.map((e) => (e.kind === 'number' ? e.value : e.kind === 'unary' && e.operand?.kind === 'number' ? (e.op === '-' ? -1 : 1) * e.operand.value : NaN));
    const inner = path[i + 2];
    const k = inner ? operand.items.indexOf(inner as Expr) : -1;
    if (k >= 0 && Number.isFinite(numbers[k])) {
      return markdown([`**component ${k + 1}**: ${what}`, '', describeValue(numbers[k] * unit.factor, unit.dim)], inner.range);
    }
    if (numbers.every(Number.isFinite) && unit.dim[0] === 1 && unit.dim[1] === 0 && unit.dim[2] === 0) {
      return markdown([`**point** in ${node.unit.text}`, '', formatPoint(numbers.map((n) => n * unit.factor))], node.range);
    }
  }
  // Anything else under a unit (an expression, a mixed tuple): what the unit itself means.
  return markdown([`**${node.unit.text}**: ${what}; 1 ${node.unit.text} = ${describeValue(unit.factor, unit.dim)}`], node.unit.range);
}

function letHover(s: SymbolEntry, range: Range): Hover {
  const lines = [`**let ${s.name}**`];
  if (!s.value) lines.push('', 'Its value cannot be worked out (see the diagnostics).');
  else if (Array.isArray(s.value.si)) {
    const dim = s.value.dim;
    const isLength = dim[0] === 1 && dim[1] === 0 && dim[2] === 0;
    lines.push('', isLength ? formatPoint(s.value.si) : `(${s.value.si.map((v) => describeValue(v, dim)).join(', ')})`);
  } else lines.push('', `${describeValue(s.value.si, s.value.dim)} (${describeDim(s.value.dim)})`);
  return markdown(lines, range);
}

function solvedNote(state: DocumentState): string {
  const solved = state.solved!;
  const stale = solved.version !== state.document.version ? ' — **stale**: the text has changed since' : '';
  const level = solved.level === 'full' ? 'refined mesh' : 'coarse mesh, refining';
  return `_solved for version ${solved.version} (${level}, ${solved.result.stats.panels} panels)${stale}_`;
}

function electrodeHover(state: DocumentState, s: SymbolEntry, range: Range): Hover {
  const lines = [`**electrode ${s.name}**`];
  const result = state.solved?.result;
  const e = result?.electrodes.find((x) => x.name === s.name);
  if (!result || !e) {
    lines.push('', state.solved ? 'Not in the last solved result.' : 'Not solved yet.');
    return markdown(lines, range);
  }
  lines.push('', ...electrodeFigures(e, result.space as Space), '', solvedNote(state), '', `_${CAUTION}_`);
  return markdown(lines, range);
}

function probeHover(state: DocumentState, s: SymbolEntry, range: Range): Hover {
  const lines = [`**probe ${s.name}**`];
  const probe = state.solved?.result.probes.find((p) => p.name === s.name);
  if (!probe || probe.points.length === 0) {
    lines.push('', 'Not solved yet.');
    return markdown(lines, range);
  }
  if (probe.points.length === 1) {
    const p = probe.points[0];
    lines.push('', `potential ${formatQuantity(p.potential, 'potential')}, field ${formatQuantity(p.fieldMagnitude, 'field')} at ${formatPoint(p.at)}`);
  } else {
    const peak = probe.points.reduce((a, b) => (b.fieldMagnitude > a.fieldMagnitude ? b : a));
    const phi = probe.points.map((p) => p.potential);
    lines.push(
      '',
      `${probe.points.length} samples; potential from ${formatQuantity(Math.min(...phi), 'potential')} to ${formatQuantity(Math.max(...phi), 'potential')}`,
      `peak field ${formatQuantity(peak.fieldMagnitude, 'field')} at ${formatPoint(peak.at)}`,
    );
  }
  lines.push('', solvedNote(state));
  return markdown(lines, range);
}

export function hover(state: DocumentState, position: Position): Hover | null {
  const symbol = symbolAt(state.analysis.symbols, position);
  if (symbol) {
    const range = [symbol.nameRange, ...symbol.references].find((r) => r.start.line === position.line && r.start.character <= position.character && position.character <= r.end.character) ?? symbol.nameRange;
    if (symbol.kind === 'let') return letHover(symbol, range);
    if (symbol.kind === 'electrode') return electrodeHover(state, symbol, range);
    if (symbol.kind === 'probe') return probeHover(state, symbol, range);
    return markdown([`**charge ${symbol.name}**`], range);
  }
  return quantityHover(pathAt(state.analysis.ast, position));
}
