// Messages between the language server's main thread and its solve worker (solve-worker.ts).
// Internal to server/src/lsp; the editor never sees them.
import type { Scene } from '../../../grammar/scene';
import type { Result } from '../engine/result';
import type { SolveLevel } from '../protocol';
import type { SweepPayload } from './sweep-runner';

/** Documents with a generation slot of their own (more share slots, and then cancel each other's solves). */
export const GENERATION_SLOTS = 256;
/** The Int32 after the documents' slots counts the jobs posted to the worker: idle work runs only when the worker has received them all. */
export const POSTED_SLOT = GENERATION_SLOTS;
/** The next one counts requests to stop idle work (a document closed). */
export const IDLE_STOP_SLOT = GENERATION_SLOTS + 1;

/** Given to the worker at start: GENERATION_SLOTS Int32 slots, one per document, holding its newest solve generation, then POSTED_SLOT and IDLE_STOP_SLOT. */
export interface WorkerInit {
  generations: SharedArrayBuffer;
  /** POSTED_SLOT when the worker was made (jobs posted to an earlier worker). */
  postedBefore: number;
}

export interface SolveJob {
  type: 'solve';
  /** Unique per job; answers carry it back. */
  id: number;
  /** Which Int32 slot of the shared generations array belongs to this document. */
  slot: number;
  /** The job is cancelled as soon as the slot holds anything else. */
  generation: number;
  scene: Scene;
  levels: SolveLevel[];
  maxPanels: number;
  maxGridCells: number;
  /** What the engine's factorization depends on (core.ts geometrySignature); with it the worker warms the stored grids of drive-only edits when idle. */
  geometry?: string;
}

/** A live sweep of a document's text (server/src/sweep.ts), on the coarse level; cancelled like a solve. */
export interface SweepJob {
  type: 'sweep';
  id: number;
  slot: number;
  generation: number;
  uri: string;
  text: string;
  /** The let to sweep (the document's first sweep). */
  name: string;
  maxPanels: number;
}

export type ToWorker = SolveJob | SweepJob | { type: 'dispose' };

export type FromWorker =
  /** A level is being solved (the worker skips the coarse one for a scene whose stored grids are ready). */
  | { type: 'started'; id: number; level: SolveLevel }
  | { type: 'result'; id: number; level: SolveLevel; result: Result; solveMs: number }
  | { type: 'sweep'; id: number; sweep: SweepPayload; solveMs: number }
  | { type: 'done'; id: number; state: 'done' | 'cancelled' | 'failed'; message?: string };
