// The field of a solved 3d scene anywhere: panel charges (with images) plus free charges (with images),
//   φ(r) = Σ_j x_j·(1/4π)·Σ_img sign·I_j(img(r)) + (1/(4π ε0 εr))·Σ_f Σ_img sign·S_f(img(r)),
//   E = −∇φ,
// and on the surface, the field on each panel: σ/(ε0 εr) = x on a closed conductor; on a thin sheet,
// whose x is the sum of both faces, the faces carry x/2 ± E_avg·n with E_avg the average (principal
// value) normal field at the centroid (methods.md), and the larger face's |x|/2 + |E_avg·n| is reported.
import type { Charge3d } from '../../../../grammar/scene';
import { EPSILON_0 } from '../../../../grammar/scene';
import { chargeGradient, chargePotential } from '../kernels/free-charges';
import { reflect, type Image } from './images';
import { surfacePotentialAndGradient, type Bem3dSystem, type EvalMode } from './system';
// Fast-solver hook (owned by server/src/engine/fast/bem3d.ts): importing it registers the
// hierarchical-matrix solver; large systems are evaluated by its treecode.
import { fastPotentialAndGradient } from '../fast/bem3d';

export interface FieldState3d {
  sys: Bem3dSystem;
  /** Scaled densities σ/(ε0 εr) of the final solution. */
  x: Float64Array;
  charges: readonly Charge3d[];
  images: Image[];
  permittivity: number;
}

/** [φ, Ex, Ey, Ez] at (x, y, z), in V and V/m. */
export function potentialAndField(s: FieldState3d, x: number, y: number, z: number, mode: EvalMode = 'precise'): [number, number, number, number] {
  const out = new Float64Array(4);
  if (!fastPotentialAndGradient(s.sys, s.x, x, y, z, out, mode)) surfacePotentialAndGradient(s.sys, s.x, x, y, z, out, mode);
  addFreeCharges(s, x, y, z, out);
  return [out[0], -out[1], -out[2], -out[3]];
}

/** Adds the free charges' potential and its gradient (with images) at (x, y, z) to out[0..3] = [φ, ∂φ/∂x, ∂φ/∂y, ∂φ/∂z]. */
export function addFreeCharges(s: FieldState3d, x: number, y: number, z: number, out: Float64Array): void {
  if (s.charges.length === 0) return;
  const k = 1 / (4 * Math.PI * EPSILON_0 * s.permittivity);
  const r = [0, 0, 0];
  const g = new Float64Array(3);
  for (const im of s.images) {
    reflect(im, x, y, z, r);
    for (const c of s.charges) {
      out[0] += k * im.sign * chargePotential(c, r[0], r[1], r[2]);
      chargeGradient(c, r[0], r[1], r[2], g);
      out[1] += k * im.sign * im.flip[0] * g[0];
      out[2] += k * im.sign * im.flip[1] * g[1];
      out[3] += k * im.sign * im.flip[2] * g[2];
    }
  }
}

/**
 * Surface field magnitude per panel, V/m (the larger face's on thin sheets). The average normal
 * field at a thin panel comes from the stored rows of the assembly (system.ts ThinRows) when there
 * are any, else from a sum over all panels.
 */
export function surfaceFields(s: FieldState3d): Float64Array {
  const { mesh } = s.sys;
  const n = s.sys.n;
  const E = new Float64Array(n);
  const done = new Uint8Array(n);
  const stored = s.sys.thinRows;
  if (stored) {
    const free = new Float64Array(4);
    const c = mesh.centroid, nrm = mesh.normal;
    stored.panels.forEach((j, t) => {
      const row = stored.rows, at = t * n;
      let gn = 0;
      for (let m = 0; m < n; m++) gn += row[at + m] * s.x[m];
      free.fill(0);
      addFreeCharges(s, c[3 * j], c[3 * j + 1], c[3 * j + 2], free);
      gn += free[1] * nrm[3 * j] + free[2] * nrm[3 * j + 1] + free[3] * nrm[3 * j + 2];
      // E = −∇φ, so |E·n| = |∇φ·n|.
      E[j] = Math.abs(s.x[j]) / 2 + Math.abs(gn);
      done[j] = 1;
    });
  }
  for (let j = 0; j < n; j++) {
    if (done[j]) continue;
    if (!mesh.thin[j]) {
      E[j] = Math.abs(s.x[j]);
      continue;
    }
    const c = mesh.centroid;
    const [, ex, ey, ez] = potentialAndField(s, c[3 * j], c[3 * j + 1], c[3 * j + 2]);
    const en = ex * mesh.normal[3 * j] + ey * mesh.normal[3 * j + 1] + ez * mesh.normal[3 * j + 2];
    E[j] = Math.abs(s.x[j]) / 2 + Math.abs(en);
  }
  return E;
}
