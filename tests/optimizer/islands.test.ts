/**
 * Island NSGA-II (src/optimizer/islands.ts): determinism whatever the order in which islands run,
 * ring migration, and the quality of the result against one population with the same budget.
 */
import { describe, expect, it } from 'vitest';
import { hypervolume } from '../../src/optimizer/hypervolume.js';
import { epochEndGeneration, migrate, optimizeIslands, resolveIslandSettings, runIslandEpoch, type IslandSettings } from '../../src/optimizer/islands.js';
import { Nsga2, optimize, type Nsga2State } from '../../src/optimizer/nsga2.js';
import { dtlz2, zdt1, type TestProblem } from '../../src/optimizer/testProblems.js';

/**
 * Exact hypervolume (minimisation): 2-D by hypervolume(); 3-D by slicing along the third objective
 * with a 2-D staircase of the points seen so far (derived: the dominated region between two
 * successive third-objective values is a prism over the staircase's area). O(n²), fine for archives
 * of a few thousand points.
 */
function exactHypervolume(points: readonly number[][], reference: readonly number[]): number {
  if (reference.length === 2) return hypervolume(points, reference);
  const inside = points.filter((p) => p.every((v, k) => v < reference[k]!)).sort((a, b) => a[2]! - b[2]!);
  let stair: number[][] = [];
  let total = 0;
  const area = (): number => {
    let sum = 0;
    let previousY = reference[1]!;
    for (const p of stair) {
      sum += (reference[0]! - p[0]!) * (previousY - p[1]!);
      previousY = p[1]!;
    }
    return sum;
  };
  inside.forEach((p, i) => {
    if (!stair.some((q) => q[0]! <= p[0]! && q[1]! <= p[1]!)) {
      stair = stair.filter((q) => !(p[0]! <= q[0]! && p[1]! <= q[1]!));
      stair.push(p);
      stair.sort((a, b) => a[0]! - b[0]!);
    }
    const next = i + 1 < inside.length ? inside[i + 1]![2]! : reference[2]!;
    total += area() * (next - p[2]!);
  });
  return total;
}

const objectivesOf = (members: readonly { evaluation: { objectives: readonly number[] } }[]): number[][] => members.map((m) => Array.from(m.evaluation.objectives));

describe('island NSGA-II', () => {
  it('the 3-D slicing hypervolume agrees with hypervolume() (WFG)', () => {
    const problem = dtlz2();
    const points = objectivesOf(
      (problem.evaluate(Array.from({ length: 40 }, (_, i) => Float64Array.from({ length: 12 }, (_, k) => ((i * 7 + k * 3) % 11) / 10))) as { objectives: number[] }[]).map((evaluation) => ({ evaluation })),
    );
    expect(exactHypervolume(points, [3, 3, 3])).toBeCloseTo(hypervolume(points, [3, 3, 3]), 10);
  });

  it('splits generations over epochs and refuses impossible settings', () => {
    const settings = resolveIslandSettings({ islands: 3, epochs: 3, generations: 10, nsga2: { populationSize: 10, seed: 1 } });
    expect([0, 1, 2].map((e) => epochEndGeneration(settings, e))).toEqual([3, 7, 10]);
    expect(settings.migrants).toBe(1);
    expect(() => resolveIslandSettings({ islands: 2, epochs: 5, generations: 4, nsga2: { populationSize: 10, seed: 1 } })).toThrow(/generations must be .* >= epochs/);
    expect(() => resolveIslandSettings({ islands: 0, epochs: 1, generations: 4, nsga2: { populationSize: 10, seed: 1 } })).toThrow(/islands/);
    expect(() => resolveIslandSettings({ islands: 2, epochs: 1, generations: 4, migrants: 10, nsga2: { populationSize: 10, seed: 1 } })).toThrow(/migrants/);
  });

  it('gives the same states whatever order the islands of an epoch run in (as tasks of a job array would)', async () => {
    const problem = zdt1(6);
    const settings: IslandSettings = { islands: 3, epochs: 3, generations: 6, migrants: 2, nsga2: { populationSize: 8, seed: 11 } };
    const reference = await optimizeIslands(problem.problem, problem.evaluate, settings);
    let states: (Nsga2State | null)[] = [null, null, null];
    for (let epoch = 0; epoch < 3; epoch++) {
      const ended: Nsga2State[] = [];
      for (const island of [2, 0, 1]) {
        // Each island through a JSON round trip, as between processes.
        const start = states[island] === null ? null : (JSON.parse(JSON.stringify(states[island])) as Nsga2State);
        ended[island] = JSON.parse(JSON.stringify(await runIslandEpoch(problem.problem, settings, island, epoch, start, problem.evaluate))) as Nsga2State;
      }
      states = epoch < 2 ? migrate(problem.problem, settings, ended) : ended;
    }
    expect(states).toEqual(reference.states);
  });

  it('ring migration: the best members of island i − 1 replace the worst of island i', async () => {
    const problem = zdt1(6);
    const settings: IslandSettings = { islands: 2, epochs: 2, generations: 4, migrants: 3, nsga2: { populationSize: 10, seed: 5 } };
    const ended = [
      await runIslandEpoch(problem.problem, settings, 0, 0, null, problem.evaluate),
      await runIslandEpoch(problem.problem, settings, 1, 0, null, problem.evaluate),
    ];
    const after = migrate(problem.problem, settings, ended);
    const designs = (s: Nsga2State): Set<string> => new Set(s.population.map((p) => p.design.join(',')));
    for (const [receiver, sender] of [[1, 0], [0, 1]] as const) {
      const before = designs(ended[receiver]!);
      const arrived = [...designs(after[receiver]!)].filter((d) => !before.has(d));
      expect(arrived.length).toBe(3);
      const senderPopulation = Nsga2.restore(problem.problem, { populationSize: 10, seed: 0 }, ended[sender]!).population();
      for (const d of arrived) expect(senderPopulation.find((m) => Array.from(m.design).join(',') === d)!.rank).toBe(0);
      expect(after[receiver]!.population.length).toBe(10);
      expect(after[receiver]!.random).toEqual(ended[receiver]!.random);
    }
  });

  // Budget: one population of 100 for 250 offspring generations (Deb et al. 2002, Section V settings)
  // against 4 islands of 25 for 250 generations in 5 epochs: 25 100 evaluations each. Measured on
  // the archive (the run's result, see benchmarks.test.ts); the final populations' fronts printed.
  const cases: [TestProblem, number[]][] = [
    [zdt1(), [1.1, 1.1]],
    [dtlz2(), [1.1, 1.1, 1.1]],
  ];
  for (const [problem, reference] of cases) {
    it(`hypervolume on ${problem.name} within 1 % of one population with the same evaluation budget`, async () => {
      for (const seed of [1, 2]) {
        const single = await optimize(problem.problem, problem.evaluate, { populationSize: 100, seed, termination: { generations: 250 } });
        const islands = await optimizeIslands(problem.problem, problem.evaluate, { islands: 4, epochs: 5, generations: 250, nsga2: { populationSize: 25, seed } });
        const singleHv = exactHypervolume(objectivesOf(single.archive), reference);
        const islandHv = exactHypervolume(objectivesOf(islands.archive), reference);
        const singlePop = exactHypervolume(objectivesOf(single.front), reference);
        const islandPop = exactHypervolume(objectivesOf(islands.populations.flat().filter((m) => m.rank === 0 && m.evaluation.violation === 0)), reference);
        console.log(
          `${problem.name} seed ${seed}: archive HV single ${singleHv.toFixed(5)}, islands ${islandHv.toFixed(5)} (${((islandHv / singleHv - 1) * 100).toFixed(2)} %); ` +
            `final population fronts ${singlePop.toFixed(5)} / ${islandPop.toFixed(5)}`,
        );
        expect(Math.abs(islandHv / singleHv - 1)).toBeLessThanOrEqual(0.01);
      }
    }, 120_000);
  }
});
