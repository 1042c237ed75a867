// Hand-built scenes and results for the CLI's unit tests: the report, SVG and JSON layers are tested
// on data whose every number is known, independently of the solver.
// The result below is that of an isolated sphere of radius a held at V: C = 4πε0·a, Q = C·V,
// surface field V/a, potential V·a/r outside (textbook electrostatics, references.md "Closed forms").
import { EPSILON_0, type Scene3d } from '../../grammar/scene';
import type { Result, SliceResult } from '../../server/src/engine/result';

const zero = { start: { line: 0, character: 0 }, end: { line: 0, character: 1 } };
export const range = (line: number, character: number) => ({ start: { line, character }, end: { line, character: character + 1 } });

export const SPHERE_RADIUS = 0.1; // m
export const SPHERE_VOLTS = 30e3; // V
export const SPHERE_C = 4 * Math.PI * EPSILON_0 * SPHERE_RADIUS;

export function sphereScene(): Scene3d {
  return {
    space: '3d',
    title: 'Lone sphere <test & check>',
    medium: { name: 'air', permittivity: 1.0006, strength: 3e6, density: 1 },
    mesh: { kind: 'preset', preset: 'normal' },
    groundPlanes: [],
    slices: [{ plane: 'xz', at: 0, from: [-0.4, -0.3], to: [0.4, 0.3], cells: 80, range: range(5, 0) }],
    limit: { field: 1e6, range: range(7, 0) },
    electrodes: [
      {
        name: 'dome',
        shape: { kind: 'sphere', center: [0, 0, 0], radius: SPHERE_RADIUS, hollow: false },
        drive: { kind: 'potential', value: SPHERE_VOLTS },
        range: range(3, 0),
        nameRange: range(3, 10),
      },
    ],
    charges: [],
    probes: [
      { kind: 'point', name: 'tip', at: [0.2, 0, 0], range: range(6, 0) },
      { kind: 'line', name: 'radial', from: [0.1, 0, 0], to: [0.4, 0, 0], samples: 31, range: range(6, 0) },
    ],
  };
}

/** The potential of the sphere at distance r (V inside, V·a/r outside). */
export function spherePotential(r: number): number {
  return r <= SPHERE_RADIUS ? SPHERE_VOLTS : (SPHERE_VOLTS * SPHERE_RADIUS) / r;
}

export function sphereSlice(): SliceResult {
  const nu = 80;
  const nv = 60;
  const du = 0.01;
  const u0 = -0.4;
  const v0 = -0.3;
  const n = nu * nv;
  const potential = new Float64Array(n);
  const fieldU = new Float32Array(n);
  const fieldV = new Float32Array(n);
  const fieldMagnitude = new Float32Array(n);
  const inside = new Int16Array(n);
  for (let j = 0; j < nv; j++) {
    for (let i = 0; i < nu; i++) {
      const u = u0 + (i + 0.5) * du;
      const v = v0 + (j + 0.5) * du;
      const r = Math.hypot(u, v);
      const k = j * nu + i;
      potential[k] = spherePotential(r);
      const inner = r <= SPHERE_RADIUS;
      inside[k] = inner ? 0 : -1;
      const e = inner ? NaN : (SPHERE_VOLTS * SPHERE_RADIUS) / (r * r);
      fieldU[k] = inner ? NaN : (e * u) / r;
      fieldV[k] = inner ? NaN : (e * v) / r;
      fieldMagnitude[k] = e;
    }
  }
  const circle: number[] = [];
  for (let t = 0; t < 48; t++) {
    circle.push(SPHERE_RADIUS * Math.cos((2 * Math.PI * t) / 48), SPHERE_RADIUS * Math.sin((2 * Math.PI * t) / 48));
  }
  return {
    plane: 'xz',
    at: 0,
    nu,
    nv,
    u0,
    v0,
    du,
    dv: du,
    potential,
    fieldU,
    fieldV,
    fieldMagnitude,
    inside,
    outlines: [{ electrode: 0, paths: [circle], closed: true }],
    groundLines: [[-0.4, -0.25, 0.4, -0.25]],
  };
}

export function sphereResult(): Result {
  const radial = Array.from({ length: 31 }, (_, i) => {
    const x = 0.1 + (0.3 * i) / 30;
    const e = (SPHERE_VOLTS * SPHERE_RADIUS) / (x * x);
    return { at: [x, 0, 0], potential: spherePotential(x), field: [e, 0, 0], fieldMagnitude: e };
  });
  return {
    format: 'voltscape-result/1',
    space: '3d',
    electrodes: [
      {
        name: 'dome',
        range: zero,
        potential: SPHERE_VOLTS,
        charge: SPHERE_C * SPHERE_VOLTS,
        maxField: SPHERE_VOLTS / SPHERE_RADIUS,
        maxFieldAt: [0, 0, SPHERE_RADIUS],
        maxFieldConvergence: { relativeError: 0.004, extrapolated: null },
        maxFieldOnEdge: false,
        capacitance: SPHERE_C,
        capacitanceConvergence: { relativeError: 0.0012, extrapolated: SPHERE_C },
      },
    ],
    capacitance: { names: ['dome'], matrix: [[SPHERE_C]], asymmetry: 0 },
    energy: 0.5 * SPHERE_C * SPHERE_VOLTS * SPHERE_VOLTS,
    probes: [
      {
        name: 'tip',
        points: [{ at: [0.2, 0, 0], potential: 15e3, field: [1.5e5, 0, 0], fieldMagnitude: 1.5e5 }],
      },
      { name: 'radial', points: radial },
    ],
    slices: [sphereSlice()],
    diagnostics: [],
    stats: { panels: 1280, unknowns: 1280, solver: 'dense LU', timings: { mesh: 3.2, assemble: 410, solve: 120 }, levels: [320, 1280] },
  };
}
