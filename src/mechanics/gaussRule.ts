/**
 * Gauss–Legendre rules on [0, 1] and the tensor rule on the unit square, for averages of smooth
 * integrands (the task region's gci when the whole region is assembled). Nodes are the roots of the
 * Legendre polynomial P_n found by Newton's method from the Chebyshev-like guesses
 * cos(π (k − 1/4)/(n + 1/2)), weights 2/((1 − x²) P_n'(x)²) (the classical construction; common
 * practice, no source), then mapped from [−1, 1] to [0, 1].
 */

export interface GaussRule {
  readonly nodes: Float64Array;
  readonly weights: Float64Array;
}

/** The n-point Gauss–Legendre rule on [0, 1] (weights sum to 1). */
export function gaussLegendre(n: number): GaussRule {
  const nodes = new Float64Array(n);
  const weights = new Float64Array(n);
  for (let k = 0; k < n; k++) {
    let x = Math.cos((Math.PI * (k + 0.75)) / (n + 0.5));
    let derivative = 0;
    for (let iteration = 0; iteration < 100; iteration++) {
      // P_n(x) and P_n'(x) by the three-term recurrence.
      let p0 = 1;
      let p1 = x;
      for (let m = 2; m <= n; m++) {
        const p2 = ((2 * m - 1) * x * p1 - (m - 1) * p0) / m;
        p0 = p1;
        p1 = p2;
      }
      derivative = (n * (x * p1 - p0)) / (x * x - 1);
      const step = p1 / derivative;
      x -= step;
      if (Math.abs(step) < 1e-16) break;
    }
    nodes[k] = 0.5 * (1 - x);
    weights[k] = 1 / ((1 - x * x) * derivative * derivative);
  }
  return { nodes, weights };
}

/**
 * ∫∫ over the unit square of f(u, v), by the tensor rule of `rule`; null as soon as `f` returns NaN
 * (the caller's sign that a point is outside where the rule may be used).
 */
export function tensorIntegral(rule: GaussRule, f: (u: number, v: number) => number): number | null {
  const { nodes, weights } = rule;
  let sum = 0;
  for (let j = 0; j < nodes.length; j++) {
    for (let i = 0; i < nodes.length; i++) {
      const value = f(nodes[i]!, nodes[j]!);
      if (Number.isNaN(value)) return null;
      sum += weights[i]! * weights[j]! * value;
    }
  }
  return sum;
}

/**
 * ∫∫ over the unit square of f(u, v) for f periodic in u with period 1 (a disc in polar parameters):
 * the trapezoidal rule of `nu` points u = i/nu (even nu) times `rule` in v. The trapezoidal rule is
 * exact for every Fourier mode of u below nu, so it converges geometrically for a smooth periodic
 * integrand, where a Gauss–Legendre rule in u does not (L. N. Trefethen and J. A. C. Weideman 2014,
 * "The exponentially convergent trapezoidal rule", SIAM Review 56(3); from memory). Writes the
 * integral into out[0] and the same rule on every other u point (nu/2, nested: no more points) into
 * out[1]; false as soon as `f` returns NaN (as tensorIntegral).
 */
export function periodicTensorIntegrals(nu: number, rule: GaussRule, f: (u: number, v: number) => number, out: Float64Array): boolean {
  const { nodes, weights } = rule;
  let all = 0;
  let even = 0;
  for (let j = 0; j < nodes.length; j++) {
    for (let i = 0; i < nu; i++) {
      const value = f(i / nu, nodes[j]!);
      if (Number.isNaN(value)) return false;
      all += weights[j]! * value;
      if (i % 2 === 0) even += weights[j]! * value;
    }
  }
  out[0] = all / nu;
  out[1] = (2 * even) / nu;
  return true;
}
