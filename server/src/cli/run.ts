// The CLI's commands as a function of arguments, an I/O port and the stages it calls, returning the exit
// code. main.ts passes the real ones; tests can pass their own. Nothing here throws for anything a user
// can type or any file they can point at: every failure becomes a one-line message and exit code 2.
import type { Diagnostic, Scene } from '../../../grammar/scene';
import type { Result } from '../engine/result';
import { parseArgs, USAGE } from './args';
import { countErrors, formatDiagnostic, sortDiagnostics } from './diagnostics';
import { renderCheck, type CheckFormat, type FileCheck } from './check-formats';
import type { SweepCommand } from './sweep';
import { failureJson, resultJson, stringify } from './json';
import { renderReport, SAFETY_CAUTION } from './report';
import { completeSlices } from './slice-outlines';
import { renderSvg } from './svg';
import { formatQuantity } from '../format/quantity';

export const EXIT_CLEAN = 0;
export const EXIT_ERRORS = 1;
export const EXIT_FAILED = 2;

/** The solver's code for a broken `limit` (grammar/diagnostics.ts); the CLI adds one only if the solve did not. */
export const LIMIT_BROKEN_CODE = 'VS401';

export interface Io {
  out(text: string): void;
  err(text: string): void;
  /** Throws (as node:fs does) when the file cannot be read. */
  readFile(path: string): Uint8Array;
  writeFile(path: string, data: string): void;
}

export interface AnalysisLike {
  scene: Scene | null;
  diagnostics: Diagnostic[];
}

export interface PreviewInput {
  file: string;
  scene: Scene;
  result: Result;
  diagnostics: Diagnostic[];
}

export interface Stages {
  version: string;
  analyzeText(text: string): AnalysisLike;
  /** `refine`: adaptive refinement to this tolerance (3d; `--refine`). */
  solveScene(scene: Scene, options?: { refine?: number }): Result | null;
  /** The `--html` export; absent until the preview page exists. */
  renderPreviewHtml?: (input: PreviewInput) => string;
  /** `voltscape lsp --stdio`: starts the server, which then keeps the process alive. */
  startLanguageServer?: () => void | Promise<void>;
  /** `voltscape sweep` (server/src/cli/sweep.ts), wired with the real grammar and a cached solver. */
  sweep?: (command: SweepCommand, io: Io) => number | Promise<number>;
}

export async function run(argv: readonly string[], io: Io, stages: Stages): Promise<number> {
  const command = parseArgs(argv);
  switch (command.kind) {
    case 'help':
      io.out(USAGE + '\n');
      return EXIT_CLEAN;
    case 'version':
      io.out(`voltscape ${stages.version}\n`);
      return EXIT_CLEAN;
    case 'usage':
      io.err(`voltscape: ${command.message}\n\n${USAGE}\n`);
      return EXIT_FAILED;
    case 'lsp':
      if (!stages.startLanguageServer) {
        io.err('voltscape: the language server is not part of this build\n');
        return EXIT_FAILED;
      }
      await stages.startLanguageServer();
      return EXIT_CLEAN;
    case 'check':
      return check(command.files, io, stages, command.format);
    case 'sweep':
      if (!stages.sweep) {
        io.err('voltscape: sweep is not part of this build\n');
        return EXIT_FAILED;
      }
      return stages.sweep(command, io);
    case 'solve':
      return solve(command, io, stages);
  }
}

// ---- reading a scene file ----

type Read = { ok: true; text: string } | { ok: false; message: string };

/** A scene file as text, or why it cannot be one: missing, unreadable, not UTF-8 text, or empty. */
export function readScene(io: Io, path: string): Read {
  let bytes: Uint8Array;
  try {
    bytes = io.readFile(path);
  } catch (error) {
    return { ok: false, message: `cannot read ${path}: ${describeFsError(error)}` };
  }
  if (bytes.includes(0)) return { ok: false, message: `${path} is not a text file (it holds NUL bytes)` };
  let text: string;
  try {
    text = new TextDecoder('utf-8', { fatal: true, ignoreBOM: false }).decode(bytes);
  } catch {
    return { ok: false, message: `${path} is not UTF-8 text` };
  }
  if (text.trim() === '') return { ok: false, message: `${path} is empty: there is no scene to read` };
  return { ok: true, text };
}

function describeFsError(error: unknown): string {
  const code = (error as { code?: string } | null)?.code;
  switch (code) {
    case 'ENOENT':
      return 'no such file';
    case 'EISDIR':
      return 'it is a directory';
    case 'EACCES':
    case 'EPERM':
      return 'permission denied';
    default:
      return firstLine(error);
  }
}

export function firstLine(error: unknown): string {
  const text = error instanceof Error ? error.message : String(error);
  return text.split('\n')[0] || 'unknown error';
}

/** Runs a stage, turning a throw into a message (a bug in a stage must still not print a stack trace). */
function guarded<T>(what: string, f: () => T): { ok: true; value: T } | { ok: false; message: string } {
  try {
    return { ok: true, value: f() };
  } catch (error) {
    return { ok: false, message: `internal error while ${what}: ${firstLine(error)}` };
  }
}

// ---- limits ----

/** The highest peak surface field of a result, V/m. */
function highestPeak(result: Result): { field: number; electrode: string } | null {
  let best: { field: number; electrode: string } | null = null;
  for (const e of result.electrodes) if (Number.isFinite(e.maxField) && (!best || e.maxField > best.field)) best = { field: e.maxField, electrode: e.name };
  return best;
}

/**
 * The solve's own diagnostics, plus one for a broken `limit` when the solve did not report it as an error.
 * The CLI decides the exit code from these, so a broken limit always fails a check.
 */
export function solveDiagnostics(scene: Scene, result: Result): Diagnostic[] {
  const out = [...result.diagnostics];
  const peak = highestPeak(result);
  if (scene.limit && peak && peak.field > scene.limit.field && countErrors(out) === 0) {
    out.push({
      code: LIMIT_BROKEN_CODE,
      severity: 'error',
      message:
        `The peak field ${formatQuantity(peak.field, 'field')} on ${peak.electrode} is over the limit ` +
        `${formatQuantity(scene.limit.field, 'field')}. ${SAFETY_CAUTION}`,
      range: scene.limit.range,
    });
  }
  return out;
}

// ---- check ----

async function check(files: readonly string[], io: Io, stages: Stages, format: CheckFormat = 'text'): Promise<number> {
  let exit = EXIT_CLEAN;
  let errors = 0;
  let warnings = 0;
  let brokenLimit = false;
  // What each file gave, for --format json|sarif (check-formats.ts).
  const found: FileCheck[] = [];
  for (const file of files) {
    const read = readScene(io, file);
    if (!read.ok) {
      io.err(`voltscape: ${read.message}\n`);
      found.push({ file, diagnostics: [], failure: read.message });
      exit = EXIT_FAILED;
      continue;
    }
    const analysed = guarded(`analysing ${file}`, () => stages.analyzeText(read.text));
    if (!analysed.ok) {
      io.err(`voltscape: ${analysed.message}\n`);
      found.push({ file, diagnostics: [], failure: analysed.message });
      exit = EXIT_FAILED;
      continue;
    }
    const diagnostics = [...analysed.value.diagnostics];
    const scene = analysed.value.scene;
    let failed: string | false = false;
    if (scene && scene.limit && countErrors(diagnostics) === 0) {
      // A `limit` is a design rule: test it, which needs a solve. The peak fields are all it needs,
      // so slices and probes are left out of this solve.
      const fieldsOnly = { ...scene, slices: [], probes: [] } as Scene;
      const solved = guarded(`solving ${file}`, () => stages.solveScene(fieldsOnly));
      if (!solved.ok) {
        io.err(`voltscape: ${solved.message}\n`);
        failed = solved.message;
      } else if (solved.value === null) {
        io.err(`voltscape: ${file}: could not solve the scene to test its limit\n`);
        failed = `${file}: could not solve the scene to test its limit`;
      } else {
        const extra = solveDiagnostics(scene, solved.value);
        if (extra.some((d) => d.severity === 'error')) brokenLimit = true;
        diagnostics.push(...extra);
      }
    }
    if (format === 'text') for (const d of sortDiagnostics(diagnostics)) io.out(formatDiagnostic(file, d) + '\n');
    found.push({ file, diagnostics: sortDiagnostics(diagnostics), failure: failed || null });
    errors += countErrors(diagnostics);
    warnings += diagnostics.filter((d) => d.severity === 'warning').length;
    if (failed) exit = EXIT_FAILED;
    else if (countErrors(diagnostics) > 0 && exit === EXIT_CLEAN) exit = EXIT_ERRORS;
  }
  io.err(`${files.length} ${files.length === 1 ? 'file' : 'files'} checked: ${plural(errors, 'error')}, ${plural(warnings, 'warning')}\n`);
  if (brokenLimit) io.err(`${SAFETY_CAUTION}\n`);
  if (format !== 'text') io.out(renderCheck(format, { version: stages.version, files: found, exitCode: exit }));
  return exit;
}

function plural(n: number, word: string): string {
  return `${n} ${word}${n === 1 ? '' : 's'}`;
}

// ---- solve ----

interface SolveCommand {
  file: string;
  json: boolean;
  grids: boolean;
  svg: string | null;
  html: string | null;
  /** Adaptive refinement tolerance (`--refine`). */
  refine?: number;
}

async function solve(cmd: SolveCommand, io: Io, stages: Stages): Promise<number> {
  const fail = (message: string, diagnostics: Diagnostic[] = []): number => {
    if (cmd.json) io.out(stringify(failureJson(cmd.file, message, diagnostics)));
    else for (const d of sortDiagnostics(diagnostics)) io.out(formatDiagnostic(cmd.file, d) + '\n');
    io.err(`voltscape: ${message}\n`);
    return EXIT_FAILED;
  };
  if (cmd.html && !stages.renderPreviewHtml) return fail('--html is not available in this build yet');
  const read = readScene(io, cmd.file);
  if (!read.ok) return fail(read.message);
  const analysed = guarded(`analysing ${cmd.file}`, () => stages.analyzeText(read.text));
  if (!analysed.ok) return fail(analysed.message);
  const { scene, diagnostics } = analysed.value;
  const errors = countErrors(diagnostics);
  if (errors > 0 || !scene) return fail(`${cmd.file} has ${plural(errors, 'error')}: not solved`, diagnostics);
  const solved = guarded(`solving ${cmd.file}`, () => stages.solveScene(scene, cmd.refine !== undefined ? { refine: cmd.refine } : undefined));
  if (!solved.ok) return fail(solved.message, diagnostics);
  if (solved.value === null) return fail(`could not solve ${cmd.file} (the solver gave no result for this scene)`, diagnostics);
  const result: Result = { ...solved.value, diagnostics: solveDiagnostics(scene, solved.value) };

  if (cmd.json) io.out(stringify(resultJson({ file: cmd.file, scene, result, diagnostics, grids: cmd.grids })));
  else io.out(renderReport({ file: cmd.file, scene, result, diagnostics }));

  const outputs: [string, () => string][] = [];
  // Pictures get outlines and ground traces cut from the scene where the solve left them out.
  const drawn = cmd.svg || cmd.html ? completeSlices(scene, result) : result;
  if (cmd.svg) outputs.push([cmd.svg, () => renderSvg({ title: scene.title ?? cmd.file, subtitle: subtitle(scene), result: drawn })]);
  if (cmd.html && stages.renderPreviewHtml) {
    const render = stages.renderPreviewHtml;
    outputs.push([cmd.html, () => render({ file: cmd.file, scene, result: drawn, diagnostics })]);
  }
  for (const [path, render] of outputs) {
    let made: string;
    try {
      made = render();
    } catch (error) {
      return fail(`could not make ${path}: ${firstLine(error)}`);
    }
    try {
      io.writeFile(path, made);
    } catch (error) {
      return fail(`cannot write ${path}: ${describeFsError(error)}`);
    }
    io.err(`wrote ${path}\n`);
  }
  return countErrors(result.diagnostics) > 0 ? EXIT_ERRORS : EXIT_CLEAN;
}

function subtitle(scene: Scene): string {
  const medium = scene.medium.name ?? `εr ${scene.medium.permittivity}`;
  const counts = `${plural(scene.electrodes.length, 'electrode')}, ${plural(scene.charges.length, 'free charge')}`;
  return `${scene.space} · ${medium} · ${counts}`;
}
