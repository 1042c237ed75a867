// Shape geometry: signed distances at points with known answers (elementary geometry, common
// practice), cross-checked against dense meshes of the same shapes, bounding boxes, interiors.
import { describe, expect, it } from 'vitest';
import {
  bounds3d,
  boundsAxisymmetric,
  characteristicLength,
  insideElectrode,
  sceneBounds,
  signedDistance3d,
  signedDistanceAxisymmetric,
  signedDistancePlanar,
} from '../../grammar/geometry';
import type { Scene, Shape3d, Vec3 } from '../../grammar/scene';
import { meshScene } from '../../server/src/engine/mesh/index';
import { NO_RANGE, scene3d } from '../mesh/helpers';

describe('signed distances in 3d at points with known answers', () => {
  it('sphere: |p − c| − a', () => {
    const s: Shape3d = { kind: 'sphere', center: [1, 0, 0], radius: 2, hollow: false };
    expect(signedDistance3d(s, [1, 0, 0])).toBeCloseTo(-2, 14);
    expect(signedDistance3d(s, [1, 0, 5])).toBeCloseTo(3, 14);
  });
  it('box: face, edge and corner regions', () => {
    const s: Shape3d = { kind: 'box', center: [0, 0, 0], size: [2, 4, 6], hollow: false };
    expect(signedDistance3d(s, [0, 0, 0])).toBeCloseTo(-1, 14); // nearest face x = ±1
    expect(signedDistance3d(s, [3, 0, 0])).toBeCloseTo(2, 14);
    expect(signedDistance3d(s, [2, 3, 0])).toBeCloseTo(Math.SQRT2, 14); // past the edge x = 1, y = 2
    expect(signedDistance3d(s, [2, 3, 4])).toBeCloseTo(Math.sqrt(3), 14); // past the corner
  });
  it('cylinder along a slanted axis: side, cap and rim', () => {
    const w: Vec3 = [0, 0.6, 0.8];
    const s: Shape3d = { kind: 'cylinder', from: [0, 0, 0], to: [0, 3, 4], radius: 1, hollow: false };
    const along = (t: number, r: number): Vec3 => [r, t * w[1], t * w[2]]; // x is perpendicular to the axis
    expect(signedDistance3d(s, along(2.5, 3))).toBeCloseTo(2, 12);
    expect(signedDistance3d(s, along(7, 0))).toBeCloseTo(2, 12);
    expect(signedDistance3d(s, along(-3, 4))).toBeCloseTo(Math.hypot(3, 3), 12); // past the rim: (4 − 1, 3)
    expect(signedDistance3d(s, along(2.5, 0.5))).toBeCloseTo(-0.5, 12);
  });
  it('disc and plate are unsigned sheets', () => {
    const d: Shape3d = { kind: 'disc', center: [0, 0, 0], normal: [0, 0, 2], radius: 1 };
    expect(signedDistance3d(d, [0.5, 0, -0.25])).toBeCloseTo(0.25, 14);
    expect(signedDistance3d(d, [4, 0, 4])).toBeCloseTo(5, 14);
    const p: Shape3d = { kind: 'plate', center: [0, 0, 1], size: [2, 4], normal: 'y' }; // 2 along x, 4 along z
    expect(signedDistance3d(p, [0, -3, 1])).toBeCloseTo(3, 14);
    expect(signedDistance3d(p, [4, 0, 1])).toBeCloseTo(3, 14);
    expect(signedDistance3d(p, [0, 0, 4])).toBeCloseTo(1, 14);
  });
  it('torus: distance to the tube', () => {
    const t: Shape3d = { kind: 'torus', center: [0, 0, 0], axis: [0, 0, 1], major: 3, minor: 1, hollow: false };
    expect(signedDistance3d(t, [3, 0, 0])).toBeCloseTo(-1, 14);
    expect(signedDistance3d(t, [0, 0, 0])).toBeCloseTo(2, 14);
    expect(signedDistance3d(t, [0, 0, 4])).toBeCloseTo(4, 14);
  });
});

describe('signed distances agree with dense meshes of the same shapes', () => {
  const shapes: Shape3d[] = [
    { kind: 'sphere', center: [0.1, 0, 0], radius: 0.5, hollow: false },
    { kind: 'box', center: [0, 0.1, 0], size: [0.4, 0.6, 0.8], hollow: false },
    { kind: 'cylinder', from: [0, 0, -0.3], to: [0.2, 0.1, 0.4], radius: 0.25, hollow: false },
    { kind: 'torus', center: [0, 0, 0], axis: [1, 1, 1], major: 0.5, minor: 0.15, hollow: false },
    { kind: 'disc', center: [0, 0, 0], normal: [1, 0, 1], radius: 0.5 },
    { kind: 'plate', center: [0, 0, 0], size: [0.6, 0.4], normal: 'x' },
  ];
  it.each(shapes)('$kind: |d| is the distance to the nearest surface point, within the mesh spacing', (shape) => {
    const h = 0.02;
    const m = meshScene(scene3d([shape]), () => h);
    const n = m.vertices.length / 3;
    let seed = 7;
    const rand = () => ((seed = (seed * 16807) % 2147483647) / 2147483647) * 2 - 1;
    for (let k = 0; k < 25; k++) {
      const p: Vec3 = [rand(), rand(), rand()];
      let near = Infinity;
      for (let i = 0; i < n; i++) {
        near = Math.min(near, Math.hypot(p[0] - m.vertices[3 * i], p[1] - m.vertices[3 * i + 1], p[2] - m.vertices[3 * i + 2]));
      }
      const d = Math.abs(signedDistance3d(shape, p));
      expect(d).toBeLessThanOrEqual(near + 1e-12); // a vertex is a surface point
      expect(near - d).toBeLessThan(h); // and some vertex is within a panel of the nearest point
    }
  });
  it.each(shapes)('$kind: the bounding box holds every vertex and is tight', (shape) => {
    const m = meshScene(scene3d([shape]), () => 0.02);
    const b = bounds3d(shape);
    for (let k = 0; k < 3; k++) {
      let lo = Infinity, hi = -Infinity;
      for (let i = k; i < m.vertices.length; i += 3) (lo = Math.min(lo, m.vertices[i])), (hi = Math.max(hi, m.vertices[i]));
      expect(lo).toBeGreaterThanOrEqual(b.min[k] - 1e-12);
      expect(hi).toBeLessThanOrEqual(b.max[k] + 1e-12);
      expect(lo - b.min[k]).toBeLessThan(0.01);
      expect(b.max[k] - hi).toBeLessThan(0.01);
    }
  });
});

describe('plane spaces', () => {
  it('axisymmetric profiles, with r taken as |r|', () => {
    expect(signedDistanceAxisymmetric({ kind: 'sphere', center: [0, 1], radius: 1, hollow: false }, [-2, 1])).toBeCloseTo(1, 14);
    expect(signedDistanceAxisymmetric({ kind: 'disc', center: [0, 0], radius: 1 }, [0.5, 0.2])).toBeCloseTo(0.2, 14);
    expect(signedDistanceAxisymmetric({ kind: 'torus', center: [0, 0], major: 2, minor: 0.5, hollow: false }, [2, 0])).toBeCloseTo(-0.5, 14);
    expect(signedDistanceAxisymmetric({ kind: 'cylinder', from: [0, 0], to: [0, 2], radius: 1, hollow: false }, [0, 1])).toBeCloseTo(-1, 14);
    const ring = { kind: 'revolve' as const, points: [[1, 0], [2, 0], [2, 1], [1, 1]] as [number, number][], closed: true, hollow: false };
    expect(signedDistanceAxisymmetric(ring, [1.5, 0.5])).toBeCloseTo(-0.5, 14);
    expect(signedDistanceAxisymmetric(ring, [0, 0.5])).toBeCloseTo(1, 14);
    expect(boundsAxisymmetric(ring)).toEqual({ min: [1, 0], max: [2, 1] });
  });
  it('planar outlines', () => {
    expect(signedDistancePlanar({ kind: 'circle', center: [0, 0], radius: 1, hollow: false }, [3, 4])).toBeCloseTo(4, 14);
    expect(signedDistancePlanar({ kind: 'rect', center: [0, 0], size: [2, 2], hollow: false }, [2, 2])).toBeCloseTo(Math.SQRT2, 14);
    const tri = { kind: 'polygon' as const, points: [[0, 0], [4, 0], [0, 3]] as [number, number][], hollow: false };
    expect(signedDistancePlanar(tri, [1, 1])).toBeCloseTo(-1, 14);
    expect(signedDistancePlanar(tri, [4, 3])).toBeCloseTo(12 / 5, 14); // to the hypotenuse 3x + 4y = 12
    expect(signedDistancePlanar({ kind: 'strip', from: [0, 0], to: [1, 0] }, [2, 0])).toBeCloseTo(1, 14);
  });
});

describe('scene questions', () => {
  const scene = scene3d([
    { kind: 'sphere', center: [0, 0, 0], radius: 1, hollow: false },
    { kind: 'box', center: [5, 0, 0], size: [2, 2, 2], hollow: true },
    { kind: 'plate', center: [0, 5, 0], size: [2, 2], normal: 'z' },
  ]);
  it('finds the electrode whose interior holds a point; hollow shells and sheets have none', () => {
    expect(insideElectrode(scene, [0.5, 0, 0])).toBe(0);
    expect(insideElectrode(scene, [5, 0, 0])).toBe(-1);
    expect(insideElectrode(scene, [0, 5, 0])).toBe(-1);
    expect(insideElectrode(scene, [2, 0, 0])).toBe(-1);
  });
  it('agrees with the signed distances at random points (the prepared per-scene form)', () => {
    const mixed = scene3d([
      { kind: 'cylinder', from: [0, 0, 0], to: [1, 1, 0], radius: 0.3, hollow: false },
      { kind: 'torus', center: [0, 0, 0], axis: [1, 0, 0], major: 0.6, minor: 0.2, hollow: false },
      { kind: 'sphere', center: [0, 0, 0], radius: 0.5, hollow: true },
      { kind: 'disc', center: [0, 0, 0.5], normal: [0, 0, 1], radius: 1 },
    ]);
    let seed = 11;
    const rand = () => ((seed = (seed * 16807) % 2147483647) / 2147483647) * 3 - 1.5;
    for (let k = 0; k < 500; k++) {
      const p: Vec3 = [rand(), rand(), rand()];
      const expected = [0, 1].find((i) => signedDistance3d(mixed.electrodes[i].shape, p) <= 0) ?? -1;
      expect(insideElectrode(mixed, p)).toBe(expected);
    }
  });

  it('bounds the scene and takes half its largest side as its length', () => {
    expect(sceneBounds(scene)).toEqual({ min: [-1, -1, -1], max: [6, 6, 1] });
    expect(characteristicLength(scene)).toBeCloseTo(3.5, 14);
  });
  it('falls back to 1 m for an empty scene and works in the plane spaces', () => {
    expect(characteristicLength(scene3d([]))).toBe(1);
    const planar: Scene = {
      ...scene3d([]),
      space: 'planar',
      electrodes: [{ name: 'c', shape: { kind: 'circle', center: [0, 0], radius: 2, hollow: false }, drive: { kind: 'floating' }, range: NO_RANGE, nameRange: NO_RANGE }],
      charges: [],
      probes: [],
    };
    expect(characteristicLength(planar)).toBe(2);
    expect(insideElectrode(planar, [1, 1])).toBe(0);
  });
});
