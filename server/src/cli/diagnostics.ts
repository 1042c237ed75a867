// One diagnostic per line, as compilers print them: `file:line:col severity code message`
// (line and column 1-based), so that editors and CI logs can jump to the spot.
import type { Diagnostic } from '../../../grammar/scene';

export function formatDiagnostic(file: string, d: Diagnostic): string {
  const line = (d.range?.start?.line ?? 0) + 1;
  const col = (d.range?.start?.character ?? 0) + 1;
  return `${file}:${line}:${col} ${d.severity} ${d.code} ${oneLine(d.message)}`;
}

/** Diagnostics in source order (line, then column), errors first on the same spot. */
export function sortDiagnostics(list: readonly Diagnostic[]): Diagnostic[] {
  const rank = { error: 0, warning: 1, info: 2 } as const;
  return [...list].sort(
    (a, b) =>
      a.range.start.line - b.range.start.line ||
      a.range.start.character - b.range.start.character ||
      rank[a.severity] - rank[b.severity],
  );
}

export function countErrors(list: readonly Diagnostic[]): number {
  return list.filter((d) => d.severity === 'error').length;
}

function oneLine(message: string): string {
  return message.replace(/\s*\n\s*/g, ' ');
}
