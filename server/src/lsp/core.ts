// The language server's core: the open documents, their analyses and latest results, the debounced
// solve of each, and what to tell the editor. It never touches the connection: everything it says
// goes through a Host, so it can run in-process in tests. Features (features/*.ts) read its state.
import { TextDocument } from 'vscode-languageserver-textdocument';
import type { Diagnostic as LspDiagnostic } from 'vscode-languageserver';
import { analyzeText, hasErrors, type Analysis } from '../../../grammar/index';
import type { Diagnostic, Scene } from '../../../grammar/scene';
import type { Result } from '../engine/result';
import { encodeResult } from '../engine/result-json';
import {
  ResultNotification,
  SolveStatusNotification,
  SweepResultNotification,
  type SweepResultParams,
  type ElectrodeLocation,
  type NotificationSpec,
  type ResultParams,
  type SolveLevel,
  type SolveStatusParams,
} from '../protocol';
import { documentDiagnostics } from './features/diagnostics';
import { failureDiagnostic, timeLimitDiagnostic } from './limits';
import { defaultSettings, type Settings } from './settings';
import type { Solver } from './solver';

/** What the core needs from outside: the editor connection in the server, a recorder in tests. */
export interface Host {
  publishDiagnostics(uri: string, version: number, diagnostics: LspDiagnostic[]): void;
  notify<P>(type: NotificationSpec<P>, params: P): void;
  log(message: string): void;
}

/** A solved result together with where its electrodes were written in the solved version. */
export interface SolvedResult {
  version: number;
  level: SolveLevel;
  result: Result;
  electrodes: ElectrodeLocation[];
  solveMs: number;
  /** The geometry it was solved for (see geometrySignature). */
  geometry: string;
  /** Whether it has been re-sent marked stale. */
  staleAnnounced?: boolean;
}

export interface DocumentState {
  uri: string;
  document: TextDocument;
  analysis: Analysis;
  /** Diagnostics that need a solve (field limits, mesh warnings), for the version they were solved for. */
  solveDiagnostics: { version: number; diagnostics: Diagnostic[] } | null;
  /** The newest result, possibly of an older version. */
  solved: SolvedResult | null;
  /** The last `voltscape/sweepResult` sent for this document, if any (optional: states built by tests lack it). */
  sweep?: SweepResultParams | null;
}

/** A document state built from text alone, without solving: for features and their tests. */
export function documentState(text: string, uri = 'file:///scene.vscape', version = 1): DocumentState {
  const document = TextDocument.create(uri, 'vscape', version, text);
  return { uri, document, analysis: analyzeText(text), solveDiagnostics: null, solved: null };
}

/** The electrode statements of an analysis, in scene order (the order of Result.electrodes). */
export function electrodeLocations(analysis: Analysis): ElectrodeLocation[] {
  return (analysis.scene?.electrodes ?? []).map((e) => ({ name: e.name, range: e.range, nameRange: e.nameRange }));
}

/**
 * What the engine's cached mesh and factorization depend on: everything but the drives and the
 * free charges. When it is unchanged, the engine reuses the factorization, the full level is as quick
 * as the coarse one, and the coarse pass is skipped.
 */
export function geometrySignature(scene: Scene): string {
  const { electrodes, charges: _charges, ...rest } = scene;
  return JSON.stringify({ ...rest, electrodes: electrodes.map((e) => [e.name, e.shape]) }, (key, value) => (key === 'range' || key === 'nameRange' ? undefined : value));
}

export class ServerCore {
  private readonly documents = new Map<string, DocumentState>();
  private readonly timers = new Map<string, ReturnType<typeof setTimeout>>();
  settings: Settings = defaultSettings;

  constructor(
    private readonly host: Host,
    private readonly solver: Solver,
  ) {}

  get(uri: string): DocumentState | undefined {
    return this.documents.get(uri);
  }

  /** A document was opened or changed: analyse now, publish diagnostics, solve after the debounce. */
  update(uri: string, text: string, version: number): DocumentState {
    const arrived = Date.now();
    const previous = this.documents.get(uri);
    const document = TextDocument.create(uri, 'vscape', version, text);
    const analysis = analyzeText(text);
    const state: DocumentState = {
      uri,
      document,
      analysis,
      solveDiagnostics: null,
      solved: previous?.solved ?? null,
      sweep: previous?.sweep ?? null,
    };
    this.documents.set(uri, state);
    this.publish(state);
    this.scheduleSolve(state, arrived);
    return state;
  }

  close(uri: string): void {
    this.clearTimer(uri);
    this.solver.cancel(uri, true);
    this.documents.delete(uri);
    this.host.publishDiagnostics(uri, 0, []);
  }

  /** New settings: re-solve every open document with them. */
  configure(settings: Settings): void {
    const changed = JSON.stringify(settings) !== JSON.stringify(this.settings);
    this.settings = settings;
    if (changed) for (const state of this.documents.values()) this.scheduleSolve(state);
  }

  /** The latest result of a document as a `voltscape/result` message, with its stale flag up to date. */
  latestResult(uri: string): ResultParams | null {
    const state = this.documents.get(uri);
    return state?.solved ? this.resultParams(state, state.solved) : null;
  }

  dispose(): void {
    for (const uri of this.timers.keys()) this.clearTimer(uri);
    this.solver.dispose();
  }

  private publish(state: DocumentState): void {
    this.host.publishDiagnostics(state.uri, state.document.version, documentDiagnostics(state));
  }

  private status(state: DocumentState, params: Omit<SolveStatusParams, 'uri' | 'version'>, version = state.document.version) {
    this.host.notify(SolveStatusNotification, { uri: state.uri, version, ...params });
  }

  /** The picture is stale when the text has changed since and cannot be solved (it has errors). */
  private isStale(state: DocumentState): boolean {
    return !!state.solved && state.solved.version !== state.document.version && hasErrors(state.analysis.diagnostics);
  }

  private resultParams(state: DocumentState, solved: SolvedResult): ResultParams {
    return {
      uri: state.uri,
      version: solved.version,
      level: solved.level,
      stale: this.isStale(state),
      result: encodeResult(solved.result),
      electrodes: solved.electrodes,
      solveMs: solved.solveMs,
    };
  }

  private clearTimer(uri: string): void {
    const t = this.timers.get(uri);
    if (t) clearTimeout(t);
    this.timers.delete(uri);
  }

  /** `since`: when the change arrived (the debounce counts from then, so the analysis of the keystroke is part of it). */
  private scheduleSolve(state: DocumentState, since = Date.now()): void {
    const { uri } = state;
    this.clearTimer(uri);
    this.solver.cancel(uri);
    const scene = state.analysis.scene;
    if (!scene || hasErrors(state.analysis.diagnostics)) {
      // Only error-free scenes are solved; the last picture stays, marked stale.
      // The picture is re-sent once, marked stale, when it first becomes stale; later keystrokes only update the status.
      if (state.solved && !state.solved.staleAnnounced) {
        state.solved.staleAnnounced = true;
        this.host.notify(ResultNotification, this.resultParams(state, state.solved));
      }
      this.status(state, { state: 'stale', message: 'The scene has errors; the picture shown is the last good one.' });
      return;
    }
    this.status(state, { state: 'queued' });
    const version = state.document.version;
    const electrodes = electrodeLocations(state.analysis);
    const statements = state.analysis.ast.statements;
    const start = () => {
      this.timers.delete(uri);
      // Worked out once the debounce is over, not on every keystroke.
      const geometry = geometrySignature(scene);
      // A drive-only edit of a 3d scene asks for the coarse picture too: the worker sums what the stored
      // per-electrode grids hold and evaluates the rest afresh, one evaluation a level, and skips the
      // coarse level once the grids are complete (warmed while idle). The 2d engines' stored values are
      // warmed while idle too (engine/planar/warm.ts) and a drive edit sums them in milliseconds, so
      // for them the full level alone is asked for.
      const drivesOnly = state.solved?.geometry === geometry && state.solved.level === 'full';
      const levels: SolveLevel[] = drivesOnly && scene.space !== '3d' ? ['full'] : ['coarse', 'full'];
      const seconds = this.settings.maxSolveTime;
      let timedOut = false;
      const deadline = setTimeout(() => {
        timedOut = true;
        this.solver.cancel(uri);
      }, seconds * 1000);
      /** Solve diagnostics of this version: the newest level's, plus the VS5xx remark if any. */
      const finish = (current: DocumentState, remark: Diagnostic) => {
        const levelDiagnostics = current.solved?.version === version ? current.solved.result.diagnostics : [];
        current.solveDiagnostics = { version, diagnostics: [...levelDiagnostics, remark] };
        this.publish(current);
      };
      // The level in the status is the one the worker says it started (it skips the coarse one when it can).
      this.status(state, { state: 'solving' });
      this.solver.solve(
        uri,
        { scene, levels, maxPanels: this.settings.maxPanels, maxGridCells: this.settings.maxGridCells, geometry },
        {
          onLevel: (level) => {
            const current = this.documents.get(uri);
            if (current && current.document.version === version) this.status(current, { state: 'solving', level });
          },
          onResult: (level, result, solveMs) => {
            const current = this.documents.get(uri);
            if (!current || current.document.version !== version) return;
            current.solved = { version, level, result, electrodes, solveMs, geometry };
            current.solveDiagnostics = { version, diagnostics: result.diagnostics };
            this.publish(current);
            this.host.notify(ResultNotification, this.resultParams(current, current.solved));
          },
          onDone: (outcome, message) => {
            clearTimeout(deadline);
            const current = this.documents.get(uri);
            if (!current) return;
            const isCurrent = current.document.version === version;
            if (outcome === 'cancelled' && timedOut && isCurrent) {
              finish(current, timeLimitDiagnostic(statements, seconds, current.solved?.version === version));
              return this.status(current, { state: 'limited', message: `stopped after ${seconds} s` }, version);
            }
            if (outcome === 'failed') {
              this.host.log(`solve failed for ${uri} v${version}: ${message ?? ''}`);
              if (isCurrent) finish(current, failureDiagnostic(statements, message ?? 'unknown error'));
            }
            this.status(current, { state: outcome, ...(message ? { message } : {}) }, version);
            if (outcome === 'done' && isCurrent) this.startSweep(current);
          },
        },
      );
    };
    this.timers.set(uri, setTimeout(start, Math.max(0, this.settings.solveDelay - (Date.now() - since))));
  }

  /**
   * After the full result of an error-free version: run the scene's (first) sweep in the worker on the
   * coarse level, cancelled by any newer edit like a solve, stopped after maxSolveTime. Says 'none' once
   * a document that was swept no longer has a sweep.
   */
  private startSweep(state: DocumentState): void {
    const { uri } = state;
    const version = state.document.version;
    const spec = state.analysis.sweeps[0];
    const base = { uri, version, level: 'coarse' as const, unit: '', space: state.analysis.scene.space, basis: null, values: [], electrodes: [], solveMs: 0 };
    const send = (params: SweepResultParams, target: DocumentState = state) => {
      target.sweep = params;
      this.host.notify(SweepResultNotification, params);
    };
    if (!spec) {
      if (state.sweep && state.sweep.state !== 'none') send({ ...base, state: 'none', name: '' });
      return;
    }
    if (!this.solver.sweep) return;
    send({ ...(state.sweep?.name === spec.name ? state.sweep : base), uri, version, state: 'running', name: spec.name });
    const seconds = this.settings.maxSolveTime;
    let timedOut = false;
    const deadline = setTimeout(() => {
      timedOut = true;
      this.solver.cancel(uri);
    }, seconds * 1000);
    const current = () => {
      const s = this.documents.get(uri);
      return s && s.document.version === version ? s : null;
    };
    this.solver.sweep(
      uri,
      { text: state.document.getText(), name: spec.name, maxPanels: this.settings.maxPanels },
      {
        onSweep: (sweep, solveMs) => {
          const s = current();
          if (s) send({ ...base, ...sweep, state: 'done', solveMs }, s);
        },
        onDone: (outcome, message) => {
          clearTimeout(deadline);
          const s = current();
          if (!s) return;
          if (outcome === 'failed') this.host.log(`sweep failed for ${uri} v${version}: ${message ?? ''}`);
          if (outcome === 'failed' || (outcome === 'cancelled' && timedOut)) {
            const why = outcome === 'failed' ? (message ?? 'unknown error') : `stopped after ${seconds} s (setting voltscape.maxSolveTime)`;
            send({ ...base, state: 'failed', name: spec.name, message: `The live sweep of '${spec.name}' failed: ${why}. Run it with \`voltscape sweep FILE\`.` }, s);
          }
        },
      },
    );
  }
}
