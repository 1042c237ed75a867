// Completion by context, read from the tokens before the cursor:
// statement keywords at the start of a line; shapes after `electrode NAME`; kinds after
// `charge NAME` and `probe NAME`; the attributes a statement still lacks (and a drive when it has
// none); units whose dimension fits the attribute after a number; `let` names and functions where
// a value goes; axes, media, spaces, presets and planes where those go.
import { CompletionItemKind, type CompletionItem, type Position, type Range } from 'vscode-languageserver';
import {
  CHARGE_KINDS,
  DRIVES,
  MEDIA,
  MESH_PRESETS,
  PROBE_KINDS,
  SHAPES,
  SLICE_PLANES,
  SPACES,
  STATEMENTS,
  STATEMENT_ATTRIBUTES,
  type Want,
} from '../../../../grammar/analyze';
import type { Space } from '../../../../grammar/scene';
import { sameDim, unitTable, type Dim } from '../../../../grammar/units';
import type { DocumentState } from '../core';
import { isComment, lex, statementsOf, type Token } from '../tokens';

export const completionTriggerCharacters = [' ', '('];

const STATEMENT_DOCS: Record<string, string> = {
  scene: 'scene "Title": the scene title',
  space: 'space 3d | axisymmetric | planar',
  medium: 'medium NAME | medium permittivity X [strength Q]',
  mesh: 'mesh size Q | mesh coarse | normal | fine',
  let: 'let NAME = EXPR: a named quantity',
  electrode: 'electrode NAME SHAPE ATTR...: a conductor and its drive',
  ground: 'ground plane at x|y|z = Q: a grounded plane',
  charge: 'charge NAME point | line | ring ATTR...: a free charge',
  slice: 'slice PLANE at AXIS = Q from (A, B) to (A, B) [cells N]: a view plane',
  probe: 'probe NAME point at P | line from P to P [samples N]',
  limit: 'limit field Q: the peak field must stay below Q',
  sweep: 'sweep NAME from A to B steps N (reserved)',
};

const LENGTH: Dim = [1, 0, 0];
const WANT_DIM: Partial<Record<Want, Dim>> = {
  length: LENGTH,
  point: LENGTH,
  axisPoint: LENGTH,
  plane2: LENGTH,
  size2: LENGTH,
  size3: LENGTH,
  axisEq: LENGTH,
  potential: [0, 1, 0],
  charge: [0, 0, 1],
  lineCharge: [-1, 0, 1],
  field: [-1, 1, 0],
};
/** Compound units offered beside the atoms, by dimension (common in high-voltage practice). */
const COMPOUNDS: { unit: string; dim: Dim }[] = [
  { unit: 'kV/mm', dim: [-1, 1, 0] },
  { unit: 'kV/cm', dim: [-1, 1, 0] },
  { unit: 'MV/m', dim: [-1, 1, 0] },
  { unit: 'V/m', dim: [-1, 1, 0] },
  { unit: 'nC/m', dim: [-1, 0, 1] },
  { unit: 'pC/m', dim: [-1, 0, 1] },
  { unit: 'uC/m', dim: [-1, 0, 1] },
  { unit: 'C/m', dim: [-1, 0, 1] },
  { unit: 'C/m^2', dim: [-2, 0, 1] },
];
const FUNCTIONS = ['sqrt', 'min', 'max', 'abs'];
const AXES = ['x', 'y', 'z'];

/** The attributes a statement takes, with what each wants (optional ones end in `?`). */
function attributeSpec(statement: Token[], space: Space): Record<string, Want> {
  const keyword = statement[0]?.image;
  const head = statement[2]?.image ?? '';
  if (keyword === 'electrode') {
    const spec = SHAPES[space]?.[head];
    if (!spec) return {};
    const out: Record<string, Want> = { ...spec.attrs, potential: 'potential', charge: space === 'planar' ? 'lineCharge' : 'charge' };
    return out;
  }
  if (keyword === 'charge') return CHARGE_KINDS[space]?.[head] ?? {};
  if (keyword === 'probe') return PROBE_KINDS[head] ?? {};
  return STATEMENT_ATTRIBUTES[keyword] ?? {};
}

function wantOf(statement: Token[], space: Space, attribute: string): Want | undefined {
  const spec = attributeSpec(statement, space);
  return spec[attribute] ?? spec[attribute + '?'];
}

function item(label: string, kind: CompletionItemKind, range: Range, detail?: string, sortText?: string): CompletionItem {
  return { label, kind, textEdit: { range, newText: label }, ...(detail ? { detail } : {}), ...(sortText ? { sortText } : {}) };
}

function unitItems(dim: Dim | undefined, range: Range): CompletionItem[] {
  const items: CompletionItem[] = [];
  for (const [symbol, atom] of unitTable) {
    if (!dim || sameDim(atom.dim, dim)) items.push(item(symbol, CompletionItemKind.Unit, range, atom.quantity, `0${items.length.toString().padStart(3, '0')}`));
  }
  for (const c of COMPOUNDS) {
    if (!dim || sameDim(c.dim, dim)) items.push(item(c.unit, CompletionItemKind.Unit, range, 'compound unit', `1${c.unit}`));
  }
  return items;
}

function letItems(state: DocumentState, before: Position, range: Range): CompletionItem[] {
  return state.analysis.symbols.entries
    .filter((s) => s.kind === 'let' && s.nameRange.start.line < before.line)
    .map((s) => item(s.name, CompletionItemKind.Variable, range, 'let', `0${s.name}`));
}

function valueItems(state: DocumentState, position: Position, range: Range, want: Want | undefined): CompletionItem[] {
  if (want === 'axis' || want === 'axisEq') return AXES.map((a) => item(a, CompletionItemKind.EnumMember, range, 'axis'));
  return [...letItems(state, position, range), ...FUNCTIONS.map((f) => item(f, CompletionItemKind.Function, range, 'function', `1${f}`))];
}

const WORDLIKE = /^[A-Za-z_µμ]/;

export function completions(state: DocumentState, position: Position): CompletionItem[] {
  const text = state.document.getText();
  const offset = state.document.offsetAt(position);
  const all = lex(text).tokens;
  if (all.some((t) => isComment(t) && t.start < offset && offset <= t.end)) return [];
  let before = all.filter((t) => !isComment(t) && t.end <= offset);
  // The word being typed (if any) is replaced by the completion and is not part of the context.
  let prefix: Token | undefined = before[before.length - 1];
  if (!prefix || prefix.end !== offset || !WORDLIKE.test(prefix.image)) prefix = undefined;
  if (prefix) before = before.slice(0, -1);
  const range: Range = prefix ? prefix.range : { start: position, end: position };
  const space: Space = state.analysis.scene?.space ?? '3d';

  const lineStart = !before.some((t) => t.range.end.line === position.line);
  const statement = statementsOf(before).pop() ?? [];
  if (lineStart || statement.length === 0) {
    return STATEMENTS.map((s) => item(s, CompletionItemKind.Keyword, range, STATEMENT_DOCS[s]));
  }
  const keyword = statement[0].image;
  const last = statement[statement.length - 1];

  // After a number or a tuple: units of the attribute's dimension.
  if (last.type === 'NumberLiteral' || last.type === 'RParen' || prefix?.type === 'Unit') {
    const attribute = [...statement].reverse().find((t) => t.categories.includes('AttrName') || t.type === 'Equals');
    const want = attribute && attribute.type !== 'Equals' ? wantOf(statement, space, attribute.image) : undefined;
    const letOrEquation = keyword === 'let' || attribute?.type === 'Equals';
    const dim = want ? WANT_DIM[want] : letOrEquation && keyword !== 'let' ? LENGTH : undefined;
    return unitItems(dim, range);
  }

  // Heads right after the keyword (and name).
  const afterKeyword = statement.length - 1;
  if (keyword === 'electrode' && afterKeyword === 1) {
    return Object.keys(SHAPES[space]).map((s) => item(s, CompletionItemKind.EnumMember, range, `shape (${space})`));
  }
  if ((keyword === 'charge' || keyword === 'probe') && afterKeyword === 1) {
    const kinds = keyword === 'charge' ? Object.keys(CHARGE_KINDS[space]) : Object.keys(PROBE_KINDS);
    return kinds.map((k) => item(k, CompletionItemKind.EnumMember, range, `${keyword} kind`));
  }
  if (keyword === 'space' && afterKeyword === 0) return SPACES.map((s) => item(s, CompletionItemKind.EnumMember, range, 'space'));
  if (keyword === 'medium' && afterKeyword === 0) {
    return [
      ...Object.entries(MEDIA).map(([name, m]) => item(name, CompletionItemKind.EnumMember, range, `εr ${m.permittivity}; ${m.note}`)),
      item('permittivity', CompletionItemKind.Property, range, 'relative permittivity'),
    ];
  }
  if (keyword === 'mesh' && afterKeyword === 0) {
    return [item('size', CompletionItemKind.Property, range, 'target panel size'), ...MESH_PRESETS.map((p) => item(p, CompletionItemKind.EnumMember, range, 'mesh preset'))];
  }
  if (keyword === 'ground' && afterKeyword === 0) return [item('plane', CompletionItemKind.Keyword, range)];
  if (keyword === 'slice' && afterKeyword === 0 && space === '3d') return SLICE_PLANES.map((p) => item(p, CompletionItemKind.EnumMember, range, 'slice plane'));
  if (keyword === 'let') {
    return afterKeyword >= 2 ? valueItems(state, position, range, undefined) : [];
  }
  if ((keyword === 'electrode' || keyword === 'charge' || keyword === 'probe' || keyword === 'sweep') && afterKeyword === 0) return [];

  // Where a value goes: after an attribute that wants one, an operator, `(`, `,` or `=`.
  const isAttribute = last.categories.includes('AttrName') && !(keyword === 'mesh' && last.image === 'normal');
  if (isAttribute) {
    const want = wantOf(statement, space, last.image);
    if (want) return valueItems(state, position, range, want);
  }
  if (['LParen', 'Comma', 'Equals', 'Plus', 'Minus', 'Star', 'Slash'].includes(last.type) || last.categories.includes('FuncName')) {
    return valueItems(state, position, range, undefined);
  }
  if (last.categories.includes('AxisWord') && (keyword === 'ground' || keyword === 'slice')) return [];

  // Otherwise: the attributes the statement still lacks.
  const present = new Set(statement.filter((t) => t.categories.includes('AttrName') || t.categories.includes('FlagName')).map((t) => t.image));
  const spec = attributeSpec(statement, space);
  const items: CompletionItem[] = [];
  for (const [key, want] of Object.entries(spec)) {
    const name = key.replace('?', '');
    if (present.has(name) || (keyword === 'electrode' && (DRIVES as readonly string[]).includes(name))) continue;
    items.push(item(name, CompletionItemKind.Property, range, key.endsWith('?') ? `${want} (optional)` : want, `0${name}`));
  }
  if (keyword === 'electrode') {
    const shape = SHAPES[space]?.[statement[2]?.image ?? ''];
    if (shape?.hollow && !present.has('hollow')) items.push(item('hollow', CompletionItemKind.Property, range, 'a thin conducting shell', '1hollow'));
    if (!DRIVES.some((d) => present.has(d))) {
      for (const d of DRIVES) items.push(item(d, CompletionItemKind.Property, range, 'drive', `0${d}`));
    }
  }
  return items;
}
