// Shared helpers for the mesh tests: scenes of one shape, and measurements of a mesh.
import type { Electrode, Range, Scene3d, Shape3d } from '../../grammar/scene';
import type { Mesh } from '../../server/src/engine/mesh/types';

export const NO_RANGE: Range = { start: { line: 0, character: 0 }, end: { line: 0, character: 0 } };

export function scene3d(shapes: Shape3d[], mesh: Scene3d['mesh'] = { kind: 'preset', preset: 'normal' }): Scene3d {
  const electrodes: Electrode<Shape3d>[] = shapes.map((shape, i) => ({
    name: `e${i}`,
    shape,
    drive: { kind: 'potential', value: 1 },
    range: NO_RANGE,
    nameRange: NO_RANGE,
  }));
  return {
    space: '3d',
    title: null,
    medium: { name: 'vacuum', permittivity: 1, strength: null, density: 1 },
    mesh,
    groundPlanes: [],
    slices: [],
    limit: null,
    electrodes,
    charges: [],
    probes: [],
  };
}

export function totalArea(m: Mesh): number {
  return m.area.reduce((s, a) => s + a, 0);
}

/** Divergence theorem: V = ∮ (x·n)/3 dA, summed over flat panels (exact for a closed polyhedron). */
export function enclosedVolume(m: Mesh): number {
  let v = 0;
  for (let p = 0; p < m.area.length; p++) {
    const c = m.centroid.subarray(3 * p, 3 * p + 3), n = m.normal.subarray(3 * p, 3 * p + 3);
    v += ((c[0] * n[0] + c[1] * n[1] + c[2] * n[2]) * m.area[p]) / 3;
  }
  return v;
}

/** How many edges are not shared by exactly two triangles (0 for a closed, conforming surface). */
export function unpairedEdges(m: Mesh): number {
  const count = new Map<string, number>();
  for (let p = 0; p < m.area.length; p++) {
    for (let k = 0; k < 3; k++) {
      const a = m.triangles[3 * p + k], b = m.triangles[3 * p + ((k + 1) % 3)];
      const key = a < b ? `${a},${b}` : `${b},${a}`;
      count.set(key, (count.get(key) ?? 0) + 1);
    }
  }
  let bad = 0;
  for (const c of count.values()) if (c !== 2) bad++;
  return bad;
}

/** Directed edges used twice: a surface with consistent orientation has none. */
export function inconsistentEdges(m: Mesh): number {
  const seen = new Set<string>();
  let bad = 0;
  for (let p = 0; p < m.area.length; p++) {
    for (let k = 0; k < 3; k++) {
      const key = `${m.triangles[3 * p + k]},${m.triangles[3 * p + ((k + 1) % 3)]}`;
      if (seen.has(key)) bad++;
      seen.add(key);
    }
  }
  return bad;
}

/** Worst triangle quality 4√3·A/(a² + b² + c²): 1 for equilateral, 0 for degenerate (common practice). */
export function worstQuality(m: Mesh): number {
  let worst = 1;
  const v = m.vertices;
  for (let p = 0; p < m.area.length; p++) {
    const t = [m.triangles[3 * p], m.triangles[3 * p + 1], m.triangles[3 * p + 2]];
    let sum = 0;
    for (let k = 0; k < 3; k++) {
      const a = t[k], b = t[(k + 1) % 3];
      sum += (v[3 * a] - v[3 * b]) ** 2 + (v[3 * a + 1] - v[3 * b + 1]) ** 2 + (v[3 * a + 2] - v[3 * b + 2]) ** 2;
    }
    worst = Math.min(worst, (4 * Math.sqrt(3) * m.area[p]) / sum);
  }
  return worst;
}

export function vertex(m: Mesh, i: number): [number, number, number] {
  return [m.vertices[3 * i], m.vertices[3 * i + 1], m.vertices[3 * i + 2]];
}
