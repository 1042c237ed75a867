// Every diagnostic code the project can report is registered once, documented in docs/language.md,
// and produced by at least one test that checks it (the registry is the single list of codes).
import { readFileSync, readdirSync, statSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { DIAGNOSTIC_CODES } from '../../grammar/diagnostics';

const root = join(__dirname, '..', '..');
const languageDoc = readFileSync(join(root, 'docs', 'language.md'), 'utf8');

function testSources(dir: string): string[] {
  return readdirSync(dir).flatMap((name) => {
    const path = join(dir, name);
    if (statSync(path).isDirectory()) return testSources(path);
    return /\.ts$/.test(name) && !path.endsWith('diagnostic-registry.test.ts') ? [readFileSync(path, 'utf8')] : [];
  });
}
const tests = testSources(join(root, 'tests')).join('\n');
const codes = Object.keys(DIAGNOSTIC_CODES);

describe('diagnostic registry', () => {
  it('uses only codes of the form VSnnn in the documented ranges', () => {
    expect(codes.length).toBeGreaterThan(40);
    for (const code of codes) expect(code).toMatch(/^VS[1-5]\d\d$/);
  });

  it.each(codes)('%s is documented in docs/language.md with its example', (code) => {
    const row = languageDoc.split('\n').find((line) => line.startsWith(`| ${code} |`));
    expect(row, `${code} has no row in docs/language.md`).toBeDefined();
    // Every row carries an example cell (a fragment in backticks, or a described situation in parentheses).
    expect(row!.split('|').filter((cell) => cell.trim() !== '').length).toBeGreaterThanOrEqual(4);
    expect(DIAGNOSTIC_CODES[code].example.length).toBeGreaterThan(0);
  });

  it.each(codes)('%s is exercised by a test', (code) => {
    expect(tests.includes(code), `no test mentions ${code}`).toBe(true);
  });
});
