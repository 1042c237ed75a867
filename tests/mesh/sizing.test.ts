// Panel sizes: presets, explicit sizes, levels, grading toward edges, local refinement, guards.
import { describe, expect, it } from 'vitest';
import type { Shape3d } from '../../grammar/scene';
import { BODY_PANEL_LIMIT } from '../../server/src/engine/mesh/grading';
import {
  EDGE_RATIO,
  gradedPoints,
  meshForScene,
  meshLevels,
  meshScene,
  resolvePanelSize,
} from '../../server/src/engine/mesh/index';
import type { Mesh } from '../../server/src/engine/mesh/types';
import { signedDistance3d } from '../../grammar/geometry';
import { enclosedVolume, inconsistentEdges, scene3d, unpairedEdges, worstQuality } from './helpers';

const sphere: Shape3d = { kind: 'sphere', center: [0, 0, 0], radius: 0.1, hollow: false };
const cube: Shape3d = { kind: 'box', center: [0, 0, 0], size: [0.2, 0.2, 0.2], hollow: false };
const count = (shape: Shape3d, preset: 'coarse' | 'normal' | 'fine') =>
  meshForScene(scene3d([shape], { kind: 'preset', preset })).area.length;

describe('presets', () => {
  it('gives a lone sphere 2,000–3,000 panels at normal (flat-panel capacitance error about −4/N < 0.2%, methods.md)', () => {
    const n = count(sphere, 'normal');
    expect(n).toBeGreaterThanOrEqual(2000);
    expect(n).toBeLessThanOrEqual(3000);
    expect(4 / n).toBeLessThan(0.002);
  });

  it('gives about 4× fewer panels at coarse and 4× more at fine', () => {
    for (const shape of [sphere, cube]) {
      const [c, n, f] = (['coarse', 'normal', 'fine'] as const).map((p) => count(shape, p));
      expect(n / c).toBeGreaterThan(2.5);
      expect(n / c).toBeLessThan(5);
      expect(f / n).toBeGreaterThan(3);
      expect(f / n).toBeLessThan(5);
    }
  });

  it('scales with the scene: the same sphere count at any radius', () => {
    const big: Shape3d = { kind: 'sphere', center: [5, 5, 5], radius: 30, hollow: false };
    expect(count(big, 'normal')).toBe(count(sphere, 'normal'));
  });

  it('meshes a small body relative to its own size beside a large one', () => {
    const dome: Shape3d = { kind: 'sphere', center: [0, 0, 0], radius: 1, hollow: false };
    const ball: Shape3d = { kind: 'sphere', center: [2, 0, 0], radius: 0.005, hollow: false };
    const m = meshForScene(scene3d([dome, ball]));
    const small = m.electrode.filter((e) => e === 1).length;
    expect(small).toBe(count(sphere, 'normal'));
  });

  it('takes `mesh size Q` as written', () => {
    const s = scene3d([cube], { kind: 'size', size: 0.01 });
    expect(resolvePanelSize(s)).toBe(0.01);
    const m = meshForScene(s);
    // 0.2 m sides at 10 mm: at least 20 panels along each side, a few more for the grading.
    expect(m.area.length).toBeGreaterThan(6 * 2 * 20 * 20);
    expect(m.area.length).toBeLessThan(6 * 2 * 30 * 30);
  });
});

describe('levels', () => {
  it('builds a coarser level with about 4× fewer panels, coarsest first', () => {
    const [coarse, fine] = meshLevels(scene3d([sphere, { ...cube, center: [0.5, 0, 0] }]), 2);
    // Sizes halve exactly; the count ratio is below 4 where grading adds a fixed few panels per edge.
    const ratio = fine.area.length / coarse.area.length;
    expect(ratio).toBeGreaterThan(2.5);
    expect(ratio).toBeLessThan(5);
    expect(fine.area.length).toBe(meshForScene(scene3d([sphere, { ...cube, center: [0.5, 0, 0] }])).area.length);
  });
});

function meanArea(m: Mesh, pick: (p: number) => boolean): number {
  let s = 0, n = 0;
  for (let p = 0; p < m.area.length; p++) if (pick(p)) (s += m.area[p]), n++;
  return s / n;
}

describe('grading toward edges and rims', () => {
  it('steps grow geometrically from EDGE_RATIO·h at a graded end to h inside', () => {
    const pts = gradedPoints(1, () => 0.1, true, true);
    const steps = pts.slice(1).map((p, i) => p - pts[i]);
    expect(Math.abs(steps[0] - EDGE_RATIO * 0.1)).toBeLessThan(0.003);
    expect(steps[1] / steps[0]).toBeCloseTo(1.5, 1);
    expect(steps[0]).toBeLessThan(steps[1]);
    expect(steps[1]).toBeLessThan(steps[2]);
    expect(Math.max(...steps)).toBeLessThanOrEqual(0.1 + 1e-12);
    expect(steps[steps.length - 1]).toBeCloseTo(steps[0], 10);
  });

  it.each([
    cube,
    { kind: 'cylinder', from: [0, 0, 0], to: [0, 0, 0.2], radius: 0.1, hollow: false },
    { kind: 'disc', center: [0, 0, 0], normal: [0, 0, 1], radius: 0.1 },
    { kind: 'plate', center: [0, 0, 0], size: [0.2, 0.1], normal: 'z' },
  ] as Shape3d[])('panels on the edges of a $kind are smaller than the rest, and marked', (shape) => {
    const m = meshForScene(scene3d([shape]));
    const edge = meanArea(m, (p) => m.onEdge[p] === 1);
    const rest = meanArea(m, (p) => m.onEdge[p] === 0);
    expect(m.onEdge.some((e) => e === 1)).toBe(true);
    expect(edge).toBeLessThan(0.5 * rest);
  });

  it('marks no edges on smooth bodies', () => {
    const m = meshForScene(scene3d([sphere, { kind: 'torus', center: [1, 0, 0], axis: [0, 0, 1], major: 0.2, minor: 0.05, hollow: false }]));
    expect(m.onEdge.every((e) => e === 0)).toBe(true);
  });
});

describe('local target size', () => {
  it('puts smaller panels where sizeAt is smaller, from the same code', () => {
    const plate: Shape3d = { kind: 'plate', center: [0, 0, 0], size: [1, 1], normal: 'z' };
    const m = meshScene(scene3d([plate]), (x) => (x < 0 ? 0.02 : 0.1));
    const left = meanArea(m, (p) => m.centroid[3 * p] < -0.1 && m.onEdge[p] === 0);
    const right = meanArea(m, (p) => m.centroid[3 * p] > 0.1 && m.onEdge[p] === 0);
    expect(left).toBeLessThan(0.3 * right);
  });

  it('keeps a box closed under a size that varies across it', () => {
    const m = meshScene(scene3d([cube]), (x, y, z) => 0.01 + 0.1 * Math.hypot(x - 0.1, y - 0.1, z - 0.1));
    expect(unpairedEdges(m)).toBe(0);
  });
});

describe('robustness', () => {
  it('skips degenerate shapes and keeps each panel on its own electrode', () => {
    const m = meshForScene(
      scene3d([
        sphere,
        { kind: 'sphere', center: [1, 0, 0], radius: 0, hollow: false },
        { kind: 'disc', center: [0, 0, 1], normal: [0, 0, 0], radius: 1 },
        { kind: 'torus', center: [0, 0, 0], axis: [0, 0, 1], major: 0.1, minor: 0.2, hollow: false },
        { ...cube, center: [1, 1, 1] },
      ]),
    );
    expect(new Set(m.electrode)).toEqual(new Set([0, 4]));
  });

  it('coarsens instead of hanging on a runaway size', () => {
    const m = meshScene(scene3d([cube]), () => 1e-7, { maxPanels: 5000 });
    expect(m.area.length).toBeLessThan(2 * 5000);
    expect(unpairedEdges(m)).toBe(0);
  });

  it('keeps a very long fine wire and a slender ring within the per-body panel limit', () => {
    const wire: Shape3d = { kind: 'cylinder', from: [0, 0, 0], to: [0, 0, 1], radius: 1e-6, hollow: false };
    const ring: Shape3d = { kind: 'torus', center: [0, 0, 0], axis: [0, 0, 1], major: 1, minor: 1e-6, hollow: false };
    for (const shape of [wire, ring]) {
      const m = meshForScene(scene3d([shape], { kind: 'preset', preset: 'coarse' }));
      expect(m.area.length).toBeLessThan(1.2 * BODY_PANEL_LIMIT);
      expect(unpairedEdges(m)).toBe(0);
    }
  });

  it('falls back to the normal size for a non-positive or NaN size', () => {
    const m = meshScene(scene3d([sphere]), () => NaN);
    expect(m.area.length).toBe(count(sphere, 'normal'));
  });
});

describe('local refinement of curved bodies (longest-edge bisection)', () => {
  const near = (cx: number, cy: number, cz: number, fine: number, coarse: number) => (x: number, y: number, z: number) =>
    Math.min(coarse, fine + 0.5 * Math.hypot(x - cx, y - cy, z - cz));
  // The hot point lies on each surface (the sphere's and the torus's outer equator).
  it.each([
    { shape: { kind: 'sphere', center: [0, 0, 0], radius: 1, hollow: false }, hot: [1, 0, 0] },
    { shape: { kind: 'torus', center: [0, 0, 0], axis: [0, 0, 1], major: 1, minor: 0.3, hollow: false }, hot: [1.3, 0, 0] },
  ] as { shape: Shape3d; hot: [number, number, number] }[])('refines a $shape.kind only near the small target, keeping it closed, outward and on the surface', ({ shape, hot }) => {
    const graded = meshScene(scene3d([shape]), near(...hot, 0.02, 0.3));
    const uniformCoarse = meshScene(scene3d([shape]), () => 0.3);
    // A uniform mesh at the small target would need about area / (√3/4·h²) panels.
    const area = shape.kind === 'sphere' ? 4 * Math.PI : 4 * Math.PI ** 2 * 0.3;
    const uniformFine = { area: { length: area / ((Math.sqrt(3) / 4) * 0.02 ** 2) } };
    expect(unpairedEdges(graded)).toBe(0);
    expect(inconsistentEdges(graded)).toBe(0);
    expect(enclosedVolume(graded)).toBeGreaterThan(0);
    expect(worstQuality(graded)).toBeGreaterThan(0.2);
    expect(graded.area.length).toBeLessThan(uniformFine.area.length / 3);
    expect(graded.area.length).toBeGreaterThan(uniformCoarse.area.length);
    const dist = (p: number) => Math.hypot(graded.centroid[3 * p] - hot[0], graded.centroid[3 * p + 1] - hot[1], graded.centroid[3 * p + 2] - hot[2]);
    // Target within 0.35 of the hot point: at most 0.02 + 0.5·0.35 ≈ 0.2 (≤ 0.45 of the rest, in area ≤ 0.2).
    const close = meanArea(graded, (p) => dist(p) < 0.35);
    const far = meanArea(graded, (p) => dist(p) > 1.5);
    expect(close).toBeLessThan(far / 5);
    for (let i = 0; i < graded.vertices.length / 3; i++) {
      expect(Math.abs(signedDistance3d(shape, [graded.vertices[3 * i], graded.vertices[3 * i + 1], graded.vertices[3 * i + 2]]))).toBeLessThan(1e-12);
    }
  });
});
