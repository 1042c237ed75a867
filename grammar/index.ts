// The grammar's public API: text → tokens → AST → Scene with diagnostics and symbols.
// Used by the CLI, the language server and the engine. Nothing here throws for any text.
import { analyze, type Analysis } from './analyze';
import { checkGeometry } from './geometry-checks';
import { parseText } from './parser';
import type { Range } from './scene';

export type { Analysis, SweepSpec, Want, ShapeSpec, MediumSpec } from './analyze';
export {
  STATEMENTS,
  SPACES,
  SHAPES,
  CHARGE_KINDS,
  PROBE_KINDS,
  DRIVES,
  MEDIA,
  MESH_PRESETS,
  SLICE_PLANES,
  STATEMENT_ATTRIBUTES,
  ATTRIBUTE_WORDS,
  attributesOfShape,
} from './analyze';
export type { SceneAst, Statement, Attribute, Expr, Word, Value, AxisValue, StringNode, AstNode, StatementKind } from './ast';
export { nodeAt, pathAt, containsPosition } from './ast';
export { DIAGNOSTIC_CODES, hasErrors, diagnostic, type CodeInfo } from './diagnostics';
export { unitTable, dimensionOf, describeDim, siUnitOf, evaluateUnit, type Dim, type UnitAtom } from './units';
export { findSymbol, symbolAt, type SymbolEntry, type SymbolKind, type SymbolTable } from './symbols';
export { tokensOf, keywordWords, type SourceToken } from './lexer';
export { parseText, clearParseCache, type ParsedText } from './parser';

function documentRange(text: string): Range {
  let line = 0;
  let lastBreak = -1;
  for (let i = 0; i < text.length; i++) {
    const c = text.charCodeAt(i);
    if (c === 10 || (c === 13 && text.charCodeAt(i + 1) !== 10)) {
      line++;
      lastBreak = i;
    }
  }
  return { start: { line: 0, character: 0 }, end: { line, character: text.length - lastBreak - 1 } };
}

/** Parses and analyses a scene: its AST, Scene (SI), diagnostics (syntax, meaning, geometry), symbols and sweeps. */
export function analyzeText(text: string): Analysis {
  const parsed = parseText(text);
  const analysis = analyze(parsed, documentRange(text));
  analysis.diagnostics.push(...checkGeometry(analysis.scene));
  return analysis;
}
