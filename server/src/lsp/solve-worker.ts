// The solve worker (bundled to dist/solve-worker.js): one long-lived thread that owns the engine
// cache. A job is cancelled when its document's generation slot moves on (a newer edit); the
// engine polls that through isCancelled, so the worker is never killed and keeps its cache.
// After a solve job, while no other job is posted, it warms the stored grids of drive-only edits.
import { parentPort, workerData } from 'node:worker_threads';
import { createEngineCache } from '../engine/index';
import type { Result } from '../engine/result';
import { runSolveJob, warmSolveJob, WarmScenes } from './solve-runner';
import { runSweepJob } from './sweep-runner';
import { IDLE_STOP_SLOT, POSTED_SLOT, type FromWorker, type ToWorker, type WorkerInit } from './worker-messages';

const port = parentPort;
if (port) {
  const generations = new Int32Array((workerData as WorkerInit).generations);
  const cache = createEngineCache();
  const warm = new WarmScenes();
  // Live sweeps keep their own cache: a geometry sweep must not push the live scene's factorization out.
  const sweepCache = createEngineCache();
  /** Jobs received; idle work runs only when it equals the jobs posted (none is waiting). */
  let received = (workerData as WorkerInit).postedBefore;
  port.on('message', (message: ToWorker) => {
    if (message.type === 'dispose') return port.close();
    const job = message;
    received++;
    const isCancelled = () => Atomics.load(generations, job.slot) !== job.generation;
    if (job.type === 'sweep') return runSweepJob(job, sweepCache, isCancelled, (out: FromWorker) => port.postMessage(out));
    let done = false;
    runSolveJob(
      job,
      cache,
      isCancelled,
      (out: FromWorker) => {
        done ||= out.type === 'done' && out.state === 'done';
        port.postMessage(out, out.type === 'result' ? transferables(out.result) : []);
      },
      warm,
    );
    if (!done) return;
    // Idle work, stopped by the next job posted (not by keystrokes: the debounce is idle time too) or a closed document.
    const stops = Atomics.load(generations, IDLE_STOP_SLOT);
    const stop = () => Atomics.load(generations, POSTED_SLOT) !== received || Atomics.load(generations, IDLE_STOP_SLOT) !== stops;
    if (!stop()) warmSolveJob(job, cache, stop, warm);
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
