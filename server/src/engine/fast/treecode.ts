// Fast evaluation of the potential and field of charged panels at many points (slice grids,
// probes, field lines): a treecode (Barnes and Hut, "A hierarchical O(N log N) force-calculation
// algorithm", Nature 324, 446-449, 1986) with Cartesian multipoles up to the quadrupole.
//
// For a cluster with centre c, charges q_j = σ_j·A_j and r = x − c, r = |r|:
//   Q = Σ q_j,   p = Σ ∫ σ (y − c) dA,   M = Σ ∫ σ (y − c)(y − c)ᵀ dA   (raw second moments)
//   φ(x)/k ≈ Q/r + p·r/r³ + (3 rᵀM r − r² tr M)/(2 r⁵)
//   ∇φ/k   ≈ −Q r/r³ + p/r³ − 3(p·r) r/r⁵ + 3 M r/r⁵ − (15/2)(rᵀM r) r/r⁷ + (3/2) tr M · r/r⁵
// (Jackson, Classical Electrodynamics, 3rd ed., sec. 4.1, the Cartesian multipole expansion.)
// Each panel's moments are exact for a uniform density: about its centroid g, a triangle with
// vertices v_i has ∫ (y − g)(y − g)ᵀ dA = (A/12) Σ_i (v_i − g)(v_i − g)ᵀ (common practice; second
// moments of a triangle). A cluster is used whole when its radius ρ (centre to farthest box corner)
// satisfies ρ < θ·r; otherwise its children are opened, and a leaf's panels are summed one by one
// with the exact panel integrals near them (server/src/engine/kernels/triangle.ts). The truncation
// error is about (ρ/r)³ relative to the cluster's own contribution: θ = 0.5 gives about 1e-3 on a
// slice, θ = 0.3 about 1e-4 (measured in tests/fast/treecode.test.ts).
import { panelPotentialAndGradient, type Panels } from '../kernels/triangle';
import { buildClusterTree, type ClusterTree } from './cluster-tree';

export interface PanelTree {
  P: Panels;
  tree: ClusterTree;
  /** Per node: centre (3), radius. */
  center: Float64Array;
  radius: Float64Array;
  /** How many density sets are summed at once (D): each point gets D results in one walk of the tree. */
  densities: number;
  /** Per node and density set (node·D + d): charge Q, dipole (3), second moments (6: xx, yy, zz, xy, xz, yz). */
  moments: Float64Array;
  /** Surface densities in tree order, D per panel (σ_d of panel tree.order[k] at k·D + d). */
  sigma: Float64Array;
  /** Per panel in tree order: squared radius about its centroid. */
  panelRadiusSq: Float64Array;
  /** Per panel in tree order and density set (k·D + d): charge and second moments about its centroid (7). */
  panelMoments: Float64Array;
}

const MOM = 10;

/** Builds the tree over panels (once per mesh); charges are set with setDensities. */
export function buildPanelTree(P: Panels, leafSize = 16): PanelTree {
  const tree = buildClusterTree(P.centroid, leafSize, { coords: P.vertices, stride: 9 });
  const nodes = tree.nodeCount;
  const center = new Float64Array(3 * nodes);
  const radius = new Float64Array(nodes);
  for (let v = 0; v < nodes; v++) {
    let r2 = 0;
    for (let c = 0; c < 3; c++) {
      center[3 * v + c] = (tree.boxMin[3 * v + c] + tree.boxMax[3 * v + c]) / 2;
      r2 += ((tree.boxMax[3 * v + c] - tree.boxMin[3 * v + c]) / 2) ** 2;
    }
    radius[v] = Math.sqrt(r2);
  }
  const panelRadiusSq = new Float64Array(P.count);
  for (let k = 0; k < P.count; k++) {
    const j = tree.order[k];
    for (let i = 0; i < 3; i++) {
      let d2 = 0;
      for (let c = 0; c < 3; c++) d2 += (P.vertices[9 * j + 3 * i + c] - P.centroid[3 * j + c]) ** 2;
      panelRadiusSq[k] = Math.max(panelRadiusSq[k], d2);
    }
  }
  return {
    P,
    tree,
    center,
    radius,
    densities: 1,
    moments: new Float64Array(MOM * nodes),
    sigma: new Float64Array(P.count),
    panelRadiusSq,
    panelMoments: new Float64Array(7 * P.count),
  };
}

/** Sets the panels' surface densities σ (C/m², caller's numbering) and recomputes every node's moments. */
export function setDensities(T: PanelTree, sigma: Float64Array): void {
  setDensitiesMany(T, [sigma]);
}

/**
 * Sets D density sets at once (each C/m², caller's numbering): evaluateTree then gives D results
 * per point, sharing the walk of the tree, the distances and every near-panel integral among them.
 */
export function setDensitiesMany(T: PanelTree, sigmas: readonly Float64Array[]): void {
  const { P, tree, center } = T;
  const D = sigmas.length, N = tree.order.length;
  T.densities = D;
  if (T.sigma.length !== D * N) {
    T.sigma = new Float64Array(D * N);
    T.panelMoments = new Float64Array(7 * D * N);
    T.moments = new Float64Array(MOM * D * tree.nodeCount);
  }
  const moments = T.moments;
  moments.fill(0);
  // Each panel's own second moments about its centroid, (A/12)·Σ(v_i − g)(v_i − g)ᵀ per unit charge.
  const own = new Float64Array(6 * N);
  for (let k = 0; k < N; k++) {
    const j = tree.order[k];
    let sxx = 0, syy = 0, szz = 0, sxy = 0, sxz = 0, syz = 0;
    for (let i = 0; i < 3; i++) {
      const ax = P.vertices[9 * j + 3 * i] - P.centroid[3 * j];
      const ay = P.vertices[9 * j + 3 * i + 1] - P.centroid[3 * j + 1];
      const az = P.vertices[9 * j + 3 * i + 2] - P.centroid[3 * j + 2];
      sxx += ax * ax; syy += ay * ay; szz += az * az; sxy += ax * ay; sxz += ax * az; syz += ay * az;
    }
    own.set([sxx, syy, szz, sxy, sxz, syz], 6 * k);
    for (let d = 0; d < D; d++) {
      const q = (T.sigma[k * D + d] = sigmas[d][j]) * P.area[j];
      const w = q / 12, o = 7 * (k * D + d);
      T.panelMoments[o] = q;
      for (let c = 0; c < 6; c++) T.panelMoments[o + 1 + c] = w * own[6 * k + c];
    }
  }
  // Each node sums its own panels directly (O(N log N) in all, and exact).
  for (let v = 0; v < tree.nodeCount; v++) {
    const cx = center[3 * v], cy = center[3 * v + 1], cz = center[3 * v + 2];
    for (let k = tree.start[v], end = k + tree.count[v]; k < end; k++) {
      const j = tree.order[k];
      const dx = P.centroid[3 * j] - cx, dy = P.centroid[3 * j + 1] - cy, dz = P.centroid[3 * j + 2] - cz;
      for (let d = 0; d < D; d++) {
        const q = T.sigma[k * D + d] * P.area[j];
        if (q === 0) continue;
        const w = q / 12, o = MOM * (v * D + d), e = 6 * k;
        moments[o] += q;
        moments[o + 1] += q * dx;
        moments[o + 2] += q * dy;
        moments[o + 3] += q * dz;
        moments[o + 4] += q * dx * dx + w * own[e];
        moments[o + 5] += q * dy * dy + w * own[e + 1];
        moments[o + 6] += q * dz * dz + w * own[e + 2];
        moments[o + 7] += q * dx * dy + w * own[e + 3];
        moments[o + 8] += q * dx * dz + w * own[e + 4];
        moments[o + 9] += q * dy * dz + w * own[e + 5];
      }
    }
  }
}

/**
 * Adds Σ_j σ_j·I_j(x) to out[4(iD + d)] and Σ_j σ_j·∇I_j(x) to out[4(iD + d) + 1..3] for points i
 * in [from, to) (3 coordinates each) and each density set d < D (D = 1: out[4i..4i+3]). Multiply
 * by 1/(4πε) for volts and negate the gradient for V/m.
 */
export function evaluateTree(T: PanelTree, points: Float64Array, from: number, to: number, theta: number, out: Float64Array): void {
  const { P, tree, center, radius, moments, sigma, panelRadiusSq, panelMoments } = T;
  const D = T.densities;
  const C = P.centroid;
  const stack = new Int32Array(256); // depth-first: at most two entries per level of a balanced tree
  const g = new Float64Array(4);
  const acc = new Float64Array(4 * D);
  const theta2 = theta * theta;
  for (let i = from; i < to; i++) {
    const x = points[3 * i], y = points[3 * i + 1], z = points[3 * i + 2];
    acc.fill(0);
    let top = 0;
    stack[top++] = 0;
    while (top > 0) {
      const v = stack[--top];
      const rx = x - center[3 * v], ry = y - center[3 * v + 1], rz = z - center[3 * v + 2];
      const r2 = rx * rx + ry * ry + rz * rz;
      const rho = radius[v];
      if (rho * rho < theta2 * r2) {
        const inv = 1 / Math.sqrt(r2);
        const inv2 = inv * inv, inv3 = inv2 * inv, inv5 = inv3 * inv2, inv7 = inv5 * inv2;
        for (let d = 0; d < D; d++) {
          const o = MOM * (v * D + d);
          const Q = moments[o], px = moments[o + 1], py = moments[o + 2], pz = moments[o + 3];
          const mxx = moments[o + 4], myy = moments[o + 5], mzz = moments[o + 6], mxy = moments[o + 7], mxz = moments[o + 8], myz = moments[o + 9];
          const pr = px * rx + py * ry + pz * rz;
          const Mrx = mxx * rx + mxy * ry + mxz * rz, Mry = mxy * rx + myy * ry + myz * rz, Mrz = mxz * rx + myz * ry + mzz * rz;
          const rMr = rx * Mrx + ry * Mry + rz * Mrz;
          const tr = mxx + myy + mzz;
          const a = -Q * inv3 - 3 * pr * inv5 - 7.5 * rMr * inv7 + 1.5 * tr * inv5;
          acc[4 * d] += Q * inv + pr * inv3 + (3 * rMr - r2 * tr) * 0.5 * inv5;
          acc[4 * d + 1] += a * rx + px * inv3 + 3 * Mrx * inv5;
          acc[4 * d + 2] += a * ry + py * inv3 + 3 * Mry * inv5;
          acc[4 * d + 3] += a * rz + pz * inv3 + 3 * Mrz * inv5;
        }
      } else if (tree.left[v] >= 0) {
        stack[top++] = tree.right[v];
        stack[top++] = tree.left[v];
      } else {
        for (let k = tree.start[v], end = k + tree.count[v]; k < end; k++) {
          let any = false;
          for (let d = 0; d < D; d++) any ||= sigma[k * D + d] !== 0;
          if (!any) continue;
          const j = tree.order[k];
          const rx = x - C[3 * j], ry = y - C[3 * j + 1], rz = z - C[3 * j + 2];
          const r2 = rx * rx + ry * ry + rz * rz;
          if (panelRadiusSq[k] < theta2 * r2) {
            // The panel alone as a charge with its second moments (no dipole about its centroid).
            const inv = 1 / Math.sqrt(r2);
            const inv2 = inv * inv, inv3 = inv2 * inv, inv5 = inv3 * inv2, inv7 = inv5 * inv2;
            for (let d = 0; d < D; d++) {
              const o = 7 * (k * D + d);
              const Q = panelMoments[o], mxx = panelMoments[o + 1], myy = panelMoments[o + 2], mzz = panelMoments[o + 3];
              const mxy = panelMoments[o + 4], mxz = panelMoments[o + 5], myz = panelMoments[o + 6];
              const Mrx = mxx * rx + mxy * ry + mxz * rz, Mry = mxy * rx + myy * ry + myz * rz, Mrz = mxz * rx + myz * ry + mzz * rz;
              const rMr = rx * Mrx + ry * Mry + rz * Mrz;
              const tr = mxx + myy + mzz;
              const a = -Q * inv3 - 7.5 * rMr * inv7 + 1.5 * tr * inv5;
              acc[4 * d] += Q * inv + (3 * rMr - r2 * tr) * 0.5 * inv5;
              acc[4 * d + 1] += a * rx + 3 * Mrx * inv5;
              acc[4 * d + 2] += a * ry + 3 * Mry * inv5;
              acc[4 * d + 3] += a * rz + 3 * Mrz * inv5;
            }
            continue;
          }
          panelPotentialAndGradient(P, j, x, y, z, g, 0);
          for (let d = 0; d < D; d++) {
            const s = sigma[k * D + d];
            acc[4 * d] += s * g[0];
            acc[4 * d + 1] += s * g[1];
            acc[4 * d + 2] += s * g[2];
            acc[4 * d + 3] += s * g[3];
          }
        }
      }
    }
    for (let c = 0; c < 4 * D; c++) out[4 * D * i + c] += acc[c];
  }
}

/** The clear reference: the same sums over every panel, one by one. O(N·M). */
export function evaluateDirect(P: Panels, sigma: Float64Array, points: Float64Array, out: Float64Array): void {
  const g = new Float64Array(4);
  for (let i = 0; i < points.length / 3; i++) {
    const x = points[3 * i], y = points[3 * i + 1], z = points[3 * i + 2];
    let phi = 0, ex = 0, ey = 0, ez = 0;
    for (let j = 0; j < P.count; j++) {
      const s = sigma[j];
      if (s === 0) continue;
      panelPotentialAndGradient(P, j, x, y, z, g, 0);
      phi += s * g[0];
      ex += s * g[1];
      ey += s * g[2];
      ez += s * g[3];
    }
    out[4 * i] += phi;
    out[4 * i + 1] += ex;
    out[4 * i + 2] += ey;
    out[4 * i + 3] += ez;
  }
}
