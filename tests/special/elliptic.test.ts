import { describe, expect, it } from 'vitest';
import stdlibEllipK from '@stdlib/math-base-special-ellipk';
import stdlibEllipE from '@stdlib/math-base-special-ellipe';
import { completeElliptic, ellipE, ellipK } from '../../server/src/engine/special/elliptic';

const rel = (a: number, b: number) => Math.abs(a - b) / Math.abs(b);

describe('complete elliptic integrals K(m), E(m) with parameter m = k²', () => {
  // High-precision values from references.md ("Special functions").
  const table: [number, number, number][] = [
    [0.1, 1.6124413487202194, 1.5307576368977632],
    [0.5, 1.8540746773013719, 1.3506438810476755],
    [0.9, 2.5780921133481732, 1.1047747327040733],
  ];
  it.each(table)('match the high-precision values at m = %s to 2e-15', (m, k, e) => {
    expect(rel(ellipK(m), k)).toBeLessThan(2e-15);
    expect(rel(ellipE(m), e)).toBeLessThan(2e-15);
  });

  it('agree with @stdlib ellipk/ellipe (which also take the parameter m) over [0, 1) to 1e-14', () => {
    // General-purpose reference library (references.md); its README defines K(m) with m = k².
    // Its piecewise approximations are themselves off by up to 5e-15 (e.g. ellipk(0.85), checked
    // against a 30-digit evaluation), hence the tolerance.
    let worst = 0;
    for (let i = 0; i <= 400; i++) {
      const m = i < 380 ? i / 400 : 1 - 10 ** -(2 + (i - 380) / 2); // then toward 1, down to 1 − 1e-12
      const r = completeElliptic(m);
      worst = Math.max(worst, rel(r.k, stdlibEllipK(m)), rel(r.e, stdlibEllipE(m)));
    }
    expect(worst).toBeLessThan(1e-14);
  });

  it('satisfy the Legendre relation E·K′ + E′·K − K·K′ = π/2 on both sides of the method switch', () => {
    // Legendre's relation (DLMF 19.7.1), K′(m) = K(1 − m): an identity, independent of any table.
    for (const m of [1e-6, 0.01, 0.2, 0.5, 0.8, 0.94, 0.95, 0.96, 0.999, 1 - 1e-9]) {
      const a = completeElliptic(m);
      const b = completeElliptic(1 - m, m);
      expect(Math.abs(a.e * b.k + b.e * a.k - a.k * b.k - Math.PI / 2)).toBeLessThan(4e-15);
    }
  });

  it('follow the logarithmic behaviour K ≈ ln(4/k′) + (m1/4)(ln(4/k′) − 1) as m1 = 1 − m → 0', () => {
    // Leading terms of DLMF 19.12.1 (and Abramowitz and Stegun 17.3.26); the next term is O(m1² ln m1),
    // below 1e-15 relative for m1 ≤ 1e-8.
    for (const m1 of [1e-8, 1e-10, 1e-14, 1e-20, 1e-100]) {
      const l = Math.log(4 / Math.sqrt(m1));
      const k = l + (m1 / 4) * (l - 1);
      const e = 1 + (m1 / 2) * (l - 0.5);
      const r = completeElliptic(1 - m1, m1);
      expect(rel(r.k, k)).toBeLessThan(2e-15);
      expect(rel(r.e, e)).toBeLessThan(2e-15);
      expect(rel(r.kMinusE, k - e)).toBeLessThan(2e-15);
    }
  });

  it('give K − E ≈ (π/2)(m/2 + 3m²/16 + 15m³/128) without cancellation for small m', () => {
    // Maclaurin series (DLMF 19.5.1, 19.5.2); the omitted term is O(m⁴), relative O(m³).
    for (const m of [1e-3, 1e-6, 1e-9, 1e-12]) {
      const expected = (Math.PI / 2) * (m / 2 + (3 * m * m) / 16 + (15 * m * m * m) / 128);
      expect(rel(completeElliptic(m).kMinusE, expected)).toBeLessThan(m * m * m + 2e-15);
    }
  });

  it('return K = π/2 = E at m = 0, K = +∞ and E = 1 at m = 1, and NaN outside [0, 1]', () => {
    // Definitions (DLMF 19.2.8); values at the ends of the range.
    expect(ellipK(0)).toBe(Math.PI / 2);
    expect(ellipE(0)).toBe(Math.PI / 2);
    expect(ellipK(1)).toBe(Infinity);
    expect(ellipE(1)).toBe(1);
    expect(ellipK(-0.5)).toBeNaN();
    expect(ellipE(1.5)).toBeNaN();
    expect(ellipK(NaN)).toBeNaN();
  });
});
