// Per-shape meshes held against textbook closed forms for area and volume (sphere 4πa², 4πa³/3;
// torus 4π²Rr, 2π²Rr² by Pappus's centroid theorems; cylinder 2πr(r + h), πr²h; box, disc πR², plate AB),
// plus closedness, orientation, vertices on the true surface and triangle quality.
import { describe, expect, it } from 'vitest';
import { signedDistance3d } from '../../grammar/geometry';
import type { Shape3d } from '../../grammar/scene';
import { boxMesh, meshForScene, sphereMesh } from '../../server/src/engine/mesh/index';
import {
  enclosedVolume,
  inconsistentEdges,
  scene3d,
  totalArea,
  unpairedEdges,
  vertex,
  worstQuality,
} from './helpers';

const cylLength = Math.hypot(0.3, 0.4, 2);
interface Case {
  shape: Shape3d;
  area: number;
  volume: number | null; // null for open sheets
}
const CASES: Case[] = [
  { shape: { kind: 'sphere', center: [1, 2, 3], radius: 1.5, hollow: false }, area: 4 * Math.PI * 1.5 ** 2, volume: (4 / 3) * Math.PI * 1.5 ** 3 },
  { shape: { kind: 'box', center: [0.1, 0, -0.2], size: [1, 2, 0.5], hollow: false }, area: 2 * (2 + 1 + 0.5), volume: 1 },
  {
    shape: { kind: 'cylinder', from: [0, 0, 0], to: [0.3, 0.4, 2], radius: 0.5, hollow: false },
    area: 2 * Math.PI * 0.5 * (0.5 + cylLength),
    volume: Math.PI * 0.25 * cylLength,
  },
  { shape: { kind: 'torus', center: [0, 1, 0], axis: [1, 1, 0], major: 1, minor: 0.3, hollow: false }, area: 4 * Math.PI ** 2 * 0.3, volume: 2 * Math.PI ** 2 * 0.09 },
  { shape: { kind: 'disc', center: [0, 0, 1], normal: [0, 1, 1], radius: 0.8 }, area: Math.PI * 0.64, volume: null },
  { shape: { kind: 'plate', center: [0, 0, 0], size: [1, 2], normal: 'y' }, area: 2, volume: null },
];

describe.each(CASES)('$shape.kind mesh', ({ shape, area, volume }) => {
  const normal = meshForScene(scene3d([shape], { kind: 'preset', preset: 'normal' }));
  const fine = meshForScene(scene3d([shape], { kind: 'preset', preset: 'fine' }));

  it('has an area within 1% of the closed form at normal and 0.3% at fine, converging', () => {
    const eNormal = Math.abs(totalArea(normal) - area) / area;
    const eFine = Math.abs(totalArea(fine) - area) / area;
    expect(eNormal).toBeLessThan(0.01);
    expect(eFine).toBeLessThan(0.003);
    // Flat panels on a curved surface: the area error falls about 4× when the size halves.
    if (shape.kind !== 'box' && shape.kind !== 'plate') expect(eFine).toBeLessThan(eNormal / 3);
  });

  it('puts every vertex on the true surface', () => {
    const scale = Math.sqrt(area);
    for (let i = 0; i < normal.vertices.length / 3; i++) {
      expect(Math.abs(signedDistance3d(shape, vertex(normal, i)))).toBeLessThan(1e-12 * scale);
    }
  });

  it('is consistently oriented and has no sliver triangles', () => {
    expect(inconsistentEdges(normal)).toBe(0);
    expect(worstQuality(normal)).toBeGreaterThan(0.3);
    expect(Math.min(...normal.area)).toBeGreaterThan(0);
  });

  if (volume !== null) {
    it('is closed (every edge in exactly two panels) with outward normals (divergence-theorem volume within 1% at fine)', () => {
      expect(unpairedEdges(normal)).toBe(0);
      expect(unpairedEdges(fine)).toBe(0);
      // An inscribed polyhedron loses volume as 1 − cos of the half-angle a panel turns through;
      // a torus's tube has only 12–14 segments at normal, so its volume is about 3% short there.
      expect(Math.abs(enclosedVolume(normal) - volume) / volume).toBeLessThan(0.04);
      expect(Math.abs(enclosedVolume(fine) - volume) / volume).toBeLessThan(0.01);
      expect(normal.thin.every((t) => t === 0)).toBe(true);
    });
  } else {
    it('is a thin sheet whose panels all face the given normal', () => {
      const n = shape.kind === 'disc' ? shape.normal.map((x) => x / Math.hypot(...shape.normal)) : [0, 1, 0];
      expect(normal.thin.every((t) => t === 1)).toBe(true);
      for (let p = 0; p < normal.area.length; p++) {
        const d = normal.normal[3 * p] * n[0] + normal.normal[3 * p + 1] * n[1] + normal.normal[3 * p + 2] * n[2];
        expect(d).toBeCloseTo(1, 12);
      }
    });
  }
});

describe('sphere by subdivision count', () => {
  it.each([1, 2, 5, 8])('n = %i gives 20n² panels and 10n² + 2 vertices, closed and outward', (n) => {
    const m = sphereMesh([0, 0, 0], 2, n);
    expect(m.area.length).toBe(20 * n * n);
    expect(m.vertices.length / 3).toBe(10 * n * n + 2);
    expect(unpairedEdges(m)).toBe(0);
    expect(enclosedVolume(m)).toBeGreaterThan(0);
    expect(m.onEdge.every((e) => e === 0)).toBe(true);
  });

  it('marks a hollow sphere thin with the same surface', () => {
    const solid = sphereMesh([0, 0, 0], 1, 4);
    const hollow = sphereMesh([0, 0, 0], 1, 4, true);
    expect(Array.from(hollow.vertices)).toEqual(Array.from(solid.vertices));
    expect(hollow.thin.every((t) => t === 1)).toBe(true);
  });
});

describe('hollow variants', () => {
  it.each([
    { kind: 'box', center: [0, 0, 0], size: [1, 1, 1], hollow: true },
    { kind: 'cylinder', from: [0, 0, 0], to: [0, 0, 1], radius: 0.3, hollow: true },
    { kind: 'torus', center: [0, 0, 0], axis: [0, 0, 1], major: 1, minor: 0.2, hollow: true },
  ] as Shape3d[])('a hollow $kind is the closed surface, outward, marked thin', (shape) => {
    const m = meshForScene(scene3d([shape]));
    expect(unpairedEdges(m)).toBe(0);
    expect(enclosedVolume(m)).toBeGreaterThan(0);
    expect(m.thin.every((t) => t === 1)).toBe(true);
  });
});

describe('box mesh at a given size', () => {
  it('is exact in area and volume (flat faces), closed and outward', () => {
    const m = boxMesh([0, 0, 0], [1, 2, 3], 0.2);
    expect(totalArea(m)).toBeCloseTo(22, 10);
    expect(enclosedVolume(m)).toBeCloseTo(6, 10);
    expect(unpairedEdges(m)).toBe(0);
  });
});
