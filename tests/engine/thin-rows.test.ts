// The normal-field rows stored by the dense assembly at thin panels give the same surface fields as
// summing every panel's field at those centroids (the same kernels: kernels/triangle.ts), with a
// ground plane's images and a free charge included. Common practice: two evaluations of one sum.
import { describe, expect, it } from 'vitest';
import { surfaceFields } from '../../server/src/engine/bem3d/field';
import { surfaceCollocation } from '../../server/src/engine/bem3d/collocation';
import { imageSet } from '../../server/src/engine/bem3d/images';
import { assembleDense, createSystem } from '../../server/src/engine/bem3d/system';
import { meshForScene } from '../../server/src/engine/mesh/index';
import { electrode, R0, scene3d, sphere } from './scenes';

describe('thin-panel surface fields from the assembly rows', () => {
  it('equal the direct sums over all panels, to rounding', () => {
    const scene = scene3d({
      electrodes: [
        electrode('disc', { kind: 'disc', center: [0, 0, 0.05], normal: [0.2, 0, 1], radius: 0.04 }),
        electrode('plate', { kind: 'plate', center: [0.1, 0, 0.03], size: [0.05, 0.04], normal: 'x' }),
        electrode('ball', sphere([-0.08, 0.02, 0.06], 0.02)),
        electrode('can', { kind: 'box', center: [0, 0.12, 0.06], size: [0.06, 0.04, 0.05], hollow: true }),
      ],
      charges: [{ kind: 'point', name: 'q', at: [0.02, 0.03, 0.09], value: 1e-9, range: R0 }],
      ground: [{ axis: 'z', at: 0 }],
      mesh: { kind: 'size', size: 0.015 },
    });
    const mesh = meshForScene(scene);
    const { images } = imageSet(scene.groundPlanes);
    const sys = createSystem(mesh, images);
    // Collocation on the true surface leaves flat faces' centroids exactly in place: every thin panel has its row.
    sys.points = surfaceCollocation(scene, mesh, sys.panels.diameter);
    assembleDense(sys);
    const thin = mesh.thin.reduce((a, b) => a + b, 0);
    expect(sys.thinRows!.panels.length).toBe(thin);
    expect(thin).toBeGreaterThan(20);
    // Any densities will do: the surface field is linear in them.
    const x = Float64Array.from({ length: sys.n }, (_, j) => 100 * Math.sin(0.37 * j) + 50);
    const state = { sys, x, charges: scene.charges, images, permittivity: 2 };
    const fromRows = surfaceFields(state);
    const direct = surfaceFields({ ...state, sys: { ...sys, thinRows: undefined } });
    const scale = Math.max(...direct);
    for (let j = 0; j < sys.n; j++) expect(Math.abs(fromRows[j] - direct[j])).toBeLessThan(1e-11 * scale);
  });
});
