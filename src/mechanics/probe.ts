/**
 * One pose of one design, reported in full: what `loopsmith probe` prints.
 */
import { FiveBarPose, PoseStatus, poseDynamics, solvePose, type FiveBarModel } from './fivebar.js';
import type { DriveSpec, Study } from '../study/types.js';

export interface PoseReport {
  /** End point, m. */
  readonly point: { x: number; y: number };
  readonly status: 'assembled' | 'unreachable' | 'outside-joint-limits' | 'wrong-assembly-mode';
  /** Actuated joint angles, rad. */
  readonly jointAngles?: [number, number];
  /** Elbow positions, m. */
  readonly elbows?: [[number, number], [number, number]];
  /** J (m/rad), row-major 2×2. */
  readonly jacobian?: [[number, number], [number, number]];
  readonly inverseCondition?: number;
  readonly detA?: number;
  /** Leg transmission angles asin|s_i| and the rod–rod angle asin|det A|, rad (π/2 best, 0 singular). */
  readonly transmissionAngles?: { leg1: number; leg2: number; rods: number };
  /** Static holding torques, N·m. */
  readonly gravityTorque?: [number, number];
  /** Joint-space inertia matrix D, kg·m². */
  readonly inertia?: [[number, number], [number, number]];
  /** Cartesian mass matrix, kg. */
  readonly cartesianMass?: [[number, number], [number, number]];
  /** Cartesian stiffness, N/m. */
  readonly cartesianStiffness?: [[number, number], [number, number]];
  /** Smallest stiffness eigenvalue, N/m. */
  readonly minStiffness?: number;
  /** Natural frequencies (lower, higher), Hz. */
  readonly naturalFrequencies?: [number, number];
  /** End-point acceleration available in every direction from standstill, m/s² (needs drives). */
  readonly accelCapability?: number | null;
  /** Joint speeds needed for the study's end-point speed in the worst direction, rad/s. */
  readonly requiredJointSpeeds?: [number, number] | null;
}

const STATUS_NAMES = ['assembled', 'unreachable', 'outside-joint-limits', 'wrong-assembly-mode'] as const;

export function probePose(study: Study, model: FiveBarModel, x: number, y: number, drives: readonly [DriveSpec, DriveSpec] | null = study.drives): PoseReport {
  const pose = new FiveBarPose();
  const status = solvePose(model, pose, x, y);
  const base = { point: { x, y }, status: STATUS_NAMES[status] };
  if (status === PoseStatus.Unreachable) return base;
  const kinematics = {
    ...base,
    jointAngles: [pose.theta1, pose.theta2] as [number, number],
    elbows: [[pose.c1x, pose.c1y], [pose.c2x, pose.c2y]] as [[number, number], [number, number]],
    jacobian: [[pose.j11, pose.j12], [pose.j21, pose.j22]] as [[number, number], [number, number]],
    inverseCondition: pose.inverseCondition,
    detA: pose.detA,
    transmissionAngles: { leg1: Math.asin(Math.min(Math.abs(pose.s1), 1)), leg2: Math.asin(Math.min(Math.abs(pose.s2), 1)), rods: Math.asin(Math.min(Math.abs(pose.detA), 1)) },
  };
  if (pose.inverseCondition === 0) return kinematics;
  poseDynamics(model, pose);
  let accel: number | null = null;
  if (drives) {
    const limit1 = drives[0].efficiency * drives[0].gearRatio * drives[0].peakTorque;
    const limit2 = drives[1].efficiency * drives[1].gearRatio * drives[1].peakTorque;
    accel = Math.min((limit1 - Math.abs(pose.tauG1)) / pose.inertiaRowNorm1, (limit2 - Math.abs(pose.tauG2)) / pose.inertiaRowNorm2);
  }
  const v = study.task.speed;
  return {
    ...kinematics,
    gravityTorque: [pose.tauG1, pose.tauG2],
    inertia: [[pose.d11, pose.d12], [pose.d12, pose.d22]],
    cartesianMass: [[pose.mx11, pose.mx12], [pose.mx12, pose.mx22]],
    cartesianStiffness: [[pose.kx11, pose.kx12], [pose.kx12, pose.kx22]],
    minStiffness: pose.minStiffness,
    naturalFrequencies: [pose.frequencyLow, pose.frequencyHigh],
    accelCapability: accel,
    requiredJointSpeeds: v > 0 ? [v * pose.inverseJacobianRowNorm1, v * pose.inverseJacobianRowNorm2] : null,
  };
}
