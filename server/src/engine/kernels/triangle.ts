// Integrals of 1/R and of its gradient over flat triangular panels (unit density), at any point.
//
//   I(r)  = ∫_T 1/|r − r'| dA'                      (metres)
//   ∇I(r) = −∫_T (r − r')/|r − r'|³ dA'              (dimensionless)
//
// Near a panel both have exact closed forms (Wilton, Rao, Glisson, Schaubert, Butler and Al-Bundak,
// IEEE Trans. Antennas Propag. 32, 276, 1984; Graglia, same journal 41, 1448, 1993). With the
// panel's unit normal n, the height d = n·(r − v0), and per edge i (from a to b, unit tangent l̂,
// in-plane outward normal û = l̂ × n):
//   t0 = (a − r)·û,  l± = (b|a − r)·l̂,  R0² = t0² + d²,  R± = |b|a − r|,
//   f_i = ln((R⁺ + l⁺)/(R⁻ + l⁻)),  β_i = atan(t0·l⁺/(R0² + |d|R⁺)) − atan(t0·l⁻/(R0² + |d|R⁻)),
//   I   = Σ t0·f_i − |d|·Σ β_i,
//   ∇I  = −Σ û_i·f_i − sign(d)·n·Σ β_i.
// In the panel's plane (d = 0) the normal part is the principal value (zero): the jump ±σ/(2ε) of
// the normal field across a charged sheet is left to the caller. Evaluated with one square root per
// vertex and one logarithm and one arctangent per edge (closedForm).
// Far from the panel Gauss rules of Dunavant (Int. J. Numer. Methods Eng. 21, 1129, 1985) are used
// instead, fewer points the farther away: beyond FAR_RATIO = 2 panel diameters from the centroid the
// 7-point rule of degree 5, beyond 2.5 the 6-point rule of degree 4, beyond 6 the 4-point rule of
// degree 3 and beyond 10 the 3-point rule of degree 2. Each switch keeps the relative error below
// 3e-6 for 1/R and 2.5e-5 for the gradient (worst over 200 random triangles, skinny ones included,
// and 30 directions each; at its switch distance: 7-point 2.9e-6 and 2.2e-5, 6-point 2.4e-6 and
// 1.5e-5, 4-point 3.0e-6 and 1.6e-5, 3-point 2.9e-6 and 1.2e-5; measured here, checked in
// tests/engine/triangle.test.ts), two orders below the discretization error of the meshes used.
// (The 7-point rule alone from 3 diameters was good to 2e-7 and 1.6e-6 but cost 1.8x the assembly
// time on the samples' coarse meshes, where a fifth of all entries lie within 3 diameters.)
import type { Mesh } from '../mesh/types';

/** Distance from the centroid, in panel diameters, beyond which Gauss rules replace the closed form. */
export const FAR_RATIO = 2;

/** Dunavant's 7-point rule (degree 5): barycentric coordinates (a, b, b) and permutations, with weights summing to 1. */
const G_A1 = 0.0597158717897698;
const G_B1 = 0.4701420641051151;
const G_W1 = 0.1323941527885062;
const G_A2 = 0.7974269853530873;
const G_B2 = 0.1012865073234563;
const G_W2 = 0.1259391805448271;
/** Dunavant's 6-point rule (degree 4). */
const H_A1 = 0.10810301816807;
const H_B1 = 0.445948490915965;
const H_W1 = 0.223381589678011;
const H_A2 = 0.816847572980459;
const H_B2 = 0.091576213509771;
const H_W2 = 0.109951743655322;
/** The rules one after another: 7 points (degree 5), 6 (degree 4), 4 (degree 3: negative centroid weight), 3 (degree 2). */
const GAUSS_BARY: number[][] = [
  [1 / 3, 1 / 3, 1 / 3],
  [G_A1, G_B1, G_B1],
  [G_B1, G_A1, G_B1],
  [G_B1, G_B1, G_A1],
  [G_A2, G_B2, G_B2],
  [G_B2, G_A2, G_B2],
  [G_B2, G_B2, G_A2],
  [H_A1, H_B1, H_B1],
  [H_B1, H_A1, H_B1],
  [H_B1, H_B1, H_A1],
  [H_A2, H_B2, H_B2],
  [H_B2, H_A2, H_B2],
  [H_B2, H_B2, H_A2],
  [1 / 3, 1 / 3, 1 / 3],
  [0.6, 0.2, 0.2],
  [0.2, 0.6, 0.2],
  [0.2, 0.2, 0.6],
  [2 / 3, 1 / 6, 1 / 6],
  [1 / 6, 2 / 3, 1 / 6],
  [1 / 6, 1 / 6, 2 / 3],
];
const GAUSS_W = [
  0.225, G_W1, G_W1, G_W1, G_W2, G_W2, G_W2,
  H_W1, H_W1, H_W1, H_W2, H_W2, H_W2,
  -27 / 48, 25 / 48, 25 / 48, 25 / 48,
  1 / 3, 1 / 3, 1 / 3,
];
/** Points stored per panel: all four rules. */
export const GAUSS_POINTS = 20;
/** Where each rule starts among a panel's points, and (squared) from how many diameters it is used. */
/** Where each rule's points start among a panel's GAUSS_POINTS (the 7-point rule at 0), and the squared switch distances in diameters (far-rule.ts uses these too). */
const RULE_6 = 7, RULE_4 = 13, RULE_3 = 17;
export const FROM_6_SQ = 2.5 ** 2, FROM_4_SQ = 6 ** 2, FROM_3_SQ = 10 ** 2;

/**
 * Panels prepared for kernel evaluation: everything per panel in flat arrays.
 * vertices 9, normal 3, edge tangents 9, edge outward normals 9, centroid 3, Gauss points 21
 * (weights GAUSS_W·area), area, squared far radius.
 */
export interface Panels {
  count: number;
  vertices: Float64Array;
  normal: Float64Array;
  tangent: Float64Array;
  outward: Float64Array;
  centroid: Float64Array;
  area: Float64Array;
  /** Gauss points of the four rules, 3 per point, GAUSS_POINTS per panel. */
  gauss: Float64Array;
  /** Gauss weights (area included), GAUSS_POINTS per panel. */
  gaussWeight: Float64Array;
  /** (FAR_RATIO · diameter)²: beyond this squared distance from the centroid use the Gauss rules. */
  farSq: Float64Array;
  /** diameter²: the rules' switch distances are multiples of it. */
  diameterSq: Float64Array;
  /** Longest edge of each panel. */
  diameter: Float64Array;
}

/** Prepares a mesh's panels (or a plain triangle list) for the kernels. */
export function preparePanels(mesh: Pick<Mesh, 'vertices' | 'triangles'>): Panels {
  const count = mesh.triangles.length / 3;
  const P: Panels = {
    count,
    vertices: new Float64Array(9 * count),
    normal: new Float64Array(3 * count),
    tangent: new Float64Array(9 * count),
    outward: new Float64Array(9 * count),
    centroid: new Float64Array(3 * count),
    area: new Float64Array(count),
    gauss: new Float64Array(3 * GAUSS_POINTS * count),
    gaussWeight: new Float64Array(GAUSS_POINTS * count),
    farSq: new Float64Array(count),
    diameterSq: new Float64Array(count),
    diameter: new Float64Array(count),
  };
  const V = mesh.vertices;
  for (let j = 0; j < count; j++) {
    const v = P.vertices;
    for (let k = 0; k < 3; k++) {
      const idx = mesh.triangles[3 * j + k];
      v[9 * j + 3 * k] = V[3 * idx];
      v[9 * j + 3 * k + 1] = V[3 * idx + 1];
      v[9 * j + 3 * k + 2] = V[3 * idx + 2];
    }
    const o = 9 * j;
    const e1x = v[o + 3] - v[o], e1y = v[o + 4] - v[o + 1], e1z = v[o + 5] - v[o + 2];
    const e2x = v[o + 6] - v[o], e2y = v[o + 7] - v[o + 1], e2z = v[o + 8] - v[o + 2];
    let nx = e1y * e2z - e1z * e2y, ny = e1z * e2x - e1x * e2z, nz = e1x * e2y - e1y * e2x;
    const twiceArea = Math.hypot(nx, ny, nz);
    P.area[j] = twiceArea / 2;
    if (twiceArea > 0) {
      nx /= twiceArea;
      ny /= twiceArea;
      nz /= twiceArea;
    }
    P.normal[3 * j] = nx;
    P.normal[3 * j + 1] = ny;
    P.normal[3 * j + 2] = nz;
    let diam = 0;
    for (let k = 0; k < 3; k++) {
      const a = o + 3 * k, b = o + 3 * ((k + 1) % 3);
      let tx = v[b] - v[a], ty = v[b + 1] - v[a + 1], tz = v[b + 2] - v[a + 2];
      const len = Math.hypot(tx, ty, tz);
      diam = Math.max(diam, len);
      if (len > 0) {
        tx /= len;
        ty /= len;
        tz /= len;
      }
      P.tangent[o + 3 * k] = tx;
      P.tangent[o + 3 * k + 1] = ty;
      P.tangent[o + 3 * k + 2] = tz;
      // û = l̂ × n
      P.outward[o + 3 * k] = ty * nz - tz * ny;
      P.outward[o + 3 * k + 1] = tz * nx - tx * nz;
      P.outward[o + 3 * k + 2] = tx * ny - ty * nx;
    }
    P.diameter[j] = diam;
    P.farSq[j] = (FAR_RATIO * diam) ** 2;
    P.diameterSq[j] = diam * diam;
    for (let c = 0; c < 3; c++) P.centroid[3 * j + c] = (v[o + c] + v[o + 3 + c] + v[o + 6 + c]) / 3;
    for (let g = 0; g < GAUSS_POINTS; g++) {
      const [l0, l1, l2] = GAUSS_BARY[g];
      const q = 3 * (GAUSS_POINTS * j + g);
      for (let c = 0; c < 3; c++) P.gauss[q + c] = l0 * v[o + c] + l1 * v[o + 3 + c] + l2 * v[o + 6 + c];
      P.gaussWeight[GAUSS_POINTS * j + g] = GAUSS_W[g] * P.area[j];
    }
  }
  return P;
}

/** R + l computed without cancellation: when l < 0, R + l = R0²/(R − l). */
function rPlusL(R: number, l: number, R0sq: number): number {
  return l >= 0 ? R + l : R0sq / (R - l);
}

/** Scratch of closedForm: [Σ t0·f, Σ β, −Σ û_x·f, −Σ û_y·f, −Σ û_z·f, d]. */
const edgeSums = new Float64Array(6);

/**
 * The edge sums of the closed forms (header) for panel j at (x, y, z), into edgeSums. Each vertex's
 * distance is taken once (shared by its two edges); per edge, f = ln((R⁺ + l⁺)/(R⁻ + l⁻)) is one
 * logarithm of the ratio, and β one arctangent: atan2(y⁺, x⁺) − atan2(y⁻, x⁻) =
 * atan2(y⁺x⁻ − x⁺y⁻, x⁺x⁻ + y⁺y⁻), exact here since x± = R0² + |d|R± > 0 puts both angles in
 * (−π/2, π/2) and their difference in (−π, π).
 */
function closedForm(P: Panels, j: number, x: number, y: number, z: number): void {
  const v = P.vertices, o = 9 * j;
  const nx = P.normal[3 * j], ny = P.normal[3 * j + 1], nz = P.normal[3 * j + 2];
  const d = nx * (x - v[o]) + ny * (y - v[o + 1]) + nz * (z - v[o + 2]);
  const ad = Math.abs(d);
  // In the panel's plane up to rounding (coplanar panels of a flat face): the β terms, which come
  // with the factor |d| in I and are left out of ∇I there (principal value), are skipped.
  const offPlane = ad > 1e-12 * P.diameter[j];
  const tiny = 1e-24 * P.diameter[j] * P.diameter[j];
  const ax0 = v[o] - x, ay0 = v[o + 1] - y, az0 = v[o + 2] - z;
  const ax1 = v[o + 3] - x, ay1 = v[o + 4] - y, az1 = v[o + 5] - z;
  const ax2 = v[o + 6] - x, ay2 = v[o + 7] - y, az2 = v[o + 8] - z;
  const R0 = Math.sqrt(ax0 * ax0 + ay0 * ay0 + az0 * az0);
  const R1 = Math.sqrt(ax1 * ax1 + ay1 * ay1 + az1 * az1);
  const R2 = Math.sqrt(ax2 * ax2 + ay2 * ay2 + az2 * az2);
  let sumLog = 0, sumBeta = 0, gx = 0, gy = 0, gz = 0;
  for (let k = 0; k < 3; k++) {
    // Edge k runs from vertex k (a, distance Rm) to vertex k + 1 (b, distance Rp).
    const ax = k === 0 ? ax0 : k === 1 ? ax1 : ax2;
    const ay = k === 0 ? ay0 : k === 1 ? ay1 : ay2;
    const az = k === 0 ? az0 : k === 1 ? az1 : az2;
    const bx = k === 0 ? ax1 : k === 1 ? ax2 : ax0;
    const by = k === 0 ? ay1 : k === 1 ? ay2 : ay0;
    const bz = k === 0 ? az1 : k === 1 ? az2 : az0;
    const Rm = k === 0 ? R0 : k === 1 ? R1 : R2;
    const Rp = k === 0 ? R1 : k === 1 ? R2 : R0;
    const a = o + 3 * k;
    const ux = P.outward[a], uy = P.outward[a + 1], uz = P.outward[a + 2];
    const tx = P.tangent[a], ty = P.tangent[a + 1], tz = P.tangent[a + 2];
    const t0 = ax * ux + ay * uy + az * uz;
    const lm = ax * tx + ay * ty + az * tz;
    const lp = bx * tx + by * ty + bz * tz;
    const R0sq = t0 * t0 + d * d + tiny;
    const f = Math.log(rPlusL(Rp, lp, R0sq) / rPlusL(Rm, lm, R0sq));
    if (t0 !== 0) sumLog += t0 * f;
    gx -= ux * f;
    gy -= uy * f;
    gz -= uz * f;
    if (offPlane) {
      const yp = t0 * lp, xp = R0sq + ad * Rp, ym = t0 * lm, xm = R0sq + ad * Rm;
      sumBeta += Math.atan2(yp * xm - xp * ym, xp * xm + yp * ym);
    }
  }
  edgeSums[0] = sumLog;
  edgeSums[1] = sumBeta;
  edgeSums[2] = gx;
  edgeSums[3] = gy;
  edgeSums[4] = gz;
  edgeSums[5] = d;
}

/** I(r) = ∫ 1/R dA' over panel j, by the closed form (valid at any distance, used near the panel). */
export function potentialExact(P: Panels, j: number, x: number, y: number, z: number): number {
  closedForm(P, j, x, y, z);
  return edgeSums[0] - Math.abs(edgeSums[5]) * edgeSums[1];
}

/** The gradient part of the closed form from edgeSums, to out[at..at+2]. */
function gradientFromSums(P: Panels, j: number, out: Float64Array, at: number): void {
  const d = edgeSums[5];
  const sumBeta = edgeSums[1];
  // Within rounding of the plane (centroids computed in floating point), take the principal value.
  const s = Math.abs(d) <= 1e-12 * P.diameter[j] ? 0 : d > 0 ? sumBeta : -sumBeta;
  out[at] = edgeSums[2] - s * P.normal[3 * j];
  out[at + 1] = edgeSums[3] - s * P.normal[3 * j + 1];
  out[at + 2] = edgeSums[4] - s * P.normal[3 * j + 2];
}

/** ∇I(r) over panel j by the closed form, written to out[at..at+2]. */
export function gradientExact(P: Panels, j: number, x: number, y: number, z: number, out: Float64Array, at = 0): void {
  closedForm(P, j, x, y, z);
  gradientFromSums(P, j, out, at);
}

/** The first of panel j's Gauss points for a point at squared distance d2 from its centroid (see the header). */
function ruleStart(P: Panels, j: number, d2: number): number {
  const h2 = P.diameterSq[j];
  return GAUSS_POINTS * j + (d2 > FROM_3_SQ * h2 ? RULE_3 : d2 > FROM_4_SQ * h2 ? RULE_4 : d2 > FROM_6_SQ * h2 ? RULE_6 : 0);
}

/** Where a rule that starts at point q (as ruleStart gives) ends. */
function ruleEnd(P: Panels, j: number, q: number): number {
  const r = q - GAUSS_POINTS * j;
  return GAUSS_POINTS * j + (r === 0 ? RULE_6 : r === RULE_6 ? RULE_4 : r === RULE_4 ? RULE_3 : GAUSS_POINTS);
}

/** I(r) over panel j by the 7-point Gauss rule (accurate far from the panel only). */
export function potentialGauss(P: Panels, j: number, x: number, y: number, z: number): number {
  return potentialRule(P, j, x, y, z, GAUSS_POINTS * j);
}

/** I(r) over panel j by the rule for its distance (accurate beyond FAR_RATIO diameters only). */
export function potentialFar(P: Panels, j: number, x: number, y: number, z: number): number {
  return potentialRule(P, j, x, y, z, ruleStart(P, j, centroidDistSq(P, j, x, y, z)));
}

function potentialRule(P: Panels, j: number, x: number, y: number, z: number, first: number): number {
  const g = P.gauss, w = P.gaussWeight;
  let sum = 0;
  for (let q = first, end = ruleEnd(P, j, first); q < end; q++) {
    const dx = x - g[3 * q], dy = y - g[3 * q + 1], dz = z - g[3 * q + 2];
    sum += w[q] / Math.sqrt(dx * dx + dy * dy + dz * dz);
  }
  return sum;
}

/** ∇I(r) over panel j by the 7-point Gauss rule, written to out[at..at+2]. */
export function gradientGauss(P: Panels, j: number, x: number, y: number, z: number, out: Float64Array, at = 0): void {
  gradientRule(P, j, x, y, z, out, at, GAUSS_POINTS * j);
}

/** ∇I(r) over panel j by the rule for its distance (beyond FAR_RATIO diameters only), to out[at..at+2]. */
export function gradientFar(P: Panels, j: number, x: number, y: number, z: number, out: Float64Array, at = 0): void {
  gradientRule(P, j, x, y, z, out, at, ruleStart(P, j, centroidDistSq(P, j, x, y, z)));
}

function gradientRule(P: Panels, j: number, x: number, y: number, z: number, out: Float64Array, at: number, first: number): void {
  const g = P.gauss, w = P.gaussWeight;
  let gx = 0, gy = 0, gz = 0;
  for (let q = first, end = ruleEnd(P, j, first); q < end; q++) {
    const dx = x - g[3 * q], dy = y - g[3 * q + 1], dz = z - g[3 * q + 2];
    const r2 = dx * dx + dy * dy + dz * dz;
    const s = w[q] / (r2 * Math.sqrt(r2));
    gx -= s * dx;
    gy -= s * dy;
    gz -= s * dz;
  }
  out[at] = gx;
  out[at + 1] = gy;
  out[at + 2] = gz;
}

/** Squared distance from (x, y, z) to panel j's centroid. */
function centroidDistSq(P: Panels, j: number, x: number, y: number, z: number): number {
  const c = P.centroid;
  const dx = x - c[3 * j], dy = y - c[3 * j + 1], dz = z - c[3 * j + 2];
  return dx * dx + dy * dy + dz * dz;
}

/** I(r) over panel j: closed form near the panel, Gauss rules beyond FAR_RATIO diameters. */
export function panelPotential(P: Panels, j: number, x: number, y: number, z: number): number {
  const d2 = centroidDistSq(P, j, x, y, z);
  return d2 > P.farSq[j] ? potentialRule(P, j, x, y, z, ruleStart(P, j, d2)) : potentialExact(P, j, x, y, z);
}

/** ∇I(r) over panel j: closed form near the panel, Gauss rules beyond FAR_RATIO diameters. */
export function panelGradient(P: Panels, j: number, x: number, y: number, z: number, out: Float64Array, at = 0): void {
  const d2 = centroidDistSq(P, j, x, y, z);
  if (d2 > P.farSq[j]) gradientRule(P, j, x, y, z, out, at, ruleStart(P, j, d2));
  else gradientExact(P, j, x, y, z, out, at);
}

/**
 * I(r) and ∇I(r) over panel j together (one pass over the edges or Gauss points), written to
 * out[at] (I) and out[at+1..at+3] (∇I): closed form near the panel, Gauss rules beyond FAR_RATIO.
 */
export function panelPotentialAndGradient(P: Panels, j: number, x: number, y: number, z: number, out: Float64Array, at = 0): void {
  const d2 = centroidDistSq(P, j, x, y, z);
  if (d2 > P.farSq[j]) {
    const g = P.gauss, w = P.gaussWeight;
    let p = 0, gx = 0, gy = 0, gz = 0;
    const first = ruleStart(P, j, d2);
    for (let q = first, end = ruleEnd(P, j, first); q < end; q++) {
      const dx = x - g[3 * q], dy = y - g[3 * q + 1], dz = z - g[3 * q + 2];
      const r2 = dx * dx + dy * dy + dz * dz;
      const inv = 1 / Math.sqrt(r2);
      const s = w[q] * inv;
      p += s;
      const s3 = s * inv * inv;
      gx -= s3 * dx;
      gy -= s3 * dy;
      gz -= s3 * dz;
    }
    out[at] = p;
    out[at + 1] = gx;
    out[at + 2] = gy;
    out[at + 3] = gz;
    return;
  }
  closedForm(P, j, x, y, z);
  out[at] = edgeSums[0] - Math.abs(edgeSums[5]) * edgeSums[1];
  gradientFromSums(P, j, out, at + 1);
}
