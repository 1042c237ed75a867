// Bundles every entry point with esbuild. Entries that do not exist yet are skipped,
// so the build works while the tree grows. Output goes to dist/ (not tracked).
import { build } from 'esbuild';
import { existsSync, mkdirSync, copyFileSync, chmodSync, readdirSync } from 'node:fs';
import { watPlugin } from './wat.mjs';

// .wat imports (the fast product kernel) are assembled to bytes as they are bundled.
const node = { platform: 'node', target: 'node20', format: 'cjs', bundle: true, sourcemap: true, logLevel: 'warning', plugins: [watPlugin] };
const entries = [
  { ...node, entryPoints: ['server/src/cli/main.ts'], outfile: 'dist/cli.js', banner: { js: '#!/usr/bin/env node' } },
  { ...node, entryPoints: ['server/src/lsp/main.ts'], outfile: 'dist/server.js' },
  { ...node, entryPoints: ['server/src/lsp/solve-worker.ts'], outfile: 'dist/solve-worker.js' },
  // Worker threads of the fast solver (assembly and evaluation); the pool finds it beside the bundle.
  { ...node, entryPoints: ['server/src/engine/fast/worker.ts'], outfile: 'dist/fast-worker.js' },
  { ...node, entryPoints: ['client/src/extension.ts'], outfile: 'dist/extension.js', external: ['vscode'] },
  { ...node, entryPoints: ['scripts/bench.ts'], outfile: 'dist/bench.js' },
  // Each benchmark part runs in its own process, so memory figures are its own.
  ...readdirSync('scripts')
    .filter((f) => /^bench-.+\.ts$/.test(f))
    .map((f) => ({ ...node, entryPoints: [`scripts/${f}`], outfile: `dist/${f.replace(/\.ts$/, '.js')}` })),
  { platform: 'browser', target: 'es2022', format: 'iife', bundle: true, sourcemap: false, logLevel: 'warning',
    entryPoints: ['client/webview/main.ts'], outfile: 'dist/webview/preview.js' },
];

mkdirSync('dist', { recursive: true });
await Promise.all(entries.filter((e) => existsSync(e.entryPoints[0])).map((e) => build(e)));
if (existsSync('dist/cli.js')) chmodSync('dist/cli.js', 0o755);
if (existsSync('client/webview/preview.css')) {
  mkdirSync('dist/webview', { recursive: true });
  copyFileSync('client/webview/preview.css', 'dist/webview/preview.css');
}
