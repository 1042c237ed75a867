// Builders of plain Scene data for the 2d engine tests (no parser involved).
import type { Drive, Range, SceneAxisymmetric, ScenePlanar, ShapeAxisymmetric, ShapePlanar } from '../../grammar/scene';

export const R0: Range = { start: { line: 0, character: 0 }, end: { line: 0, character: 0 } };

const common = {
  title: null,
  medium: { name: null, permittivity: 1, strength: null, density: 1 },
  mesh: { kind: 'preset', preset: 'normal' } as SceneAxisymmetric['mesh'],
  groundPlanes: [],
  slices: [],
  limit: null,
  charges: [],
  probes: [],
};

export const volts = (value: number): Drive => ({ kind: 'potential', value });

export function axiScene(electrodes: [ShapeAxisymmetric, Drive][], extra: Partial<SceneAxisymmetric> = {}): SceneAxisymmetric {
  return {
    ...common,
    space: 'axisymmetric',
    electrodes: electrodes.map(([shape, drive], i) => ({ name: `e${i}`, shape, drive, range: R0, nameRange: R0 })),
    ...extra,
  };
}

export function planarScene(electrodes: [ShapePlanar, Drive][], extra: Partial<ScenePlanar> = {}): ScenePlanar {
  return {
    ...common,
    space: 'planar',
    electrodes: electrodes.map(([shape, drive], i) => ({ name: `e${i}`, shape, drive, range: R0, nameRange: R0 })),
    ...extra,
  };
}

/** Half-ellipse profile from the axis to the axis: semi-axis a along z, b along r, n sides. */
export function spheroidProfile(a: number, b: number, n: number): [number, number][] {
  const points: [number, number][] = [];
  for (let i = 0; i <= n; i++) {
    const t = -Math.PI / 2 + (Math.PI * i) / n;
    points.push([i === 0 || i === n ? 0 : b * Math.cos(t), a * Math.sin(t)]);
  }
  return points;
}
