// Boundary elements on curves in a plane, shared by the planar engine (points (x, y)) and the
// axisymmetric engine (points (r, z) of the half-plane profile): straight segments and exact
// circular arcs, each carrying a constant surface charge density, collocated at its midpoint.
// A piece (a whole side of a polygon, a whole arc) is split into elements graded toward the
// ends where the charge density is singular (sharp corners, open rims).

export interface Curve2d {
  kind: 'line' | 'arc';
  /** Start point. */
  x0: number;
  y0: number;
  /** Line: unit tangent. */
  tx: number;
  ty: number;
  /** Arc: centre, radius, start angle and direction (+1 counter-clockwise, −1 clockwise). */
  cx: number;
  cy: number;
  radius: number;
  theta0: number;
  dir: number;
  length: number;
}

export interface Element2d extends Curve2d {
  /** Index of the electrode the element belongs to. */
  electrode: number;
  /** Thin sheet or hollow shell: the density is the sum over both faces. */
  thin: boolean;
  /** The element touches a sharp corner or an open rim (the density is singular there). */
  edge: boolean;
  /** Collocation point (the midpoint along the curve) and the unit normal there (tangent turned clockwise). */
  mx: number;
  my: number;
  nx: number;
  ny: number;
}

/** A piece of an electrode's outline, before it is split into elements. */
export interface Piece extends Curve2d {
  electrode: number;
  thin: boolean;
  /** Grade the elements toward this end (a sharp corner or an open rim). */
  gradeStart: boolean;
  gradeEnd: boolean;
}

/** Position and unit tangent at arc length s along the curve: out = [x, y, tx, ty]. */
export function curvePoint(c: Curve2d, s: number, out: Float64Array): void {
  if (c.kind === 'line') {
    out[0] = c.x0 + s * c.tx;
    out[1] = c.y0 + s * c.ty;
    out[2] = c.tx;
    out[3] = c.ty;
    return;
  }
  const theta = c.theta0 + (c.dir * s) / c.radius;
  const cos = Math.cos(theta);
  const sin = Math.sin(theta);
  out[0] = c.cx + c.radius * cos;
  out[1] = c.cy + c.radius * sin;
  out[2] = -c.dir * sin;
  out[3] = c.dir * cos;
}

export function lineCurve(ax: number, ay: number, bx: number, by: number): Curve2d {
  const length = Math.hypot(bx - ax, by - ay);
  return { kind: 'line', x0: ax, y0: ay, tx: (bx - ax) / length, ty: (by - ay) / length, cx: 0, cy: 0, radius: 0, theta0: 0, dir: 1, length };
}

/** Arc of the circle (cx, cy, radius) from angle theta0 to theta1 (either direction). */
export function arcCurve(cx: number, cy: number, radius: number, theta0: number, theta1: number): Curve2d {
  const dir = theta1 >= theta0 ? 1 : -1;
  return {
    kind: 'arc',
    x0: cx + radius * Math.cos(theta0),
    y0: cy + radius * Math.sin(theta0),
    tx: 0,
    ty: 0,
    cx,
    cy,
    radius,
    theta0,
    dir,
    length: radius * Math.abs(theta1 - theta0),
  };
}

/** The part of a curve between arc lengths a and b, as a curve of its own. */
export function subCurve(c: Curve2d, a: number, b: number): Curve2d {
  if (c.kind === 'line') return { ...c, x0: c.x0 + a * c.tx, y0: c.y0 + a * c.ty, length: b - a };
  const theta0 = c.theta0 + (c.dir * a) / c.radius;
  return { ...c, theta0, x0: c.cx + c.radius * Math.cos(theta0), y0: c.cy + c.radius * Math.sin(theta0), length: b - a };
}

/**
 * Splits a piece into elements of about size h. Toward a graded end the spacing follows a cosine
 * (Chebyshev) law, so the end elements are O(h²/L) long: the usual remedy for the ρ^(−1/2) density
 * at a thin rim and the milder singularity at a corner (common practice).
 */
export function splitPiece(p: Piece, h: number, minCount = 1): Element2d[] {
  const graded = (p.gradeStart ? 1 : 0) + (p.gradeEnd ? 1 : 0);
  // Cosine spacing is π/2 (one end) or π/2 (both ends) times denser in the middle than uniform: compensate.
  const factor = graded === 0 ? 1 : Math.PI / 2;
  const n = Math.max(minCount, Math.ceil((factor * p.length) / h - 1e-9));
  const map = (u: number): number => {
    if (p.gradeStart && p.gradeEnd) return 0.5 * (1 - Math.cos(Math.PI * u));
    if (p.gradeStart) return 1 - Math.cos((Math.PI / 2) * u);
    if (p.gradeEnd) return Math.sin((Math.PI / 2) * u);
    return u;
  };
  const out: Element2d[] = [];
  const tmp = new Float64Array(4);
  for (let i = 0; i < n; i++) {
    const a = p.length * map(i / n);
    const b = i === n - 1 ? p.length : p.length * map((i + 1) / n);
    const c = subCurve(p, a, b);
    curvePoint(c, c.length / 2, tmp);
    out.push({
      ...c,
      electrode: p.electrode,
      thin: p.thin,
      edge: (i === 0 && p.gradeStart) || (i === n - 1 && p.gradeEnd),
      mx: tmp[0],
      my: tmp[1],
      nx: tmp[3],
      ny: -tmp[2],
    });
  }
  return out;
}

/** Pieces of a polyline (closed or open); `skip(i)` drops side i (e.g. a side lying on the axis). */
export function polylinePieces(
  points: [number, number][],
  closed: boolean,
  electrode: number,
  thin: boolean,
  options: { cornerDegrees?: number; gradeOpenEnd?: (x: number, y: number) => boolean; skip?: (a: [number, number], b: [number, number]) => boolean } = {},
): Piece[] {
  const corner = ((options.cornerDegrees ?? 20) * Math.PI) / 180;
  // Repeated points (a closed profile written with its first point again at the end) add nothing.
  points = points.filter((p, i) => {
    if (i === points.length - 1 && !closed) return true;
    const q = points[(i + 1) % points.length];
    return p[0] !== q[0] || p[1] !== q[1];
  });
  const n = points.length;
  const sides = closed ? n : n - 1;
  const keep: boolean[] = [];
  for (let i = 0; i < sides; i++) {
    const a = points[i];
    const b = points[(i + 1) % n];
    keep.push(Math.hypot(b[0] - a[0], b[1] - a[1]) > 0 && !(options.skip?.(a, b) ?? false));
  }
  // Turning angle at vertex i between side i−1 and side i.
  const sharpAt = (i: number): boolean => {
    const prev = (i - 1 + sides) % sides;
    if (!closed && (i === 0 || i === n - 1)) return false;
    if (!keep[prev] || !keep[i % sides]) return false;
    const a = points[(i - 1 + n) % n], v = points[i], b = points[(i + 1) % n];
    const t1 = Math.atan2(v[1] - a[1], v[0] - a[0]);
    const t2 = Math.atan2(b[1] - v[1], b[0] - v[0]);
    let turn = Math.abs(t2 - t1);
    if (turn > Math.PI) turn = 2 * Math.PI - turn;
    return turn > corner;
  };
  // An end of a kept side where the next side is missing (open end or dropped side) is a rim.
  const rimAt = (i: number, side: number, atStart: boolean): boolean => {
    const other = atStart ? side - 1 : side + 1;
    const otherKept = closed ? keep[(other + sides) % sides] : other >= 0 && other < sides && keep[other];
    if (otherKept) return false;
    const p = points[i % n];
    return options.gradeOpenEnd ? options.gradeOpenEnd(p[0], p[1]) : true;
  };
  const pieces: Piece[] = [];
  for (let i = 0; i < sides; i++) {
    if (!keep[i]) continue;
    const a = points[i];
    const b = points[(i + 1) % n];
    pieces.push({
      ...lineCurve(a[0], a[1], b[0], b[1]),
      electrode,
      thin,
      gradeStart: sharpAt(i) || rimAt(i, i, true),
      gradeEnd: sharpAt((i + 1) % n) || rimAt(i + 1, i, false),
    });
  }
  return pieces;
}

/** Twice the signed area of a closed polygon (shoelace formula): positive when counter-clockwise. */
export function signedArea2(points: [number, number][]): number {
  let a = 0;
  for (let i = 0; i < points.length; i++) {
    const p = points[i];
    const q = points[(i + 1) % points.length];
    a += p[0] * q[1] - q[0] * p[1];
  }
  return a;
}
