// The SVG picture of the slices: a standalone document that a strict XML parser accepts, with band
// fills, equipotential lines, outlines, ground traces, a legend and a scale bar.
import { describe, expect, it } from 'vitest';
import { asinhLevels, planLevels } from '../../server/src/cli/contour-levels';
import { niceStep, renderSvg } from '../../server/src/cli/svg';
import { groundTraces, maskOutlines, sceneOutlines, thinOutlines } from '../../server/src/cli/slice-outlines';
import { SPHERE_VOLTS, sphereResult, sphereScene, sphereSlice } from './fixtures';
import { parseXml } from './xml';

describe('renderSvg', () => {
  const svg = renderSvg({ title: 'Lone sphere <test & check>', subtitle: '3d · air', result: sphereResult() });
  const elements = parseXml(svg);

  it('is well-formed standalone SVG in the SVG namespace', () => {
    expect(elements[0].name).toBe('svg');
    expect(elements[0].attributes.xmlns).toBe('http://www.w3.org/2000/svg');
    expect(svg).toContain('Lone sphere &lt;test &amp; check&gt;');
  });

  it('draws one equipotential path per level, with world coordinates mapped into the plot', () => {
    const lines = elements.filter((e) => e.attributes.class === 'equipotential');
    expect(lines.length).toBeGreaterThan(5);
    for (const l of lines) expect(l.attributes.d).toMatch(/^M[\d.]+ [\d.]+L/);
  });

  it('draws each level where the closed form puts it: the φ line of a sphere held at V is a circle of radius V·a/φ', () => {
    // Isolated sphere: φ = V·a/r outside (references.md "Closed forms"). The plot is 620 px for 800 mm.
    const plan = planLevels(sphereResult());
    const pxPerMetre = 620 / 0.8;
    const lines = elements.filter((e) => e.attributes.class === 'equipotential');
    // Levels whose circle lies wholly inside the 800 × 600 mm slice: radius 0.1..0.28 m.
    const checked = plan.levels.filter((v) => (SPHERE_VOLTS * 0.1) / v < 0.28);
    expect(checked.length).toBeGreaterThan(3);
    for (const level of checked) {
      const line = lines.find((e) => Number(e.attributes['data-level']) === level);
      expect(line).toBeDefined();
      const pts = [...line!.attributes.d.matchAll(/[ML]([\d.]+) ([\d.]+)/g)].map((m) => [Number(m[1]), Number(m[2])]);
      const cx = pts.reduce((s, p) => s + p[0], 0) / pts.length;
      const cy = pts.reduce((s, p) => s + p[1], 0) / pts.length;
      const radius = pts.reduce((s, p) => s + Math.hypot(p[0] - cx, p[1] - cy), 0) / pts.length / pxPerMetre;
      // Within half a grid cell (5 mm) of V·a/φ.
      expect(Math.abs(radius - (SPHERE_VOLTS * 0.1) / level)).toBeLessThan(0.005);
    }
  });

  it('fills bands, outlines the electrode, traces the ground plane and adds a legend and a scale bar', () => {
    expect(elements.filter((e) => e.attributes.class === 'band').length).toBeGreaterThan(5);
    expect(elements.some((e) => e.attributes.class === 'electrode' && e.attributes['data-electrode'] === 'dome')).toBe(true);
    expect(elements.some((e) => e.attributes.class === 'ground')).toBe(true);
    expect(elements.some((e) => e.attributes.class === 'legend')).toBe(true);
    expect(elements.some((e) => e.attributes.class === 'scale-bar')).toBe(true);
    expect(svg).toMatch(/>\d+ mm<\/text>/);
    expect(svg).toContain('High voltage kills');
  });

  it('stacks one panel per slice', () => {
    const result = sphereResult();
    result.slices.push({ ...sphereSlice(), plane: 'xy' });
    const two = parseXml(renderSvg({ title: 'two', result }));
    expect(two.filter((e) => e.attributes.class === 'slice').length).toBe(2);
  });

  it('still makes a valid picture for a scene without slices', () => {
    const result = sphereResult();
    result.slices = [];
    const none = renderSvg({ title: 'none', result });
    expect(() => parseXml(none)).not.toThrow();
    expect(none).toContain('no slice');
  });
});

describe('contour levels', () => {
  it('spreads levels evenly in asinh(φ/φ0)', () => {
    const phi0 = 100;
    const levels = asinhLevels(0, 10_000, phi0, 8);
    const t = levels.map((v) => Math.asinh(v / phi0));
    const steps = t.slice(1).map((x, i) => x - t[i]);
    // Even to within the 2-significant-digit rounding of each level.
    for (const s of steps) expect(Math.abs(s - steps[0])).toBeLessThan(0.06);
    expect(levels.every((v) => v > 0 && v < 10_000)).toBe(true);
  });

  it('covers every electrode potential and 0 V', () => {
    const plan = planLevels(sphereResult());
    expect(plan.lo).toBeLessThanOrEqual(0);
    expect(plan.hi).toBeGreaterThanOrEqual(SPHERE_VOLTS);
  });

  it('picks round scale-bar steps', () => {
    expect(niceStep(0.8, 5)).toBeCloseTo(0.2, 12);
    expect(niceStep(0.44, 5)).toBeCloseTo(0.1, 12);
    expect(niceStep(3, 6)).toBeCloseTo(0.5, 12);
  });
});

describe('outlines cut from the scene when the solve gives none', () => {
  it('cuts a sphere of radius a at distance d from its centre in a circle of radius √(a² − d²)', () => {
    const scene = sphereScene();
    const slice = { ...sphereSlice(), outlines: [], at: 0.06 }; // 60 mm off the centre of a 100 mm sphere: an 80 mm circle
    const [outline] = sceneOutlines(scene, slice);
    expect(outline.closed).toBe(true);
    const p = outline.paths[0];
    for (let k = 0; k < p.length; k += 2) expect(Math.hypot(p[k], p[k + 1])).toBeCloseTo(0.08, 12);
  });

  it('draws a hollow shell as an open stroke, so what is inside shows', () => {
    const scene = sphereScene();
    scene.electrodes[0].shape = { kind: 'box', center: [0, 0, 0], size: [0.2, 0.2, 0.2], hollow: true };
    const [outline] = sceneOutlines(scene, { ...sphereSlice(), outlines: [] });
    expect(outline.closed).toBe(false);
    expect(outline.paths[0]).toEqual([-0.1, -0.1, 0.1, -0.1, 0.1, 0.1, -0.1, 0.1, -0.1, -0.1]);
  });

  it('cuts a disc across the slice in a chord of half-length √(R² − δ²)', () => {
    const scene = sphereScene();
    // A disc of radius 50 mm in the plane z = 0; the xz slice at y = 30 mm meets it in a chord of half-length 40 mm.
    scene.electrodes[0].shape = { kind: 'disc', center: [0, 0, 0], normal: [0, 0, 1], radius: 0.05 };
    const [outline] = thinOutlines(scene, { ...sphereSlice(), outlines: [], at: 0.03 });
    expect(outline.closed).toBe(false);
    const [u0, v0, u1, v1] = outline.paths[0];
    expect(Math.hypot(u1 - u0, v1 - v0) / 2).toBeCloseTo(0.04, 12);
    expect(v0).toBeCloseTo(0, 12);
  });

  it('traces a solid from the inside grid when no exact cut is known', () => {
    const traced = maskOutlines(sphereSlice());
    expect(traced).toHaveLength(1);
    const p = traced[0].paths[0];
    // The traced ring follows the 100 mm sphere to within a grid cell (10 mm).
    for (let k = 0; k < p.length; k += 2) expect(Math.abs(Math.hypot(p[k], p[k + 1]) - 0.1)).toBeLessThan(0.01);
  });

  it('puts a ground plane across the slice', () => {
    const scene = sphereScene();
    scene.groundPlanes = [{ axis: 'z', at: -0.25, range: scene.limit!.range }];
    expect(groundTraces(scene, sphereSlice())).toEqual([[-0.4, -0.25, 0.4, -0.25]]);
  });
});

describe('the far side of a ground plane', () => {
  it('is veiled on the side without conductors', () => {
    // The fixture's ground trace runs at v = −0.25 m; the sphere sits above it, so the strip below is veiled.
    const svg = renderSvg({ title: 'veil', result: sphereResult() });
    const veil = parseXml(svg).find((e) => e.attributes.class === 'beyond-ground');
    expect(veil).toBeDefined();
    // 620 px for 0.8 m: the 0.05 m strip below the plane is 38.75 px high, at the bottom of the plot.
    expect(Number(veil!.attributes.height)).toBeCloseTo(38.8, 0);
  });
});
