// Drives, free charges and energies through the whole 3d path.
import { describe, expect, it } from 'vitest';
import type { Charge3d } from '../../grammar/scene';
import { EPSILON_0 } from '../../grammar/scene';
import { createEngineCache, solveScene } from '../../server/src/engine/index';
import type { Cache3d } from '../../server/src/engine/solve';
import { electrode, R0, scene3d, sphere } from './scenes';

const K = 1 / (4 * Math.PI * EPSILON_0); // Coulomb constant (references.md)
const rel = (a: number, b: number) => Math.abs(a / b - 1);
const coarse = { kind: 'size', size: 0.1 } as const; // about 320 panels on a sphere of radius 0.3

describe('floating and fixed-charge electrodes', () => {
  it('a floating sphere between two driven ones takes the potential that zeroes its charge in Q = C·V (Maxwell coefficients, textbook)', () => {
    const s = scene3d({
      mesh: coarse,
      electrodes: [
        electrode('left', sphere([-1, 0, 0], 0.3), { kind: 'potential', value: 1000 }),
        electrode('mid', sphere([0, 0.1, 0], 0.3), { kind: 'floating' }),
        electrode('right', sphere([1, 0, 0], 0.3), { kind: 'potential', value: -200 }),
      ],
    });
    const cache = createEngineCache();
    const r = solveScene(s, { convergence: false, cache })!;
    const C = r.capacitance.matrix;
    const V = r.electrodes.map((e) => e.potential);
    const expected = -(C[1][0] * V[0] + C[1][2] * V[2]) / C[1][1];
    expect(V[1]).toBeCloseTo(expected, 9);
    expect(V[1]).toBeGreaterThan(-200);
    expect(V[1]).toBeLessThan(1000);
    expect(r.electrodes[1].charge).toBe(0);
    // Holding the middle sphere at that potential instead leaves it (nearly) uncharged.
    s.electrodes[1].drive = { kind: 'potential', value: V[1] };
    const held = solveScene(s, { convergence: false, cache })!; // a drive-only edit: no new solve
    expect(Math.abs(held.electrodes[1].charge)).toBeLessThan(1e-9 * Math.abs(held.electrodes[0].charge));
    // Energy ½·VᵀCV (textbook) matches the reported energy.
    let w = 0;
    for (let i = 0; i < 3; i++) for (let j = 0; j < 3; j++) w += 0.5 * V[i] * C[i][j] * V[j];
    expect(rel(r.energy, w)).toBeLessThan(1e-9);
  });

  it('two equal spheres at ±U leave a floating sphere midway at 0 V (symmetry)', () => {
    const r = solveScene(
      scene3d({
        mesh: coarse,
        electrodes: [
          electrode('a', sphere([-1, 0, 0], 0.3), { kind: 'potential', value: 500 }),
          electrode('f', sphere([0, 0, 0], 0.2), { kind: 'floating' }),
          electrode('b', sphere([1, 0, 0], 0.3), { kind: 'potential', value: -500 }),
        ],
      }),
      { convergence: false },
    )!;
    expect(Math.abs(r.electrodes[1].potential)).toBeLessThan(1e-3 * 500);
  });
});

describe('free charges', () => {
  it('with no electrodes, probes equal the direct sum of kq/r to 1e-12 (superposition)', () => {
    const charges: Charge3d[] = [
      { kind: 'point', name: 'a', at: [0, 0, 0], value: 1e-9, range: R0 },
      { kind: 'point', name: 'b', at: [0.3, -0.1, 0.2], value: -2.5e-9, range: R0 },
      { kind: 'point', name: 'c', at: [-0.4, 0.5, -0.1], value: 0.7e-9, range: R0 },
    ];
    const s = scene3d({ charges });
    s.probes = [{ kind: 'line', name: 'l', from: [1, 1, 1], to: [-1, 0.2, 0.5], samples: 7, range: R0 }];
    const r = solveScene(s)!;
    for (const p of r.probes[0].points) {
      let phi = 0;
      const E = [0, 0, 0];
      for (const c of charges) {
        if (c.kind !== 'point') continue;
        const d = [0, 1, 2].map((k) => p.at[k] - c.at[k]);
        const dist = Math.hypot(d[0], d[1], d[2]);
        phi += (K * c.value) / dist;
        for (let k = 0; k < 3; k++) E[k] += (K * c.value * d[k]) / dist ** 3;
      }
      expect(Math.abs(p.potential - phi)).toBeLessThan(1e-12 * Math.abs(phi));
      for (let k = 0; k < 3; k++) expect(Math.abs(p.field[k] - E[k])).toBeLessThan(1e-12 * Math.hypot(...E));
    }
  });

  it('a point charge over a grounded plane has energy −q²/(16πε0h) (image method, Jackson sec. 2.1)', () => {
    const q = 3e-9, h = 0.25;
    const r = solveScene(scene3d({ charges: [{ kind: 'point', name: 'q', at: [0.1, 0.2, h + 0.5], value: q, range: R0 }], ground: [{ axis: 'z', at: 0.5 }] }))!;
    expect(rel(r.energy, -(q * q) / (16 * Math.PI * EPSILON_0 * h))).toBeLessThan(1e-12);
  });

  it('a point charge q at distance d induces −q·a/d on a grounded sphere, and lifts an uncharged floating one to kq/d (images, Jackson sec. 2.2–2.3)', () => {
    const q = 1e-9, a = 0.5, d = 1.2;
    const charges: Charge3d[] = [{ kind: 'point', name: 'q', at: [0, 0, d], value: q, range: R0 }];
    const cache = createEngineCache();
    const options = { level: 'coarse', cache } as const;
    const grounded = solveScene(scene3d({ charges, electrodes: [electrode('s', sphere([0, 0, 0], a), { kind: 'potential', value: 0 })] }), options)!;
    expect(rel(grounded.electrodes[0].charge, (-q * a) / d)).toBeLessThan(3e-3);
    const floating = solveScene(scene3d({ charges, electrodes: [electrode('s', sphere([0, 0, 0], a), { kind: 'floating' })] }), options)!;
    expect(rel(floating.electrodes[0].potential, (K * q) / d)).toBeLessThan(3e-3);
  });

  it('a point charge beside a sphere at potential V stores W = ½QV + ½q·φ′(p), before and after a drive-only edit through the cache (images, Jackson sec. 2.2–2.3)', () => {
    // Grounded sphere: image q′ = −q·a/d at a²/d; at potential V the sphere adds a uniform charge
    // 4πε0·a·V, whose potential at the charge is V·a/d. So Q = 4πε0·a·V + q′ and
    // φ′(p) = k·q′/(d − a²/d) + V·a/d (Jackson sec. 2.2–2.3, from memory for the uniform part).
    const q = 1e-9, a = 0.5, d = 1.2;
    const charges: Charge3d[] = [{ kind: 'point', name: 'q', at: [0, 0, d], value: q, range: R0 }];
    const make = (V: number) => scene3d({ charges, electrodes: [electrode('s', sphere([0, 0, 0], a), { kind: 'potential', value: V })] });
    const expected = (V: number) => {
      const image = (-q * a) / d;
      return 0.5 * (4 * Math.PI * EPSILON_0 * a * V + image) * V + 0.5 * q * ((K * image) / (d - (a * a) / d) + (V * a) / d);
    };
    const cache = createEngineCache();
    const options = { level: 'coarse', cache } as const;
    // The coarse mesh's error (flat panels, about −4/N on a sphere: methods.md) allowed.
    expect(rel(solveScene(make(0), options)!.energy, expected(0))).toBeLessThan(1e-2);
    const edited = solveScene(make(200), options)!;
    expect(edited.stats.timings['fine.assembly']).toBeUndefined();
    expect(rel(edited.energy, expected(200))).toBeLessThan(1e-2);
    // The same as a fresh solve of the edited scene (superposition of the stored sample potentials).
    expect(rel(edited.energy, solveScene(make(200), { level: 'coarse' })!.energy)).toBeLessThan(1e-9);
  });

  it('an edit of the free charges alone reuses the unit solutions (no new assembly), and the induced charge scales with it (linearity)', () => {
    const cache = createEngineCache();
    const options = { level: 'coarse', cache } as const;
    const make = (q: number) =>
      scene3d({
        charges: [{ kind: 'point', name: 'q', at: [0, 0, 1.2], value: q, range: R0 }],
        electrodes: [electrode('s', sphere([0, 0, 0], 0.5), { kind: 'potential', value: 0 })],
      });
    const first = solveScene(make(1e-9), options)!;
    const store = cache.store.get('3d') as Cache3d;
    const level = [...store.levels.values()][0];
    const unit = level.unit;
    const second = solveScene(make(-3e-9), options)!;
    expect([...store.levels.values()][0]).toBe(level);
    expect(level.unit).toBe(unit);
    expect(Math.abs(second.electrodes[0].charge / first.electrodes[0].charge + 3)).toBeLessThan(1e-6);
  });
});
