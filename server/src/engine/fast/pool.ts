// A small pool of worker threads that the fast solver calls synchronously: the calling thread
// posts one job to every worker, takes its own share of the work, then blocks on a shared counter
// (Atomics.wait) until every worker is done and collects their replies with receiveMessageOnPort.
// Work is handed out in chunks from a shared atomic counter, so uneven blocks balance themselves.
//
// The worker code must be a file or a string of bundled code (worker threads cannot load
// TypeScript): entry points say where it is with setFastWorkerScript; by default the pool looks
// for fast-worker.js beside the running bundle. Without it, or with `threads: 1`, everything runs
// on the calling thread, which is also the reference path the tests compare against.
import { existsSync } from 'node:fs';
import { availableParallelism } from 'node:os';
import { join } from 'node:path';
import { MessageChannel, Worker, receiveMessageOnPort, type MessagePort } from 'node:worker_threads';

export type WorkerScript = { file: string } | { code: string };

let script: WorkerScript | null | undefined;
let pool: { workers: Worker[]; ports: MessagePort[] } | null = null;

/** Tells the pool where the worker code is (null: no worker threads). Restarts the pool. */
export function setFastWorkerScript(s: WorkerScript | null): void {
  script = s;
  closeFastPool();
}

function defaultScript(): WorkerScript | null {
  const file = typeof __dirname === 'string' ? join(__dirname, 'fast-worker.js') : '';
  return file && existsSync(file) ? { file } : null;
}

/** Number of threads a parallel job will use, the calling thread included. */
export function fastThreads(requested?: number): number {
  if (script === undefined) script = defaultScript();
  if (!script) return 1;
  const cores = typeof availableParallelism === 'function' ? availableParallelism() : 2;
  return Math.max(1, Math.min(requested ?? cores, cores, 16));
}

function ensurePool(workersWanted: number): { workers: Worker[]; ports: MessagePort[] } | null {
  if (!script || workersWanted <= 0) return null;
  if (pool && pool.workers.length >= workersWanted) return pool;
  closeFastPool();
  const workers: Worker[] = [];
  const ports: MessagePort[] = [];
  for (let w = 0; w < workersWanted; w++) {
    const channel = new MessageChannel();
    const worker =
      'file' in script
        ? new Worker(script.file, { workerData: { voltscapeFastWorker: true, port: channel.port2 }, transferList: [channel.port2] })
        : new Worker(script.code, { eval: true, workerData: { voltscapeFastWorker: true, port: channel.port2 }, transferList: [channel.port2] });
    worker.unref();
    workers.push(worker);
    ports.push(channel.port1);
  }
  pool = { workers, ports };
  return pool;
}

/** Stops the worker threads (they are unref'd, so a process may also simply exit). */
export function closeFastPool(): void {
  if (!pool) return;
  for (const w of pool.workers) void w.terminate();
  for (const p of pool.ports) p.close();
  pool = null;
}

/** A job's reply from one worker: whatever it posted back. */
export type Reply = unknown;

/**
 * Runs a job on `threads` threads: `message` goes to each worker (its `done` counter is added;
 * large inputs should sit in SharedArrayBuffers so they are shared, not copied),
 * `local()` runs here meanwhile, then this waits for all workers. Returns the workers' replies.
 * If a worker fails or does not answer within `timeoutMs`, returns null (the caller then falls
 * back to doing the work itself; nothing is lost, since the work counter is shared).
 */
export function runParallel(threads: number, message: Record<string, unknown>, local: () => void, timeoutMs = 600_000): Reply[] | null {
  const p = ensurePool(threads - 1);
  if (!p) {
    local();
    return [];
  }
  const n = threads - 1;
  const done = new Int32Array(new SharedArrayBuffer(4));
  for (let w = 0; w < n; w++) p.ports[w].postMessage({ ...message, done });
  local();
  const deadline = Date.now() + timeoutMs;
  for (;;) {
    const seen = Atomics.load(done, 0);
    if (seen >= n) break;
    const left = deadline - Date.now();
    if (left <= 0) return null;
    Atomics.wait(done, 0, seen, Math.min(left, 1000));
  }
  const replies: Reply[] = [];
  for (let w = 0; w < n; w++) {
    const r = receiveMessageOnPort(p.ports[w]);
    if (!r || (r.message as { error?: string }).error) return null;
    replies.push(r.message);
  }
  return replies;
}

/** A copy of a typed array in shared memory (workers see it without a copy). */
export function shared<T extends Float64Array | Int32Array | Uint32Array | Uint8Array>(a: T): T {
  const C = a.constructor as new (b: SharedArrayBuffer) => T;
  const out = new C(new SharedArrayBuffer(a.byteLength));
  (out as unknown as { set(x: T): void }).set(a);
  return out;
}
