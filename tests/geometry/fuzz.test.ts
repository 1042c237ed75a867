// Property tests: the geometry checks never throw, whatever numbers a scene holds, and report only
// registered codes; contact is symmetric in the order the electrodes are written.
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { DIAGNOSTIC_CODES } from '../../grammar/diagnostics';
import { checkGeometry } from '../../grammar/geometry-checks';
import type { Drive, Range, Scene3d, Shape3d } from '../../grammar/scene';

const R: Range = { start: { line: 0, character: 0 }, end: { line: 0, character: 1 } };
const num = fc.oneof(fc.double({ min: -2, max: 2, noNaN: true }), fc.constantFrom(0, -1, NaN, Infinity, 1e-12, 1e6));
const pos = fc.oneof(fc.double({ min: 0.01, max: 1, noNaN: true }), fc.constantFrom(0, -0.5, NaN));
const vec = fc.tuple(num, num, num);
const shape: fc.Arbitrary<Shape3d> = fc.oneof(
  fc.record({ kind: fc.constant('sphere' as const), center: vec, radius: pos, hollow: fc.boolean() }),
  fc.record({ kind: fc.constant('box' as const), center: vec, size: fc.tuple(pos, pos, pos), hollow: fc.boolean() }),
  fc.record({ kind: fc.constant('cylinder' as const), from: vec, to: vec, radius: pos, hollow: fc.boolean() }),
  fc.record({ kind: fc.constant('disc' as const), center: vec, normal: vec, radius: pos }),
  fc.record({ kind: fc.constant('plate' as const), center: vec, size: fc.tuple(pos, pos), normal: fc.constantFrom('x' as const, 'y' as const, 'z' as const) }),
  fc.record({ kind: fc.constant('torus' as const), center: vec, axis: vec, major: pos, minor: pos, hollow: fc.boolean() }),
);
const drive: fc.Arbitrary<Drive> = fc.oneof(fc.constant({ kind: 'floating' as const }), fc.record({ kind: fc.constant('potential' as const), value: fc.constantFrom(0, 1) }));

function scene(list: [Shape3d, Drive][], extra: Partial<Scene3d> = {}): Scene3d {
  return {
    space: '3d',
    title: null,
    medium: { name: null, permittivity: 1, strength: null, density: 1 },
    mesh: { kind: 'preset', preset: 'normal' },
    groundPlanes: [],
    slices: [],
    limit: null,
    electrodes: list.map(([s, d], i) => ({ name: `e${i}`, shape: s, drive: d, range: R, nameRange: R })),
    charges: [],
    probes: [],
    ...extra,
  };
}

describe('geometry checks on arbitrary scenes', () => {
  it('never throw and report only registered codes', () => {
    fc.assert(
      fc.property(fc.array(fc.tuple(shape, drive), { maxLength: 5 }), vec, (list, p) => {
        const s = scene(list, {
          groundPlanes: [{ axis: 'z', at: p[2], range: R }],
          charges: [{ kind: 'ring', name: 'q', center: p, axis: [0, 0, 1], radius: 0.3, density: 1e-9, range: R }],
          slices: [{ plane: 'xz', at: p[1], from: [-1, -1], to: [1, 1], cells: 10, range: R }],
          probes: [{ kind: 'point', name: 'pr', at: p, range: R }],
        });
        const d = checkGeometry(s);
        for (const x of d) expect(DIAGNOSTIC_CODES[x.code]).toBeDefined();
      }),
      { numRuns: 150 },
    );
  });

  it('find the same contacts whichever electrode is written first', () => {
    const valid = shape.filter((s) => JSON.stringify(s).indexOf('null') < 0 && checkGeometry(scene([[s, { kind: 'floating' }]])).length === 0);
    fc.assert(
      fc.property(valid, valid, (a, b) => {
        const v1: Drive = { kind: 'potential', value: 1 }, v0: Drive = { kind: 'potential', value: 0 };
        const ab = checkGeometry(scene([[a, v1], [b, v0]])).map((x) => x.code);
        const ba = checkGeometry(scene([[b, v0], [a, v1]])).map((x) => x.code);
        expect(ab).toEqual(ba);
      }),
      { numRuns: 80 },
    );
  });
});
