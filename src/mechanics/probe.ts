/**
 * The one probe: one pose of one design of any architecture, reported in full (what `loopsmith
 * probe` prints), with the five-bar's own report shape as a view of it.
 */
import { PoseStatus } from '../core/pose.js';
import type { DriveSpec, Study } from '../study/types.js';
import { ARCHITECTURES } from '../architectures/index.js';
import { actuatorUnits, type ActuatorKind, type ArchitectureModelBase, type PlanarArchitecture } from '../architectures/types.js';
import { orientationRanges } from '../architectures/orientation.js';
import { drivesAtJoint } from './designSpace.js';
import { architectureUsableMargin } from './usability.js';
import { modelJointScale } from './workspace.js';
import { CellAnalysis, type CellPoseReport } from './cellMetrics.js';
import { trainsOf } from './driveMetrics.js';
import type { Mount } from '../cell/types.js';

export type { CellPoseReport };

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
  /** The cell checks at this pose (studies with a cell section). */
  readonly cell?: CellPoseReport;
}

const STATUS_NAMES = ['assembled', 'unreachable', 'outside-joint-limits', 'wrong-assembly-mode'] as const;

/**
 * One pose of a five-bar design in the five-bar's own report shape (joint angles, elbows, det A,
 * transmission angles): a view of the one probe, `probeArchitecturePose`.
 */
export function probePose(study: Study, model: ArchitectureModelBase, x: number, y: number, drives: readonly DriveSpec[] | null = study.drives, mount?: Mount): PoseReport {
  const r = probeArchitecturePose(study, ARCHITECTURES['five-bar'], model, x, y, 0, drives, mount);
  const base = { point: { x, y }, status: r.status };
  if (r.status === 'unreachable') return base;
  const pair = (v: readonly number[]): [number, number] => [v[0]!, v[1]!];
  const sym = (m: Matrix): [[number, number], [number, number]] => [[m[0]![0]!, m[0]![1]!], [m[0]![1]!, m[1]![1]!]];
  const s = r.legSines!;
  const detA = r.mechanismSine!;
  const angle = (v: number): number => Math.asin(Math.min(Math.abs(v), 1));
  const kinematics = {
    ...base,
    jointAngles: pair(r.jointPositions!),
    elbows: [pair(r.proximalJoints![0]!), pair(r.proximalJoints![1]!)] as [[number, number], [number, number]],
    jacobian: [pair(r.jacobian![0]!), pair(r.jacobian![1]!)] as [[number, number], [number, number]],
    inverseCondition: r.inverseCondition!,
    detA,
    transmissionAngles: { leg1: angle(s[0]!), leg2: angle(s[1]!), rods: angle(detA) },
    ...(r.cell ? { cell: r.cell } : {}),
  };
  if (r.gravityEfforts === undefined) return kinematics;
  return {
    ...kinematics,
    gravityTorque: pair(r.gravityEfforts),
    inertia: sym(r.inertia!),
    cartesianMass: sym(r.cartesianMass!),
    cartesianStiffness: sym(r.cartesianStiffness!),
    minStiffness: r.minStiffness!,
    naturalFrequencies: pair(r.naturalFrequencies!),
    accelCapability: r.accelCapability ?? null,
    requiredJointSpeeds: r.requiredJointSpeeds ? pair(r.requiredJointSpeeds) : null,
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
  /** The cell checks at this pose (studies with a cell section). */
  readonly cell?: CellPoseReport;
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
  mount?: Mount,
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
  const jointScale = modelJointScale(model);
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
    ...cellAtPose(study, architecture, model, pose, drives, mount),
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

/** The cell checks at the solved pose, for a study with a cell section (mount: for box housings' angle). */
function cellAtPose(
  study: Study,
  architecture: PlanarArchitecture<ArchitectureModelBase>,
  model: ArchitectureModelBase,
  pose: ReturnType<PlanarArchitecture<ArchitectureModelBase>['createPose']>,
  drives: readonly DriveSpec[] | null,
  mount: Mount | undefined,
): { cell?: CellPoseReport } {
  const analysis = CellAnalysis.forStudy(study, architecture);
  if (!analysis) return {};
  analysis.prepare(model, mount, trainsOf(drives));
  return { cell: analysis.probe(pose) };
}

function pairs(values: Float64Array, n: number): [number, number][] {
  const out: [number, number][] = [];
  for (let i = 0; i < n; i++) out.push([values[2 * i]!, values[2 * i + 1]!]);
  return out;
}
