// Messages between the language server's main thread and its solve worker (solve-worker.ts).
// Internal to server/src/lsp; the editor never sees them.
import type { Scene } from '../../../grammar/scene';
import type { Result } from '../engine/result';
import type { SolveLevel } from '../protocol';
import type { SweepPayload } from './sweep-runner';

/** Given to the worker at start: one Int32 slot per document, holding its newest solve generation. */
export interface WorkerInit {
  generations: SharedArrayBuffer;
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
  | { type: 'result'; id: number; level: SolveLevel; result: Result; solveMs: number }
  | { type: 'sweep'; id: number; sweep: SweepPayload; solveMs: number }
  | { type: 'done'; id: number; state: 'done' | 'cancelled' | 'failed'; message?: string };
