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
import { jointRangeMargin } from '../mechanics/fivebar.js';
import {
  determinant,
  generalizedEigenvalues,
  inverseCondition,
  invert,
  rowNorm,
  singularValues,
  solveInPlace,
  symmetricEigenvalues,
} from './dense.js';
import {
  ArchitecturePose,
  PoseStatus,
  RIGID_MASSLESS,
  type ActuatorKind,
  type ArchitectureModelBase,
  type ArchitectureName,
  type BodyTree,
  type DriveAtJoint,
  type TreeBody,
  type JointRange,
  type LinkSection,
  type ModelInput,
  type PlaneBox,
} from './types.js';

/** Immutable model of a leg-based architecture. Arrays have one entry per leg. */
export interface LeggedModel extends ArchitectureModelBase {
  /** Base point: pivot A_i (revolute) or rail origin O_i (prismatic), m. */
  readonly baseX: readonly number[];
  readonly baseY: readonly number[];
  /** Rail unit direction e_r,i (prismatic legs; (1, 0) and unused for revolute legs). */
  readonly railX: readonly number[];
  readonly railY: readonly number[];
  /** Crank length p_i, m (0 for prismatic legs). */
  readonly crank: readonly number[];
  /** Rod length d_i, m. */
  readonly rod: readonly number[];
  /** Distal pin b_i in the platform frame, m (all 0 for 2-DOF). */
  readonly platformX: readonly number[];
  readonly platformY: readonly number[];
  /** Working-mode signs σ_i. */
  readonly sigma: readonly number[];
  /** Actuated-joint ranges (rad or m), null = unlimited. */
  readonly jointLimits: readonly (JointRange | null)[];

  // --- inertia ---
  /** Revolute: crank with elbow hub, inertia about the pivot, kg·m². Prismatic: slider mass, kg. */
  readonly proximalInertia: readonly number[];
  /** Revolute: first moment of crank with hub about the pivot, kg·m. Prismatic: slider mass, kg. */
  readonly proximalFirstMoment: readonly number[];
  /** Rod mass (kg), centre-of-mass distance from the proximal joint along the rod (m), inertia about the centre of mass (kg·m²). */
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

  // --- leg compliance along the rod: c_i = s_i² transverse + (1 − s_i²) proximalAxial + rodAxial ---
  /** Revolute: p²/k + p³/(3 E I) (drive and crank bending), m/N. Prismatic: 1/k along the rail, m/N. */
  readonly complianceTransverse: readonly number[];
  /** Revolute: p/(E A) of the crank, m/N. Prismatic: 0 (the rail is rigid across itself). */
  readonly complianceProximalAxial: readonly number[];
  /** d/(E A) of the rod, m/N. */
  readonly complianceRodAxial: readonly number[];

  /** Moving mass (payload excluded), kg. */
  readonly movingMass: number;
}

/** Leg geometry an architecture derives from its parameters. */
export interface LegGeometry {
  readonly actuator: ActuatorKind;
  readonly base: readonly [number, number];
  /** Rail angle from the x axis, rad (prismatic only). */
  readonly railAngle?: number;
  /** Crank length, m (revolute only). */
  readonly crank?: number;
  readonly rod: number;
  /** Distal pin in the platform frame, m (3-DOF). */
  readonly platformPin?: readonly [number, number];
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
  const hub = input.elbowHubMass ?? 0;
  const slider = input.sliderMass ?? 0;
  const proximalInertia: number[] = [];
  const proximalFirstMoment: number[] = [];
  const rodMass: number[] = [];
  const complianceTransverse: number[] = [];
  const complianceProximalAxial: number[] = [];
  const complianceRodAxial: number[] = [];
  let movingMass = 0;
  legs.forEach((leg, i) => {
    const rodSection = input.rods[i]!;
    const stiffness = drives ? drives[i]!.jointStiffness : Infinity;
    const mRod = rodSection.massPerLength * leg.rod;
    rodMass.push(mRod);
    complianceRodAxial.push(leg.rod / (rodSection.youngsModulus * rodSection.area));
    movingMass += mRod;
    if (leg.actuator === 'revolute') {
      const p = leg.crank ?? 0;
      const section: LinkSection = input.cranks?.[i] ?? RIGID_MASSLESS;
      const mCrank = section.massPerLength * p;
      // Uniform bar about one end (m p²/3, first moment m p/2) plus the elbow hub at distance p.
      proximalInertia.push((mCrank * p * p) / 3 + hub * p * p);
      proximalFirstMoment.push((mCrank * p) / 2 + hub * p);
      complianceTransverse.push((p * p) / stiffness + (p * p * p) / (3 * section.youngsModulus * section.secondMoment));
      complianceProximalAxial.push(p / (section.youngsModulus * section.area));
      movingMass += mCrank + hub;
    } else {
      proximalInertia.push(slider);
      proximalFirstMoment.push(slider);
      complianceTransverse.push(1 / stiffness);
      complianceProximalAxial.push(0);
      movingMass += slider;
    }
  });
  const platformMass = dof === 3 ? (input.platform?.mass ?? 0) : (input.endHubMass ?? 0);
  movingMass += platformMass;
  const pinX = legs.map((l) => l.platformPin?.[0] ?? 0);
  const pinY = legs.map((l) => l.platformPin?.[1] ?? 0);
  const circumradius = Math.max(...pinX.map((x, i) => Math.hypot(x, pinY[i]!)));
  const characteristicLength = dof === 2 ? 1 : (input.characteristicLength ?? circumradius);
  if (!(characteristicLength > 0)) throw new Error(`${architecture}: characteristic length must be positive`);
  return {
    architecture,
    dof,
    actuators: legs.map((l) => l.actuator),
    assembly: input.assembly,
    characteristicLength,
    drives,
    baseX: legs.map((l) => l.base[0]),
    baseY: legs.map((l) => l.base[1]),
    railX: legs.map((l) => Math.cos(l.railAngle ?? 0)),
    railY: legs.map((l) => Math.sin(l.railAngle ?? 0)),
    crank: legs.map((l) => (l.actuator === 'revolute' ? (l.crank ?? 0) : 0)),
    rod: legs.map((l) => l.rod),
    platformX: pinX,
    platformY: pinY,
    sigma,
    jointLimits: input.jointLimits ?? legs.map(() => null),
    proximalInertia,
    proximalFirstMoment,
    rodMass,
    rodComDistance: legs.map((l) => l.rod / 2),
    rodInertiaAboutCom: legs.map((l, i) => (rodMass[i]! * l.rod * l.rod) / 12),
    platformMass,
    platformInertia: dof === 3 ? (input.platform?.inertiaAboutCentre ?? 0) : 0,
    payloadMass: input.payloadMass,
    reflectedInertia: legs.map((_, i) => (drives ? drives[i]!.reflectedInertia : 0)),
    gravity: input.gravity,
    complianceTransverse,
    complianceProximalAxial,
    complianceRodAxial,
    movingMass,
  };
}

/** Signed margin of a slider position q (m) inside its stroke; +∞ when unlimited. */
export function strokeMargin(q: number, range: JointRange | null): number {
  if (range === null) return Infinity;
  return Math.min(q - range.min, range.max - q);
}

/** Inverse kinematics and velocity matrices; fills pose and returns its status. */
export function solveLeggedPose(model: LeggedModel, pose: ArchitecturePose, x: number, y: number, phi = 0): PoseStatus {
  const n = model.dof;
  const angle = n === 3 ? phi : 0;
  pose.x = x;
  pose.y = y;
  pose.phi = angle;
  const cphi = Math.cos(angle);
  const sphi = Math.sin(angle);
  let reach = Infinity;
  let joint = Infinity;
  let reachable = true;
  const A = pose.A;
  const B = pose.B;
  B.fill(0);
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
    const d = model.rod[i]!;
    let proxX: number;
    let proxY: number;
    let dirX: number;
    let dirY: number;
    if (model.actuators[i] === 'revolute') {
      const p = model.crank[i]!;
      const wx = distalX - model.baseX[i]!;
      const wy = distalY - model.baseY[i]!;
      const rho = Math.sqrt(wx * wx + wy * wy);
      const margin = Math.min(rho - Math.abs(p - d), p + d - rho);
      pose.legReachMargin[i] = margin;
      if (margin < reach) reach = margin;
      if (margin < 0 || rho === 0) {
        reachable = false;
        continue;
      }
      let cosAlpha = (p * p + rho * rho - d * d) / (2 * p * rho);
      cosAlpha = cosAlpha > 1 ? 1 : cosAlpha < -1 ? -1 : cosAlpha;
      const sinAlpha = model.sigma[i]! * Math.sqrt(1 - cosAlpha * cosAlpha);
      const nx = wx / rho;
      const ny = wy / rho;
      dirX = nx * cosAlpha - ny * sinAlpha;
      dirY = ny * cosAlpha + nx * sinAlpha;
      const theta = Math.atan2(dirY, dirX);
      pose.q[i] = theta;
      proxX = model.baseX[i]! + p * dirX;
      proxY = model.baseY[i]! + p * dirY;
      const m = jointRangeMargin(theta, model.jointLimits[i] ?? null);
      if (m < joint) joint = m;
    } else {
      dirX = model.railX[i]!;
      dirY = model.railY[i]!;
      const wx = distalX - model.baseX[i]!;
      const wy = distalY - model.baseY[i]!;
      const offset = dirX * wy - dirY * wx; // cross(e_r, w): distance of B_i from the rail line
      const margin = d - Math.abs(offset);
      pose.legReachMargin[i] = margin;
      if (margin < reach) reach = margin;
      if (margin < 0) {
        reachable = false;
        continue;
      }
      const q = wx * dirX + wy * dirY + model.sigma[i]! * Math.sqrt(Math.max(d * d - offset * offset, 0));
      pose.q[i] = q;
      proxX = model.baseX[i]! + q * dirX;
      proxY = model.baseY[i]! + q * dirY;
      const m = strokeMargin(q, model.jointLimits[i] ?? null);
      if (m < joint) joint = m;
    }
    pose.actuatorDirection[2 * i] = dirX;
    pose.actuatorDirection[2 * i + 1] = dirY;
    pose.proximalJoint[2 * i] = proxX;
    pose.proximalJoint[2 * i + 1] = proxY;
    const ux = (distalX - proxX) / d;
    const uy = (distalY - proxY) / d;
    pose.rodDirection[2 * i] = ux;
    pose.rodDirection[2 * i + 1] = uy;
    let legSine: number;
    let bii: number;
    if (model.actuators[i] === 'revolute') {
      legSine = dirX * uy - dirY * ux;
      bii = model.crank[i]! * legSine;
    } else {
      legSine = ux * dirX + uy * dirY;
      bii = legSine;
    }
    pose.legSine[i] = legSine;
    B[i * n + i] = bii;
    A[i * n] = ux;
    A[i * n + 1] = uy;
    if (n === 3) A[i * n + 2] = rx * uy - ry * ux;
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
 * sine. Exported for architectures that fill A and B themselves.
 */
export function finishKinematics(model: ArchitectureModelBase, pose: ArchitecturePose): void {
  const n = model.dof;
  const L = model.characteristicLength;
  const { A, B, J, Jinv, Jh, Jhinv, work } = pose;
  // J⁻¹ = B⁻¹A and J_h⁻¹ = B⁻¹ A diag(1, 1, 1/L).
  for (let i = 0; i < n; i++) {
    const bii = B[i * n + i]!;
    for (let k = 0; k < n; k++) {
      const v = A[i * n + k]! / bii;
      Jinv[i * n + k] = v;
      Jhinv[i * n + k] = k === 2 ? v / L : v;
    }
  }
  // J = A⁻¹B (NaN when det A = 0).
  const Ainv = work; // first n² entries
  const det = invert(n, A, Ainv);
  pose.detA = det;
  for (let i = 0; i < n; i++) {
    for (let k = 0; k < n; k++) {
      const v = det === 0 ? Number.NaN : Ainv[i * n + k]! * B[k * n + k]!;
      J[i * n + k] = v;
      Jh[i * n + k] = i === 2 ? v * L : v;
    }
  }
  // 1/κ(J_h) = 1/κ(J_h⁻¹) = 1/κ(M), M rows (Π_{j≠i} B_jj) row_i(A_h): finite at both singularity kinds.
  const m = pose.work2;
  let rowProduct = 1;
  for (let i = 0; i < n; i++) {
    let scale = 1;
    for (let j = 0; j < n; j++) if (j !== i) scale *= B[j * n + j]!;
    let norm = 0;
    for (let k = 0; k < n; k++) {
      const ah = k === 2 ? A[i * n + k]! / L : A[i * n + k]!;
      m[i * n + k] = scale * ah;
      norm += ah * ah;
    }
    rowProduct *= Math.sqrt(norm);
  }
  pose.inverseCondition = inverseCondition(n, m, work);
  const detHomogenised = n === 3 ? det / L : det;
  pose.mechanismSine = rowProduct > 0 ? detHomogenised / rowProduct : 0;
}

/** Offsets into pose.work2 for the body velocity maps of poseDynamics. */
const VX = 0;
const VY = 3;
const W = 6;
const VBX = 9;
const VBY = 12;

/** Adds one body with centre-of-mass velocity map V (rows in work2[VX..], work2[VY..]) and angular map w. */
function addBody(n: number, pose: ArchitecturePose, mass: number, inertia: number, gx: number, gy: number): void {
  const v = pose.work2;
  const D = pose.D;
  for (let a = 0; a < n; a++) {
    const vax = v[VX + a]!;
    const vay = v[VY + a]!;
    const wa = v[W + a]!;
    for (let b = a; b < n; b++) {
      D[a * n + b] = D[a * n + b]! + mass * (vax * v[VX + b]! + vay * v[VY + b]!) + inertia * wa * v[W + b]!;
    }
    pose.tauG[a] = pose.tauG[a]! - mass * (vax * gx + vay * gy);
  }
}

/** Reduced dynamics, statics and stiffness at the pose last solved (body by body). */
export function leggedPoseDynamics(model: LeggedModel, pose: ArchitecturePose): void {
  const n = model.dof;
  const gx = model.gravity[0];
  const gy = model.gravity[1];
  const { J, D, tauG, rodRate } = pose;
  const v = pose.work2;
  D.fill(0);
  tauG.fill(0);
  for (let i = 0; i < n; i++) {
    const ex = pose.actuatorDirection[2 * i]!;
    const ey = pose.actuatorDirection[2 * i + 1]!;
    const ux = pose.rodDirection[2 * i]!;
    const uy = pose.rodDirection[2 * i + 1]!;
    const d = model.rod[i]!;
    const revolute = model.actuators[i] === 'revolute';
    // Proximal joint velocity per unit q̇_i: p e⊥(θ_i) (revolute) or e_r (prismatic).
    const p = model.crank[i]!;
    const pvx = revolute ? -p * ey : ex;
    const pvy = revolute ? p * ex : ey;
    // Actuated body: crank about its pivot, or the translating slider.
    D[i * n + i] = D[i * n + i]! + model.proximalInertia[i]! + model.reflectedInertia[i]!;
    const unitDirX = revolute ? -ey : ex;
    const unitDirY = revolute ? ex : ey;
    tauG[i] = tauG[i]! - model.proximalFirstMoment[i]! * (unitDirX * gx + unitDirY * gy);
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
    // Rod rate β̇_i = cross(u_i, Ḃ_i − proximal velocity)/d_i.
    const crossProximal = ux * pvy - uy * pvx;
    for (let k = 0; k < n; k++) {
      let w = ux * v[VBY + k]! - uy * v[VBX + k]!;
      if (k === i) w -= crossProximal;
      rodRate[i * n + k] = w / d;
    }
    // Rod centre of mass: proximal velocity + b u⊥ β̇ (u⊥ = (−u_y, u_x)).
    const b = model.rodComDistance[i]!;
    for (let k = 0; k < n; k++) {
      const w = rodRate[i * n + k]!;
      v[VX + k] = (k === i ? pvx : 0) - b * uy * w;
      v[VY + k] = (k === i ? pvy : 0) + b * ux * w;
      v[W + k] = w;
    }
    addBody(n, pose, model.rodMass[i]!, model.rodInertiaAboutCom[i]!, gx, gy);
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
  singularValues(n, pose.Jh, work, t);
  pose.maxSingularValue = t[0]!;
  // Leg compliances and K_x = Aᵀ diag(1/c) A.
  for (let i = 0; i < n; i++) {
    const s2 = pose.legSine[i]! ** 2;
    pose.legCompliance[i] = s2 * model.complianceTransverse[i]! + (1 - s2) * model.complianceProximalAxial[i]! + model.complianceRodAxial[i]!;
  }
  for (let a = 0; a < n; a++) {
    for (let b = 0; b < n; b++) {
      let s = 0;
      for (let i = 0; i < n; i++) s += (A[i * n + a]! * A[i * n + b]!) / pose.legCompliance[i]!;
      Kx[a * n + b] = s;
    }
  }
  if (n === 2) {
    symmetricEigenvalues(2, Kx, work, t);
    pose.minStiffness = t[0]!;
    pose.rotationalStiffness = Number.NaN;
  } else {
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
  }
  if (generalizedEigenvalues(n, Kx, Mx, work, t)) {
    for (let i = 0; i < n; i++) pose.frequencies[i] = Math.sqrt(Math.max(t[i]!, 0)) / (2 * Math.PI);
  } else {
    pose.frequencies.fill(Number.NaN);
  }
}

/**
 * Numerical forward kinematics: Newton on the rod-length residuals f_i = |B_i − proximal_i|² − d_i²
 * in the unknowns (x, y[, φ]), starting from the guess in `pose`. Returns false when it does not
 * converge (to 1e-13 of the largest link) in 60 steps. Uses a small local buffer per call.
 */
export function leggedForwardKinematics(model: LeggedModel, q: ArrayLike<number>, pose: Float64Array): boolean {
  const n = model.dof;
  const jac = new Float64Array(9);
  const residual = new Float64Array(3);
  const work = new Float64Array(9);
  let scale = 0;
  for (let i = 0; i < n; i++) scale = Math.max(scale, model.rod[i]!, model.crank[i]!, Math.hypot(model.platformX[i]!, model.platformY[i]!));
  for (let iteration = 0; iteration < 60; iteration++) {
    const phi = n === 3 ? pose[2]! : 0;
    const c = Math.cos(phi);
    const s = Math.sin(phi);
    let largest = 0;
    for (let i = 0; i < n; i++) {
      const rx = c * model.platformX[i]! - s * model.platformY[i]!;
      const ry = s * model.platformX[i]! + c * model.platformY[i]!;
      let px: number;
      let py: number;
      if (model.actuators[i] === 'revolute') {
        px = model.baseX[i]! + model.crank[i]! * Math.cos(q[i]!);
        py = model.baseY[i]! + model.crank[i]! * Math.sin(q[i]!);
      } else {
        px = model.baseX[i]! + q[i]! * model.railX[i]!;
        py = model.baseY[i]! + q[i]! * model.railY[i]!;
      }
      const wx = pose[0]! + rx - px;
      const wy = pose[1]! + ry - py;
      const d = model.rod[i]!;
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
 * Closed-form forward kinematics of a 2-DOF legged model: P is an intersection of the circles
 * (proximal_1, d_1) and (proximal_2, d_2); the assembly sign picks the side
 * (sign cross(proximal_2 − proximal_1, P − proximal_1) = sign det A).
 */
export function twoLegForwardKinematics(model: LeggedModel, q: ArrayLike<number>, out: Float64Array): boolean {
  const prox = (i: number): [number, number] =>
    model.actuators[i] === 'revolute'
      ? [model.baseX[i]! + model.crank[i]! * Math.cos(q[i]!), model.baseY[i]! + model.crank[i]! * Math.sin(q[i]!)]
      : [model.baseX[i]! + q[i]! * model.railX[i]!, model.baseY[i]! + q[i]! * model.railY[i]!];
  const [c1x, c1y] = prox(0);
  const [c2x, c2y] = prox(1);
  const dx = c2x - c1x;
  const dy = c2y - c1y;
  const dist = Math.hypot(dx, dy);
  const r1 = model.rod[0]!;
  const r2 = model.rod[1]!;
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
  let xmin = -Infinity;
  let xmax = Infinity;
  let ymin = -Infinity;
  let ymax = Infinity;
  for (let i = 0; i < n; i++) {
    const rx = c * model.platformX[i]! - s * model.platformY[i]!;
    const ry = s * model.platformX[i]! + c * model.platformY[i]!;
    const ox = model.baseX[i]! - rx;
    const oy = model.baseY[i]! - ry;
    let lx: number;
    let hx: number;
    let ly: number;
    let hy: number;
    if (model.actuators[i] === 'revolute') {
      const reach = model.crank[i]! + model.rod[i]!;
      lx = ox - reach; hx = ox + reach; ly = oy - reach; hy = oy + reach;
    } else {
      const d = model.rod[i]!;
      const ex = model.railX[i]!;
      const ey = model.railY[i]!;
      const range = model.jointLimits[i] ?? null;
      const qa = range ? range.min : -Infinity;
      const qb = range ? range.max : Infinity;
      // Ends of the stroke segment (an infinite coordinate only along a rail component ≠ 0).
      const end = (qv: number, e: number, o: number): number => (e === 0 ? o : o + qv * e);
      const xa = end(qa, ex, ox);
      const xb = end(qb, ex, ox);
      const ya = end(qa, ey, oy);
      const yb = end(qb, ey, oy);
      lx = Math.min(xa, xb) - d; hx = Math.max(xa, xb) + d;
      ly = Math.min(ya, yb) - d; hy = Math.max(ya, yb) + d;
    }
    xmin = Math.max(xmin, lx); xmax = Math.min(xmax, hx);
    ymin = Math.max(ymin, ly); ymax = Math.min(ymax, hy);
  }
  return xmax > xmin && ymax > ymin ? { xmin, xmax, ymin, ymax } : null;
}

/**
 * Size proxy, m: the diameter of the base points (pivots; the stroke ends of limited rails, else
 * the rail origins) plus the longest leg reach (p + d, or d) plus the platform circumradius.
 */
export function leggedFootprint(model: LeggedModel): number {
  const xs: number[] = [];
  const ys: number[] = [];
  let reach = 0;
  let radius = 0;
  for (let i = 0; i < model.dof; i++) {
    const range = model.jointLimits[i] ?? null;
    if (model.actuators[i] === 'prismatic' && range) {
      for (const qv of [range.min, range.max]) {
        xs.push(model.baseX[i]! + qv * model.railX[i]!);
        ys.push(model.baseY[i]! + qv * model.railY[i]!);
      }
    } else {
      xs.push(model.baseX[i]!);
      ys.push(model.baseY[i]!);
    }
    reach = Math.max(reach, model.crank[i]! + model.rod[i]!);
    radius = Math.max(radius, Math.hypot(model.platformX[i]!, model.platformY[i]!));
  }
  let diameter = 0;
  for (let a = 0; a < xs.length; a++) for (let b = a + 1; b < xs.length; b++) diameter = Math.max(diameter, Math.hypot(xs[a]! - xs[b]!, ys[a]! - ys[b]!));
  return diameter + reach + radius;
}

/** The fields of a leg-based model that describe its bodies (the five-bar adapter builds one too). */
export type LegChain = Pick<
  LeggedModel,
  | 'dof' | 'actuators' | 'baseX' | 'baseY' | 'railX' | 'railY' | 'crank' | 'rod' | 'platformX' | 'platformY' | 'jointLimits'
  | 'proximalInertia' | 'proximalFirstMoment' | 'rodMass' | 'rodComDistance' | 'rodInertiaAboutCom'
  | 'platformMass' | 'platformInertia' | 'payloadMass' | 'reflectedInertia' | 'gravity'
>;

/**
 * Crank body (bar plus elbow hub) from its inertia I and first moment F about the pivot, the only
 * two numbers of it that enter the motion of a body on a fixed hinge. With the lumping of
 * buildLeggedModel (uniform bar m_b: F = m_b p/2, I = m_b p²/3; hub h at p: F = h p, I = h p²) the
 * mass is m = 4F/p − 3I/p² (derived), the centre of mass F/m, and I_com = I − F²/m.
 */
export function crankMassProperties(model: LegChain, i: number): { mass: number; centreOfMass: number; inertiaAboutCom: number } {
  const p = model.crank[i]!;
  const firstMoment = model.proximalFirstMoment[i]!;
  const inertia = model.proximalInertia[i]!;
  if (!(firstMoment > 0) || !(p > 0)) return { mass: 0, centreOfMass: 0, inertiaAboutCom: Math.max(inertia, 0) };
  // Never below F²/I, which would make I_com < 0.
  const mass = Math.max((4 * firstMoment) / p - (3 * inertia) / (p * p), (firstMoment * firstMoment) / inertia);
  const centreOfMass = firstMoment / mass;
  const inertiaAboutCom = Math.max(inertia - firstMoment * centreOfMass, 0);
  return { mass, centreOfMass, inertiaAboutCom };
}

/**
 * Body tree of a leg-based model: per leg from its base, a crank (hinge theta_i) or a slider carriage
 * (slide slide_i along the rail), then the rod (hinge elbow_i relative to the crank, or beta_i absolute
 * on a carriage) with a site tip_i at its distal pin. 2-DOF: the end mass (end hub + payload) fixed on
 * the tip of rod 1, closed by tip_1 = tip_2. 3-DOF: the platform on the tip of rod 1 (hinge
 * platform_joint = φ − β_1), its frame at pin B_1 with x at φ, so P sits at −b_1 (site centre) and pin k
 * at b_k − b_1 (site pin_k); the payload at P; closures tip_k = pin_k (k = 2, 3).
 */
export function leggedBodyTree(model: LegChain): BodyTree {
  const n = model.dof;
  const bodies: TreeBody[] = [];
  for (let i = 0; i < n; i++) {
    const leg = i + 1;
    const range = model.jointLimits[i] ?? null;
    const armature = model.reflectedInertia[i]!;
    const d = model.rod[i]!;
    const revolute = model.actuators[i] === 'revolute';
    if (revolute) {
      const crank = crankMassProperties(model, i);
      bodies.push({
        name: `crank_${leg}`, parent: null, origin: [model.baseX[i]!, model.baseY[i]!],
        joint: { name: `theta_${leg}`, kind: 'revolute', axis: [0, 0], actuator: i, range, armature },
        shape: 'bar', length: model.crank[i]!, mass: crank.mass, centreOfMass: [crank.centreOfMass, 0], inertiaAboutCom: crank.inertiaAboutCom,
        sites: [], parts: 'uniform bar plus elbow hub at the crank end',
      });
    } else {
      bodies.push({
        name: `slider_${leg}`, parent: null, origin: [model.baseX[i]!, model.baseY[i]!],
        joint: { name: `slide_${leg}`, kind: 'prismatic', axis: [model.railX[i]!, model.railY[i]!], actuator: i, range, armature },
        shape: 'carriage', length: 0, mass: model.proximalInertia[i]!, centreOfMass: [0, 0], inertiaAboutCom: 0,
        sites: [], parts: `slider carriage ${model.proximalInertia[i]!} kg, translating along rail ${leg} (it does not turn)`,
      });
    }
    bodies.push({
      name: `rod_${leg}`, parent: revolute ? `crank_${leg}` : `slider_${leg}`, origin: [revolute ? model.crank[i]! : 0, 0],
      joint: { name: revolute ? `elbow_${leg}` : `beta_${leg}`, kind: 'revolute', axis: [0, 0], actuator: null, range: null, armature: 0 },
      shape: 'bar', length: d, mass: model.rodMass[i]!, centreOfMass: [model.rodComDistance[i]!, 0], inertiaAboutCom: model.rodInertiaAboutCom[i]!,
      sites: [{ name: `tip_${leg}`, at: [d, 0] }], parts: 'uniform bar',
    });
    if (i === 0) bodies.push(...endBodies(model));
  }
  const closures = n === 2
    ? [{ name: 'loop_closure', site1: 'tip_1', site2: 'tip_2' }]
    : Array.from({ length: n - 1 }, (_, k) => ({ name: `loop_closure_${k + 2}`, site1: `tip_${k + 2}`, site2: `pin_${k + 2}` }));
  return { bodies, closures, gravity: model.gravity };
}

/** The bodies carried by the tip of rod 1: the end mass (2-DOF) or the platform and payload (3-DOF). */
function endBodies(model: LegChain): TreeBody[] {
  const tip: [number, number] = [model.rod[0]!, 0];
  if (model.dof === 2) {
    const mass = model.platformMass + model.payloadMass;
    return [{
      name: 'end_mass', parent: 'rod_1', origin: tip, joint: null, shape: 'point', length: 0, mass, centreOfMass: [0, 0], inertiaAboutCom: 0,
      sites: [{ name: 'end_point', at: [0, 0] }],
      parts: `point mass at the end point: end hub ${model.platformMass} kg plus payload ${model.payloadMass} kg (carried on the tip of rod 1)`,
    }];
  }
  const b1x = model.platformX[0]!;
  const b1y = model.platformY[0]!;
  const centre: [number, number] = [-b1x, -b1y];
  const pins = model.platformX.map((x, k) => ({ name: `pin_${k + 1}`, at: [x - b1x, model.platformY[k]! - b1y] as [number, number] }));
  return [
    {
      name: 'platform', parent: 'rod_1', origin: tip,
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

const TWO_PI = 2 * Math.PI;

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

/** Joint coordinates of leggedBodyTree's joints (tree order) at a solved pose. */
export function leggedTreeJoints(model: LegChain, pose: ArchitecturePose): Float64Array {
  const n = model.dof;
  const out = new Float64Array(2 * n + (n === 3 ? 1 : 0));
  let k = 0;
  for (let i = 0; i < n; i++) {
    const beta = Math.atan2(pose.rodDirection[2 * i + 1]!, pose.rodDirection[2 * i]!);
    if (model.actuators[i] === 'revolute') {
      const theta = angleInRange(pose.q[i]!, model.jointLimits[i] ?? null);
      out[k++] = theta;
      out[k++] = wrapAngle(beta - theta);
    } else {
      out[k++] = pose.q[i]!;
      out[k++] = wrapAngle(beta);
    }
    if (i === 0 && n === 3) out[k++] = wrapAngle(pose.phi - beta);
  }
  return out;
}

/** Shared determinant re-export for tests of the singularity condition. */
export { determinant };
