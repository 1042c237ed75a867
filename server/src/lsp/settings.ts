// The language server's settings: workspace configuration section `voltscape`
// (declared in package.json `contributes.configuration`), read at start and on every change.

export interface Settings {
  /** The largest mesh the live solve may build (panels); beyond it the engine coarsens the mesh and says so. */
  maxPanels: number;
  /** The largest slice grid (cells) the live solve may evaluate; beyond it the engine reduces the grid and says so. */
  maxGridCells: number;
  /** Milliseconds to wait after the last keystroke before solving. */
  solveDelay: number;
  /** Seconds a live solve may take before it is stopped (VS501). */
  maxSolveTime: number;
  /** Show solved figures after each electrode statement. */
  inlayHints: boolean;
}

export const defaultSettings: Settings = {
  maxPanels: 8000,
  maxGridCells: 65536,
  solveDelay: 175,
  maxSolveTime: 30,
  inlayHints: true,
};

/** Safe settings from whatever the client sent: unknown or out-of-range values fall back to the defaults. */
export function readSettings(raw: unknown): Settings {
  const r = (raw && typeof raw === 'object' ? raw : {}) as Record<string, unknown>;
  const int = (v: unknown, min: number, max: number, fallback: number) =>
    typeof v === 'number' && Number.isFinite(v) && v >= min && v <= max ? Math.round(v) : fallback;
  return {
    maxPanels: int(r.maxPanels, 10, 200_000, defaultSettings.maxPanels),
    maxGridCells: int(r.maxGridCells, 16, 4_000_000, defaultSettings.maxGridCells),
    solveDelay: int(r.solveDelay, 0, 5000, defaultSettings.solveDelay),
    maxSolveTime: int(r.maxSolveTime, 1, 3600, defaultSettings.maxSolveTime),
    inlayHints: typeof r.inlayHints === 'boolean' ? r.inlayHints : defaultSettings.inlayHints,
  };
}
