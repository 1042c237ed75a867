// Matrix entries kept across a geometry edit (bem3d/reuse.ts): an entry depends only on its panel,
// its collocation point and the images, so the entries among electrodes an edit left alone must be
// the very numbers a fresh assembly gives (common practice: the same computation twice).
import { describe, expect, it } from 'vitest';
import { surfaceCollocation } from '../../server/src/engine/bem3d/collocation';
import { imageSet } from '../../server/src/engine/bem3d/images';
import { matrixReuse, panelPairs } from '../../server/src/engine/bem3d/reuse';
import { assembleDense, createSystem } from '../../server/src/engine/bem3d/system';
import { meshForScene } from '../../server/src/engine/mesh/index';
import { createCache3d, solve3d, type Cache3d, type Solve3dOptions } from '../../server/src/engine/solve';
import { electrode, R0, scene3d, sphere } from './scenes';
import type { Scene3d } from '../../grammar/scene';

const make = (x: number, ground = true): Scene3d =>
  scene3d({
    electrodes: [
      electrode('ball', sphere([x, 0, 0.08], 0.02)),
      electrode('plate', { kind: 'disc', center: [0, 0.1, 0.05], normal: [0, 0, 1], radius: 0.04 }, { kind: 'potential', value: -1 }),
      electrode('can', { kind: 'box', center: [0.1, -0.05, 0.07], size: [0.05, 0.04, 0.05], hollow: true }, { kind: 'potential', value: 0.5 }),
    ],
    charges: [{ kind: 'point', name: 'q', at: [0.02, 0.03, 0.12], value: 1e-10, range: R0 }],
    ground: ground ? [{ axis: 'z', at: 0 }] : [],
    mesh: { kind: 'size', size: 0.02 },
  });

function system(scene: Scene3d) {
  const mesh = meshForScene(scene);
  const sys = createSystem(mesh, imageSet(scene.groundPlanes).images);
  sys.points = surfaceCollocation(scene, mesh, sys.panels.diameter);
  return sys;
}

describe('matrix entries kept across a geometry edit', () => {
  it('copies the entries among untouched electrodes and gives exactly the fresh matrix and field rows', () => {
    const before = system(make(-0.05));
    const A0 = assembleDense(before)!;
    const fresh = system(make(-0.03));
    const A1 = assembleDense(fresh)!;
    const again = system(make(-0.03));
    const reuse = matrixReuse({ sys: before, matrix: A0 }, again)!;
    // The disc's and the box's panels are kept, the moved ball's are not.
    const kept = Array.from(reuse.from).filter((f) => f >= 0).length;
    const ball = Array.from(again.mesh.electrode).filter((e) => e === 0).length;
    expect(kept).toBe(again.n - ball);
    const A2 = assembleDense(again, undefined, reuse)!;
    let differ = 0;
    for (let k = 0; k < A1.length; k++) if (A1[k] !== A2[k]) differ++;
    expect(differ).toBe(0);
    const r1 = fresh.thinRows!, r2 = again.thinRows!;
    expect(r2.panels.length).toBeGreaterThan(0);
    expect(Array.from(r2.panels)).toEqual(Array.from(r1.panels));
    for (let k = 0; k < r1.rows.length; k++) if (r1.rows[k] !== r2.rows[k]) differ++;
    expect(differ).toBe(0);
  });

  it('keeps nothing when the ground plane changed', () => {
    const before = system(make(-0.05));
    const A0 = assembleDense(before)!;
    expect(matrixReuse({ sys: before, matrix: A0 }, system(make(-0.05, false)))).toBeNull();
  });

  it('pairs panels electrode by electrode for warm starts while every electrode keeps its panel count', () => {
    const before = system(make(-0.05));
    const moved = system(make(-0.03));
    const pairs = panelPairs(before, moved)!;
    expect(pairs).not.toBeNull();
    for (let i = 0; i < moved.n; i++) expect(before.mesh.electrode[pairs[i]]).toBe(moved.mesh.electrode[i]);
    // A bigger ball has more panels: no pairing.
    const bigger = make(-0.05);
    bigger.electrodes[0] = electrode('ball', sphere([-0.05, 0, 0.08], 0.06));
    expect(panelPairs(before, system(bigger))).toBeNull();
  });

  it('a cached solve after the edit reuses entries, starts from the paired solutions and gives the fresh solve its capacitances (to the solver tolerance)', () => {
    // Dense GMRES forced (this small scene would go to LU), so that the warm start shows in the iterations.
    const options = (cache: Cache3d): Solve3dOptions => ({ maxPanels: 20000, maxGridCells: 1000, level: 'coarse', convergence: false, cache, solver: 'dense-gmres' });
    const cache = createCache3d();
    solve3d(make(-0.05), options(cache));
    const edited = solve3d(make(-0.03), options(cache))!;
    const last = [...cache.levels.values()].pop()!;
    expect(last.reused).toBeGreaterThan(0);
    const cold = createCache3d();
    const fresh = solve3d(make(-0.03), options(cold))!;
    const coldLevel = [...cold.levels.values()][0];
    expect(Math.max(...last.iterations!)).toBeLessThan(Math.max(...coldLevel.iterations!));
    // The free charge's system too (the last right-hand side of the batch).
    expect(last.solver.iterations[3]).toBeLessThan(coldLevel.solver.iterations[3]);
    edited.capacitance.matrix.forEach((row, i) =>
      row.forEach((c, k) => expect(Math.abs(c - fresh.capacitance.matrix[i][k])).toBeLessThan(1e-5 * Math.abs(fresh.capacitance.matrix[i][i]))),
    );
  });
});
