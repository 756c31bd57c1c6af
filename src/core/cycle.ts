/**
 * Vocabulary of duty cycles, below every folder that uses it (study files name them; the duty-cycle
 * analysis in src/mechanics/dutyCycle.ts runs them): motion laws, path steps, the closed path, the
 * end-point state and joint friction. SI units.
 */

/** Normalised motion law of a step (see motionLaw in src/mechanics/dutyCycle.ts). */
export type MotionLaw = 'cycloidal' | 'poly5' | 'poly7' | 'trapezoidal' | 'constant-speed';
export const MOTION_LAWS: readonly MotionLaw[] = ['cycloidal', 'poly5', 'poly7', 'trapezoidal', 'constant-speed'];

export type CycleStep =
  /** Straight line from the current point to `to`, m, in `time` s. */
  | { readonly kind: 'move'; readonly to: readonly [number, number]; readonly law: MotionLaw; readonly time: number; readonly accelFraction?: number; readonly label?: string }
  /** Circular arc about `centre` (m) through `angle` rad (counter-clockwise positive), in `time` s. */
  | { readonly kind: 'arc'; readonly centre: readonly [number, number]; readonly angle: number; readonly law: MotionLaw; readonly time: number; readonly accelFraction?: number; readonly label?: string }
  /** Standing still at the current point for `time` s. */
  | { readonly kind: 'dwell'; readonly time: number; readonly label?: string };

/** A closed end-point path: a start point and the steps that bring it back there. */
export interface CyclePath {
  /** Start (and end) point, m. */
  readonly start: readonly [number, number];
  readonly steps: readonly CycleStep[];
}

/** End-point state along a path: position (m), velocity (m/s), acceleration (m/s²). */
export interface EndPointState {
  x: number; y: number; vx: number; vy: number; ax: number; ay: number;
}

/** Where a path ends, m (the start point for a closed cycle). */
export function pathEnd(path: CyclePath): [number, number] {
  let x = path.start[0];
  let y = path.start[1];
  for (const step of path.steps) {
    if (step.kind === 'move') {
      x = step.to[0];
      y = step.to[1];
    } else if (step.kind === 'arc') {
      const rx = x - step.centre[0];
      const ry = y - step.centre[1];
      const c = Math.cos(step.angle);
      const s = Math.sin(step.angle);
      x = step.centre[0] + c * rx - s * ry;
      y = step.centre[1] + s * rx + c * ry;
    }
  }
  return [x, y];
}

/** Viscous and Coulomb friction of one actuated joint: τ_f = viscous θ̇ + coulomb sign(θ̇). */
export interface JointFriction {
  /** N·m·s/rad. */
  readonly viscous: number;
  /** N·m. */
  readonly coulomb: number;
}
