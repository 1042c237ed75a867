// Types for scripts/wat.mjs (the .wat assembler used by the bundles and the tests).
import type { Plugin } from 'esbuild';

export function assembleWat(path: string): Promise<Uint8Array>;
export function watModuleSource(bytes: Uint8Array): string;
export const watPlugin: Plugin;
