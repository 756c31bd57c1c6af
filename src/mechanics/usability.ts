/**
 * The one usability rule: which solved pose counts as usable workspace. Its zero level is the
 * boundary of the usable workspace; the evaluator, the workspace sampler, maps, exports and the
 * probe all call it.
 */
import { PoseStatus } from '../core/pose.js';
import type { ArchitecturePose } from '../architectures/types.js';
import type { Study } from '../study/types.js';

export type UsabilitySettings = Pick<Study, 'evaluation' | 'assemblyMode'>;

/**
 * Usability margin (dimensionless; ≥ 0 when usable): the smallest of 1/κ(J_h) − c_min,
 * |s_i| − sin μ_min for each leg, σ_a · (mechanism sine) − sin μ_min and the joint-range margin
 * divided by `jointScale` (1 for revolute joints, rad; a length for prismatic ones, m); −1 when a
 * leg cannot reach. With zero thresholds an exact singularity or the wrong assembly still fails.
 */
export function usabilityMargin(
  status: PoseStatus,
  inverseCondition: number,
  legSines: ArrayLike<number>,
  mechanismSine: number,
  jointMargin: number,
  study: UsabilitySettings,
  jointScale = 1,
): number {
  if (status === PoseStatus.Unreachable) return -1;
  const e = study.evaluation;
  const sinMin = Math.sin(e.minTransmissionAngle);
  const assembly = study.assemblyMode === '+' ? 1 : -1;
  let m = inverseCondition - e.minInverseCondition;
  for (let i = 0; i < legSines.length; i++) {
    const t = Math.abs(legSines[i]!) - sinMin;
    if (t < m) m = t;
  }
  const tm = assembly * mechanismSine - sinMin;
  if (tm < m) m = tm;
  const jm = jointMargin / jointScale;
  if (jm < m) m = jm;
  if (m === 0 && (inverseCondition === 0 || assembly * mechanismSine <= 0)) m = -1e-12;
  return m;
}

/**
 * The usability rule of one study and design with its constants hoisted (sin μ_min, the assembly
 * sign, the joint-margin scale): `margin` gives exactly usabilityMargin's value for a solved pose,
 * without trigonometry or property look-ups per point.
 */
export class UsabilityRule {
  private readonly sinMin: number;
  private readonly assembly: number;
  private readonly minInverseCondition: number;
  constructor(study: UsabilitySettings, private readonly jointScale: number) {
    this.sinMin = Math.sin(study.evaluation.minTransmissionAngle);
    this.assembly = study.assemblyMode === '+' ? 1 : -1;
    this.minInverseCondition = study.evaluation.minInverseCondition;
  }

  margin(pose: ArchitecturePose, status: PoseStatus): number {
    if (status === PoseStatus.Unreachable) return -1;
    const sinMin = this.sinMin;
    const inverseCondition = pose.inverseCondition;
    let m = inverseCondition - this.minInverseCondition;
    const legSines = pose.legSine;
    for (let i = 0; i < legSines.length; i++) {
      const t = Math.abs(legSines[i]!) - sinMin;
      if (t < m) m = t;
    }
    const mechanismSine = pose.mechanismSine;
    const tm = this.assembly * mechanismSine - sinMin;
    if (tm < m) m = tm;
    const jm = pose.jointMargin / this.jointScale;
    if (jm < m) m = jm;
    if (m === 0 && (inverseCondition === 0 || this.assembly * mechanismSine <= 0)) m = -1e-12;
    return m;
  }
}

/** The usability margin of a solved pose of any architecture (see usabilityMargin). */
export function architectureUsableMargin(pose: ArchitecturePose, status: PoseStatus, study: UsabilitySettings, jointScale: number): number {
  return usabilityMargin(status, pose.inverseCondition, pose.legSine, pose.mechanismSine, pose.jointMargin, study, jointScale);
}

/**
 * Scale of joint margins in the usability rule: 1 when every actuated joint is revolute (rad);
 * otherwise the longest rod of the model (m), so that min() compares dimensionless numbers.
 */
export function jointMarginScale(actuators: readonly string[], rods: readonly number[] | undefined): number {
  return rods && actuators.includes('prismatic') ? Math.max(...rods) : 1;
}
