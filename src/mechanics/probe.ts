/**
 * One pose of one design, reported in full: what `loopsmith probe` prints.
 */
import { FiveBarPose, PoseStatus, poseDynamics, solvePose, type FiveBarModel } from './fivebar.js';
import type { DriveSpec, Study } from '../study/types.js';
import { actuatorUnits, type ActuatorKind, type ArchitectureModelBase, type PlanarArchitecture } from '../architectures/types.js';
import { orientationRanges } from '../architectures/orientation.js';
import { drivesAtJoint } from './designSpace.js';
import { architectureUsableMargin } from './evaluateArchitecture.js';

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

export function probePose(study: Study, model: FiveBarModel, x: number, y: number, drivesIn: readonly DriveSpec[] | null = study.drives): PoseReport {
  const drives = drivesIn ? ([drivesIn[0]!, drivesIn[1]!] as const) : null;
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

type Matrix = number[][];

/** One pose of any architecture: arrays have one entry per actuator (n = 2 or 3). */
export interface ArchitecturePoseReport {
  readonly architecture: string;
  /** End point P (m) and, for 3-DOF, the platform orientation φ (rad). */
  readonly point: { x: number; y: number; phi?: number };
  readonly status: 'assembled' | 'unreachable' | 'outside-joint-limits' | 'wrong-assembly-mode';
  /** Unit of each actuator's position, speed and effort ("rad", "rad/s", "N·m" for cranks; "m", "m/s", "N" for sliders). */
  readonly actuatorUnits?: { position: string; speed: string; effort: string }[];
  /** Actuated joint positions q_i (rad or m). */
  readonly jointPositions?: number[];
  /** Proximal (elbow or slider joint) and distal (end point or platform pin) joint of each rod, m. */
  readonly proximalJoints?: [number, number][];
  readonly distalJoints?: [number, number][];
  /** J (task rate per joint rate, rows ẋ, ẏ[, φ̇]) and the homogenised J_h (rows ẋ, ẏ[, L φ̇]). */
  readonly jacobian?: Matrix;
  readonly homogenisedJacobian?: Matrix;
  /** Characteristic length L, m (3-DOF; 1 and unused for 2-DOF). */
  readonly characteristicLength?: number;
  readonly inverseCondition?: number;
  /** det A_h / Π‖row_i(A_h)‖: signed mechanism transmission (the five-bar's det A for 2-DOF). */
  readonly mechanismSine?: number;
  /** Leg transmission sines s_i. */
  readonly legSines?: number[];
  /** Usability margin (≥ 0 usable) with the study's thresholds. */
  readonly usableMargin?: number;
  /** Static holding efforts τ_g,i (N·m or N). */
  readonly gravityEfforts?: number[];
  /** Joint-space inertia D; task-space mass M_x; task-space stiffness K_x. */
  readonly inertia?: Matrix;
  readonly cartesianMass?: Matrix;
  readonly cartesianStiffness?: Matrix;
  /** Smallest translational stiffness, N/m; 3-DOF rotational stiffness, N·m/rad. */
  readonly minStiffness?: number;
  readonly rotationalStiffness?: number | null;
  /** Natural frequencies, Hz, ascending. */
  readonly naturalFrequencies?: number[];
  /** Homogenised task acceleration available in every direction from standstill (needs drives), m/s². */
  readonly accelCapability?: number | null;
  /** Joint speeds for the study's end-point speed in the worst direction (rad/s or m/s). */
  readonly requiredJointSpeeds?: number[] | null;
  /** 3-DOF: usable orientation ranges at the point, [lo, hi] rad. */
  readonly orientationRanges?: [number, number][];
}

function matrix(n: number, values: Float64Array): Matrix {
  const out: Matrix = [];
  for (let i = 0; i < n; i++) out.push(Array.from(values.subarray(i * n, (i + 1) * n)));
  return out;
}

/** Everything about one pose of a design of any architecture (φ defaults to the study orientation φ_0). */
export function probeArchitecturePose(
  study: Study,
  architecture: PlanarArchitecture<ArchitectureModelBase>,
  model: ArchitectureModelBase,
  x: number,
  y: number,
  phiIn?: number,
  drives: readonly DriveSpec[] | null = study.drives,
): ArchitecturePoseReport {
  const n = architecture.dof;
  const phi = n === 3 ? (phiIn ?? study.orientation?.phi0 ?? 0) : 0;
  const pose = architecture.createPose();
  const status = architecture.solvePose(model, pose, x, y, phi);
  const base = { architecture: architecture.name, point: n === 3 ? { x, y, phi } : { x, y }, status: STATUS_NAMES[status] };
  if (status === PoseStatus.Unreachable) return base;
  const units = architecture.actuators.map((kind: ActuatorKind) => {
    const u = actuatorUnits(kind);
    return { position: u.position, speed: u.speed, effort: u.effort };
  });
  const jointScale = architecture.actuators.includes('prismatic') ? Math.max(...pairs(pose.distalJoint, n).map((d, i) => Math.hypot(d[0] - pose.proximalJoint[2 * i]!, d[1] - pose.proximalJoint[2 * i + 1]!))) : 1;
  const kinematics = {
    ...base,
    actuatorUnits: units,
    jointPositions: Array.from(pose.q),
    proximalJoints: pairs(pose.proximalJoint, n),
    distalJoints: pairs(pose.distalJoint, n),
    jacobian: matrix(n, pose.J),
    homogenisedJacobian: matrix(n, pose.Jh),
    characteristicLength: model.characteristicLength,
    inverseCondition: pose.inverseCondition,
    mechanismSine: pose.mechanismSine,
    legSines: Array.from(pose.legSine),
    usableMargin: architectureUsableMargin(pose, status, study, jointScale),
  };
  let ranges: [number, number][] | undefined;
  if (n === 3) {
    const buffer = new Float64Array(32);
    const count = orientationRanges(architecture, model, architecture.createPose(), x, y, buffer, {
      step: study.orientation?.step ?? (2 * Math.PI) / 180,
      tolerance: 1e-7,
      accept: (p, s) => architectureUsableMargin(p, s, study, jointScale) >= 0,
    });
    ranges = [];
    for (let k = 0; k < count; k++) ranges.push([buffer[2 * k]!, buffer[2 * k + 1]!]);
  }
  const withRanges = ranges ? { ...kinematics, orientationRanges: ranges } : kinematics;
  if (pose.inverseCondition === 0) return withRanges;
  architecture.poseDynamics(model, pose);
  const atJoint = drivesAtJoint(study, drives);
  let accel: number | null = null;
  if (atJoint) {
    accel = Infinity;
    for (let i = 0; i < n; i++) accel = Math.min(accel, (atJoint[i]!.peakEffort - Math.abs(pose.tauG[i]!)) / pose.inertiaRowNorm[i]!);
  }
  const v = study.task.speed;
  return {
    ...withRanges,
    gravityEfforts: Array.from(pose.tauG),
    inertia: matrix(n, pose.D),
    cartesianMass: matrix(n, pose.Mx),
    cartesianStiffness: matrix(n, pose.Kx),
    minStiffness: pose.minStiffness,
    rotationalStiffness: Number.isNaN(pose.rotationalStiffness) ? null : pose.rotationalStiffness,
    naturalFrequencies: Array.from(pose.frequencies),
    accelCapability: accel,
    requiredJointSpeeds: v > 0 ? Array.from(pose.inverseJacobianRowNorm, (r) => v * r) : null,
  };
}

function pairs(values: Float64Array, n: number): [number, number][] {
  const out: [number, number][] = [];
  for (let i = 0; i < n; i++) out.push([values[2 * i]!, values[2 * i + 1]!]);
  return out;
}
