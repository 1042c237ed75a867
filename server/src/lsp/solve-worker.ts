// The solve worker (bundled to dist/solve-worker.js): one long-lived thread that owns the engine
// cache. A job is cancelled when its document's generation slot moves on (a newer edit); the
// engine polls that through isCancelled, so the worker is never killed and keeps its cache.
import { parentPort, workerData } from 'node:worker_threads';
import { createEngineCache } from '../engine/index';
import type { Result } from '../engine/result';
import { runSolveJob } from './solve-runner';
import { runSweepJob } from './sweep-runner';
import type { FromWorker, ToWorker, WorkerInit } from './worker-messages';

const port = parentPort;
if (port) {
  const generations = new Int32Array((workerData as WorkerInit).generations);
  const cache = createEngineCache();
  // Live sweeps keep their own cache: a geometry sweep must not push the live scene's factorization out.
  const sweepCache = createEngineCache();
  port.on('message', (message: ToWorker) => {
    if (message.type === 'dispose') return port.close();
    const job = message;
    const isCancelled = () => Atomics.load(generations, job.slot) !== job.generation;
    if (job.type === 'sweep') return runSweepJob(job, sweepCache, isCancelled, (out: FromWorker) => port.postMessage(out));
    runSolveJob(job, cache, isCancelled, (out: FromWorker) => port.postMessage(out, out.type === 'result' ? transferables(out.result) : []));
  });
}

/** The slice grids' buffers, moved to the main thread rather than copied. */
function transferables(result: Result): ArrayBuffer[] {
  const buffers = new Set<ArrayBuffer>();
  for (const s of result.slices) {
    for (const a of [s.potential, s.fieldU, s.fieldV, s.fieldMagnitude, s.inside]) {
      if (a && a.buffer instanceof ArrayBuffer) buffers.add(a.buffer);
    }
  }
  return [...buffers];
}
