// The slice picture as one self-contained SVG: bands, labelled contours, conductors, ground, field
// lines, peak markers, probes, axes and legend. Every colour is a resolved attribute, so the same SVG
// can be saved as a file.
import type { Result, SliceResult } from '../../server/src/engine/result';
import type { Palette } from './colours';
import { contourGrid, outlinesFromMask, pointAlong, polylineLength, polylinePath } from './contours';
import { fieldLines } from './field-lines';
import { formatField, formatLength, formatPotential, lengthAxisUnit, significant } from './format';
import { axisNames, Frame, insideFrame, makeFrame, projectToSlice, toPx } from './geometry';
import { fieldLevels, potentialLevels, potentialRange, quantile } from './levels';
import { px, svgEl } from './svg';

export type Mode = 'potential' | 'field';

export interface PictureOptions {
  mode: Mode;
  showFieldLines: boolean;
  palette: Palette;
  title: string;
}

export interface Picture {
  svg: SVGSVGElement;
  frame: Frame;
  slice: SliceResult;
  /** Lines of text for things that could not be drawn on this slice (peaks off the picture...). */
  notes: string[];
  /** Number of contour levels drawn. */
  levels: number;
}

const LEGEND_WIDTH = 150;
const BOTTOM = 58;

interface Scale {
  levels: number[];
  values: ArrayLike<number>;
  colour(value: number): string;
  label(value: number): string;
  title: string;
}

function potentialScale(result: Result, slice: SliceResult, palette: Palette): Scale {
  const [lo, hi] = potentialRange(
    slice.potential,
    slice.inside,
    result.electrodes.map((e) => e.potential),
  );
  const levels = potentialLevels(lo, hi);
  // Clamp so a singular peak (a free point charge) makes a plateau, not a pile of rings.
  const values = new Float64Array(slice.potential.length);
  for (let i = 0; i < values.length; i++) values[i] = Math.max(lo, Math.min(hi, slice.potential[i]));
  const maxAbs = Math.max(Math.abs(lo), Math.abs(hi)) || 1;
  const phi0 = maxAbs / 10;
  const T = (v: number) => Math.asinh(v / phi0);
  // Zero stays neutral when the potentials have both signs; a one-signed scene uses the whole ramp.
  const shade = (v: number): number => {
    if (lo >= 0 && hi > lo) return 0.12 + (0.88 * (T(v) - T(lo))) / (T(hi) - T(lo));
    if (hi <= 0 && hi > lo) return -0.12 - (0.88 * (T(hi) - T(v))) / (T(hi) - T(lo));
    return T(v) / T(maxAbs);
  };
  return {
    levels,
    values,
    colour: (v) => palette.potentialBand(shade(v)),
    label: (v) => formatPotential(v, 2),
    title: 'Potential',
  };
}

function fieldScale(slice: SliceResult, palette: Palette): Scale {
  const lo = quantile(slice.fieldMagnitude, 0.02, (i) => slice.fieldMagnitude[i] > 0);
  const hi = quantile(slice.fieldMagnitude, 0.995, (i) => slice.fieldMagnitude[i] > 0);
  const levels = fieldLevels(lo, hi);
  const values = new Float64Array(slice.fieldMagnitude.length);
  for (let i = 0; i < values.length; i++) values[i] = Math.min(hi, slice.fieldMagnitude[i]);
  const l0 = Math.log(lo);
  const l1 = Math.log(hi);
  return {
    levels,
    values,
    colour: (v) => palette.fieldBand(l1 > l0 ? (Math.log(Math.max(v, lo)) - l0) / (l1 - l0) : 0),
    label: (v) => formatField(v, 2),
    title: 'Field strength |E|',
  };
}

function drawAxes(g: SVGGElement, f: Frame, slice: SliceResult, palette: Palette): void {
  const [an, bn] = slice.plane === 'rz' ? ['r', 'z'] : axisNames(slice);
  const { unit, scale } = lengthAxisUnit(Math.max(f.u1 - f.u0, f.v1 - f.v0));
  const ticks = (a: number, b: number): number[] => {
    const span = (b - a) * scale;
    const raw = span / 6;
    const mag = 10 ** Math.floor(Math.log10(raw));
    const step = ([1, 2, 5, 10].find((m) => m * mag >= raw) ?? 10) * mag;
    const out: number[] = [];
    for (let t = Math.ceil((a * scale) / step) * step; t <= b * scale + 1e-9 * step; t += step) out.push(t);
    return out;
  };
  svgEl('rect', { x: px(f.left), y: px(f.top), width: px(f.width), height: px(f.height), fill: 'none', stroke: palette.line }, g);
  for (const t of ticks(f.u0, f.u1)) {
    const [x] = toPx(f, t / scale, f.v0);
    const y = f.top + f.height;
    svgEl('line', { x1: px(x), y1: px(y), x2: px(x), y2: px(y + 5), stroke: palette.foreground }, g);
    svgEl('text', { x: px(x), y: px(y + 17), 'text-anchor': 'middle', 'font-size': 11, fill: palette.foreground }, g, significant(t, 4));
  }
  for (const t of ticks(f.v0, f.v1)) {
    const [, y] = toPx(f, f.u0, t / scale);
    svgEl('line', { x1: px(f.left - 5), y1: px(y), x2: px(f.left), y2: px(y), stroke: palette.foreground }, g);
    svgEl('text', { x: px(f.left - 8), y: px(y + 4), 'text-anchor': 'end', 'font-size': 11, fill: palette.foreground }, g, significant(t, 4));
  }
  svgEl('text', { x: px(f.left + f.width / 2), y: px(f.top + f.height + 32), 'text-anchor': 'middle', 'font-size': 12, fill: palette.foreground }, g, `${an} (${unit})`);
  const yl = svgEl('text', { x: 0, y: 0, 'text-anchor': 'middle', 'font-size': 12, fill: palette.foreground }, g, `${bn} (${unit})`);
  yl.setAttribute('transform', `translate(${px(f.left - 46)},${px(f.top + f.height / 2)}) rotate(-90)`);
}

interface LegendItem {
  swatch: 'line' | 'ring' | 'thick';
  colour: string;
  text: string;
}

function drawLegend(g: SVGGElement, f: Frame, scale: Scale, palette: Palette, extra: LegendItem[]): void {
  const x = f.left + f.width + 22;
  const top = f.top + 18;
  svgEl('text', { x: px(x), y: px(f.top + 6), 'font-size': 12, 'font-weight': 600, fill: palette.foreground }, g, scale.title);
  if (scale.levels.length === 0) {
    // Nothing varies enough on this slice to draw levels.
    svgEl('text', { x: px(x), y: px(top + 12), 'font-size': 10.5, fill: palette.foreground }, g, 'no levels: uniform here');
    return;
  }
  const n = scale.levels.length + 1;
  const h = Math.min(22, Math.max(10, (f.height - 60) / n));
  const mids: number[] = [];
  for (let k = 0; k < n; k++) {
    const a = k === 0 ? scale.levels[0] : scale.levels[k - 1];
    const b = k === n - 1 ? scale.levels[n - 2] : scale.levels[k];
    mids.push(k === 0 ? a - Math.abs(a) * 1e-6 - 1e-300 : k === n - 1 ? b + Math.abs(b) * 1e-6 + 1e-300 : (a + b) / 2);
  }
  // Highest values at the top.
  for (let k = 0; k < n; k++) {
    const y = top + (n - 1 - k) * h;
    svgEl('rect', { x: px(x), y: px(y), width: 18, height: px(h), fill: scale.colour(mids[k]), stroke: palette.line, 'stroke-width': 0.5 }, g);
    if (k < n - 1) {
      svgEl('text', { x: px(x + 24), y: px(y + 4), 'font-size': 10.5, fill: palette.foreground }, g, scale.label(scale.levels[k]));
    }
  }
  let y = top + n * h + 22;
  for (const item of extra) {
    if (item.swatch === 'ring') {
      svgEl('circle', { cx: px(x + 9), cy: px(y - 4), r: 4.5, fill: item.colour, stroke: item.colour }, g);
    } else {
      svgEl('line', { x1: px(x), y1: px(y - 4), x2: px(x + 18), y2: px(y - 4), stroke: item.colour, 'stroke-width': item.swatch === 'thick' ? 3 : 1.4 }, g);
    }
    svgEl('text', { x: px(x + 24), y: px(y), 'font-size': 10.5, fill: palette.foreground }, g, item.text);
    y += 16;
  }
}

function drawContours(layer: SVGGElement, lines: SVGGElement, labels: SVGGElement, slice: SliceResult, f: Frame, scale: Scale, palette: Palette): void {
  const { bands, isolines } = contourGrid(slice, f, scale.values, scale.levels);
  const below = scale.levels.length ? scale.levels[0] - Math.abs(scale.levels[0]) * 1e-6 - 1e-300 : 0;
  svgEl('rect', { x: px(f.left), y: px(f.top), width: px(f.width), height: px(f.height), fill: scale.colour(below) }, layer);
  bands.forEach((band, k) => {
    const next = scale.levels[k + 1];
    const mid = next === undefined ? band.level + Math.abs(band.level) * 1e-6 + 1e-300 : (band.level + next) / 2;
    svgEl('path', { d: band.path, fill: scale.colour(mid), class: 'band', 'data-level': band.level }, layer);
  });
  const placed: { x: number; y: number }[] = [];
  for (const iso of isolines) {
    const g = svgEl('g', { class: 'isoline', 'data-level': iso.level }, lines);
    for (const line of iso.lines) {
      svgEl('path', { d: polylinePath(line), fill: 'none', stroke: palette.line, 'stroke-width': 0.9, class: 'contour' }, g);
    }
    // One label per level, on its longest line, away from labels already placed.
    const longest = iso.lines.slice().sort((a, b) => polylineLength(b) - polylineLength(a))[0];
    if (!longest || polylineLength(longest) < 60) continue;
    for (const t of [0.5, 0.3, 0.7, 0.15, 0.85]) {
      const p = pointAlong(longest, t);
      if (placed.some((q) => Math.hypot(q.x - p.x, q.y - p.y) < 70)) continue;
      placed.push(p);
      let angle = (p.angle * 180) / Math.PI;
      if (angle > 90) angle -= 180;
      if (angle < -90) angle += 180;
      const text = svgEl('text', {
        x: 0, y: 0, 'text-anchor': 'middle', 'dominant-baseline': 'central', 'font-size': 10.5,
        fill: palette.foreground, stroke: palette.background, 'stroke-width': 3, 'paint-order': 'stroke',
        class: 'contour-label',
      }, labels, scale.label(iso.level));
      text.setAttribute('transform', `translate(${px(p.x)},${px(p.y)}) rotate(${px(angle)})`);
      break;
    }
  }
}

function outlinePath(f: Frame, paths: number[][], closed: boolean): string {
  return paths
    .map((flat) => {
      const pts: [number, number][] = [];
      for (let k = 0; k + 1 < flat.length; k += 2) pts.push(toPx(f, flat[k], flat[k + 1]));
      return polylinePath(pts) + (closed ? 'Z' : '');
    })
    .join('');
}

/** Builds the picture for one slice of a result. */
export function drawPicture(result: Result, sliceIndex: number, options: PictureOptions): Picture {
  const { palette } = options;
  const given = result.slices[sliceIndex];
  // Electrodes with interior cells but no outline from the engine get one traced from the mask.
  const slice: SliceResult = { ...given, outlines: [...given.outlines, ...outlinesFromMask(given)] };
  const f = makeFrame(slice);
  const width = f.left + f.width + LEGEND_WIDTH;
  const height = f.top + f.height + BOTTOM;
  const svg = svgEl('svg', {
    xmlns: 'http://www.w3.org/2000/svg', viewBox: `0 0 ${px(width)} ${px(height)}`,
    width: px(width), height: px(height), 'font-family': 'system-ui, sans-serif', class: 'picture',
  });
  // The plot's placement, for the page's own pointer mapping and for tests.
  svg.setAttribute('data-frame', [f.left, f.top, f.width, f.height, f.u0, f.v0, f.u1, f.v1].join(' '));
  svgEl('title', {}, svg, options.title);
  svgEl('rect', { x: 0, y: 0, width: px(width), height: px(height), fill: palette.background }, svg);
  const clipId = 'plot-area';
  const defs = svgEl('defs', {}, svg);
  const clip = svgEl('clipPath', { id: clipId }, defs);
  svgEl('rect', { x: px(f.left), y: px(f.top), width: px(f.width), height: px(f.height) }, clip);
  const plot = svgEl('g', { 'clip-path': `url(#${clipId})` }, svg);
  const bandLayer = svgEl('g', { class: 'bands' }, plot);
  const lineLayer = svgEl('g', { class: 'contours' }, plot);
  const fieldLayer = svgEl('g', { class: 'field-lines' }, plot);
  const groundLayer = svgEl('g', { class: 'ground' }, plot);
  const conductorLayer = svgEl('g', { class: 'conductors' }, plot);
  const labelLayer = svgEl('g', { class: 'labels' }, plot);
  const probeLayer = svgEl('g', { class: 'probes' }, plot);
  const peakLayer = svgEl('g', { class: 'peaks' }, plot);
  const axes = svgEl('g', { class: 'axes' }, svg);
  const legend = svgEl('g', { class: 'legend' }, svg);
  const notes: string[] = [];

  const scale = options.mode === 'potential' ? potentialScale(result, slice, palette) : fieldScale(slice, palette);
  drawContours(bandLayer, lineLayer, labelLayer, slice, f, scale, palette);

  const extra: LegendItem[] = [];
  if (options.showFieldLines) {
    const lines = fieldLines(slice, result.electrodes, { total: 36 });
    for (const line of lines) {
      const pts = line.points.map(([u, v]) => toPx(f, u, v));
      svgEl('path', { d: polylinePath(pts), fill: 'none', stroke: palette.fieldLine, 'stroke-width': 1.1, class: 'field-line' }, fieldLayer);
      const mid = pointAlong(pts, 0.5);
      const a = mid.angle;
      const s = 4.5;
      const tip = [mid.x + s * Math.cos(a), mid.y + s * Math.sin(a)];
      const l = [mid.x - s * Math.cos(a - 0.5), mid.y - s * Math.sin(a - 0.5)];
      const r = [mid.x - s * Math.cos(a + 0.5), mid.y - s * Math.sin(a + 0.5)];
      svgEl('path', { d: `M${px(l[0])},${px(l[1])}L${px(tip[0])},${px(tip[1])}L${px(r[0])},${px(r[1])}`, fill: 'none', stroke: palette.fieldLine, 'stroke-width': 1.1 }, fieldLayer);
    }
    if (lines.length > 0) {
      extra.push({ swatch: 'line', colour: palette.fieldLine, text: result.space === '3d' ? 'in-plane field lines' : 'field lines' });
    }
  }

  for (const [a0, a1, b0, b1] of slice.groundLines) {
    const [x0, y0] = toPx(f, a0, a1);
    const [x1, y1] = toPx(f, b0, b1);
    svgEl('line', { x1: px(x0), y1: px(y0), x2: px(x1), y2: px(y1), stroke: palette.conductorEdge, 'stroke-width': 3, class: 'ground-line' }, groundLayer);
    svgEl('text', { x: px(Math.max(f.left + 6, Math.min(x0, x1) + 6)), y: px((y0 + y1) / 2 - 6), 'font-size': 10.5, fill: palette.foreground, class: 'ground-label' }, groundLayer, 'ground 0 V');
  }

  const filled = new Set<number>();
  for (let i = 0; i < slice.inside.length; i++) if (slice.inside[i] >= 0) filled.add(slice.inside[i]);
  for (const o of slice.outlines) {
    const e = result.electrodes[o.electrode];
    if (!e) continue;
    const solid = o.closed && filled.has(o.electrode);
    const path = svgEl('path', {
      d: outlinePath(f, o.paths, o.closed),
      fill: solid ? palette.conductorFill : 'none',
      stroke: palette.conductorEdge,
      'stroke-width': o.closed ? 1.5 : 3,
      class: 'electrode',
      'data-electrode': o.electrode,
    }, conductorLayer);
    svgEl('title', {}, path, `${e.name}: ${formatPotential(e.potential)}`);
  }

  for (const p of result.probes) {
    const pts = p.points.map((q) => projectToSlice(slice, q.at));
    const tol = Math.max(slice.du, slice.dv);
    if (pts.length === 0 || pts.some((q) => Math.abs(q.off) > tol)) {
      if (pts.length > 0) notes.push(`Probe ${p.name} lies off this slice.`);
      continue;
    }
    if (pts.length === 1) {
      const [x, y] = toPx(f, pts[0].u, pts[0].v);
      svgEl('path', { d: `M${px(x)},${px(y - 5)}L${px(x + 5)},${px(y)}L${px(x)},${px(y + 5)}L${px(x - 5)},${px(y)}Z`, fill: palette.probe, class: 'probe' }, probeLayer);
      svgEl('text', { x: px(x + 8), y: px(y - 6), 'font-size': 10.5, fill: palette.foreground, stroke: palette.background, 'stroke-width': 3, 'paint-order': 'stroke' }, probeLayer, p.name);
    } else {
      const a = toPx(f, pts[0].u, pts[0].v);
      const b = toPx(f, pts[pts.length - 1].u, pts[pts.length - 1].v);
      svgEl('line', { x1: px(a[0]), y1: px(a[1]), x2: px(b[0]), y2: px(b[1]), stroke: palette.probe, 'stroke-width': 1.4, 'stroke-dasharray': '5 3', class: 'probe' }, probeLayer);
      svgEl('text', { x: px(b[0] + 6), y: px(b[1] - 4), 'font-size': 10.5, fill: palette.foreground, stroke: palette.background, 'stroke-width': 3, 'paint-order': 'stroke' }, probeLayer, p.name);
    }
  }

  // Peak labels are nudged down until they clear the ones already placed (width estimated from length).
  const labelBoxes: { x0: number; x1: number; y: number }[] = [];
  const freeY = (x0: number, x1: number, y: number): number => {
    while (labelBoxes.some((b) => b.x0 < x1 && x0 < b.x1 && Math.abs(b.y - y) < 14)) y += 15;
    labelBoxes.push({ x0, x1, y });
    return y;
  };
  result.electrodes.forEach((e, index) => {
    if (!e.maxFieldAt || e.maxFieldAt.length < 2 || !(e.maxField > 0)) return;
    const q = projectToSlice(slice, e.maxFieldAt);
    const tol = 0.5 * Math.max(slice.du, slice.dv);
    const off = Math.abs(q.off) > tol;
    const value = `${formatField(e.maxField)}${e.maxFieldOnEdge ? ' (edge)' : ''}`;
    if (!insideFrame(f, q.u, q.v)) {
      notes.push(`Peak field on ${e.name}: ${value}, outside this picture.`);
      return;
    }
    const [x, y] = toPx(f, q.u, q.v);
    const g = svgEl('g', { class: off ? 'peak peak-off-slice' : 'peak', 'data-electrode': index }, peakLayer);
    svgEl('circle', { cx: px(x), cy: px(y), r: 5.5, fill: off ? 'none' : palette.peak, stroke: palette.peak, 'stroke-width': 1.8, 'stroke-dasharray': off ? '2 2' : 'none' }, g);
    const roomRight = f.left + f.width - (x + 9);
    const roomLeft = x - 9 - f.left;
    // The full label where it fits, else the value alone (the name is in the table and the notes).
    let label = off ? `${e.name} peak ${value} (${formatLength(Math.abs(q.off), 2)} off slice)` : `${e.name} peak ${value}`;
    if (label.length * 6.4 > Math.max(roomLeft, roomRight)) label = value;
    const textWidth = label.length * 6.4;
    // Start-anchored unless that runs past the right edge and there is more room to the left.
    const anchorEnd = textWidth > roomRight && roomLeft > roomRight;
    const tx = anchorEnd ? x - 9 : x + 9;
    const ty = freeY(anchorEnd ? tx - textWidth : tx, anchorEnd ? tx : tx + textWidth, y - 8);
    svgEl('text', {
      x: px(tx), y: px(ty), 'text-anchor': anchorEnd ? 'end' : 'start', 'font-size': 11, 'font-weight': 600,
      fill: palette.peak, stroke: palette.background, 'stroke-width': 3, 'paint-order': 'stroke',
      // The label may lie over another electrode: let clicks pass through to what is under it.
      'pointer-events': 'none',
    }, g, label);
    if (off) notes.push(`Peak field on ${e.name} (${value}) is ${formatLength(Math.abs(q.off), 3)} off this slice; the marker shows where it projects.`);
  });

  drawAxes(axes, f, slice, palette);
  extra.push({ swatch: 'ring', colour: palette.peak, text: 'peak surface field' });
  if (slice.groundLines.length > 0) extra.push({ swatch: 'thick', colour: palette.conductorEdge, text: 'ground plane' });
  drawLegend(legend, f, scale, palette, extra);
  return { svg, frame: f, slice, notes, levels: scale.levels.length };
}
