// The preview's sweep section in Chromium, as VS Code shows it (same HTML, CSP and bundle), fed a real
// live sweep: the solve worker's sweep job (server/src/lsp/sweep-runner.ts) run in-process on the coarse level.
import type { Browser, Page } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createEngineCache } from '../../server/src/engine/index';
import type { SweepResultParams } from '../../server/src/protocol';
import { runSweepJob } from '../../server/src/lsp/sweep-runner';
import type { FromWorker } from '../../server/src/lsp/worker-messages';
import { launchChromium, openWebviewPage, posted, previewBundle, sendToPage, solveText, SPHERE_SCENE } from './support';

// Two spheres far apart; the radius of one is swept over 3 steps. The limit gives a margin.
const TEXT = `medium vacuum
mesh coarse
let a = 10 mm
electrode hot sphere center (0, 0, 0) radius a potential 10 kV
electrode cold sphere center (300, 0, 0) mm radius 10 mm potential 0 V
limit field 3 kV/mm
sweep a from 10 mm to 20 mm steps 3
`;
const uri = 'file:///scene.vscape';

let browser: Browser;
let bundle: { script: string; style: string };
let sweep: SweepResultParams;
let page: Page;

beforeAll(async () => {
  const out: FromWorker[] = [];
  runSweepJob({ type: 'sweep', id: 1, slot: 0, generation: 1, uri, text: TEXT, name: 'a', maxPanels: 8000 }, createEngineCache(), () => false, (m) => void out.push(m));
  const message = out.find((m) => m.type === 'sweep');
  if (!message || message.type !== 'sweep') throw new Error(`no sweep: ${JSON.stringify(out)}`);
  sweep = { uri, version: 1, state: 'done', level: 'coarse', solveMs: message.solveMs, ...message.sweep };
  bundle = await previewBundle();
  browser = await launchChromium();
  page = await openWebviewPage(browser, bundle);
  const sphere = solveText(SPHERE_SCENE);
  await sendToPage(page, { type: 'show', title: sphere.title, uri, version: 1, level: 'full', stale: false, result: sphere.encoded });
  await page.waitForSelector('svg.picture');
}, 60_000);
afterAll(async () => {
  await browser?.close();
});

const lastSweepDrawn = async () => (await posted(page)).filter((m) => m.type === 'sweepDrawn').at(-1) as Record<string, unknown> | undefined;
/** The y coordinates of one electrode's points (SVG y grows downwards). */
const pointYs = (name: string) => page.$$eval(`g.sweep-series[data-electrode="${name}"] circle.sweep-point`, (cs) => cs.map((c) => Number(c.getAttribute('cy'))));

describe('preview sweep plot', () => {
  it('stays hidden while the scene has no sweep', async () => {
    expect(await page.isHidden('#sweep')).toBe(true);
  });

  it('draws one line per electrode with a point per step, peak field first, axes with units', async () => {
    await sendToPage(page, { type: 'sweep', ...sweep });
    await page.waitForSelector('svg.sweep-plot');
    expect(await page.isVisible('#sweep')).toBe(true);
    expect(await page.locator('svg.sweep-plot path.sweep-line').count()).toBe(2);
    expect(await lastSweepDrawn()).toMatchObject({ type: 'sweepDrawn', version: 1, figure: 'maxField', lines: 2, points: [3, 3], stale: false });
    const labels = await page.$$eval('svg.sweep-plot text', (ts) => ts.map((t) => t.textContent));
    expect(labels).toContain('a (mm)');
    expect(labels).toContain('Peak field (kV/mm)');
    expect(labels).toEqual(expect.arrayContaining(['hot', 'cold']));
    // Isolated sphere, E = V/a (textbook electrostatics, references.md "Closed forms"): the peak falls as the radius grows.
    const ys = await pointYs('hot');
    expect(ys[0]).toBeGreaterThan(0);
    expect(ys[1]).toBeGreaterThan(ys[0]);
    expect(ys[2]).toBeGreaterThan(ys[1]);
  });

  it('switches to capacitance and to margin on the selector', async () => {
    await page.selectOption('#sweep-figure', 'capacitance');
    await page.waitForFunction(() => [...document.querySelectorAll('svg.sweep-plot text')].some((t) => t.textContent === 'Self capacitance (pF)'));
    expect(await lastSweepDrawn()).toMatchObject({ figure: 'capacitance', lines: 2, points: [3, 3] });
    // C = 4πε0·a grows with the radius (same source): the points rise (smaller y).
    const ys = await pointYs('hot');
    expect(ys[1]).toBeLessThan(ys[0]);
    expect(ys[2]).toBeLessThan(ys[1]);
    await page.selectOption('#sweep-figure', 'margin');
    await page.waitForFunction(() => [...document.querySelectorAll('svg.sweep-plot text')].some((t) => t.textContent?.startsWith('Margin to limit')));
    expect(await lastSweepDrawn()).toMatchObject({ figure: 'margin', lines: 2, points: [3, 3] });
  });

  it('marks the sweep stale while a newer one is on its way, and hides it when the scene loses its sweep', async () => {
    await sendToPage(page, { type: 'status', state: 'queued', version: 2 });
    await page.waitForSelector('#sweep[data-stale="true"]');
    await sendToPage(page, { ...sweep, type: 'sweep', version: 2, state: 'running' });
    await page.waitForFunction(() => document.getElementById('sweep-status')!.textContent!.startsWith('Sweeping a'));
    expect(await lastSweepDrawn()).toMatchObject({ version: 2, stale: true });
    await sendToPage(page, { ...sweep, type: 'sweep', version: 2, state: 'done' });
    await page.waitForSelector('#sweep[data-stale="false"]');
    await sendToPage(page, { ...sweep, type: 'sweep', version: 3, state: 'none', values: [], electrodes: [] });
    await page.waitForSelector('#sweep', { state: 'hidden' });
    expect(await page.evaluate(() => (window as unknown as { __cspViolations: string[] }).__cspViolations)).toEqual([]);
  });

  it("drops one document's sweep when the preview follows another", async () => {
    await sendToPage(page, { ...sweep, type: 'sweep', version: 4, state: 'done' });
    await page.waitForSelector('#sweep', { state: 'visible' });
    const sphere = solveText(SPHERE_SCENE);
    await sendToPage(page, { type: 'show', title: sphere.title, uri: 'file:///other.vscape', version: 1, level: 'full', stale: false, result: sphere.encoded });
    await page.waitForSelector('#sweep', { state: 'hidden' });
    // The other document's own sweep, at a lower version, is still shown.
    await sendToPage(page, { ...sweep, type: 'sweep', uri: 'file:///other.vscape', version: 1, state: 'done' });
    await page.waitForSelector('#sweep', { state: 'visible' });
  });
});
