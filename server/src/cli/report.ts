// The readable report of `voltscape solve`: scene, electrodes, peak fields, the capacitance
// matrix, probes, energy, solve statistics, diagnostics and the safety caution.
// A pure function of the scene, the result and the diagnostics; numbers go through the shared formatter.
import type { Diagnostic, Drive, Scene } from '../../../grammar/scene';
import type { ElectrodeResult, ProbeResult, Result } from '../engine/result';
import { chooseUnit, formatNumber, formatPoint, formatQuantity, formatRelative, type QuantityKind } from '../format/quantity';
import { formatDiagnostic, sortDiagnostics } from './diagnostics';
import { renderTable } from './table';

/** The caution every report carries (architecture.md, "Security and safety"). */
export const SAFETY_CAUTION =
  'High voltage kills: these figures are a design aid, not a substitute for applicable standards, local codes, testing and licensed practice.';

export interface ReportInput {
  file: string;
  scene: Scene;
  result: Result;
  /** Diagnostics from analysis; the result's own (solve) diagnostics are added. */
  diagnostics: readonly Diagnostic[];
}

/** Kinds of the quantities that are per metre in `planar`. */
function kinds(space: Scene['space']): { charge: QuantityKind; capacitance: QuantityKind; energy: QuantityKind } {
  return space === 'planar'
    ? { charge: 'lineCharge', capacitance: 'capacitancePerLength', energy: 'energyPerLength' }
    : { charge: 'charge', capacitance: 'capacitance', energy: 'energy' };
}

export function renderReport(input: ReportInput): string {
  const { scene, result } = input;
  const sections = [
    header(input),
    electrodes(scene, result),
    peakFields(scene, result),
    breakdownChecks(scene, result),
    capacitance(scene, result),
    probes(result),
    energy(scene, result),
    stats(result),
    diagnostics(input),
    `Caution\n  ${SAFETY_CAUTION}`,
  ];
  return sections.filter((s) => s !== '').join('\n\n') + '\n';
}

function header({ file, scene }: ReportInput): string {
  const m = scene.medium;
  const medium =
    (m.name ?? 'custom medium') +
    ` (εr ${formatNumber(m.permittivity, 5)}` +
    (m.strength !== null ? `, strength about ${formatQuantity(m.strength, 'field', { digits: 3 })}` : '') +
    ')';
  const mesh = scene.mesh.kind === 'size' ? `panel size ${formatQuantity(scene.mesh.size, 'length')}` : `${scene.mesh.preset} preset`;
  const space =
    scene.space === '3d' ? '3d' : scene.space === 'planar' ? 'planar (figures per metre of depth)' : 'axisymmetric (about r = 0)';
  const rows = [
    ['file', file],
    ['space', space],
    ['medium', medium],
    ['mesh', mesh],
  ];
  const title = scene.title ?? '(untitled scene)';
  return [`Voltscape report: ${title}`, ...rows.map(([k, v]) => `  ${k.padEnd(7)} ${v}`)].join('\n');
}

function driveText(drive: Drive | undefined, space: Scene['space']): string {
  if (!drive) return '?';
  if (drive.kind === 'potential') return `held at ${formatQuantity(drive.value, 'potential')}`;
  if (drive.kind === 'charge') return `charge ${formatQuantity(drive.value, kinds(space).charge)}`;
  return 'floating';
}

function electrodes(scene: Scene, result: Result): string {
  if (result.electrodes.length === 0) return 'Electrodes\n  (none)';
  const k = kinds(scene.space);
  const drives = new Map<string, Drive>(scene.electrodes.map((e) => [e.name, e.drive]));
  const rows = result.electrodes.map((e) => [
    e.name,
    driveText(drives.get(e.name), scene.space),
    formatQuantity(e.potential, 'potential'),
    formatQuantity(e.charge, k.charge),
    formatQuantity(e.capacitance, k.capacitance),
    formatRelative(e.capacitanceConvergence?.relativeError),
  ]);
  const table = renderTable(
    [
      { header: 'electrode' },
      { header: 'drive' },
      { header: 'potential', align: 'right' },
      { header: 'charge', align: 'right' },
      { header: 'self capacitance', align: 'right' },
      { header: 'est. error', align: 'right' },
    ],
    rows,
  );
  return `Electrodes\n${table}`;
}

function peakFields(scene: Scene, result: Result): string {
  if (result.electrodes.length === 0) return '';
  const anyEdge = result.electrodes.some((e) => e.maxFieldOnEdge);
  const rows = result.electrodes.map((e) => [
    e.name,
    formatQuantity(e.maxField, 'field'),
    formatRelative(e.maxFieldConvergence?.relativeError),
    e.maxFieldAt && e.maxFieldAt.length > 0 ? formatPoint(e.maxFieldAt) : 'n/a',
    e.maxFieldOnEdge ? 'on a sharp edge †' : '',
  ]);
  const lines = [
    'Peak surface field',
    renderTable(
      [
        { header: 'electrode' },
        { header: 'peak |E|', align: 'right' },
        { header: 'est. error', align: 'right' },
        { header: scene.space === 'axisymmetric' ? 'at (r, z)' : scene.space === 'planar' ? 'at (x, y)' : 'at (x, y, z)' },
        { header: 'note' },
      ],
      rows,
    ),
  ];
  if (anyEdge) {
    lines.push(
      '  † The surface charge is singular at a sharp edge, so the field there grows as the mesh is refined:',
      '    the figure is not a converged value. Model the edge radius to get a design figure.',
    );
  }
  const peak = highestPeak(result.electrodes);
  if (peak) {
    const limitLines: string[] = [];
    if (scene.limit) limitLines.push(verdict('limit', scene.limit.field, peak));
    if (scene.medium.strength !== null) limitLines.push(verdict(`${scene.medium.name ?? 'medium'} strength`, scene.medium.strength, peak));
    if (limitLines.length > 0) lines.push('', ...limitLines);
  }
  return lines.join('\n');
}

function highestPeak(list: readonly ElectrodeResult[]): ElectrodeResult | null {
  let best: ElectrodeResult | null = null;
  for (const e of list) if (Number.isFinite(e.maxField) && (!best || e.maxField > best.maxField)) best = e;
  return best;
}

function verdict(what: string, allowed: number, peak: ElectrodeResult): string {
  const ratio = allowed / peak.maxField;
  const status = peak.maxField > allowed ? 'EXCEEDED' : 'below';
  return (
    `  ${what} ${formatQuantity(allowed, 'field', { digits: 3 })}: highest peak ${formatQuantity(peak.maxField, 'field')} ` +
    `on ${peak.name}, ${status} (margin ${formatNumber(ratio, 3)}×)`
  );
}

/** The caution of the breakdown section. */
export const BREAKDOWN_SECTION_CAUTION = 'Design aid, not an allowable; follow applicable standards, local codes and licensed practice.';

/** A margin factor (allowed / actual) with its verdict; '—' when the check does not apply. */
function marginText(m: number | null | undefined): string {
  if (m === null || m === undefined || !Number.isFinite(m)) return '—';
  return `${formatNumber(m, 3)}×${m < 1 ? ' EXCEEDED' : ''}`;
}

/** Margins per electrode (limit, strength, Peek corona onset) and near-uniform gaps (Paschen). */
function breakdownChecks(scene: Scene, result: Result): string {
  const withChecks = result.electrodes.filter((e) => e.breakdown);
  const gaps = result.gaps ?? [];
  if (withChecks.length === 0 && gaps.length === 0) return '';
  const lines = ['Breakdown checks (margin = allowed / actual; potentials read as peak values)'];
  if (withChecks.length > 0) {
    const rows = withChecks.map((e) => {
      const b = e.breakdown!;
      return [
        e.name,
        marginText(b.limitMargin),
        marginText(b.strengthMargin),
        b.coronaOnset !== null ? formatQuantity(b.coronaOnset, 'field') : '—',
        b.coronaRadius !== null ? formatQuantity(b.coronaRadius, 'length') : '—',
        marginText(b.coronaMargin),
      ];
    });
    lines.push(
      renderTable(
        [
          { header: 'electrode' },
          { header: 'limit', align: 'right' },
          { header: 'strength', align: 'right' },
          { header: 'corona onset (Peek)', align: 'right' },
          { header: 'at radius', align: 'right' },
          { header: 'corona', align: 'right' },
        ],
        rows,
      ),
    );
  }
  if (gaps.length > 0) {
    const rows = gaps.map((g) => [
      `${g.between[0]} – ${g.between[1]}`,
      formatQuantity(g.distance, 'length'),
      formatQuantity(g.voltage, 'potential'),
      formatQuantity(g.paschen, 'potential'),
      marginText(g.margin),
      g.paschenValid ? '' : 'outside the fit range ‡',
    ]);
    lines.push(
      '',
      `Near-uniform gaps in air (Paschen, p = ${formatNumber(scene.medium.density, 3)} × 101.325 kPa at 20 °C)`,
      renderTable(
        [
          { header: 'gap' },
          { header: 'distance', align: 'right' },
          { header: '|ΔV|', align: 'right' },
          { header: 'sparking V', align: 'right' },
          { header: 'margin', align: 'right' },
          { header: 'note' },
        ],
        rows,
      ),
    );
    if (gaps.some((g) => !g.paschenValid)) lines.push("  ‡ Paschen's constants were fitted for p·d of about 0.5 to 12 Torr·cm; beyond that the figure is a rough guide.");
  }
  lines.push(`  ${BREAKDOWN_SECTION_CAUTION}`);
  return lines.join('\n');
}

function capacitance(scene: Scene, result: Result): string {
  const c = result.capacitance;
  if (!c || c.names.length === 0) return '';
  const k = kinds(scene.space);
  // One unit for the whole matrix, chosen by its largest entry, so the columns compare at a glance.
  const largest = c.matrix.reduce((m, row) => Math.max(m, ...row.map(Math.abs)), 0);
  const unit = chooseUnit(k.capacitance, largest);
  const rows = c.names.map((name, i) => [name, ...c.matrix[i].map((v) => formatNumber(v / unit.scale, 4))]);
  const table = renderTable([{ header: '' }, ...c.names.map((n) => ({ header: n, align: 'right' as const }))], rows);
  return [
    `Capacitance matrix (Maxwell, ${unit.symbol}; reference: ground and infinity)`,
    table,
    `  asymmetry ${formatRelative(c.asymmetry).replace('±', '')} (max |Cij − Cji| / max |Cii|, an accuracy indicator)`,
  ].join('\n');
}

function probes(result: Result): string {
  if (result.probes.length === 0) return '';
  return ['Probes', ...result.probes.map(probe)].join('\n');
}

function probe(p: ProbeResult): string {
  if (p.points.length === 0) return `  ${p.name}: no points`;
  if (p.points.length === 1) {
    const q = p.points[0];
    return (
      `  ${p.name} at ${formatPoint(q.at)}: potential ${formatQuantity(q.potential, 'potential')}, ` +
      `|E| ${formatQuantity(q.fieldMagnitude, 'field')}, E ${fieldVector(q.field)}`
    );
  }
  const first = p.points[0];
  const last = p.points[p.points.length - 1];
  // Extremes over the finite samples (a sample on a conductor's surface may have no value).
  const by = (key: 'potential' | 'fieldMagnitude') => {
    let lo = p.points[0];
    let hi = p.points[0];
    for (const q of p.points) {
      if (!Number.isFinite(q[key])) continue;
      if (!Number.isFinite(lo[key]) || q[key] < lo[key]) lo = q;
      if (!Number.isFinite(hi[key]) || q[key] > hi[key]) hi = q;
    }
    return { lo, hi };
  };
  const pot = by('potential');
  const fld = by('fieldMagnitude');
  const lines = [
    `  ${p.name}: line from ${formatPoint(first.at)} to ${formatPoint(last.at)}, ${p.points.length} samples`,
    `    potential  min ${formatQuantity(pot.lo.potential, 'potential')} at ${formatPoint(pot.lo.at)}, max ${formatQuantity(pot.hi.potential, 'potential')} at ${formatPoint(pot.hi.at)}`,
    `    |E|        min ${formatQuantity(fld.lo.fieldMagnitude, 'field')} at ${formatPoint(fld.lo.at)}, max ${formatQuantity(fld.hi.fieldMagnitude, 'field')} at ${formatPoint(fld.hi.at)}`,
  ];
  // A few evenly spread samples, both ends included.
  const count = Math.min(5, p.points.length);
  const picks = Array.from({ length: count }, (_, i) => p.points[Math.round((i * (p.points.length - 1)) / (count - 1))]);
  lines.push(
    renderTable(
      [{ header: 'at' }, { header: 'potential', align: 'right' }, { header: '|E|', align: 'right' }],
      picks.map((q) => [formatPoint(q.at), formatQuantity(q.potential, 'potential'), formatQuantity(q.fieldMagnitude, 'field')]),
      4,
    ),
  );
  return lines.join('\n');
}

function fieldVector(field: readonly number[]): string {
  const largest = field.reduce((m, c) => Math.max(m, Math.abs(c)), 0);
  const unit = chooseUnit('field', largest);
  return `(${field.map((c) => (Math.abs(c) < largest * 1e-9 ? '0' : formatNumber(c / unit.scale, 4))).join(', ')}) ${unit.symbol}`;
}

function energy(scene: Scene, result: Result): string {
  return `Energy\n  stored ${formatQuantity(result.energy, kinds(scene.space).energy)} (W = ½ Σ Q·V over electrodes and free charges)`;
}

function stats(result: Result): string {
  const s = result.stats;
  const lines = ['Solve'];
  lines.push(`  panels ${s.panels}, unknowns ${s.unknowns}, solver ${s.solver}`);
  if (s.levels && s.levels.length > 0) lines.push(`  mesh levels (panels, coarsest first) ${s.levels.join(', ')}`);
  if (s.refinement) lines.push('  ' + refinementLine(result));
  const timings = Object.entries(s.timings ?? {});
  if (timings.length > 0) {
    lines.push('  timings ' + timings.map(([k, ms]) => `${k} ${formatQuantity(ms / 1000, 'time', { digits: 3 })}`).join(', '));
  }
  return lines.join('\n');
}

/** One line: rounds, panels, why it stopped, and each electrode's change in the last round (adaptive.ts). */
function refinementLine(result: Result): string {
  const r = result.stats.refinement!;
  const stop = { tolerance: 'within the tolerance', rounds: 'at the round limit, NOT within the tolerance', panels: 'at the panel limit, NOT within the tolerance' }[r.stop];
  const change = (x: number | null) => (x === null ? 'n/a' : x.toExponential(1));
  const figures = result.electrodes.map((e, k) => {
    const peak = r.singularPeak[k] ? `peak ${change(r.reached.maxField[k])} (on an edge: singular, does not converge; left out)` : `peak ${change(r.reached.maxField[k])}`;
    return `${e.name} C ${change(r.reached.capacitance[k])}, ${peak}`;
  });
  return `adaptive refinement to ${r.tolerance.toExponential(1)}: ${r.rounds} round${r.rounds === 1 ? '' : 's'} (panels ${r.panels.join(', ')}), stopped ${stop}; change in the last round: ${figures.join('; ')}`;
}

function diagnostics({ file, diagnostics, result }: ReportInput): string {
  const all = sortDiagnostics([...diagnostics, ...result.diagnostics]);
  if (all.length === 0) return 'Diagnostics\n  none';
  return ['Diagnostics', ...all.map((d) => '  ' + formatDiagnostic(file, d))].join('\n');
}
