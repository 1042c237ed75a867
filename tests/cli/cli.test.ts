// End to end: the built dist/cli.js on real scene files, spawned as a user would run it.
// The build is reused when it is newer than the sources; otherwise it is rebuilt once here.
import { spawn, spawnSync } from 'node:child_process';
import { existsSync, mkdtempSync, readdirSync, readFileSync, rmSync, statSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join, resolve } from 'node:path';
import Ajv from 'ajv';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { EPSILON_0 } from '../../grammar/scene';
import { resultSchema } from './result-schema';
import { parseXml } from './xml';

const root = resolve(__dirname, '../..');
const cli = join(root, 'dist/cli.js');
let work = '';

/** Newest modification time of the .ts files under the folders the CLI bundles. */
function newestSource(): number {
  let newest = 0;
  const walk = (dir: string) => {
    for (const entry of readdirSync(dir, { withFileTypes: true })) {
      const path = join(dir, entry.name);
      if (entry.isDirectory()) walk(path);
      else if (entry.name.endsWith('.ts')) newest = Math.max(newest, statSync(path).mtimeMs);
    }
  };
  for (const dir of ['grammar', 'server/src/cli', 'server/src/format', 'server/src/engine']) walk(join(root, dir));
  return newest;
}

function ensureBuilt(): void {
  if (existsSync(cli) && statSync(cli).mtimeMs >= newestSource()) return;
  const full = spawnSync(process.execPath, ['scripts/build.mjs'], { cwd: root, encoding: 'utf8' });
  if (full.status === 0 && existsSync(cli)) return;
  // Another entry of the full build may be mid-edit: build the CLI alone, with the same settings.
  const alone = spawnSync(
    process.execPath,
    [
      '-e',
      "import('./scripts/wat.mjs').then(({ watPlugin }) => require('esbuild').build({ entryPoints: ['server/src/cli/main.ts'], outfile: 'dist/cli.js', bundle: true, platform: 'node', target: 'node20', format: 'cjs', sourcemap: true, banner: { js: '#!/usr/bin/env node' }, logLevel: 'error', plugins: [watPlugin] })).catch((e) => { console.error(e); process.exit(1); })",
    ],
    { cwd: root, encoding: 'utf8' },
  );
  if (alone.status !== 0) throw new Error(`could not build dist/cli.js: ${alone.stderr}`);
}

function voltscape(args: string[]) {
  const run = spawnSync(process.execPath, [cli, ...args], { cwd: root, encoding: 'utf8', timeout: 110_000 });
  return { code: run.status, stdout: run.stdout, stderr: run.stderr };
}

/** No stack trace: no "    at f (file:line)" frames and no Node error banner. */
function expectNoStackTrace(stderr: string): void {
  expect(stderr).not.toMatch(/^\s+at .+[:(]/m);
  expect(stderr).not.toMatch(/node:internal|Error: .*\n\s+at/);
}

beforeAll(() => {
  ensureBuilt();
  work = mkdtempSync(join(tmpdir(), 'voltscape-cli-'));
});
afterAll(() => {
  if (work) rmSync(work, { recursive: true, force: true });
});

describe('voltscape solve on the lone-sphere sample', () => {
  // Isolated sphere of radius a = 50 mm at V = 10 kV: C = 4πε0·a, Q = C·V, surface field V/a
  // (textbook electrostatics, references.md "Closed forms").
  const a = 0.05;
  const V = 10e3;
  const C = 4 * Math.PI * EPSILON_0 * a;
  let json: Record<string, any>;
  let report = '';
  let svg = '';
  let html = '';

  // Two solves in all: one for the JSON, one for the report with both pictures.
  beforeAll(() => {
    const asJson = voltscape(['solve', 'samples/lone-sphere.vscape', '--json']);
    expect(asJson.code).toBe(0);
    expectNoStackTrace(asJson.stderr);
    json = JSON.parse(asJson.stdout);
    const [svgOut, htmlOut] = [join(work, 'sphere.svg'), join(work, 'sphere.html')];
    const asReport = voltscape(['solve', 'samples/lone-sphere.vscape', '--svg', svgOut, '--html', htmlOut]);
    expect(asReport.code).toBe(0);
    expectNoStackTrace(asReport.stderr);
    report = asReport.stdout;
    svg = readFileSync(svgOut, 'utf8');
    html = readFileSync(htmlOut, 'utf8');
  });

  it('prints JSON that matches the voltscape-result/1 contract', () => {
    const validate = new Ajv({ allErrors: true, strict: false }).compile(resultSchema);
    expect(validate(json), JSON.stringify(validate.errors)).toBe(true);
    expect(json.electrodes.map((e: { name: string }) => e.name)).toEqual(['ball']);
    expect(json.capacitance.names).toEqual(['ball']);
    expect(json.slices[0].potential).toBeUndefined();
  });

  it('gives the capacitance 4πε0·a within 1%', () => {
    // Engine accuracy on a sphere is about −4/N for N flat panels (methods.md): 0.56% at the 720
    // panels of `mesh coarse` here, so 1% is the stated accuracy with a margin.
    const ball = json.electrodes[0];
    expect(Math.abs(ball.capacitance / C - 1)).toBeLessThan(0.01);
    expect(Math.abs(json.capacitance.matrix[0][0] / C - 1)).toBeLessThan(0.01);
    expect(Math.abs(ball.charge / (C * V) - 1)).toBeLessThan(0.01);
    // Stored energy ½CV² (same closed form).
    expect(Math.abs(json.energy / (0.5 * C * V * V) - 1)).toBeLessThan(0.01);
  });

  it('gives the surface field V/a within 3% and the potential V·a/r on the probe line within 1%', () => {
    // Field on flat panels converges more slowly than charge: 3% at this mesh (common practice for
    // centroid collocation on a coarse sphere).
    expect(Math.abs(json.electrodes[0].maxField / (V / a) - 1)).toBeLessThan(0.03);
    for (const p of json.probes[0].points) {
      const r = Math.hypot(...(p.at as number[]));
      expect(Math.abs(p.potential / ((V * a) / r) - 1)).toBeLessThan(0.01);
    }
  });

  it('writes a standalone SVG with equipotential paths and the sphere outline', () => {
    const elements = parseXml(svg);
    expect(elements[0].name).toBe('svg');
    expect(elements.filter((e) => e.name === 'path' && e.attributes.class === 'equipotential').length).toBeGreaterThan(5);
    expect(elements.some((e) => e.attributes['data-electrode'] === 'ball')).toBe(true);
  });

  it('prints a readable report with units, the tables and the caution', () => {
    expect(report).toContain('Voltscape report: Lone sphere, 50 mm radius, at 10 kV');
    expect(report).toMatch(/ball\s+held at 10 kV\s+10 kV\s+5\d\.\d+ nC\s+5\.5\d+ pF/);
    expect(report).toMatch(/Peak surface field[\s\S]*ball\s+0\.2\d* kV\/mm/);
    expect(report).toContain('Capacitance matrix (Maxwell, pF');
    expect(report).toMatch(/stored 2\d\d\.\d µJ/);
    expect(report).toContain('High voltage kills: these figures are a design aid');
  });

  it('writes the preview page as one HTML file under a nonce Content-Security-Policy, with the result as JSON data', () => {
    expect(html).toMatch(/^<!DOCTYPE html>/);
    expect(html).toMatch(/Content-Security-Policy" content="default-src 'none'; script-src 'nonce-/);
    expect(html).toContain('<script type="application/json" id="voltscape-data">');
    expect(html).toContain('voltscape-result/1');
  });
});

describe('voltscape check', () => {
  it('passes every sample (exit 0), solving those with a limit', () => {
    const samples = readdirSync(join(root, 'samples'))
      .filter((f) => f.endsWith('.vscape'))
      .map((f) => `samples/${f}`);
    expect(samples.length).toBeGreaterThanOrEqual(4);
    const run = voltscape(['check', ...samples]);
    expect(run.stdout.split('\n').filter((l) => / error /.test(l))).toEqual([]);
    expect(run.code).toBe(0);
  });

  it('prints file:line:col severity code message and exits 1 on an error', () => {
    const file = join(work, 'typo.vscape');
    writeFileSync(file, 'scene "Typo"\nelectrode a sphere center (0, 0, 0) mm radius 5 mm potential 12 kv\n');
    const run = voltscape(['check', file]);
    expect(run.code).toBe(1);
    expect(run.stdout).toMatch(new RegExp(`^${file.replace(/[.*+?^${}()|[\]\\]/g, '\\$&')}:2:\\d+ error VS201 `, 'm'));
    expectNoStackTrace(run.stderr);
  });

  it('exits 1 when a scene breaks its limit', () => {
    // A 10 mm sphere at 10 kV has a surface field of V/a = 1 kV/mm (isolated sphere, references.md),
    // twice the limit written here.
    const file = join(work, 'limit.vscape');
    writeFileSync(file, 'mesh size 6 mm\nelectrode tip sphere center (0, 0, 0) radius 10 mm potential 10 kV\nlimit field 0.5 kV/mm\n');
    const run = voltscape(['check', file]);
    expect(run.code).toBe(1);
    expect(run.stdout).toMatch(/limit\.vscape:\d+:\d+ error VS401 Peak field /);
    expect(run.stderr).toContain('High voltage kills');
  });

  it('exits 2 on random bytes, an empty file, a missing file and a directory, without a stack trace', () => {
    // Fixed pseudo-random bytes (a linear congruential sequence), so the case is the same every run.
    const bytes = new Uint8Array(600);
    let x = 12345;
    for (let i = 0; i < bytes.length; i++) bytes[i] = (x = (x * 1103515245 + 12345) >>> 0) >>> 24;
    writeFileSync(join(work, 'random.vscape'), bytes);
    writeFileSync(join(work, 'empty.vscape'), '');
    for (const [file, reason] of [
      ['random.vscape', /not (a text file|UTF-8 text)/],
      ['empty.vscape', /is empty/],
      ['missing.vscape', /no such file/],
      ['.', /directory/],
    ] as const) {
      for (const command of ['check', 'solve']) {
        const run = voltscape([command, join(work, file)]);
        expect(run.code, `${command} ${file}`).toBe(2);
        expect(run.stderr).toMatch(reason);
        expectNoStackTrace(run.stderr);
      }
    }
  });
});

describe('voltscape solve on a file with errors, and usage', () => {
  it('prints the diagnostics and exits 2 when the scene has errors', () => {
    const file = join(work, 'broken.vscape');
    writeFileSync(file, 'electrode a sphere center (0, 0, 0) radius 5 potential 1 kV\n');
    const run = voltscape(['solve', file]);
    expect(run.code).toBe(2);
    expect(run.stdout).toMatch(/broken\.vscape:1:\d+ error VS\d{3} /);
    expect(run.stderr).toContain('not solved');
    expectNoStackTrace(run.stderr);
  });

  it('answers --help and --version with exit 0, and an unknown command with the usage and exit 2', () => {
    expect(voltscape(['--help'])).toMatchObject({ code: 0, stdout: expect.stringContaining('voltscape solve FILE') });
    expect(voltscape(['--version']).stdout).toMatch(/^voltscape \d+\.\d+\.\d+\n$/);
    const unknown = voltscape(['bake', 'x']);
    expect(unknown.code).toBe(2);
    expect(unknown.stderr).toContain('Usage:');
  });
});

describe('voltscape lsp', () => {
  it('starts the language server on stdio and answers initialize', async () => {
    const child = spawn(process.execPath, [cli, 'lsp', '--stdio'], { cwd: root });
    try {
      const message = JSON.stringify({ jsonrpc: '2.0', id: 1, method: 'initialize', params: { processId: null, rootUri: null, capabilities: {} } });
      child.stdin.write(`Content-Length: ${Buffer.byteLength(message)}\r\n\r\n${message}`);
      const reply = await new Promise<string>((resolve, reject) => {
        let out = '';
        child.stdout.on('data', (d) => {
          out += d;
          const body = out.indexOf('\r\n\r\n');
          if (body >= 0 && out.includes('"id":1')) resolve(out.slice(body + 4));
        });
        child.on('exit', (code) => reject(new Error(`server exited with ${code}`)));
      });
      const json = JSON.parse(reply);
      expect(json.id).toBe(1);
      expect(json.result.capabilities.hoverProvider).toBe(true);
    } finally {
      child.kill();
    }
  });
});
