/**
 * Torque–speed envelopes and the referral of joint motion and effort to the motor, gearbox and
 * screw of a drive train (docs/drives.md). Plain functions, no allocation.
 *
 * Transmission (derived here): the joint moves r joint units per motor radian,
 *   revolute joint, gearbox ratio N:           r = 1/N                  (rad/rad)
 *   prismatic joint, gearbox N, stage lead ℓ:  r = ℓ / (2π N)           (m/rad)
 * and the stage alone moves r_s = ℓ/(2π) per gearbox-output radian (r_s = 1 for a revolute joint).
 * Motor speed ω_m = q̇ / r. Power balance with the forward efficiency η = η_gear η_stage gives the
 * motor torque for a load effort τ_L at the joint: τ_m = τ_L r / η when the motor drives the load
 * (τ_L q̇ ≥ 0; at rest too, the conservative side), τ_m = τ_L r η when the load drives the motor.
 * Drive inertia (rotor, gearbox input, screw) is accelerated by the motor itself, without the
 * efficiency loss: its share of the motor torque is J_m,total ω̇_m = J_drive r q̈, where
 * J_drive = (J_rotor + J_gear)/r² + J_stage/r_s² is the same inertia referred to the joint.
 */
import type { DriveTrain, MotorSpec, TorqueSpeedCurve } from './types.js';

/** Torque of a curve at speed |ω| (rad/s): linear between points, 0 beyond the last one. */
export function curveTorque(curve: TorqueSpeedCurve, speed: number): number {
  const w = Math.abs(speed);
  const s = curve.speeds;
  const t = curve.torques;
  const last = s.length - 1;
  if (w > s[last]! * (1 + 1e-12)) return 0;
  if (w >= s[last]!) return t[last]!;
  for (let k = 1; k <= last; k++) {
    if (w <= s[k]!) {
      const f = (w - s[k - 1]!) / (s[k]! - s[k - 1]!);
      return t[k - 1]! + f * (t[k]! - t[k - 1]!);
    }
  }
  return t[last]!;
}

/**
 * Envelopes from data-sheet corner figures: continuous torque flat to the maximum speed (or falling
 * linearly to `continuousAtMax`); peak torque flat to the corner speed (where the supply voltage
 * starts to limit it), then falling linearly to `peakAtMax` at the maximum speed (default: the
 * continuous torque there). Without a corner speed the peak is flat to the maximum speed.
 */
export function cornerEnvelopes(figures: {
  readonly ratedTorque: number;
  readonly peakTorque: number;
  readonly maxSpeed: number;
  readonly cornerSpeed?: number;
  readonly continuousAtMax?: number;
  readonly peakAtMax?: number;
}): { continuous: TorqueSpeedCurve; peak: TorqueSpeedCurve } {
  const { ratedTorque, peakTorque, maxSpeed } = figures;
  const continuousAtMax = figures.continuousAtMax ?? ratedTorque;
  const continuous = { speeds: [0, maxSpeed], torques: [ratedTorque, continuousAtMax] };
  const corner = figures.cornerSpeed;
  if (corner === undefined || corner >= maxSpeed) return { continuous, peak: { speeds: [0, maxSpeed], torques: [peakTorque, peakTorque] } };
  const peakAtMax = figures.peakAtMax ?? continuousAtMax;
  return { continuous, peak: { speeds: [0, corner, maxSpeed], torques: [peakTorque, peakTorque, peakAtMax] } };
}

/** Joint units per motor radian, r (see the header). */
export function transmission(train: DriveTrain): number {
  return train.stage ? train.stage.lead / (2 * Math.PI * train.ratio) : 1 / train.ratio;
}

/** Joint units per gearbox-output radian, r_s: ℓ/(2π) for a stage, else 1. */
export function stageTransmission(train: DriveTrain): number {
  return train.stage ? train.stage.lead / (2 * Math.PI) : 1;
}

/** Forward efficiency η = η_gear η_stage. */
export function forwardEfficiency(train: DriveTrain): number {
  return train.gearbox.efficiency * (train.stage ? train.stage.efficiency : 1);
}

/** Drive inertia referred to the joint, kg·m² (revolute) or kg (prismatic): (J_rotor + J_gear)/r² + J_stage/r_s². */
export function driveInertiaAtJoint(train: DriveTrain): number {
  const r = transmission(train);
  const rs = stageTransmission(train);
  return (train.motor.rotorInertia + train.gearbox.inertia) / (r * r) + (train.stage ? train.stage.inertia / (rs * rs) : 0);
}

/** Largest input (motor) speed the train allows, rad/s: the motor's, the gearbox's and the stage's (referred). */
export function maxMotorSpeed(train: DriveTrain): number {
  const stageLimit = train.stage && Number.isFinite(train.stage.maxSpeed) ? train.stage.maxSpeed / transmission(train) : Infinity;
  return Math.min(train.motor.maxSpeed, train.gearbox.maxInputSpeed, stageLimit);
}

/**
 * Motor torque, N·m, for a joint effort τ_j that already holds the drive's own inertia J_drive q̈
 * (the model's D includes it): τ_L = τ_j − J_drive q̈ is the load's share (see the header).
 */
export function motorTorque(tauJoint: number, qd: number, qdd: number, r: number, eta: number, jDrive: number): number {
  const load = tauJoint - jDrive * qdd;
  const loadShare = load * qd >= 0 ? (load * r) / eta : load * r * eta;
  return jDrive * qdd * r + loadShare;
}

/**
 * Gearbox output torque, N·m, for the same joint state: the load effort carried through the stage
 * (τ_L r_s / η_s when driving, τ_L r_s η_s when driven) plus the stage's own inertia torque.
 */
export function gearboxOutputTorque(tauJoint: number, qd: number, qdd: number, train: DriveTrain, jDrive: number): number {
  const load = tauJoint - jDrive * qdd;
  const stage = train.stage;
  if (!stage) return load;
  const rs = stage.lead / (2 * Math.PI);
  const etaS = stage.efficiency;
  return (stage.inertia * qdd) / rs + (load * qd >= 0 ? (load * rs) / etaS : load * rs * etaS);
}

/** Joint effort available at joint speed q̇ from the peak envelope: η T_peak(q̇/r) / r (N·m or N). */
export function jointPeakEffortAtSpeed(train: DriveTrain, jointSpeed: number): number {
  const r = transmission(train);
  const w = Math.abs(jointSpeed) / r;
  if (w > maxMotorSpeed(train) * (1 + 1e-12)) return 0;
  return (forwardEfficiency(train) * curveTorque(train.motor.peak, w)) / r;
}

/** Emergency-stop output torque of the gearbox, N·m: N · max(T_peak(0), T_brake), no efficiency credit (common practice, no source). */
export function emergencyStopOutputTorque(train: DriveTrain): number {
  const m: MotorSpec = train.motor;
  return train.ratio * Math.max(curveTorque(m.peak, 0), m.brakeTorque ?? 0);
}

/** Use of a bound (value / limit): 0 when both are 0, +∞ when only the limit is. */
export function use(value: number, limit: number): number {
  const v = Math.abs(value);
  if (v === 0) return 0;
  return limit > 0 ? v / limit : Infinity;
}
