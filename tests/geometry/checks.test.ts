// The geometry checks, VS301–VS311: each code with its expected range, and the near misses that
// must stay silent. Distances are elementary geometry (common practice).
import { describe, expect, it } from 'vitest';
import { DIAGNOSTIC_CODES } from '../../grammar/diagnostics';
import { checkGeometry } from '../../grammar/geometry-checks';
import { analyzeText } from '../../grammar/index';
import type {
  Charge3d,
  Diagnostic,
  Drive,
  Electrode,
  Range,
  Scene,
  Scene3d,
  SceneAxisymmetric,
  ScenePlanar,
  Shape3d,
  ShapeAxisymmetric,
  ShapePlanar,
} from '../../grammar/scene';

/** Statement on its own line; the name spans characters 10–14. */
const lineRange = (line: number): Range => ({ start: { line, character: 0 }, end: { line, character: 40 } });
const nameRange = (line: number): Range => ({ start: { line, character: 10 }, end: { line, character: 14 } });

const V1: Drive = { kind: 'potential', value: 1000 };
const V0: Drive = { kind: 'potential', value: 0 };

function electrodes<S>(list: [S, Drive?][]): Electrode<S>[] {
  return list.map(([shape, drive], i) => ({ name: `e${i}`, shape, drive: drive ?? V1, range: lineRange(i), nameRange: nameRange(i) }));
}

const common = {
  title: null,
  medium: { name: 'air', permittivity: 1.0006, strength: 3e6, density: 1 },
  mesh: { kind: 'preset' as const, preset: 'normal' as const },
  groundPlanes: [],
  slices: [],
  limit: null,
};

function s3(list: [Shape3d, Drive?][], extra: Partial<Scene3d> = {}): Scene3d {
  return { ...common, space: '3d', electrodes: electrodes(list), charges: [], probes: [], ...extra };
}
function sAxi(list: [ShapeAxisymmetric, Drive?][], extra: Partial<SceneAxisymmetric> = {}): SceneAxisymmetric {
  return { ...common, space: 'axisymmetric', electrodes: electrodes(list), charges: [], probes: [], ...extra };
}
function sPlanar(list: [ShapePlanar, Drive?][], extra: Partial<ScenePlanar> = {}): ScenePlanar {
  return { ...common, space: 'planar', electrodes: electrodes(list), charges: [], probes: [], ...extra };
}

const codes = (d: Diagnostic[]) => d.map((x) => x.code).sort();
const only = (scene: Scene, code: string): Diagnostic => {
  const d = checkGeometry(scene);
  expect(codes(d)).toEqual([code]);
  expect(d[0].severity).toBe(DIAGNOSTIC_CODES[code].severity);
  return d[0];
};

const sphere = (center: [number, number, number], radius: number, hollow = false): Shape3d => ({ kind: 'sphere', center, radius, hollow });
const box = (center: [number, number, number], size: [number, number, number], hollow = false): Shape3d => ({ kind: 'box', center, size, hollow });

describe('VS301 degenerate shapes', () => {
  it.each([
    ['a zero radius', sphere([0, 0, 0], 0)],
    ['a negative box side', box([0, 0, 0], [1, -1, 1])],
    ['a cylinder with from = to', { kind: 'cylinder', from: [1, 1, 1], to: [1, 1, 1], radius: 1, hollow: false } as Shape3d],
    ['a zero normal', { kind: 'disc', center: [0, 0, 0], normal: [0, 0, 0], radius: 1 } as Shape3d],
    ['a torus with major ≤ minor', { kind: 'torus', center: [0, 0, 0], axis: [0, 0, 1], major: 1, minor: 1, hollow: false } as Shape3d],
    ['a zero torus axis', { kind: 'torus', center: [0, 0, 0], axis: [0, 0, 0], major: 2, minor: 1, hollow: false } as Shape3d],
    ['a NaN size', { kind: 'plate', center: [0, 0, 0], size: [NaN, 1], normal: 'z' } as Shape3d],
  ])('reports %s on the electrode name', (_, shape) => {
    const d = only(s3([[sphere([10, 0, 0], 1)], [shape]]), 'VS301');
    expect(d.range).toEqual(nameRange(1));
  });

  it('reports degenerate plane-space shapes', () => {
    expect(only(sPlanar([[{ kind: 'polygon', points: [[0, 0], [1, 1], [2, 2]], hollow: false }]]), 'VS301').range).toEqual(nameRange(0));
    expect(only(sPlanar([[{ kind: 'strip', from: [1, 0], to: [1, 0] }]]), 'VS301').range).toEqual(nameRange(0));
    expect(only(sAxi([[{ kind: 'torus', center: [0, 0], major: 0.5, minor: 1, hollow: false }]]), 'VS301').range).toEqual(nameRange(0));
    expect(only(sAxi([[{ kind: 'revolve', points: [[1, 0], [-1, 1]], closed: false, hollow: false }]]), 'VS301').range).toEqual(nameRange(0));
  });
});

describe('VS302 degenerate free charges', () => {
  it.each([
    { kind: 'line', name: 'q', from: [0, 0, 5], to: [0, 0, 5], density: 1e-9, range: lineRange(3) },
    { kind: 'ring', name: 'q', center: [0, 0, 5], axis: [0, 0, 1], radius: 0, density: 1e-9, range: lineRange(3) },
    { kind: 'ring', name: 'q', center: [0, 0, 5], axis: [0, 0, 0], radius: 1, density: 1e-9, range: lineRange(3) },
  ] as Charge3d[])('reports a degenerate $kind charge on its statement', (c) => {
    expect(only(s3([[sphere([0, 0, 0], 1)]], { charges: [c] }), 'VS302').range).toEqual(lineRange(3));
  });
});

describe('VS303 / VS304 electrodes in contact', () => {
  it('reports overlapping spheres with different drives as an error on the later one', () => {
    const d = only(s3([[sphere([0, 0, 0], 1), V1], [sphere([1.5, 0, 0], 1), V0]]), 'VS303');
    expect(d.range).toEqual(nameRange(1));
    expect(d.message).toContain("'e0'");
    expect(d.message).toContain('overlaps');
  });
  it('reports touching spheres with the same drive as a warning', () => {
    const d = only(s3([[sphere([0, 0, 0], 1)], [sphere([2, 0, 0], 1)]]), 'VS304');
    expect(d.message).toContain('touches');
  });
  it('stays silent for a gap of a millionth of the size', () => {
    expect(checkGeometry(s3([[sphere([0, 0, 0], 1), V1], [sphere([2 + 2e-6, 0, 0], 1), V0]]))).toEqual([]);
  });
  it('decides box–box exactly: face contact touches, a sliver of gap does not', () => {
    expect(only(s3([[box([0, 0, 0], [1, 1, 1]), V1], [box([1, 0.3, 0], [1, 1, 1]), V0]]), 'VS303').message).toContain('touches');
    expect(checkGeometry(s3([[box([0, 0, 0], [1, 1, 1]), V1], [box([1 + 1e-6, 0.3, 0], [1, 1, 1]), V0]]))).toEqual([]);
  });
  it('allows a body inside a hollow shell unless it reaches the shell', () => {
    const shell = sphere([0, 0, 0], 2, true);
    expect(checkGeometry(s3([[shell, V0], [sphere([0.5, 0, 0], 1), V1]]))).toEqual([]);
    expect(checkGeometry(s3([[box([0, 0, 0], [4, 4, 4], true), V0], [{ kind: 'cylinder', from: [0, 0, -1], to: [0, 0, 1], radius: 0.5, hollow: false }, V1]]))).toEqual([]);
    expect(only(s3([[shell, V0], [sphere([1, 0, 0], 1), V1]]), 'VS303').range).toEqual(nameRange(1));
    // A cylinder poking through the wall of a hollow box (sampled search).
    expect(only(s3([[box([0, 0, 0], [4, 4, 4], true), V0], [{ kind: 'cylinder', from: [0, 0, 0], to: [0, 0, 3], radius: 0.5, hollow: false }, V1]]), 'VS303').range).toEqual(nameRange(1));
  });
  it('reports a body wholly inside a solid conductor', () => {
    expect(only(s3([[box([0, 0, 0], [4, 4, 4]), V0], [{ kind: 'torus', center: [0, 0, 0], axis: [0, 1, 0], major: 1, minor: 0.2, hollow: false }, V1]]), 'VS303').message).toContain('overlaps');
  });
  it('finds tangent contact between curved bodies by the sampled search', () => {
    // A torus lying flat on a plate: the tube's bottom is at z = −minor.
    const torus: Shape3d = { kind: 'torus', center: [0, 0, 0], axis: [0, 0, 1], major: 1, minor: 0.25, hollow: false };
    const plate = (z: number): Shape3d => ({ kind: 'plate', center: [0.3, 0.1, z], size: [4, 4], normal: 'z' });
    expect(only(s3([[torus, V1], [plate(-0.25), V0]]), 'VS303').range).toEqual(nameRange(1));
    expect(checkGeometry(s3([[torus, V1], [plate(-0.25 - 1e-5), V0]]))).toEqual([]);
    // Two cylinders crossing at right angles, axes 1 apart, radii 0.5 each: touching.
    const c1: Shape3d = { kind: 'cylinder', from: [-2, 0, 0], to: [2, 0, 0], radius: 0.5, hollow: false };
    const c2 = (gap: number): Shape3d => ({ kind: 'cylinder', from: [0, -2, 1 + gap], to: [0, 2, 1 + gap], radius: 0.5, hollow: false });
    expect(only(s3([[c1, V1], [c2(0), V0]]), 'VS303').message).toContain('touches');
    expect(checkGeometry(s3([[c1, V1], [c2(1e-5), V0]]))).toEqual([]);
  });
  it('treats two floating electrodes in contact as the same drive', () => {
    const f: Drive = { kind: 'floating' };
    expect(only(s3([[sphere([0, 0, 0], 1), f], [box([1.5, 0, 0], [1, 1, 1]), f]]), 'VS304').range).toEqual(nameRange(1));
  });
  it('works in the plane spaces', () => {
    expect(only(sPlanar([[{ kind: 'rect', center: [0, 0], size: [2, 2], hollow: false }, V1], [{ kind: 'strip', from: [0.5, 0], to: [3, 0] }, V0]]), 'VS303').range).toEqual(nameRange(1));
    expect(checkGeometry(sPlanar([[{ kind: 'rect', center: [0, 0], size: [2, 2], hollow: false }, V1], [{ kind: 'strip', from: [1.5, 0], to: [3, 0] }, V0]]))).toEqual([]);
    const disc: ShapeAxisymmetric = { kind: 'disc', center: [0, 1], radius: 1 };
    expect(only(sAxi([[disc, V1], [{ kind: 'torus', center: [0, 1.2], major: 1.5, minor: 0.6, hollow: false }, V0]]), 'VS303').range).toEqual(nameRange(1));
    expect(checkGeometry(sAxi([[disc, V1], [{ kind: 'torus', center: [0, 1.2], major: 2, minor: 0.6, hollow: false }, V0]]))).toEqual([]);
  });
});

describe('VS305 free charges in or on conductors', () => {
  const point = (at: [number, number, number]): Charge3d => ({ kind: 'point', name: 'q', at, value: 1e-9, range: lineRange(5) });
  it('reports a point inside, and one on the surface, on the charge statement', () => {
    const inside = only(s3([[sphere([0, 0, 0], 1)]], { charges: [point([0, 0, 0.5])] }), 'VS305');
    expect(inside.range).toEqual(lineRange(5));
    expect(inside.message).toContain('inside');
    expect(only(s3([[box([0, 0, 0], [2, 2, 2])]], { charges: [point([1, 0.5, 0])] }), 'VS305').message).toContain('on the surface');
  });
  it('allows a point inside a hollow shell, but not on it', () => {
    expect(checkGeometry(s3([[sphere([0, 0, 0], 1, true)]], { charges: [point([0, 0, 0.5])] }))).toEqual([]);
    expect(codes(checkGeometry(s3([[sphere([0, 0, 0], 1, true)]], { charges: [point([0, 0, 1])] })))).toEqual(['VS305']);
  });
  it('samples a line segment and a ring', () => {
    const line: Charge3d = { kind: 'line', name: 'beam', from: [-3, 0, 0.9], to: [3, 0, 0.9], density: 1e-9, range: lineRange(5) };
    expect(only(s3([[sphere([0.3, 0, 0], 1)]], { charges: [line] }), 'VS305').range).toEqual(lineRange(5));
    expect(checkGeometry(s3([[sphere([0.3, 0, 0], 1)]], { charges: [{ ...line, from: [-3, 0, 1.01], to: [3, 0, 1.01] }] }))).toEqual([]);
    const ring: Charge3d = { kind: 'ring', name: 'r', center: [0, 0, 0], axis: [0, 0, 1], radius: 2, density: 1e-9, range: lineRange(5) };
    expect(only(s3([[sphere([2, 0, 0.3], 0.5)]], { charges: [ring] }), 'VS305').range).toEqual(lineRange(5));
    expect(checkGeometry(s3([[sphere([0, 0, 0], 1)]], { charges: [ring] }))).toEqual([]);
  });
  it('checks axisymmetric ring charges and planar line charges', () => {
    expect(only(sAxi([[{ kind: 'cylinder', from: [0, 0], to: [0, 1], radius: 1, hollow: false }]], { charges: [{ kind: 'ring', name: 'r', at: [0.5, 0.5], density: 1e-9, range: lineRange(4) }] }), 'VS305').range).toEqual(lineRange(4));
    expect(only(sPlanar([[{ kind: 'circle', center: [0, 0], radius: 1, hollow: false }]], { charges: [{ kind: 'point', name: 'w', at: [0.2, 0], density: 1e-9, range: lineRange(4) }] }), 'VS305').range).toEqual(lineRange(4));
  });
});

describe('ground planes: VS306, VS307, VS311', () => {
  const plane = (axis: 'x' | 'y' | 'z', at: number, line: number) => ({ axis, at, range: lineRange(line) });
  it('reports an electrode crossing or touching the plane on its name', () => {
    const crossing = only(s3([[sphere([0, 0, 0.5], 1)]], { groundPlanes: [plane('z', 0, 4)] }), 'VS306');
    expect(crossing.range).toEqual(nameRange(0));
    expect(crossing.message).toContain('crosses');
    expect(only(s3([[sphere([0, 0, 1], 1)]], { groundPlanes: [plane('z', 0, 4)] }), 'VS306').message).toContain('touches');
    expect(checkGeometry(s3([[sphere([0, 0, 1.001], 1)]], { groundPlanes: [plane('z', 0, 4)] }))).toEqual([]);
    // A slanted disc's extent along z is r·sqrt(1 − n_z²) (exact bounds).
    const disc: Shape3d = { kind: 'disc', center: [0, 0, 0.71], normal: [1, 0, 1], radius: 1 };
    expect(checkGeometry(s3([[disc]], { groundPlanes: [plane('z', 0, 4)] }))).toEqual([]);
    expect(codes(checkGeometry(s3([[{ ...disc, center: [0, 0, 0.7] }]], { groundPlanes: [plane('z', 0, 4)] })))).toEqual(['VS306']);
  });
  it('reports every ground plane after the first', () => {
    const d = only(s3([[sphere([5, 5, 5], 1)]], { groundPlanes: [plane('z', 0, 4), plane('x', 0, 6)] }), 'VS307');
    expect(d.range).toEqual(lineRange(6));
    expect(d.message).toContain('Only one ground plane');
  });
  it('reports a free charge on or across the plane', () => {
    const line: Charge3d = { kind: 'line', name: 'q', from: [0, 0, -1], to: [0, 0, 1], density: 1e-9, range: lineRange(7) };
    expect(only(s3([[sphere([5, 5, 5], 1)]], { groundPlanes: [plane('z', 0, 4)], charges: [line] }), 'VS311').range).toEqual(lineRange(7));
  });
  it('uses x and y lines in planar space', () => {
    expect(only(sPlanar([[{ kind: 'circle', center: [0, 0.5], radius: 1, hollow: false }]], { groundPlanes: [plane('y', 0, 3)] }), 'VS306').range).toEqual(nameRange(0));
  });
});

describe('VS308 slices that miss', () => {
  const slice = (plane: 'xy' | 'xz' | 'yz' | 'rz', at: number, from: [number, number], to: [number, number]) => ({ plane, at, from, to, cells: 100, range: lineRange(8) });
  it('warns for a slice far above everything, on the slice statement', () => {
    expect(only(s3([[sphere([0, 0, 0], 0.01)]], { slices: [slice('xy', 1, [-1, -1], [1, 1])] }), 'VS308').range).toEqual(lineRange(8));
  });
  it('is silent when the plane cuts an electrode, or a charge lies near it', () => {
    expect(checkGeometry(s3([[sphere([0, 0, 0], 0.01)]], { slices: [slice('xz', 0.005, [-1, -1], [1, 1])] }))).toEqual([]);
    expect(checkGeometry(s3([[box([0, 0, 0], [10, 10, 10])]], { slices: [slice('yz', 0, [-1, -1], [1, 1])] }))).toEqual([]);
    const q: Charge3d = { kind: 'point', name: 'q', at: [0, 0, 1.05], value: 1e-9, range: lineRange(5) };
    expect(checkGeometry(s3([[sphere([0, 0, 0], 0.01)]], { charges: [q], slices: [slice('xy', 1, [-1, -1], [1, 1])] }))).toEqual([]);
  });
  it('warns for a window beside everything in the plane spaces', () => {
    expect(only(sPlanar([[{ kind: 'circle', center: [0, 0], radius: 1, hollow: false }]], { slices: [slice('xy', 0, [5, 5], [9, 9])] }), 'VS308').range).toEqual(lineRange(8));
    // The axisymmetric view may show the mirror image at negative r.
    expect(checkGeometry(sAxi([[{ kind: 'sphere', center: [0, 0], radius: 1, hollow: false }]], { slices: [slice('rz', 0, [-3, -1], [-0.5, 1])] }))).toEqual([]);
  });
});

describe('VS309 / VS310 probes', () => {
  const probe = (at: [number, number, number]) => ({ kind: 'point' as const, name: 'p', at, range: lineRange(9) });
  it('warns for a probe beyond the scene box grown by its size', () => {
    const scene = s3([[sphere([0, 0, 0], 1)], [sphere([4, 0, 0], 1)]]); // box 6 × 2 × 2, grown by 6
    expect(only({ ...scene, probes: [probe([0, 0, 7.5])] }, 'VS309').range).toEqual(lineRange(9));
    expect(checkGeometry({ ...scene, probes: [probe([0, 0, 6.5])] })).toEqual([]);
  });
  it('warns for a probe point inside a conductor, naming it, but not on its surface', () => {
    const scene = s3([[sphere([0, 0, 0], 1)], [box([4, 0, 0], [1, 1, 1])]]);
    const d = only({ ...scene, probes: [probe([4.2, 0, 0])] }, 'VS310');
    expect(d.range).toEqual(lineRange(9));
    expect(d.message).toContain("'e1'");
    expect(checkGeometry({ ...scene, probes: [probe([1, 0, 0])] })).toEqual([]);
    expect(checkGeometry({ ...scene, probes: [probe([0, 0, 0])] }).map((x) => x.message)[0]).toContain("'e0'");
  });
  it('warns for a line probe only when all of it is inside', () => {
    const scene = s3([[sphere([0, 0, 0], 1)]]);
    const line = (to: number) => ({ kind: 'line' as const, name: 'l', from: [0, 0, -0.5] as [number, number, number], to: [0, 0, to] as [number, number, number], samples: 20, range: lineRange(9) });
    expect(only({ ...scene, probes: [line(0.5)] }, 'VS310').range).toEqual(lineRange(9));
    expect(checkGeometry({ ...scene, probes: [line(2)] })).toEqual([]);
  });
});

describe('speed', () => {
  it('checks 100 electrodes in a lattice with charges, slices and probes within 150 ms of CPU time', () => {
    const list: [Shape3d, Drive?][] = [];
    for (let i = 0; i < 100; i++) {
      const c: [number, number, number] = [(i % 10) * 1.0, Math.floor(i / 10) * 1.0, 0];
      const kinds: Shape3d[] = [
        sphere(c, 0.45),
        box(c, [0.8, 0.8, 0.8]),
        { kind: 'cylinder', from: [c[0], c[1], -0.4], to: [c[0], c[1], 0.4], radius: 0.45, hollow: false },
        { kind: 'torus', center: c, axis: [0, 0, 1], major: 0.3, minor: 0.15, hollow: false },
        { kind: 'disc', center: c, normal: [1, 1, 0], radius: 0.45 },
      ];
      list.push([kinds[i % 5], i % 2 ? V1 : V0]);
    }
    const scene = s3(list, { slices: [{ plane: 'xy', at: 0, from: [-1, -1], to: [10, 10], cells: 100, range: lineRange(200) }] });
    expect(checkGeometry(scene)).toEqual([]); // warm up
    // CPU time of this process, not wall time: the test machine is shared.
    const c0 = process.cpuUsage();
    const d = checkGeometry(scene);
    const used = process.cpuUsage(c0);
    expect(d).toEqual([]);
    expect((used.user + used.system) / 1000).toBeLessThan(150);
  });
});

describe('ground plane across the axis in axisymmetric space', () => {
  it('reports a sphere that crosses the plane z = 0 (VS306) on its name', () => {
    const text = 'space axisymmetric\nelectrode ball sphere center (0, 5) mm radius 10 mm potential 1 kV\nground plane at z = 0';
    const found = analyzeText(text).diagnostics.filter((d) => d.code === 'VS306');
    expect(found).toHaveLength(1);
    expect(found[0].range).toEqual({ start: { line: 1, character: 10 }, end: { line: 1, character: 14 } });
  });

  it('accepts a sphere clear of the plane', () => {
    const text = 'space axisymmetric\nelectrode ball sphere center (0, 30) mm radius 10 mm potential 1 kV\nground plane at z = 0';
    expect(analyzeText(text).diagnostics.filter((d) => d.severity === 'error')).toEqual([]);
  });
});
