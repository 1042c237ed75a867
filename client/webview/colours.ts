// The preview's colours: read from the editor theme's CSS variables, with fallbacks for the standalone
// page, and resolved to plain rgb() strings so an exported SVG needs no stylesheet.

export type Rgb = [number, number, number];

export interface Palette {
  background: string;
  foreground: string;
  /** Contour lines and grid marks. */
  line: string;
  /** Conductor fill and outline. */
  conductorFill: string;
  conductorEdge: string;
  fieldLine: string;
  peak: string;
  probe: string;
  /** Potential band colour for s in [−1, 1]: −1 the most negative, 0 zero, 1 the most positive. */
  potentialBand(s: number): string;
  /** Field-strength bands, t in [0, 1] from weak to strong. */
  fieldBand(t: number): string;
}

/** Parses "#rgb", "#rrggbb", "#rrggbbaa", "rgb(r, g, b)" or "rgba(r, g, b, a)"; null if none of these. */
export function parseColour(text: string): Rgb | null {
  const s = text.trim();
  let m = /^#([0-9a-f]{3})$/i.exec(s);
  if (m) return [0, 1, 2].map((i) => parseInt(m![1][i] + m![1][i], 16)) as Rgb;
  m = /^#([0-9a-f]{6})([0-9a-f]{2})?$/i.exec(s);
  if (m) return [0, 2, 4].map((i) => parseInt(m![1].slice(i, i + 2), 16)) as Rgb;
  m = /^rgba?\(\s*([\d.]+)[\s,]+([\d.]+)[\s,]+([\d.]+)/i.exec(s);
  if (m) return [Number(m[1]), Number(m[2]), Number(m[3])];
  return null;
}

export const css = (c: Rgb): string => `rgb(${c.map((x) => Math.round(Math.max(0, Math.min(255, x)))).join(', ')})`;

export function mix(a: Rgb, b: Rgb, t: number): Rgb {
  return [a[0] + (b[0] - a[0]) * t, a[1] + (b[1] - a[1]) * t, a[2] + (b[2] - a[2]) * t];
}

/** Relative luminance (sRGB weights, ignoring gamma; enough to tell a dark theme from a light one). */
export const luminance = (c: Rgb): number => (0.2126 * c[0] + 0.7152 * c[1] + 0.0722 * c[2]) / 255;

/** Piecewise-linear ramp through `stops` at t in [0, 1]. */
function ramp(stops: Rgb[], t: number): Rgb {
  const x = Math.max(0, Math.min(1, t)) * (stops.length - 1);
  const i = Math.min(stops.length - 2, Math.floor(x));
  return mix(stops[i], stops[i + 1], x - i);
}

/** Reads a CSS variable of the page (VS Code sets --vscode-*), or the fallback. */
function themed(name: string, fallback: Rgb, root: Element | null): Rgb {
  if (!root || typeof getComputedStyle !== 'function') return fallback;
  return parseColour(getComputedStyle(root).getPropertyValue(name)) ?? fallback;
}

/** Builds the palette from the editor theme when there is one, else from the system's light or dark preference. */
export function readPalette(root: Element | null = typeof document === 'undefined' ? null : document.body): Palette {
  const prefersDark = typeof matchMedia === 'function' && matchMedia('(prefers-color-scheme: dark)').matches;
  const bg = themed('--vscode-editor-background', prefersDark ? [30, 32, 36] : [252, 251, 248], root);
  const dark = luminance(bg) < 0.5;
  const fg = themed('--vscode-editor-foreground', dark ? [222, 222, 216] : [34, 36, 40], root);
  const cold = themed('--vscode-charts-blue', dark ? [86, 156, 214] : [38, 104, 170], root);
  const warm = themed('--vscode-charts-orange', dark ? [226, 140, 64] : [196, 98, 32], root);
  const hot = themed('--vscode-charts-red', dark ? [232, 92, 92] : [196, 40, 52], root);
  const violet = themed('--vscode-charts-purple', dark ? [182, 140, 232] : [112, 64, 170], root);
  const green = themed('--vscode-charts-green', dark ? [112, 196, 128] : [34, 128, 64], root);
  const yellow = themed('--vscode-charts-yellow', dark ? [230, 206, 96] : [176, 136, 0], root);
  // Potential bands: a cold hue for negative, the page tone near zero, a warm hue for positive,
  // kept pale so contour lines and labels stay readable over them.
  const strength = dark ? 0.62 : 0.55;
  const coldBand = mix(bg, cold, strength);
  const warmBand = mix(bg, warm, strength);
  const midBand = mix(bg, fg, 0.04);
  // Field bands: from the page tone through violet and red to yellow as the field grows.
  const fieldStops: Rgb[] = [mix(bg, violet, 0.08), mix(bg, violet, 0.45), mix(bg, hot, 0.7), mix(bg, yellow, 0.85)];
  return {
    background: css(bg),
    foreground: css(fg),
    line: css(mix(bg, fg, 0.55)),
    conductorFill: css(mix(bg, fg, dark ? 0.42 : 0.3)),
    conductorEdge: css(fg),
    fieldLine: css(mix(bg, green, 0.9)),
    peak: css(hot),
    probe: css(mix(bg, fg, 0.85)),
    potentialBand(s: number): string {
      const a = Math.min(1, Math.abs(s));
      return css(mix(midBand, s < 0 ? coldBand : warmBand, a));
    },
    fieldBand: (t: number) => css(ramp(fieldStops, t)),
  };
}
