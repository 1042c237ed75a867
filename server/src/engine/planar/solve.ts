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
import type { KernelAdd, Mirror } from './bem2d';
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
        const img = new Float64Array(3);
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
