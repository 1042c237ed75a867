import { defineConfig } from 'vitest/config';
import { assembleWat, watModuleSource } from './scripts/wat.mjs';

export default defineConfig({
  // .wat imports (the fast product kernel) are assembled to bytes, as in the bundles (scripts/build.mjs).
  plugins: [
    {
      name: 'wat',
      enforce: 'pre',
      async load(id: string) {
        return id.endsWith('.wat') ? watModuleSource(await assembleWat(id)) : null;
      },
    },
  ],
  test: {
    include: ['tests/**/*.test.ts'],
    testTimeout: 120_000,
    hookTimeout: 120_000,
    pool: 'forks',
  },
});
