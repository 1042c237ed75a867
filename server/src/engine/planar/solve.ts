// `space planar`: everything is per metre along z. Line-charge density on the outlines' elements with
// the kernel −ln(ρ/ℓ)/(2πε) (ℓ the scene's length scale, which only shifts the potential at
// infinity), free charges as line charges (C/m), a ground plane x = c or y = c by images of opposite
// sign. Without a ground plane the potential at infinity is an unknown fixed by the total charge
// (planar/solve2d.ts explains what 0 V means then). The shared pipeline is planar/solve2d.ts.
import type { ScenePlanar } from '../../../../grammar/scene';
import { EPSILON_0 } from '../../../../grammar/scene';
import { characteristicLength } from '../../../../grammar/geometry';
import type { Result } from '../result';
import { elementSize, usablePiece } from '../axisymmetric/solve';
import type { KernelAdd, LineAdd, Mirror } from './bem2d';
import { outlinePieces } from './outline';
import { solve2d, type FreeSource, type Solve2dOptions } from './solve2d';

/**
 * Line charge λ at (xs, ys) seen from (x, y), per unit λ/ε: φ = −ln(ρ/ℓ)/(2π), E = (x − xs)/(2π·ρ²)
 * (Gauss's law for an infinite line charge; e.g. Jackson, Classical Electrodynamics, ch. 2).
 */
export function lineChargeKernel(scale: number): KernelAdd {
  const inv2 = 1 / (scale * scale);
  return (xs, ys, x, y, w, field, acc) => {
    const dx = x - xs;
    const dy = y - ys;
    const r2 = dx * dx + dy * dy;
    if (r2 === 0) return;
    acc[0] -= (w / (4 * Math.PI)) * Math.log(r2 * inv2);
    if (!field) return;
    const c = w / (2 * Math.PI * r2);
    acc[1] += c * dx;
    acc[2] += c * dy;
  };
}

/**
 * A whole straight element of unit line-charge density per metre, in closed form (per unit ε; the
 * integrals of the line-charge kernel above along the segment, e.g. Gradshteyn and Ryzhik 2.733.1 and
 * 2.172). With ξ, η the target's coordinates along the element and across it, u = s − ξ running from
 * u0 = −ξ to u1 = L − ξ, r_k² = u_k² + η²:
 *   ∫ ln r ds = [u·ln r − u] from u0 to u1 + η·θ,  θ = atan2(η·L, η² + u0·u1) (the angle the element subtends),
 *   φ   = −(∫ ln r ds − L·ln ℓ)/(2π),
 *   E_ξ = ln(r0/r1)/(2π),  E_η = θ/(2π).
 * Exact at any distance (no quadrature), so near elements cost no more than far ones.
 */
export function lineSegmentKernel(scale: number): LineAdd {
  const lnScale = Math.log(scale);
  const inv2pi = 1 / (2 * Math.PI);
  return (el, x, y, w, field, acc) => {
    const px = x - el.x0, py = y - el.y0;
    const xi = px * el.tx + py * el.ty;
    const eta = py * el.tx - px * el.ty; // along n = (−t_y, t_x)
    const L = el.length;
    const u0 = -xi, u1 = L - xi;
    const r0sq = u0 * u0 + eta * eta, r1sq = u1 * u1 + eta * eta;
    const ln0 = r0sq > 0 ? 0.5 * Math.log(r0sq) : 0;
    const ln1 = r1sq > 0 ? 0.5 * Math.log(r1sq) : 0;
    const theta = Math.atan2(eta * L, eta * eta + u0 * u1);
    const integral = u1 * ln1 - u0 * ln0 - L + eta * theta;
    acc[0] -= w * inv2pi * (integral - L * lnScale);
    if (!field) return;
    const eXi = w * inv2pi * (ln0 - ln1);
    const eEta = w * inv2pi * theta;
    acc[1] += eXi * el.tx - eEta * el.ty;
    acc[2] += eXi * el.ty + eEta * el.tx;
  };
}

const imageScratch = new Float64Array(3);

export function solvePlanar(scene: ScenePlanar, options: Solve2dOptions = {}): Result | null {
  const scale = characteristicLength(scene);
  const eps = EPSILON_0 * scene.medium.permittivity;
  const kernel = lineChargeKernel(scale);
  // Degenerate shapes (reported by the geometry checks) contribute no elements.
  const pieces = scene.electrodes.flatMap((e, i) => outlinePieces(e.shape, i)).filter((p) => usablePiece(p));
  // A ground plane x = c or y = c (z = c lies in the scene's own plane and is meaningless here); the first one is used.
  const plane = scene.groundPlanes.find((g) => g.axis === 'x' || g.axis === 'y');
  const mirror: Mirror | null = plane ? { axis: plane.axis === 'x' ? 0 : 1, at: plane.at } : null;
  const free: FreeSource[] = scene.charges.map((c) => {
    const [xs, ys] = c.at;
    const w = c.density / eps;
    return {
      at: [xs, ys],
      value: c.density,
      total: c.density,
      add(x, y, field, acc, self) {
        if (!self) kernel(xs, ys, x, y, w, field, acc);
        if (!mirror) return;
        const img = imageScratch;
        img[0] = img[1] = img[2] = 0;
        kernel(xs, ys, mirror.axis === 0 ? 2 * mirror.at - x : x, mirror.axis === 1 ? 2 * mirror.at - y : y, w, field, img);
        acc[0] -= img[0];
        if (field) {
          acc[1] += mirror.axis === 0 ? img[1] : -img[1];
          acc[2] += mirror.axis === 1 ? img[2] : -img[2];
        }
      },
    };
  });
  return solve2d(
    scene,
    {
      space: 'planar',
      kernel,
      line: lineSegmentKernel(scale),
      mirror,
      infinityUnknown: mirror === null,
      pieces,
      ...elementSize(scene, scale, pieces, options),
      diagnostics: [],
      area: (el) => el.length,
      free,
      scale,
      toSolver: (u, v) => [u, v, 1],
    },
    options,
  );
}
