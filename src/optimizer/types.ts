/**
 * Generic problem description for the multi-objective optimizer.
 *
 * The optimizer knows nothing about what a design means: a design is a
 * Float64Array with one entry per variable, in the order of
 * `ProblemSpec.variables`. Categorical variables are stored as the index of
 * the chosen entry (0..choices.length-1); integer variables hold an integer
 * value; real variables hold a real value within their bounds.
 */

/** One decision variable. */
export type VariableSpec =
  | { name: string; kind: 'real'; lower: number; upper: number }
  /** Inclusive integer bounds. */
  | { name: string; kind: 'integer'; lower: number; upper: number }
  /** Encoded in the design vector as the index 0..n-1 into `choices`. */
  | { name: string; kind: 'categorical'; choices: readonly string[] };

export interface ObjectiveSpec {
  name: string;
  sense: 'min' | 'max';
}

export interface ProblemSpec {
  variables: readonly VariableSpec[];
  objectives: readonly ObjectiveSpec[];
}

/**
 * Result of evaluating one design. Objectives are in the problem's own sense
 * (a 'max' objective is NOT negated by the caller).
 *
 * `violation` is the total normalised constraint violation, 0 = feasible.
 * `failed` is the reason text when the evaluation failed; such a design is
 * treated as infeasible with violation +Infinity (worst of all) and never
 * enters the feasible front.
 */
export interface Evaluation {
  objectives: readonly number[];
  violation: number;
  failed?: string;
}

/** Evaluates a batch of designs; the result has one Evaluation per design, in order. */
export type BatchEvaluate = (
  designs: readonly Float64Array[],
) => Promise<readonly Evaluation[]> | readonly Evaluation[];


/**
 * Normalises an evaluator's answer so that the optimizer can rely on it:
 *
 * - an evaluation with `failed` set gets violation +Infinity and every
 *   non-finite objective replaced by NaN;
 * - a wrong number of objectives, a NaN or infinite objective, a NaN,
 *   infinite or negative violation turns the evaluation into a failed one
 *   with a reason such as "objective 1 is NaN";
 * - negative zero becomes positive zero (so that JSON round trips are exact).
 *
 * @param expectedObjectiveCount when given, the objectives array must have this length.
 */
export function sanitizeEvaluation(evaluation: Evaluation, expectedObjectiveCount?: number): Evaluation {
  const objectives: number[] = new Array<number>(evaluation.objectives.length);
  for (let k = 0; k < evaluation.objectives.length; k++) {
    const value = evaluation.objectives[k];
    objectives[k] = typeof value === 'number' && Number.isFinite(value) ? value + 0 : Number.NaN;
  }
  if (evaluation.failed !== undefined) {
    return { objectives, violation: Number.POSITIVE_INFINITY, failed: String(evaluation.failed) };
  }
  const reason = findProblem(evaluation, expectedObjectiveCount);
  if (reason !== undefined) {
    return { objectives, violation: Number.POSITIVE_INFINITY, failed: reason };
  }
  return { objectives, violation: evaluation.violation + 0 };
}

function findProblem(evaluation: Evaluation, expectedObjectiveCount: number | undefined): string | undefined {
  if (expectedObjectiveCount !== undefined && evaluation.objectives.length !== expectedObjectiveCount) {
    return `expected ${expectedObjectiveCount} objectives, got ${evaluation.objectives.length}`;
  }
  for (let k = 0; k < evaluation.objectives.length; k++) {
    const value = evaluation.objectives[k];
    if (typeof value !== 'number') return `objective ${k} is not a number`;
    if (Number.isNaN(value)) return `objective ${k} is NaN`;
    if (!Number.isFinite(value)) return `objective ${k} is ${value}`;
  }
  const violation = evaluation.violation;
  if (typeof violation !== 'number') return 'violation is not a number';
  if (Number.isNaN(violation)) return 'violation is NaN';
  if (!Number.isFinite(violation)) return `violation is ${violation}`;
  if (violation < 0) return `violation ${violation} is negative (must be >= 0)`;
  return undefined;
}

/** True when the evaluation is feasible and did not fail. Expects a sanitized evaluation. */
export function isFeasible(evaluation: Evaluation): boolean {
  return evaluation.failed === undefined && evaluation.violation === 0;
}

/** Throws a descriptive error when the problem description is unusable. */
export function validateProblem(problem: ProblemSpec): void {
  if (problem.variables.length === 0) throw new RangeError('problem has no variables');
  if (problem.objectives.length === 0) throw new RangeError('problem has no objectives');
  for (const variable of problem.variables) {
    if (variable.kind === 'categorical') {
      if (variable.choices.length === 0) throw new RangeError(`variable ${variable.name}: no choices`);
      continue;
    }
    if (!Number.isFinite(variable.lower) || !Number.isFinite(variable.upper)) {
      throw new RangeError(`variable ${variable.name}: bounds must be finite`);
    }
    if (variable.lower > variable.upper) {
      throw new RangeError(`variable ${variable.name}: lower bound ${variable.lower} > upper bound ${variable.upper}`);
    }
    if (variable.kind === 'integer' && (!Number.isInteger(variable.lower) || !Number.isInteger(variable.upper))) {
      throw new RangeError(`variable ${variable.name}: integer bounds must be integers`);
    }
  }
  for (const objective of problem.objectives) {
    if (objective.sense !== 'min' && objective.sense !== 'max') {
      throw new RangeError(`objective ${objective.name}: sense must be 'min' or 'max'`);
    }
  }
}
