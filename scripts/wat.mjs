// WebAssembly text (.wat) to its binary, with wabt: used by the esbuild bundles (scripts/build.mjs)
// and by vitest (vitest.config.ts), so that `import bytes from './x.wat'` gives a Uint8Array.
import { readFile } from 'node:fs/promises';
import createWabt from 'wabt';

let wabt;

/** The binary module for a .wat file; throws with wabt's message when the text does not assemble. */
export async function assembleWat(path) {
  wabt ??= await createWabt();
  const features = { simd: true, threads: true, multi_value: true };
  const parsed = wabt.parseWat(path, await readFile(path, 'utf8'), features);
  try {
    parsed.resolveNames();
    parsed.validate(features);
    return parsed.toBinary({}).buffer;
  } finally {
    parsed.destroy();
  }
}

/** The module's bytes as JavaScript source: `export default` a Uint8Array. */
export function watModuleSource(bytes) {
  return `export default new Uint8Array(Buffer.from(${JSON.stringify(Buffer.from(bytes).toString('base64'))}, 'base64'));\n`;
}

/** The esbuild plugin: .wat imports become their assembled bytes. */
export const watPlugin = {
  name: 'wat',
  setup(build) {
    build.onLoad({ filter: /\.wat$/ }, async (args) => ({ contents: watModuleSource(await assembleWat(args.path)), loader: 'js' }));
  },
};
