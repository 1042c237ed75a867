// The core of a sweep (`sweep NAME from A to B steps N`), shared by `voltscape sweep` and the language
// server's solve worker. For each of the N values of the `let` NAME (A to B inclusive, evenly spaced)
// the let's expression is replaced by that value, in SI with its SI unit, the text is analysed again and
// the scene solved; the figures of every electrode (peak surface field, self capacitance, margin to the
// limit or the medium's strength) are collected per step. One solver (one engine cache) serves every
// step, so a sweep of a drive reuses the meshes and factorization.
// Pure apart from the solver it is given; nothing here throws for anything a user can type.
import type { Analysis } from '../../grammar/analyze';
import type { Statement } from '../../grammar/ast';
import type { Diagnostic, Range, Scene } from '../../grammar/scene';
import { findSymbol } from '../../grammar/symbols';
import { siUnitOf } from '../../grammar/units';
import type { Result } from './engine/result';

export interface SweepDeps {
  analyzeText(text: string): Analysis;
  /** A solver with its own engine cache, kept for the whole sweep; null means it was cancelled or could not solve. */
  newSolver(): (scene: Scene) => Result | null;
  /** The diagnostics kept with each step (default: the result's own). */
  stepDiagnostics?(scene: Scene, result: Result): Diagnostic[];
  /** Polled between steps: a newer edit stops a live sweep. */
  isCancelled?(): boolean;
}

export interface SweepFigures {
  name: string;
  /** Peak surface field, V/m. */
  maxField: number;
  /** Self capacitance, F (F/m in `planar`). */
  capacitance: number;
  /** Allowed field over the peak (above 1 clears it); null without a limit or medium strength. */
  margin: number | null;
}

export interface SweepStep {
  /** The swept let's SI value. */
  value: number;
  electrodes: SweepFigures[];
  diagnostics: Diagnostic[];
}

export interface SweepTable {
  name: string;
  /** The SI unit of the swept value ('' for a plain number). */
  unit: string;
  space: Scene['space'];
  /** What the margin is measured against: the scene's `limit`, or the medium's strength, or nothing. */
  basis: { what: string; field: number } | null;
  electrodes: string[];
  steps: SweepStep[];
}

export type SweepOutcome =
  | { ok: true; table: SweepTable }
  | { ok: false; message: string; diagnostics?: Diagnostic[]; cancelled?: boolean };

/**
 * The N values of a sweep, A to B inclusive, evenly spaced (the ends exactly A and B). Inner values are
 * rounded to 15 significant digits, so that 10 mm to 30 mm gives 0.02 m, not 0.019999999999999997 m.
 */
export function sweepValues(from: number, to: number, steps: number): number[] {
  if (steps <= 1) return [from];
  const at = (i: number) => Number((from + ((to - from) * i) / (steps - 1)).toPrecision(15));
  return Array.from({ length: steps }, (_, i) => (i === 0 ? from : i === steps - 1 ? to : at(i)));
}

/** The text with a range (LSP line and UTF-16 character) replaced. */
export function replaceRange(text: string, range: Range, replacement: string): string {
  const starts = [0];
  for (let i = 0; i < text.length; i++) {
    const c = text.charCodeAt(i);
    if (c === 10 || (c === 13 && text.charCodeAt(i + 1) !== 10)) starts.push(i + 1);
  }
  const offset = (p: Range['start']) => Math.min(text.length, (starts[p.line] ?? text.length) + p.character);
  return text.slice(0, offset(range.start)) + replacement + text.slice(offset(range.end));
}

/** An SI value as scene text: the shortest exact decimal and the SI unit (`0.0125 m`, `-3000 V`). */
export function literal(value: number, unit: string): string {
  return unit ? `${value} ${unit}` : `${value}`;
}

/** Most steps one sweep runs: each is a full solve, so a mistyped count must not start a run of days. */
export const MAX_SWEEP_STEPS = 1000;

function firstLine(error: unknown): string {
  const text = error instanceof Error ? error.message : String(error);
  return text.split('\n')[0] || 'unknown error';
}

const countErrors = (list: readonly Diagnostic[]) => list.filter((d) => d.severity === 'error').length;

/** Runs the sweep of `only` (or the scene's one sweep); `progress` hears of each solved step. */
export function computeSweep(text: string, file: string, deps: SweepDeps, only: string | null, progress: (line: string) => void = () => {}): SweepOutcome {
  let base: Analysis;
  try {
    base = deps.analyzeText(text);
  } catch (error) {
    return { ok: false, message: `internal error while analysing ${file}: ${firstLine(error)}` };
  }
  const sweeps = base.ast.statements.filter((s): s is Statement & { name: NonNullable<Statement['name']> } => s.type === 'sweep' && s.name !== null);
  if (sweeps.length === 0) return { ok: false, message: `${file} has no sweep statement: add one such as \`sweep gap from 10 mm to 40 mm steps 4\`` };
  let chosen = sweeps[0];
  if (only !== null) {
    const found = sweeps.find((s) => s.name.text === only);
    if (!found) return { ok: false, message: `${file} has no sweep of '${only}' (its sweeps: ${sweeps.map((s) => s.name.text).join(', ')})` };
    chosen = found;
  } else if (sweeps.length > 1) {
    return { ok: false, message: `${file} has ${sweeps.length} sweeps (${sweeps.map((s) => s.name.text).join(', ')}): choose one with --let NAME` };
  }
  const name = chosen.name.text;
  const symbol = findSymbol(base.symbols, name);
  if (!symbol || symbol.kind !== 'let') {
    return { ok: false, message: `cannot sweep '${name}': it is not a let of ${file} (a sweep varies a value defined by \`let ${name} = ...\`)` };
  }
  const errors = countErrors(base.diagnostics);
  if (errors > 0) return { ok: false, message: `${file} has ${errors} error${errors === 1 ? '' : 's'}: not swept`, diagnostics: base.diagnostics };
  const spec = base.sweeps.find((s) => s.name === name);
  const definition = base.ast.statements.find((s) => s.type === 'let' && s.name?.text === name && s.value !== null);
  if (!spec || !definition?.value) return { ok: false, message: `cannot sweep '${name}': a sweep needs a let that holds a single quantity` };

  if (spec.steps > MAX_SWEEP_STEPS) {
    return { ok: false, message: `the sweep of '${name}' asks for ${spec.steps} steps; at most ${MAX_SWEEP_STEPS} are run (each step is a full solve)` };
  }
  const unit = siUnitOf(spec.dim);
  const scene0 = base.scene;
  const basis = scene0.limit
    ? { what: 'limit', field: scene0.limit.field }
    : scene0.medium.strength !== null
      ? { what: `${scene0.medium.name ?? 'medium'} strength`, field: scene0.medium.strength }
      : null;
  const solve = deps.newSolver();
  const table: SweepTable = { name, unit, space: scene0.space, basis, electrodes: scene0.electrodes.map((e) => e.name), steps: [] };
  const values = sweepValues(spec.from, spec.to, spec.steps);
  const cancelled = { ok: false as const, message: 'cancelled', cancelled: true };
  for (const [i, value] of values.entries()) {
    if (deps.isCancelled?.()) return cancelled;
    const at = `${name} = ${literal(value, unit)}`;
    const started = Date.now();
    let analysis: Analysis;
    try {
      analysis = deps.analyzeText(replaceRange(text, definition.value.range, literal(value, unit)));
    } catch (error) {
      return { ok: false, message: `internal error while analysing ${file} at ${at}: ${firstLine(error)}` };
    }
    const stepErrors = countErrors(analysis.diagnostics);
    if (stepErrors > 0) return { ok: false, message: `at ${at} the scene has ${stepErrors} error${stepErrors === 1 ? '' : 's'}: sweep stopped`, diagnostics: analysis.diagnostics };
    // The substituted value must be what the let now holds; anything else is a bug, not a figure.
    const held = findSymbol(analysis.symbols, name)?.value?.si;
    if (typeof held !== 'number' || Math.abs(held - value) > 1e-12 * Math.max(Math.abs(value), Number.MIN_VALUE)) {
      return { ok: false, message: `internal error: could not set ${at}` };
    }
    // Only the electrodes' figures are needed: slices and probes are left out of each solve.
    const scene = { ...analysis.scene, slices: [], probes: [] } as Scene;
    let result: Result | null;
    try {
      result = solve(scene);
    } catch (error) {
      return { ok: false, message: `internal error while solving ${file} at ${at}: ${firstLine(error)}` };
    }
    if (result === null) return deps.isCancelled?.() ? cancelled : { ok: false, message: `could not solve ${file} at ${at}` };
    table.steps.push({
      value,
      electrodes: result.electrodes.map((e) => ({
        name: e.name,
        maxField: e.maxField,
        capacitance: e.capacitance,
        // Margin as the report gives it: allowed field over the peak (above 1 clears it).
        margin: basis && e.maxField > 0 ? basis.field / e.maxField : null,
      })),
      diagnostics: deps.stepDiagnostics ? deps.stepDiagnostics(scene, result) : result.diagnostics,
    });
    progress(`step ${i + 1}/${values.length}: ${at} solved in ${((Date.now() - started) / 1000).toFixed(2)} s`);
  }
  return { ok: true, table };
}
