// Diagnostics: syntax, units and geometry from analysis (every change), merged with what only a
// solve can tell (field limits, mesh warnings, the live-solve remarks VS5xx). Solve diagnostics
// count only for the version they were solved for.
import type { Diagnostic as LspDiagnostic } from 'vscode-languageserver';
import type { Diagnostic } from '../../../../grammar/scene';
import { toLspDiagnostic } from '../convert';
import type { DocumentState } from '../core';

export function mergedDiagnostics(state: DocumentState): Diagnostic[] {
  const solve = state.solveDiagnostics;
  const solved = solve && solve.version === state.document.version ? solve.diagnostics : [];
  return [...state.analysis.diagnostics, ...solved];
}

export function documentDiagnostics(state: DocumentState): LspDiagnostic[] {
  return mergedDiagnostics(state).map(toLspDiagnostic);
}
