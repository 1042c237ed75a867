// The CLI's commands, exit codes and output formats, run in-process on stand-in stages (so that the
// CLI's own logic is tested apart from the parser and the solver; cli.test.ts runs the real thing).
import { describe, expect, it } from 'vitest';
import type { Diagnostic } from '../../grammar/scene';
import { parseArgs } from '../../server/src/cli/args';
import { JSON_FORMAT } from '../../server/src/cli/json';
import { EXIT_CLEAN, EXIT_ERRORS, EXIT_FAILED, LIMIT_BROKEN_CODE, run, type Io, type Stages } from '../../server/src/cli/run';
import { range, sphereResult, sphereScene } from './fixtures';

const files: Record<string, Uint8Array> = {
  'good.vscape': new TextEncoder().encode('good scene'),
  'tight.vscape': new TextEncoder().encode('tight limit'),
  'bad.vscape': new TextEncoder().encode('bad scene'),
  'empty.vscape': new Uint8Array(0),
  'blank.vscape': new TextEncoder().encode('  \n\t\n'),
  'binary.vscape': Uint8Array.from([0x89, 0x50, 0x4e, 0x47, 0x00, 0xff, 0xfe, 0x10]),
  'latin1.vscape': Uint8Array.from([0x73, 0x63, 0xe9, 0x6e, 0x65]),
};

const badDiagnostic: Diagnostic = { code: 'VS201', severity: 'error', message: 'Unknown unit "kv"; did you mean "kV"?', range: range(2, 14) };

function harness(extra: Partial<Stages> = {}) {
  const out: string[] = [];
  const err: string[] = [];
  const written = new Map<string, string>();
  const io: Io = {
    out: (t) => void out.push(t),
    err: (t) => void err.push(t),
    readFile: (path) => {
      if (path === 'locked.vscape') throw Object.assign(new Error('EACCES: permission denied'), { code: 'EACCES' });
      if (path === 'folder') throw Object.assign(new Error('EISDIR'), { code: 'EISDIR' });
      const f = files[path];
      if (!f) throw Object.assign(new Error(`ENOENT: no such file or directory, open '${path}'`), { code: 'ENOENT' });
      return f;
    },
    writeFile: (path, data) => {
      if (path.startsWith('/nonexistent/')) throw Object.assign(new Error('ENOENT'), { code: 'ENOENT' });
      written.set(path, data);
    },
  };
  const stages: Stages = {
    version: '9.9.9',
    analyzeText: (text) => {
      if (text === 'bad scene') return { scene: null, diagnostics: [badDiagnostic] };
      const scene = sphereScene();
      if (text === 'tight limit') scene.limit = { field: 1e5, range: range(7, 0) }; // below the 0.3 kV/mm peak
      return { scene, diagnostics: [] };
    },
    solveScene: () => sphereResult(),
    ...extra,
  };
  return {
    run: (argv: string[]) => run(argv, io, stages),
    stdout: () => out.join(''),
    stderr: () => err.join(''),
    written,
  };
}

describe('arguments', () => {
  it('reads solve with its flags in either order and with =', () => {
    expect(parseArgs(['solve', '--svg', 'a.svg', 'x.vscape', '--json'])).toEqual({ kind: 'solve', file: 'x.vscape', json: true, grids: false, svg: 'a.svg', html: null });
    expect(parseArgs(['solve', 'x.vscape', '--html=p.html'])).toMatchObject({ kind: 'solve', html: 'p.html' });
  });
  it('turns every mistake into a usage message', () => {
    expect(parseArgs([])).toMatchObject({ kind: 'usage' });
    expect(parseArgs(['frobnicate'])).toMatchObject({ kind: 'usage', message: 'unknown command "frobnicate"' });
    expect(parseArgs(['solve'])).toMatchObject({ kind: 'usage' });
    expect(parseArgs(['solve', 'a', 'b'])).toMatchObject({ kind: 'usage' });
    expect(parseArgs(['solve', 'a', '--svg'])).toMatchObject({ kind: 'usage', message: '--svg needs an output file' });
    expect(parseArgs(['solve', 'a', '--grids'])).toMatchObject({ kind: 'usage' });
    expect(parseArgs(['check', '--fast', 'a'])).toMatchObject({ kind: 'usage' });
    expect(parseArgs(['lsp'])).toMatchObject({ kind: 'usage' });
  });
  it('accepts a file named like an option after --', () => {
    expect(parseArgs(['check', '--', '-odd.vscape'])).toMatchObject({ kind: 'check', files: ['-odd.vscape'] });
  });
});

describe('voltscape check', () => {
  it('exits 0 on a clean file and prints nothing on stdout', async () => {
    const h = harness();
    expect(await h.run(['check', 'good.vscape'])).toBe(EXIT_CLEAN);
    expect(h.stdout()).toBe('');
    expect(h.stderr()).toContain('1 file checked: 0 errors, 0 warnings');
  });

  it('prints file:line:col severity code message (1-based) and exits 1 on an error', async () => {
    const h = harness();
    expect(await h.run(['check', 'good.vscape', 'bad.vscape'])).toBe(EXIT_ERRORS);
    expect(h.stdout()).toBe('bad.vscape:3:15 error VS201 Unknown unit "kv"; did you mean "kV"?\n');
  });

  it('solves a scene with a limit and exits 1 when the limit is broken, with the safety caution', async () => {
    const h = harness();
    expect(await h.run(['check', 'tight.vscape'])).toBe(EXIT_ERRORS);
    expect(h.stdout()).toMatch(new RegExp(`^tight\\.vscape:8:1 error ${LIMIT_BROKEN_CODE} The peak field 0\\.3 kV/mm on dome is over the limit 0\\.1 kV/mm`));
    expect(h.stderr()).toContain('High voltage kills');
  });

  it('does not add its own limit diagnostic when the solve already reported the limit as an error', async () => {
    const reported: Diagnostic = { code: LIMIT_BROKEN_CODE, severity: 'error', message: 'over the limit (from the solver)', range: range(7, 0) };
    const h = harness({ solveScene: () => ({ ...sphereResult(), diagnostics: [reported] }) });
    expect(await h.run(['check', 'tight.vscape'])).toBe(EXIT_ERRORS);
    expect(h.stdout()).toBe(`tight.vscape:8:1 error ${LIMIT_BROKEN_CODE} over the limit (from the solver)\n`);
  });

  it('exits 2 on unreadable, missing, empty and binary files, with a one-line reason each', async () => {
    for (const [file, reason] of [
      ['locked.vscape', 'permission denied'],
      ['missing.vscape', 'no such file'],
      ['folder', 'it is a directory'],
      ['empty.vscape', 'is empty'],
      ['blank.vscape', 'is empty'],
      ['binary.vscape', 'not a text file'],
      ['latin1.vscape', 'not UTF-8 text'],
    ]) {
      const h = harness();
      expect(await h.run(['check', file])).toBe(EXIT_FAILED);
      expect(h.stderr()).toContain(reason);
      expect(h.stderr()).not.toMatch(/\n\s+at /);
    }
  });

  it('exits 2 when a stage throws, with a one-line message instead of a stack trace', async () => {
    const h = harness({
      analyzeText: () => {
        throw new Error('boom\n    at somewhere (file.ts:1:1)');
      },
    });
    expect(await h.run(['check', 'good.vscape'])).toBe(EXIT_FAILED);
    expect(h.stderr()).toContain('internal error while analysing good.vscape: boom');
    expect(h.stderr()).not.toContain('at somewhere');
  });
});

describe('voltscape solve', () => {
  it('prints the report and exits 0', async () => {
    const h = harness();
    expect(await h.run(['solve', 'good.vscape'])).toBe(EXIT_CLEAN);
    expect(h.stdout()).toContain('Voltscape report: Lone sphere');
    expect(h.stdout()).toContain('High voltage kills');
  });

  it('prints one JSON object in the versioned format, without grids unless asked', async () => {
    const h = harness();
    expect(await h.run(['solve', 'good.vscape', '--json'])).toBe(EXIT_CLEAN);
    const json = JSON.parse(h.stdout());
    expect(json.format).toBe(JSON_FORMAT);
    expect(json.ok).toBe(true);
    expect(json.electrodes[0]).toMatchObject({ name: 'dome', potential: 30e3, maxField: 3e5, maxFieldAt: [0, 0, 0.1] });
    expect(json.capacitance.names).toEqual(['dome']);
    expect(json.probes[1].points).toHaveLength(31);
    expect(json.slices[0]).toMatchObject({ plane: 'xz', nu: 80, nv: 60 });
    expect(json.slices[0].potential).toBeUndefined();
    expect(json.limit).toEqual({ field: 1e6, peak: 3e5, broken: false });
  });

  it('encodes grids explicitly with --grids, never as objects of indices', async () => {
    const h = harness();
    await h.run(['solve', 'good.vscape', '--json', '--grids']);
    const grid = JSON.parse(h.stdout()).slices[0].potential;
    expect(grid).toMatchObject({ dtype: 'float64', length: 80 * 60 });
    const bytes = Buffer.from(grid.base64, 'base64');
    const values = new Float64Array(bytes.buffer, bytes.byteOffset, bytes.length / 8);
    expect(values[0]).toBe(sphereResult().slices[0].potential[0]);
  });

  it('writes the SVG file it is asked for', async () => {
    const h = harness();
    expect(await h.run(['solve', 'good.vscape', '--svg', 'out.svg'])).toBe(EXIT_CLEAN);
    expect(h.written.get('out.svg')).toMatch(/^<\?xml/);
    expect(h.stderr()).toContain('wrote out.svg');
  });

  it('exits 2 with the diagnostics when the file has errors, in text and in JSON', async () => {
    const h = harness();
    expect(await h.run(['solve', 'bad.vscape'])).toBe(EXIT_FAILED);
    expect(h.stdout()).toContain('bad.vscape:3:15 error VS201');
    expect(h.stderr()).toContain('bad.vscape has 1 error: not solved');
    const j = harness();
    expect(await j.run(['solve', 'bad.vscape', '--json'])).toBe(EXIT_FAILED);
    expect(JSON.parse(j.stdout())).toMatchObject({ format: JSON_FORMAT, ok: false, diagnostics: [{ code: 'VS201' }] });
  });

  it('exits 1 when the solve breaks the limit, and still prints the report', async () => {
    const h = harness();
    expect(await h.run(['solve', 'tight.vscape'])).toBe(EXIT_ERRORS);
    expect(h.stdout()).toContain('EXCEEDED');
  });

  it('exits 2 when the solver gives no result or the output cannot be written', async () => {
    const none = harness({ solveScene: () => null });
    expect(await none.run(['solve', 'good.vscape'])).toBe(EXIT_FAILED);
    const unwritable = harness();
    expect(await unwritable.run(['solve', 'good.vscape', '--svg', '/nonexistent/out.svg'])).toBe(EXIT_FAILED);
    expect(unwritable.stderr()).toContain('cannot write /nonexistent/out.svg');
  });
});

describe('help, version and usage', () => {
  it('prints help and the version with exit 0', async () => {
    const h = harness();
    expect(await h.run(['--help'])).toBe(EXIT_CLEAN);
    expect(h.stdout()).toMatch(/voltscape check .*FILE\.\.\./);
    const v = harness();
    expect(await v.run(['--version'])).toBe(EXIT_CLEAN);
    expect(v.stdout()).toBe('voltscape 9.9.9\n');
  });
  it('prints the usage on stderr and exits 2 on an unknown command', async () => {
    const h = harness();
    expect(await h.run(['paint', 'x'])).toBe(EXIT_FAILED);
    expect(h.stderr()).toContain('unknown command "paint"');
    expect(h.stderr()).toContain('Usage:');
  });
  it('says the language server is missing when it is not wired, with exit 2', async () => {
    const h = harness();
    expect(await h.run(['lsp', '--stdio'])).toBe(EXIT_FAILED);
  });
});
