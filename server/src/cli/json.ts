// `voltscape solve --json`: one JSON object, format "voltscape-result/1" (docs/json-format.md).
// SI units throughout (per metre in `planar`). Slice grids are omitted unless asked for with
// `--grids`; then each typed array is encoded explicitly (result-json.ts), never as an index object.
// Non-finite numbers (NaN, ±Infinity) are written as null, as JSON has no other way to say them.
import type { Diagnostic, Scene } from '../../../grammar/scene';
import type { Result } from '../engine/result';
import { encodeArray } from '../engine/result-json';
import { sortDiagnostics } from './diagnostics';

export const JSON_FORMAT = 'voltscape-result/1';

export interface JsonInput {
  file: string;
  scene: Scene;
  result: Result;
  /** Analysis diagnostics; the result's own are appended. */
  diagnostics: readonly Diagnostic[];
  /** Include slice grids (encoded arrays). */
  grids: boolean;
}

/** The object printed by `solve --json` for a solved scene. */
export function resultJson({ file, scene, result, diagnostics, grids }: JsonInput): Record<string, unknown> {
  const drives = new Map(scene.electrodes.map((e) => [e.name, e.drive]));
  const peak = result.electrodes.reduce((m, e) => (Number.isFinite(e.maxField) ? Math.max(m, e.maxField) : m), 0);
  return {
    format: JSON_FORMAT,
    ok: true,
    file,
    title: scene.title,
    space: result.space,
    medium: { name: scene.medium.name, permittivity: scene.medium.permittivity, strength: scene.medium.strength },
    electrodes: result.electrodes.map((e) => ({
      name: e.name,
      drive: drives.get(e.name) ?? null,
      potential: e.potential,
      charge: e.charge,
      maxField: e.maxField,
      maxFieldAt: e.maxFieldAt,
      maxFieldOnEdge: e.maxFieldOnEdge,
      maxFieldConvergence: e.maxFieldConvergence,
      capacitance: e.capacitance,
      capacitanceConvergence: e.capacitanceConvergence,
      breakdown: e.breakdown ?? null,
    })),
    capacitance: { names: result.capacitance.names, matrix: result.capacitance.matrix, asymmetry: result.capacitance.asymmetry },
    energy: result.energy,
    probes: result.probes.map((p) => ({
      name: p.name,
      points: p.points.map((q) => ({ at: q.at, potential: q.potential, field: q.field, fieldMagnitude: q.fieldMagnitude })),
    })),
    limit: scene.limit ? { field: scene.limit.field, peak, broken: peak > scene.limit.field } : null,
    gaps: result.gaps ?? [],
    slices: result.slices.map((s) => {
      const out: Record<string, unknown> = {
        plane: s.plane,
        at: s.at,
        nu: s.nu,
        nv: s.nv,
        u0: s.u0,
        v0: s.v0,
        du: s.du,
        dv: s.dv,
        outlines: s.outlines,
        groundLines: s.groundLines,
      };
      if (grids) {
        out.potential = encodeArray(s.potential);
        out.fieldU = encodeArray(s.fieldU);
        out.fieldV = encodeArray(s.fieldV);
        out.fieldMagnitude = encodeArray(s.fieldMagnitude);
        out.inside = encodeArray(s.inside);
      }
      return out;
    }),
    diagnostics: sortDiagnostics([...diagnostics, ...result.diagnostics]),
    stats: result.stats,
  };
}

/** The object printed by `solve --json` when there is no result: the reason and the diagnostics. */
export function failureJson(file: string, message: string, diagnostics: readonly Diagnostic[]): Record<string, unknown> {
  return { format: JSON_FORMAT, ok: false, file, error: message, diagnostics: sortDiagnostics(diagnostics) };
}

/** JSON text, two-space indented, non-finite numbers as null (JSON.stringify's own rule, stated here). */
export function stringify(value: unknown): string {
  return JSON.stringify(value, null, 2) + '\n';
}
