// The preview page in Chromium, as VS Code shows it (same HTML, CSP and bundle), fed real solves.
// Closed form for the readout: an isolated sphere at V has φ = V·a/r and |E| = V·a/r² outside
// (references.md, "Closed forms": isolated sphere).
import type { Browser, Page } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { formatField } from '../../client/webview/format';
import {
  clientPointOf, launchChromium, openWebviewPage, PAIR_SCENE, posted, previewBundle, sendToPage,
  solveText, SPHERE, SPHERE_SCENE, type Solved,
} from './support';

let browser: Browser;
let bundle: { script: string; style: string };
let sphere: Solved;
let pair: Solved;

beforeAll(async () => {
  sphere = solveText(SPHERE_SCENE);
  pair = solveText(PAIR_SCENE);
  bundle = await previewBundle();
  browser = await launchChromium();
});
afterAll(async () => {
  await browser?.close();
});

const show = (s: Solved, extra: Record<string, unknown> = {}) => ({
  type: 'show', title: s.title, uri: 'file:///scene.vscape', version: 1, level: 'full', stale: false, result: s.encoded, ...extra,
});

async function shown(s: Solved): Promise<Page> {
  const page = await openWebviewPage(browser, bundle);
  await sendToPage(page, show(s));
  await page.waitForSelector('svg.picture path.contour');
  return page;
}

/** Numbers after "label = " in the readout, in the unit given, e.g. readoutValue(text, 'φ', 'kV'). */
function readoutValue(text: string, name: string, unit: string): number {
  const m = new RegExp(`${name} = (−?[\\d.]+) ${unit.replace('|', '\\|')}`).exec(text);
  if (!m) throw new Error(`no ${name} in ${unit} in "${text}"`);
  return Number(m[1].replace('−', '-'));
}

describe('preview page on a solved lone sphere', () => {
  let page: Page;
  beforeAll(async () => {
    page = await shown(sphere);
  });
  afterAll(async () => {
    await page.close();
  });

  it('asks for the result once loaded, calls acquireVsCodeApi once, and breaks no CSP rule', async () => {
    const messages = await posted(page);
    expect(messages[0]).toEqual({ type: 'ready' });
    expect(await page.evaluate(() => (window as unknown as { __acquired: number }).__acquired)).toBe(1);
    expect(await page.evaluate(() => (window as unknown as { __cspViolations: string[] }).__cspViolations)).toEqual([]);
  });

  it('draws filled bands, contour lines and their labels', async () => {
    const levels = Number(await page.getAttribute('#figure', 'data-levels'));
    expect(levels).toBeGreaterThan(8);
    expect(await page.locator('svg.picture path.band').count()).toBe(levels);
    expect(await page.locator('svg.picture path.contour').count()).toBeGreaterThanOrEqual(levels - 2);
    expect(await page.locator('svg.picture text.contour-label').count()).toBeGreaterThan(3);
    expect(await page.locator('svg.picture .legend text').first().textContent()).toBe('Potential');
  });

  it('shows the scene title as text, never as markup', async () => {
    expect(await page.textContent('#title')).toBe('Lone sphere <b>test</b> & co');
    expect(await page.locator('#title b').count()).toBe(0);
  });

  it('reads out φ = V·a/r and |E| = V·a/r² under the pointer, within 3 % (coarse solve, bilinear grid)', async () => {
    for (const r of [0.08, 0.12]) {
      const at = await clientPointOf(page, r, 0.0025);
      await page.mouse.move(at.x, at.y);
      await page.waitForFunction(() => document.getElementById('readout')!.textContent!.includes('φ ='));
      const text = (await page.textContent('#readout'))!;
      expect(text).toContain('x = ');
      const phi = readoutValue(text, 'φ', 'kV') * 1e3;
      expect(Math.abs(phi - (SPHERE.potential * SPHERE.radius) / Math.hypot(r, 0.0025))).toBeLessThan(0.03 * phi);
      const field = readoutValue(text, '\\|E\\|', 'V/mm') * 1e3;
      const expected = (SPHERE.potential * SPHERE.radius) / (r * r + 0.0025 ** 2);
      expect(Math.abs(field - expected)).toBeLessThan(0.05 * expected);
    }
  });

  it('marks the peak surface field with its value', async () => {
    const peak = sphere.result.electrodes[0];
    const label = await page.locator('svg.picture g.peak text').textContent();
    expect(label).toContain(`ball peak ${formatField(peak.maxField)}`);
    // The peak of a sphere is V/a = 0.2 kV/mm (closed form); the coarse solve lands within 10 %.
    expect(Math.abs(peak.maxField - SPHERE.potential / SPHERE.radius)).toBeLessThan(0.1 * (SPHERE.potential / SPHERE.radius));
  });

  it('draws field lines and says that on a slice of a 3d scene they follow the in-plane field', async () => {
    expect(await page.locator('svg.picture path.field-line').count()).toBeGreaterThan(20);
    expect(await page.locator('svg.picture .legend').textContent()).toContain('in-plane field lines');
    expect(await page.textContent('#notes')).toContain('follow only the field components in the slice plane');
  });

  it('posts selectElectrode with the statement range when the sphere is clicked', async () => {
    const at = await clientPointOf(page, 0, 0);
    await page.mouse.click(at.x, at.y);
    const messages = await posted(page);
    const select = messages.find((m) => m.type === 'selectElectrode');
    expect(select).toMatchObject({ type: 'selectElectrode', index: 0, name: 'ball' });
    // The electrode statement is line 5 of the scene text (zero-based 4).
    const range = select!.range as { start: { line: number } };
    expect(range.start.line).toBe(SPHERE.line);
    expect(SPHERE_SCENE.split('\n')[SPHERE.line].startsWith('electrode ball')).toBe(true);
  });

  it('switches to a field-strength map with log-spaced levels and a field legend', async () => {
    await page.click('#mode-toggle');
    await page.waitForFunction(() => document.querySelector('svg.picture .legend text')?.textContent === 'Field strength |E|');
    expect(await page.getAttribute('#mode-toggle', 'aria-pressed')).toBe('true');
    const levels = await page.locator('svg.picture path.band').evaluateAll((ps) => ps.map((p) => Number(p.getAttribute('data-level'))));
    expect(levels.length).toBeGreaterThan(3);
    // Log spacing: the ratios of neighbouring levels stay within the 1-1.5-2-3-5-7 ladder's range.
    for (let k = 1; k < levels.length; k++) {
      const ratio = levels[k] / levels[k - 1];
      expect(ratio).toBeGreaterThan(1.3);
      expect(ratio).toBeLessThan(2.6);
    }
    await page.click('#mode-toggle');
    await page.waitForFunction(() => document.querySelector('svg.picture .legend text')?.textContent === 'Potential');
  });

  it('plots potential and field along the line probe', async () => {
    expect(await page.textContent('#probe-plots figcaption')).toBe('Along probe radial');
    const d = await page.getAttribute('#probe-plots path.plot-potential', 'd');
    expect(d!.split('L').length).toBe(15);
  });

  it('keeps the last picture with a stale mark while solving and after errors, and clears it on a new result', async () => {
    const before = await page.locator('svg.picture path.contour').count();
    await sendToPage(page, { type: 'status', state: 'solving' });
    await page.waitForFunction(() => document.body.dataset.stale === 'true');
    expect(await page.textContent('#status')).toContain('Updating');
    await sendToPage(page, { type: 'status', state: 'stale' });
    await page.waitForFunction(() => document.getElementById('status')!.textContent!.includes('Out of date'));
    expect(await page.locator('#figure.stale svg.picture').count()).toBe(1);
    expect(await page.locator('svg.picture path.contour').count()).toBe(before);
    await sendToPage(page, show(sphere, { version: 2 }));
    await page.waitForFunction(() => document.body.dataset.stale === 'false');
    expect(await page.locator('#figure.stale').count()).toBe(0);
    // Solving the version already shown (the full level after the coarse one) only refines: no stale mark.
    await sendToPage(page, show(sphere, { version: 2, level: 'coarse' }));
    await sendToPage(page, { type: 'status', state: 'solving', version: 2 });
    await page.waitForFunction(() => document.getElementById('status')!.textContent!.includes('refining'));
    expect(await page.evaluate(() => document.body.dataset.stale)).toBe('false');
    await sendToPage(page, { type: 'status', state: 'solving', version: 3 });
    await page.waitForFunction(() => document.body.dataset.stale === 'true');
    await sendToPage(page, show(sphere, { version: 3, stale: true }));
    await page.waitForFunction(() => document.body.dataset.stale === 'true');
    expect(await page.textContent('#status')).toContain('last good result');
  });

  it('exports a well-formed SVG and a non-empty PNG through messages to the extension', async () => {
    await page.click('#save-svg');
    await page.waitForFunction(() => (window as unknown as { __posted: { type: string; format?: string }[] }).__posted.some((m) => m.type === 'export' && m.format === 'svg'));
    await page.click('#save-png');
    await page.waitForFunction(() => (window as unknown as { __posted: { type: string; format?: string }[] }).__posted.some((m) => m.type === 'export' && m.format === 'png'));
    const messages = await posted(page);
    const svg = messages.find((m) => m.type === 'export' && m.format === 'svg')!;
    const png = messages.find((m) => m.type === 'export' && m.format === 'png')!;
    expect(svg.suggestedName).toBe('Lone-sphere-b-test-b-co.svg');
    const check = await page.evaluate((text) => {
      const doc = new DOMParser().parseFromString(text, 'image/svg+xml');
      return {
        error: doc.getElementsByTagName('parsererror').length,
        root: doc.documentElement.localName,
        ns: doc.documentElement.namespaceURI,
        paths: doc.getElementsByTagName('path').length,
        title: doc.getElementsByTagName('title')[0]?.textContent,
        vars: text.includes('var(--'),
      };
    }, svg.data as string);
    expect(check).toMatchObject({ error: 0, root: 'svg', ns: 'http://www.w3.org/2000/svg', title: 'Lone sphere <b>test</b> & co', vars: false });
    expect(check.paths).toBeGreaterThan(20);
    const data = String(png.data);
    expect(data.startsWith('data:image/png;base64,')).toBe(true);
    const bytes = Buffer.from(data.slice('data:image/png;base64,'.length), 'base64');
    expect([...bytes.subarray(0, 8)]).toEqual([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a]); // PNG signature
    expect(bytes.length).toBeGreaterThan(10_000);
  });
});

describe('preview page on a solved sphere pair over a ground plane', () => {
  let page: Page;
  beforeAll(async () => {
    page = await shown(pair);
  });
  afterAll(async () => {
    await page.close();
  });

  it('draws the ground plane trace where the plane cuts the slice (z = −80 mm)', async () => {
    const line = page.locator('svg.picture line.ground-line');
    expect(await line.count()).toBe(1);
    const y1 = Number(await line.getAttribute('y1'));
    const frame = (await page.getAttribute('svg.picture', 'data-frame'))!.split(' ').map(Number);
    const [, top, , height, , v0, , v1] = frame;
    expect(Math.abs(y1 - (top + ((v1 - -0.08) / (v1 - v0)) * height))).toBeLessThan(0.5);
  });

  it('offers both slices in the picker and redraws the chosen one', async () => {
    const options = await page.locator('#slice-picker option').allTextContents();
    expect(options).toEqual(['xz at y = 0 mm', 'xy at z = 0 mm']);
    expect(await page.locator('svg.picture .axes text').allTextContents()).toContain('z (mm)');
    await page.selectOption('#slice-picker', '1');
    await page.waitForFunction(() => [...document.querySelectorAll('svg.picture .axes text')].some((t) => t.textContent === 'y (mm)'));
    // The xy slice at z = 0 is above the ground plane (z = −80 mm): no ground trace there.
    expect(await page.locator('svg.picture line.ground-line').count()).toBe(0);
    expect(await page.locator('svg.picture path.contour').count()).toBeGreaterThan(5);
    await page.selectOption('#slice-picker', '0');
    await page.waitForFunction(() => document.querySelectorAll('svg.picture line.ground-line').length === 1);
  });

  it('posts the clicked electrode of each sphere with its own statement range', async () => {
    for (const [u, name, index] of [[-0.06, 'left', 0], [0.06, 'right', 1]] as const) {
      const at = await clientPointOf(page, u, 0);
      await page.mouse.click(at.x, at.y);
      const last = (await posted(page)).filter((m) => m.type === 'selectElectrode').pop();
      expect(last).toMatchObject({ index, name });
      expect((last!.range as { start: { line: number } }).start.line).toBe(index === 0 ? 4 : 5);
    }
  });

  it('selects an electrode from its table row with the keyboard', async () => {
    const before = (await posted(page)).filter((m) => m.type === 'selectElectrode').length;
    await page.focus('#electrodes tbody tr[data-electrode="0"]');
    await page.keyboard.press('Enter');
    const selects = (await posted(page)).filter((m) => m.type === 'selectElectrode');
    expect(selects.length).toBe(before + 1);
    expect(selects[selects.length - 1]).toMatchObject({ index: 0, name: 'left' });
  });
});
