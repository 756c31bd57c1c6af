/**
 * Standard multi-objective test problems, used to check the optimizer.
 *
 * - ZDT1, ZDT2, ZDT3, ZDT4, ZDT6: Zitzler, Deb & Thiele 2000, "Comparison of
 *   multiobjective evolutionary algorithms: empirical results", Evolutionary
 *   Computation 8(2), 173-195 (problems T1, T2, T3, T4, T6).
 * - DTLZ1, DTLZ2: Deb, Thiele, Laumanns & Zitzler 2005, "Scalable test problems for
 *   evolutionary multiobjective optimization", in Evolutionary Multiobjective
 *   Optimization, Springer, 105-145.
 * - CONSTR and TNK: the constrained problems of Deb, Pratap, Agarwal &
 *   Meyarivan 2002, "A fast and elitist multiobjective genetic algorithm:
 *   NSGA-II", IEEE TEVC 6(2), Section VI (constraints written g_j >= 0 and
 *   normalised as in that paper's constraint handling, each divided by its
 *   constant term).
 *
 * All objectives are minimised.
 */

import type { BatchEvaluate, Evaluation, ProblemSpec, VariableSpec } from './types.js';

export interface TestProblem {
  name: string;
  problem: ProblemSpec;
  evaluate: BatchEvaluate;
}

function realVariables(count: number, bounds: (index: number) => [number, number]): VariableSpec[] {
  const variables: VariableSpec[] = [];
  for (let i = 0; i < count; i++) {
    const [lower, upper] = bounds(i);
    variables.push({ name: `x${i + 1}`, kind: 'real', lower, upper });
  }
  return variables;
}

function minimise(count: number): ProblemSpec['objectives'] {
  const objectives: { name: string; sense: 'min' }[] = [];
  for (let m = 0; m < count; m++) objectives.push({ name: `f${m + 1}`, sense: 'min' });
  return objectives;
}

function unconstrained(objectiveFunction: (x: Float64Array) => number[]): BatchEvaluate {
  return (designs) => designs.map((x): Evaluation => ({ objectives: objectiveFunction(x), violation: 0 }));
}

/** Sum of x[from..] (inclusive). */
function tailSum(x: Float64Array, from: number): number {
  let sum = 0;
  for (let i = from; i < x.length; i++) sum += x[i]!;
  return sum;
}

/** ZDT1 (T1): convex front f2 = 1 - sqrt(f1), g = 1 + 9 * sum(x2..xn) / (n - 1). */
export function zdt1(variableCount = 30): TestProblem {
  return {
    name: 'ZDT1',
    problem: { variables: realVariables(variableCount, () => [0, 1]), objectives: minimise(2) },
    evaluate: unconstrained((x) => {
      const f1 = x[0]!;
      const g = 1 + (9 * tailSum(x, 1)) / (x.length - 1);
      return [f1, g * (1 - Math.sqrt(f1 / g))];
    }),
  };
}

/** ZDT2 (T2): concave front f2 = 1 - f1^2. */
export function zdt2(variableCount = 30): TestProblem {
  return {
    name: 'ZDT2',
    problem: { variables: realVariables(variableCount, () => [0, 1]), objectives: minimise(2) },
    evaluate: unconstrained((x) => {
      const f1 = x[0]!;
      const g = 1 + (9 * tailSum(x, 1)) / (x.length - 1);
      const ratio = f1 / g;
      return [f1, g * (1 - ratio * ratio)];
    }),
  };
}

/** ZDT3 (T3): disconnected front, h = 1 - sqrt(f1/g) - (f1/g) sin(10 pi f1). */
export function zdt3(variableCount = 30): TestProblem {
  return {
    name: 'ZDT3',
    problem: { variables: realVariables(variableCount, () => [0, 1]), objectives: minimise(2) },
    evaluate: unconstrained((x) => {
      const f1 = x[0]!;
      const g = 1 + (9 * tailSum(x, 1)) / (x.length - 1);
      const ratio = f1 / g;
      return [f1, g * (1 - Math.sqrt(ratio) - ratio * Math.sin(10 * Math.PI * f1))];
    }),
  };
}

/** ZDT4 (T4): multimodal, x1 in [0,1], x2..xn in [-5,5], g = 1 + 10(n-1) + sum(xi^2 - 10 cos(4 pi xi)). */
export function zdt4(variableCount = 10): TestProblem {
  return {
    name: 'ZDT4',
    problem: { variables: realVariables(variableCount, (i) => (i === 0 ? [0, 1] : [-5, 5])), objectives: minimise(2) },
    evaluate: unconstrained((x) => {
      const f1 = x[0]!;
      let g = 1 + 10 * (x.length - 1);
      for (let i = 1; i < x.length; i++) g += x[i]! * x[i]! - 10 * Math.cos(4 * Math.PI * x[i]!);
      return [f1, g * (1 - Math.sqrt(f1 / g))];
    }),
  };
}

/** ZDT6 (T6): non-uniform, f1 = 1 - exp(-4 x1) sin^6(6 pi x1), g = 1 + 9 (sum(x2..xn)/(n-1))^0.25. */
export function zdt6(variableCount = 10): TestProblem {
  return {
    name: 'ZDT6',
    problem: { variables: realVariables(variableCount, () => [0, 1]), objectives: minimise(2) },
    evaluate: unconstrained((x) => {
      const f1 = 1 - Math.exp(-4 * x[0]!) * Math.pow(Math.sin(6 * Math.PI * x[0]!), 6);
      const g = 1 + 9 * Math.pow(tailSum(x, 1) / (x.length - 1), 0.25);
      const ratio = f1 / g;
      return [f1, g * (1 - ratio * ratio)];
    }),
  };
}

/**
 * DTLZ2 with M objectives and n = M + k - 1 variables in [0,1] (k = 10 gives
 * n = M + 9): g = sum over the last k variables of (xi - 0.5)^2;
 * f_1 = (1+g) cos(x1 pi/2) ... cos(x_{M-1} pi/2),
 * f_m = (1+g) cos(x1 pi/2) ... cos(x_{M-m} pi/2) sin(x_{M-m+1} pi/2),
 * f_M = (1+g) sin(x1 pi/2). Front: the unit sphere in the positive orthant.
 */
export function dtlz2(objectiveCount = 3, variableCount = objectiveCount + 9): TestProblem {
  if (variableCount < objectiveCount) throw new RangeError('DTLZ2 needs at least as many variables as objectives');
  return {
    name: `DTLZ2-${objectiveCount}`,
    problem: { variables: realVariables(variableCount, () => [0, 1]), objectives: minimise(objectiveCount) },
    evaluate: unconstrained((x) => {
      let g = 0;
      for (let i = objectiveCount - 1; i < x.length; i++) g += (x[i]! - 0.5) * (x[i]! - 0.5);
      const objectives: number[] = new Array<number>(objectiveCount);
      for (let m = 0; m < objectiveCount; m++) {
        // Objective m (0-based) uses cosines of x_0..x_{M-m-2} and, for m > 0, the sine of x_{M-m-1}.
        let value = 1 + g;
        for (let i = 0; i < objectiveCount - m - 1; i++) value *= Math.cos((x[i]! * Math.PI) / 2);
        if (m > 0) value *= Math.sin((x[objectiveCount - m - 1]! * Math.PI) / 2);
        objectives[m] = value;
      }
      return objectives;
    }),
  };
}

/**
 * DTLZ1 with M objectives and n = M + k - 1 variables in [0,1] (k = 5 gives n = M + 4):
 * g = 100 (k + sum over the last k variables of ((xi - 0.5)^2 - cos(20 pi (xi - 0.5))));
 * f_1 = 0.5 x1 ... x_{M-1} (1+g), f_m = 0.5 x1 ... x_{M-m} (1 - x_{M-m+1}) (1+g),
 * f_M = 0.5 (1 - x1) (1+g). Front: the hyperplane sum f_m = 0.5 in the positive orthant (g = 0);
 * the g term has 11^k - 1 local fronts.
 */
export function dtlz1(objectiveCount = 3, variableCount = objectiveCount + 4): TestProblem {
  if (variableCount < objectiveCount) throw new RangeError('DTLZ1 needs at least as many variables as objectives');
  const k = variableCount - objectiveCount + 1;
  return {
    name: `DTLZ1-${objectiveCount}`,
    problem: { variables: realVariables(variableCount, () => [0, 1]), objectives: minimise(objectiveCount) },
    evaluate: unconstrained((x) => {
      let g = k;
      for (let i = objectiveCount - 1; i < x.length; i++) g += (x[i]! - 0.5) * (x[i]! - 0.5) - Math.cos(20 * Math.PI * (x[i]! - 0.5));
      g *= 100;
      const objectives: number[] = new Array<number>(objectiveCount);
      for (let m = 0; m < objectiveCount; m++) {
        let value = 0.5 * (1 + g);
        for (let i = 0; i < objectiveCount - m - 1; i++) value *= x[i]!;
        if (m > 0) value *= 1 - x[objectiveCount - m - 1]!;
        objectives[m] = value;
      }
      return objectives;
    }),
  };
}

/** Total violation of constraints written as c >= 0: sum of max(0, -c). */
function violationOf(constraints: readonly number[]): number {
  let violation = 0;
  for (const value of constraints) if (value < 0) violation -= value;
  return violation;
}

/**
 * CONSTR (Deb et al. 2002, Section VI): minimise f1 = x1, f2 = (1 + x2)/x1,
 * x1 in [0.1, 1], x2 in [0, 5], subject to x2 + 9 x1 >= 6 and -x2 + 9 x1 >= 1,
 * normalised as (x2 + 9 x1)/6 - 1 >= 0 and (-x2 + 9 x1)/1 - 1 >= 0.
 */
export function constr(): TestProblem {
  return {
    name: 'CONSTR',
    problem: {
      variables: [
        { name: 'x1', kind: 'real', lower: 0.1, upper: 1 },
        { name: 'x2', kind: 'real', lower: 0, upper: 5 },
      ],
      objectives: minimise(2),
    },
    evaluate: (designs) =>
      designs.map((x): Evaluation => {
        const x1 = x[0]!;
        const x2 = x[1]!;
        return {
          objectives: [x1, (1 + x2) / x1],
          violation: violationOf([(x2 + 9 * x1) / 6 - 1, -x2 + 9 * x1 - 1]),
        };
      }),
  };
}

/**
 * TNK (Deb et al. 2002, Section VI; originally Tanaka et al. 1995): minimise
 * f1 = x1, f2 = x2, x in [0, pi]^2, subject to
 * x1^2 + x2^2 - 1 - 0.1 cos(16 atan(x1/x2)) >= 0 and
 * (x1 - 0.5)^2 + (x2 - 0.5)^2 <= 0.5 (normalised: 1 - ((x1-0.5)^2 + (x2-0.5)^2)/0.5 >= 0).
 */
export function tnk(): TestProblem {
  return {
    name: 'TNK',
    problem: {
      variables: [
        { name: 'x1', kind: 'real', lower: 0, upper: Math.PI },
        { name: 'x2', kind: 'real', lower: 0, upper: Math.PI },
      ],
      objectives: minimise(2),
    },
    evaluate: (designs) =>
      designs.map((x): Evaluation => {
        const x1 = x[0]!;
        const x2 = x[1]!;
        const first = x1 * x1 + x2 * x2 - 1 - 0.1 * Math.cos(16 * Math.atan2(x1, x2));
        const second = 1 - ((x1 - 0.5) * (x1 - 0.5) + (x2 - 0.5) * (x2 - 0.5)) / 0.5;
        return { objectives: [x1, x2], violation: violationOf([first, second]) };
      }),
  };
}
