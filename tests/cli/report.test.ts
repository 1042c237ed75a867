// The text report of `voltscape solve`, on a hand-built result of an isolated sphere (fixtures.ts).
import { describe, expect, it } from 'vitest';
import { renderReport, SAFETY_CAUTION } from '../../server/src/cli/report';
import { range, sphereResult, sphereScene } from './fixtures';

const file = 'samples/sphere.vscape';

describe('renderReport', () => {
  const text = renderReport({ file, scene: sphereScene(), result: sphereResult(), diagnostics: [] });

  it('names the scene, its space and its medium', () => {
    expect(text).toContain('Lone sphere <test & check>');
    expect(text).toMatch(/space\s+3d/);
    expect(text).toMatch(/medium\s+air \(εr 1\.0006, strength about 3 kV\/mm\)/);
  });

  it('tabulates each electrode with drive, potential, charge and capacitance in suitable units', () => {
    // C = 4πε0·0.1 m = 11.13 pF; Q = C·30 kV = 333.8 nC (isolated sphere, references.md "Closed forms").
    const row = text.split('\n').find((l) => l.trimStart().startsWith('dome') && l.includes('held at'));
    expect(row).toBeDefined();
    expect(row).toContain('held at 30 kV');
    expect(row).toContain('333.8 nC');
    expect(row).toContain('11.13 pF');
    expect(row).toContain('±0.12%');
  });

  it('reports the peak field with its place and the verdict against the limit and the medium', () => {
    expect(text).toContain('Peak surface field');
    expect(text).toContain('0.3 kV/mm');
    expect(text).toContain('(0, 0, 100) mm');
    expect(text).toMatch(/limit 1 kV\/mm: highest peak 0\.3 kV\/mm on dome, below \(margin 3\.33×\)/);
    expect(text).toMatch(/air strength 3 kV\/mm: .* below \(margin 10×\)/);
  });

  it('prints the capacitance matrix in one unit, the energy and the solve statistics', () => {
    expect(text).toContain('Capacitance matrix (Maxwell, pF; reference: ground and infinity)');
    // W = ½CV² = 5.007 mJ.
    expect(text).toContain('stored 5.007 mJ');
    expect(text).toContain('panels 1280');
    expect(text).toContain('mesh levels (panels, coarsest first) 320, 1280');
    expect(text).toMatch(/assemble 410 ms/);
  });

  it('summarises a line probe by its extremes and a few samples, and gives a point probe in full', () => {
    expect(text).toContain('tip at (200, 0, 0) mm: potential 15 kV, |E| 0.15 kV/mm');
    expect(text).toContain('radial: line from (100, 0, 0) mm to (400, 0, 0) mm, 31 samples');
    expect(text).toMatch(/potential\s+min 7\.5 kV at \(400, 0, 0\) mm, max 30 kV at \(100, 0, 0\) mm/);
  });

  it('ends with the safety caution', () => {
    expect(text.trimEnd().endsWith(SAFETY_CAUTION)).toBe(true);
    expect(SAFETY_CAUTION).toMatch(/^High voltage kills/);
  });

  it('says "none" when there are no diagnostics and lists them as file:line:col otherwise', () => {
    expect(text).toMatch(/Diagnostics\n  none/);
    const withOne = renderReport({
      file,
      scene: sphereScene(),
      result: sphereResult(),
      diagnostics: [{ code: 'VS205', severity: 'warning', message: 'odd size', range: range(4, 9) }],
    });
    expect(withOne).toContain(`${file}:5:10 warning VS205 odd size`);
  });

  it('flags a peak on a sharp edge with a note about the singularity', () => {
    const result = sphereResult();
    result.electrodes[0].maxFieldOnEdge = true;
    const edged = renderReport({ file, scene: sphereScene(), result, diagnostics: [] });
    expect(edged).toContain('on a sharp edge †');
    expect(edged).toContain('the field there grows as the mesh is refined');
  });
});
