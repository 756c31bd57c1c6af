import { describe, expect, it } from 'vitest';
import {
  categoricalMutationValue,
  crossover,
  crowdedTournament,
  designLayout,
  DesignSet,
  differentialMove,
  latinHypercube,
  polynomialMutationValue,
  repair,
  sbxVariable,
} from '../../src/optimizer/operators.js';
import { SeededRandom } from '../../src/optimizer/random.js';
import type { ProblemSpec } from '../../src/optimizer/types.js';

describe('SBX, bounded form', () => {
  it('keeps children within bounds and copies equal parents', () => {
    const random = new SeededRandom(1);
    const out = new Float64Array(2);
    let outside = 0;
    for (let trial = 0; trial < 20_000; trial++) {
      const lower = -1 + random.next();
      const upper = lower + 0.01 + 3 * random.next();
      const p1 = lower + random.next() * (upper - lower);
      const p2 = lower + random.next() * (upper - lower);
      sbxVariable(p1, p2, lower, upper, 1 + 30 * random.next(), random, out);
      if (out[0]! < lower || out[0]! > upper || out[1]! < lower || out[1]! > upper) outside++;
    }
    expect(outside).toBe(0);
    sbxVariable(0.3, 0.3, 0, 1, 20, random, out);
    expect(Array.from(out)).toEqual([0.3, 0.3]);
  });

  it('far from the bounds, contracts and expands equally often', () => {
    // Deb & Agrawal 1995, "Simulated binary crossover for continuous search space", Complex
    // Systems 9 (from memory): the spread factor beta has density 0.5(eta+1)beta^eta for beta <= 1
    // and 0.5(eta+1)/beta^(eta+2) above, so P(beta <= 1) = 0.5; beta <= 1 means both children
    // lie between the parents.
    const random = new SeededRandom(2);
    const out = new Float64Array(2);
    const trials = 20_000;
    let contracting = 0;
    for (let trial = 0; trial < trials; trial++) {
      sbxVariable(-0.5, 0.5, -1e6, 1e6, 20, random, out);
      if (Math.abs(out[0]! - out[1]!) <= 1) contracting++;
    }
    // Binomial standard deviation sqrt(0.25 / 20000) = 0.0035; 0.015 is over 4 sigma.
    expect(Math.abs(contracting / trials - 0.5)).toBeLessThan(0.015);
  });

  it('crossover with probability 0 copies the parents; categoricals are only swapped, never blended', () => {
    const problem: ProblemSpec = {
      variables: [
        { name: 'a', kind: 'real', lower: 0, upper: 1 },
        { name: 'b', kind: 'categorical', choices: ['p', 'q', 'r', 's'] },
        { name: 'c', kind: 'integer', lower: -2, upper: 2 },
      ],
      objectives: [{ name: 'f', sense: 'min' }],
    };
    const layout = designLayout(problem);
    const random = new SeededRandom(3);
    const parent1 = Float64Array.from([0.2, 0, -2]);
    const parent2 = Float64Array.from([0.8, 3, 2]);
    const child1 = new Float64Array(3);
    const child2 = new Float64Array(3);
    const pair = new Float64Array(2);
    crossover(parent1, parent2, child1, child2, layout, 0, 20, random, pair);
    expect(Array.from(child1)).toEqual([0.2, 0, -2]);
    expect(Array.from(child2)).toEqual([0.8, 3, 2]);
    let swapped = 0;
    for (let trial = 0; trial < 1000; trial++) {
      crossover(parent1, parent2, child1, child2, layout, 1, 20, random, pair);
      expect([0, 3]).toContain(child1[1]);
      expect(child1[1]! + child2[1]!).toBe(3);
      if (child1[1] === 3) swapped++;
      repair(child1, layout);
      expect(Number.isInteger(child1[2])).toBe(true);
      expect(child1[2]! >= -2 && child1[2]! <= 2).toBe(true);
    }
    // Uniform crossover with a 0.5 exchange probability per variable (common practice, no source).
    expect(swapped).toBeGreaterThan(400);
    expect(swapped).toBeLessThan(600);
  });
});

describe('polynomial mutation, bounded form', () => {
  it('stays in bounds, perturbs symmetrically in the middle of the range, with the median size the formula gives', () => {
    const random = new SeededRandom(4);
    let outside = 0;
    let sum = 0;
    const sizes: number[] = [];
    const trials = 20_000;
    for (let trial = 0; trial < trials; trial++) {
      const value = polynomialMutationValue(0.5, 0, 1, 20, random);
      if (value < 0 || value > 1) outside++;
      sum += value - 0.5;
      sizes.push(Math.abs(value - 0.5));
      const nearBound = polynomialMutationValue(0.999, 0, 1, 5, random);
      if (nearBound < 0 || nearBound > 1) outside++;
    }
    expect(outside).toBe(0);
    // Derived: at the centre the two branches are mirror images, so the mean perturbation is 0.
    expect(Math.abs(sum / trials)).toBeLessThan(0.005);
    // Derived: for u <= 0.5, delta_q = (2u + (1-2u)(1-delta_1)^(eta+1))^(1/(eta+1)) - 1, which runs
    // from -delta_1 (the bound) at u = 0 to 0 at u = 0.5; at u = 0.25 with delta_1 = 0.5 it is
    // (0.5 + 0.5^22)^(1/21) - 1, so the median |delta_q| is about 1 - 0.5^(1/21) = 0.0325.
    sizes.sort((a, b) => a - b);
    expect(sizes[trials / 2]!).toBeCloseTo(1 - Math.pow(0.5, 1 / 21), 2);
    expect(sizes[trials - 1]!).toBeLessThanOrEqual(0.5);
  });

  it('categorical mutation always picks another choice, each equally often', () => {
    const random = new SeededRandom(5);
    const counts = [0, 0, 0, 0];
    for (let trial = 0; trial < 3000; trial++) counts[categoricalMutationValue(2, 4, random)]!++;
    expect(counts[2]).toBe(0);
    for (const index of [0, 1, 3]) expect(Math.abs(counts[index]! - 1000)).toBeLessThan(120); // ~4.4 sigma of a binomial(3000, 1/3)
    expect(categoricalMutationValue(0, 1, random)).toBe(0);
  });
});

describe('crowded tournament (Deb et al. 2002, Section III-B, crowded-comparison operator)', () => {
  it('prefers lower rank, then larger crowding distance, then draws', () => {
    const random = new SeededRandom(6);
    const rank = [0, 1, 0, 0];
    const crowding = [0.5, 9, Infinity, 0.5];
    expect(crowdedTournament(0, 1, rank, crowding, random)).toBe(0);
    expect(crowdedTournament(1, 0, rank, crowding, random)).toBe(0);
    expect(crowdedTournament(0, 2, rank, crowding, random)).toBe(2);
    const winners = new Set<number>();
    for (let trial = 0; trial < 50; trial++) winners.add(crowdedTournament(0, 3, rank, crowding, random));
    expect(winners).toEqual(new Set([0, 3]));
  });
});

describe('Latin hypercube start', () => {
  it('puts exactly one design in each stratum of each real variable; integers cover their range', () => {
    const problem: ProblemSpec = {
      variables: [
        { name: 'a', kind: 'real', lower: -2, upper: 3 },
        { name: 'b', kind: 'real', lower: 0, upper: 1 },
        { name: 'n', kind: 'integer', lower: 1, upper: 5 },
        { name: 'k', kind: 'categorical', choices: ['x', 'y'] },
      ],
      objectives: [{ name: 'f', sense: 'min' }],
    };
    const layout = designLayout(problem);
    const count = 25;
    const designs = latinHypercube(count, layout, new SeededRandom(8));
    expect(designs).toHaveLength(count);
    for (const [variable, lower, upper] of [[0, -2, 3], [1, 0, 1]] as const) {
      const strata = designs.map((design) => Math.floor(((design[variable]! - lower) / (upper - lower)) * count)).sort((a, b) => a - b);
      expect(strata).toEqual(Array.from({ length: count }, (_, i) => i)); // definition of Latin hypercube sampling
    }
    // 25 designs over 5 integers: stratification gives each integer exactly 5 (derived).
    const integerCounts = [1, 2, 3, 4, 5].map((value) => designs.filter((design) => design[2] === value).length);
    expect(integerCounts).toEqual([5, 5, 5, 5, 5]);
    for (const design of designs) expect([0, 1]).toContain(design[3]);
  });
});

describe('differential move (DE/rand/1, Storn & Price 1997; bound repair of Li & Zhang 2009)', () => {
  const problem: ProblemSpec = {
    variables: [
      { name: 'x', kind: 'real', lower: 0, upper: 1 },
      { name: 'n', kind: 'integer', lower: 0, upper: 9 },
      { name: 'c', kind: 'categorical', choices: ['a', 'b', 'c'] },
    ],
    objectives: [{ name: 'f', sense: 'min' }],
  };
  const layout = designLayout(problem);

  it('inside the bounds: child = base + F (a - b) exactly; categoricals keep the base choice; no draw', () => {
    // derived here: DE/rand/1 with crossover rate 1 changes every real and integer variable by F (a - b).
    const random = new SeededRandom(3);
    const before = random.state();
    const child = new Float64Array(3);
    differentialMove([0.5, 4, 2], [0.7, 6, 0], [0.3, 5, 1], 0.5, child, layout, random);
    expect(child[0]).toBeCloseTo(0.5 + 0.5 * 0.4, 15);
    expect(child[1]).toBeCloseTo(4.5, 15);
    expect(child[2]).toBe(2);
    expect(random.state()).toEqual(before);
    repair(child, layout);
    expect(child[1]).toBe(5); // rounded by repair (Math.round(4.5) = 5)
  });

  it('beyond a bound: the value lies between the base value and that bound', () => {
    // Li & Zhang 2009, MOEA/D-DE (from memory): a component below the lower bound becomes
    // lower + rand (base - lower), above the upper bound upper - rand (upper - base).
    const random = new SeededRandom(4);
    const child = new Float64Array(3);
    let low = 0;
    let high = 0;
    for (let trial = 0; trial < 2000; trial++) {
      const base = 0.1 + 0.8 * random.next();
      differentialMove([base, 0, 0], [0, 0, 0], [1, 0, 0], 1, child, layout, random); // base - 1 < 0
      if (child[0]! >= 0 && child[0]! <= base) low++;
      differentialMove([base, 0, 0], [1, 0, 0], [0, 0, 0], 1, child, layout, random); // base + 1 > 1
      if (child[0]! >= base && child[0]! <= 1) high++;
    }
    expect(low).toBe(2000);
    expect(high).toBe(2000);
  });
});

describe('DesignSet', () => {
  it('finds exactly equal designs only, treating -0 as 0', () => {
    const set = new DesignSet();
    set.add(Float64Array.from([1, 0, 3]));
    expect(set.has(Float64Array.from([1, 0, 3]))).toBe(true);
    expect(set.has(Float64Array.from([1, -0, 3]))).toBe(true);
    expect(set.has(Float64Array.from([1, 0, 3 + 1e-15]))).toBe(false);
  });
});
