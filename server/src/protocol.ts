// Custom messages of Voltscape, written once and imported by the language server, the extension
// and the preview webview. Each message is a typed object: its method name plus (at the type level
// only) its parameters and, for requests, its answer. No runtime dependency, so the webview bundle
// can import it too.
//
// Server ⇄ extension messages travel over the language-server connection (JSON-RPC).
// Send one with `connection.sendNotification(X.method, params)`; on the client side
// `client.onNotification(X.method, (p: ParamsOf<typeof X>) => ...)`.
import type { Range } from '../../grammar/scene';

/** A notification: its method name, with the parameter type attached for the type-checker. */
export interface NotificationSpec<P> {
  readonly method: string;
  /** Never set; carries the parameter type. */
  readonly __params?: P;
}
/** A request: its method name, with parameter and answer types attached for the type-checker. */
export interface RequestSpec<P, R> {
  readonly method: string;
  readonly __params?: P;
  readonly __result?: R;
}
export type ParamsOf<T> = T extends NotificationSpec<infer P> ? P : T extends RequestSpec<infer P, unknown> ? P : never;
export type ResultOf<T> = T extends RequestSpec<unknown, infer R> ? R : never;

const notification = <P>(method: string): NotificationSpec<P> => ({ method });
const request = <P, R>(method: string): RequestSpec<P, R> => ({ method });

// ---- server → client ----

/** Which refinement a result comes from: a quick coarse mesh first, then the full one. */
export type SolveLevel = 'coarse' | 'full';

/** Where an electrode is written in the document, for click-to-select in the preview. */
export interface ElectrodeLocation {
  name: string;
  /** The whole `electrode` statement. */
  range: Range;
  /** The electrode's name alone. */
  nameRange: Range;
}

export interface ResultParams {
  uri: string;
  /** The document version the result was solved for. */
  version: number;
  level: SolveLevel;
  /**
   * True when the document has changed since and the newest text cannot be solved (it has errors):
   * the picture shown is the last good one. The server re-sends the last result once, marked
   * stale, when the text first gets errors; `voltscape/solveStatus` says 'stale' for every such version.
   */
  stale: boolean;
  /** The Result, encoded by encodeResult (server/src/engine/result-json.ts); decode with decodeResult. */
  result: unknown;
  /** The electrode statements of the solved version, in the order of result.electrodes. */
  electrodes: ElectrodeLocation[];
  /** Milliseconds the worker spent on this level. */
  solveMs: number;
}

/** Sent by the server to the client each time a solve level completes for the newest version of a document. */
export const ResultNotification = notification<ResultParams>('voltscape/result');

export type SolveState =
  /** An edit arrived; a solve will start after the debounce. */
  | 'queued'
  /** The worker is solving this version (level says which). */
  | 'solving'
  /** The full result for this version has been sent. */
  | 'done'
  /** The document has errors: it is not solved and the last result is stale. */
  | 'stale'
  /** A newer edit superseded this solve. */
  | 'cancelled'
  /** The scene is over a limit (see the VS5xx diagnostics) and was not solved. */
  | 'limited'
  /** The solver failed; message says why. */
  | 'failed';

export interface SolveStatusParams {
  uri: string;
  version: number;
  state: SolveState;
  level?: SolveLevel;
  message?: string;
}

/** Sent by the server to the client whenever the solve state of a document changes. */
export const SolveStatusNotification = notification<SolveStatusParams>('voltscape/solveStatus');

/** One electrode's figures along a sweep, one entry per swept value (SI). */
export interface SweepSeries {
  name: string;
  /** Peak surface field, V/m. */
  maxField: number[];
  /** Self capacitance, F (F/m in `planar`). */
  capacitance: number[];
  /** Allowed field over the peak (a ratio); null without a limit or a medium strength. */
  margin: (number | null)[];
}

export interface SweepResultParams {
  uri: string;
  /** The document version swept. */
  version: number;
  /**
   * 'running': a sweep of this version has started (the last one shown is stale until it comes);
   * 'done': values and series are filled; 'failed': message says why; 'none': this version has no sweep.
   */
  state: 'running' | 'done' | 'failed' | 'none';
  /** Live sweeps are solved on the coarse mesh to stay quick; `voltscape sweep` gives the full figures. */
  level: SolveLevel;
  /** The swept let and the SI unit of its values ('' for a plain number). */
  name: string;
  unit: string;
  space: 'planar' | 'axisymmetric' | '3d';
  /** What the margin is measured against (e.g. 'limit', 'air strength'), or null. */
  basis: string | null;
  /** The let's SI values, A to B. */
  values: number[];
  electrodes: SweepSeries[];
  message?: string;
  /** Milliseconds the worker spent on the whole sweep. */
  solveMs: number;
}

/**
 * Sent by the server to the client for the newest version of a document with a `sweep`, after its full
 * result: first state 'running', then 'done' (or 'failed'); 'none' once a swept document no longer has one.
 */
export const SweepResultNotification = notification<SweepResultParams>('voltscape/sweepResult');

// ---- client → server ----

export interface LatestResultParams {
  uri: string;
}

/**
 * Sent by the client to the server to fetch the latest result for a document (for a preview shown
 * again). Answers the same object as the last `voltscape/result`, with `stale` up to date, or null
 * when the document has never been solved.
 */
export const LatestResultRequest = request<LatestResultParams, ResultParams | null>('voltscape/latestResult');

// ---- webview ⇄ extension (added by the preview) ----
// These travel by `webview.postMessage` / `acquireVsCodeApi().postMessage` as plain JSON objects,
// told apart by their `type`. The standalone page (`voltscape solve --html`) uses the same page code.

/** extension → webview: draw this result (the same fields as ResultParams, plus a title). */
export interface PreviewShowMessage {
  type: 'show';
  /** The scene's title or file name; shown as text, never as HTML. */
  title: string;
  uri: string;
  version: number;
  level: SolveLevel;
  /** True when the picture is the last good one and the newest text could not be solved. */
  stale: boolean;
  /** The Result, encoded by encodeResult. */
  result: unknown;
}

/** extension → webview: the solve state changed; anything but 'done' marks the picture as stale. */
export interface PreviewStatusMessage {
  type: 'status';
  state: SolveState;
  /** The document version the state is about (a newer solve of the version shown is only a refinement). */
  version?: number;
  message?: string;
}

/** extension → webview: nothing solved yet for this document. */
export interface PreviewEmptyMessage {
  type: 'empty';
  title: string;
  message: string;
}

/** extension → webview: a sweep of the document (the same fields as SweepResultParams). */
export interface PreviewSweepMessage extends SweepResultParams {
  type: 'sweep';
}

export type ExtensionToPreviewMessage = PreviewShowMessage | PreviewStatusMessage | PreviewEmptyMessage | PreviewSweepMessage;

/** webview → extension: the page is loaded; send the latest result. */
export interface PreviewReadyMessage {
  type: 'ready';
}

/** webview → extension: the user clicked an electrode; select its statement in the editor. */
export interface PreviewSelectElectrodeMessage {
  type: 'selectElectrode';
  /** Index into result.electrodes. */
  index: number;
  name: string;
  range: Range;
}

/** webview → extension: save the picture (the extension asks where, with a dialog). */
export interface PreviewExportMessage {
  type: 'export';
  format: 'svg' | 'png';
  /** SVG text, or a PNG as a `data:image/png;base64,...` URL. */
  data: string;
  suggestedName: string;
}

/** webview → extension: a picture was drawn (what it shows; used by the extension's tests and status). */
export interface PreviewDrawnMessage {
  type: 'drawn';
  version: number;
  /** Contour levels and contour-line paths drawn, and whether the stale mark is on. */
  levels: number;
  contours: number;
  stale: boolean;
}

/** webview → extension: a sweep plot was drawn (lines and points per line; used by tests). */
export interface PreviewSweepDrawnMessage {
  type: 'sweepDrawn';
  version: number;
  figure: 'maxField' | 'capacitance' | 'margin';
  lines: number;
  points: number[];
  stale: boolean;
}

export type PreviewToExtensionMessage =
  | PreviewSweepDrawnMessage
  | PreviewReadyMessage
  | PreviewSelectElectrodeMessage
  | PreviewExportMessage
  | PreviewDrawnMessage;

