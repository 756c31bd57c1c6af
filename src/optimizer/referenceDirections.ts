/**
 * Structured reference directions on the unit simplex, after Das & Dennis 1998, "Normal-boundary
 * intersection: a new method for generating the Pareto surface in nonlinear multicriteria
 * optimization problems", SIAM Journal on Optimization 8(3), 631-657: with p divisions of each
 * objective axis, every point w with w_i in {0, 1/p, ..., 1} and sum w_i = 1. There are
 * C(M + p - 1, p) of them.
 *
 * With many objectives a useful number of points needs p < M, and then every point lies on the
 * simplex boundary (some w_i = 0). Deb & Jain 2014 (NSGA-III, IEEE TEVC 18(4), Section IV-B) add an
 * inner layer: a second Das-Dennis set with p2 divisions shrunk towards the simplex centre,
 * w = (1 - tau) / M + tau * w', tau = 1/2.
 */

/** Binomial coefficient C(n, k) (exact for the sizes used here). */
export function binomial(n: number, k: number): number {
  if (k < 0 || k > n) return 0;
  let result = 1;
  for (let i = 1; i <= k; i++) result = (result * (n - k + i)) / i;
  return Math.round(result);
}

/** Number of Das-Dennis points for M objectives and p divisions: C(M + p - 1, p). */
export function dasDennisCount(objectiveCount: number, divisions: number): number {
  return binomial(objectiveCount + divisions - 1, divisions);
}

/**
 * Every Das-Dennis point for M objectives and p divisions, in lexicographic order of their integer
 * numerators (first objective largest first). Each point sums to 1.
 */
export function dasDennis(objectiveCount: number, divisions: number): number[][] {
  if (!Number.isInteger(objectiveCount) || objectiveCount < 1) throw new RangeError(`objective count must be an integer >= 1, got ${objectiveCount}`);
  if (!Number.isInteger(divisions) || divisions < 1) throw new RangeError(`divisions must be an integer >= 1, got ${divisions}`);
  const points: number[][] = [];
  const numerators = new Array<number>(objectiveCount).fill(0);
  const fill = (axis: number, left: number): void => {
    if (axis === objectiveCount - 1) {
      numerators[axis] = left;
      points.push(numerators.map((n) => n / divisions));
      return;
    }
    for (let n = left; n >= 0; n--) {
      numerators[axis] = n;
      fill(axis + 1, left - n);
    }
  };
  fill(0, divisions);
  return points;
}

/** Reference-direction layout: outer divisions and, optionally, inner-layer divisions. */
export interface ReferenceLayers {
  outer: number;
  inner?: number;
}

/** Outer layer, then the inner layer shrunk by tau = 1/2 towards the centre (Deb & Jain 2014). */
export function referenceDirections(objectiveCount: number, layers: ReferenceLayers): number[][] {
  const outer = dasDennis(objectiveCount, layers.outer);
  if (layers.inner === undefined) return outer;
  const tau = 0.5;
  const centre = (1 - tau) / objectiveCount;
  const inner = dasDennis(objectiveCount, layers.inner).map((w) => w.map((v) => centre + tau * v));
  return outer.concat(inner);
}

/** Number of directions the layers give. */
export function referenceCount(objectiveCount: number, layers: ReferenceLayers): number {
  return dasDennisCount(objectiveCount, layers.outer) + (layers.inner === undefined ? 0 : dasDennisCount(objectiveCount, layers.inner));
}

/**
 * Layers for a population of N: one layer with the largest p whose point count is at most N, when
 * that p is at least M (so interior points exist); otherwise two layers (p1 >= p2 >= 1) with the
 * largest total at most N (ties: the larger outer p). With M = 1 a single direction.
 */
export function defaultReferenceLayers(objectiveCount: number, populationSize: number): ReferenceLayers {
  if (objectiveCount === 1) return { outer: 1 };
  let single = 0;
  while (dasDennisCount(objectiveCount, single + 1) <= populationSize) single++;
  if (single >= objectiveCount || (objectiveCount === 2 && single >= 1)) return { outer: single };
  let best: ReferenceLayers | undefined;
  let bestCount = 0;
  for (let outer = 1; dasDennisCount(objectiveCount, outer) <= populationSize; outer++) {
    for (let inner = 1; inner <= outer; inner++) {
      const count = referenceCount(objectiveCount, { outer, inner });
      if (count <= populationSize && count >= bestCount) {
        best = { outer, inner };
        bestCount = count;
      }
    }
  }
  // A population too small for two layers: the one layer that fits (at least one division).
  return best ?? { outer: Math.max(single, 1) };
}
