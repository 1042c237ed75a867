// A plot of potential and field strength along a line probe: distance on the horizontal axis,
// potential on the left axis, |E| on the right.
import type { ProbeResult } from '../../server/src/engine/result';
import type { Palette } from './colours';
import { polylinePath } from './contours';
import { lengthAxisUnit, significant } from './format';
import { px, svgEl } from './svg';

/** A unit prefix for values up to `max`: [scale, unit]. */
function potentialUnit(max: number): [number, string] {
  return max >= 1e6 ? [1e6, 'MV'] : max >= 1e3 ? [1e3, 'kV'] : [1, 'V'];
}
export function fieldUnit(max: number): [number, string] {
  return max >= 1e5 ? [1e6, 'kV/mm'] : max >= 1e2 ? [1e3, 'V/mm'] : [1, 'V/m'];
}

export function niceTicks(lo: number, hi: number, count = 5): number[] {
  if (!(hi > lo)) return [lo];
  const raw = (hi - lo) / count;
  const mag = 10 ** Math.floor(Math.log10(raw));
  const step = ([1, 2, 5, 10].find((m) => m * mag >= raw) ?? 10) * mag;
  const out: number[] = [];
  for (let t = Math.ceil(lo / step) * step; t <= hi + 1e-9 * step; t += step) out.push(Math.abs(t) < step * 1e-9 ? 0 : t);
  return out;
}

export function drawLinePlot(probe: ProbeResult, palette: Palette, potentialColour: string, fieldColour: string): SVGSVGElement {
  const W = 620;
  const H = 210;
  const L = 62;
  const R = 66;
  const T = 26;
  const B = 40;
  const w = W - L - R;
  const h = H - T - B;
  const svg = svgEl('svg', { xmlns: 'http://www.w3.org/2000/svg', viewBox: `0 0 ${W} ${H}`, width: W, height: H, class: 'line-plot', 'font-family': 'system-ui, sans-serif' });
  svgEl('rect', { x: 0, y: 0, width: W, height: H, fill: palette.background }, svg);
  const p0 = probe.points[0].at;
  const s = probe.points.map((p) => Math.hypot(...p.at.map((c, k) => c - p0[k])));
  const smax = s[s.length - 1] || 1;
  const phi = probe.points.map((p) => p.potential);
  const e = probe.points.map((p) => p.fieldMagnitude);
  const finite = (xs: number[]) => xs.filter((x) => Number.isFinite(x));
  let plo = Math.min(0, ...finite(phi));
  let phi1 = Math.max(0, ...finite(phi));
  if (phi1 === plo) phi1 = plo + 1;
  const emax = Math.max(...finite(e), 0) || 1;
  const [ps, pu] = potentialUnit(Math.max(Math.abs(plo), Math.abs(phi1)));
  const [es, eu] = fieldUnit(emax);
  const { unit: lu, scale: ls } = lengthAxisUnit(smax);
  const X = (d: number) => L + (d / smax) * w;
  const Yp = (v: number) => T + h - ((v - plo) / (phi1 - plo)) * h;
  const Ye = (v: number) => T + h - (v / emax) * h;
  svgEl('rect', { x: L, y: T, width: w, height: h, fill: 'none', stroke: palette.line }, svg);
  for (const t of niceTicks(0, smax * ls)) {
    const x = X(t / ls);
    svgEl('line', { x1: px(x), y1: T + h, x2: px(x), y2: T + h + 4, stroke: palette.foreground }, svg);
    svgEl('text', { x: px(x), y: T + h + 16, 'text-anchor': 'middle', 'font-size': 10.5, fill: palette.foreground }, svg, significant(t, 4));
  }
  for (const t of niceTicks(plo / ps, phi1 / ps)) {
    const y = Yp(t * ps);
    svgEl('line', { x1: L - 4, y1: px(y), x2: L, y2: px(y), stroke: potentialColour }, svg);
    svgEl('text', { x: L - 7, y: px(y + 4), 'text-anchor': 'end', 'font-size': 10.5, fill: potentialColour }, svg, significant(t, 4));
  }
  for (const t of niceTicks(0, emax / es)) {
    const y = Ye(t * es);
    svgEl('line', { x1: L + w, y1: px(y), x2: L + w + 4, y2: px(y), stroke: fieldColour }, svg);
    svgEl('text', { x: L + w + 7, y: px(y + 4), 'font-size': 10.5, fill: fieldColour }, svg, significant(t, 4));
  }
  svgEl('text', { x: L + w / 2, y: H - 6, 'text-anchor': 'middle', 'font-size': 11, fill: palette.foreground }, svg, `distance along ${probe.name} (${lu})`);
  svgEl('text', { x: L, y: 14, 'font-size': 11, fill: potentialColour }, svg, `potential (${pu})`);
  svgEl('text', { x: L + w, y: 14, 'text-anchor': 'end', 'font-size': 11, fill: fieldColour }, svg, `|E| (${eu})`);
  const line = (ys: number[], Y: (v: number) => number) =>
    polylinePath(s.map((d, k) => [X(d), Y(ys[k])] as [number, number]).filter(([, y]) => Number.isFinite(y)));
  svgEl('path', { d: line(phi, Yp), fill: 'none', stroke: potentialColour, 'stroke-width': 1.8, class: 'plot-potential' }, svg);
  svgEl('path', { d: line(e, Ye), fill: 'none', stroke: fieldColour, 'stroke-width': 1.8, 'stroke-dasharray': '6 3', class: 'plot-field' }, svg);
  return svg;
}
