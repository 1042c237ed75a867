import { describe, expect, it } from 'vitest';
import { analyzeText, findSymbol, hasErrors, symbolAt } from '../../grammar/index';
import { DEFLECTOR, clean, near } from './check';

describe('analysis of the example scene into SI', () => {
  const a = analyzeText(DEFLECTOR);
  const scene = a.scene;

  it('reads settings: title, space, medium, mesh, limit', () => {
    expect(scene.title).toBe('Electrostatic deflector bench');
    expect(scene.space).toBe('3d');
    // Air: εr 1.0006, about 3 kV/mm (common practice, rough guide).
    expect(scene.medium).toEqual({ name: 'air', permittivity: 1.0006, strength: 3e6, density: 1 });
    expect(scene.mesh).toEqual({ kind: 'size', size: 0.006 });
    expect(scene.limit!.field).toBe(1.5e6); // 1.5 kV/mm = 1.5e6 V/m
  });

  it('turns lets and tuple units into metres and volts', () => {
    const upper = scene.electrodes[0];
    expect(upper.name).toBe('upper');
    expect(upper.shape).toEqual({ kind: 'plate', center: [0, 0, 0.02], size: [0.16, 0.06], normal: 'z' });
    expect(upper.drive).toEqual({ kind: 'potential', value: 4000 });
    expect(scene.electrodes[1].drive).toEqual({ kind: 'potential', value: -4000 });
    expect(scene.electrodes[2].shape).toEqual({ kind: 'cylinder', from: [-0.15, 0, -0.09], to: [-0.15, 0, 0.09], radius: 0.012, hollow: false });
    expect(scene.electrodes[2].drive).toEqual({ kind: 'floating' });
  });

  it('reads ground planes, charges, slices and probes', () => {
    expect(scene.groundPlanes.map((g) => [g.axis, g.at])).toEqual([['z', -0.12]]);
    expect(scene.charges).toHaveLength(1);
    const beam = scene.charges[0];
    expect(beam.kind).toBe('line');
    if (beam.kind === 'line') {
      expect(beam.from).toEqual([-0.2, 0, 0]);
      near(beam.density, -0.2e-9);
    }
    expect(scene.slices[0]).toMatchObject({ plane: 'xz', at: 0, from: [-0.22, -0.13], to: [0.22, 0.13], cells: 220 });
    expect(scene.probes[0]).toMatchObject({ kind: 'line', name: 'midline', from: [0, 0, -0.02], to: [0, 0, 0.02], samples: 100 });
  });

  it('has no syntax or meaning diagnostics (VS1xx, VS2xx)', () => {
    expect(a.diagnostics.filter((d) => /^VS[12]/.test(d.code))).toEqual([]);
  });

  it('lists every let with its value and every use of it', () => {
    const gap = findSymbol(a.symbols, 'gap')!;
    expect(gap.kind).toBe('let');
    expect(gap.value).toEqual({ si: 0.04, dim: [1, 0, 0] });
    expect(gap.references).toHaveLength(4);
    expect(gap.nameRange).toEqual({ start: { line: 5, character: 4 }, end: { line: 5, character: 7 } });
    expect(symbolAt(a.symbols, { line: 8, character: 37 })?.name).toBe('gap');
    expect(a.symbols.entries.map((e) => `${e.kind}:${e.name}`)).toEqual([
      'let:gap', 'let:drive', 'electrode:upper', 'electrode:lower', 'electrode:shield', 'charge:beam', 'probe:midline',
    ]);
  });
});

describe('analysis rules', () => {
  it('converts 150 mm to 0.15 m and 2.5 kV/mm to 2.5e6 V/m', () => {
    const a = clean('let d = 150 mm\nlet e = 2.5 kV/mm');
    expect(a.symbols.entries.map((e) => e.value!.si)).toEqual([0.15, 2.5e6]);
  });

  it('applies a unit after a tuple to every component', () => {
    const a = clean('electrode e sphere center (1, -2, 3.5) mm radius 1 mm floating');
    expect(a.scene.electrodes[0].shape).toMatchObject({ center: [0.001, -0.002, 0.0035] });
  });

  it('accepts a bare 0 where any dimension is wanted', () => {
    const a = clean('electrode e sphere center (0, 0, 0) radius 1 mm potential 0\nlet w = 0 + 5 mm');
    expect(a.scene.electrodes[0].drive).toEqual({ kind: 'potential', value: 0 });
    expect(findSymbol(a.symbols, "w")!.value).toEqual({ si: 0.005, dim: [1, 0, 0] });
  });

  it('evaluates sqrt, min, max and abs with dimensions', () => {
    const a = clean('let s = sqrt(16 mm * 4 mm)\nlet lo = min(3 mm, 2 mm, 5 mm)\nlet hi = max(1 kV, 2 kV)\nlet m = abs(-4 nC)');
    expect(a.symbols.entries.map((e) => e.value!.si)).toEqual([0.008, 0.002, 2000, 4e-9]);
    expect(findSymbol(a.symbols, 's')!.value!.dim).toEqual([1, 0, 0]);
  });

  it('normalises normals and axes, and leaves a zero vector as zero', () => {
    const a = analyzeText('electrode d disc center (0, 0, 0) normal (3, 0, 4) radius 1 mm floating\ncharge r ring center (0, 0, 0) axis (0, 0, 0) radius 1 mm density 1 nC/m');
    expect(a.scene.electrodes[0].shape).toMatchObject({ normal: [0.6, 0, 0.8] });
    expect(a.scene.charges[0]).toMatchObject({ axis: [0, 0, 0] });
  });

  it('names media with their permittivity and strength; a custom medium takes its own', () => {
    // Common practice figures: sf6 1.002 and about 8.9 kV/mm at 1 bar; oil 2.2 and about 10 kV/mm.
    expect(clean('medium sf6').scene.medium).toEqual({ name: 'sf6', permittivity: 1.002, strength: 8.9e6, density: 1 });
    expect(clean('medium oil').scene.medium).toEqual({ name: 'oil', permittivity: 2.2, strength: 1e7, density: 1 });
    expect(clean('medium vacuum').scene.medium).toEqual({ name: 'vacuum', permittivity: 1, strength: null, density: 1 });
    expect(clean('medium permittivity 4.5 strength 20 kV/mm').scene.medium).toEqual({ name: null, permittivity: 4.5, strength: 2e7, density: 1 });
    expect(clean('medium air density 0.95').scene.medium.density).toBe(0.95);
  });

  it('defaults to 3d, vacuum, the normal mesh preset and no title', () => {
    const s = clean('').scene;
    expect([s.space, s.medium.name, s.mesh, s.title, s.limit]).toEqual(['3d', 'vacuum', { kind: 'preset', preset: 'normal' }, null, null]);
  });

  it('builds axisymmetric shapes, closed and open revolve profiles, and rings', () => {
    const a = clean(`space axisymmetric
electrode cap sphere center (0, 72) mm radius 16 mm potential 36 kV
electrode can revolve (0, 0) (20, 0) (20, 30) (0, 30) mm hollow potential 0
electrode lip revolve (40, 0) mm (40, 10) mm floating
charge ions ring at (30, 110) mm density 0.2 nC/m
charge tip point at (0, 150) mm value 1 pC
slice from (0, -10) mm to (50, 50) mm`);
    const [cap, can, lip] = a.scene.electrodes;
    expect(cap.shape).toEqual({ kind: 'sphere', center: [0, 0.072], radius: 0.016, hollow: false });
    // A unit after the last profile point applies to the points written without one.
    expect(can.shape).toEqual({ kind: 'revolve', points: [[0, 0], [0.02, 0], [0.02, 0.03], [0, 0.03]], closed: true, hollow: true });
    expect(lip.shape).toMatchObject({ kind: 'revolve', closed: false, hollow: false });
    expect(a.scene.charges[0]).toMatchObject({ kind: 'ring', at: [0.03, 0.11] });
    expect(a.scene.slices[0]).toMatchObject({ plane: 'rz', at: 0, cells: 100 });
  });

  it('builds planar shapes; a planar electrode charge and point charge are per metre', () => {
    const a = clean(`space planar
electrode bar rect center (0, 0) mm size (10, 4) mm charge 3 nC/m
electrode tri polygon (0, 20) (10, 20) (5, 30) (0, 20) mm floating
electrode s strip from (-5, -20) mm to (5, -20) mm potential 1 kV
charge w point at (0, 15) mm density 1 nC/m
ground plane at y = -40 mm`);
    expect(a.scene.electrodes[0].drive).toEqual({ kind: 'charge', value: 3e-9 });
    // A repeated first point is dropped: a polygon closes itself.
    expect(a.scene.electrodes[1].shape).toEqual({ kind: 'polygon', points: [[0, 0.02], [0.01, 0.02], [0.005, 0.03]], hollow: false });
    expect(a.scene.charges[0]).toMatchObject({ kind: 'point', at: [0, 0.015], density: 1e-9 });
    expect(a.scene.groundPlanes[0]).toMatchObject({ axis: 'y', at: -0.04 });
    expect(a.scene.slices).toEqual([]);
  });

  it('counts each use of a let in a profile once', () => {
    const a = clean('space axisymmetric\nlet w = 20 mm\nelectrode can revolve (0, 0) mm (w, 0) (w, w) (0, w) hollow floating');
    expect(findSymbol(a.symbols, 'w')!.references).toHaveLength(4);
  });

  it('lists sweeps apart from the Scene', () => {
    const a = analyzeText('let v = 1 kV\nsweep v from 1 kV to 9 kV steps 5');
    expect(a.sweeps).toEqual([expect.objectContaining({ name: 'v', from: 1000, to: 9000, steps: 5, dim: [0, 1, 0] })]);
    expect(hasErrors(a.diagnostics)).toBe(false);
    expect(findSymbol(a.symbols, 'v')!.references).toHaveLength(1);
  });

  it('keeps going past a broken statement: later ones still reach the Scene', () => {
    const a = analyzeText('electrode a sphere center (0, 0, 0) radius 5 kV floating\nelectrode b sphere center (0, 0, 50) mm radius 5 mm floating');
    expect(a.scene.electrodes.map((e) => e.name)).toEqual(['b']);
  });
});
