import { describe, expect, it } from 'vitest';
import { completions } from '../../server/src/lsp/features/completion';
import { stateAt } from './cursor';

function labels(input: string): string[] {
  const { state, position } = stateAt(input);
  return completions(state, position).map((c) => c.label);
}

function check(input: string, includes: string[], excludes: string[] = []) {
  const got = labels(input);
  for (const l of includes) expect(got, `expected ${l} in ${got.join(' ')}`).toContain(l);
  for (const l of excludes) expect(got, `did not expect ${l}`).not.toContain(l);
}

describe('completion', () => {
  it('offers statement keywords at the start of a line', () => {
    check('space 3d\n|', ['electrode', 'let', 'slice', 'limit'], ['sphere', 'mm']);
    check('space 3d\nele|', ['electrode']);
  });

  it('offers the shapes of the space after electrode NAME', () => {
    check('electrode a |', ['sphere', 'box', 'plate', 'torus'], ['circle', 'revolve']);
    check('space planar\nelectrode a |', ['circle', 'rect', 'polygon', 'strip'], ['sphere']);
    check('space axisymmetric\nelectrode a |', ['revolve', 'sphere'], ['box']);
  });

  it('offers the attributes a shape still lacks, a drive when it has none, and hollow for closed shapes', () => {
    check('electrode a sphere center (0, 0, 0) mm |', ['radius', 'potential', 'charge', 'floating', 'hollow'], ['center', 'normal']);
    check('electrode a disc center (0, 0, 0) mm potential 1 kV |', ['normal', 'radius'], ['hollow', 'potential', 'floating', 'center']);
  });

  it('offers units whose dimension fits the attribute after a number', () => {
    check('electrode a sphere center (0, 0, 0) mm radius 5 |', ['mm', 'm', 'cm', 'in'], ['kV', 'nC']);
    check('electrode a sphere center (0, 0, 0) mm radius 5 mm potential 12 |', ['kV', 'V', 'MV'], ['mm']);
    check('limit field 3 |', ['kV/mm', 'MV/m'], ['kV', 'mm']);
    check('charge beam line from (0, 0, 0) mm to (1, 0, 0) mm density -0.2 |', ['nC/m'], ['nC']);
    check('electrode a sphere center (0, 0, 0) |', ['mm', 'm'], ['kV']);
  });

  it('completes a unit being typed right after its number', () => {
    check('electrode a sphere center (0, 0, 0) mm radius 5 mm potential 12 k|', ['kV'], ['mm']);
  });

  it('offers let names defined above, and functions, where a value goes', () => {
    check('let gap = 40 mm\nlet drive = 8 kV\nelectrode a sphere center (0, 0, 0) mm radius 5 mm potential |', ['drive', 'gap', 'sqrt']);
    check('let gap = 40 mm\nlet half = |', ['gap', 'max']);
    check('let gap = 40 mm\nelectrode a sphere center (0, 0, |', ['gap']);
  });

  it('offers media, spaces, presets, planes, kinds and axes where they go', () => {
    check('medium |', ['air', 'sf6', 'oil', 'vacuum', 'permittivity']);
    check('space |', ['3d', 'axisymmetric', 'planar']);
    check('mesh |', ['coarse', 'normal', 'fine', 'size']);
    check('slice |', ['xy', 'xz', 'yz']);
    check('charge q |', ['point', 'line', 'ring']);
    check('probe p |', ['point', 'line']);
    check('ground plane at |', ['x', 'y', 'z']);
    check('electrode a plate center (0, 0, 0) mm size (1, 1) mm normal |', ['x', 'y', 'z']);
  });

  it('offers nothing inside a comment', () => {
    expect(labels('# electrode |')).toEqual([]);
  });
});
