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
// the normal field across a charged sheet is left to the caller.
// Far from the panel a 7-point Gauss rule of degree 5 (Dunavant, Int. J. Numer. Methods Eng. 21,
// 1129, 1985) is used instead: beyond FAR_RATIO panel diameters from the centroid its relative error
// is below 2e-7 for 1/R and 1.5e-6 for the gradient (measured over random directions; at 2 diameters
// 2e-6 and 1.5e-5; checked in tests/engine/triangle.test.ts).
import type { Mesh } from '../mesh/types';

/** Distance from the centroid, in panel diameters, beyond which the Gauss rule replaces the closed form. */
export const FAR_RATIO = 3;

/** Dunavant's 7-point rule: barycentric coordinates (a, b, b) and permutations, with weights summing to 1. */
const G_A1 = 0.0597158717897698;
const G_B1 = 0.4701420641051151;
const G_W1 = 0.1323941527885062;
const G_A2 = 0.7974269853530873;
const G_B2 = 0.1012865073234563;
const G_W2 = 0.1259391805448271;
const GAUSS_BARY: number[][] = [
  [1 / 3, 1 / 3, 1 / 3],
  [G_A1, G_B1, G_B1],
  [G_B1, G_A1, G_B1],
  [G_B1, G_B1, G_A1],
  [G_A2, G_B2, G_B2],
  [G_B2, G_A2, G_B2],
  [G_B2, G_B2, G_A2],
];
const GAUSS_W = [0.225, G_W1, G_W1, G_W1, G_W2, G_W2, G_W2];
export const GAUSS_POINTS = 7;

/**
 * Panels prepared for kernel evaluation: everything per panel in flat arrays.
 * vertices 9, normal 3, edge tangents 9, edge outward normals 9, centroid 3, Gauss points 21
 * (already multiplied by nothing: weights are GAUSS_W·area), area, squared far radius.
 */
export interface Panels {
  count: number;
  vertices: Float64Array;
  normal: Float64Array;
  tangent: Float64Array;
  outward: Float64Array;
  centroid: Float64Array;
  area: Float64Array;
  /** Gauss points, 3 per point, GAUSS_POINTS per panel. */
  gauss: Float64Array;
  /** Gauss weights (area included), GAUSS_POINTS per panel. */
  gaussWeight: Float64Array;
  /** (FAR_RATIO · diameter)²: beyond this squared distance from the centroid use the Gauss rule. */
  farSq: Float64Array;
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

/** ln(R + l) computed without cancellation: when l < 0, R + l = R0²/(R − l). */
function logRPlusL(R: number, l: number, R0sq: number): number {
  return l >= 0 ? Math.log(R + l) : Math.log(R0sq / (R - l));
}

/** I(r) = ∫ 1/R dA' over panel j, by the closed form (valid at any distance, used near the panel). */
export function potentialExact(P: Panels, j: number, x: number, y: number, z: number): number {
  const v = P.vertices, o = 9 * j;
  const nx = P.normal[3 * j], ny = P.normal[3 * j + 1], nz = P.normal[3 * j + 2];
  const d = nx * (x - v[o]) + ny * (y - v[o + 1]) + nz * (z - v[o + 2]);
  const ad = Math.abs(d);
  const tiny = 1e-24 * P.diameter[j] * P.diameter[j];
  let sumLog = 0;
  let sumBeta = 0;
  for (let k = 0; k < 3; k++) {
    const a = o + 3 * k, b = o + 3 * ((k + 1) % 3);
    const ax = v[a] - x, ay = v[a + 1] - y, az = v[a + 2] - z;
    const bx = v[b] - x, by = v[b + 1] - y, bz = v[b + 2] - z;
    const ux = P.outward[a], uy = P.outward[a + 1], uz = P.outward[a + 2];
    const tx = P.tangent[a], ty = P.tangent[a + 1], tz = P.tangent[a + 2];
    const t0 = ax * ux + ay * uy + az * uz;
    const lm = ax * tx + ay * ty + az * tz;
    const lp = bx * tx + by * ty + bz * tz;
    const R0sq = t0 * t0 + d * d + tiny;
    const Rm = Math.sqrt(ax * ax + ay * ay + az * az);
    const Rp = Math.sqrt(bx * bx + by * by + bz * bz);
    if (t0 !== 0) sumLog += t0 * (logRPlusL(Rp, lp, R0sq) - logRPlusL(Rm, lm, R0sq));
    if (ad > 0) sumBeta += Math.atan2(t0 * lp, R0sq + ad * Rp) - Math.atan2(t0 * lm, R0sq + ad * Rm);
  }
  return sumLog - ad * sumBeta;
}

/** ∇I(r) over panel j by the closed form, written to out[at..at+2]. */
export function gradientExact(P: Panels, j: number, x: number, y: number, z: number, out: Float64Array, at = 0): void {
  const v = P.vertices, o = 9 * j;
  const nx = P.normal[3 * j], ny = P.normal[3 * j + 1], nz = P.normal[3 * j + 2];
  const d = nx * (x - v[o]) + ny * (y - v[o + 1]) + nz * (z - v[o + 2]);
  const ad = Math.abs(d);
  const tiny = 1e-24 * P.diameter[j] * P.diameter[j];
  let gx = 0, gy = 0, gz = 0;
  let sumBeta = 0;
  for (let k = 0; k < 3; k++) {
    const a = o + 3 * k, b = o + 3 * ((k + 1) % 3);
    const ax = v[a] - x, ay = v[a + 1] - y, az = v[a + 2] - z;
    const bx = v[b] - x, by = v[b + 1] - y, bz = v[b + 2] - z;
    const ux = P.outward[a], uy = P.outward[a + 1], uz = P.outward[a + 2];
    const tx = P.tangent[a], ty = P.tangent[a + 1], tz = P.tangent[a + 2];
    const t0 = ax * ux + ay * uy + az * uz;
    const lm = ax * tx + ay * ty + az * tz;
    const lp = bx * tx + by * ty + bz * tz;
    const R0sq = t0 * t0 + d * d + tiny;
    const Rm = Math.sqrt(ax * ax + ay * ay + az * az);
    const Rp = Math.sqrt(bx * bx + by * by + bz * bz);
    const f = logRPlusL(Rp, lp, R0sq) - logRPlusL(Rm, lm, R0sq);
    gx -= ux * f;
    gy -= uy * f;
    gz -= uz * f;
    if (ad > 0) sumBeta += Math.atan2(t0 * lp, R0sq + ad * Rp) - Math.atan2(t0 * lm, R0sq + ad * Rm);
  }
  // Within rounding of the plane (centroids computed in floating point), take the principal value.
  const s = ad <= 1e-12 * P.diameter[j] ? 0 : d > 0 ? sumBeta : -sumBeta;
  out[at] = gx - s * nx;
  out[at + 1] = gy - s * ny;
  out[at + 2] = gz - s * nz;
}

/** I(r) over panel j by the 7-point Gauss rule (accurate far from the panel only). */
export function potentialGauss(P: Panels, j: number, x: number, y: number, z: number): number {
  const g = P.gauss, w = P.gaussWeight;
  let sum = 0;
  for (let q = GAUSS_POINTS * j, end = q + GAUSS_POINTS; q < end; q++) {
    const dx = x - g[3 * q], dy = y - g[3 * q + 1], dz = z - g[3 * q + 2];
    sum += w[q] / Math.sqrt(dx * dx + dy * dy + dz * dz);
  }
  return sum;
}

/** ∇I(r) over panel j by the 7-point Gauss rule, written to out[at..at+2]. */
export function gradientGauss(P: Panels, j: number, x: number, y: number, z: number, out: Float64Array, at = 0): void {
  const g = P.gauss, w = P.gaussWeight;
  let gx = 0, gy = 0, gz = 0;
  for (let q = GAUSS_POINTS * j, end = q + GAUSS_POINTS; q < end; q++) {
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

/** I(r) over panel j: closed form near the panel, Gauss rule beyond FAR_RATIO diameters. */
export function panelPotential(P: Panels, j: number, x: number, y: number, z: number): number {
  return centroidDistSq(P, j, x, y, z) > P.farSq[j] ? potentialGauss(P, j, x, y, z) : potentialExact(P, j, x, y, z);
}

/** ∇I(r) over panel j: closed form near the panel, Gauss rule beyond FAR_RATIO diameters. */
export function panelGradient(P: Panels, j: number, x: number, y: number, z: number, out: Float64Array, at = 0): void {
  if (centroidDistSq(P, j, x, y, z) > P.farSq[j]) gradientGauss(P, j, x, y, z, out, at);
  else gradientExact(P, j, x, y, z, out, at);
}

/**
 * I(r) and ∇I(r) over panel j together (one pass over the edges or Gauss points), written to
 * out[at] (I) and out[at+1..at+3] (∇I): closed form near the panel, Gauss rule beyond FAR_RATIO.
 */
export function panelPotentialAndGradient(P: Panels, j: number, x: number, y: number, z: number, out: Float64Array, at = 0): void {
  if (centroidDistSq(P, j, x, y, z) > P.farSq[j]) {
    const g = P.gauss, w = P.gaussWeight;
    let p = 0, gx = 0, gy = 0, gz = 0;
    for (let q = GAUSS_POINTS * j, end = q + GAUSS_POINTS; q < end; q++) {
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
  const v = P.vertices, o = 9 * j;
  const nx = P.normal[3 * j], ny = P.normal[3 * j + 1], nz = P.normal[3 * j + 2];
  const d = nx * (x - v[o]) + ny * (y - v[o + 1]) + nz * (z - v[o + 2]);
  const ad = Math.abs(d);
  const tiny = 1e-24 * P.diameter[j] * P.diameter[j];
  let sumLog = 0, sumBeta = 0, gx = 0, gy = 0, gz = 0;
  for (let k = 0; k < 3; k++) {
    const a = o + 3 * k, b = o + 3 * ((k + 1) % 3);
    const ax = v[a] - x, ay = v[a + 1] - y, az = v[a + 2] - z;
    const bx = v[b] - x, by = v[b + 1] - y, bz = v[b + 2] - z;
    const ux = P.outward[a], uy = P.outward[a + 1], uz = P.outward[a + 2];
    const tx = P.tangent[a], ty = P.tangent[a + 1], tz = P.tangent[a + 2];
    const t0 = ax * ux + ay * uy + az * uz;
    const lm = ax * tx + ay * ty + az * tz;
    const lp = bx * tx + by * ty + bz * tz;
    const R0sq = t0 * t0 + d * d + tiny;
    const Rm = Math.sqrt(ax * ax + ay * ay + az * az);
    const Rp = Math.sqrt(bx * bx + by * by + bz * bz);
    const f = logRPlusL(Rp, lp, R0sq) - logRPlusL(Rm, lm, R0sq);
    if (t0 !== 0) sumLog += t0 * f;
    gx -= ux * f;
    gy -= uy * f;
    gz -= uz * f;
    if (ad > 0) sumBeta += Math.atan2(t0 * lp, R0sq + ad * Rp) - Math.atan2(t0 * lm, R0sq + ad * Rm);
  }
  const s = ad <= 1e-12 * P.diameter[j] ? 0 : d > 0 ? sumBeta : -sumBeta;
  out[at] = sumLog - ad * sumBeta;
  out[at + 1] = gx - s * nx;
  out[at + 2] = gy - s * ny;
  out[at + 3] = gz - s * nz;
}
