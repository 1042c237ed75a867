// `voltscape`: the command-line entry (bundled to dist/cli.js, the package's bin).
// Wires the real stages into run() and guards the process: whatever happens, the user sees a
// one-line message and an exit code, never a stack trace.
import { readFileSync, writeFileSync } from 'node:fs';
import pkg from '../../../package.json';
import { analyzeText } from '../../../grammar/index';
import { createEngineCache, solveScene } from '../engine/index';
import { renderPreviewHtml } from './html-export';
import { EXIT_FAILED, firstLine, run, type Io, type Stages } from './run';
import { runSweep } from './sweep';

function fatal(error: unknown): void {
  process.stderr.write(`voltscape: unexpected failure: ${firstLine(error)}\n`);
  process.exit(EXIT_FAILED);
}
process.on('uncaughtException', fatal);
process.on('unhandledRejection', fatal);

const io: Io = {
  out: (text) => void process.stdout.write(text),
  err: (text) => void process.stderr.write(text),
  readFile: (path) => readFileSync(path),
  writeFile: (path, data) => writeFileSync(path, data, 'utf8'),
};

const stages: Stages = {
  version: pkg.version,
  analyzeText,
  solveScene: (scene, options) => solveScene(scene, options?.refine !== undefined ? { adaptive: { tolerance: options.refine } } : {}),
  renderPreviewHtml: ({ file, scene, result }) => renderPreviewHtml(result, scene.title ?? file),
  // One engine cache for all the steps of a sweep, so that sweeping a drive reuses the factorization.
  sweep: (command, io) =>
    runSweep(command, io, {
      analyzeText,
      newSolver: () => {
        const cache = createEngineCache();
        return (scene) => solveScene(scene, { cache });
      },
    }),
  // Loaded only for `voltscape lsp`, so the other commands start without the server's modules.
  startLanguageServer: async () => {
    const { startLanguageServer } = await import('../lsp/server');
    startLanguageServer();
  },
};

run(process.argv.slice(2), io, stages).then(
  (code) => {
    // exitCode, not exit(): lets a long report drain into a pipe before the process ends.
    process.exitCode = code;
  },
  fatal,
);
