// Shared pieces of the preview tests: real solves of small scenes (cached on disk between test files),
// the preview bundle built with the same esbuild options as scripts/build.mjs, and Debian's Chromium
// driven by playwright-core with a page that mirrors the VS Code webview (same HTML and CSP).
import { build } from 'esbuild';
import { createHash } from 'node:crypto';
import { existsSync, mkdirSync, readFileSync, renameSync, writeFileSync } from 'node:fs';
import { join, resolve } from 'node:path';
import { chromium, type Browser, type Page } from 'playwright-core';
import { analyzeText } from '../../grammar/index';
import { solveScene } from '../../server/src/engine/index';
import type { Result } from '../../server/src/engine/result';
import { decodeResult, encodeResult } from '../../server/src/engine/result-json';
import { previewHtml } from '../../client/src/preview-html';

export const ROOT = resolve(__dirname, '../..');
export const ARTIFACTS = join(ROOT, 'test-artifacts');

export interface Solved {
  text: string;
  title: string;
  result: Result;
  encoded: unknown;
}

/**
 * Analyses and solves `text` with the engine (coarse level, no convergence pass: the preview tests
 * need a real field, not the finest figures). The encoded result is cached under test-artifacts/ by a
 * hash of the text, so the test files share one solve per scene.
 */
export function solveText(text: string): Solved {
  const analysis = analyzeText(text);
  const errors = analysis.diagnostics.filter((d) => d.severity === 'error');
  if (errors.length > 0) throw new Error(`test scene has errors: ${errors.map((d) => d.message).join('; ')}`);
  const title = analysis.scene.title ?? 'untitled';
  const dir = join(ARTIFACTS, 'solved');
  const file = join(dir, createHash('sha256').update(text).digest('hex').slice(0, 16) + '.json');
  if (existsSync(file)) {
    const encoded = JSON.parse(readFileSync(file, 'utf8'));
    return { text, title, result: decodeResult(encoded), encoded };
  }
  const result = solveScene(analysis.scene, { level: 'coarse', convergence: false });
  if (!result) throw new Error('solve was cancelled');
  const encoded = encodeResult(result);
  mkdirSync(dir, { recursive: true });
  const tmp = `${file}.${process.pid}.tmp`;
  writeFileSync(tmp, JSON.stringify(encoded));
  renameSync(tmp, file);
  return { text, title, result, encoded: JSON.parse(JSON.stringify(encoded)) };
}

/** A lone sphere: radius 50 mm at 10 kV, centred in an xz slice; the closed form is φ = V·a/r outside. */
export const SPHERE_SCENE = `scene "Lone sphere <b>test</b> & co"
space 3d
medium vacuum
mesh coarse
electrode ball sphere center (0, 0, 0) radius 50 mm potential 10 kV
slice xz at y = 0 from (-200, -200) mm to (200, 200) mm cells 80
probe radial line from (60, 0, 0) mm to (200, 0, 0) mm samples 15
`;
export const SPHERE = { radius: 0.05, potential: 10e3, line: 4 };

/** Two spheres of opposite potential above a ground plane, for the ground trace, per-electrode clicks and the slice picker. */
export const PAIR_SCENE = `scene "Sphere pair over ground"
space 3d
medium air
mesh coarse
electrode left sphere center (-60, 0, 0) mm radius 25 mm potential 5 kV
electrode right sphere center (60, 0, 0) mm radius 25 mm potential -5 kV
ground plane at z = -80 mm
slice xz at y = 0 from (-150, -100) mm to (150, 100) mm cells 72
slice xy at z = 0 from (-150, -60) mm to (150, 60) mm cells 60
`;

/** Builds the preview bundle (client/webview/main.ts) as scripts/build.mjs does; returns the script and style text. */
export async function previewBundle(): Promise<{ script: string; style: string }> {
  const outfile = join(ARTIFACTS, 'webview', `preview-${process.pid}.js`);
  await build({
    platform: 'browser', target: 'es2022', format: 'iife', bundle: true, sourcemap: false, logLevel: 'warning',
    entryPoints: [join(ROOT, 'client/webview/main.ts')], outfile,
  });
  return { script: readFileSync(outfile, 'utf8'), style: readFileSync(join(ROOT, 'client/webview/preview.css'), 'utf8') };
}

export const CHROMIUM_ARGS = [
  '--no-sandbox', '--disable-gpu', '--disable-quic', '--no-first-run',
  '--disable-background-networking', '--disable-component-update', '--disable-sync',
];

export function launchChromium(): Promise<Browser> {
  return chromium.launch({ executablePath: '/usr/bin/chromium', args: CHROMIUM_ARGS });
}

export const ORIGIN = 'http://preview.test';

/**
 * Opens the preview as VS Code would: the extension's HTML (strict CSP, nonce) from a fake origin that
 * plays the webview resource root, and a stub acquireVsCodeApi that records posted messages in
 * window.__posted. CSP violations are collected in window.__cspViolations.
 */
export async function openWebviewPage(browser: Browser, bundle: { script: string; style: string }): Promise<Page> {
  const page = await browser.newPage({ viewport: { width: 1200, height: 1000 } });
  const html = previewHtml({ cspSource: ORIGIN }, `${ORIGIN}/dist/webview/preview.js`, `${ORIGIN}/dist/webview/preview.css`, 'dGVzdC1ub25jZS0xMjM0NQ==');
  await page.route(`${ORIGIN}/**`, (route) => {
    const url = route.request().url();
    if (url.endsWith('/preview.js')) return route.fulfill({ body: bundle.script, contentType: 'text/javascript' });
    if (url.endsWith('/preview.css')) return route.fulfill({ body: bundle.style, contentType: 'text/css' });
    if (url === `${ORIGIN}/`) return route.fulfill({ body: html, contentType: 'text/html' });
    return route.fulfill({ status: 404, body: '' });
  });
  await page.addInitScript(() => {
    const w = window as unknown as Record<string, unknown>;
    w.__posted = [];
    w.__cspViolations = [];
    w.__acquired = 0;
    document.addEventListener('securitypolicyviolation', (e) => (w.__cspViolations as string[]).push(`${e.violatedDirective} ${e.blockedURI}`));
    let state: unknown;
    w.acquireVsCodeApi = () => {
      w.__acquired = (w.__acquired as number) + 1;
      return {
        postMessage: (m: unknown) => (w.__posted as unknown[]).push(m),
        getState: () => state,
        setState: (s: unknown) => (state = s),
      };
    };
  });
  await page.goto(`${ORIGIN}/`);
  return page;
}

/** Sends a message to the page as the extension does (window message event). */
export async function sendToPage(page: Page, message: unknown): Promise<void> {
  await page.evaluate((m) => window.postMessage(m, '*'), message);
}

export async function posted(page: Page): Promise<Record<string, unknown>[]> {
  return page.evaluate(() => (window as unknown as { __posted: Record<string, unknown>[] }).__posted);
}

/** Client coordinates of a point (u, v) of the slice, from the picture's data-frame and its screen matrix. */
export async function clientPointOf(page: Page, u: number, v: number): Promise<{ x: number; y: number }> {
  return page.evaluate(
    ([u, v]) => {
      const svg = document.querySelector('svg.picture') as SVGSVGElement;
      const [left, top, width, height, u0, v0, u1, v1] = svg.getAttribute('data-frame')!.split(' ').map(Number);
      const x = left + ((u - u0) / (u1 - u0)) * width;
      const y = top + ((v1 - v) / (v1 - v0)) * height;
      const p = new DOMPoint(x, y).matrixTransform(svg.getScreenCTM()!);
      return { x: p.x, y: p.y };
    },
    [u, v] as [number, number],
  );
}
