/**
 * A plain midpoint rule for gci over a rectangular task region (derived here): the mean of 1/κ over
 * nu × nv points of the rectangle where the pose at orientation phi is assembled, 0 elsewhere. The
 * reference of tests/mechanics/task-gci-partial*.test.ts.
 */
import type { ArchitectureEvaluator } from '../../src/mechanics/evaluateArchitecture.js';
import { PoseStatus } from '../../src/core/pose.js';

export function midpointGci(evaluator: ArchitectureEvaluator, design: readonly number[], phi = 0, nu = 800, nv = 300): number {
  const region = evaluator.study.task.region!;
  if (region.shape !== 'rectangle') throw new Error('rectangle expected');
  const model = evaluator.model(design);
  const architecture = evaluator.architecture;
  const pose = architecture.createPose();
  let sum = 0;
  for (let j = 0; j < nv; j++) {
    for (let i = 0; i < nu; i++) {
      const x = region.centreX + ((i + 0.5) / nu - 0.5) * region.width;
      const y = region.centreY + ((j + 0.5) / nv - 0.5) * region.height;
      if (architecture.solvePose(model, pose, x, y, phi) === PoseStatus.Assembled) sum += pose.inverseCondition;
    }
  }
  return sum / (nu * nv);
}
