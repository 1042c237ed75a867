// `voltscape solve FILE --html OUT`: the preview page as one self-contained HTML file. The same
// bundle and stylesheet as the VS Code preview are inlined under a strict Content-Security-Policy
// with a fresh nonce; the encoded Result travels as JSON in a <script type="application/json">
// element (never as HTML), and the page reads it from there.
import { randomBytes } from 'node:crypto';
import { existsSync, readFileSync } from 'node:fs';
import { join, resolve } from 'node:path';
import type { Result } from '../engine/result';
import { encodeResult } from '../engine/result-json';

/** Folders that may hold preview.js and preview.css: beside the bundled CLI (dist/webview), or the repository's dist. */
function bundleDirs(): string[] {
  const here = typeof __dirname === 'string' ? __dirname : process.cwd();
  return [join(here, 'webview'), resolve(here, '../../../dist/webview'), resolve(process.cwd(), 'dist/webview')];
}

export interface PreviewBundle {
  script: string;
  style: string;
}

/** Reads the built preview bundle; null when it has not been built. */
export function loadPreviewBundle(dirs: string[] = bundleDirs()): PreviewBundle | null {
  for (const dir of dirs) {
    const js = join(dir, 'preview.js');
    const css = join(dir, 'preview.css');
    if (existsSync(js) && existsSync(css)) return { script: readFileSync(js, 'utf8'), style: readFileSync(css, 'utf8') };
  }
  return null;
}

const escapeHtmlText = (s: string): string =>
  s.replace(/&/g, '&amp;').replace(/</g, '&lt;').replace(/>/g, '&gt;').replace(/"/g, '&quot;').replace(/'/g, '&#39;');

/** JSON safe inside a <script> element: no "<" survives, so neither "</script>" nor "<!--" can appear. */
export function jsonForScript(value: unknown): string {
  return JSON.stringify(value).replace(/</g, '\\u003c').replace(/\u2028/g, '\\u2028').replace(/\u2029/g, '\\u2029');
}

/**
 * The standalone preview page for `result`. `title` is scene text: it goes into the page only as
 * escaped text in <title> and as JSON data. Throws only if the preview bundle was never built
 * (an installation problem, not something a scene can cause); pass `bundle` to supply it.
 */
export function renderPreviewHtml(result: Result, title: string, bundle: PreviewBundle | null = loadPreviewBundle()): string {
  if (!bundle) {
    throw new Error(`The preview bundle (dist/webview/preview.js) is missing; run "npm run build". Looked in: ${bundleDirs().join(', ')}`);
  }
  const nonce = randomBytes(18).toString('base64');
  const csp = ["default-src 'none'", `script-src 'nonce-${nonce}'`, `style-src 'nonce-${nonce}'`, 'img-src data: blob:'].join('; ');
  // A closing tag inside the inlined code would end its element early; "<\/" means the same in JS and CSS strings.
  const script = bundle.script.replace(/<\/(script)/gi, '<\\/$1');
  const style = bundle.style.replace(/<\/(style)/gi, '<\\/$1');
  const data = jsonForScript({ title, result: encodeResult(result) });
  return `<!DOCTYPE html>
<html lang="en">
<head>
<meta charset="UTF-8">
<meta http-equiv="Content-Security-Policy" content="${csp}">
<meta name="viewport" content="width=device-width, initial-scale=1.0">
<meta name="generator" content="Voltscape">
<title>${escapeHtmlText(title)} — Voltscape field preview</title>
<style nonce="${nonce}">
${style}
</style>
</head>
<body>
<script type="application/json" id="voltscape-data">${data}</script>
<script nonce="${nonce}">
${script}
</script>
</body>
</html>
`;
}
