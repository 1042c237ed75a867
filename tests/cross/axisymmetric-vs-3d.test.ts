// One scene, written once in 3d and once as a body of revolution, must give the same figures: the
// axisymmetric engine (ring kernel, accurate to about 1e-5 here) serves as the reference, and the 3d
// figures must agree within the error the 3d solver itself states (its two-level convergence estimate).
import { describe, expect, it } from 'vitest';
import { analyzeText, hasErrors } from '../../grammar/index';
import { solveScene } from '../../server/src/engine/index';
import type { Result } from '../../server/src/engine/result';

// A domed terminal over an earthed floor with a grading ring around it (a scene of our own).
const body = (space: '3d' | 'axisymmetric') => {
  const p = (r: number, z: number) => (space === '3d' ? `(${r}, 0, ${z}) mm` : `(${r}, ${z}) mm`);
  return [
    `space ${space}`,
    'medium air',
    'mesh coarse',
    `electrode dome sphere center ${space === '3d' ? '(0, 0, 400) mm' : '(0, 400) mm'} radius 100 mm potential 20 kV`,
    `electrode grader torus center ${space === '3d' ? '(0, 0, 250) mm axis (0, 0, 1)' : '(0, 250) mm'} major 150 mm minor 25 mm potential 0 V`,
    'ground plane at z = 0',
    `probe above point at ${p(0, 600)}`,
  ].join('\n');
};

function solve(text: string): Result {
  const analysis = analyzeText(text);
  expect(analysis.diagnostics.filter((d) => d.severity === 'error')).toEqual([]);
  expect(hasErrors(analysis.diagnostics)).toBe(false);
  return solveScene(analysis.scene)!;
}

describe('the same scene in 3d and in axisymmetric space', () => {
  const axi = solve(body('axisymmetric'));
  const cube = solve(body('3d'));

  it('gives the same capacitance matrix within the 3d solver’s stated error', () => {
    for (let k = 0; k < 2; k++) {
      const stated = cube.electrodes[k].capacitanceConvergence.relativeError!;
      expect(stated).toBeGreaterThan(0);
      expect(Math.abs(cube.capacitance.matrix[k][k] / axi.capacitance.matrix[k][k] - 1)).toBeLessThanOrEqual(stated);
    }
    // The mutual term, held to the larger of the two self terms' stated errors (relative to C_11).
    const stated = Math.max(...cube.electrodes.map((e) => e.capacitanceConvergence.relativeError!));
    const scale = axi.capacitance.matrix[0][0];
    expect(Math.abs(cube.capacitance.matrix[0][1] - axi.capacitance.matrix[0][1]) / scale).toBeLessThanOrEqual(stated);
  });

  it('gives the same charges, energy and probe potential within the stated error', () => {
    const stated = Math.max(...cube.electrodes.map((e) => e.capacitanceConvergence.relativeError!));
    const q0 = Math.abs(axi.electrodes[0].charge);
    for (let k = 0; k < 2; k++) expect(Math.abs(cube.electrodes[k].charge - axi.electrodes[k].charge) / q0).toBeLessThanOrEqual(stated);
    expect(Math.abs(cube.energy / axi.energy - 1)).toBeLessThanOrEqual(stated);
    expect(Math.abs(cube.probes[0].points[0].potential / axi.probes[0].points[0].potential - 1)).toBeLessThanOrEqual(stated);
  });
});
