// Convergence estimates from two mesh levels, generic over the space.
// Richardson extrapolation (L. F. Richardson, Phil. Trans. R. Soc. A 210, 307, 1911) assuming the
// error of a figure falls as N^−p with N unknowns: f(N) = f∞ + a·N^−p, so from (N1, f1) and (N2, f2)
//   f∞ = (N2^p·f2 − N1^p·f1)/(N2^p − N1^p),
// and the reported (finest) value's relative error is estimated as |f2 − f∞|/|f∞|.
// For flat constant-density panels in 3d the capacitance error goes as 1/N (p = 1, about −4/N on a
// sphere; methods.md).
import type { Convergence } from './result';

export const NO_ESTIMATE: Convergence = { relativeError: null, extrapolated: null };

/**
 * Safety factor for an error estimated from two levels whose convergence order is assumed, not
 * observed: Roache's grid convergence index uses Fs = 3 for two-grid studies (P. J. Roache,
 * Annu. Rev. Fluid Mech. 29, 123, 1997; from memory). The 3d panel meshes of thin tori and small
 * radii are often short of the asymptotic 1/N range, where the plain estimate runs low.
 */
export const TWO_LEVEL_SAFETY = 3;

/** `safety` multiplies the estimated error (1: the plain Richardson estimate). */
export function richardson(n1: number, f1: number, n2: number, f2: number, p = 1, safety = 1): Convergence {
  if (!(n2 > n1 && n1 > 0) || !Number.isFinite(f1) || !Number.isFinite(f2)) return NO_ESTIMATE;
  const w1 = n1 ** p, w2 = n2 ** p;
  const extrapolated = (w2 * f2 - w1 * f1) / (w2 - w1);
  if (extrapolated === 0) return { relativeError: f2 === 0 ? 0 : null, extrapolated };
  return { relativeError: (safety * Math.abs(f2 - extrapolated)) / Math.abs(extrapolated), extrapolated };
}

/**
 * For a figure that does not converge (a field at a sharp edge grows without bound as the mesh is
 * refined), only the change between levels is reported, as a lower bound on the error; no extrapolation.
 */
export function changeBetweenLevels(f1: number, f2: number): Convergence {
  if (!Number.isFinite(f1) || !Number.isFinite(f2) || f2 === 0) return NO_ESTIMATE;
  return { relativeError: Math.abs(f2 - f1) / Math.abs(f2), extrapolated: null };
}
