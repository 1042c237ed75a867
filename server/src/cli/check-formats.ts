// The machine-readable outputs of `voltscape check --format json|sarif`.
// JSON: the project's own format `voltscape-check/1` (docs/cli.md). SARIF: the OASIS Static Analysis
// Results Interchange Format, version 2.1.0 (OASIS standard; schema in schemas/sarif-schema-2.1.0.json),
// which code-review and CI tools read to show findings beside the source.
// Both are pure functions of what `check` found; `text` stays in run.ts (file:line:col lines).
import { DIAGNOSTIC_CODES, type CodeInfo } from '../../../grammar/diagnostics';
import type { Diagnostic, Range, Severity } from '../../../grammar/scene';

export type CheckFormat = 'text' | 'json' | 'sarif';
export const CHECK_FORMATS: readonly CheckFormat[] = ['text', 'json', 'sarif'];

export const CHECK_JSON_FORMAT = 'voltscape-check/1';
export const SARIF_VERSION = '2.1.0';
/** The schema's published address (OASIS SARIF 2.1.0, errata 01). */
export const SARIF_SCHEMA_URI = 'https://docs.oasis-open.org/sarif/sarif/v2.1.0/errata01/os/schemas/sarif-schema-2.1.0.json';
/** Relative file names are resolved against this base, the folder `check` ran in. */
export const SOURCE_ROOT = '%SRCROOT%';

/** What `check` found for one file: its diagnostics, or why it could not be checked. */
export interface FileCheck {
  file: string;
  diagnostics: Diagnostic[];
  /** Why the file was not (fully) checked: unreadable, empty, a solve that failed; null when checked. */
  failure: string | null;
}

export interface CheckRun {
  version: string;
  files: FileCheck[];
  exitCode: number;
}

/** A 1-based place: line and column of the first character, and of the character just after the end (UTF-16 columns, as LSP). */
export interface Place {
  line: number;
  column: number;
  endLine: number;
  endColumn: number;
}

export function placeOf(range: Range | undefined): Place {
  const start = range?.start ?? { line: 0, character: 0 };
  const end = range?.end ?? start;
  return { line: start.line + 1, column: start.character + 1, endLine: end.line + 1, endColumn: end.character + 1 };
}

export function renderCheck(format: Exclude<CheckFormat, 'text'>, run: CheckRun): string {
  const value = format === 'json' ? checkJson(run) : checkSarif(run);
  return JSON.stringify(value, null, 2) + '\n';
}

// ---- JSON: voltscape-check/1 ----

export function checkJson(run: CheckRun): Record<string, unknown> {
  const count = (s: Severity) => run.files.reduce((n, f) => n + f.diagnostics.filter((d) => d.severity === s).length, 0);
  return {
    format: CHECK_JSON_FORMAT,
    tool: { name: 'voltscape', version: run.version },
    files: run.files.map((f) => ({
      file: f.file,
      ok: f.failure === null && !f.diagnostics.some((d) => d.severity === 'error'),
      error: f.failure,
      diagnostics: f.diagnostics.map((d) => ({ code: d.code, severity: d.severity, message: d.message, ...placeOf(d.range) })),
    })),
    totals: {
      files: run.files.length,
      errors: count('error'),
      warnings: count('warning'),
      infos: count('info'),
      failed: run.files.filter((f) => f.failure !== null).length,
    },
    exitCode: run.exitCode,
  };
}

// ---- SARIF 2.1.0 ----

/** SARIF result levels (OASIS SARIF 2.1.0, §3.27.10 level): our info is its `note`. */
const LEVEL: Record<Severity, 'error' | 'warning' | 'note'> = { error: 'error', warning: 'warning', info: 'note' };

/** The rules of the tool's driver: every code of the registry, in code order. */
export function sarifRules(codes: Record<string, CodeInfo> = DIAGNOSTIC_CODES) {
  return Object.keys(codes)
    .sort()
    .map((id) => ({
      id,
      shortDescription: { text: codes[id].title },
      defaultConfiguration: { level: LEVEL[codes[id].severity] },
      help: { text: `See ${id} in docs/language.md. Example: ${codes[id].example.replace(/\n/g, ' / ')}` },
    }));
}

/** A file name as a SARIF URI reference: forward slashes, percent-encoded; absolute paths as file: URIs. */
export function artifactLocation(file: string): { uri: string; uriBaseId?: string } {
  const slashed = file.replace(/\\/g, '/');
  const encode = (path: string) => path.split('/').map(encodeURIComponent).join('/');
  const drive = /^([A-Za-z]:)\/(.*)$/.exec(slashed);
  if (drive) return { uri: `file:///${drive[1]}/${encode(drive[2])}` };
  if (slashed.startsWith('/')) return { uri: 'file://' + encode(slashed) };
  return { uri: encode(slashed), uriBaseId: SOURCE_ROOT };
}

export function checkSarif(run: CheckRun): Record<string, unknown> {
  const rules = sarifRules();
  const ruleIndex = new Map(rules.map((r, i) => [r.id, i]));
  const results = run.files.flatMap((f) =>
    f.diagnostics.map((d) => {
      const p = placeOf(d.range);
      const index = ruleIndex.get(d.code);
      return {
        ruleId: d.code,
        ...(index === undefined ? {} : { ruleIndex: index }),
        level: LEVEL[d.severity],
        message: { text: d.message },
        locations: [
          {
            physicalLocation: {
              artifactLocation: artifactLocation(f.file),
              region: { startLine: p.line, startColumn: p.column, endLine: p.endLine, endColumn: p.endColumn },
            },
          },
        ],
      };
    }),
  );
  // Files that could not be checked are not findings in them: they are notifications about the run.
  const notifications = run.files
    .filter((f) => f.failure !== null)
    .map((f) => ({
      level: 'error' as const,
      message: { text: f.failure as string },
      locations: [{ physicalLocation: { artifactLocation: artifactLocation(f.file) } }],
    }));
  return {
    $schema: SARIF_SCHEMA_URI,
    version: SARIF_VERSION,
    runs: [
      {
        tool: { driver: { name: 'voltscape', version: run.version, semanticVersion: run.version, rules } },
        invocations: [
          {
            executionSuccessful: notifications.length === 0,
            exitCode: run.exitCode,
            ...(notifications.length > 0 ? { toolExecutionNotifications: notifications } : {}),
          },
        ],
        artifacts: run.files.map((f) => ({ location: artifactLocation(f.file) })),
        // Columns count UTF-16 code units, as the language server's positions do.
        columnKind: 'utf16CodeUnits',
        results,
      },
    ],
  };
}
