// The real VS Code (OSS) editor host for the extension tests: code-server from the npm registry
// (installed by ../shared/tools/editor-host-setup.sh), serving on 127.0.0.1 only, with the packaged
// extension unpacked into its extensions folder, driven by playwright-core and Debian's Chromium.
import { spawn, spawnSync, type ChildProcess } from 'node:child_process';
import { existsSync, mkdirSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { createServer } from 'node:net';
import { homedir } from 'node:os';
import { join, resolve } from 'node:path';
import type { Frame, Page } from 'playwright-core';
import { extract, readZip } from './unzip';

export const ROOT = resolve(__dirname, '../..');
export const OUT = join(ROOT, 'test-artifacts', 'editor-host');

/** code-server's entry script: $VOLTSCAPE_EDITOR_HOST, or where the setup script puts it by default. */
export function hostEntry(): string {
  return (
    process.env.VOLTSCAPE_EDITOR_HOST ??
    join(process.env.EDITOR_HOST_DIR ?? join(homedir(), '.cache/editor-host'), 'node_modules/code-server/out/node/entry.js')
  );
}

/** Packs the extension with vsce exactly as `npm run package` does (dist/ must be built) and returns the .vsix path. */
export function packageExtension(): string {
  mkdirSync(OUT, { recursive: true });
  const vsix = join(OUT, 'voltscape.vsix');
  const vsce = join(ROOT, 'node_modules/@vscode/vsce/vsce');
  const r = spawnSync(process.execPath, [vsce, 'package', '--no-dependencies', '--allow-missing-repository', '--skip-license', '--no-rewrite-relative-links', '--out', vsix], {
    cwd: ROOT,
    encoding: 'utf8',
  });
  if (r.status !== 0) throw new Error(`vsce package failed:\n${r.stdout}\n${r.stderr}`);
  return vsix;
}

export interface Host {
  url: string;
  workspace: string;
  process: ChildProcess;
  log: string[];
  stop(): void;
}

function freePort(): Promise<number> {
  return new Promise((res, rej) => {
    const s = createServer();
    s.once('error', rej);
    s.listen(0, '127.0.0.1', () => {
      const port = (s.address() as { port: number }).port;
      s.close(() => res(port));
    });
  });
}

/** Starts code-server with the unpacked .vsix and a workspace holding `files`; resolves once it listens. */
export async function startHost(vsix: string, files: Record<string, string>, settings: Record<string, unknown> = {}): Promise<Host> {
  const base = join(OUT, 'run');
  rmSync(base, { recursive: true, force: true });
  const manifest = JSON.parse(readFileSync(join(ROOT, 'package.json'), 'utf8')) as { publisher: string; name: string; version: string };
  const extDir = join(base, 'extensions', `${manifest.publisher}.${manifest.name}-${manifest.version}`);
  mkdirSync(extDir, { recursive: true });
  extract(readZip(vsix), 'extension/', extDir);
  const userData = join(base, 'user-data');
  mkdirSync(join(userData, 'User'), { recursive: true });
  writeFileSync(
    join(userData, 'User', 'settings.json'),
    JSON.stringify({
      'security.workspace.trust.enabled': false,
      'workbench.startupEditor': 'none',
      'workbench.tips.enabled': false,
      // The workspace sits inside the project's git tree: no offer to open that repository.
      'git.openRepositoryInParentFolders': 'never',
      ...settings,
    }),
  );
  const workspace = join(base, 'workspace');
  mkdirSync(workspace, { recursive: true });
  for (const [name, text] of Object.entries(files)) writeFileSync(join(workspace, name), text);
  const port = await freePort();
  const log: string[] = [];
  const child = spawn(
    process.execPath,
    [hostEntry(), '--auth', 'none', '--bind-addr', `127.0.0.1:${port}`, '--user-data-dir', userData,
      '--extensions-dir', join(base, 'extensions'), '--disable-telemetry', '--disable-update-check', '--disable-workspace-trust', workspace],
    { stdio: ['ignore', 'pipe', 'pipe'], env: { ...process.env, XDG_CONFIG_HOME: join(base, 'config') } },
  );
  await new Promise<void>((res, rej) => {
    const onData = (d: Buffer) => {
      const text = d.toString();
      log.push(text);
      if (text.includes('HTTP server listening')) res();
    };
    child.stdout!.on('data', onData);
    child.stderr!.on('data', (d: Buffer) => log.push(d.toString()));
    child.once('exit', (code) => rej(new Error(`code-server exited with ${code}:\n${log.join('')}`)));
  });
  return {
    url: `http://127.0.0.1:${port}/?folder=${encodeURIComponent(workspace)}`,
    workspace,
    process: child,
    log,
    stop: () => {
      child.kill('SIGTERM');
    },
  };
}

export const hostAvailable = (): boolean => existsSync(hostEntry());

/** Opens a workspace file from the Explorer and waits for its editor tab. */
export async function openFromExplorer(page: Page, name: string): Promise<void> {
  const row = page.locator('.explorer-folders-view .monaco-list-row', { hasText: name }).first();
  const tab = page.locator(`.tabs-container .tab[aria-label*="${name}"]`).first();
  // The Explorer may re-render under the pointer (a file appearing); click again if no tab follows.
  for (let attempt = 0; ; attempt++) {
    await row.click();
    try {
      await tab.waitFor({ timeout: 10_000 });
      break;
    } catch (error) {
      if (attempt === 2) throw error;
    }
  }
  await page.locator('.editor-instance .monaco-editor .view-lines').first().waitFor();
}

/** The text of the Voltscape status-bar item. */
export async function statusText(page: Page): Promise<string> {
  return (await page.locator('.statusbar-item[id$="voltscape.solveStatus"]').textContent()) ?? '';
}

/** Waits for the frame (nested webview iframe) that holds the preview picture. */
export async function previewFrame(page: Page, timeoutMs = 90_000): Promise<Frame> {
  const deadline = Date.now() + timeoutMs;
  while (Date.now() < deadline) {
    for (const f of page.frames()) {
      if (await f.locator('svg.picture path.contour').count().catch(() => 0)) return f;
    }
    await page.waitForEvent('framenavigated', { timeout: 1000 }).catch(() => undefined);
  }
  throw new Error('no preview frame with a picture appeared');
}


