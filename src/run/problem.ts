/**
 * Bridge between a study and the generic optimizer and store: the optimizer's problem description,
 * the store's columns, cache keys, and conversions of evaluation outcomes.
 */
import { createHash } from 'node:crypto';
import { designToValues, designVariables, type DesignVariable } from '../mechanics/designSpace.js';
import { constraintDefinitions, type ConstraintDefinition } from '../mechanics/evaluate.js';
import { METRICS, metricIndex } from '../mechanics/metrics.js';
import type { Evaluation, ProblemSpec, VariableSpec } from '../optimizer/types.js';
import type { ColumnSet, NewEvaluation, StoredEvaluation } from '../store/store.js';
import type { Study } from '../study/types.js';
import type { LoadedStudy } from '../study/parse.js';
import type { DesignOutcome } from '../pool/pool.js';

export interface StudyProblem {
  readonly study: Study;
  readonly variables: readonly DesignVariable[];
  readonly constraints: readonly ConstraintDefinition[];
  readonly problem: ProblemSpec;
  readonly columns: ColumnSet;
  readonly objectiveMetricIndex: readonly number[];
}

export function studyProblem(study: Study): StudyProblem {
  const variables = designVariables(study);
  const constraints = constraintDefinitions(study);
  const specs: VariableSpec[] = variables.map((v) =>
    v.kind === 'real' ? { name: v.name, kind: 'real', lower: v.min, upper: v.max } : { name: v.name, kind: 'categorical', choices: v.choices },
  );
  return {
    study,
    variables,
    constraints,
    problem: { variables: specs, objectives: study.objectives.map((o) => ({ name: o.metric, sense: o.sense })) },
    columns: {
      variables: variables.map((v) => ({ name: v.name, type: v.kind === 'real' ? 'real' : 'text' })),
      metrics: METRICS.map((m) => m.name),
      constraints: constraints.map((c) => c.name),
    },
    objectiveMetricIndex: study.objectives.map((o) => metricIndex(o.metric)),
  };
}

/**
 * A study whose evaluations come from a custom evaluator module (tests, other models) must not share
 * cache entries with the built-in engine: its settings hash is salted with the module's address.
 */
export function withEvaluatorNamespace(loaded: LoadedStudy, evaluatorModule: string | undefined): LoadedStudy {
  if (!evaluatorModule) return loaded;
  const settingsHash = createHash('sha256').update(loaded.settingsHash).update('\u0000').update(evaluatorModule).digest('hex');
  return { ...loaded, settingsHash };
}

/** Cache key: the evaluation-settings hash and the exact bits of the design vector. */
export function evaluationKey(settingsHash: string, design: Float64Array): string {
  const bytes = Buffer.from(design.buffer, design.byteOffset, design.byteLength);
  return createHash('sha256').update(settingsHash).update(':').update(bytes).digest('hex');
}

/** Optimizer objectives from metric values: NaN fails the design; ±∞ becomes the largest finite value. */
export function objectivesOf(sp: StudyProblem, metric: (index: number) => number | null): { objectives: number[]; failed?: string } {
  const objectives: number[] = [];
  for (let k = 0; k < sp.objectiveMetricIndex.length; k++) {
    const raw = metric(sp.objectiveMetricIndex[k]!);
    const value = raw === null ? Number.NaN : raw;
    if (Number.isNaN(value)) {
      return { objectives, failed: `objective ${sp.study.objectives[k]!.metric} is not a number (NaN)` };
    }
    objectives.push(value === Infinity ? Number.MAX_VALUE : value === -Infinity ? -Number.MAX_VALUE : value);
  }
  return { objectives };
}

export function evaluationFromOutcome(sp: StudyProblem, outcome: DesignOutcome): Evaluation {
  if (outcome.error !== null) return { objectives: [], violation: Infinity, failed: outcome.error };
  const { objectives, failed } = objectivesOf(sp, (i) => outcome.metrics[i]!);
  if (failed) return { objectives, violation: Infinity, failed };
  if (Number.isNaN(outcome.violation)) return { objectives, violation: Infinity, failed: 'constraint violation is NaN' };
  return { objectives, violation: outcome.violation };
}

export function evaluationFromStored(sp: StudyProblem, stored: StoredEvaluation): Evaluation {
  if (stored.error !== null) return { objectives: [], violation: Infinity, failed: stored.error };
  const { objectives, failed } = objectivesOf(sp, (i) => stored.metrics[METRICS[i]!.name] ?? null);
  if (failed) return { objectives, violation: Infinity, failed };
  return { objectives, violation: stored.violation };
}

export function newEvaluationRecord(sp: StudyProblem, settingsHash: string, key: string, design: Float64Array, outcome: DesignOutcome, evaluation: Evaluation): NewEvaluation {
  const metrics: Record<string, number | null> = {};
  METRICS.forEach((m, i) => {
    const v = outcome.metrics[i]!;
    metrics[m.name] = Number.isNaN(v) ? null : v;
  });
  const constraints: Record<string, number | null> = {};
  sp.constraints.forEach((c, k) => {
    const v = outcome.margins[k]!;
    constraints[c.name] = Number.isNaN(v) ? null : v;
  });
  const failed = evaluation.failed ?? null;
  return {
    key,
    settingsHash,
    variables: designToValues(sp.variables, design),
    metrics,
    constraints,
    violation: failed ? Infinity : evaluation.violation,
    feasible: !failed && evaluation.violation === 0,
    error: failed,
    evalSeconds: outcome.seconds,
  };
}
