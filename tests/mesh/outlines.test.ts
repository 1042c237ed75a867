// Electrode sections in a slice against elementary geometry (common practice): a plane cuts a
// sphere in a circle of radius √(a² − d²), a torus through its axis in two circles of the tube
// radius, a cylinder across its axis in a circle and along it in a rectangle, a disc in a chord.
import { describe, expect, it } from 'vitest';
import type { Shape3d, Slice } from '../../grammar/scene';
import { groundLines, planeOutlines, sliceOutlines } from '../../server/src/engine/outlines';
import { NO_RANGE, scene3d } from './helpers';

const slice = (plane: Slice['plane'], at: number, cells = 200): Slice => ({ plane, at, from: [-2, -2], to: [2, 2], cells, range: NO_RANGE });

function points(path: number[]): [number, number][] {
  const out: [number, number][] = [];
  for (let k = 0; k < path.length; k += 2) out.push([path[k], path[k + 1]]);
  return out;
}

describe('3d slice outlines', () => {
  it('cuts a sphere in a closed circle of radius √(a² − d²) about its centre', () => {
    const s = scene3d([{ kind: 'sphere', center: [0.2, -0.1, 0.3], radius: 1, hollow: false }]);
    const [o] = sliceOutlines(s, slice('xy', 0.5));
    expect(o.electrode).toBe(0);
    expect(o.closed).toBe(true);
    const r = Math.sqrt(1 - 0.2 ** 2);
    for (const [u, v] of points(o.paths[0])) expect(Math.hypot(u - 0.2, v + 0.1)).toBeCloseTo(r, 12);
    expect(sliceOutlines(s, slice('xy', 1.31))).toEqual([]);
  });

  it('cuts a torus through its axis in two circles of the tube radius', () => {
    const s = scene3d([{ kind: 'torus', center: [0, 0, 0], axis: [0, 0, 1], major: 1, minor: 0.25, hollow: false }]);
    const [o] = sliceOutlines(s, slice('xz', 0));
    expect(o.closed).toBe(true);
    expect(o.paths.length).toBe(2);
    for (const path of o.paths) {
      const pts = points(path);
      const cu = pts.reduce((a, p) => a + p[0], 0) / pts.length;
      expect(Math.abs(Math.abs(cu) - 1)).toBeLessThan(0.01);
      // Traced on a 160-step grid: within 0.1% of the tube radius.
      for (const [u, v] of pts) expect(Math.abs(Math.hypot(u - Math.sign(cu), v) - 0.25)).toBeLessThan(2.5e-4);
    }
  });

  it('cuts a slanted disc in the chord where the planes meet', () => {
    // Disc in the plane x + z = 0 (normal (1, 0, 1)), radius 1; the slice z = 0.3 meets it on the line
    // x = −0.3, at distance 0.3·√2 from the centre: half-chord √(1 − 0.18) along y.
    const s = scene3d([{ kind: 'disc', center: [0, 0, 0], normal: [1, 0, 1], radius: 1 }]);
    const [o] = sliceOutlines(s, slice('xy', 0.3));
    const [[ua, va], [ub, vb]] = points(o.paths[0]);
    expect(ua).toBeCloseTo(-0.3, 12);
    expect(ub).toBeCloseTo(-0.3, 12);
    expect(Math.abs(va - vb) / 2).toBeCloseTo(Math.sqrt(1 - 0.18), 12);
    expect(sliceOutlines(s, slice('xy', 0.75))).toEqual([]);
  });

  it('cuts a cylinder across its axis in a circle and along it in a rectangle', () => {
    const cyl: Shape3d = { kind: 'cylinder', from: [0, 0, -1], to: [0, 0, 1], radius: 0.5, hollow: false };
    const s = scene3d([cyl]);
    const [across] = sliceOutlines(s, slice('xy', 0.3));
    expect(across.paths.length).toBe(1);
    expect(across.paths[0].length / 2).toBeGreaterThan(100);
    for (const [u, v] of points(across.paths[0])) expect(Math.abs(Math.hypot(u, v) - 0.5)).toBeLessThan(5e-4);
    const [along] = sliceOutlines(s, slice('yz', 0));
    expect(along.closed).toBe(true);
    const pts = points(along.paths[0]);
    expect(Math.min(...pts.map((p) => p[0]))).toBeCloseTo(-0.5, 9);
    expect(Math.max(...pts.map((p) => p[0]))).toBeCloseTo(0.5, 9);
    expect(Math.min(...pts.map((p) => p[1]))).toBeCloseTo(-1, 9);
    expect(Math.max(...pts.map((p) => p[1]))).toBeCloseTo(1, 9);
  });

  it('cuts boxes and sheets exactly', () => {
    const s = scene3d([
      { kind: 'box', center: [0, 0, 0], size: [1, 2, 3], hollow: false },
      { kind: 'plate', center: [0, 1.5, 0], size: [1, 1], normal: 'y' },
      { kind: 'disc', center: [1.5, 0, 0], normal: [1, 0, 0], radius: 0.4 },
      { kind: 'plate', center: [0, 0, 0.2], size: [0.5, 0.5], normal: 'z' },
    ]);
    const out = sliceOutlines(s, slice('xz', 0));
    const byElectrode = new Map(out.map((o) => [o.electrode, o]));
    expect(byElectrode.get(0)!.paths).toEqual([[-0.5, -1.5, 0.5, -1.5, 0.5, 1.5, -0.5, 1.5]]);
    expect(byElectrode.has(1)).toBe(false); // the plate at y = 1.5 lies parallel to the slice, off it
    const disc = byElectrode.get(2)!;
    expect(disc.closed).toBe(false);
    const dp = points(disc.paths[0]);
    expect(dp.length).toBe(2);
    expect(Math.min(...dp.map((p) => p[1]))).toBeCloseTo(-0.4, 12);
    expect(Math.max(...dp.map((p) => p[1]))).toBeCloseTo(0.4, 12);
    expect(dp.every((p) => Math.abs(p[0] - 1.5) < 1e-12)).toBe(true);
    expect(byElectrode.get(3)!.paths).toEqual([[-0.25, 0.2, 0.25, 0.2]]);
    // A plate lying in the slice plane shows its rim.
    const inPlane = sliceOutlines(s, slice('xy', 0.2)).find((o) => o.electrode === 3)!;
    expect(inPlane.paths).toEqual([[-0.25, -0.25, 0.25, -0.25, 0.25, 0.25, -0.25, 0.25]]);
  });

  it('traces ground planes across the window, and skips planes parallel to the slice', () => {
    const s = { ...scene3d([]), groundPlanes: [{ axis: 'z' as const, at: -1, range: NO_RANGE }] };
    expect(groundLines(s, slice('xz', 0))).toEqual([[-2, -1, 2, -1]]);
    expect(groundLines(s, slice('xy', 0))).toEqual([]);
    expect(groundLines({ ...s, groundPlanes: [{ axis: 'z', at: -3, range: NO_RANGE }] }, slice('xz', 0))).toEqual([]);
  });
});

describe('plane-space outlines', () => {
  it('draws an axisymmetric torus as its two meridian circles and a disc across the axis', () => {
    const scene = {
      ...scene3d([]),
      space: 'axisymmetric' as const,
      electrodes: [
        { name: 't', shape: { kind: 'torus' as const, center: [0, 1] as [number, number], major: 2, minor: 0.5, hollow: false }, drive: { kind: 'floating' as const }, range: NO_RANGE, nameRange: NO_RANGE },
        { name: 'd', shape: { kind: 'disc' as const, center: [0, -1] as [number, number], radius: 1 }, drive: { kind: 'floating' as const }, range: NO_RANGE, nameRange: NO_RANGE },
      ],
      charges: [],
      probes: [],
    };
    const [torus, disc] = planeOutlines(scene);
    expect(torus.paths.length).toBe(2);
    for (const [u, v] of points(torus.paths[0])) expect(Math.hypot(u - 2, v - 1)).toBeCloseTo(0.5, 12);
    expect(disc.paths).toEqual([[-1, -1, 1, -1]]);
  });
});
