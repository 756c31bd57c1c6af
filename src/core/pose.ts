/**
 * Shared vocabulary of poses, below every folder that uses it: the outcome of placing the end point
 * or platform, actuated-joint ranges and their margins, and the names of working and assembly modes.
 */

/** Outcome of placing the end point (or the platform). */
export const enum PoseStatus {
  /** Every leg reaches, joint limits hold and det A has the study's sign. */
  Assembled = 0,
  /** At least one leg cannot reach the point. */
  Unreachable = 1,
  /** Reached in the working mode, but a joint limit is violated. */
  OutsideJointLimits = 2,
  /** Reached, but det A has the other sign (the other assembly mode) or is zero. */
  WrongAssembly = 3,
}

/** Range of an actuated joint: rad for revolute joints (min < max ≤ min + 2π), m for prismatic ones. */
export interface JointRange {
  readonly min: number;
  readonly max: number;
}

/** Sign pair (σ_1, σ_2) naming a five-bar working mode: which side each elbow bends to. */
export type WorkingMode = '++' | '+-' | '-+' | '--';
export const WORKING_MODES: readonly WorkingMode[] = ['+-', '-+', '++', '--'];
/** Sign of det A: which forward-kinematics solution is used. */
export type AssemblyMode = '+' | '-';

const TWO_PI = 2 * Math.PI;

/** Signed margin of a revolute joint angle θ inside [min, max] (rad), respecting wrap-around; +∞ when unlimited. */
export function jointRangeMargin(theta: number, range: JointRange | null): number {
  if (range === null) return Infinity;
  const span = range.max - range.min;
  // t mod 2π with the sign of t, as `%` gives it, without its library call on the usual path: for
  // 2π ≤ t < 4π one subtraction is exact (Sterbenz), so the result is bit-identical to `%`.
  let t = theta - range.min;
  if (t >= TWO_PI) t = t < 2 * TWO_PI ? t - TWO_PI : t % TWO_PI;
  else if (t <= -TWO_PI) t %= TWO_PI;
  if (t < 0) t += TWO_PI;
  if (t <= span) return Math.min(t, span - t);
  return -Math.min(t - span, TWO_PI - t);
}

/** Signed margin of a prismatic joint position q (m) inside its stroke; +∞ when unlimited. */
export function strokeMargin(q: number, range: JointRange | null): number {
  if (range === null) return Infinity;
  return Math.min(q - range.min, range.max - q);
}


/** Angle in (−π, π]. */
export function wrapAngle(angle: number): number {
  let a = angle % TWO_PI;
  if (a <= -Math.PI) a += TWO_PI;
  else if (a > Math.PI) a -= TWO_PI;
  return a;
}

/** Actuated angle written inside its range [min, min + 2π) when there is one, else in (−π, π]. */
export function angleInRange(angle: number, range: JointRange | null): number {
  if (range === null) return wrapAngle(angle);
  let t = (angle - range.min) % TWO_PI;
  if (t < 0) t += TWO_PI;
  return range.min + t;
}
