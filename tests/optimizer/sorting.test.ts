import { describe, expect, it } from 'vitest';
import { SeededRandom } from '../../src/optimizer/random.js';
import { compareConstrainedDomination, crowdingDistance, fastNonDominatedSort, NonDominatedSorter } from '../../src/optimizer/sorting.js';

describe('constrained domination (Deb et al. 2002, Section IV, Definition 1)', () => {
  it('feasible beats infeasible whatever the objectives', () => {
    // Deb et al. 2002, Section IV: (i) i is feasible and j is not.
    expect(compareConstrainedDomination([100, 100], 0, [0, 0], 0.001)).toBe(-1);
    expect(compareConstrainedDomination([0, 0], 0.001, [100, 100], 0)).toBe(1);
    expect(compareConstrainedDomination([100, 100], 0, [0, 0], Number.POSITIVE_INFINITY)).toBe(-1);
  });

  it('two infeasible: the smaller violation wins; equal violations do not dominate', () => {
    // Deb et al. 2002, Section IV: (ii) both infeasible, i has the smaller overall violation.
    expect(compareConstrainedDomination([5, 5], 0.1, [0, 0], 0.2)).toBe(-1);
    expect(compareConstrainedDomination([0, 0], 0.3, [5, 5], 0.2)).toBe(1);
    expect(compareConstrainedDomination([0, 0], 0.2, [5, 5], 0.2)).toBe(0);
    expect(compareConstrainedDomination([0, 0], 0.2, [0, 0], Number.POSITIVE_INFINITY)).toBe(-1);
  });

  it('two feasible: Pareto dominance on minimised objectives', () => {
    // Deb et al. 2002, Section IV: (iii) both feasible, i dominates j.
    expect(compareConstrainedDomination([1, 2], 0, [1, 3], 0)).toBe(-1);
    expect(compareConstrainedDomination([1, 3], 0, [1, 2], 0)).toBe(1);
    expect(compareConstrainedDomination([1, 3], 0, [2, 2], 0)).toBe(0);
    expect(compareConstrainedDomination([1, 2], 0, [1, 2], 0)).toBe(0);
  });
});

/** Ranks by the definition: peel off the non-dominated set repeatedly (derived from the definition of fronts). */
function ranksByPeeling(objectives: number[][], violations: number[]): number[] {
  const rank = objectives.map(() => -1);
  let remaining = objectives.map((_, i) => i);
  let level = 0;
  while (remaining.length > 0) {
    const front = remaining.filter(
      (p) => !remaining.some((q) => q !== p && compareConstrainedDomination(objectives[q]!, violations[q]!, objectives[p]!, violations[p]!) === -1),
    );
    for (const p of front) rank[p] = level;
    remaining = remaining.filter((p) => !front.includes(p));
    level++;
  }
  return rank;
}

describe('fast non-dominated sort (Deb et al. 2002, Section III-A)', () => {
  it('gives the same fronts as peeling by definition, with constraints and ties', () => {
    const random = new SeededRandom(31);
    const sorter = new NonDominatedSorter();
    for (let trial = 0; trial < 40; trial++) {
      const count = 1 + random.int(60);
      const objectiveCount = 2 + random.int(3);
      const objectives = Array.from({ length: count }, () => Array.from({ length: objectiveCount }, () => random.int(6)));
      const violations = Array.from({ length: count }, () => {
        const draw = random.int(5);
        return draw < 3 ? 0 : draw === 3 ? random.int(3) / 2 : Number.POSITIVE_INFINITY;
      });
      const input = { count, objectiveCount, objectives: Float64Array.from(objectives.flat()), violations: Float64Array.from(violations) };
      const result = (trial % 2 === 0 ? sorter.sort(input) : fastNonDominatedSort(input));
      expect(Array.from(result.rank)).toEqual(ranksByPeeling(objectives, violations));
      // Fronts list their members in ascending index order and cover every point once.
      const all = result.fronts.flatMap((front) => Array.from(front));
      expect(all.slice().sort((a, b) => a - b)).toEqual(Array.from({ length: count }, (_, i) => i));
      for (const front of result.fronts) expect(Array.from(front)).toEqual(Array.from(front).sort((a, b) => a - b));
    }
  });
});

describe('crowding distance (Deb et al. 2002, Section III-B)', () => {
  it('gives boundary points infinity and inner points the normalised neighbour gaps', () => {
    // Derived: points (0,3),(1,2),(2,1),(3,0); inner points get (2-0)/3 in each objective = 4/3.
    const objectives = Float64Array.from([0, 3, 1, 2, 2, 1, 3, 0]);
    const distance = new Float64Array(4);
    crowdingDistance(objectives, 2, [0, 1, 2, 3], distance);
    expect(Array.from(distance)).toEqual([Infinity, 4 / 3, 4 / 3, Infinity]);
  });

  it('works on a subset of indices and handles fronts of one or two points and constant objectives', () => {
    const objectives = Float64Array.from([9, 9, 0, 1, 1, 0, 5, 5]);
    const distance = new Float64Array(4).fill(-1);
    crowdingDistance(objectives, 2, [1, 2], distance);
    expect(Array.from(distance)).toEqual([-1, Infinity, Infinity, -1]);
    // Constant second objective contributes nothing (derived: f_max = f_min).
    const flat = Float64Array.from([0, 1, 1, 1, 3, 1]);
    const flatDistance = new Float64Array(3);
    crowdingDistance(flat, 2, [0, 1, 2], flatDistance);
    expect(Array.from(flatDistance)).toEqual([Infinity, 1, Infinity]);
  });

  it('gives failed members (non-finite objectives) zero and leaves them out', () => {
    const objectives = Float64Array.from([0, 2, Number.NaN, Number.NaN, 1, 1, 2, 0]);
    const distance = new Float64Array(4);
    crowdingDistance(objectives, 2, [0, 1, 2, 3], distance);
    expect(Array.from(distance)).toEqual([Infinity, 0, 2, Infinity]); // derived: (2-0)/2 + (2-0)/2
  });
});
