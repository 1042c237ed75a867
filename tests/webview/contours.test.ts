// Contours and field lines of the preview on a real solve, held against the closed form of an isolated
// sphere: outside it φ = V·a/r and the field is radial (references.md, "Closed forms": isolated sphere;
// Jackson, Classical Electrodynamics, ch. 1).
import { beforeAll, describe, expect, it } from 'vitest';
import { contourGrid, outlinesFromMask } from '../../client/webview/contours';
import { fieldLines } from '../../client/webview/field-lines';
import { fromPx, makeFrame } from '../../client/webview/geometry';
import { potentialLevels } from '../../client/webview/levels';
import type { SliceResult } from '../../server/src/engine/result';
import { SPHERE, SPHERE_SCENE, solveText, type Solved } from './support';

let solved: Solved;
let slice: SliceResult;
beforeAll(() => {
  solved = solveText(SPHERE_SCENE);
  slice = solved.result.slices[0];
});

describe('equipotentials of a lone sphere', () => {
  it('lie on circles of radius a·V/φ, within 3 % or one grid cell', () => {
    const frame = makeFrame(slice);
    const levels = potentialLevels(2.6e3, 9.5e3, 6);
    const { isolines } = contourGrid(slice, frame, slice.potential, levels);
    const cell = slice.du;
    let checked = 0;
    for (const iso of isolines) {
      const expected = (SPHERE.radius * SPHERE.potential) / iso.level;
      // A closed ring repeats its first point at the end; count it once.
      const unique = iso.lines.map((l) => (l.length > 2 && l[0][0] === l[l.length - 1][0] && l[0][1] === l[l.length - 1][1] ? l.slice(1) : l));
      const points = unique.flat().map(([x, y]) => fromPx(frame, x, y));
      expect(points.length).toBeGreaterThan(20);
      const radii = points.map(([u, v]) => Math.hypot(u, v));
      const mean = radii.reduce((s, r) => s + r, 0) / radii.length;
      expect(Math.abs(mean - expected)).toBeLessThan(Math.max(0.03 * expected, cell));
      // Round, not lopsided: every point within two cells of the mean radius.
      for (const r of radii) expect(Math.abs(r - mean)).toBeLessThan(2 * cell);
      // Centred on the sphere to a twentieth of a cell: catches a half-cell slip in the grid-to-world mapping.
      const cu = points.reduce((s, p) => s + p[0], 0) / points.length;
      const cv = points.reduce((s, p) => s + p[1], 0) / points.length;
      expect(Math.hypot(cu, cv)).toBeLessThan(0.05 * cell);
      checked++;
    }
    expect(checked).toBe(levels.length);
  });

  it('has no isoline along the grid border (d3-contour closing edges are dropped)', () => {
    const frame = makeFrame(slice);
    const { isolines } = contourGrid(slice, frame, slice.potential, [2.6e3]);
    // The 2.6 kV circle (r = 192 mm) fits inside the ±200 mm square: only the circle is drawn.
    const pts = isolines[0].lines.flat().map(([x, y]) => fromPx(frame, x, y));
    for (const [u, v] of pts) expect(Math.max(Math.abs(u), Math.abs(v))).toBeLessThan(0.2 - slice.du / 2 + 1e-9);
  });
});

describe('field lines of a lone sphere', () => {
  it('start on the sphere and run radially outward (the field of a sphere is radial)', () => {
    const withOutline = { ...slice, outlines: [...slice.outlines, ...outlinesFromMask(slice)] };
    const lines = fieldLines(withOutline, solved.result.electrodes, { total: 24 });
    expect(lines.length).toBeGreaterThanOrEqual(20);
    for (const line of lines) {
      const [u0, v0] = line.points[0];
      expect(Math.abs(Math.hypot(u0, v0) - SPHERE.radius)).toBeLessThan(2 * slice.du);
      const [ua, va] = line.points[Math.floor(line.points.length / 2)];
      const [ub, vb] = line.points[line.points.length - 1];
      // Outward: the line ends farther out than it starts, at the edge of the picture.
      expect(Math.hypot(ub, vb)).toBeGreaterThan(0.18);
      // Radial within 4° between the middle and the end of the line.
      const along = Math.atan2(vb - va, ub - ua);
      const radial = Math.atan2(vb, ub);
      const diff = Math.abs(Math.atan2(Math.sin(along - radial), Math.cos(along - radial)));
      expect(diff).toBeLessThan((4 * Math.PI) / 180);
    }
  });

  it('traces the sphere cross-section from the inside mask as a circle of radius a within one cell', () => {
    const outlines = outlinesFromMask(slice);
    if (slice.outlines.some((o) => o.electrode === 0)) {
      expect(outlines.length).toBe(0); // the engine gave one: nothing to trace
      return;
    }
    expect(outlines.length).toBe(1);
    const flat = outlines[0].paths[0];
    for (let k = 0; k < flat.length; k += 2) {
      expect(Math.abs(Math.hypot(flat[k], flat[k + 1]) - SPHERE.radius)).toBeLessThan(slice.du);
    }
  });
});
