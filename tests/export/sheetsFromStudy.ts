/**
 * Candidate sheets built directly from a study file (no database): the design's metrics and
 * constraint margins come from the engine's Evaluator, as a stored evaluation would carry them.
 */
import { designFromValues, designVariables, resolveDesign } from '../../src/mechanics/designSpace.js';
import { buildFiveBarModel } from '../helpers/fiveBarClosedForm.js';
import type { FiveBarModel, FiveBarPose } from '../helpers/fiveBarClosedForm.js';
import type { Study } from '../../src/study/types.js';
import { architectureMjcf } from '../../src/export/mjcf.js';
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

/** The five-bar engine's model of a design given by its stored variable values (test-side, straight from the engine). */
export function fiveBarModelOf(study: Study, values: Readonly<Record<string, number | string>>): FiveBarModel {
  const variables = designVariables(study);
  return buildFiveBarModel(study, resolveDesign(study, variables, designFromValues(variables, values, true)));
}

/** The MJCF text the export writes for a sheet's design (the same path as `loopsmith export --format mjcf`). */
export function mjcfOfSheet(study: Study, sheet: CandidateSheet): string {
  const evaluator = new Evaluator(study);
  const built = evaluator.architectureDesign(designFromValues(evaluator.variables, sheet.designVariables, true));
  const p = sheet.homePose;
  return architectureMjcf(built.architecture, built.model, { x: p.endPoint.x, y: p.endPoint.y, phi: p.phi ?? 0 }, { safetyNote: sheet.safetyNote });
}

const TWO_PI = 2 * Math.PI;
/** Angle wrapped to (−π, π] (test-side copy of the convention). */
function wrap(angle: number): number {
  let a = angle % TWO_PI;
  if (a <= -Math.PI) a += TWO_PI;
  else if (a > Math.PI) a -= TWO_PI;
  return a;
}

/** θ_1, β_1 − θ_1, θ_2, β_2 − θ_2 of an engine pose, actuated angles inside their ranges (test-side, from the engine pose). */
export function chainJointAngles(model: FiveBarModel, pose: FiveBarPose): [number, number, number, number] {
  const inRange = (angle: number, range: { min: number } | null): number => {
    if (range === null) return wrap(angle);
    let t = (angle - range.min) % TWO_PI;
    if (t < 0) t += TWO_PI;
    return range.min + t;
  };
  const theta1 = inRange(pose.theta1, model.jointLimits[0]);
  const theta2 = inRange(pose.theta2, model.jointLimits[1]);
  return [theta1, wrap(Math.atan2(pose.u1y, pose.u1x) - theta1), theta2, wrap(Math.atan2(pose.u2y, pose.u2x) - theta2)];
}
