/**
 * Shared engine of the leg-based architectures in this folder (2-PRR, 3-RRR, 3-PRR): n legs, each an
 * actuated joint (revolute crank or prismatic slider), a rod, and a distal pin on the end point
 * (2-DOF) or on a rigid platform (3-DOF). Each architecture file only maps its parameters to a
 * `LeggedModel`; the kinematics, dynamics and stiffness are written once here.
 *
 * Geometry per leg i (SI):
 * - revolute: pivot A_i, crank p_i at angle θ_i (= q_i), elbow C_i = A_i + p_i e(θ_i);
 * - prismatic: rail through O_i with unit direction e_r,i, slider joint S_i = O_i + q_i e_r,i;
 * - rod d_i from the proximal joint (C_i or S_i) to the distal joint B_i = P + R(φ) b_i
 *   (b_i = 0 for a 2-DOF end point).
 * Inverse kinematics per leg with working-mode sign σ_i:
 * - revolute (as the five-bar, target B_i): θ_i = atan2(B_i − A_i) + σ_i acos((p² + ρ² − d²)/(2pρ));
 * - prismatic: with w = B_i − O_i, q_i = w·e_r + σ_i √(d_i² − cross(e_r, w)²).
 * Velocity: rod length constant, u_i·(Ḃ_i − proximal rate) = 0 with Ḃ_i = Ṗ + φ̇ E R(φ) b_i
 * (E the +90° rotation) gives A rows [u_iᵀ, cross(R(φ) b_i, u_i)] and B = diag(p_i s_i) with
 * s_i = cross(e(θ_i), u_i) (revolute) or diag(s_i) with s_i = u_i·e_r,i (prismatic).
 */
import { strokeMargin, wrapAngle } from '../core/pose.js';
import {
  determinant,
  generalizedEigenvalues,
  maxSingularValue3,
  rowNorm,
  singularValues,
  solveInPlace,
  symmetricEigenvalues,
} from './dense.js';
import { generalizedEigen2, inverseCondition2, maxSingularValue2, minEigenSymmetric2 } from './linalg2.js';
import { addBody, VBX, VBY, VX, VY, W } from './legs/bodies.js';
import { annuliIntersectionArea } from './annuli.js';
import { crankRod } from './legs/crankRod.js';
import { finishKinematics3 } from './legs/platform3.js';
import { sliderRod } from './legs/sliderRod.js';
import type { LegGeometry, LegKind, LegModelView } from './legs/types.js';
import {
  ArchitecturePose,
  PoseStatus,
  RIGID_MASSLESS,
  type ActuatorKind,
  type ArchitectureModelBase,
  type CutOpenChain,
  type ArchitectureName,
  type BodyTree,
  type DriveAtJoint,
  type TreeBody,
  type JointRange,
  type ModelInput,
  type PlaneBox,
} from './types.js';

export type { LegGeometry, LegKind } from './legs/types.js';
export { strokeMargin };

/** Immutable model of a leg-based architecture. Arrays have one entry per leg. */
export interface LeggedModel extends ArchitectureModelBase, LegModelView {
  /** Leg kind per leg (crank + rod, slider + rod, strut). */
  readonly legs: readonly LegKind[];
  /** Base point: pivot A_i (crank, strut) or rail origin O_i (slider), m. */
  readonly baseX: readonly number[];
  readonly baseY: readonly number[];
  /** Rail unit direction e_r,i (slider legs; (1, 0) and unused for the others). */
  readonly railX: readonly number[];
  readonly railY: readonly number[];
  /** Crank length p_i, m (0 for other legs). */
  readonly crank: readonly number[];
  /** Rod length d_i, m (strut: the retracted length, the length of its housing and of its tube). */
  readonly rod: readonly number[];
  /** Distal pin b_i in the platform frame, m (all 0 for 2-DOF). */
  readonly platformX: readonly number[];
  readonly platformY: readonly number[];
  /** Working-mode signs σ_i. */
  readonly sigma: readonly number[];
  /** Actuated-joint ranges (rad or m), null = unlimited. */
  readonly jointLimits: readonly (JointRange | null)[];

  // --- inertia ---
  /** Mass of the actuated body (crank with elbow hub, slider carriage, strut housing), kg. */
  readonly proximalMass: readonly number[];
  /** Crank with elbow hub: inertia about the pivot, kg·m². Slider: its mass, kg. Strut housing: inertia about its base pivot, kg·m². */
  readonly proximalInertia: readonly number[];
  /** Crank with hub: first moment about the pivot, kg·m. Slider: its mass, kg. Strut housing: first moment about its pivot, kg·m. */
  readonly proximalFirstMoment: readonly number[];
  /** Rod (strut: tube) mass (kg), centre-of-mass distance (m; from the proximal joint for rods, from B_i for a strut tube), inertia about the centre of mass (kg·m²). */
  readonly rodMass: readonly number[];
  readonly rodComDistance: readonly number[];
  readonly rodInertiaAboutCom: readonly number[];
  /** Body carried at P: the platform (3-DOF) or end hub (2-DOF), with its centre of mass at P, kg. */
  readonly platformMass: number;
  /** Its inertia about P, kg·m² (ignored for 2-DOF: the end point does not turn). */
  readonly platformInertia: number;
  /** Payload point mass at P, kg. */
  readonly payloadMass: number;
  /** Drive inertia reflected to each joint, kg·m² or kg. */
  readonly reflectedInertia: readonly number[];
  readonly gravity: readonly [number, number];

  // --- leg compliance along the line of action: c_i = s_i² transverse + (1 − s_i²) proximalAxial + rodAxial ---
  /** Crank: p²/k + p³/(3 E I) (drive and crank bending), m/N. Slider, strut: 1/k of the drive, m/N. */
  readonly complianceTransverse: readonly number[];
  /** Crank: p/(E A) of the crank, m/N. Slider, strut: 0. */
  readonly complianceProximalAxial: readonly number[];
  /** d/(E A) of the rod (strut: of its tube), m/N. */
  readonly complianceRodAxial: readonly number[];

  /** Moving mass (payload excluded), kg. */
  readonly movingMass: number;
}

/**
 * Per-leg numbers (at most 3) as an array of doubles of one kind for every model. V8 keeps packed and
 * holey, small-integer and double arrays apart; `Array.prototype.map` makes one kind before it is
 * optimized and another after, so the hot loops that read a model's arrays met both, were compiled
 * again after each deoptimization, and stayed polymorphic. A slice of a literal of doubles is always
 * a packed array of doubles; storing a small integer into it keeps it one.
 */
export function legNumbers(n: number, value: (i: number) => number): number[] {
  const out = LEG_DOUBLES.slice(0, n);
  for (let i = 0; i < n; i++) out[i] = value(i);
  return out;
}
const LEG_DOUBLES: readonly number[] = [0.5, 0.5, 0.5];

/** The leg kind of a leg geometry: its own, else the crank + rod or slider + rod leg of its actuator. */
export function legKindOf(leg: LegGeometry): LegKind {
  return leg.leg ?? (leg.actuator === 'revolute' ? crankRod : sliderRod);
}

/** Builds a LeggedModel from leg geometry plus the masses, sections and drives of the input. */
export function buildLeggedModel(
  architecture: ArchitectureName,
  dof: 2 | 3,
  legs: readonly LegGeometry[],
  sigma: readonly number[],
  input: ModelInput,
): LeggedModel {
  if (legs.length !== dof) throw new Error(`${architecture}: ${dof} legs expected`);
  const drives: readonly DriveAtJoint[] | null = input.drives;
  if (drives && drives.length !== dof) throw new Error(`${architecture}: ${dof} drives expected`);
  if (input.rods.length !== dof) throw new Error(`${architecture}: ${dof} rod sections expected`);
  const kinds = legs.map(legKindOf);
  const jointLimits = input.jointLimits ?? legs.map(() => null);
  const lumped = legs.map((leg, i) =>
    kinds[i]!.lump(leg, {
      crankSection: input.cranks?.[i] ?? RIGID_MASSLESS,
      rodSection: input.rods[i]!,
      elbowHubMass: input.elbowHubMass ?? 0,
      sliderMass: input.sliderMass ?? 0,
      drive: drives ? drives[i]! : null,
      jointLimit: jointLimits[i] ?? null,
    }),
  );
  let movingMass = 0;
  for (const l of lumped) {
    movingMass += l.rodMass;
    movingMass += l.proximalMass;
  }
  const platformMass = dof === 3 ? (input.platform?.mass ?? 0) : (input.endHubMass ?? 0);
  movingMass += platformMass;
  const pinX = legNumbers(dof, (i) => legs[i]!.platformPin?.[0] ?? 0);
  const pinY = legNumbers(dof, (i) => legs[i]!.platformPin?.[1] ?? 0);
  const circumradius = Math.max(...pinX.map((x, i) => Math.hypot(x, pinY[i]!)));
  const characteristicLength = dof === 2 ? 1 : (input.characteristicLength ?? circumradius);
  if (!(characteristicLength > 0)) throw new Error(`${architecture}: characteristic length must be positive`);
  const field = <K extends keyof (typeof lumped)[number]>(key: K): number[] => legNumbers(dof, (i) => lumped[i]![key]);
  return {
    architecture,
    dof,
    legs: kinds,
    actuators: kinds.map((k): ActuatorKind => k.actuator),
    assembly: input.assembly,
    characteristicLength,
    drives,
    baseX: legNumbers(dof, (i) => legs[i]!.base[0]),
    baseY: legNumbers(dof, (i) => legs[i]!.base[1]),
    railX: legNumbers(dof, (i) => Math.cos(legs[i]!.railAngle ?? 0)),
    railY: legNumbers(dof, (i) => Math.sin(legs[i]!.railAngle ?? 0)),
    crank: field('crank'),
    rod: field('rod'),
    platformX: pinX,
    platformY: pinY,
    sigma: legNumbers(dof, (i) => sigma[i]!),
    jointLimits,
    proximalMass: field('proximalMass'),
    proximalInertia: field('proximalInertia'),
    proximalFirstMoment: field('proximalFirstMoment'),
    rodMass: field('rodMass'),
    rodComDistance: field('rodComDistance'),
    rodInertiaAboutCom: field('rodInertiaAboutCom'),
    platformMass,
    platformInertia: dof === 3 ? (input.platform?.inertiaAboutCentre ?? 0) : 0,
    payloadMass: input.payloadMass,
    reflectedInertia: legNumbers(dof, (i) => (drives ? drives[i]!.reflectedInertia : 0)),
    gravity: input.gravity,
    complianceTransverse: field('complianceTransverse'),
    complianceProximalAxial: field('complianceProximalAxial'),
    complianceRodAxial: field('complianceRodAxial'),
    movingMass,
  };
}

/** Inverse kinematics and velocity matrices; fills pose and returns its status. */
export function solveLeggedPose(model: LeggedModel, pose: ArchitecturePose, x: number, y: number, phi = 0): PoseStatus {
  // Small enough to be inlined where it is called: the point goes in through the pose's fields, not
  // as arguments of the large solver (a number passed to a function that is not inlined is boxed).
  pose.x = x;
  pose.y = y;
  pose.phi = model.dof === 3 ? phi : 0;
  return solveLeggedPoseAtPoint(model, pose);
}

/** solveLeggedPose for the point and orientation already in pose.x, pose.y, pose.phi. */
function solveLeggedPoseAtPoint(model: LeggedModel, pose: ArchitecturePose): PoseStatus {
  const n = model.dof;
  const x = pose.x;
  const y = pose.y;
  const angle = pose.phi;
  // No trigonometry at φ = ±0 (every 2-DOF pose, and sampling at φ_0 = 0): cos = 1, sin = φ exactly.
  const cphi = angle === 0 ? 1 : Math.cos(angle);
  const sphi = angle === 0 ? angle : Math.sin(angle);
  let reach = Infinity;
  let joint = Infinity;
  let reachable = true;
  const A = pose.A;
  // B is diagonal: its off-diagonal entries are zero from the pose's construction and never written.
  for (let i = 0; i < n; i++) {
    // r_i = R(φ) b_i; B_i = P + r_i.
    const bx = model.platformX[i]!;
    const by = model.platformY[i]!;
    const rx = cphi * bx - sphi * by;
    const ry = sphi * bx + cphi * by;
    const distalX = x + rx;
    const distalY = y + ry;
    pose.distalJoint[2 * i] = distalX;
    pose.distalJoint[2 * i + 1] = distalY;
    const reaches = model.legs[i]!.solve(model, i, pose);
    const margin = pose.legReach[i]!;
    if (margin < reach) reach = margin;
    if (!reaches) {
      reachable = false;
      continue;
    }
    const m = pose.legJoint[i]!;
    if (m < joint) joint = m;
    if (n === 3) A[i * n + 2] = rx * pose.rodDirection[2 * i + 1]! - ry * pose.rodDirection[2 * i]!;
  }
  pose.reachMargin = reach;
  if (!reachable) {
    pose.status = PoseStatus.Unreachable;
    return pose.status;
  }
  pose.jointMargin = joint;
  finishKinematics(model, pose);
  if (joint < 0) pose.status = PoseStatus.OutsideJointLimits;
  else if (pose.detA * model.assembly <= 0) pose.status = PoseStatus.WrongAssembly;
  else pose.status = PoseStatus.Assembled;
  return pose.status;
}

/**
 * From A and B (already in pose): det A, J, J⁻¹, the homogenised pair, 1/κ(J_h) and the mechanism
 * sine. Exported for architectures that fill A and B themselves. Two legs use the 2×2 closed forms
 * (src/architectures/linalg2.ts), whose rows are unit vectors: the mechanism sine is det A itself;
 * three legs the written-out 3 × 3 forms (legs/platform3.ts).
 */
export function finishKinematics(model: ArchitectureModelBase, pose: ArchitecturePose): void {
  const n = model.dof;
  if (n === 2) {
    finishKinematics2(pose);
    return;
  }
  finishKinematics3(model, pose);
}

/** Two legs: J⁻¹ = B⁻¹A, det A = cross(u_1, u_2), J = A⁻¹B and 1/κ in closed form (J entries ±∞/NaN when det A = 0). */
function finishKinematics2(pose: ArchitecturePose): void {
  const { A, B, J, Jh, Jinv, Jhinv } = pose;
  const u1x = A[0]!;
  const u1y = A[1]!;
  const u2x = A[2]!;
  const u2y = A[3]!;
  const b1 = B[0]!;
  const b2 = B[3]!;
  const g11 = u1x / b1;
  const g12 = u1y / b1;
  const g21 = u2x / b2;
  const g22 = u2y / b2;
  Jinv[0] = g11; Jinv[1] = g12; Jinv[2] = g21; Jinv[3] = g22;
  Jhinv[0] = g11; Jhinv[1] = g12; Jhinv[2] = g21; Jhinv[3] = g22;
  const detA = u1x * u2y - u1y * u2x;
  pose.detA = detA;
  pose.mechanismSine = detA;
  // 1/κ(J) = 1/κ(J⁻¹) = 1/κ of the matrix with rows b_2 u_1, b_1 u_2 (finite at every singularity).
  pose.inverseCondition = inverseCondition2(b2 * u1x, b2 * u1y, b1 * u2x, b1 * u2y);
  const j11 = (u2y * b1) / detA;
  const j12 = (-u1y * b2) / detA;
  const j21 = (-u2x * b1) / detA;
  const j22 = (u1x * b2) / detA;
  J[0] = j11; J[1] = j12; J[2] = j21; J[3] = j22;
  Jh[0] = j11; Jh[1] = j12; Jh[2] = j21; Jh[3] = j22;
}

/** Reduced dynamics, statics and stiffness at the pose last solved (body by body; each leg kind adds its bodies). */
export function leggedPoseDynamics(model: LeggedModel, pose: ArchitecturePose): void {
  const n = model.dof;
  const gx = model.gravity[0];
  const gy = model.gravity[1];
  const { J, D, tauG } = pose;
  const v = pose.work2;
  D.fill(0);
  tauG.fill(0);
  for (let i = 0; i < n; i++) {
    // Distal pin velocity map V_B = J_xy + E r_i J_φ, r_i = B_i − P.
    const rx = pose.distalJoint[2 * i]! - pose.x;
    const ry = pose.distalJoint[2 * i + 1]! - pose.y;
    for (let k = 0; k < n; k++) {
      let vbx = J[k]!;
      let vby = J[n + k]!;
      if (n === 3) {
        vbx -= ry * J[2 * n + k]!;
        vby += rx * J[2 * n + k]!;
      }
      v[VBX + k] = vbx;
      v[VBY + k] = vby;
    }
    model.legs[i]!.addBodies(model, i, pose, gx, gy);
  }
  // Platform (or end hub) and payload at P: V = J_xy, w = J_φ (3-DOF).
  for (let k = 0; k < n; k++) {
    v[VX + k] = J[k]!;
    v[VY + k] = J[n + k]!;
    v[W + k] = n === 3 ? J[2 * n + k]! : 0;
  }
  addBody(n, pose, model.platformMass, n === 3 ? model.platformInertia : 0, gx, gy);
  for (let k = 0; k < n; k++) v[W + k] = 0;
  addBody(n, pose, model.payloadMass, 0, gx, gy);
  for (let a = 0; a < n; a++) for (let b = 0; b < a; b++) D[a * n + b] = D[b * n + a]!;
  finishDynamics(model, pose);
}

/**
 * M_x, row norms, σ_max(J_h), leg compliances, K_x, stiffness measures and frequencies from D, J and
 * A already in pose. Exported for architectures that fill D themselves.
 */
export function finishDynamics(model: LeggedModel, pose: ArchitecturePose): void {
  const n = model.dof;
  const { D, Jinv, Jhinv, Mx, Kx, A, work } = pose;
  const t = pose.work2;
  // (D J⁻¹) into t, M_x = J⁻ᵀ (D J⁻¹).
  for (let i = 0; i < n; i++) {
    for (let j = 0; j < n; j++) {
      let s = 0;
      for (let k = 0; k < n; k++) s += D[i * n + k]! * Jinv[k * n + j]!;
      t[i * n + j] = s;
    }
  }
  for (let i = 0; i < n; i++) {
    for (let j = 0; j < n; j++) {
      let s = 0;
      for (let k = 0; k < n; k++) s += Jinv[k * n + i]! * t[k * n + j]!;
      Mx[i * n + j] = s;
    }
  }
  // Row norms of D J_h⁻¹ and J_h⁻¹.
  for (let i = 0; i < n; i++) {
    let s = 0;
    for (let j = 0; j < n; j++) {
      let e = 0;
      for (let k = 0; k < n; k++) e += D[i * n + k]! * Jhinv[k * n + j]!;
      s += e * e;
    }
    pose.inertiaRowNorm[i] = Math.sqrt(s);
    pose.inverseJacobianRowNorm[i] = rowNorm(n, Jhinv, i);
  }
  for (let i = 0; i < n; i++) pose.legCompliance[i] = model.legs[i]!.compliance(model, i, pose.legSine[i]!);
  if (n === 2) {
    finishDynamics2(pose);
    return;
  }
  if (n === 3) {
    pose.maxSingularValue = maxSingularValue3(pose.Jh);
  } else {
    singularValues(n, pose.Jh, work, t);
    pose.maxSingularValue = t[0]!;
  }
  // K_x = Aᵀ diag(1/c) A.
  for (let a = 0; a < n; a++) {
    for (let b = 0; b < n; b++) {
      let s = 0;
      for (let i = 0; i < n; i++) s += (A[i * n + a]! * A[i * n + b]!) / pose.legCompliance[i]!;
      Kx[a * n + b] = s;
    }
  }
  if (n === 3) {
    // Schur complements: translational K_tt − K_tφ K_φφ⁻¹ K_φt; rotational K_φφ − K_φt K_tt⁻¹ K_tφ.
    const k22 = Kx[8]!;
    const s11 = Kx[0]! - (Kx[2]! * Kx[6]!) / k22;
    const s12 = Kx[1]! - (Kx[2]! * Kx[7]!) / k22;
    const s22 = Kx[4]! - (Kx[5]! * Kx[7]!) / k22;
    const half = (s11 - s22) / 2;
    pose.minStiffness = (s11 + s22) / 2 - Math.sqrt(half * half + s12 * s12);
    const detTT = Kx[0]! * Kx[4]! - Kx[1]! * Kx[3]!;
    // K_φt K_tt⁻¹ K_tφ with K_tt⁻¹ = [k11 −k01; −k10 k00]/det.
    const a0 = Kx[6]!;
    const a1 = Kx[7]!;
    const c0 = Kx[2]!;
    const c1 = Kx[5]!;
    const quad = (a0 * (Kx[4]! * c0 - Kx[1]! * c1) + a1 * (-Kx[3]! * c0 + Kx[0]! * c1)) / detTT;
    pose.rotationalStiffness = k22 - quad;
  } else {
    symmetricEigenvalues(n, Kx, work, t);
    pose.minStiffness = t[0]!;
    pose.rotationalStiffness = Number.NaN;
  }
  if (generalizedEigenvalues(n, Kx, Mx, work, t)) {
    for (let i = 0; i < n; i++) pose.frequencies[i] = Math.sqrt(Math.max(t[i]!, 0)) / (2 * Math.PI);
  } else {
    pose.frequencies.fill(Number.NaN);
  }
}

/** Two legs: σ_max(J), K_x = Σ_i u_i u_iᵀ / c_i, its smallest eigenvalue and the two frequencies in closed form. */
function finishDynamics2(pose: ArchitecturePose): void {
  const { A, J, Kx, Mx } = pose;
  pose.maxSingularValue = maxSingularValue2(J[0]!, J[1]!, J[2]!, J[3]!);
  const u1x = A[0]!;
  const u1y = A[1]!;
  const u2x = A[2]!;
  const u2y = A[3]!;
  const k1 = 1 / pose.legCompliance[0]!;
  const k2 = 1 / pose.legCompliance[1]!;
  const kx11 = k1 * u1x * u1x + k2 * u2x * u2x;
  const kx12 = k1 * u1x * u1y + k2 * u2x * u2y;
  const kx22 = k1 * u1y * u1y + k2 * u2y * u2y;
  Kx[0] = kx11; Kx[1] = kx12; Kx[2] = kx12; Kx[3] = kx22;
  pose.minStiffness = minEigenSymmetric2(kx11, kx12, kx22);
  pose.rotationalStiffness = Number.NaN;
  const eig = pose.work;
  generalizedEigen2(kx11, kx12, kx22, Mx[0]!, Mx[1]!, Mx[3]!, eig);
  pose.frequencies[0] = Math.sqrt(Math.max(eig[0]!, 0)) / (2 * Math.PI);
  pose.frequencies[1] = Math.sqrt(Math.max(eig[1]!, 0)) / (2 * Math.PI);
}

/**
 * Numerical forward kinematics: Newton on the leg residuals f_i = |B_i − c_i|² − r_i² (B_i on the
 * circle of leg i for its joint position, see LegKind.circle) in the unknowns (x, y[, φ]), starting
 * from the guess in `pose`. Returns false when it does not converge (to 1e-13 of the largest link)
 * in 60 steps. Uses a small local buffer per call.
 */
export function leggedForwardKinematics(model: LeggedModel, q: ArrayLike<number>, pose: Float64Array): boolean {
  const n = model.dof;
  const jac = new Float64Array(9);
  const residual = new Float64Array(3);
  const work = new Float64Array(9);
  const circles = new Float64Array(9);
  let scale = 0;
  for (let i = 0; i < n; i++) {
    model.legs[i]!.circle(model, i, q[i]!, circles.subarray(3 * i, 3 * i + 3));
    scale = Math.max(scale, model.rod[i]!, model.crank[i]!, circles[3 * i + 2]!, Math.hypot(model.platformX[i]!, model.platformY[i]!));
  }
  for (let iteration = 0; iteration < 60; iteration++) {
    const phi = n === 3 ? pose[2]! : 0;
    const c = Math.cos(phi);
    const s = Math.sin(phi);
    let largest = 0;
    for (let i = 0; i < n; i++) {
      const rx = c * model.platformX[i]! - s * model.platformY[i]!;
      const ry = s * model.platformX[i]! + c * model.platformY[i]!;
      const wx = pose[0]! + rx - circles[3 * i]!;
      const wy = pose[1]! + ry - circles[3 * i + 1]!;
      const d = circles[3 * i + 2]!;
      // Scaled residual (|w|² − d²)/(2d) ≈ length error, m; its gradient is w/d.
      residual[i] = -(wx * wx + wy * wy - d * d) / (2 * d);
      largest = Math.max(largest, Math.abs(residual[i]!));
      jac[i * n] = wx / d;
      jac[i * n + 1] = wy / d;
      if (n === 3) jac[i * n + 2] = (rx * wy - ry * wx) / d;
    }
    if (largest <= 1e-13 * scale) return true;
    if (!solveInPlace(n, jac, residual, work)) return false;
    for (let k = 0; k < n; k++) pose[k] = pose[k]! + residual[k]!;
  }
  return false;
}

/**
 * Closed-form forward kinematics of a 2-DOF legged model: P is an intersection of the two legs'
 * circles; the assembly sign picks the side (sign cross(c_2 − c_1, P − c_1) = sign det A).
 */
export function twoLegForwardKinematics(model: LeggedModel, q: ArrayLike<number>, out: Float64Array): boolean {
  const circles = new Float64Array(6);
  model.legs[0]!.circle(model, 0, q[0]!, circles.subarray(0, 3));
  model.legs[1]!.circle(model, 1, q[1]!, circles.subarray(3, 6));
  const c1x = circles[0]!;
  const c1y = circles[1]!;
  const dx = circles[3]! - c1x;
  const dy = circles[4]! - c1y;
  const dist = Math.sqrt(dx * dx + dy * dy);
  const r1 = circles[2]!;
  const r2 = circles[5]!;
  if (dist === 0 || dist > r1 + r2 || dist < Math.abs(r1 - r2)) return false;
  const along = (r1 * r1 - r2 * r2 + dist * dist) / (2 * dist);
  const height = Math.sqrt(Math.max(r1 * r1 - along * along, 0));
  const ex = dx / dist;
  const ey = dy / dist;
  out[0] = c1x + along * ex - model.assembly * height * ey;
  out[1] = c1y + along * ey + model.assembly * height * ex;
  return true;
}

/** Box holding every reachable P at orientation φ: the intersection of the legs' boxes. */
export function leggedReachableBox(model: LeggedModel, phi = 0): PlaneBox | null {
  const n = model.dof;
  const angle = n === 3 ? phi : 0;
  const c = Math.cos(angle);
  const s = Math.sin(angle);
  const leg = new Float64Array(4);
  let xmin = -Infinity;
  let xmax = Infinity;
  let ymin = -Infinity;
  let ymax = Infinity;
  for (let i = 0; i < n; i++) {
    const rx = c * model.platformX[i]! - s * model.platformY[i]!;
    const ry = s * model.platformX[i]! + c * model.platformY[i]!;
    model.legs[i]!.reachBox(model, i, model.baseX[i]! - rx, model.baseY[i]! - ry, leg);
    xmin = Math.max(xmin, leg[0]!); xmax = Math.min(xmax, leg[1]!);
    ymin = Math.max(ymin, leg[2]!); ymax = Math.min(ymax, leg[3]!);
  }
  return xmax > xmin && ymax > ymin ? { xmin, xmax, ymin, ymax } : null;
}

/**
 * Reachable area inside `box` of a model whose legs all reach a strip (LegKind.reachStrip: slider +
 * rod; the 2-PRR, 3-PRR), at platform orientation φ (derived): leg i reaches P iff its distal pin
 * B_i = P + R(φ) b_i lies within d_i of its rail line, |cross(e_i, B_i − O_i)| ≤ d_i (a stroke is a joint limit, not a limit of reach). So
 * the reachable part of the box is the box cut by one strip per leg: a convex polygon, clipped half-
 * plane by half-plane (Sutherland–Hodgman) and measured by the shoelace formula (common practice, no
 * source). Null when a leg's reach is not a strip.
 */
export function sliderStripsArea(model: LeggedModel, box: PlaneBox, phi = 0): number | null {
  if (!model.legs.every((leg) => leg.reachStrip)) return null;
  const c = Math.cos(phi);
  const s = Math.sin(phi);
  let polygon = [box.xmin, box.ymin, box.xmax, box.ymin, box.xmax, box.ymax, box.xmin, box.ymax];
  for (let i = 0; i < model.dof; i++) {
    const ex = model.railX[i]!;
    const ey = model.railY[i]!;
    // The strip's centre line in P: the rail line moved by −R(φ) b_i.
    const ox = model.baseX[i]! - (c * model.platformX[i]! - s * model.platformY[i]!);
    const oy = model.baseY[i]! - (s * model.platformX[i]! + c * model.platformY[i]!);
    const d = model.legs[i]!.reachStrip!(model, i);
    for (const side of [1, -1]) polygon = clipHalfPlane(polygon, (x, y) => d - side * (ex * (y - oy) - ey * (x - ox)));
  }
  let twice = 0;
  for (let k = 0; k < polygon.length; k += 2) {
    const next = (k + 2) % polygon.length;
    twice += polygon[k]! * polygon[next + 1]! - polygon[next]! * polygon[k + 1]!;
  }
  return Math.abs(twice) / 2;
}

/** The part of a convex polygon (x, y interleaved) where inside(x, y) ≥ 0, for inside linear in x, y. */
function clipHalfPlane(polygon: readonly number[], inside: (x: number, y: number) => number): number[] {
  const out: number[] = [];
  const n = polygon.length / 2;
  for (let k = 0; k < n; k++) {
    const ax = polygon[2 * k]!;
    const ay = polygon[2 * k + 1]!;
    const bx = polygon[(2 * k + 2) % polygon.length]!;
    const by = polygon[(2 * k + 3) % polygon.length]!;
    const fa = inside(ax, ay);
    const fb = inside(bx, by);
    if (fa >= 0) out.push(ax, ay);
    if (fa >= 0 !== fb >= 0) {
      const t = fa / (fa - fb);
      out.push(ax + t * (bx - ax), ay + t * (by - ay));
    }
  }
  return out;
}

/**
 * Reachable area at platform orientation φ of a model whose legs all reach a ring about their base
 * point (LegKind.reachRing; derived): leg i reaches P iff ρ_i = |B_i − A_i|, B_i = P + R(φ) b_i, lies
 * in its ring, so in P the reachable set is the intersection of rings about A_i − R(φ) b_i
 * (annuli.ts): the five-bar, 3-RRR, 3-RPR. It lies in the reachable box. Null when a leg's reach is
 * not a ring.
 */
export function leggedRingsArea(model: LeggedModel, phi = 0): number | null {
  const c = Math.cos(phi);
  const s = Math.sin(phi);
  const cx: number[] = [];
  const cy: number[] = [];
  const inner: number[] = [];
  const outer: number[] = [];
  const ring = new Float64Array(2);
  for (let i = 0; i < model.dof; i++) {
    const leg = model.legs[i]!;
    if (!leg.reachRing?.(model, i, ring)) return null;
    inner.push(ring[0]!);
    outer.push(ring[1]!);
    cx.push(model.baseX[i]! - (c * model.platformX[i]! - s * model.platformY[i]!));
    cy.push(model.baseY[i]! - (s * model.platformX[i]! + c * model.platformY[i]!));
  }
  return annuliIntersectionArea(cx, cy, inner, outer);
}

/**
 * Size proxy, m: the diameter of the base points (pivots; the stroke ends of limited rails, else
 * the rail origins) plus the longest leg reach plus the platform circumradius.
 */
export function leggedFootprint(model: LeggedModel): number {
  const points: [number, number][] = [];
  let reach = 0;
  let radius = 0;
  for (let i = 0; i < model.dof; i++) {
    const leg = model.legs[i]!;
    points.push(...leg.basePoints(model, i));
    reach = Math.max(reach, leg.reach(model, i));
    radius = Math.max(radius, Math.hypot(model.platformX[i]!, model.platformY[i]!));
  }
  let diameter = 0;
  for (let a = 0; a < points.length; a++) {
    for (let b = a + 1; b < points.length; b++) diameter = Math.max(diameter, Math.hypot(points[a]![0] - points[b]![0], points[a]![1] - points[b]![1]));
  }
  return diameter + reach + radius;
}

/** Shared determinant re-export for tests of the singularity condition. */
export { determinant };

/**
 * The cut-open chain of a legged model (PlanarArchitecture.cutOpenChain): its legs and the body at P,
 * payload included; every leg kind (crank + rod, slider + rod, strut) is described.
 */
export function leggedCutOpenChain(model: LeggedModel): CutOpenChain | null {
  return {
    legs: model.actuators.map((actuator, i) => ({
      actuator,
      leg: model.legs[i]!.name,
      baseX: model.baseX[i]!,
      baseY: model.baseY[i]!,
      railX: model.railX[i]!,
      railY: model.railY[i]!,
      crank: model.crank[i]!,
      rod: model.rod[i]!,
      pinX: model.platformX[i]!,
      pinY: model.platformY[i]!,
      proximalInertia: model.proximalInertia[i]!,
      proximalFirstMoment: model.proximalFirstMoment[i]!,
      reflectedInertia: model.reflectedInertia[i]!,
      rodMass: model.rodMass[i]!,
      rodComDistance: model.rodComDistance[i]!,
      rodInertia: model.rodInertiaAboutCom[i]!,
    })),
    platformMass: model.platformMass + model.payloadMass,
    platformInertia: model.dof === 3 ? model.platformInertia : 0,
    gravity: model.gravity,
  };
}

/**
 * The model as a tree of rigid bodies (BodyTree): each leg's chain from its leg kind (`treeBodies`),
 * and on the tip of leg 1 the end mass (2-DOF: end hub + payload, a point mass at P; closure
 * tip_1 = tip_2) or the platform (3-DOF: hinge platform_joint = φ − β_1, its frame at pin B_1 with x at
 * φ, so P sits at −b_1 (site centre) and pin k at b_k − b_1 (site pin_k); the payload at P; closures
 * tip_k = pin_k for k = 2, 3).
 */
export function leggedBodyTree(model: LeggedModel): BodyTree {
  const bodies: TreeBody[] = [];
  for (let i = 0; i < model.dof; i++) {
    const chain = model.legs[i]!.treeBodies(model, i);
    bodies.push(...chain.bodies);
    if (i === 0) bodies.push(...endBodies(model, chain.bodies.at(-1)!.name, chain.tip));
  }
  const closures = model.dof === 2
    ? [{ name: 'loop_closure', site1: 'tip_1', site2: 'tip_2' }]
    : Array.from({ length: model.dof - 1 }, (_, k) => ({ name: `loop_closure_${k + 2}`, site1: `tip_${k + 2}`, site2: `pin_${k + 2}` }));
  return { bodies, closures, gravity: model.gravity };
}

/** The bodies carried at the tip of leg 1's last body: the end mass (2-DOF) or the platform and payload (3-DOF). */
function endBodies(model: LeggedModel, parent: string, tip: readonly [number, number]): TreeBody[] {
  if (model.dof === 2) {
    const mass = model.platformMass + model.payloadMass;
    return [{
      name: 'end_mass', parent, origin: tip, joint: null, shape: 'point', length: 0, mass, centreOfMass: [0, 0], inertiaAboutCom: 0,
      sites: [{ name: 'end_point', at: [0, 0] }],
      parts: `point mass at the end point: end hub ${model.platformMass} kg plus payload ${model.payloadMass} kg (carried on the tip of leg 1)`,
    }];
  }
  const b1x = model.platformX[0]!;
  const b1y = model.platformY[0]!;
  const centre: [number, number] = [-b1x, -b1y];
  const pins = model.platformX.map((x, k) => ({ name: `pin_${k + 1}`, at: [x - b1x, model.platformY[k]! - b1y] as [number, number] }));
  return [
    {
      name: 'platform', parent, origin: tip,
      joint: { name: 'platform_joint', kind: 'revolute', axis: [0, 0], actuator: null, range: null, armature: 0 },
      shape: 'plate', length: 0, mass: model.platformMass, centreOfMass: centre, inertiaAboutCom: model.platformInertia,
      sites: [{ name: 'centre', at: centre }, ...pins], parts: 'rigid platform, centre of mass at its centre P, inertia about P',
    },
    {
      name: 'payload', parent: 'platform', origin: centre, joint: null, shape: 'point', length: 0, mass: model.payloadMass, centreOfMass: [0, 0],
      inertiaAboutCom: 0, sites: [], parts: `payload, point mass ${model.payloadMass} kg at P`,
    },
  ];
}

/** Joint coordinates of leggedBodyTree's joints (tree order) at a solved pose. */
export function leggedTreeJoints(model: LeggedModel, pose: ArchitecturePose): Float64Array {
  const out = new Float64Array(64);
  let k = 0;
  for (let i = 0; i < model.dof; i++) {
    k = model.legs[i]!.treeJoints(model, i, pose, out, k);
    if (i === 0 && model.dof === 3) out[k++] = wrapAngle(pose.phi - Math.atan2(pose.rodDirection[1]!, pose.rodDirection[0]!));
  }
  return out.slice(0, k);
}
