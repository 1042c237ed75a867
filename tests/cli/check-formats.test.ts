// `voltscape check --format text|json|sarif`: the outputs and exit codes, run in-process with the real
// grammar and solver on scene files written to a temporary folder.
// SARIF logs are validated against the published JSON schema of the OASIS SARIF 2.1.0 standard
// (schemas/sarif-schema-2.1.0.json, errata 01, copied unchanged) with ajv, a general-purpose validator.
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join, resolve } from 'node:path';
import Ajv from 'ajv';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { analyzeText, DIAGNOSTIC_CODES } from '../../grammar/index';
import { createEngineCache, solveScene } from '../../server/src/engine/index';
import { artifactLocation, CHECK_JSON_FORMAT, placeOf } from '../../server/src/cli/check-formats';
import { EXIT_CLEAN, EXIT_ERRORS, EXIT_FAILED, run, type Io, type Stages } from '../../server/src/cli/run';

const root = resolve(__dirname, '../..');
const sarifSchema = JSON.parse(readFileSync(join(root, 'schemas/sarif-schema-2.1.0.json'), 'utf8'));

// Several mistakes of different kinds: three errors and a warning.
const SEVERAL = `scene "Several mistakes"
mesh coarse
let drive = 12 kv
let gap = 40 mm
electrode a sphere center (0, 0, 0) radius 10 mm potential 5 kV
electrode b sphere center (gapp, 0, 0) radius 10 mm potential 0 V
electrode c sphere center (0, 0, 5) mm radius 2 mm potential 1 kV
probe p point at (0, 0, 5) km
`;
const CLEAN = `scene "Lone sphere"
mesh coarse
electrode dome sphere center (0, 0, 0) radius 20 mm potential 10 kV
`;
// A 1 mm sphere at 10 kV: surface field V/a = 10 kV/mm (textbook electrostatics), far over the 1 kV/mm limit.
const OVER_LIMIT = `scene "Needle-like tip"
mesh coarse
electrode tip sphere center (0, 0, 0) radius 1 mm potential 10 kV
limit field 1 kV/mm
`;

let dir = '';
const path = (name: string) => join(dir, name);

beforeAll(() => {
  dir = mkdtempSync(join(tmpdir(), 'voltscape-check-'));
  writeFileSync(path('several.vscape'), SEVERAL);
  writeFileSync(path('clean.vscape'), CLEAN);
  writeFileSync(path('over.vscape'), OVER_LIMIT);
});
afterAll(() => rmSync(dir, { recursive: true, force: true }));

const stages: Stages = {
  version: '0.1.0',
  analyzeText,
  solveScene: (scene) => solveScene(scene, { cache: createEngineCache() }),
};

async function check(args: string[]) {
  const out: string[] = [];
  const err: string[] = [];
  const io: Io = {
    out: (t) => void out.push(t),
    err: (t) => void err.push(t),
    readFile: (p) => readFileSync(p),
    writeFile: (p, d) => writeFileSync(p, d),
  };
  const code = await run(['check', ...args], io, stages);
  return { code, stdout: out.join(''), stderr: err.join('') };
}

/**
 * The schema is draft-04 (its `$schema`). ajv 8 validates draft-07; the two agree on every keyword this
 * schema uses (it has no boolean exclusiveMinimum/Maximum, the one draft-04 form whose meaning changed,
 * checked below), so the draft-07 validator is used with the draft-04 `$schema`/`id` markers set aside.
 * Formats are checked with the WHATWG URL parser (node) and an RFC 3339 date-time pattern.
 */
function sarifValidator() {
  const { $schema: _meta, id: _id, ...body } = sarifSchema;
  const ajv = new Ajv({ strict: false, allErrors: true });
  ajv.addFormat('uri', (s: string) => {
    try {
      new URL(s);
      return true;
    } catch {
      return false;
    }
  });
  ajv.addFormat('uri-reference', (s: string) => {
    try {
      new URL(s, 'file:///base/');
      return !/\s/.test(s);
    } catch {
      return false;
    }
  });
  ajv.addFormat('date-time', /^\d{4}-\d\d-\d\dT\d\d:\d\d:\d\d(\.\d+)?(Z|[+-]\d\d:\d\d)$/i);
  return ajv.compile(body);
}

describe('the SARIF 2.1.0 schema shipped in the repository', () => {
  it('is the OASIS draft-04 schema of version 2.1.0, without draft-04-only boolean exclusive bounds', () => {
    expect(sarifSchema.$schema).toBe('http://json-schema.org/draft-04/schema#');
    expect(sarifSchema.id).toBe('https://docs.oasis-open.org/sarif/sarif/v2.1.0/errata01/os/schemas/sarif-schema-2.1.0.json');
    expect(sarifSchema.properties.version.enum).toEqual(['2.1.0']);
    const text = JSON.stringify(sarifSchema);
    expect(text).not.toMatch(/exclusiveM(in|ax)imum/);
  });

  it('rejects a log that breaks it (a level that SARIF does not have, a column of 0)', () => {
    const validate = sarifValidator();
    const bad = {
      version: '2.1.0',
      runs: [
        {
          tool: { driver: { name: 'voltscape' } },
          results: [{ message: { text: 'x' }, level: 'info', locations: [{ physicalLocation: { artifactLocation: { uri: 'a.vscape' }, region: { startLine: 1, startColumn: 0 } } }] }],
        },
      ],
    };
    expect(validate(bad)).toBe(false);
    const paths = (validate.errors ?? []).map((e) => e.instancePath);
    expect(paths).toContain('/runs/0/results/0/level');
    expect(paths).toContain('/runs/0/results/0/locations/0/physicalLocation/region/startColumn');
  });
});

describe('check --format sarif', () => {
  it('writes a valid SARIF 2.1.0 log for a file with several diagnostics, and exits 1', async () => {
    const r = await check(['--format', 'sarif', path('several.vscape')]);
    expect(r.code).toBe(EXIT_ERRORS);
    const log = JSON.parse(r.stdout);
    const validate = sarifValidator();
    expect(validate(log), JSON.stringify(validate.errors)).toBe(true);

    expect(log.version).toBe('2.1.0');
    expect(log.runs).toHaveLength(1);
    const [runLog] = log.runs;
    expect(runLog.tool.driver.name).toBe('voltscape');
    expect(runLog.tool.driver.version).toBe('0.1.0');
    // One rule per registered code, with its title and the SARIF level of its severity.
    const rules = runLog.tool.driver.rules as { id: string; shortDescription: { text: string }; defaultConfiguration: { level: string } }[];
    expect(rules.map((x) => x.id).sort()).toEqual(Object.keys(DIAGNOSTIC_CODES).sort());
    const vs205 = rules.find((x) => x.id === 'VS205')!;
    expect(vs205.shortDescription.text).toBe(DIAGNOSTIC_CODES.VS205.title);
    expect(vs205.defaultConfiguration.level).toBe('warning');
    expect(rules.find((x) => x.id === 'VS227')!.defaultConfiguration.level).toBe('note');

    const results = runLog.results as { ruleId: string; ruleIndex: number; level: string; message: { text: string }; locations: any[] }[];
    const ids = results.map((x) => x.ruleId);
    expect(ids).toEqual(expect.arrayContaining(['VS201', 'VS206', 'VS303', 'VS205']));
    for (const x of results) expect(rules[x.ruleIndex].id).toBe(x.ruleId);
    expect(results.filter((x) => x.level === 'error').length).toBeGreaterThanOrEqual(3);
    expect(results.find((x) => x.ruleId === 'VS205')!.level).toBe('warning');

    // The unknown unit `kv` on line 3: 1-based line and columns, end column just after the unit.
    const unit = results.find((x) => x.ruleId === 'VS201')!;
    const line3 = SEVERAL.split('\n')[2];
    const loc = unit.locations[0].physicalLocation;
    expect(loc.artifactLocation.uri).toBe(artifactLocation(path('several.vscape')).uri);
    expect(loc.region).toEqual({ startLine: 3, startColumn: line3.indexOf('kv') + 1, endLine: 3, endColumn: line3.indexOf('kv') + 3 });
    expect(unit.message.text).toMatch(/kV/);
  });

  it('writes a valid log with no results for a clean file, and exits 0', async () => {
    const r = await check(['--format=sarif', path('clean.vscape')]);
    expect(r.code).toBe(EXIT_CLEAN);
    const log = JSON.parse(r.stdout);
    const validate = sarifValidator();
    expect(validate(log), JSON.stringify(validate.errors)).toBe(true);
    expect(log.runs[0].results).toEqual([]);
    expect(log.runs[0].invocations[0]).toMatchObject({ executionSuccessful: true, exitCode: 0 });
  });

  it('reports an unreadable file as a tool notification, stays valid, and exits 2', async () => {
    const r = await check(['--format', 'sarif', path('clean.vscape'), path('missing.vscape')]);
    expect(r.code).toBe(EXIT_FAILED);
    const log = JSON.parse(r.stdout);
    const validate = sarifValidator();
    expect(validate(log), JSON.stringify(validate.errors)).toBe(true);
    const invocation = log.runs[0].invocations[0];
    expect(invocation.executionSuccessful).toBe(false);
    expect(invocation.toolExecutionNotifications[0].message.text).toMatch(/missing\.vscape.*no such file/);
  });

  it('relative paths stay relative, with a base id; absolute ones become file URIs', () => {
    expect(artifactLocation('scenes/bay one.vscape')).toEqual({ uri: 'scenes/bay%20one.vscape', uriBaseId: '%SRCROOT%' });
    expect(artifactLocation('/work/a#1.vscape')).toEqual({ uri: 'file:///work/a%231.vscape' });
    expect(artifactLocation('C:\\scenes\\a.vscape')).toEqual({ uri: 'file:///C:/scenes/a.vscape' });
  });
});

describe('check --format json', () => {
  it('prints one voltscape-check/1 object with 1-based places and totals, and exits 1 on errors', async () => {
    const r = await check(['--format', 'json', path('several.vscape'), path('clean.vscape')]);
    expect(r.code).toBe(EXIT_ERRORS);
    const doc = JSON.parse(r.stdout);
    expect(doc.format).toBe(CHECK_JSON_FORMAT);
    expect(doc.tool).toEqual({ name: 'voltscape', version: '0.1.0' });
    expect(doc.files.map((f: { file: string }) => f.file)).toEqual([path('several.vscape'), path('clean.vscape')]);
    const [several, clean] = doc.files;
    expect(several.ok).toBe(false);
    expect(clean).toEqual({ file: path('clean.vscape'), ok: true, error: null, diagnostics: [] });
    for (const d of several.diagnostics) {
      expect(Object.keys(d).sort()).toEqual(['code', 'column', 'endColumn', 'endLine', 'line', 'message', 'severity']);
      expect(d.line).toBeGreaterThanOrEqual(1);
      expect(d.column).toBeGreaterThanOrEqual(1);
    }
    const unknownName = several.diagnostics.find((d: { code: string }) => d.code === 'VS206');
    const line6 = SEVERAL.split('\n')[5];
    expect(unknownName).toMatchObject({ severity: 'error', line: 6, column: line6.indexOf('gapp') + 1, endLine: 6, endColumn: line6.indexOf('gapp') + 5 });
    const errors = several.diagnostics.filter((d: { severity: string }) => d.severity === 'error').length;
    const warnings = several.diagnostics.filter((d: { severity: string }) => d.severity === 'warning').length;
    expect(doc.totals).toEqual({ files: 2, errors, warnings, infos: 0, failed: 0 });
    expect(doc.exitCode).toBe(EXIT_ERRORS);
  });

  it('a broken limit is an error in the JSON and exits 1', async () => {
    const r = await check(['--format', 'json', path('over.vscape')]);
    expect(r.code).toBe(EXIT_ERRORS);
    const doc = JSON.parse(r.stdout);
    const limit = doc.files[0].diagnostics.find((d: { code: string }) => d.code === 'VS401');
    expect(limit.severity).toBe('error');
    expect(limit.message).toMatch(/design aid/i);
    // On the electrode whose peak breaks it (line 3) or on the `limit` (line 4), 1-based.
    expect([3, 4]).toContain(limit.line);
  }, 60_000);
});

describe('exit codes are the same in every format', () => {
  const cases: [string, string[], number][] = [
    ['clean', ['clean.vscape'], EXIT_CLEAN],
    ['errors', ['several.vscape'], EXIT_ERRORS],
    ['unreadable', ['missing.vscape'], EXIT_FAILED],
  ];
  for (const format of ['text', 'json', 'sarif']) {
    for (const [what, files, code] of cases) {
      it(`${format}: ${what} exits ${code}`, async () => {
        const r = await check(['--format', format, ...files.map(path)]);
        expect(r.code).toBe(code);
        if (format === 'text') expect(() => JSON.parse(r.stdout)).toThrow();
        else expect(JSON.parse(r.stdout).runs ?? JSON.parse(r.stdout).files).toBeDefined();
      });
    }
  }

  it('text output is unchanged: file:line:col severity code message', async () => {
    const r = await check([path('several.vscape')]);
    const line3 = SEVERAL.split('\n')[2];
    expect(r.stdout).toContain(`${path('several.vscape')}:3:${line3.indexOf('kv') + 1} error VS201 `);
  });

  it('an unknown format or a missing value is a usage mistake (exit 2)', async () => {
    expect((await check(['--format', 'xml', path('clean.vscape')])).code).toBe(EXIT_FAILED);
    const missing = await check(['--format']);
    expect(missing.code).toBe(EXIT_FAILED);
    expect(missing.stderr).toMatch(/--format needs text, json or sarif/);
  });

  it('placeOf turns LSP ranges into 1-based places with an exclusive end', () => {
    expect(placeOf({ start: { line: 0, character: 0 }, end: { line: 2, character: 4 } })).toEqual({ line: 1, column: 1, endLine: 3, endColumn: 5 });
  });
});
