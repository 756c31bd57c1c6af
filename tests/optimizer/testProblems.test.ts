import { describe, expect, it } from 'vitest';
import { SeededRandom } from '../../src/optimizer/random.js';
import { constr, dtlz2, tnk, zdt1, zdt2, zdt3, zdt4, zdt6 } from '../../src/optimizer/testProblems.js';
import type { Evaluation, TestProblem } from '../../src/optimizer/index.js';

async function evaluateOne(problem: TestProblem, design: number[]): Promise<Evaluation> {
  const [evaluation] = await problem.evaluate([Float64Array.from(design)]);
  return evaluation!;
}

function withTail(first: number[], length: number, tail: number): number[] {
  return [...first, ...Array.from({ length: length - first.length }, () => tail)];
}

describe('ZDT problems (Zitzler, Deb & Thiele 2000, Evolutionary Computation 8(2), Section 4)', () => {
  it('have the documented sizes and bounds', () => {
    expect(zdt1().problem.variables).toHaveLength(30);
    expect(zdt2().problem.variables).toHaveLength(30);
    expect(zdt3().problem.variables).toHaveLength(30);
    expect(zdt4().problem.variables).toHaveLength(10);
    expect(zdt6().problem.variables).toHaveLength(10);
    expect(zdt4().problem.variables[1]).toMatchObject({ lower: -5, upper: 5 });
  });

  it('give the analytic front values where g = 1', async () => {
    // Derived: with x2..xn = 0, g = 1, so f = (x1, h(x1)).
    expect((await evaluateOne(zdt1(), withTail([0.25], 30, 0))).objectives).toEqual([0.25, 0.5]); // 1 - sqrt(0.25)
    expect((await evaluateOne(zdt2(), withTail([0.25], 30, 0))).objectives).toEqual([0.25, 0.9375]); // 1 - 0.25^2
    const zdt3Value = (await evaluateOne(zdt3(), withTail([0.25], 30, 0))).objectives;
    expect(zdt3Value[1]).toBeCloseTo(0.25, 14); // 1 - 0.5 - 0.25 sin(2.5 pi)
    // ZDT4: g = 1 + 10*9 + sum(0 - 10 cos 0) = 1.
    expect((await evaluateOne(zdt4(), withTail([0.36], 10, 0))).objectives[1]).toBeCloseTo(0.4, 14);
    // ZDT6: x1 = 0 gives f1 = 1 - exp(0) sin^6(0) = 1 and f2 = 1 - 1^2 = 0.
    expect((await evaluateOne(zdt6(), withTail([0], 10, 0))).objectives).toEqual([1, 0]);
  });

  it('are worse away from g = 1', async () => {
    // Derived: x = 1 everywhere gives g = 1 + 9 = 10 for ZDT1, f2 = 10 (1 - sqrt(0.1)).
    expect((await evaluateOne(zdt1(), withTail([1], 30, 1))).objectives[1]).toBeCloseTo(10 * (1 - Math.sqrt(0.1)), 12);
    // Derived: ZDT4 with x2..x10 = 0.5: g = 1 + 90 + 9 (0.25 - 10 cos(2 pi)) = 1 + 90 + 9 * (0.25 - 10) = 3.25.
    const zdt4Value = (await evaluateOne(zdt4(), withTail([0.25], 10, 0.5))).objectives;
    expect(zdt4Value[1]).toBeCloseTo(3.25 * (1 - Math.sqrt(0.25 / 3.25)), 12);
  });
});

describe('DTLZ2 (Deb, Thiele, Laumanns & Zitzler 2005, Section 6.2)', () => {
  it('puts every design with x_M..x_n = 0.5 on the unit sphere, for 3 and 5 objectives', async () => {
    const random = new SeededRandom(1);
    for (const objectiveCount of [3, 5]) {
      const problem = dtlz2(objectiveCount);
      expect(problem.problem.variables).toHaveLength(objectiveCount + 9);
      for (let trial = 0; trial < 20; trial++) {
        const position = Array.from({ length: objectiveCount - 1 }, () => random.next());
        const objectives = (await evaluateOne(problem, withTail(position, objectiveCount + 9, 0.5))).objectives;
        // Derived: with g = 0 the objectives are spherical coordinates of a unit vector.
        expect(Math.hypot(...objectives)).toBeCloseTo(1, 12);
        for (const value of objectives) expect(value).toBeGreaterThanOrEqual(0);
      }
    }
  });

  it('has the corners and the distance factor 1 + g', async () => {
    expect((await evaluateOne(dtlz2(3), withTail([0, 0], 12, 0.5))).objectives).toEqual([1, 0, 0]); // derived: cos 0 = 1, sin 0 = 0
    const top = (await evaluateOne(dtlz2(3), withTail([1, 0.3], 12, 0.5))).objectives;
    expect(top[2]).toBe(1); // derived: f3 = sin(pi/2)
    // Derived: all ten distance variables at 1 give g = 10 * 0.25 = 2.5, so |f| = 3.5.
    expect(Math.hypot(...(await evaluateOne(dtlz2(3), withTail([0.4, 0.7], 12, 1))).objectives)).toBeCloseTo(3.5, 12);
  });
});

describe('constrained problems (Deb et al. 2002, Section VI)', () => {
  it('CONSTR: feasible and infeasible points with the normalised violation', async () => {
    // Derived: at (0.8, 0): (0 + 7.2)/6 - 1 = 0.2 >= 0 and 7.2 - 1 >= 0, f = (0.8, 1/0.8).
    expect(await evaluateOne(constr(), [0.8, 0])).toEqual({ objectives: [0.8, 1.25], violation: 0 });
    // Derived: at (0.5, 1): (1 + 4.5)/6 - 1 = -1/12 violated; -1 + 4.5 - 1 = 2.5 satisfied.
    expect((await evaluateOne(constr(), [0.5, 1])).violation).toBeCloseTo(1 / 12, 14);
  });

  it('TNK: feasible and infeasible points', async () => {
    // Derived: at (1, 1): 1 + 1 - 1 - 0.1 cos(16 * pi/4) = 0.9 >= 0 and 1 - 0.5/0.5 = 0 >= 0.
    expect((await evaluateOne(tnk(), [1, 1])).violation).toBe(0);
    // Derived: at (0.5, 0.5): 0.5 - 1 - 0.1 cos(4 pi) = -0.6, violation 0.6.
    expect((await evaluateOne(tnk(), [0.5, 0.5])).violation).toBeCloseTo(0.6, 14);
  });
});
