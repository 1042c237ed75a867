// The standalone page of `voltscape solve --html`: the same bundle inlined under a strict CSP with a
// nonce, the result embedded as JSON (never as HTML), drawn in Chromium, saving by download.
import { mkdirSync, readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import type { Browser } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { jsonForScript, renderPreviewHtml } from '../../server/src/cli/html-export';
import { ARTIFACTS, clientPointOf, launchChromium, previewBundle, solveText, SPHERE, SPHERE_SCENE, type Solved } from './support';

let browser: Browser;
let bundle: { script: string; style: string };
let sphere: Solved;
const hostile = 'Bench </script><img src=x onerror="window.__pwned=1"> <!-- "quoted" & \u2028';

beforeAll(async () => {
  sphere = solveText(SPHERE_SCENE);
  bundle = await previewBundle();
  browser = await launchChromium();
});
afterAll(async () => {
  await browser?.close();
});

describe('renderPreviewHtml', () => {
  it('inlines the bundle under a CSP with a fresh nonce and no unsafe sources', () => {
    const a = renderPreviewHtml(sphere.result, 'A', bundle);
    const b = renderPreviewHtml(sphere.result, 'A', bundle);
    const nonce = (html: string) => /script-src 'nonce-([A-Za-z0-9+/=]+)'/.exec(html)![1];
    expect(nonce(a)).not.toBe(nonce(b));
    expect(nonce(a).length).toBeGreaterThanOrEqual(24);
    const csp = /http-equiv="Content-Security-Policy" content="([^"]+)"/.exec(a)![1];
    expect(csp).toContain("default-src 'none'");
    expect(csp).not.toMatch(/unsafe-inline|unsafe-eval|https?:/);
    expect(a).toContain(`<script nonce="${nonce(a)}">`);
    expect(a).toContain(`<style nonce="${nonce(a)}">`);
  });

  it('embeds the result as JSON in which no "<" survives, so scene text cannot close the element', () => {
    const html = renderPreviewHtml(sphere.result, hostile, bundle);
    const data = /<script type="application\/json" id="voltscape-data">([\s\S]*?)<\/script>/.exec(html)![1];
    expect(data).not.toContain('<');
    expect(JSON.parse(data).title).toBe(hostile);
    expect(jsonForScript({ s: '</script>' })).toBe('{"s":"\\u003c/script>"}');
    expect(html).toContain('<title>Bench &lt;/script&gt;&lt;img src=x onerror=&quot;window.__pwned=1&quot;&gt;');
  });
});

describe('the standalone page in Chromium', () => {
  it('draws the same picture, shows hostile titles as text, and saves SVG and PNG by download', async () => {
    const dir = join(ARTIFACTS, 'html-export');
    mkdirSync(dir, { recursive: true });
    const file = join(dir, 'sphere.html');
    writeFileSync(file, renderPreviewHtml(sphere.result, hostile, bundle));
    const page = await browser.newPage({ viewport: { width: 1200, height: 1000 }, acceptDownloads: true });
    const violations: string[] = [];
    page.on('console', (m) => {
      if (/Content Security Policy/i.test(m.text())) violations.push(m.text());
    });
    await page.goto(`file://${file}`);
    await page.waitForSelector('svg.picture path.contour');
    expect(await page.textContent('#title')).toBe(hostile);
    expect(await page.locator('img').count()).toBe(0);
    expect(await page.evaluate(() => (window as unknown as { __pwned?: number }).__pwned)).toBeUndefined();
    expect(violations).toEqual([]);
    expect(await page.locator('svg.picture path.band').count()).toBeGreaterThan(8);
    // φ = V·a/r at r = 2a, read from the page's readout (isolated sphere, references.md "Closed forms").
    const box = await clientPointOf(page, 2 * SPHERE.radius, 0.0025);
    await page.mouse.move(box.x, box.y);
    const text = (await page.textContent('#readout'))!;
    const phi = Number(/φ = ([\d.]+) kV/.exec(text)![1]) * 1e3;
    expect(Math.abs(phi - (SPHERE.potential * SPHERE.radius) / Math.hypot(2 * SPHERE.radius, 0.0025))).toBeLessThan(0.03 * phi);

    const [svgDownload] = await Promise.all([page.waitForEvent('download'), page.click('#save-svg')]);
    const svgPath = join(dir, 'sphere.svg');
    await svgDownload.saveAs(svgPath);
    const svgText = readFileSync(svgPath, 'utf8');
    expect(svgText.startsWith('<?xml')).toBe(true);
    expect(svgText).toContain('<svg');
    expect(svgText.trimEnd().endsWith('</svg>')).toBe(true);
    const [pngDownload] = await Promise.all([page.waitForEvent('download'), page.click('#save-png')]);
    const pngPath = join(dir, 'sphere.png');
    await pngDownload.saveAs(pngPath);
    const png = readFileSync(pngPath);
    expect([...png.subarray(0, 4)]).toEqual([0x89, 0x50, 0x4e, 0x47]);
    expect(png.length).toBeGreaterThan(10_000);
    await page.close();
  });
});
