/**
 * Which task points a design cannot assemble: `evaluate` says how many and where, instead of showing
 * the worst-limit values (∞ torques, zero stiffness, −10⁶ margins) without a word.
 */
import { chooseDesign } from '../api/design.js';
import { Evaluator } from '../mechanics/evaluate.js';
import { probeArchitecturePose, probePose } from '../mechanics/probe.js';
import type { Study } from '../study/types.js';

export interface TaskPointFailures {
  readonly checked: number;
  readonly failed: readonly { x: number; y: number; status: string }[];
}

/** Task-region sample points: `taskSamples` intervals across the longer side, edges included. */
export function taskSamplePoints(study: Study): [number, number][] {
  const r = study.task.region;
  if (!r) return [];
  const n = Math.max(1, study.evaluation.taskSamples);
  const width = r.shape === 'rectangle' ? r.width : 2 * r.radius;
  const height = r.shape === 'rectangle' ? r.height : 2 * r.radius;
  const step = Math.max(width, height) / n;
  const nx = Math.max(1, Math.round(width / step));
  const ny = Math.max(1, Math.round(height / step));
  const points: [number, number][] = [];
  for (let i = 0; i <= nx; i++) {
    for (let j = 0; j <= ny; j++) {
      const x = r.centreX - width / 2 + (width * i) / nx;
      const y = r.centreY - height / 2 + (height * j) / ny;
      if (r.shape === 'circle' && Math.hypot(x - r.centreX, y - r.centreY) > r.radius * (1 + 1e-9)) continue;
      points.push([x, y]);
    }
  }
  return points;
}

/** The task sample points where the design (baseline with overrides) cannot be assembled in the study's modes and limits. */
export function taskPointFailures(study: Study, overrides: readonly string[]): TaskPointFailures {
  const points = taskSamplePoints(study);
  if (points.length === 0 || study.members) return { checked: 0, failed: [] };
  const choice = chooseDesign(study, overrides);
  const evaluator = new Evaluator(choice.study);
  const failed: { x: number; y: number; status: string }[] = [];
  if (choice.study.architecture === 'five-bar') {
    const model = evaluator.model(choice.design);
    const drives = evaluator.resolve(choice.design).drives;
    for (const [x, y] of points) {
      const status = probePose(choice.study, model, x, y, drives).status;
      if (status !== 'assembled') failed.push({ x, y, status });
    }
  } else {
    const d = evaluator.architectureDesign(choice.design);
    for (const [x, y] of points) {
      const status = probeArchitecturePose(d.study, d.architecture, d.model, x, y, undefined, d.resolved.drives).status;
      if (status !== 'assembled') failed.push({ x, y, status });
    }
  }
  return { checked: points.length, failed };
}
