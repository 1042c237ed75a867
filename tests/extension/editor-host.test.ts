// The packaged extension in a real VS Code (OSS) editor host (code-server), driven through Chromium:
// diagnostics reach the Problems view, the preview opens beside the scene and draws contours, a typed
// change updates the picture, a click in the preview selects the electrode's statement.
// The editor-host part needs the host installed (../shared/tools/editor-host-setup.sh) and runs when
// VOLTSCAPE_EDITOR_TESTS=1; the package check below runs always.
import { runTests } from '@vscode/test-electron';
import { build } from 'esbuild';
import { mkdirSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { chromium, type Browser, type Page } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { analyzeText } from '../../grammar/index';
import { CHROMIUM_ARGS } from '../webview/support';
import { extract } from './unzip';
import { hostEntry, OUT, ROOT, openFromExplorer, packageExtension, previewFrame, startHost, statusText, type Host } from './host';
import { readZip } from './unzip';

const SPHERE = `scene "Sphere in the editor host"
space 3d
medium vacuum
mesh coarse
electrode ball sphere center (0, 0, 0) radius 50 mm potential 10 kV
slice xz at y = 0 from (-200, -200) mm to (200, 200) mm cells 60
`;
// Mistakes with diagnostics of their own: an unknown unit and a length without a unit.
const MISTAKES = `scene "Scene with mistakes"
space 3d
electrode rod cylinder from (0, 0, 0) mm to (0, 0, 100) mm radius 5 kv potential 1 kV
electrode cap sphere center (0, 0, 150) radius 20 mm potential 1 kV
`;

let vsix: string;
beforeAll(() => {
  vsix = packageExtension();
});

describe('the packaged extension (.vsix)', () => {
  it('holds the manifest, the bundles, the preview assets and the grammar, and no sources or tests', () => {
    const names = readZip(vsix).map((e) => e.name);
    for (const f of ['package.json', 'dist/extension.js', 'dist/server.js', 'dist/webview/preview.js', 'dist/webview/preview.css', 'grammar/vscape.tmLanguage.json']) {
      expect(names).toContain(`extension/${f}`);
    }
    expect(names.filter((n) => /\.ts$|^extension\/(tests|client|server|node_modules)\//.test(n))).toEqual([]);
    const manifest = JSON.parse(readZip(vsix).find((e) => e.name === 'extension/package.json')!.data.toString('utf8'));
    expect(manifest.activationEvents).toContain('onLanguage:vscape');
    expect(manifest.contributes.commands.map((c: { command: string }) => c.command)).toContain('voltscape.openPreview');
  });
});

const run = process.env.VOLTSCAPE_EDITOR_TESTS === '1';
if (!run) {
  console.log(
    `Editor-host tests not run: set VOLTSCAPE_EDITOR_TESTS=1 after installing the host with ../shared/tools/editor-host-setup.sh (entry looked for: ${hostEntry()}).`,
  );
} else {
  describe('the extension in a real VS Code (OSS) host', () => {
    let host: Host;
    let browser: Browser;
    let page: Page;
    const shots = (name: string) => join(OUT, `${name}.png`);

    beforeAll(async () => {
      mkdirSync(OUT, { recursive: true });
      host = await startHost(vsix, { 'sphere.vscape': SPHERE, 'mistakes.vscape': MISTAKES, 'notes.txt': 'Not a scene.\n' });
      browser = await chromium.launch({ executablePath: '/usr/bin/chromium', args: CHROMIUM_ARGS });
      page = await browser.newPage({ viewport: { width: 1600, height: 1000 } });
      await page.goto(host.url);
      await page.waitForSelector('.monaco-workbench .explorer-folders-view .monaco-list-row', { timeout: 90_000 });
    }, 180_000);

    afterAll(async () => {
      await browser?.close();
      host?.stop();
    });

    it('counts the diagnostics of a scene with mistakes in the Problems view', async () => {
      const expected = analyzeText(MISTAKES).diagnostics;
      const errors = expected.filter((d) => d.severity === 'error').length;
      expect(errors).toBeGreaterThanOrEqual(2);
      await openFromExplorer(page, 'mistakes.vscape');
      await page.keyboard.press('Control+Shift+M');
      // Each diagnostic is one row under the file's row in the Problems view.
      await page.waitForFunction(
        (n) => document.querySelectorAll('.markers-panel .monaco-list-row .marker-icon.codicon-error, .markers-panel .monaco-list-row .codicon-error').length >= n,
        errors,
        { timeout: 90_000 },
      );
      const label = await page.locator('#status\\.problems').getAttribute('aria-label');
      expect(label).toContain(`Errors: ${errors}`);
      await page.screenshot({ path: shots('problems') });
      await page.keyboard.press('Control+Shift+M');
    });

    it('opens the preview beside the scene from the editor-title button and draws contours', async () => {
      await openFromExplorer(page, 'sphere.vscape');
      await page.waitForFunction(() => /Voltscape: solved in \d+ ms/.test(document.querySelector('.statusbar-item[id$="voltscape.solveStatus"]')?.textContent ?? ''), null, { timeout: 120_000 });
      expect(await statusText(page)).toMatch(/Voltscape: solved in \d+ ms/);
      await page.locator('.editor-actions .action-label[aria-label="Open Field Preview"]').first().click();
      const frame = await previewFrame(page);
      await page.waitForSelector('.tabs-container .tab[aria-label*="Field: sphere.vscape"]');
      expect(await frame.locator('svg.picture path.contour').count()).toBeGreaterThan(5);
      expect(await frame.locator('#electrodes tbody tr').count()).toBe(1);
      await page.screenshot({ path: shots('preview-beside-scene') });
    });

    it('redraws the picture after a typed change to the scene', async () => {
      await page.locator('.editor-instance .monaco-editor .view-lines').first().click();
      await page.keyboard.press('Control+End');
      await page.keyboard.type('electrode probe_ball sphere center (120, 0, 0) mm radius 20 mm potential -5 kV\n');
      const frame = await previewFrame(page);
      await frame.waitForFunction(() => document.querySelectorAll('#electrodes tbody tr').length === 2, null, { timeout: 120_000 });
      await frame.waitForFunction(() => document.body.dataset.stale === 'false', null, { timeout: 120_000 });
      expect(await frame.textContent('#electrodes tbody')).toContain('probe_ball');
      expect(await frame.locator('svg.picture path.contour').count()).toBeGreaterThan(5);
      await page.screenshot({ path: shots('preview-after-edit') });
    });

    it('selects the electrode statement in the editor when the electrode is clicked in the preview', async () => {
      const frame = await previewFrame(page);
      const at = await frame.evaluate(() => {
        const svg = document.querySelector('svg.picture') as SVGSVGElement;
        const [left, top, width, height, u0, v0, u1, v1] = svg.getAttribute('data-frame')!.split(' ').map(Number);
        const p = new DOMPoint(left + ((0 - u0) / (u1 - u0)) * width, top + ((v1 - 0) / (v1 - v0)) * height).matrixTransform(svg.getScreenCTM()!);
        return { x: p.x, y: p.y };
      });
      await frame.locator('body').click({ position: at });
      // The selection covers line 5, the `electrode ball` statement.
      await page.waitForFunction(() => /Ln 5, Col \d+ \(\d+ selected\)/.test(document.getElementById('status.editor.selection')?.textContent ?? ''), null, { timeout: 30_000 });
      expect(await page.locator('#status\\.editor\\.selection').textContent()).toMatch(/\(\d+ selected\)/);
    });

    it('saves the picture as SVG where the save dialog says', async () => {
      const frame = await previewFrame(page);
      await frame.click('#save-svg');
      // VS Code's own save dialog (a path in a quick input here) proposes a name beside the scene.
      const input = page.locator('.quick-input-widget input:visible').first();
      await input.waitFor();
      // The dialog fills its path in after it opens: wait for the proposed name to arrive.
      await expect.poll(() => input.inputValue(), { timeout: 30_000 }).toMatch(/sphere-vscape\.svg$/);
      await page.keyboard.press('Enter');
      await page.locator('.notifications-toasts', { hasText: 'Voltscape: picture saved to' }).waitFor({ timeout: 30_000 });
      const saved = readFileSync(join(host.workspace, 'sphere-vscape.svg'), 'utf8');
      expect(saved.startsWith('<?xml')).toBe(true);
      expect(saved).toContain('class="contour"');
      expect(saved.trimEnd().endsWith('</svg>')).toBe(true);
    });

    it('shows the latest picture again after the panel was hidden and shown', async () => {
      // No quick input left open by an earlier step may cover the tabs.
      if (await page.locator('.quick-input-widget:visible').count()) await page.keyboard.press('Escape');
      await page.locator('.tabs-container .tab[aria-label*="Field: sphere.vscape"]').click();
      await openFromExplorer(page, 'notes.txt');
      await page.locator('.tabs-container .tab[aria-label*="Field: sphere.vscape"]').click();
      const frame = await previewFrame(page);
      await frame.waitForFunction(() => document.querySelectorAll('#electrodes tbody tr').length === 2, null, { timeout: 60_000 });
      expect(await frame.textContent('#electrodes tbody')).toContain('probe_ball');
    });

    it('follows the active scene editor', async () => {
      await openFromExplorer(page, 'mistakes.vscape');
      await page.waitForSelector('.tabs-container .tab[aria-label*="Field: mistakes.vscape"]', { timeout: 30_000 });
    });
  });
}

// The same checks in a VS Code (Electron) build, where one is given: VSCODE_BINARY=/path/to/code.
const binary = process.env.VSCODE_BINARY;
if (!binary) {
  console.log('VS Code (Electron) tests not run: set VSCODE_BINARY to a VS Code executable to run them (none can be downloaded here).');
} else {
  describe('the extension in a VS Code (Electron) host', () => {
    it('shows diagnostics, opens a drawn preview and redraws it after an edit', async () => {
      const base = join(OUT, 'electron');
      rmSync(base, { recursive: true, force: true });
      const ext = join(base, 'extension');
      extract(readZip(vsix), 'extension/', ext);
      const workspace = join(base, 'workspace');
      mkdirSync(workspace, { recursive: true });
      writeFileSync(join(workspace, 'sphere.vscape'), SPHERE);
      writeFileSync(join(workspace, 'mistakes.vscape'), MISTAKES);
      const suite = join(base, 'suite.js');
      await build({
        entryPoints: [join(ROOT, 'tests/extension/electron/suite.ts')], outfile: suite, bundle: true,
        platform: 'node', format: 'cjs', target: 'node20', external: ['vscode'], logLevel: 'warning',
      });
      const errors = analyzeText(MISTAKES).diagnostics.filter((d) => d.severity === 'error').length;
      const code = await runTests({
        vscodeExecutablePath: binary,
        extensionDevelopmentPath: ext,
        extensionTestsPath: suite,
        extensionTestsEnv: { VOLTSCAPE_EXPECTED_ERRORS: String(errors) },
        launchArgs: [workspace, '--disable-extensions', '--disable-workspace-trust', '--user-data-dir', join(base, 'user-data')],
      });
      expect(code).toBe(0);
    }, 300_000);
  });
}
