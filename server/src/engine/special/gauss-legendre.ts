// Gauss–Legendre quadrature on [0, 1]: nodes are the roots of the Legendre polynomial P_n, found by
// Newton's method from Tricomi's initial guess cos(π(i − ¼)/(n + ½)); weights 2/((1 − x²)·P_n′(x)²)
// (Abramowitz and Stegun 25.4.29; Golub and Welsch, Math. Comp. 23, 1969, for the theory).
// An n-point rule integrates polynomials of degree 2n − 1 exactly.

export interface GaussRule {
  /** Nodes in (0, 1), ascending. */
  nodes: Float64Array;
  /** Weights summing to 1. */
  weights: Float64Array;
}

const cache = new Map<number, GaussRule>();

/** The n-point Gauss–Legendre rule on [0, 1] (cached). */
export function gaussLegendre(n: number): GaussRule {
  const hit = cache.get(n);
  if (hit) return hit;
  const nodes = new Float64Array(n);
  const weights = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    let x = Math.cos((Math.PI * (i + 0.75)) / (n + 0.5));
    let dp = 1;
    for (let iter = 0; iter < 100; iter++) {
      // Three-term recurrence (A&S 22.7.10): (k+1)P_{k+1} = (2k+1)x P_k − k P_{k−1}.
      let p0 = 1;
      let p1 = x;
      for (let k = 1; k < n; k++) {
        const p2 = ((2 * k + 1) * x * p1 - k * p0) / (k + 1);
        p0 = p1;
        p1 = p2;
      }
      const pn = n === 0 ? 1 : p1;
      const pPrev = n === 1 ? 1 : p0;
      dp = (n * (x * pn - pPrev)) / (x * x - 1);
      const dx = pn / dp;
      x -= dx;
      if (Math.abs(dx) < 1e-16) break;
    }
    // Map from [−1, 1] to [0, 1]; node i descends in x, so store it ascending.
    nodes[n - 1 - i] = 0.5 * (1 + x);
    weights[n - 1 - i] = 1 / ((1 - x * x) * dp * dp);
  }
  const rule = { nodes, weights };
  cache.set(n, rule);
  return rule;
}
