/**
 * The reachable area of a design inside a box by a plain midpoint count (derived here): n × n points,
 * the share whose pose is not Unreachable, times the box's area. Its error is about the boundary's
 * length times a cell. The reference of tests/architectures/annuli.test.ts and slider-strips.test.ts.
 */
import { PoseStatus } from '../../src/core/pose.js';
import type { ArchitectureModelBase, PlanarArchitecture, PlaneBox } from '../../src/architectures/types.js';

export function reachableCount(architecture: PlanarArchitecture<ArchitectureModelBase>, model: ArchitectureModelBase, box: PlaneBox, phi: number, n: number): number {
  const pose = architecture.createPose();
  let reached = 0;
  for (let j = 0; j < n; j++) {
    for (let i = 0; i < n; i++) {
      const x = box.xmin + ((i + 0.5) / n) * (box.xmax - box.xmin);
      const y = box.ymin + ((j + 0.5) / n) * (box.ymax - box.ymin);
      if (architecture.solvePose(model, pose, x, y, phi) !== PoseStatus.Unreachable) reached++;
    }
  }
  return (reached / (n * n)) * (box.xmax - box.xmin) * (box.ymax - box.ymin);
}
