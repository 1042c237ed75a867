// `voltscape sweep FILE`: runs a scene's `sweep NAME from A to B steps N`. For each of the N values of
// the `let` NAME (A to B inclusive, evenly spaced) the let's expression is replaced by that value, in SI
// with its SI unit, the text is analysed again and the scene solved; the figures of every electrode
// (peak surface field, self capacitance, margin to the limit or the medium's strength) go into a table
// or CSV. One engine cache serves every step, so a sweep of a drive reuses the meshes and factorization.
// The core lives in ../sweep.ts (shared with the language server); this file reads, formats and writes.
// Like the rest of the CLI, nothing here throws for anything a user can type: failures are messages.
import type { Command } from './args';
import { formatNumber, formatQuantity, type QuantityKind } from '../format/quantity';
import { formatDiagnostic, sortDiagnostics } from './diagnostics';
import { SAFETY_CAUTION } from './report';
import { EXIT_CLEAN, EXIT_ERRORS, EXIT_FAILED, firstLine, readScene, solveDiagnostics, type Io } from './run';
import { renderTable } from './table';
import { computeSweep, literal, type SweepDeps, type SweepTable } from '../sweep';

// The sweep's core (values, substitution, solving each step, the figures) is shared with the language server.
export { computeSweep, literal, MAX_SWEEP_STEPS, replaceRange, sweepValues } from '../sweep';
export type { SweepDeps, SweepStep, SweepTable } from '../sweep';

/** `name`: the let to sweep, when the scene has more than one `sweep`. */
export type SweepCommand = Extract<Command, { kind: 'sweep' }>;

// ---- output ----

function csvCell(text: string): string {
  return /[",\n\r]/.test(text) ? `"${text.replace(/"/g, '""')}"` : text;
}

/** CSV: a header, then one row per step; the swept value and every figure in SI, full precision. */
export function sweepCsv(t: SweepTable): string {
  const c = t.space === 'planar' ? 'F/m' : 'F';
  const header = [`${t.name} (${t.unit || '1'})`];
  for (const name of t.electrodes) {
    header.push(`${name} peak field (V/m)`, `${name} self capacitance (${c})`);
    if (t.basis) header.push(`${name} margin to ${t.basis.what} (ratio)`);
  }
  const rows = t.steps.map((s) => {
    const row = [String(s.value)];
    for (const name of t.electrodes) {
      const e = s.electrodes.find((x) => x.name === name);
      row.push(e ? String(e.maxField) : '', e ? String(e.capacitance) : '');
      if (t.basis) row.push(e?.margin != null ? String(e.margin) : '');
    }
    return row;
  });
  return [header, ...rows].map((r) => r.map(csvCell).join(',')).join('\n') + '\n';
}

/** The swept value in the unit that suits it (10 mm, 2.5 kV), or in SI for units the formatter has no ladder for. */
function showValue(value: number, unit: string): string {
  const kinds: Record<string, QuantityKind> = { m: 'length', V: 'potential', C: 'charge', 'V/m': 'field', 'C/m': 'lineCharge', F: 'capacitance', J: 'energy', N: 'force' };
  return kinds[unit] ? formatQuantity(value, kinds[unit]) : literal(Number(value.toPrecision(6)), unit);
}

/** A readable table: one row per step and electrode. */
export function sweepText(file: string, t: SweepTable): string {
  const capacitance = t.space === 'planar' ? 'capacitancePerLength' : 'capacitance';
  const rows: string[][] = [];
  for (const s of t.steps) {
    for (const [k, e] of s.electrodes.entries()) {
      rows.push([
        k === 0 ? showValue(s.value, t.unit) : '',
        e.name,
        formatQuantity(e.maxField, 'field'),
        formatQuantity(e.capacitance, capacitance),
        e.margin === null ? '—' : `${formatNumber(e.margin, 3)}×${e.margin < 1 ? ' EXCEEDED' : ''}`,
      ]);
    }
  }
  const lines = [
    `Sweep of ${t.name} in ${file}: ${t.steps.length} step${t.steps.length === 1 ? '' : 's'}`,
    '',
    renderTable(
      [
        { header: t.name, align: 'right' },
        { header: 'electrode' },
        { header: 'peak field', align: 'right' },
        { header: 'self capacitance', align: 'right' },
        { header: t.basis ? `margin to ${t.basis.what}` : 'margin', align: 'right' },
      ],
      rows,
    ),
  ];
  if (t.basis) lines.push('', `  Margin: ${t.basis.what} ${formatQuantity(t.basis.field, 'field', { digits: 3 })} over the peak field (below 1× it is exceeded).`);
  const notes = sortDiagnostics(t.steps.flatMap((s) => s.diagnostics.filter((d) => d.severity !== 'info')));
  const seen = new Set<string>();
  const codes = notes.filter((d) => !seen.has(d.code) && seen.add(d.code));
  if (codes.length > 0) lines.push('', '  Diagnostics at some steps:', ...codes.map((d) => `  ${formatDiagnostic(file, d)}`));
  lines.push('', SAFETY_CAUTION, '');
  return lines.join('\n');
}

/** The `sweep` command: 0 when every step solved and holds the limit, 1 when a step breaks the `limit`, 2 when it could not run. */
export function runSweep(cmd: SweepCommand, io: Io, deps: SweepDeps): number {
  const read = readScene(io, cmd.file);
  if (!read.ok) {
    io.err(`voltscape: ${read.message}\n`);
    return EXIT_FAILED;
  }
  const outcome = computeSweep(read.text, cmd.file, { stepDiagnostics: solveDiagnostics, ...deps }, cmd.name, (line) => io.err(line + '\n'));
  if (!outcome.ok) {
    for (const d of sortDiagnostics(outcome.diagnostics ?? []).filter((d) => d.severity === 'error')) io.err(formatDiagnostic(cmd.file, d) + '\n');
    io.err(`voltscape: ${outcome.message}\n`);
    return EXIT_FAILED;
  }
  const text = cmd.csv ? sweepCsv(outcome.table) : sweepText(cmd.file, outcome.table);
  if (cmd.out) {
    try {
      io.writeFile(cmd.out, text);
    } catch (error) {
      io.err(`voltscape: cannot write ${cmd.out}: ${firstLine(error)}\n`);
      return EXIT_FAILED;
    }
    io.err(`wrote ${cmd.out}\n`);
  } else io.out(text);
  const broken = outcome.table.basis?.what === 'limit' && outcome.table.steps.some((s) => s.electrodes.some((e) => e.margin !== null && e.margin < 1));
  if (broken) io.err(`voltscape: the peak field is over the limit at some steps. ${SAFETY_CAUTION}\n`);
  return broken ? EXIT_ERRORS : EXIT_CLEAN;
}
