/**
 * Drive-train data as a servo engineer reads it off data sheets: a motor with its torque–speed
 * envelopes, a gearbox with its output-torque ratings, and, for sliders, a screw or belt stage.
 * Every quantity is SI and motor-side unless named otherwise: N·m, rad/s, kg·m², N, m, kg.
 * See docs/drives.md.
 */

/**
 * A torque–speed curve: torque (N·m) available at motor speed ω (rad/s, ≥ 0), piecewise linear
 * between the points, speeds strictly increasing from 0. Beyond the last speed nothing is available
 * (the last speed is the motor's maximum speed). The curve is symmetric in the sign of speed and torque.
 */
export interface TorqueSpeedCurve {
  readonly speeds: readonly number[];
  readonly torques: readonly number[];
}

export interface MotorSpec {
  readonly name: string;
  /** Continuous (thermal) torque–speed curve, N·m over rad/s. */
  readonly continuous: TorqueSpeedCurve;
  /** Peak (intermittent) torque–speed curve, N·m over rad/s. */
  readonly peak: TorqueSpeedCurve;
  /** Maximum motor speed, rad/s (the last speed of both curves). */
  readonly maxSpeed: number;
  /** Rotor inertia, kg·m². */
  readonly rotorInertia: number;
  /** Holding torque of the motor's brake, N·m (absent = no brake). */
  readonly brakeTorque?: number;
  /** Encoder counts per motor revolution (0 = not given). */
  readonly encoderCounts: number;
  /** Mass, kg (0 = not given). */
  readonly mass: number;
  /** Cost in the catalogue's currency (NaN = not given). */
  readonly cost: number;
}

export interface GearboxSpec {
  readonly name: string;
  /** Ratio N: input turns per output turn. */
  readonly ratio: number;
  /** Efficiency η in (0, 1]. */
  readonly efficiency: number;
  /** Inertia referred to the input (motor) shaft, kg·m². */
  readonly inertia: number;
  /** Rated (continuous) output torque, N·m: the bound on the cubic-mean output torque over the cycle. */
  readonly ratedTorque: number;
  /** Maximum acceleration output torque, N·m: the bound on every output torque of the normal cycle. */
  readonly accelerationTorque: number;
  /** Emergency-stop output torque, N·m: a rare overload the gearbox survives a limited number of times. */
  readonly emergencyStopTorque: number;
  /** Maximum input speed, rad/s. */
  readonly maxInputSpeed: number;
  /** Backlash at the output, rad (0 = not given). */
  readonly backlash: number;
  /** Torsional stiffness at the output, N·m/rad (Infinity = not given). */
  readonly stiffness: number;
  readonly mass: number;
  readonly cost: number;
}

/** A gearbox of ratio 1 that changes nothing: direct drive. */
export const DIRECT_DRIVE: GearboxSpec = {
  name: 'direct', ratio: 1, efficiency: 1, inertia: 0, ratedTorque: Infinity, accelerationTorque: Infinity,
  emergencyStopTorque: Infinity, maxInputSpeed: Infinity, backlash: 0, stiffness: Infinity, mass: 0, cost: 0,
};

/** A screw or belt turning rotation into slider travel (prismatic joints only). */
export interface LinearStageSpec {
  readonly kind: 'screw' | 'belt';
  /** Slider travel per turn of the stage's input shaft (the gearbox output), m/rev. */
  readonly lead: number;
  /** Efficiency η in (0, 1] (turning torque into thrust). */
  readonly efficiency: number;
  /** Largest thrust the stage carries, N. */
  readonly maxThrust: number;
  /** Largest slider speed (screw whip, belt speed), m/s (Infinity = not given). */
  readonly maxSpeed: number;
  /** Inertia of screw or pulleys at the stage's input shaft, kg·m². */
  readonly inertia: number;
  /** Axial stiffness at the slider, N/m (Infinity = not given). */
  readonly stiffness: number;
}

/** One actuator's chosen drive train. */
export interface DriveTrain {
  readonly motor: MotorSpec;
  readonly gearbox: GearboxSpec;
  /** Gearbox ratio in use (the gearbox's own, or a continuous design variable). */
  readonly ratio: number;
  /** The slider's screw or belt (prismatic joints), or null (revolute joints). */
  readonly stage: LinearStageSpec | null;
}
