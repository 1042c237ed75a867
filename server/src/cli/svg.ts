// `voltscape solve --svg OUT`: one standalone SVG with a panel per slice: filled potential bands and
// equipotential lines (d3-contour on the slice grid), electrode outlines, ground-plane traces,
// labelled levels, axes, a length scale bar and a colour legend.
// Grid convention (result.ts): values at cell centres, row-major, row 0 at the bottom. d3-contour puts
// value i at coordinate i + 0.5, so grid coordinate g maps to world u = u0 + g·du (and v likewise).
import { contours } from 'd3-contour';
import type { Result, SliceResult } from '../engine/result';
import { chooseUnit, formatNumber, formatQuantity } from '../format/quantity';
import { planLevels, potentialColour, type LevelPlan } from './contour-levels';

export interface SvgInput {
  title: string;
  result: Result;
  /** A line under the title, e.g. "3d · air". */
  subtitle?: string;
}

const PLOT_WIDTH = 620;
const MAX_PLOT_HEIGHT = 520;
const MIN_PLOT_HEIGHT = 140;
const LEFT = 64;
const LEGEND_WIDTH = 150;
const WIDTH = LEFT + PLOT_WIDTH + LEGEND_WIDTH;
const INK = '#22242a';
const MUTED = '#5d6270';
const SERIF = "'Iowan Old Style', 'Palatino Linotype', Palatino, Georgia, serif";
const SANS = "'Fira Sans', 'Noto Sans', 'Segoe UI', system-ui, sans-serif";
const CAUTION =
  'High voltage kills: these figures are a design aid, not a substitute for applicable standards, local codes, testing and licensed practice.';

/** Escapes text for XML content and attribute values. */
export function xml(text: string): string {
  return text.replace(/[<>&"']/g, (c) => ({ '<': '&lt;', '>': '&gt;', '&': '&amp;', '"': '&quot;', "'": '&apos;' })[c] as string);
}

const r1 = (x: number) => Math.round(x * 10) / 10;

interface Frame {
  left: number;
  top: number;
  width: number;
  height: number;
  scale: number; // px per metre
  slice: SliceResult;
}

function toPx(f: Frame, u: number, v: number): [number, number] {
  const s = f.slice;
  return [f.left + (u - s.u0) * f.scale, f.top + (s.v0 + s.nv * s.dv - v) * f.scale];
}
function gridToPx(f: Frame, gx: number, gy: number): [number, number] {
  const s = f.slice;
  return toPx(f, s.u0 + gx * s.du, s.v0 + gy * s.dv);
}

function frameFor(slice: SliceResult, left: number, top: number): Frame {
  const wWorld = slice.nu * slice.du;
  const hWorld = slice.nv * slice.dv;
  let scale = PLOT_WIDTH / wWorld;
  if (hWorld * scale > MAX_PLOT_HEIGHT) scale = MAX_PLOT_HEIGHT / hWorld;
  return { left, top, width: wWorld * scale, height: hWorld * scale, scale, slice };
}

/** The slice's position in the unit of its axes (0 reads "0 mm" on a slice drawn in mm). */
function formatAt(s: SliceResult): string {
  const unit = chooseUnit('length', Math.max(Math.abs(s.u0), Math.abs(s.u0 + s.nu * s.du), Math.abs(s.v0), Math.abs(s.v0 + s.nv * s.dv)));
  return formatQuantity(s.at, 'length', { unit });
}

function axisNames(plane: SliceResult['plane']): [string, string] {
  return plane === 'rz' ? ['r', 'z'] : [plane[0], plane[1]];
}

/** The renderer: a complete SVG document as text. */
export function renderSvg(input: SvgInput): string {
  const { result } = input;
  const plan = planLevels(result);
  const parts: string[] = [];
  let y = 26;
  parts.push(`<text x="${LEFT}" y="${y + 12}" class="title">${xml(input.title)}</text>`);
  y += 22;
  if (input.subtitle) {
    parts.push(`<text x="${LEFT}" y="${y + 8}" class="subtitle">${xml(input.subtitle)}</text>`);
    y += 18;
  }
  y += 16;
  if (result.slices.length === 0) {
    parts.push(`<text x="${LEFT}" y="${y + 12}" class="note">This scene has no slice: add a \`slice\` statement to see equipotentials.</text>`);
    y += 30;
  }
  result.slices.forEach((slice, index) => {
    const panel = renderPanel(result, slice, index, plan, y);
    parts.push(panel.svg);
    y = panel.bottom + 30;
  });
  parts.push(`<text x="${LEFT}" y="${y}" class="caution">${xml(CAUTION)}</text>`);
  const height = Math.ceil(y + 16);
  return [
    '<?xml version="1.0" encoding="UTF-8"?>',
    `<svg xmlns="http://www.w3.org/2000/svg" width="${WIDTH}" height="${height}" viewBox="0 0 ${WIDTH} ${height}" font-family="${xml(SANS)}">`,
    `<title>${xml(input.title)}</title>`,
    '<style>',
    `.title{font-family:${SERIF};font-size:21px;fill:${INK};font-weight:600}`,
    `.subtitle{font-size:12px;fill:${MUTED};letter-spacing:0.04em}`,
    `.panel-title{font-family:${SERIF};font-size:14px;fill:${INK};font-style:italic}`,
    `.tick{font-size:10px;fill:${MUTED};font-variant-numeric:tabular-nums}`,
    `.axis-name{font-size:11px;fill:${INK}}`,
    `.level{font-size:9.5px;fill:${INK};paint-order:stroke;stroke:#fbf8f1;stroke-width:3px;stroke-linejoin:round}`,
    `.electrode-name{font-size:11px;font-weight:600;fill:#fbf8f1;paint-order:stroke;stroke:#2b2e36;stroke-width:3px;stroke-linejoin:round}`,
    `.legend-title{font-size:11px;fill:${INK};font-weight:600}`,
    `.caution{font-size:10px;fill:#8a2d2d}`,
    `.note{font-size:12px;fill:${MUTED}}`,
    '</style>',
    '<rect width="100%" height="100%" fill="#fbf8f1"/>',
    ...parts,
    '</svg>',
    '',
  ].join('\n');
}

function renderPanel(result: Result, slice: SliceResult, index: number, plan: LevelPlan, top: number): { svg: string; bottom: number } {
  const out: string[] = [];
  const [uName, vName] = axisNames(slice.plane);
  const third = slice.plane === 'xy' ? 'z' : slice.plane === 'xz' ? 'y' : slice.plane === 'yz' ? 'x' : '';
  const heading =
    slice.plane === 'rz'
      ? `Slice ${index + 1}: the r–z half-plane`
      : result.space === 'planar'
        ? `Slice ${index + 1}: the x–y plane`
        : `Slice ${index + 1}: ${uName}–${vName} plane at ${third} = ${formatAt(slice)}`;
  out.push(`<text x="${LEFT}" y="${top + 12}" class="panel-title">${xml(heading)}</text>`);
  let f = frameFor(slice, LEFT, top + 22);
  if (f.height < MIN_PLOT_HEIGHT && f.height > 0) f = { ...f }; // very flat slices keep their aspect
  const clipId = `plot${index}`;
  out.push(`<defs><clipPath id="${clipId}"><rect x="${r1(f.left)}" y="${r1(f.top)}" width="${r1(f.width)}" height="${r1(f.height)}"/></clipPath></defs>`);
  out.push(`<g clip-path="url(#${clipId})" class="bands">`);
  out.push(...bandsAndLines(f, plan));
  const veils = veilBeyondGround(f);
  out.push(...veilSvg(veils));
  out.push(...groundTraces(f));
  out.push(...outlines(result, f));
  out.push('</g>');
  out.push(...levelLabels(f, plan, veils));
  out.push(...electrodeLabels(result, f));
  out.push(`<rect x="${r1(f.left)}" y="${r1(f.top)}" width="${r1(f.width)}" height="${r1(f.height)}" fill="none" stroke="${INK}" stroke-width="1"/>`);
  out.push(...axes(f, uName, vName));
  out.push(...legend(f, plan));
  const bar = scaleBar(f);
  out.push(...bar.svg);
  return { svg: `<g class="slice" data-plane="${slice.plane}">\n${out.join('\n')}\n</g>`, bottom: bar.bottom };
}

/** The grid, clamped to the plan's range, with non-finite cells set to 0 V so d3-contour makes no holes. */
function clampedGrid(slice: SliceResult, plan: LevelPlan): Float64Array {
  const g = new Float64Array(slice.nu * slice.nv);
  for (let i = 0; i < g.length; i++) {
    const v = slice.potential[i];
    g[i] = Number.isFinite(v) ? Math.min(plan.hi, Math.max(plan.lo, v)) : 0;
  }
  return g;
}

function ringPath(f: Frame, ring: number[][]): string {
  let d = '';
  ring.forEach(([gx, gy], k) => {
    const [x, y] = gridToPx(f, gx, gy);
    d += `${k === 0 ? 'M' : 'L'}${r1(x)} ${r1(y)}`;
  });
  return d + 'Z';
}

function bandsAndLines(f: Frame, plan: LevelPlan): string[] {
  const s = f.slice;
  const out: string[] = [];
  const baseColour = potentialColour(plan.levels.length > 0 ? (plan.lo + plan.levels[0]) / 2 : plan.lo, plan);
  out.push(`<rect x="${r1(f.left)}" y="${r1(f.top)}" width="${r1(f.width)}" height="${r1(f.height)}" fill="${baseColour}"/>`);
  if (plan.levels.length === 0 || s.nu < 2 || s.nv < 2) return out;
  const grid = clampedGrid(s, plan);
  // Each threshold's polygon is the region at or above it; painting them in ascending order leaves bands.
  const polys = contours().size([s.nu, s.nv]).thresholds(plan.levels)(grid as unknown as number[]);
  const lines: string[] = [];
  polys.forEach((mp, k) => {
    const level = plan.levels[k];
    const next = k + 1 < plan.levels.length ? plan.levels[k + 1] : plan.hi;
    const d = mp.coordinates.map((poly) => poly.map((ring) => ringPath(f, ring)).join('')).join('');
    if (d === '') return;
    out.push(`<path class="band" d="${d}" fill="${potentialColour((level + next) / 2, plan)}" fill-rule="evenodd"/>`);
    lines.push(`<path class="equipotential" data-level="${level}" d="${d}" fill="none" stroke="${INK}" stroke-opacity="0.55" stroke-width="0.8"/>`);
  });
  return out.concat(lines);
}

/**
 * Beyond a ground plane there is no field (the plane is a conductor); the grid there holds the
 * image charges' mirror values, so that side is veiled. The live side is the one holding more
 * conductor cells, or the larger one when the slice shows no conductor.
 */
function veilBeyondGround(f: Frame): [number, number, number, number][] {
  const s = f.slice;
  const out: [number, number, number, number][] = [];
  const [u1, v1] = [s.u0 + s.nu * s.du, s.v0 + s.nv * s.dv];
  for (const [a0, b0, a1, b1] of s.groundLines ?? []) {
    const horizontal = Math.abs(b1 - b0) < 1e-12 * (v1 - s.v0);
    const vertical = Math.abs(a1 - a0) < 1e-12 * (u1 - s.u0);
    if (!horizontal && !vertical) continue;
    const cut = horizontal ? b0 : a0;
    let below = 0;
    let above = 0;
    for (let j = 0; j < s.nv; j++) {
      for (let i = 0; i < s.nu; i++) {
        if ((s.inside?.[j * s.nu + i] ?? -1) < 0) continue;
        const c = horizontal ? s.v0 + (j + 0.5) * s.dv : s.u0 + (i + 0.5) * s.du;
        if (c < cut) below++;
        else above++;
      }
    }
    const [lo, hi] = horizontal ? [s.v0, v1] : [s.u0, u1];
    const veilLow = below === above ? cut - lo < hi - cut : below < above;
    const [from, to] = veilLow ? [lo, cut] : [cut, hi];
    if (to - from <= 0) continue;
    const [x0, y0] = horizontal ? toPx(f, s.u0, to) : toPx(f, from, v1);
    const [x1, y1] = horizontal ? toPx(f, u1, from) : toPx(f, to, s.v0);
    out.push([Math.min(x0, x1), Math.min(y0, y1), Math.abs(x1 - x0), Math.abs(y1 - y0)]);
  }
  return out;
}

function veilSvg(veils: [number, number, number, number][]): string[] {
  return veils.map(([x, y, w, h]) => `<rect class="beyond-ground" x="${r1(x)}" y="${r1(y)}" width="${r1(w)}" height="${r1(h)}" fill="#e7e2d6"/>`);
}

function groundTraces(f: Frame): string[] {
  const out: string[] = [];
  for (const [u0, v0, u1, v1] of f.slice.groundLines ?? []) {
    const [x0, y0] = toPx(f, u0, v0);
    const [x1, y1] = toPx(f, u1, v1);
    out.push(`<line class="ground" x1="${r1(x0)}" y1="${r1(y0)}" x2="${r1(x1)}" y2="${r1(y1)}" stroke="#2f4a35" stroke-width="2.5"/>`);
    // Short hatch ticks along the trace, the usual mark of an earthed surface.
    const len = Math.hypot(x1 - x0, y1 - y0);
    if (len === 0) continue;
    const [tx, ty] = [(x1 - x0) / len, (y1 - y0) / len];
    let hatch = '';
    for (let d = 4; d < len; d += 10) {
      const [px, py] = [x0 + tx * d, y0 + ty * d];
      hatch += `M${r1(px)} ${r1(py)}l${r1(-ty * 6 - tx * 4)} ${r1(tx * 6 - ty * 4)}`;
    }
    out.push(`<path d="${hatch}" stroke="#2f4a35" stroke-width="1" fill="none"/>`);
  }
  return out;
}

function outlinePath(f: Frame, flat: number[], closed: boolean): string {
  let d = '';
  for (let k = 0; k + 1 < flat.length; k += 2) {
    const [x, y] = toPx(f, flat[k], flat[k + 1]);
    d += `${k === 0 ? 'M' : 'L'}${r1(x)} ${r1(y)}`;
  }
  return closed && d !== '' ? d + 'Z' : d;
}

function outlines(result: Result, f: Frame): string[] {
  return (f.slice.outlines ?? []).map((o) => {
    const name = result.electrodes[o.electrode]?.name ?? `#${o.electrode}`;
    const d = o.paths.map((p) => outlinePath(f, p, o.closed)).join('');
    return o.closed
      ? `<path class="electrode" data-electrode="${xml(name)}" d="${d}" fill="#3a3e48" fill-opacity="0.88" fill-rule="evenodd" stroke="#17191e" stroke-width="1.4"/>`
      : `<path class="electrode" data-electrode="${xml(name)}" d="${d}" fill="none" stroke="#17191e" stroke-width="3.2" stroke-linecap="round"/>`;
  });
}

function electrodeLabels(result: Result, f: Frame): string[] {
  const out: string[] = [];
  const placed: { x: number; y: number; w: number }[] = [];
  for (const o of f.slice.outlines ?? []) {
    const name = result.electrodes[o.electrode]?.name;
    if (!name || o.paths.length === 0) continue;
    // Label at the centre of the outline's bounding box, kept inside the plot.
    let [minU, minV, maxU, maxV] = [Infinity, Infinity, -Infinity, -Infinity];
    for (const p of o.paths) {
      for (let k = 0; k + 1 < p.length; k += 2) {
        minU = Math.min(minU, p[k]);
        maxU = Math.max(maxU, p[k]);
        minV = Math.min(minV, p[k + 1]);
        maxV = Math.max(maxV, p[k + 1]);
      }
    }
    if (!Number.isFinite(minU)) continue;
    // Solids are labelled at their centre; sheets and hollow shells just above their top.
    let [x, y] = toPx(f, (minU + maxU) / 2, o.closed ? (minV + maxV) / 2 : maxV);
    if (!o.closed) y -= 9;
    x = Math.min(f.left + f.width - 20, Math.max(f.left + 20, x));
    y = Math.min(f.top + f.height - 6, Math.max(f.top + 12, y));
    // Names that would overprint one another step down a line until they are clear.
    const w = name.length * 6.5;
    const clash = () => placed.some((p) => Math.abs(p.x - x) < (p.w + w) / 2 + 4 && Math.abs(p.y - y) < 13);
    for (let tries = 0; tries < 4 && clash(); tries++) y += 14;
    placed.push({ x, y, w });
    out.push(`<text class="electrode-name" x="${r1(x)}" y="${r1(y + 4)}" text-anchor="middle">${xml(name)}</text>`);
  }
  return out;
}

/** One label per level, at a point of its longest line away from the plot's border; overlapping labels are dropped. */
function levelLabels(f: Frame, plan: LevelPlan, veils: [number, number, number, number][]): string[] {
  const s = f.slice;
  if (plan.levels.length === 0 || s.nu < 2 || s.nv < 2) return [];
  const grid = clampedGrid(s, plan);
  const placed: [number, number][] = [];
  const out: string[] = [];
  const polys = contours().size([s.nu, s.nv]).thresholds(plan.levels)(grid as unknown as number[]);
  polys.forEach((mp, k) => {
    let best: number[][] = [];
    for (const poly of mp.coordinates) for (const ring of poly) if (ring.length > best.length) best = ring;
    // Points of the ring that are on the line itself, not on the border of the grid.
    const inner = best.filter(([gx, gy]) => gx > 1 && gx < s.nu - 1 && gy > 1 && gy < s.nv - 1);
    if (inner.length < 4) return;
    // Stagger the preferred spot from level to level so the labels do not line up in one column.
    for (const step of [0, 0.5, 0.25, 0.75, 0.125, 0.625]) {
      const frac = (0.3 + 0.17 * k + step) % 1;
      const [gx, gy] = inner[Math.floor(frac * (inner.length - 1))];
      const [x, y] = gridToPx(f, gx, gy);
      if (veils.some(([vx, vy, vw, vh]) => x >= vx && x <= vx + vw && y >= vy - 6 && y <= vy + vh + 6)) continue;
      if (placed.some(([px, py]) => Math.abs(px - x) < 46 && Math.abs(py - y) < 14)) continue;
      placed.push([x, y]);
      out.push(`<text class="level" x="${r1(x)}" y="${r1(y + 3)}" text-anchor="middle">${xml(formatQuantity(plan.levels[k], 'potential', { digits: 2 }))}</text>`);
      return;
    }
  });
  return out;
}

/** A round step (1, 2 or 5 × 10^k) close to `span / count`. */
export function niceStep(span: number, count: number): number {
  const raw = span / count;
  const p = 10 ** Math.floor(Math.log10(raw));
  const m = raw / p;
  return (m < 1.5 ? 1 : m < 3.5 ? 2 : m < 7.5 ? 5 : 10) * p;
}

/** Multiples of `step` from a to b, computed as k·step so that 0 is exactly 0. */
function ticks(a: number, b: number, step: number): number[] {
  const out: number[] = [];
  for (let k = Math.ceil(a / step - 1e-9); k * step <= b + step * 1e-9; k++) out.push(k * step);
  return out;
}

function axes(f: Frame, uName: string, vName: string): string[] {
  const s = f.slice;
  const u1 = s.u0 + s.nu * s.du;
  const v1 = s.v0 + s.nv * s.dv;
  const unit = chooseUnit('length', Math.max(Math.abs(s.u0), Math.abs(u1), Math.abs(s.v0), Math.abs(v1)));
  const out: string[] = [];
  const stepU = niceStep(u1 - s.u0, 6);
  for (const u of ticks(s.u0, u1, stepU)) {
    const [x] = toPx(f, u, s.v0);
    const yb = f.top + f.height;
    out.push(`<line x1="${r1(x)}" y1="${r1(yb)}" x2="${r1(x)}" y2="${r1(yb + 4)}" stroke="${INK}"/>`);
    out.push(`<text class="tick" x="${r1(x)}" y="${r1(yb + 15)}" text-anchor="middle">${formatNumber(u / unit.scale, 4)}</text>`);
  }
  const stepV = niceStep(v1 - s.v0, Math.max(2, Math.round(6 * (f.height / f.width))));
  for (const v of ticks(s.v0, v1, stepV)) {
    const [, y] = toPx(f, s.u0, v);
    out.push(`<line x1="${r1(f.left - 4)}" y1="${r1(y)}" x2="${r1(f.left)}" y2="${r1(y)}" stroke="${INK}"/>`);
    out.push(`<text class="tick" x="${r1(f.left - 7)}" y="${r1(y + 3.5)}" text-anchor="end">${formatNumber(v / unit.scale, 4)}</text>`);
  }
  out.push(`<text class="axis-name" x="${r1(f.left + f.width)}" y="${r1(f.top + f.height + 28)}" text-anchor="end">${uName} (${unit.symbol})</text>`);
  out.push(
    `<text class="axis-name" x="${r1(f.left - 44)}" y="${r1(f.top + f.height / 2)}" text-anchor="middle" transform="rotate(-90 ${r1(f.left - 44)} ${r1(f.top + f.height / 2)})">${vName} (${unit.symbol})</text>`,
  );
  return out;
}

function scaleBar(f: Frame): { svg: string[]; bottom: number } {
  const s = f.slice;
  const length = niceStep(s.nu * s.du, 5);
  const px = length * f.scale;
  const x = f.left;
  const y = f.top + f.height + 44;
  const svg = [
    `<g class="scale-bar">`,
    `<path d="M${r1(x)} ${r1(y - 4)}v8M${r1(x)} ${r1(y)}h${r1(px)}M${r1(x + px)} ${r1(y - 4)}v8" stroke="${INK}" stroke-width="1.5" fill="none"/>`,
    `<rect x="${r1(x)}" y="${r1(y - 2)}" width="${r1(px / 2)}" height="4" fill="${INK}"/>`,
    `<text class="tick" x="${r1(x + px + 8)}" y="${r1(y + 3.5)}">${xml(formatQuantity(length, 'length', { digits: 3 }))}</text>`,
    `</g>`,
  ];
  return { svg, bottom: y + 8 };
}

function legend(f: Frame, plan: LevelPlan): string[] {
  const x = f.left + f.width + 22;
  const top = f.top;
  const bounds = [plan.lo, ...plan.levels, plan.hi];
  const bands = bounds.length - 1;
  if (bands < 1) return [];
  const h = Math.min(f.height, Math.max(160, bands * 16));
  const bh = h / bands;
  const out = [`<g class="legend">`, `<text class="legend-title" x="${r1(x)}" y="${r1(top - 6)}">potential</text>`];
  for (let b = 0; b < bands; b++) {
    const y = top + h - (b + 1) * bh;
    out.push(`<rect x="${r1(x)}" y="${r1(y)}" width="16" height="${r1(bh + 0.3)}" fill="${potentialColour((bounds[b] + bounds[b + 1]) / 2, plan)}"/>`);
  }
  out.push(`<rect x="${r1(x)}" y="${r1(top)}" width="16" height="${r1(h)}" fill="none" stroke="${INK}" stroke-width="0.8"/>`);
  // Label every boundary when there is room, else every other one.
  const every = bh >= 11 ? 1 : 2;
  bounds.forEach((v, b) => {
    if (b % every !== 0 && b !== bounds.length - 1) return;
    const y = top + h - b * bh;
    out.push(`<line x1="${r1(x + 16)}" y1="${r1(y)}" x2="${r1(x + 20)}" y2="${r1(y)}" stroke="${INK}"/>`);
    out.push(`<text class="tick" x="${r1(x + 23)}" y="${r1(y + 3.5)}">${xml(formatQuantity(v, 'potential', { digits: 3 }))}</text>`);
  });
  out.push(`<text class="tick" x="${r1(x)}" y="${r1(top + h + 16)}">levels evenly spaced</text>`);
  out.push(`<text class="tick" x="${r1(x)}" y="${r1(top + h + 29)}">in asinh(φ / ${xml(formatQuantity(plan.phi0, 'potential', { digits: 2 }))})</text>`);
  out.push('</g>');
  return out;
}
