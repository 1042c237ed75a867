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
  /** Per node: charge Q, dipole (3), second moments (6: xx, yy, zz, xy, xz, yz). */
  moments: Float64Array;
  /** Surface densities in tree order (σ of panel tree.order[k]). */
  sigma: Float64Array;
  /** Per panel in tree order: squared radius about its centroid. */
  panelRadiusSq: Float64Array;
  /** Per panel in tree order: charge and second moments about its centroid (7). */
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
    moments: new Float64Array(MOM * nodes),
    sigma: new Float64Array(P.count),
    panelRadiusSq,
    panelMoments: new Float64Array(7 * P.count),
  };
}

/** Sets the panels' surface densities σ (C/m², caller's numbering) and recomputes every node's moments. */
export function setDensities(T: PanelTree, sigma: Float64Array): void {
  const { P, tree, center, moments } = T;
  moments.fill(0);
  for (let k = 0; k < tree.order.length; k++) {
    const j = tree.order[k];
    const q = (T.sigma[k] = sigma[j]) * P.area[j];
    let sxx = 0, syy = 0, szz = 0, sxy = 0, sxz = 0, syz = 0;
    for (let i = 0; i < 3; i++) {
      const ax = P.vertices[9 * j + 3 * i] - P.centroid[3 * j];
      const ay = P.vertices[9 * j + 3 * i + 1] - P.centroid[3 * j + 1];
      const az = P.vertices[9 * j + 3 * i + 2] - P.centroid[3 * j + 2];
      sxx += ax * ax; syy += ay * ay; szz += az * az; sxy += ax * ay; sxz += ax * az; syz += ay * az;
    }
    const w = q / 12, o = 7 * k;
    T.panelMoments[o] = q;
    T.panelMoments[o + 1] = w * sxx;
    T.panelMoments[o + 2] = w * syy;
    T.panelMoments[o + 3] = w * szz;
    T.panelMoments[o + 4] = w * sxy;
    T.panelMoments[o + 5] = w * sxz;
    T.panelMoments[o + 6] = w * syz;
  }
  // Each node sums its own panels directly (O(N log N) in all, and exact).
  for (let v = 0; v < tree.nodeCount; v++) {
    const cx = center[3 * v], cy = center[3 * v + 1], cz = center[3 * v + 2];
    const o = MOM * v;
    for (let k = tree.start[v], end = k + tree.count[v]; k < end; k++) {
      const j = tree.order[k];
      const q = T.sigma[k] * P.area[j];
      if (q === 0) continue;
      const gx = P.centroid[3 * j], gy = P.centroid[3 * j + 1], gz = P.centroid[3 * j + 2];
      const dx = gx - cx, dy = gy - cy, dz = gz - cz;
      // Panel's own second moments about its centroid, (A/12)·Σ(v_i − g)(v_i − g)ᵀ, times σ.
      let sxx = 0, syy = 0, szz = 0, sxy = 0, sxz = 0, syz = 0;
      for (let i = 0; i < 3; i++) {
        const ax = P.vertices[9 * j + 3 * i] - gx, ay = P.vertices[9 * j + 3 * i + 1] - gy, az = P.vertices[9 * j + 3 * i + 2] - gz;
        sxx += ax * ax; syy += ay * ay; szz += az * az; sxy += ax * ay; sxz += ax * az; syz += ay * az;
      }
      const w = q / 12;
      moments[o] += q;
      moments[o + 1] += q * dx;
      moments[o + 2] += q * dy;
      moments[o + 3] += q * dz;
      moments[o + 4] += q * dx * dx + w * sxx;
      moments[o + 5] += q * dy * dy + w * syy;
      moments[o + 6] += q * dz * dz + w * szz;
      moments[o + 7] += q * dx * dy + w * sxy;
      moments[o + 8] += q * dx * dz + w * sxz;
      moments[o + 9] += q * dy * dz + w * syz;
    }
  }
}

/**
 * Adds Σ_j σ_j·I_j(x) to out[4i] and Σ_j σ_j·∇I_j(x) to out[4i+1..4i+3] for points i in
 * [from, to) (3 coordinates each). Multiply by 1/(4πε) for volts and negate the gradient for V/m.
 */
export function evaluateTree(T: PanelTree, points: Float64Array, from: number, to: number, theta: number, out: Float64Array): void {
  const { P, tree, center, radius, moments, sigma, panelRadiusSq, panelMoments } = T;
  const C = P.centroid;
  const stack = new Int32Array(256); // depth-first: at most two entries per level of a balanced tree
  const g = new Float64Array(4);
  const theta2 = theta * theta;
  for (let i = from; i < to; i++) {
    const x = points[3 * i], y = points[3 * i + 1], z = points[3 * i + 2];
    let phi = 0, ex = 0, ey = 0, ez = 0;
    let top = 0;
    stack[top++] = 0;
    while (top > 0) {
      const v = stack[--top];
      const rx = x - center[3 * v], ry = y - center[3 * v + 1], rz = z - center[3 * v + 2];
      const r2 = rx * rx + ry * ry + rz * rz;
      const rho = radius[v];
      if (rho * rho < theta2 * r2) {
        const o = MOM * v;
        const Q = moments[o], px = moments[o + 1], py = moments[o + 2], pz = moments[o + 3];
        const mxx = moments[o + 4], myy = moments[o + 5], mzz = moments[o + 6], mxy = moments[o + 7], mxz = moments[o + 8], myz = moments[o + 9];
        const inv = 1 / Math.sqrt(r2);
        const inv2 = inv * inv, inv3 = inv2 * inv, inv5 = inv3 * inv2, inv7 = inv5 * inv2;
        const pr = px * rx + py * ry + pz * rz;
        const Mrx = mxx * rx + mxy * ry + mxz * rz, Mry = mxy * rx + myy * ry + myz * rz, Mrz = mxz * rx + myz * ry + mzz * rz;
        const rMr = rx * Mrx + ry * Mry + rz * Mrz;
        const tr = mxx + myy + mzz;
        phi += Q * inv + pr * inv3 + (3 * rMr - r2 * tr) * 0.5 * inv5;
        const a = -Q * inv3 - 3 * pr * inv5 - 7.5 * rMr * inv7 + 1.5 * tr * inv5;
        ex += a * rx + px * inv3 + 3 * Mrx * inv5;
        ey += a * ry + py * inv3 + 3 * Mry * inv5;
        ez += a * rz + pz * inv3 + 3 * Mrz * inv5;
      } else if (tree.left[v] >= 0) {
        stack[top++] = tree.right[v];
        stack[top++] = tree.left[v];
      } else {
        for (let k = tree.start[v], end = k + tree.count[v]; k < end; k++) {
          const s = sigma[k];
          if (s === 0) continue;
          const j = tree.order[k];
          const rx = x - C[3 * j], ry = y - C[3 * j + 1], rz = z - C[3 * j + 2];
          const r2 = rx * rx + ry * ry + rz * rz;
          if (panelRadiusSq[k] < theta2 * r2) {
            // The panel alone as a charge with its second moments (no dipole about its centroid).
            const o = 7 * k;
            const Q = panelMoments[o], mxx = panelMoments[o + 1], myy = panelMoments[o + 2], mzz = panelMoments[o + 3];
            const mxy = panelMoments[o + 4], mxz = panelMoments[o + 5], myz = panelMoments[o + 6];
            const inv = 1 / Math.sqrt(r2);
            const inv2 = inv * inv, inv3 = inv2 * inv, inv5 = inv3 * inv2, inv7 = inv5 * inv2;
            const Mrx = mxx * rx + mxy * ry + mxz * rz, Mry = mxy * rx + myy * ry + myz * rz, Mrz = mxz * rx + myz * ry + mzz * rz;
            const rMr = rx * Mrx + ry * Mry + rz * Mrz;
            const tr = mxx + myy + mzz;
            phi += Q * inv + (3 * rMr - r2 * tr) * 0.5 * inv5;
            const a = -Q * inv3 - 7.5 * rMr * inv7 + 1.5 * tr * inv5;
            ex += a * rx + 3 * Mrx * inv5;
            ey += a * ry + 3 * Mry * inv5;
            ez += a * rz + 3 * Mrz * inv5;
            continue;
          }
          panelPotentialAndGradient(P, j, x, y, z, g, 0);
          phi += s * g[0];
          ex += s * g[1];
          ey += s * g[2];
          ez += s * g[3];
        }
      }
    }
    out[4 * i] += phi;
    out[4 * i + 1] += ex;
    out[4 * i + 2] += ey;
    out[4 * i + 3] += ez;
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
