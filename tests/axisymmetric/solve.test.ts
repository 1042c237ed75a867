import { describe, expect, it } from 'vitest';
import { EPSILON_0 } from '../../grammar/scene';
import { solveAxisymmetric } from '../../server/src/engine/axisymmetric/solve';
import { axiScene, R0, spheroidProfile, volts } from './scene';
import { analyzeText } from '../../grammar/index';
import { solveScene } from '../../server/src/engine/index';

const C0 = 4 * Math.PI * EPSILON_0; // 4πε0 per metre of size
const rel = (a: number, b: number) => Math.abs(a / b - 1);

describe('axisymmetric solve: capacitance of bodies of revolution at default settings', () => {
  it('gives an isolated sphere C = 4πε0·a, surface field V/a, energy ½CV², probe potential V·a/ρ', () => {
    // Closed forms for the isolated sphere (references.md, "Closed forms").
    const a = 0.05, V = 1000;
    const r = solveAxisymmetric(
      axiScene([[{ kind: 'sphere', center: [0, 0.2], radius: a, hollow: false }, volts(V)]], {
        probes: [{ kind: 'point', name: 'p', at: [0.06, 0.28], range: R0 }],
      }),
    )!;
    const e = r.electrodes[0];
    expect(rel(e.capacitance, C0 * a)).toBeLessThan(1e-6);
    expect(rel(e.charge, C0 * a * V)).toBeLessThan(1e-6);
    expect(rel(e.maxField, V / a)).toBeLessThan(1e-5);
    expect(e.maxFieldOnEdge).toBe(false);
    expect(rel(r.energy, 0.5 * C0 * a * V * V)).toBeLessThan(1e-6);
    expect(rel(r.probes[0].points[0].potential, (V * a) / Math.hypot(0.06, 0.08))).toBeLessThan(1e-6);
    expect(r.stats.levels.length).toBe(2);
  });

  it('gives a thin disc C = 8ε0·a within 1e-4, with an honest two-level estimate and a rim peak flagged as an edge', () => {
    // Thin circular disc, C = 8ε0a (exact; references.md). Constant-density elements graded to the rim
    // converge as h², so the Richardson estimate should bound the actual error.
    const a = 0.1;
    const r = solveAxisymmetric(axiScene([[{ kind: 'disc', center: [0, 0], radius: a }, volts(1)]]))!;
    const e = r.electrodes[0];
    const exact = 8 * EPSILON_0 * a;
    const err = rel(e.capacitance, exact);
    expect(err).toBeLessThan(1e-4);
    expect(e.capacitanceConvergence.relativeError!).toBeGreaterThan(0.5 * err);
    expect(e.capacitanceConvergence.relativeError!).toBeLessThan(2 * err);
    expect(rel(e.capacitanceConvergence.extrapolated!, exact)).toBeLessThan(0.1 * err);
    expect(e.maxFieldOnEdge).toBe(true);
    expect(e.maxFieldAt[0]).toBeGreaterThan(0.98 * a);
  });

  it('gives the conducting disc’s axial potential (2V/π)·arctan(a/z) and field (2V/π)·a/(a² + z²)', () => {
    // Conducting disc at potential V, on its axis (Smythe, Static and Dynamic Electricity; Jackson,
    // Classical Electrodynamics, problem 3.3 — from memory); near the face E → 2V/(πa), the face field.
    const a = 0.1, V = 1000;
    const heights = [0.5 * a, 0.02 * a];
    const r = solveAxisymmetric(
      axiScene([[{ kind: 'disc', center: [0, 0], radius: a }, volts(V)]], {
        probes: heights.map((z, i) => ({ kind: 'point' as const, name: `p${i}`, at: [0, z] as [number, number], range: R0 })),
      }),
    )!;
    heights.forEach((z, i) => {
      const p = r.probes[i].points[0];
      expect(rel(p.potential, ((2 * V) / Math.PI) * Math.atan(a / z))).toBeLessThan(1e-4);
      expect(rel(p.field[1], ((2 * V) / Math.PI) * (a / (a * a + z * z)))).toBeLessThan(1e-3);
      expect(Math.abs(p.field[0])).toBeLessThan(1e-9 * p.fieldMagnitude);
    });
  });

  it.each([
    // de Queiroz, "Capacitance Calculations" (references.md): a = 2, b = 1 in units of 4πε0.
    ['prolate', 2, 1, 1.3151907222],
    ['oblate', 1, 2, 1.65398668627],
  ])('gives the %s spheroid (revolve profile of 200 sides) within 1e-4', (_, along, across, expected) => {
    const points = spheroidProfile(along as number, across as number, 200);
    const r = solveAxisymmetric(axiScene([[{ kind: 'revolve', points, closed: true, hollow: false }, volts(1)]]))!;
    expect(rel(r.electrodes[0].capacitance / C0, expected as number)).toBeLessThan(1e-4);
  });

  it('gives concentric spheres C = 4πε0·rR/(R − r) and peak field U·R/(r(R − r)) with a hollow outer shell', () => {
    // Concentric spheres (references.md, "Closed forms").
    const ri = 0.02, Ro = 0.05, U = 10e3;
    const r = solveAxisymmetric(
      axiScene([
        [{ kind: 'sphere', center: [0, 0], radius: ri, hollow: false }, volts(U)],
        [{ kind: 'sphere', center: [0, 0], radius: Ro, hollow: true }, volts(0)],
      ]),
    )!;
    const C = (C0 * ri * Ro) / (Ro - ri);
    expect(rel(r.capacitance.matrix[0][0], C)).toBeLessThan(1e-4);
    expect(rel(-r.capacitance.matrix[1][0], C)).toBeLessThan(1e-4);
    expect(rel(r.electrodes[0].maxField, (U * Ro) / (ri * (Ro - ri)))).toBeLessThan(1e-4);
    expect(rel(r.electrodes[1].charge, -C * U)).toBeLessThan(1e-4);
    // The hollow shell's inner face sees U·r/(R(R − r)) (same closed form at radius R); its outer face none.
    expect(rel(r.electrodes[1].maxField, (U * ri) / (Ro * (Ro - ri)))).toBeLessThan(1e-4);
  });

  it.each([
    // Sphere over a grounded plane, C/C0 = sinh α·Σ 1/sinh(nα), cosh α = h/a (references.md).
    [1.5, 1.5353705088],
    [2, 1.3410598131],
  ])('supports a ground plane z = c by image rings: sphere at h/a = %s gives %s C0 within 1e-4', (h, expected) => {
    const a = 0.1;
    const r = solveAxisymmetric(
      axiScene([[{ kind: 'sphere', center: [0, 0.3 + h * a], radius: a, hollow: false }, volts(1)]], {
        groundPlanes: [{ axis: 'z', at: 0.3, range: R0 }],
      }),
    )!;
    expect(rel(r.electrodes[0].capacitance / (C0 * a), expected)).toBeLessThan(1e-4);
  });

  it('induces −q·a/d on a grounded sphere from a point charge on the axis', () => {
    // Image charge of a point charge outside a grounded sphere (Jackson, Classical Electrodynamics, §2.2).
    const a = 0.1, d = 0.3, q = 1e-9;
    const r = solveAxisymmetric(
      axiScene([[{ kind: 'sphere', center: [0, 0], radius: a, hollow: false }, volts(0)]], {
        charges: [{ kind: 'point', name: 'q', at: [0, d], value: q, range: R0 }],
        mesh: { kind: 'preset', preset: 'coarse' },
      }),
    )!;
    expect(rel(r.electrodes[0].charge, (-q * a) / d)).toBeLessThan(1e-4);
    // Energy: the charge's interaction with its image q′ = −qa/d at a²/d, W = −½·kq²a/(d² − a²) (same source).
    expect(rel(r.energy, (-0.5 * q * q * a) / (C0 * (d * d - a * a)))).toBeLessThan(1e-4);
  });

  it('solves a floating sphere around a ring charge to the potential of its charge, kQ/a', () => {
    // A hollow conducting sphere holding a free charge inside: by Gauss's law its outer face carries the
    // whole charge, so an isolated floating shell sits at Q/(4πε0·a) (textbook electrostatics).
    const a = 0.1, lambda = 1e-9, ringRadius = 0.03;
    const Q = 2 * Math.PI * ringRadius * lambda;
    const r = solveAxisymmetric(
      axiScene([[{ kind: 'sphere', center: [0, 0], radius: a, hollow: true }, { kind: 'floating' }]], {
        charges: [{ kind: 'ring', name: 'q', at: [ringRadius, 0.01], density: lambda, range: R0 }],
        mesh: { kind: 'preset', preset: 'coarse' },
      }),
    )!;
    expect(rel(r.electrodes[0].potential, Q / (C0 * a))).toBeLessThan(1e-4);
    expect(Math.abs(r.electrodes[0].charge)).toBeLessThan(1e-12 * Q);
  });

  it('fills a slice on the r–z half-plane: the conductor’s potential inside, V·a/ρ outside, mirrored for r < 0', () => {
    // Isolated sphere potential (references.md); the grid layout of SliceResult (result.ts).
    const a = 0.05, V = 100;
    const r = solveAxisymmetric(
      axiScene([[{ kind: 'sphere', center: [0, 0], radius: a, hollow: false }, volts(V)]], {
        slices: [{ plane: 'rz', at: 0, from: [-0.1, -0.1], to: [0.1, 0.1], cells: 20, range: R0 }],
        mesh: { kind: 'preset', preset: 'coarse' },
      }),
    )!;
    const s = r.slices[0];
    expect([s.nu, s.nv]).toEqual([20, 20]);
    let checked = 0;
    for (let j = 0; j < s.nv; j++) {
      for (let i = 0; i < s.nu; i++) {
        const u = s.u0 + (i + 0.5) * s.du, v = s.v0 + (j + 0.5) * s.dv, rho = Math.hypot(u, v);
        const idx = j * s.nu + i;
        if (rho < a) {
          expect(s.inside[idx]).toBe(0);
          expect(s.potential[idx]).toBe(V);
        } else if (rho > 1.1 * a) {
          expect(s.inside[idx]).toBe(-1);
          // Slice grids are summed by interpolation on the grid (planar/grid2d.ts), good to about 1e-6 here.
          expect(rel(s.potential[idx], (V * a) / rho)).toBeLessThan(1e-5);
          expect(Math.abs(s.fieldU[idx] - (V * a * u) / rho ** 3)).toBeLessThan(1e-5 * (V * a) / rho ** 2);
          checked++;
        }
      }
    }
    expect(checked).toBeGreaterThan(200);
    expect(s.outlines[0].paths.length).toBe(2); // the profile and its mirror image
  });
});

describe('axisymmetric solve: the engine cache', () => {
  it('reuses the factorization when only drives and free charges change, with the same figures as a fresh solve', () => {
    // Reference: the same scene solved without a cache (and, for the charge, C = 4πε0·a·V, references.md).
    const cache = { store: new Map<string, unknown>() };
    const a = 0.05;
    const shape = { kind: 'sphere' as const, center: [0, 0] as [number, number], radius: a, hollow: false };
    const mesh = { kind: 'preset' as const, preset: 'coarse' as const };
    solveAxisymmetric(axiScene([[shape, volts(1)]], { mesh }), { cache });
    const edited = axiScene([[shape, volts(250)]], { mesh, charges: [{ kind: 'point', name: 'q', at: [0, 0.2], value: 1e-10, range: R0 }] });
    const again = solveAxisymmetric(edited, { cache })!;
    const fresh = solveAxisymmetric(edited)!;
    expect(again.stats.timings.cached).toBe(1);
    expect(fresh.stats.timings.cached).toBeUndefined();
    expect(again.electrodes[0].charge).toBeCloseTo(fresh.electrodes[0].charge, 20);
    // Sphere at V with a point charge q outside at distance d: Q = C0·a·V − q·a/d (superposition with the image charge, Jackson §2.2).
    expect(rel(again.electrodes[0].charge, C0 * a * 250 - (1e-10 * a) / 0.2)).toBeLessThan(1e-4);
  });
});

describe('a ground plane written in an axisymmetric scene', () => {
  it('reaches the solver from the text: sphere at h/a = 3 gives 1.2011552846 C0 within 1e-4', () => {
    // Sphere over a grounded plane, C/C0 = sinh α·Σ 1/sinh(nα), cosh α = h/a (references.md, series summed).
    const text = 'space axisymmetric\nelectrode ball sphere center (0, 300) mm radius 100 mm potential 1 V\nground plane at z = 0';
    const analysis = analyzeText(text);
    expect(analysis.diagnostics.filter((d) => d.severity === 'error')).toEqual([]);
    const r = solveScene(analysis.scene)!;
    expect(rel(r.electrodes[0].capacitance / (C0 * 0.1), 1.2011552846)).toBeLessThan(1e-4);
  });
});
