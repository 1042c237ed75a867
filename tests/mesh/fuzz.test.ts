// Property tests: any valid closed shape, in any position and orientation, meshes into a closed,
// consistently oriented surface enclosing positive volume; sheets into their own area.
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import type { Shape3d } from '../../grammar/scene';
import { meshScene } from '../../server/src/engine/mesh/index';
import { enclosedVolume, inconsistentEdges, scene3d, totalArea, unpairedEdges } from './helpers';

const coord = fc.double({ min: -1, max: 1, noNaN: true });
const size = fc.double({ min: 0.05, max: 1, noNaN: true });
const vec = fc.tuple(coord, coord, coord);
const direction = vec.filter((v) => Math.hypot(...v) > 0.1);

const closed: fc.Arbitrary<Shape3d> = fc.oneof(
  fc.record({ kind: fc.constant('sphere' as const), center: vec, radius: size, hollow: fc.boolean() }),
  fc.record({ kind: fc.constant('box' as const), center: vec, size: fc.tuple(size, size, size), hollow: fc.boolean() }),
  fc.tuple(vec, direction, size, fc.boolean()).map(([from, d, radius, hollow]) => ({
    kind: 'cylinder' as const,
    from,
    to: [from[0] + d[0], from[1] + d[1], from[2] + d[2]] as [number, number, number],
    radius,
    hollow,
  })),
  fc.tuple(vec, direction, size, fc.double({ min: 0.1, max: 0.9, noNaN: true }), fc.boolean()).map(([center, axis, major, k, hollow]) => ({
    kind: 'torus' as const,
    center,
    axis,
    major,
    minor: k * major,
    hollow,
  })),
);

describe('meshes of arbitrary shapes', () => {
  it('are closed, consistently oriented and enclose positive volume', () => {
    fc.assert(
      fc.property(closed, fc.double({ min: 0.12, max: 0.3, noNaN: true }), (shape, h) => {
        const m = meshScene(scene3d([shape]), () => h);
        expect(m.area.length).toBeGreaterThan(0);
        expect(unpairedEdges(m)).toBe(0);
        expect(inconsistentEdges(m)).toBe(0);
        expect(enclosedVolume(m)).toBeGreaterThan(0);
        expect(Math.min(...m.area)).toBeGreaterThan(0);
      }),
      { numRuns: 30 },
    );
  });

  it('cover a slanted disc with its area πR² to within 2%', () => {
    fc.assert(
      fc.property(vec, direction, size, (center, normal, radius) => {
        const m = meshScene(scene3d([{ kind: 'disc', center, normal, radius }]), () => radius / 8);
        // The rim polygon of n ≥ 12 chords loses at most 1 − sin(2π/n)·n/(2π) ≈ 4.5% at 12; here n ≥ 51.
        expect(Math.abs(totalArea(m) / (Math.PI * radius * radius) - 1)).toBeLessThan(0.02);
        expect(unpairedEdges(m)).toBeGreaterThan(0); // a sheet has a free rim
      }),
      { numRuns: 40 },
    );
  });
});
