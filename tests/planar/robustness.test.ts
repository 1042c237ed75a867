import { describe, expect, it } from 'vitest';
import { EPSILON_0 } from '../../grammar/scene';
import { solveAxisymmetric } from '../../server/src/engine/axisymmetric/solve';
import { solvePlanar } from '../../server/src/engine/planar/solve';
import { axiScene, planarScene, R0, volts } from '../axisymmetric/scene';

const coarse = { mesh: { kind: 'preset' as const, preset: 'coarse' as const } };
const allFinite = (r: { electrodes: { potential: number; charge: number; capacitance: number; maxField: number }[]; energy: number }) =>
  r.electrodes.every((e) => [e.potential, e.charge, e.capacitance, e.maxField].every(Number.isFinite)) && Number.isFinite(r.energy);

describe('2d engines on scenes a user can type while editing', () => {
  // No stage throws for anything a user can type (helper brief); degenerate shapes are reported by
  // the geometry checks and simply carry no charge here.
  it.each([
    ['an empty axisymmetric scene', () => solveAxisymmetric(axiScene([]))],
    ['a disc of zero radius', () => solveAxisymmetric(axiScene([[{ kind: 'disc', center: [0, 0], radius: 0 }, volts(1)]], coarse))],
    ['a sphere of NaN radius', () => solveAxisymmetric(axiScene([[{ kind: 'sphere', center: [0, 0], radius: NaN, hollow: false }, volts(1)]], coarse))],
    ['a torus crossing the axis', () => solveAxisymmetric(axiScene([[{ kind: 'torus', center: [0, 0], major: 0.5, minor: 1, hollow: false }, volts(1)]], coarse))],
    ['a one-point profile', () => solveAxisymmetric(axiScene([[{ kind: 'revolve', points: [[1, 1]], closed: false, hollow: false }, volts(1)]], coarse))],
    ['an empty planar scene', () => solvePlanar(planarScene([]))],
    ['a strip of zero length', () => solvePlanar(planarScene([[{ kind: 'strip', from: [0, 0], to: [0, 0] }, volts(1)]], coarse))],
    ['a lone floating wire', () => solvePlanar(planarScene([[{ kind: 'circle', center: [0, 0], radius: 1, hollow: false }, { kind: 'floating' }]], coarse))],
  ])('returns finite figures for %s', (_, solve) => {
    let r: ReturnType<typeof solvePlanar> = null;
    expect(() => (r = solve())).not.toThrow();
    expect(r).not.toBeNull();
    expect(allFinite(r!)).toBe(true);
  });

  it('gives a lone wire carrying λ per metre the surface field λ/(2πε0·a)', () => {
    // Gauss's law for a line charge (textbook electrostatics). With a net charge and no ground the far
    // potential diverges; the potentials are then relative (docs/methods-2d.md), the fields are not.
    const a = 0.01, lambda = 1e-9;
    const r = solvePlanar(planarScene([[{ kind: 'circle', center: [0, 0], radius: a, hollow: false }, { kind: 'charge', value: lambda }]], coarse))!;
    expect(r.electrodes[0].charge).toBeCloseTo(lambda, 20);
    expect(Math.abs(r.electrodes[0].maxField / (lambda / (2 * Math.PI * EPSILON_0 * a)) - 1)).toBeLessThan(1e-6);
  });

  it('gives free line charges alone (no conductor, no ground) their own log potential', () => {
    // Superposition of line charges, φ = −λ/(2πε0)·ln(ρ) + const: the difference between two probes is exact.
    const lambda = 2e-9;
    const r = solvePlanar(
      planarScene([], {
        charges: [{ kind: 'point', name: 'q', at: [0, 0], density: lambda, range: R0 }],
        probes: [
          { kind: 'point', name: 'a', at: [0.01, 0], range: R0 },
          { kind: 'point', name: 'b', at: [0, 0.04], range: R0 },
        ],
      }),
    )!;
    const diff = r.probes[0].points[0].potential - r.probes[1].points[0].potential;
    expect(Math.abs(diff / ((lambda / (2 * Math.PI * EPSILON_0)) * Math.log(4)) - 1)).toBeLessThan(1e-12);
  });
});

describe('2d element limit', () => {
  it('keeps the element count within maxPanels and says the mesh was coarsened (VS405)', () => {
    // The engine's own limit (SolveOptions.maxPanels, server/src/engine/index.ts); the diagnostic code
    // is the registry's (grammar/diagnostics.ts).
    const shapes: [import('../../grammar/scene').ShapePlanar, ReturnType<typeof volts>][] = [];
    for (let i = 0; i < 30; i++) shapes.push([{ kind: 'circle', center: [i * 0.5, 0], radius: 0.01, hollow: false }, volts(i % 2)]);
    const r = solvePlanar(planarScene(shapes), { maxPanels: 400, convergence: false })!;
    expect(r.stats.panels).toBeLessThanOrEqual(400);
    expect(r.diagnostics.some((d) => d.code === 'VS405')).toBe(true);
  });
});
