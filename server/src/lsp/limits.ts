// Diagnostics of the live solve itself, codes VS5xx (grammar/diagnostics.ts; docs/language.md
// "Limits and settings"). Going over the panel or grid limit is handled by the engine, which
// coarsens and says so (VS405, VS408); the time limit and failures are the server's.
import type { Statement } from '../../../grammar/ast';
import type { Diagnostic, Range } from '../../../grammar/scene';

/** Where a whole-scene remark goes: the `mesh` statement if there is one, else the first statement. */
function sceneRange(statements: Statement[]): Range {
  const s = statements.find((x) => x.type === 'mesh') ?? statements[0];
  return s ? s.range : { start: { line: 0, character: 0 }, end: { line: 0, character: 0 } };
}

/** VS501: the solve took longer than voltscape.maxSolveTime and was stopped. */
export function timeLimitDiagnostic(statements: Statement[], seconds: number, coarseShown: boolean): Diagnostic {
  return {
    code: 'VS501',
    severity: 'warning',
    message:
      `The live solve took longer than ${seconds} s (setting voltscape.maxSolveTime) and was stopped` +
      `${coarseShown ? '; the picture is the coarse one' : ''}. Use a coarser mesh, or raise the setting, or solve with the CLI.`,
    range: sceneRange(statements),
    data: { seconds },
  };
}

/** VS502: the solver failed; the last picture stays. */
export function failureDiagnostic(statements: Statement[], message: string): Diagnostic {
  return {
    code: 'VS502',
    severity: 'warning',
    message: `The live solve failed (${message}); the last picture stays.`,
    range: sceneRange(statements),
  };
}
