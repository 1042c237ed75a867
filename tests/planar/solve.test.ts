import { describe, expect, it } from 'vitest';
import { EPSILON_0 } from '../../grammar/scene';
import { solvePlanar } from '../../server/src/engine/planar/solve';
import { planarScene, R0, volts } from '../axisymmetric/scene';

const rel = (a: number, b: number) => Math.abs(a / b - 1);
const TWO_PI_EPS = 2 * Math.PI * EPSILON_0;

describe('planar solve: per-metre figures of cross-sections', () => {
  it('gives coaxial cylinders C′ = 2πε0/ln(R/r), peak field U/(r·ln(R/r)), the log potential and ½C′U²', () => {
    // Coaxial cylinders (references.md, "Closed forms"). The outer conductor is a hollow circle. The
    // uniform density is exact for circles, so a coarse mesh is enough here.
    const r = 0.01, R = 0.025, U = 5000;
    const res = solvePlanar(
      planarScene(
        [
          [{ kind: 'circle', center: [0.1, -0.2], radius: r, hollow: false }, volts(U)],
          [{ kind: 'circle', center: [0.1, -0.2], radius: R, hollow: true }, volts(0)],
        ],
        { mesh: { kind: 'preset', preset: 'coarse' }, probes: [{ kind: 'point', name: 'mid', at: [0.1 + 0.012, -0.2 + 0.009], range: R0 }] },
      ),
    )!;
    const C = TWO_PI_EPS / Math.log(R / r);
    expect(rel(res.capacitance.matrix[0][0], C)).toBeLessThan(1e-6);
    expect(rel(-res.capacitance.matrix[0][1], C)).toBeLessThan(1e-6);
    expect(rel(res.electrodes[0].charge, C * U)).toBeLessThan(1e-6);
    expect(rel(res.electrodes[1].charge, -C * U)).toBeLessThan(1e-6);
    expect(rel(res.electrodes[0].maxField, U / (r * Math.log(R / r)))).toBeLessThan(1e-6);
    // The hollow outer conductor's peak is on its inner face: U/(R·ln(R/r)).
    expect(rel(res.electrodes[1].maxField, U / (R * Math.log(R / r)))).toBeLessThan(1e-4);
    const rho = 0.015;
    expect(rel(res.probes[0].points[0].potential, (U * Math.log(R / rho)) / Math.log(R / r))).toBeLessThan(1e-6);
    expect(rel(res.probes[0].points[0].fieldMagnitude, U / (rho * Math.log(R / r)))).toBeLessThan(1e-5);
    expect(rel(res.energy, 0.5 * C * U * U)).toBeLessThan(1e-6);
  });

  it('gives two parallel wires C′ = πε0/arccosh(D/2a) within 1e-4 at default settings', () => {
    // Two parallel wires (references.md). Without a ground plane the potential at infinity is an
    // unknown and the total charge zero, so the Maxwell matrix has zero row sums.
    const a = 0.01, D = 0.03;
    const res = solvePlanar(
      planarScene([
        [{ kind: 'circle', center: [-D / 2, 0], radius: a, hollow: false }, volts(1)],
        [{ kind: 'circle', center: [D / 2, 0], radius: a, hollow: false }, volts(0)],
      ]),
    )!;
    const C = (Math.PI * EPSILON_0) / Math.acosh(D / (2 * a));
    expect(rel(-res.capacitance.matrix[0][1], C)).toBeLessThan(1e-4);
    expect(rel(res.electrodes[0].charge, C)).toBeLessThan(1e-4);
    expect(Math.abs(res.electrodes[0].charge + res.electrodes[1].charge)).toBeLessThan(1e-9 * C);
    expect(res.capacitance.asymmetry).toBeLessThan(1e-4);
  });

  it('gives a wire over a ground plane C′ = 2πε0/arccosh(h/a) within 1e-4 at default settings', () => {
    // Wire over a ground plane (references.md); the plane y = c by images.
    const a = 0.005, h = 0.01;
    const res = solvePlanar(
      planarScene([[{ kind: 'circle', center: [0.3, 0.05 + h], radius: a, hollow: false }, volts(1)]], {
        groundPlanes: [{ axis: 'y', at: 0.05, range: R0 }],
      }),
    )!;
    expect(rel(res.electrodes[0].capacitance, TWO_PI_EPS / Math.acosh(h / a))).toBeLessThan(1e-4);
  });

  it('reads 0 V and no field behind the ground plane, where the plane screens everything', () => {
    // A grounded conducting plane screens the half-space behind it (textbook electrostatics): the
    // image values there are fictitious.
    const res = solvePlanar(
      planarScene([[{ kind: 'circle', center: [0, 0.02], radius: 0.005, hollow: false }, volts(1000)]], {
        groundPlanes: [{ axis: 'y', at: 0, range: R0 }],
        mesh: { kind: 'preset', preset: 'coarse' },
        probes: [
          { kind: 'point', name: 'below', at: [0.003, -0.01], range: R0 },
          { kind: 'point', name: 'above', at: [0.003, 0.01], range: R0 },
        ],
        slices: [{ plane: 'xy', at: 0, from: [-0.04, -0.02], to: [0.04, 0.06], cells: 16, range: R0 }],
      }),
    )!;
    expect(res.probes[0].points[0].potential).toBe(0);
    expect(res.probes[0].points[0].fieldMagnitude).toBe(0);
    expect(res.probes[1].points[0].potential).toBeGreaterThan(100);
    const g = res.slices[0];
    for (let i = 0; i < g.nu; i++) expect(g.potential[i]).toBe(0); // the bottom row lies behind the plane
    expect(g.groundLines).toEqual([[-0.04, 0, 0.04, 0]]);
  });

  it('gives the same for a ground plane x = c', () => {
    // Same closed form as above, with the plane along the other axis.
    const a = 0.005, h = 0.015;
    const res = solvePlanar(
      planarScene([[{ kind: 'circle', center: [-0.1 - h, 0.2], radius: a, hollow: false }, volts(1)]], {
        groundPlanes: [{ axis: 'x', at: -0.1, range: R0 }],
        mesh: { kind: 'preset', preset: 'coarse' },
      }),
    )!;
    expect(rel(res.electrodes[0].capacitance, TWO_PI_EPS / Math.acosh(h / a))).toBeLessThan(1e-4);
  });

  it('puts ±q/(2C′) on two wires that carry fixed charges ±q, with infinity at 0 V', () => {
    // Two parallel wires (references.md) driven by charge: V1 − V2 = q/C′, and by symmetry the
    // potential at infinity (0 V) lies halfway.
    const a = 0.01, D = 0.04, q = 1e-9;
    const res = solvePlanar(
      planarScene(
        [
          [{ kind: 'circle', center: [-D / 2, 0], radius: a, hollow: false }, { kind: 'charge', value: q }],
          [{ kind: 'circle', center: [D / 2, 0], radius: a, hollow: false }, { kind: 'charge', value: -q }],
        ],
        { mesh: { kind: 'preset', preset: 'coarse' } },
      ),
    )!;
    const C = (Math.PI * EPSILON_0) / Math.acosh(D / (2 * a));
    expect(rel(res.electrodes[0].potential, q / (2 * C))).toBeLessThan(1e-4);
    expect(rel(res.electrodes[1].potential, -q / (2 * C))).toBeLessThan(1e-4);
  });

  it('gives a line charge over a ground plane the image potential λ/(2πε0)·ln(r′/r)', () => {
    // Line charge and its image in a grounded plane (textbook electrostatics, method of images).
    const lambda = 1e-9;
    const res = solvePlanar(
      planarScene([], {
        groundPlanes: [{ axis: 'y', at: 0, range: R0 }],
        charges: [{ kind: 'point', name: 'q', at: [0, 0.02], density: lambda, range: R0 }],
        probes: [{ kind: 'point', name: 'p', at: [0.01, 0.01], range: R0 }],
      }),
    )!;
    const r1 = Math.hypot(0.01, 0.01), r2 = Math.hypot(0.01, 0.03);
    expect(rel(res.probes[0].points[0].potential, (lambda / TWO_PI_EPS) * Math.log(r2 / r1))).toBeLessThan(1e-12);
  });

  it('gives a thin strip in a grounded tube the capacitance of a round wire of a quarter of its width', () => {
    // A flat strip of width w has the logarithmic capacity (equivalent radius) w/4 (conformal map
    // z = ζ + c²/ζ; e.g. Smythe, Static and Dynamic Electricity, ch. 4 — from memory). In a tube of
    // radius R ≫ w the correction is O((w/4R)²)/ln, below 1e-4 here.
    const w = 0.01, R = 0.2;
    const res = solvePlanar(
      planarScene([
        [{ kind: 'strip', from: [-w / 2, 0], to: [w / 2, 0] }, volts(1)],
        [{ kind: 'circle', center: [0, 0], radius: R, hollow: true }, volts(0)],
      ], { mesh: { kind: 'preset', preset: 'coarse' } }),
    )!;
    expect(rel(res.electrodes[0].capacitance, TWO_PI_EPS / Math.log(R / (w / 4)))).toBeLessThan(2e-4);
    expect(res.electrodes[0].maxFieldOnEdge).toBe(true);
  });

  it('gives a square bar in a grounded tube the capacitance of a wire of radius 0.59017·side', () => {
    // Logarithmic capacity of a square of side s: Γ(1/4)²/(4π^{3/2})·s ≈ 0.5902·s (Pólya and Szegő,
    // Isoperimetric Inequalities in Mathematical Physics, 1951 — from memory). Corners make the density
    // singular; the graded mesh and R ≫ s keep the check to 5e-4.
    const s = 0.01, R = 0.2;
    const gamma14 = 3.6256099082219083; // Γ(1/4) (DLMF 5.4.E? value from memory; checked below by the reflection formula)
    // Γ(1/4)·Γ(3/4) = π√2 (reflection formula, DLMF 5.5.3); Γ(3/4) = 1.2254167024651776 (from memory).
    expect(gamma14 * 1.2254167024651776).toBeCloseTo(Math.PI * Math.SQRT2, 12);
    const capacity = ((gamma14 * gamma14) / (4 * Math.PI ** 1.5)) * s;
    const res = solvePlanar(
      planarScene([
        [{ kind: 'rect', center: [0, 0], size: [s, s], hollow: false }, volts(1)],
        [{ kind: 'circle', center: [0, 0], radius: R, hollow: true }, volts(0)],
      ], { mesh: { kind: 'preset', preset: 'coarse' } }),
    )!;
    expect(rel(res.electrodes[0].capacitance, TWO_PI_EPS / Math.log(R / capacity))).toBeLessThan(5e-4);
  });
});
