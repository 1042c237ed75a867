// Helpers that build 3d scenes as plain data for the engine tests (no parser involved).
import type { Charge3d, Drive, Electrode, GroundPlane, MeshSetting, Range, Scene3d, Shape3d } from '../../grammar/scene';

export const R0: Range = { start: { line: 0, character: 0 }, end: { line: 0, character: 0 } };

export function electrode(name: string, shape: Shape3d, drive: Drive = { kind: 'potential', value: 1 }): Electrode<Shape3d> {
  return { name, shape, drive, range: R0, nameRange: R0 };
}

export function scene3d(parts: {
  electrodes?: Electrode<Shape3d>[];
  charges?: Charge3d[];
  ground?: GroundPlane['axis'] extends never ? never : { axis: 'x' | 'y' | 'z'; at: number }[];
  mesh?: MeshSetting;
  permittivity?: number;
  strength?: number | null;
  limit?: number;
}): Scene3d {
  return {
    space: '3d',
    title: null,
    medium: { name: null, permittivity: parts.permittivity ?? 1, strength: parts.strength ?? null, density: 1 },
    mesh: parts.mesh ?? { kind: 'preset', preset: 'normal' },
    groundPlanes: (parts.ground ?? []).map((g) => ({ ...g, range: R0 })),
    slices: [],
    limit: parts.limit !== undefined ? { field: parts.limit, range: R0 } : null,
    electrodes: parts.electrodes ?? [],
    charges: parts.charges ?? [],
    probes: [],
  };
}

export function sphere(center: [number, number, number], radius: number, hollow = false): Shape3d {
  return { kind: 'sphere', center, radius, hollow };
}
