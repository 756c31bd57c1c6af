/**
 * Candidate sheets built directly from a study file (no database): the design's metrics and
 * constraint margins come from the engine's Evaluator, as a stored evaluation would carry them.
 */
import { designFromValues, designVariables } from '../../src/mechanics/designSpace.js';
import { Evaluator, constraintDefinitions } from '../../src/mechanics/evaluate.js';
import { METRICS } from '../../src/mechanics/metrics.js';
import { candidateSheet, loopsmithVersion, type CandidateSheet } from '../../src/export/candidate.js';
import type { LoadedStudy } from '../../src/study/parse.js';

export function sheetFromStudy(loaded: LoadedStudy, id: number, values: Record<string, number | string>): CandidateSheet {
  const study = loaded.study;
  const variables = designVariables(study);
  const evaluation = new Evaluator(study).evaluate(designFromValues(variables, values, true));
  const metrics: Record<string, number | null> = {};
  METRICS.forEach((m, k) => (metrics[m.name] = Number.isNaN(evaluation.metrics[k]!) ? null : evaluation.metrics[k]!));
  const constraints: Record<string, number | null> = {};
  constraintDefinitions(study).forEach((c, k) => (constraints[c.name] = evaluation.margins[k]!));
  return candidateSheet(
    study,
    { id, variables: values, metrics, constraints, feasible: evaluation.feasible, violation: evaluation.violation },
    {
      database: '(none: built from the study file)',
      evaluationId: id,
      runId: 1,
      runKind: 'evaluate',
      seed: study.optimizer.seed,
      studyName: study.name,
      studyFileHash: loaded.fileHash,
      settingsHash: loaded.settingsHash,
      loopsmithVersion: loopsmithVersion(),
    },
  );
}
