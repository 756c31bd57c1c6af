/**
 * Characteristic length of 3-DOF platforms (see types.ts for the convention J_h = diag(1, 1, L) J):
 * 1/κ(J_h) for a given L, and the L that makes the Jacobian best conditioned at one pose (minimum
 * κ) or over a set of poses (maximum mean of 1/κ, i.e. the best global conditioning index).
 */
import { inverseCondition3 } from './dense.js';
import { PoseStatus, type ArchitectureModelBase, type ArchitecturePose, type PlanarArchitecture } from './types.js';

/**
 * 1/κ(diag(1, 1, L) J) for the 3×3 Jacobian J (rows ẋ, ẏ, φ̇) stored at jacobian[offset..offset + 9).
 * `matrix` (9 entries) receives J_h; `work` needs 12 entries.
 */
export function inverseConditionAtLength(
  jacobian: Float64Array,
  offset: number,
  length: number,
  matrix: Float64Array,
  work: Float64Array,
): number {
  for (let k = 0; k < 9; k++) matrix[k] = k >= 6 ? length * jacobian[offset + k]! : jacobian[offset + k]!;
  void work;
  return inverseCondition3(matrix);
}

export interface CharacteristicLengthResult {
  /** Best characteristic length, m. */
  readonly length: number;
  /** Mean 1/κ(J_h) over the poses at that length (the single value for one pose). */
  readonly meanInverseCondition: number;
}

/** Mean 1/κ over `count` stacked 3×3 Jacobians at length L. */
function meanInverseCondition(jacobians: Float64Array, count: number, length: number, matrix: Float64Array, work: Float64Array): number {
  let sum = 0;
  for (let p = 0; p < count; p++) sum += inverseConditionAtLength(jacobians, 9 * p, length, matrix, work);
  return sum / count;
}

/**
 * The L in [minLength, maxLength] that maximises the mean of 1/κ(diag(1, 1, L) J_p) over the given
 * Jacobians (one pose: minimises κ). A scan over 81 logarithmically spaced lengths brackets the best,
 * then golden-section search on log L refines it to 1e-10 relative.
 */
export function optimalCharacteristicLength(
  jacobians: Float64Array,
  count: number,
  minLength: number,
  maxLength: number,
): CharacteristicLengthResult {
  if (count <= 0) throw new Error('optimalCharacteristicLength needs at least one pose');
  const work = new Float64Array(12);
  const matrix = new Float64Array(9);
  const samples = 81;
  const logMin = Math.log(minLength);
  const logMax = Math.log(maxLength);
  let bestIndex = 0;
  let bestValue = -Infinity;
  const at = (logL: number): number => meanInverseCondition(jacobians, count, Math.exp(logL), matrix, work);
  for (let k = 0; k < samples; k++) {
    const v = at(logMin + ((logMax - logMin) * k) / (samples - 1));
    if (v > bestValue) {
      bestValue = v;
      bestIndex = k;
    }
  }
  const stepLog = (logMax - logMin) / (samples - 1);
  let a = logMin + Math.max(bestIndex - 1, 0) * stepLog;
  let b = logMin + Math.min(bestIndex + 1, samples - 1) * stepLog;
  const ratio = (Math.sqrt(5) - 1) / 2;
  let c = b - ratio * (b - a);
  let d = a + ratio * (b - a);
  let fc = at(c);
  let fd = at(d);
  while (b - a > 1e-10) {
    if (fc > fd) {
      b = d; d = c; fd = fc;
      c = b - ratio * (b - a);
      fc = at(c);
    } else {
      a = c; c = d; fc = fd;
      d = a + ratio * (b - a);
      fd = at(d);
    }
  }
  const logBest = 0.5 * (a + b);
  return { length: Math.exp(logBest), meanInverseCondition: at(logBest) };
}

/**
 * Solves every pose (x_k, y_k, φ_k) of `points` (stacked triples) and returns the best characteristic
 * length over those that are assembled and regular, searched in [minLength, maxLength]; null when
 * none is. The model's own characteristic length does not matter (J is taken unhomogenised).
 */
export function characteristicLengthForPoses<M extends ArchitectureModelBase>(
  architecture: PlanarArchitecture<M>,
  model: M,
  pose: ArchitecturePose,
  points: ArrayLike<number>,
  minLength: number,
  maxLength: number,
): CharacteristicLengthResult | null {
  if (model.dof !== 3) throw new Error('a characteristic length is only needed for 3-DOF architectures');
  const total = Math.floor(points.length / 3);
  const jacobians = new Float64Array(9 * total);
  let count = 0;
  for (let k = 0; k < total; k++) {
    const status = architecture.solvePose(model, pose, points[3 * k]!, points[3 * k + 1]!, points[3 * k + 2]!);
    if (status !== PoseStatus.Assembled || !(pose.inverseCondition > 0)) continue;
    jacobians.set(pose.J, 9 * count);
    count++;
  }
  return count === 0 ? null : optimalCharacteristicLength(jacobians, count, minLength, maxLength);
}
