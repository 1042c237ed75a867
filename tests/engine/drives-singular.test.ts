// The drive equations C_UU·V_U = Q_U − q_f,U − C_UK·V_K (server/src/engine/drives.ts) are singular when a
// floating or fixed-charge electrode has no capacitance to anything. The solvers then report VS409 and
// give those electrodes 0 V; the geometry checks keep such an electrode out of any Scene a user can
// write, so this guard is exercised here on the drive equations themselves.
import { describe, expect, it } from 'vitest';
import { applyDrives } from '../../server/src/engine/drives';

describe('singular drive equations (the VS409 condition)', () => {
  it('flags a floating electrode with no capacitance and leaves its potential at 0 V', () => {
    const C = [
      [2e-12, 0],
      [0, 0],
    ];
    const out = applyDrives(C, [0, 0], [{ kind: 'potential', value: 100 }, { kind: 'floating' }]);
    expect(out.singular).toBe(true);
    expect(out.potentials).toEqual([100, 0]);
    // The driven electrode's charge is still C·V: Q = 2 pF × 100 V.
    expect(out.charges[0]).toBeCloseTo(2e-10, 20);
  });

  it('does not flag an ordinary floating electrode: it takes the potential that leaves it uncharged', () => {
    // Two conductors: Q_f = C_fd·V_d + C_ff·V_f = 0 ⇒ V_f = −C_fd·V_d / C_ff (linear superposition).
    const C = [
      [3e-12, -1e-12],
      [-1e-12, 4e-12],
    ];
    const out = applyDrives(C, [0, 0], [{ kind: 'potential', value: 100 }, { kind: 'floating' }]);
    expect(out.singular).toBe(false);
    expect(out.potentials[1]).toBeCloseTo(25, 10);
    expect(out.charges[1]).toBe(0);
  });
});
