// The fast solver's worker thread: receives jobs on its port and runs them (server/src/engine/fast/jobs.ts).
// Bundled on its own as fast-worker.js, or started from any bundle that calls startFastWorker()
// when `isFastWorker()` is true.
import { isMainThread, workerData, type MessagePort } from 'node:worker_threads';
import { runAssemble, runCoarse, runDenseProduct, runEvaluate, runFactor, runPrecondition, runProduct, runRows, type AssembleJob, type CoarseJob, type DenseProductJob, type EvaluateJob, type FactorJob, type PreconditionJob, type ProductJob, type RowsJob } from './jobs';

export function isFastWorker(): boolean {
  return !isMainThread && (workerData as { voltscapeFastWorker?: boolean } | null)?.voltscapeFastWorker === true;
}

let started = false;

/** Starts answering jobs (once; later calls do nothing). */
export function startFastWorker(): void {
  if (started) return;
  started = true;
  const port = (workerData as { port: MessagePort }).port;
  port.on('message', (msg: (AssembleJob | EvaluateJob | ProductJob | RowsJob | DenseProductJob | PreconditionJob | FactorJob | CoarseJob) & { done: Int32Array }) => {
    try {
      if (msg.kind === 'assemble') {
        // The packs live in shared memory: posting them shares, not copies.
        port.postMessage({ packs: runAssemble(msg) });
      } else if (msg.kind === 'product') {
        runProduct(msg);
        port.postMessage({ ok: true });
      } else if (msg.kind === 'rows') {
        runRows(msg);
        port.postMessage({ ok: true });
      } else if (msg.kind === 'dense-product') {
        runDenseProduct(msg);
        port.postMessage({ ok: true });
      } else if (msg.kind === 'precondition') {
        runPrecondition(msg);
        port.postMessage({ ok: true });
      } else if (msg.kind === 'factor') {
        runFactor(msg);
        port.postMessage({ ok: true });
      } else if (msg.kind === 'coarse') {
        runCoarse(msg);
        port.postMessage({ ok: true });
      } else {
        runEvaluate(msg);
        port.postMessage({ ok: true });
      }
    } catch (e) {
      port.postMessage({ error: String(e) });
    }
    Atomics.add(msg.done, 0, 1);
    Atomics.notify(msg.done, 0);
  });
}

if (isFastWorker()) startFastWorker();
