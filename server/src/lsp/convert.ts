// Conversions between the project's plain data (grammar/scene.ts) and LSP types.
import { DiagnosticSeverity, type Diagnostic as LspDiagnostic, type Position, type Range } from 'vscode-languageserver';
import type { Diagnostic } from '../../../grammar/scene';

const severity = {
  error: DiagnosticSeverity.Error,
  warning: DiagnosticSeverity.Warning,
  info: DiagnosticSeverity.Information,
} as const;

export function toLspDiagnostic(d: Diagnostic): LspDiagnostic {
  return {
    range: d.range,
    severity: severity[d.severity] ?? DiagnosticSeverity.Error,
    code: d.code,
    source: 'voltscape',
    message: d.message,
    ...(d.data ? { data: d.data } : {}),
  };
}

export function comparePositions(a: Position, b: Position): number {
  return a.line - b.line || a.character - b.character;
}

/** True when the position lies in the range, ends included (a cursor right after a name is on it). */
export function contains(range: Range, p: Position): boolean {
  return comparePositions(range.start, p) <= 0 && comparePositions(p, range.end) <= 0;
}

export function sameRange(a: Range, b: Range): boolean {
  return comparePositions(a.start, b.start) === 0 && comparePositions(a.end, b.end) === 0;
}
