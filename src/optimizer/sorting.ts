/**
 * Non-dominated sorting and crowding distance of NSGA-II, after
 * Deb, Pratap, Agarwal & Meyarivan 2002, "A fast and elitist multiobjective
 * genetic algorithm: NSGA-II", IEEE TEVC 6(2): Section III-A (fast
 * non-dominated sort), Section III-B (crowding distance) and Section IV
 * (constrained domination).
 *
 * Objective values here are always in minimisation form. Points are stored
 * row-major in a flat Float64Array: point p, objective m at p * M + m.
 */

/**
 * Deb's constrained-domination comparison (Deb et al. 2002, Section IV):
 * solution a constrained-dominates b when
 *   (i) a is feasible and b is not, or
 *  (ii) both are infeasible and a has the smaller overall violation, or
 * (iii) both are feasible and a Pareto-dominates b (minimisation).
 * A violation of 0 means feasible; +Infinity (failed evaluation) is worst.
 *
 * @returns -1 when a dominates b, 1 when b dominates a, 0 otherwise.
 */
export function compareConstrainedDomination(
  objectivesA: ArrayLike<number>,
  violationA: number,
  objectivesB: ArrayLike<number>,
  violationB: number,
): -1 | 0 | 1 {
  return compareRows(objectivesA, 0, violationA, objectivesB, 0, violationB, objectivesA.length);
}

/** Same as compareConstrainedDomination for two rows of flat arrays (no allocation). */
export function compareRows(
  objectivesA: ArrayLike<number>,
  offsetA: number,
  violationA: number,
  objectivesB: ArrayLike<number>,
  offsetB: number,
  violationB: number,
  objectiveCount: number,
): -1 | 0 | 1 {
  const feasibleA = violationA === 0;
  const feasibleB = violationB === 0;
  if (feasibleA && !feasibleB) return -1;
  if (feasibleB && !feasibleA) return 1;
  if (!feasibleA) {
    // Both infeasible: the smaller violation dominates; equal violations do not dominate each other.
    if (violationA < violationB) return -1;
    if (violationB < violationA) return 1;
    return 0;
  }
  let aBetterSomewhere = false;
  let bBetterSomewhere = false;
  for (let m = 0; m < objectiveCount; m++) {
    const a = objectivesA[offsetA + m]!;
    const b = objectivesB[offsetB + m]!;
    if (a < b) aBetterSomewhere = true;
    else if (b < a) bBetterSomewhere = true;
    if (aBetterSomewhere && bBetterSomewhere) return 0;
  }
  if (aBetterSomewhere) return -1;
  if (bBetterSomewhere) return 1;
  return 0;
}

/** Input of the sort: `count` points, `objectiveCount` minimised objectives each. */
export interface SortInput {
  count: number;
  objectiveCount: number;
  /** Row-major, length >= count * objectiveCount, minimisation form. */
  objectives: Float64Array;
  /** Overall constraint violation per point (0 = feasible, +Infinity = failed). */
  violations: Float64Array;
}

export interface SortResult {
  /** Fronts in order; each lists point indices in ascending order. */
  fronts: Int32Array[];
  /** Front index (0 = non-dominated) per point. */
  rank: Int32Array;
}

/**
 * Reusable fast non-dominated sorter (Deb et al. 2002, Section III-A, the
 * O(M N^2) bookkeeping): for each p the set S_p of solutions it dominates and
 * the count n_p of solutions dominating it; front 1 is {p : n_p = 0}; each
 * next front collects q whose n_q drops to 0 when the previous front's S_p
 * are visited. Scratch memory is kept between calls.
 */
export class NonDominatedSorter {
  private capacity = 0;
  /** S_p stored flat: dominatedSets[p * capacity + k], k < dominatedCounts[p]. */
  private dominatedSets = new Int32Array(0);
  private dominatedCounts = new Int32Array(0);
  private dominatingCounts = new Int32Array(0);

  sort(input: SortInput): SortResult {
    const { count, objectiveCount, objectives, violations } = input;
    this.ensureCapacity(count);
    const capacity = this.capacity;
    const sets = this.dominatedSets;
    const setSizes = this.dominatedCounts;
    const dominatedBy = this.dominatingCounts;
    setSizes.fill(0, 0, count);
    dominatedBy.fill(0, 0, count);

    for (let p = 0; p < count; p++) {
      const offsetP = p * objectiveCount;
      const violationP = violations[p]!;
      for (let q = p + 1; q < count; q++) {
        const comparison = compareRows(objectives, offsetP, violationP, objectives, q * objectiveCount, violations[q]!, objectiveCount);
        if (comparison < 0) {
          sets[p * capacity + setSizes[p]!] = q;
          setSizes[p]!++;
          dominatedBy[q]!++;
        } else if (comparison > 0) {
          sets[q * capacity + setSizes[q]!] = p;
          setSizes[q]!++;
          dominatedBy[p]!++;
        }
      }
    }

    const rank = new Int32Array(count);
    const fronts: Int32Array[] = [];
    let current: number[] = [];
    for (let p = 0; p < count; p++) if (dominatedBy[p] === 0) current.push(p);
    let frontIndex = 0;
    while (current.length > 0) {
      const front = Int32Array.from(current).sort();
      fronts.push(front);
      const next: number[] = [];
      for (let i = 0; i < front.length; i++) {
        const p = front[i]!;
        rank[p] = frontIndex;
        const base = p * capacity;
        for (let k = 0; k < setSizes[p]!; k++) {
          const q = sets[base + k]!;
          dominatedBy[q]!--;
          if (dominatedBy[q] === 0) next.push(q);
        }
      }
      current = next;
      frontIndex++;
    }
    return { fronts, rank };
  }

  private ensureCapacity(count: number): void {
    if (count <= this.capacity) return;
    this.capacity = count;
    this.dominatedSets = new Int32Array(count * count);
    this.dominatedCounts = new Int32Array(count);
    this.dominatingCounts = new Int32Array(count);
  }
}

/** One-off fast non-dominated sort (see NonDominatedSorter). */
export function fastNonDominatedSort(input: SortInput): SortResult {
  return new NonDominatedSorter().sort(input);
}

/**
 * Crowding distance of the members of one front (Deb et al. 2002, Section
 * III-B): for each objective, sort the front by that objective; the two
 * boundary members get +Infinity; every other member adds the normalised
 * gap (f[next] - f[previous]) / (f_max - f_min) between its neighbours. An
 * objective with f_max = f_min adds nothing. Ties in the sort are broken by
 * point index, so the result is deterministic. Members whose objectives are
 * not all finite (failed evaluations) get 0 and take no part.
 *
 * @param front point indices of one front
 * @param distanceOut written at distanceOut[front[i]]
 */
export function crowdingDistance(
  objectives: Float64Array,
  objectiveCount: number,
  front: ArrayLike<number>,
  distanceOut: Float64Array,
): void {
  const usable: number[] = [];
  for (let i = 0; i < front.length; i++) {
    const p = front[i]!;
    distanceOut[p] = 0;
    let finite = true;
    for (let m = 0; m < objectiveCount; m++) {
      if (!Number.isFinite(objectives[p * objectiveCount + m]!)) {
        finite = false;
        break;
      }
    }
    if (finite) usable.push(p);
  }
  const size = usable.length;
  if (size === 0) return;
  if (size <= 2) {
    for (const p of usable) distanceOut[p] = Number.POSITIVE_INFINITY;
    return;
  }
  const order = Int32Array.from(usable);
  for (let m = 0; m < objectiveCount; m++) {
    order.sort((a, b) => objectives[a * objectiveCount + m]! - objectives[b * objectiveCount + m]! || a - b);
    const first = order[0]!;
    const last = order[size - 1]!;
    distanceOut[first] = Number.POSITIVE_INFINITY;
    distanceOut[last] = Number.POSITIVE_INFINITY;
    const minimum = objectives[first * objectiveCount + m]!;
    const maximum = objectives[last * objectiveCount + m]!;
    const span = maximum - minimum;
    if (!(span > 0)) continue;
    for (let i = 1; i < size - 1; i++) {
      const p = order[i]!;
      distanceOut[p] += (objectives[order[i + 1]! * objectiveCount + m]! - objectives[order[i - 1]! * objectiveCount + m]!) / span;
    }
  }
}
