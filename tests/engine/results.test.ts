// Slices, limits, cancellation and the post-solve diagnostics of the 3d path.
import { describe, expect, it } from 'vitest';
import { EPSILON_0 } from '../../grammar/scene';
import { solveScene } from '../../server/src/engine/index';
import { COARSE_MAX_PANELS, createCache3d, solve3d, type Solve3dOptions } from '../../server/src/engine/solve';
import { sliceGrid, TREECODE_ABOVE } from '../../server/src/engine/evaluate';
import { electrode, R0, scene3d, sphere } from './scenes';

const small = { kind: 'size', size: 0.1 } as const;
const CAUTION = 'Design aid only; follow applicable standards, local codes and licensed practice.';

describe('slices', () => {
  it('fills conductor interiors with their potential and matches kQ/r outside a sphere (closed form)', () => {
    const a = 0.3, U = 1000;
    const s = scene3d({ mesh: small, electrodes: [electrode('s', sphere([0, 0, 0], a), { kind: 'potential', value: U })] });
    s.slices = [{ plane: 'xz', at: 0, from: [-1, -0.5], to: [1, 0.5], cells: 40, range: R0 }];
    const r = solveScene(s, { convergence: false })!;
    const g = r.slices[0];
    expect([g.nu, g.nv]).toEqual([40, 20]);
    expect(g.potential.length).toBe(800);
    const Q = r.electrodes[0].charge;
    const k = 1 / (4 * Math.PI * EPSILON_0);
    let inside = 0;
    for (let j = 0; j < g.nv; j++) {
      for (let i = 0; i < g.nu; i++) {
        const idx = j * g.nu + i;
        const u = g.u0 + (i + 0.5) * g.du, v = g.v0 + (j + 0.5) * g.dv;
        const rr = Math.hypot(u, v);
        if (rr < a) {
          inside++;
          expect(g.inside[idx]).toBe(0);
          expect(g.potential[idx]).toBe(U);
          expect(Number.isNaN(g.fieldMagnitude[idx])).toBe(true);
        } else if (rr > 1.3 * a) {
          expect(g.inside[idx]).toBe(-1);
          expect(Math.abs(g.potential[idx] / ((k * Q) / rr) - 1)).toBeLessThan(2e-3);
          expect(Math.abs(g.fieldMagnitude[idx] / ((k * Q) / (rr * rr)) - 1)).toBeLessThan(5e-3);
        }
      }
    }
    expect(inside).toBeGreaterThan(0);
  });

  it('a large grid (treecode for the panels) agrees with precise probes at the same points, ground plane and free charge included', () => {
    const s = scene3d({
      mesh: small,
      electrodes: [electrode('s', sphere([0, 0, 0], 0.3), { kind: 'potential', value: 1000 })],
      ground: [{ axis: 'z', at: -0.5 }],
      charges: [{ kind: 'line', name: 'beam', from: [-1, 0.05, 0.5], to: [1, 0.05, 0.5], density: 1e-9, range: R0 }],
    });
    s.slices = [{ plane: 'xz', at: 0, from: [-1, -0.5], to: [1, 0.5], cells: 200, range: R0 }];
    const r0 = solveScene(s, { convergence: false })!;
    const g = r0.slices[0];
    expect(g.nu * g.nv * r0.stats.panels).toBeGreaterThan(TREECODE_ABOVE);
    expect(g.outlines.length).toBe(1);
    expect(g.groundLines).toEqual([[-1, -0.5, 1, -0.5]]);
    const cells = [5 * g.nu + 7, 60 * g.nu + 150, 90 * g.nu + 30, 30 * g.nu + 160];
    s.probes = cells.map((idx, k) => ({
      kind: 'point' as const,
      name: `p${k}`,
      at: [g.u0 + ((idx % g.nu) + 0.5) * g.du, 0, g.v0 + (Math.floor(idx / g.nu) + 0.5) * g.dv] as [number, number, number],
      range: R0,
    }));
    const r = solveScene(s, { convergence: false })!;
    cells.forEach((idx, k) => {
      const p = r.probes[k].points[0];
      expect(Math.abs(g.potential[idx] - p.potential)).toBeLessThan(1e-3 * 1000);
      expect(Math.abs(g.fieldMagnitude[idx] / p.fieldMagnitude - 1)).toBeLessThan(2e-3);
    });
  });

  it('behind a ground plane the grid and probes read 0 V and no field (the plane screens it)', () => {
    const s = scene3d({ mesh: small, electrodes: [electrode('s', sphere([0, 0, 0.5], 0.3), { kind: 'potential', value: 100 })], ground: [{ axis: 'z', at: 0 }] });
    s.slices = [{ plane: 'xz', at: 0, from: [-1, -0.5], to: [1, 1], cells: 30, range: R0 }];
    s.probes = [{ kind: 'point', name: 'under', at: [0.2, 0.1, -0.2], range: R0 }];
    const r = solveScene(s, { convergence: false })!;
    const g = r.slices[0];
    for (let j = 0; j < g.nv; j++) {
      const v = g.v0 + (j + 0.5) * g.dv;
      for (let i = 0; i < g.nu; i++) if (v < 0) expect(g.potential[j * g.nu + i]).toBe(0);
    }
    expect(r.probes[0].points[0].potential).toBe(0);
    // Just above the plane the potential rises from 0 toward the sphere (image method).
    let j0 = 0;
    while (g.v0 + (j0 + 0.5) * g.dv <= 0) j0++;
    const above = g.potential[j0 * g.nu + Math.floor(g.nu / 2)];
    expect(above).toBeGreaterThan(0);
    expect(above).toBeLessThan(g.potential[(j0 + 1) * g.nu + Math.floor(g.nu / 2)]);
  });

  it('a grid over the cell limit is coarsened, with a warning', () => {
    const slice = { plane: 'xy' as const, at: 0, from: [0, 0] as [number, number], to: [2, 1] as [number, number], cells: 1000, range: R0 };
    const grid = sliceGrid(slice, 5000);
    expect(grid.nu * grid.nv).toBeLessThanOrEqual(5000);
    expect(grid.reduced).toBe(true);
    const s = scene3d({ mesh: small, electrodes: [electrode('s', sphere([0, 0, 0], 0.3))] });
    s.slices = [slice];
    const r = solveScene(s, { convergence: false, maxGridCells: 5000 })!;
    expect(r.slices[0].nu * r.slices[0].nv).toBeLessThanOrEqual(5000);
    expect(r.diagnostics.map((d) => d.code)).toContain('VS408');
  });
});

describe('post-solve diagnostics', () => {
  it('a peak field over the limit is an error at the electrode, with the safety caution', () => {
    // A sphere of radius 10 mm at 30 kV: surface field V/a = 3 kV/mm (closed form) over a 2 kV/mm limit.
    const s = scene3d({ mesh: { kind: 'size', size: 0.004 }, limit: 2e6, electrodes: [electrode('hot', sphere([0, 0, 0], 0.01), { kind: 'potential', value: 30e3 })] });
    s.electrodes[0].nameRange = { start: { line: 3, character: 10 }, end: { line: 3, character: 13 } };
    const r = solveScene(s, { convergence: false })!;
    const d = r.diagnostics.find((x) => x.code === 'VS401')!;
    expect(d.severity).toBe('error');
    expect(d.range.start.line).toBe(3);
    expect(d.message).toContain(CAUTION);
    // The peak is the largest panel value: panel-to-panel scatter puts it ~4% high at 320 panels.
    expect(Math.abs(r.electrodes[0].maxField / 3e6 - 1)).toBeLessThan(0.05);
  });

  it('a peak field over the medium strength is a warning; under it, nothing', () => {
    const hot = scene3d({ mesh: { kind: 'size', size: 0.004 }, strength: 3e6, electrodes: [electrode('s', sphere([0, 0, 0], 0.01), { kind: 'potential', value: 40e3 })] });
    const r = solveScene(hot, { convergence: false })!;
    expect(r.diagnostics.find((x) => x.code === 'VS402')?.message).toContain(CAUTION);
    hot.electrodes[0].drive = { kind: 'potential', value: 10e3 };
    expect(solveScene(hot, { convergence: false })!.diagnostics.map((x) => x.code)).not.toContain('VS402');
  });

  it('warns about a floating electrode with nothing to charge it', () => {
    const r = solveScene(scene3d({ mesh: small, electrodes: [electrode('f', sphere([0, 0, 0], 0.3), { kind: 'floating' })] }), { convergence: false })!;
    expect(r.diagnostics.map((d) => d.code)).toEqual(['VS404']);
    expect(r.electrodes[0].potential).toBe(0);
  });

  it('warns when a gap is narrower than the panels beside it', () => {
    const r = solveScene(
      scene3d({ mesh: small, electrodes: [electrode('a', sphere([0, 0, 0], 0.3)), electrode('b', sphere([0.65, 0, 0], 0.3), { kind: 'potential', value: 0 })] }),
      { convergence: false },
    )!;
    expect(r.diagnostics.filter((d) => d.code === 'VS403').length).toBeGreaterThan(0);
  });

  it('coarsens a mesh over the panel limit and says so', () => {
    const r = solveScene(scene3d({ electrodes: [electrode('s', sphere([0, 0, 0], 0.3))] }), { maxPanels: 500, convergence: false })!;
    expect(r.stats.panels).toBeLessThanOrEqual(500);
    expect(r.diagnostics.map((d) => d.code)).toContain('VS405');
  });
});

describe('entry point', () => {
  it('returns null when cancelled', () => {
    expect(solveScene(scene3d({ electrodes: [electrode('s', sphere([0, 0, 0], 0.3))] }), { isCancelled: () => true })).toBeNull();
  });

  it('the coarse level has about 4× fewer panels and no convergence estimate', () => {
    const s = scene3d({ electrodes: [electrode('s', sphere([0, 0, 0], 0.3))] });
    const r = solveScene(s, { level: 'coarse' })!;
    expect(r.stats.levels.length).toBe(1);
    expect(r.stats.panels).toBeLessThan(2420 / 3);
    expect(r.electrodes[0].capacitanceConvergence.extrapolated).toBeNull();
  });

  it('keeps the coarse level within its panel budget, with an honest panel count, and the full level estimates against scale 2 as before', () => {
    const a = 0.3;
    const s = scene3d({ mesh: { kind: 'preset', preset: 'coarse' }, electrodes: [electrode('s', sphere([0, 0, 0], a))] });
    const cache = createCache3d();
    const options = (level: 'coarse' | 'full', coarsePanels?: number): Solve3dOptions => ({ maxPanels: 20000, maxGridCells: 1000, level, convergence: true, cache, coarsePanels });
    const free = solve3d(s, options('coarse', 1e9))!;
    const coarse = solve3d(s, options('coarse', 100))!;
    expect(coarse.stats.panels).toBeLessThanOrEqual(100);
    expect(coarse.stats.panels).toBeLessThan(free.stats.panels);
    expect(coarse.stats.levels).toEqual([coarse.stats.panels]);
    // Still a solve of its own mesh: C = 4πε0·a for a sphere (closed form), within the coarse mesh's
    // flat-panel error (about −4/N relative, methods.md; 3× that allowed).
    const C = 4 * Math.PI * EPSILON_0 * a;
    expect(Math.abs(coarse.electrodes[0].capacitance / C - 1)).toBeLessThan(12 / coarse.stats.panels);
    const full = solve3d(s, options('full', 100))!;
    expect(full.stats.levels).toEqual([free.stats.panels, full.stats.panels]);
  });

  it('the default coarse budget bounds a fine mesh', () => {
    const s = scene3d({ mesh: { kind: 'preset', preset: 'fine' }, electrodes: [electrode('s', sphere([0, 0, 0], 0.3))] });
    const r = solveScene(s, { level: 'coarse' })!;
    expect(r.stats.panels).toBeLessThanOrEqual(COARSE_MAX_PANELS);
    expect(r.stats.panels).toBeGreaterThan(COARSE_MAX_PANELS / 4);
  });
});
