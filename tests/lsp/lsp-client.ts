// A real JSON-RPC client for the language server process (node dist/server.js --stdio), for the
// protocol tests and the latency benchmark. It records every notification and lets a caller wait
// for the one it needs (a signal, never a fixed sleep).
import { spawn, spawnSync, type ChildProcess } from 'node:child_process';
import { existsSync } from 'node:fs';
import { join } from 'node:path';
import { createMessageConnection, StreamMessageReader, StreamMessageWriter, type MessageConnection } from 'vscode-jsonrpc/node';

export interface Received {
  method: string;
  params: any;
  /** performance.now() when it arrived. */
  at: number;
}

interface Waiter {
  method: string;
  predicate: (params: any) => boolean;
  resolve: (r: Received) => void;
}

/** Builds dist/ when the server bundle is missing. */
export function ensureBuilt(root: string): void {
  if (existsSync(join(root, 'dist/server.js')) && existsSync(join(root, 'dist/solve-worker.js'))) return;
  const run = spawnSync(process.execPath, ['scripts/build.mjs'], { cwd: root, stdio: 'inherit' });
  if (run.status !== 0) throw new Error('build failed');
}

export class LspClient {
  readonly received: Received[] = [];
  private waiters: Waiter[] = [];
  private constructor(
    readonly child: ChildProcess,
    readonly connection: MessageConnection,
    /** What the client answers to workspace/configuration for the `voltscape` section. */
    public settings: Record<string, unknown>,
  ) {}

  /** Starts the server and completes the initialize handshake. */
  static async start(serverPath: string, settings: Record<string, unknown> = {}, args = ['--stdio']): Promise<LspClient> {
    const child = spawn(process.execPath, [...(process.env.VOLTSCAPE_SERVER_NODE_ARGS ?? '').split(' ').filter(Boolean), serverPath, ...args], { stdio: ['pipe', 'pipe', 'pipe'] });
    child.stderr!.on('data', () => {});
    const connection = createMessageConnection(new StreamMessageReader(child.stdout!), new StreamMessageWriter(child.stdin!));
    const client = new LspClient(child, connection, settings);
    connection.onNotification((method, params) => client.record(method, params));
    connection.onRequest('workspace/configuration', (p: { items: { section?: string }[] }) =>
      p.items.map((i) => (i.section === 'voltscape' ? client.settings : null)),
    );
    connection.onRequest('client/registerCapability', () => null);
    connection.listen();
    const init = await connection.sendRequest('initialize', {
      processId: process.pid,
      rootUri: null,
      capabilities: { workspace: { configuration: true, didChangeConfiguration: { dynamicRegistration: true } } },
    });
    client.initializeResult = init;
    await connection.sendNotification('initialized', {});
    return client;
  }

  initializeResult: any;

  private record(method: string, params: any): void {
    const r: Received = { method, params, at: performance.now() };
    this.received.push(r);
    this.waiters = this.waiters.filter((w) => {
      if (w.method !== method || !w.predicate(params)) return true;
      w.resolve(r);
      return false;
    });
  }

  /** The first notification (already received from index `since` on, or still to come) that matches. */
  waitFor(method: string, predicate: (params: any) => boolean = () => true, since = 0, timeoutMs = 60_000): Promise<Received> {
    const hit = this.received.slice(since).find((r) => r.method === method && predicate(r.params));
    if (hit) return Promise.resolve(hit);
    return new Promise((resolve, reject) => {
      const timer = setTimeout(() => reject(new Error(`no ${method} within ${timeoutMs} ms`)), timeoutMs);
      this.waiters.push({
        method,
        predicate,
        resolve: (r) => {
          clearTimeout(timer);
          resolve(r);
        },
      });
    });
  }

  /** Waits for the published diagnostics of a document version. */
  diagnostics(uri: string, version: number, since = 0): Promise<Received> {
    return this.waitFor('textDocument/publishDiagnostics', (p) => p.uri === uri && p.version === version, since);
  }

  /** Waits for the result notification of a document version at a level. */
  result(uri: string, version: number, level: 'coarse' | 'full' = 'full', since = 0, timeoutMs?: number): Promise<Received> {
    return this.waitFor('voltscape/result', (p) => p.uri === uri && p.version === version && p.level === level, since, timeoutMs);
  }

  request<R = any>(method: string, params: unknown): Promise<R> {
    return this.connection.sendRequest(method, params) as Promise<R>;
  }

  open(uri: string, text: string, version = 1): Promise<void> {
    return this.connection.sendNotification('textDocument/didOpen', { textDocument: { uri, languageId: 'vscape', version, text } });
  }

  /** Replaces the whole text (a full-content change event). */
  change(uri: string, version: number, text: string): Promise<void> {
    return this.connection.sendNotification('textDocument/didChange', { textDocument: { uri, version }, contentChanges: [{ text }] });
  }

  /** An incremental change: replaces a range of the current text. */
  edit(uri: string, version: number, range: { start: { line: number; character: number }; end: { line: number; character: number } }, text: string): Promise<void> {
    return this.connection.sendNotification('textDocument/didChange', { textDocument: { uri, version }, contentChanges: [{ range, text }] });
  }

  close(uri: string): Promise<void> {
    return this.connection.sendNotification('textDocument/didClose', { textDocument: { uri } });
  }

  async stop(): Promise<void> {
    try {
      await Promise.race([this.connection.sendRequest('shutdown'), new Promise((r) => setTimeout(r, 2000))]);
      await this.connection.sendNotification('exit');
    } catch {
      // the process may already be gone
    }
    this.connection.dispose();
    if (this.child.exitCode === null) {
      await Promise.race([new Promise((r) => this.child.once('exit', r)), new Promise((r) => setTimeout(r, 2000))]);
      if (this.child.exitCode === null) this.child.kill();
    }
  }
}
