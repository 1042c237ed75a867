// `npm run bench`: runs every benchmark part (scripts/bench-*.ts, bundled to dist/bench-*.js) in a
// process of its own, one after another, so that each part's time and memory figures are its own.
// Each part prints its own table. Pass part names to run only those: `npm run bench -- parse solve`.
import { readdirSync } from 'node:fs';
import { join } from 'node:path';
import { spawnSync } from 'node:child_process';

const dist = __dirname;
const wanted = process.argv.slice(2);
const parts = readdirSync(dist)
  .filter((f) => /^bench-.+\.js$/.test(f))
  .map((f) => f.slice('bench-'.length, -'.js'.length))
  .filter((name) => wanted.length === 0 || wanted.includes(name))
  .sort();

let failed = 0;
for (const name of parts) {
  console.log(`\n=== ${name} ===`);
  const run = spawnSync(process.execPath, ['--expose-gc', join(dist, `bench-${name}.js`)], { stdio: 'inherit' });
  if (run.status !== 0) {
    failed++;
    console.log(`(part ${name} exited with ${run.status ?? run.signal})`);
  }
}
process.exit(failed > 0 ? 1 : 0);
