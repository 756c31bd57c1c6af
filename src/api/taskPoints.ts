/**
 * Which task points a design cannot assemble: `evaluate` says how many and where, instead of showing
 * the worst-limit values (∞ torques, zero stiffness, −10⁶ margins) without a word.
 */
import { chooseDesign } from '../api/design.js';
import { Evaluator } from '../mechanics/evaluate.js';
import { probeArchitecturePose } from '../mechanics/probe.js';
import { taskSamples } from '../mechanics/taskSamples.js';
import type { Study } from '../study/types.js';

export interface TaskPointFailures {
  readonly checked: number;
  readonly failed: readonly { x: number; y: number; status: string }[];
}

/** Task-region sample points, as the evaluator samples them (`taskSamples` intervals across the longer side). */
export function taskSamplePoints(study: Study): [number, number][] {
  const r = study.task.region;
  if (!r) return [];
  const samples = taskSamples(r, study.evaluation.taskSamples);
  return Array.from(samples.x, (x, i) => [x, samples.y[i]!] as [number, number]);
}

/** The task sample points where the design (baseline with overrides) cannot be assembled in the study's modes and limits. */
export function taskPointFailures(study: Study, overrides: readonly string[]): TaskPointFailures {
  const points = taskSamplePoints(study);
  if (points.length === 0 || study.members) return { checked: 0, failed: [] };
  const choice = chooseDesign(study, overrides);
  const d = new Evaluator(choice.study).architectureDesign(choice.design);
  const failed: { x: number; y: number; status: string }[] = [];
  for (const [x, y] of points) {
    const status = probeArchitecturePose(d.study, d.architecture, d.model, x, y, undefined, d.resolved.drives).status;
    if (status !== 'assembled') failed.push({ x, y, status });
  }
  return { checked: points.length, failed };
}
