// Inlay hints: the solved figures after each electrode statement (potential, charge, peak field).
// Figures come from the newest result, matched by electrode name; a stale result says so.
import { InlayHintKind, type InlayHint, type Range } from 'vscode-languageserver';
import type { Space } from '../../../../grammar/scene';
import { comparePositions } from '../convert';
import type { DocumentState } from '../core';
import { CAUTION, electrodeFigures, shortFigures } from '../figures';

export function inlayHints(state: DocumentState, range?: Range): InlayHint[] {
  const solved = state.solved;
  if (!solved) return [];
  const space = solved.result.space as Space;
  const stale = solved.version !== state.document.version;
  const hints: InlayHint[] = [];
  for (const statement of state.analysis.ast.statements) {
    if (statement.type !== 'electrode' || !statement.name) continue;
    const end = statement.range.end;
    if (range && (comparePositions(end, range.start) < 0 || comparePositions(end, range.end) > 0)) continue;
    const e = solved.result.electrodes.find((x) => x.name === statement.name!.text);
    if (!e) continue;
    hints.push({
      position: end,
      label: `${shortFigures(e, space)}${stale ? ' (stale)' : ''}`,
      kind: InlayHintKind.Parameter,
      paddingLeft: true,
      tooltip: { kind: 'markdown', value: [...electrodeFigures(e, space), '', `_${CAUTION}_`].join('\n') },
    });
  }
  return hints;
}
