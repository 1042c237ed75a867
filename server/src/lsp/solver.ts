// The main thread's side of solving: hands jobs to the solve worker and routes its answers back.
// A newer solve for a document cancels the older one by moving that document's generation slot
// (shared memory the worker polls); answers of a superseded job are dropped here as well, so a
// stale result can never arrive after a newer one.
import { existsSync } from 'node:fs';
import { join } from 'node:path';
import { Worker } from 'node:worker_threads';
import type { Scene } from '../../../grammar/scene';
import type { Result } from '../engine/result';
import type { SolveLevel } from '../protocol';
import type { SweepPayload } from './sweep-runner';
import { GENERATION_SLOTS, IDLE_STOP_SLOT, POSTED_SLOT, type FromWorker, type SolveJob, type SweepJob, type WorkerInit } from './worker-messages';

export interface SolveRequest {
  scene: Scene;
  levels: SolveLevel[];
  maxPanels: number;
  maxGridCells: number;
  /** What the factorization depends on (core.ts geometrySignature): lets the worker warm the stored grids of drive-only edits while idle. */
  geometry?: string;
}

export interface SolveCallbacks {
  /** The worker started solving a level of the newest job of this document (optional: the status bar's "coarse"). */
  onLevel?(level: SolveLevel): void;
  /** One level finished for the newest job of this document. */
  onResult(level: SolveLevel, result: Result, solveMs: number): void;
  /** The job ended: all levels done, cancelled by a newer job, or failed. */
  onDone(state: 'done' | 'cancelled' | 'failed', message?: string): void;
}

export interface SweepRequest {
  text: string;
  /** The let to sweep. */
  name: string;
  maxPanels: number;
}

export interface SweepCallbacks {
  /** The sweep finished for the newest job of this document. */
  onSweep(sweep: SweepPayload, solveMs: number): void;
  onDone(state: 'done' | 'cancelled' | 'failed', message?: string): void;
}

export interface Solver {
  /** Starts solving a document; any earlier solve of the same document is cancelled. */
  solve(uri: string, request: SolveRequest, callbacks: SolveCallbacks): void;
  /** Starts a live sweep of a document, cancelled like a solve (by a newer solve, sweep or cancel). Optional: test solvers may lack it. */
  sweep?(uri: string, request: SweepRequest, callbacks: SweepCallbacks): void;
  /**
   * Cancels the document's solve, if any. The worker's idle work (warming the stored grids of
   * drive-only edits) goes on until the next job is posted, unless `idleToo` (the document closed).
   */
  cancel(uri: string, idleToo?: boolean): void;
  dispose(): void;
}

const SLOTS = GENERATION_SLOTS;

/** Generation bookkeeping shared with the worker: one Int32 slot per document, then the posted-jobs and idle-stop counters, in shared memory. */
class Generations {
  readonly buffer = new SharedArrayBuffer((SLOTS + 2) * 4);
  readonly slots = new Int32Array(this.buffer);
  private slotOf = new Map<string, number>();
  private nextSlot = 0;
  private counter = 0;

  slot(uri: string): number {
    let s = this.slotOf.get(uri);
    if (s === undefined) {
      // More open documents than slots share a slot; they then cancel each other's solves (rare, harmless).
      s = this.nextSlot++ % SLOTS;
      this.slotOf.set(uri, s);
    }
    return s;
  }
  /** A fresh generation for the document; every older job of it is now cancelled. */
  advance(uri: string): { slot: number; generation: number } {
    const slot = this.slot(uri);
    const generation = ++this.counter;
    Atomics.store(this.slots, slot, generation);
    return { slot, generation };
  }
  isCurrent(slot: number, generation: number): boolean {
    return Atomics.load(this.slots, slot) === generation;
  }
  /** A job is being posted: the worker's idle work stops. */
  posted(): void {
    Atomics.add(this.slots, POSTED_SLOT, 1);
  }
  /** The worker's idle work stops, with no job to follow. */
  stopIdle(): void {
    Atomics.add(this.slots, IDLE_STOP_SLOT, 1);
  }
}

interface Pending {
  slot: number;
  generation: number;
  callbacks: Partial<SolveCallbacks & SweepCallbacks> & Pick<SolveCallbacks, 'onDone'>;
}

/** Solves in one long-lived worker thread (dist/solve-worker.js), which keeps the engine cache. */
export class WorkerSolver implements Solver {
  private generations = new Generations();
  private pending = new Map<number, Pending>();
  private worker: Worker | null = null;
  private nextId = 1;
  private crashes = 0;

  constructor(
    private readonly workerPath: string,
    private readonly log: (message: string) => void = () => {},
  ) {
    // Start the worker now, so it has loaded by the time the first solve is asked for.
    this.ensureWorker();
  }

  solve(uri: string, request: SolveRequest, callbacks: SolveCallbacks): void {
    const { slot, generation } = this.generations.advance(uri);
    const worker = this.ensureWorker();
    if (!worker) return callbacks.onDone('failed', 'the solve worker stopped after repeated crashes');
    const job: SolveJob = { type: 'solve', id: this.nextId++, slot, generation, ...request };
    this.pending.set(job.id, { slot, generation, callbacks });
    this.generations.posted();
    worker.postMessage(job);
  }

  sweep(uri: string, request: SweepRequest, callbacks: SweepCallbacks): void {
    const { slot, generation } = this.generations.advance(uri);
    const worker = this.ensureWorker();
    if (!worker) return callbacks.onDone('failed', 'the solve worker stopped after repeated crashes');
    const job: SweepJob = { type: 'sweep', id: this.nextId++, slot, generation, uri, ...request };
    this.pending.set(job.id, { slot, generation, callbacks });
    this.generations.posted();
    worker.postMessage(job);
  }

  cancel(uri: string, idleToo = false): void {
    this.generations.advance(uri);
    if (idleToo) this.generations.stopIdle();
  }

  dispose(): void {
    const worker = this.worker;
    this.worker = null;
    if (worker) {
      worker.removeAllListeners();
      void worker.terminate();
    }
  }

  private ensureWorker(): Worker | null {
    if (this.worker) return this.worker;
    if (this.crashes > 5) return null;
    const init: WorkerInit = { generations: this.generations.buffer, postedBefore: Atomics.load(this.generations.slots, POSTED_SLOT) };
    const worker = new Worker(this.workerPath, { workerData: init });
    worker.unref();
    worker.on('message', (message: FromWorker) => this.receive(message));
    const fail = (why: string) => {
      if (this.worker !== worker) return;
      this.worker = null;
      this.crashes++;
      this.log(`solve worker stopped: ${why}`);
      for (const [id, p] of this.pending) {
        this.pending.delete(id);
        p.callbacks.onDone('failed', `the solve worker stopped: ${why}`);
      }
    };
    worker.on('error', (e) => fail(e instanceof Error ? e.message : String(e)));
    worker.on('exit', (code) => fail(`exit code ${code}`));
    this.worker = worker;
    return worker;
  }

  private receive(message: FromWorker): void {
    const p = this.pending.get(message.id);
    if (!p) return;
    const current = this.generations.isCurrent(p.slot, p.generation);
    if (message.type === 'started') {
      if (current) p.callbacks.onLevel?.(message.level);
      return;
    }
    if (message.type === 'result') {
      if (current) p.callbacks.onResult?.(message.level, message.result, message.solveMs);
      return;
    }
    if (message.type === 'sweep') {
      if (current) p.callbacks.onSweep?.(message.sweep, message.solveMs);
      return;
    }
    this.pending.delete(message.id);
    p.callbacks.onDone(current ? message.state : 'cancelled', message.message);
  }
}

/** Used when the worker bundle is missing: solving on the server's own thread would block it, so it does not solve. */
class UnavailableSolver implements Solver {
  constructor(private readonly why: string) {}
  solve(_uri: string, _request: SolveRequest, callbacks: SolveCallbacks): void {
    callbacks.onDone('failed', this.why);
  }
  cancel(): void {}
  dispose(): void {}
}

/** The worker next to this bundle (dist/solve-worker.js); without it nothing is solved (and the diagnostics say why). */
export function createSolver(log: (message: string) => void): Solver {
  const path = join(__dirname, 'solve-worker.js');
  if (existsSync(path)) return new WorkerSolver(path, log);
  log(`solve worker not found at ${path}: live solving is off`);
  return new UnavailableSolver(`the solve worker is missing (${path})`);
}
