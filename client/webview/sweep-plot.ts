// A plot of one figure of a sweep (peak field, self capacitance or margin) against the swept value:
// one line per electrode, with a point at each step; axes labelled with units. Built like the probe
// plot (line-plot.ts): SVG elements only, text through textContent, colours from the theme.
import type { SweepResultParams } from '../../server/src/protocol';
import type { Palette } from './colours';
import { polylinePath } from './contours';
import { prefixes, significant } from './format';
import { fieldUnit, niceTicks } from './line-plot';
import { px, svgEl } from './svg';

export type SweepFigure = 'maxField' | 'capacitance' | 'margin';

export const SWEEP_FIGURES: { key: SweepFigure; label: string }[] = [
  { key: 'maxField', label: 'Peak field' },
  { key: 'capacitance', label: 'Self capacitance' },
  { key: 'margin', label: 'Margin' },
];

/** Scale and unit label for axis values up to `max` of an SI unit: [1e-3, 'mm'] for 0.03 m. Plain numbers and ratios keep no prefix. */
export function axisUnit(max: number, unit: string): [number, string] {
  if (unit === 'V/m') return fieldUnit(max);
  if (!unit || !/^[A-Za-z]/.test(unit) || /[\d^]/.test(unit) || !(max > 0)) return [1, unit];
  // A prefix on the first symbol only: F/m → pF/m.
  const [scale, prefix] = prefixes.find(([s]) => max >= s * 0.9995) ?? prefixes[prefixes.length - 1];
  return [scale, prefix + unit];
}

/** One colour and dash per electrode, from the theme's picture colours. */
function seriesStyle(palette: Palette, k: number): { colour: string; dash: string } {
  const colours = [palette.foreground, palette.peak, palette.probe, palette.fieldLine, palette.potentialBand(-0.9), palette.potentialBand(0.9)];
  const dashes = ['', '6 3', '2 3', '8 3 2 3'];
  return { colour: colours[k % colours.length], dash: dashes[Math.floor(k / colours.length) % dashes.length] };
}

/** The figure's SI unit, given the sweep's space (capacitance per metre in `planar`). */
export function figureUnit(sweep: Pick<SweepResultParams, 'space'>, figure: SweepFigure): string {
  return figure === 'maxField' ? 'V/m' : figure === 'capacitance' ? (sweep.space === 'planar' ? 'F/m' : 'F') : '';
}

export function drawSweepPlot(sweep: SweepResultParams, figure: SweepFigure, palette: Palette): SVGSVGElement {
  const W = 620;
  const H = 230;
  const L = 62;
  const R = 130;
  const T = 26;
  const B = 40;
  const w = W - L - R;
  const h = H - T - B;
  const svg = svgEl('svg', { xmlns: 'http://www.w3.org/2000/svg', viewBox: `0 0 ${W} ${H}`, width: W, height: H, class: 'sweep-plot', 'font-family': 'system-ui, sans-serif' });
  svgEl('rect', { x: 0, y: 0, width: W, height: H, fill: palette.background }, svg);
  const xs = sweep.values;
  const series = sweep.electrodes.map((e) => e[figure].map((v) => (typeof v === 'number' && Number.isFinite(v) ? v : NaN)));
  const all = series.flat().filter((v) => Number.isFinite(v));
  let x0 = Math.min(...xs);
  let x1 = Math.max(...xs);
  if (!(x1 > x0)) [x0, x1] = [x0 - 1, x0 + 1];
  let y0 = Math.min(0, ...all);
  let y1 = Math.max(0, ...all);
  if (!(y1 > y0)) y1 = y0 + 1;
  const [xScale, xUnit] = axisUnit(Math.max(Math.abs(x0), Math.abs(x1)), sweep.unit);
  const [yScale, yUnit] = axisUnit(Math.max(Math.abs(y0), Math.abs(y1)), figureUnit(sweep, figure));
  const X = (v: number) => L + ((v - x0) / (x1 - x0)) * w;
  const Y = (v: number) => T + h - ((v - y0) / (y1 - y0)) * h;
  svgEl('rect', { x: L, y: T, width: w, height: h, fill: 'none', stroke: palette.line }, svg);
  for (const t of niceTicks(x0 / xScale, x1 / xScale)) {
    const x = X(t * xScale);
    svgEl('line', { x1: px(x), y1: T + h, x2: px(x), y2: T + h + 4, stroke: palette.foreground }, svg);
    svgEl('text', { x: px(x), y: T + h + 16, 'text-anchor': 'middle', 'font-size': 10.5, fill: palette.foreground }, svg, significant(t, 4));
  }
  for (const t of niceTicks(y0 / yScale, y1 / yScale)) {
    const y = Y(t * yScale);
    svgEl('line', { x1: L - 4, y1: px(y), x2: L, y2: px(y), stroke: palette.foreground }, svg);
    svgEl('text', { x: L - 7, y: px(y + 4), 'text-anchor': 'end', 'font-size': 10.5, fill: palette.foreground }, svg, significant(t, 4));
  }
  const label = SWEEP_FIGURES.find((f) => f.key === figure)!.label;
  const yText = figure === 'margin' ? `${label} to ${sweep.basis ?? 'the limit'} (ratio; below 1 it is exceeded)` : `${label} (${yUnit})`;
  svgEl('text', { x: L + w / 2, y: H - 6, 'text-anchor': 'middle', 'font-size': 11, fill: palette.foreground }, svg, xUnit ? `${sweep.name} (${xUnit})` : sweep.name);
  svgEl('text', { x: L, y: 14, 'font-size': 11, fill: palette.foreground }, svg, yText);
  if (figure === 'margin' && y1 >= 1) {
    // The margin's pass line: allowed field equal to the peak.
    svgEl('line', { x1: L, y1: px(Y(1)), x2: L + w, y2: px(Y(1)), stroke: palette.peak, 'stroke-dasharray': '2 4', class: 'sweep-threshold' }, svg);
  }
  series.forEach((ys, k) => {
    const { colour, dash } = seriesStyle(palette, k);
    const points = xs.map((x, i) => [X(x), Y(ys[i])] as [number, number]).filter(([, y]) => Number.isFinite(y));
    const name = sweep.electrodes[k].name;
    const g = svgEl('g', { class: 'sweep-series', 'data-electrode': name }, svg);
    svgEl('path', { d: polylinePath(points), fill: 'none', stroke: colour, 'stroke-width': 1.8, ...(dash ? { 'stroke-dasharray': dash } : {}), class: 'sweep-line' }, g);
    for (const [x, y] of points) svgEl('circle', { cx: px(x), cy: px(y), r: 2.6, fill: colour, class: 'sweep-point' }, g);
    // Legend at the right.
    const ly = T + 8 + k * 16;
    svgEl('line', { x1: L + w + 10, y1: ly, x2: L + w + 30, y2: ly, stroke: colour, 'stroke-width': 1.8, ...(dash ? { 'stroke-dasharray': dash } : {}) }, svg);
    svgEl('text', { x: L + w + 35, y: ly + 4, 'font-size': 10.5, fill: palette.foreground }, svg, name);
  });
  return svg;
}
