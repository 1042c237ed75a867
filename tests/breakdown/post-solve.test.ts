// Breakdown checks after a solve (server/src/engine/post-solve.ts): corona onset by Peek's law on
// round electrodes in air (VS410), the Paschen estimate for near-uniform gaps (VS411), and the margins
// in the Result and the report. Scenes are small and mostly 2d, so the suite stays fast.
import { describe, expect, it } from 'vitest';
import { analyzeText, DIAGNOSTIC_CODES } from '../../grammar/index';
import { solveScene } from '../../server/src/engine/index';
import type { Result } from '../../server/src/engine/result';
import { renderReport } from '../../server/src/cli/report';
import { nearUniformGaps, roundRadius } from '../../server/src/engine/post-solve';

function solve(text: string): { result: Result; codes: string[]; scene: ReturnType<typeof analyzeText>['scene'] } {
  const analysis = analyzeText(text);
  expect(analysis.diagnostics.filter((d) => d.severity === 'error')).toEqual([]);
  const result = solveScene(analysis.scene)!;
  return { result, codes: result.diagnostics.map((d) => d.code), scene: analysis.scene };
}

// Peek's law, parallel-wire constants g0 = 30 kV/cm (peak), c = 0.301 cm^½ (F. W. Peek, Dielectric
// Phenomena in High-Voltage Engineering, 1929, as server/src/engine/breakdown.ts cites), written out
// here by hand: g = g0·δ·(1 + c/√(δ·r)), r in cm, g in kV/cm; ×1e5 for V/m.
const peek = (rCm: number, delta: number) => 30 * delta * (1 + 0.301 / Math.sqrt(delta * rCm)) * 1e5;

// Paschen's law for air, A = 15 /(cm·Torr), B = 365 V/(cm·Torr), γ = 0.01 (Bazelyan and Raizer, Spark
// Discharge, as breakdown.ts cites): V = B·pd / (ln(A·pd) − ln(ln(1 + 1/γ))), pd in Torr·cm.
const paschen = (pTorr: number, dCm: number) => (365 * pTorr * dCm) / (Math.log(15 * pTorr * dCm) - Math.log(Math.log(1 + 1 / 0.01)));

describe('corona onset on a lone sphere in air (Peek)', () => {
  // An isolated sphere of radius a at potential V has the uniform surface field E = V/a (textbook
  // electrostatics, references.md). With a = 1 cm, Peek's onset is g = 30·(1 + 0.301) = 39.03 kV/cm,
  // reached at V = g·a = 39.03 kV.
  const a = 0.01;
  const g1 = peek(1, 1);
  const sphere = (volts: number, medium = 'medium air') =>
    solve(`space axisymmetric\n${medium}\nelectrode s sphere center (0, 0) radius 10 mm potential ${volts} V`);

  it('warns (VS410) just above the onset and not just below, with the margin g/E', () => {
    for (const [f, warned] of [[0.97, false], [1.03, true]] as const) {
      const V = f * g1 * a;
      const { result, codes } = sphere(V);
      expect(codes.includes('VS410'), `V = ${V} V`).toBe(warned);
      const b = result.electrodes[0].breakdown!;
      expect(b.coronaOnset! / g1).toBeCloseTo(1, 9);
      expect(b.coronaRadius).toBe(a);
      // margin = g/E with E = V/a; the axisymmetric sphere's peak field is accurate to well under 0.5 %.
      expect(Math.abs(b.coronaMargin! / (g1 / (V / a)) - 1)).toBeLessThan(0.005);
    }
  });

  it('a relative density of 0.8 lowers the onset as the formula says (to about 32.1 kV/cm)', () => {
    const V = 0.9 * g1 * a; // below the onset at δ = 1, above it at δ = 0.8
    const g08 = peek(1, 0.8); // 30·0.8·(1 + 0.301/√0.8) = 32.08 kV/cm
    expect(g08 / 1e5).toBeCloseTo(32.077, 2);
    const normal = sphere(V);
    const thin = sphere(V, 'medium air density 0.8');
    expect(normal.codes).not.toContain('VS410');
    expect(thin.codes).toContain('VS410');
    expect(thin.result.electrodes[0].breakdown!.coronaOnset! / g08).toBeCloseTo(1, 9);
    const message = thin.result.diagnostics.find((d) => d.code === 'VS410')!.message;
    expect(message).toMatch(/relative density 0\.8/);
    expect(message).toMatch(/not an allowable/);
  });

  it('a 3d sphere on a coarse mesh gives the same margin within its accuracy (3 %)', () => {
    const V = 30e3;
    const { result, codes } = solve(`medium air\nmesh coarse\nelectrode s sphere center (0, 0, 0) radius 10 mm potential ${V} V`);
    expect(codes).not.toContain('VS410');
    const b = result.electrodes[0].breakdown!;
    expect(b.coronaOnset! / g1).toBeCloseTo(1, 9);
    expect(Math.abs(b.coronaMargin! / (g1 / (V / a)) - 1)).toBeLessThan(0.03);
  });

  it('gives no corona figure outside air, and none for a shape that is not round', () => {
    const oil = sphere(60e3, 'medium oil');
    expect(oil.codes).not.toContain('VS410');
    expect(oil.result.electrodes[0].breakdown!.coronaOnset).toBeNull();
    expect(oil.result.gaps).toEqual([]);
    const disc = solve('space axisymmetric\nmedium air\nelectrode d disc center (0, 0) radius 10 mm potential 60 kV');
    expect(disc.result.electrodes[0].breakdown!.coronaOnset).toBeNull();
    expect(disc.codes).not.toContain('VS410');
  });
});

describe('corona onset on the inner conductor of a coaxial pair (planar circle)', () => {
  // Coaxial cylinders r < R: peak field U/(r·ln(R/r)) on the inner one (textbook electrostatics,
  // references.md). r = 5 mm: Peek's onset 30·(1 + 0.301/√0.5) = 42.77 kV/cm.
  it('warns only when U/(r·ln(R/r)) passes Peek at r = 0.5 cm', () => {
    const r = 0.005, R = 0.05;
    const g = peek(0.5, 1);
    const Uon = g * r * Math.log(R / r);
    for (const [f, warned] of [[0.96, false], [1.04, true]] as const) {
      const { result, codes } = solve(
        `space planar\nmedium air\nmesh coarse\nelectrode inner circle center (0, 0) radius 5 mm potential ${f * Uon} V\n` +
          `electrode outer circle center (0, 0) radius 50 mm hollow potential 0 V`,
      );
      expect(codes.includes('VS410')).toBe(warned);
      const b = result.electrodes[0].breakdown!;
      expect(Math.abs(b.coronaMargin! * f - 1)).toBeLessThan(0.01);
    }
  });
});

describe('Paschen estimate for a near-uniform gap', () => {
  // A 10 mm sphere whose surface is 1 mm over a ground plane: d/R = 0.1, a near-uniform gap.
  // At δ = 1 (760 Torr at 20 °C), pd = 76 Torr·cm and V_b = 365·76/(ln(1140) − ln(ln 101)) ≈ 5.03 kV.
  const Vb = paschen(760, 0.1);
  const overPlane = (volts: number, gapMm = 1) =>
    solve(`space axisymmetric\nmedium air\nelectrode s sphere center (0, ${10 + gapMm}) mm radius 10 mm potential ${volts} V\nground plane at z = 0`);

  it('warns (VS411) when |ΔV| exceeds V_b, not below, and reports the gap and margin', () => {
    expect(Vb).toBeGreaterThan(5000);
    expect(Vb).toBeLessThan(5070);
    for (const [f, warned] of [[0.95, false], [1.05, true]] as const) {
      const { result, codes } = overPlane(f * Vb);
      expect(codes.includes('VS411')).toBe(warned);
      expect(result.gaps).toHaveLength(1);
      const gap = result.gaps![0];
      expect(gap.between).toEqual(['s', 'ground plane']);
      expect(gap.distance).toBeCloseTo(1e-3, 12);
      expect(gap.paschen / Vb).toBeCloseTo(1, 9);
      expect(gap.margin! * f).toBeCloseTo(1, 9);
      // At 1 atm and 1 mm the reduced field (about 66 V/(cm·Torr)) lies outside the fit: flagged.
      expect(gap.paschenValid).toBe(false);
      if (warned) expect(result.diagnostics.find((d) => d.code === 'VS411')!.message).toMatch(/outside the range Paschen's constants were fitted over/);
    }
  });

  // Sphere of radius a at potential V, centre at height h over a grounded plane: images (Jackson,
  // Classical Electrodynamics, sec. 2.2–2.3). q1 = 4πε0·a·V at the centre; each charge q_k at height z_k
  // has a plane image −q_k at −z_k, whose sphere image is q_k·a/(h + z_k) at height h − a²/(h + z_k).
  // Every charge and image pushes the field at the sphere's lowest point (height h − a) the same way.
  function peakOverPlane(a: number, h: number, V: number): number {
    let q = a * V; // in units of 4πε0
    let z = h;
    let E = 0;
    const p = h - a;
    for (let k = 0; k < 400 && q > 1e-18 * a * V; k++) {
      E += q / (z - p) ** 2 + q / (z + p) ** 2;
      const D = h + z;
      [q, z] = [(q * a) / D, h - (a * a) / D];
    }
    return E;
  }

  it('near-uniform criterion (d ≤ R/5): the solved peak field is 1.07·V/d at R/10 and 1.14·V/d at R/5, as the image series says', () => {
    for (const [gapMm, factor] of [[1, 1.068], [2, 1.137]] as const) {
      const V = 1000, d = gapMm * 1e-3, a = 0.01;
      const series = peakOverPlane(a, a + d, V);
      expect(series * d / V).toBeCloseTo(factor, 3);
      const { result } = overPlane(V, gapMm);
      expect(Math.abs(result.electrodes[0].maxField / series - 1)).toBeLessThan(0.005);
      expect(result.gaps).toHaveLength(1);
    }
  });

  it('does not treat a gap of half the radius as near-uniform', () => {
    const { result, codes } = overPlane(20e3, 5);
    expect(result.gaps).toEqual([]);
    expect(codes).not.toContain('VS411');
  });

  it('two planar plates 1 mm apart: warns once |ΔV| passes V_b of the gap', () => {
    for (const [f, warned] of [[0.95, false], [1.05, true]] as const) {
      const half = (f * Vb) / 2;
      const { result, codes } = solve(
        `space planar\nmedium air\nmesh coarse\nelectrode top rect center (0, 5.5) mm size (40, 10) mm potential ${half} V\n` +
          `electrode bottom rect center (0, -5.5) mm size (40, 10) mm potential ${-half} V`,
      );
      expect(codes.includes('VS411')).toBe(warned);
      expect(result.gaps).toHaveLength(1);
      expect(result.gaps![0].distance).toBeCloseTo(1e-3, 9);
      expect(result.gaps![0].voltage).toBeCloseTo(f * Vb, 6);
    }
  });
});

describe('margins in the report', () => {
  it('prints a breakdown section with the margins, the gap and the caution', () => {
    const text = 'space axisymmetric\nmedium air\nlimit field 5 kV/mm\nelectrode s sphere center (0, 11) mm radius 10 mm potential 4 kV\nground plane at z = 0';
    const { result, scene } = solve(text);
    const b = result.electrodes[0].breakdown!;
    expect(b.limitMargin! * result.electrodes[0].maxField).toBeCloseTo(5e6, 0);
    expect(b.strengthMargin! * result.electrodes[0].maxField).toBeCloseTo(3e6, 0);
    const report = renderReport({ file: 'gap.vscape', scene, result, diagnostics: [] });
    expect(report).toContain('Breakdown checks');
    expect(report).toContain('s – ground plane');
    expect(report).toContain('Design aid, not an allowable; follow applicable standards, local codes and licensed practice.');
    expect(report).toMatch(/5\.035 kV/);
  });
});

describe('registry examples', () => {
  it.each(['VS410', 'VS411'])('%s is raised by its own registry example, as a warning with the caution', (code) => {
    const { result, codes } = solve(DIAGNOSTIC_CODES[code].example);
    expect(codes).toContain(code);
    const d = result.diagnostics.find((x) => x.code === code)!;
    expect(d.severity).toBe('warning');
    expect(d.message).toMatch(/Design aid, not an allowable; follow applicable standards, local codes and licensed practice\.$/);
  });
});

describe('radius of curvature used for Peek', () => {
  it('is the sphere and cylinder radius, the torus minor radius and the circle radius; other shapes get none', () => {
    const radiusOf = (text: string) => {
      const { scene } = analyzeText(text);
      return roundRadius(scene, 0);
    };
    expect(radiusOf('electrode e sphere center (0, 0, 0) radius 7 mm potential 1 kV')).toBeCloseTo(0.007, 12);
    expect(radiusOf('electrode e cylinder from (0, 0, 0) to (0, 0, 50) mm radius 3 mm potential 1 kV')).toBeCloseTo(0.003, 12);
    expect(radiusOf('electrode e torus center (0, 0, 0) axis z major 40 mm minor 4 mm potential 1 kV')).toBeCloseTo(0.004, 12);
    expect(radiusOf('space axisymmetric\nelectrode e torus center (0, 0) major 40 mm minor 6 mm potential 1 kV')).toBeCloseTo(0.006, 12);
    expect(radiusOf('space axisymmetric\nelectrode e cylinder from (0, 0) to (0, 9) mm radius 2 mm potential 1 kV')).toBeCloseTo(0.002, 12);
    expect(radiusOf('space planar\nelectrode e circle center (0, 0) radius 5 mm potential 1 kV')).toBeCloseTo(0.005, 12);
    expect(radiusOf('electrode e box center (0, 0, 0) size (1, 2, 3) mm potential 1 kV')).toBeNull();
    expect(radiusOf('electrode e plate center (0, 0, 0) size (10, 10) mm normal z potential 1 kV')).toBeNull();
    expect(radiusOf('space planar\nelectrode e polygon (0, 0) mm (5, 0) mm (0, 5) mm potential 1 kV')).toBeNull();
  });
});

describe('which gaps are near-uniform (geometry only, no solve)', () => {
  it('finds plate–plate, cylinder–cylinder and torus–disc gaps at their exact widths, and leaves out a gap split by a third electrode', () => {
    const { scene } = analyzeText(
      [
        'medium air',
        'electrode p1 plate center (0, 0, 1) mm size (100, 100) mm normal z potential 1 kV',
        'electrode p2 plate center (0, 0, -1) mm size (100, 100) mm normal z potential -1 kV',
        'electrode c1 cylinder from (-50, 0, 200) mm to (50, 0, 200) mm radius 10 mm potential 3 kV',
        'electrode c2 cylinder from (-50, 0, 221) mm to (50, 0, 221) mm radius 10 mm potential 0 V',
        'electrode t torus center (0, 0, 400) mm axis z major 40 mm minor 10 mm potential 2 kV',
        'electrode d disc center (0, 0, 411.5) mm normal z radius 60 mm potential 0 V',
        'ground plane at z = -3 mm',
      ].join('\n'),
    );
    const potentials = scene.electrodes.map((e) => ({ potential: e.drive.kind === 'potential' ? e.drive.value : 0 }));
    const gaps = nearUniformGaps(scene, potentials as never).map((g) => [g.between.join('|'), Number((g.distance * 1e3).toFixed(9)), g.voltage]);
    // p1 is 4 mm over the ground plane, but p2 lies between them: that gap is split and not listed.
    expect(gaps).toEqual([
      ['p1|p2', 2, 2000],
      ['c1|c2', 1, 3000],
      ['t|d', 1.5, 2000],
      ['p2|ground plane', 2, 1000],
    ]);
  });
});
