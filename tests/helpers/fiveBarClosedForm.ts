/**
 * The five-bar's closed forms, kept as the tests' analytic cross-check of the one engine (the leg
 * layer in src/architectures, which the pipeline uses for every architecture). This was the five-bar's
 * own engine (src/mechanics/fivebar.ts) before the five-bar joined the leg layer; it is test support
 * only and no code in src/ uses it.
 *
 * Planar five-bar (5R): the immutable model, the reusable per-pose data and the free functions that
 * fill the data for one end-point position (inverse kinematics, velocity matrices, transmission,
 * conditioning, reduced dynamics and stiffness).
 *
 * Conventions (see docs/architectures.md and ../shared/design/mechanics.md): SI units throughout; leg i
 * has an actuated base pivot A_i, a crank of length p_i to the elbow C_i, a rod of length d_i to the
 * common end point P. e(θ) = (cos θ, sin θ), e⊥(θ) = (−sin θ, cos θ), cross(a, b) = a_x b_y − a_y b_x.
 * Velocity: A Ṗ = B θ̇ with A = [u_1ᵀ; u_2ᵀ], B = diag(p_1 s_1, p_2 s_2), u_i the rod unit vector and
 * s_i = cross(e(θ_i), u_i) the leg transmission sine. J = A⁻¹B, J⁻¹ rows u_iᵀ/(p_i s_i).
 */
import { generalizedEigen2, inverseCondition2, maxSingularValue2, minEigenSymmetric2 } from '../../src/architectures/linalg2.js';
import { PoseStatus, jointRangeMargin, type JointRange } from '../../src/core/pose.js';
import { usabilityMargin, type UsabilitySettings } from '../../src/mechanics/usability.js';
import type { ResolvedDesign } from '../../src/mechanics/designSpace.js';
import type { Study } from '../../src/study/types.js';
export { PoseStatus, jointRangeMargin, WORKING_MODES, type JointRange, type WorkingMode, type AssemblyMode } from '../../src/core/pose.js';

/** Everything constant about one candidate design. Built once per design; never written to. */
export interface FiveBarModel {
  /** Actuated pivots A_1, A_2 in the base frame, m. */
  readonly pivotX: readonly [number, number];
  readonly pivotY: readonly [number, number];
  /** Crank lengths p_i, m. */
  readonly crank: readonly [number, number];
  /** Rod lengths d_i, m. */
  readonly rod: readonly [number, number];
  /** Working-mode signs σ_i ∈ {+1, −1}. */
  readonly sigma: readonly [number, number];
  /** Assembly-mode sign: required sign of det A. */
  readonly assembly: 1 | -1;
  /** Actuated-joint ranges, or null for an unlimited joint. */
  readonly jointLimits: readonly [JointRange | null, JointRange | null];

  // --- inertia (see massModel.ts) ---
  /** Crank inertia about its pivot including the elbow hub as a point mass, kg·m². */
  readonly crankInertiaAboutPivot: readonly [number, number];
  /** First moment of the crank (with elbow hub) about its pivot along the crank, kg·m. */
  readonly crankFirstMoment: readonly [number, number];
  /** Rod mass, kg. */
  readonly rodMass: readonly [number, number];
  /** Distance of the rod's centre of mass from the elbow along the rod, m. */
  readonly rodComDistance: readonly [number, number];
  /** Rod inertia about its centre of mass, kg·m². */
  readonly rodInertiaAboutCom: readonly [number, number];
  /** Point mass at the end point (payload plus end hub), kg. */
  readonly endMass: number;
  /** Drive inertia reflected to the joint, N² J_rotor + J_gear, kg·m². */
  readonly reflectedInertia: readonly [number, number];
  /** Gravity vector in the plane of motion, m/s². */
  readonly gravity: readonly [number, number];

  // --- compliance of each leg along its rod: c = s² bend + (1 − s²) crankAxial + rodAxial ---
  /** p²/k + p³/(3 E I) of the crank, m/N (a rigid element contributes 0). */
  readonly complianceBending: readonly [number, number];
  /** p/(E A) of the crank, m/N. */
  readonly complianceCrankAxial: readonly [number, number];
  /** d/(E A) of the rod, m/N. */
  readonly complianceRodAxial: readonly [number, number];
}

/**
 * Reusable per-pose scratch. One instance per worker; every field is overwritten by `solvePose`
 * and `poseDynamics`. Nothing here is allocated per pose.
 */
export class FiveBarPose {
  status: PoseStatus = PoseStatus.Unreachable;
  /** End point, m. */
  x = 0;
  y = 0;
  /** Reach margin: min over legs of the distance inside the leg's annulus, m (negative outside). */
  reachMargin = 0;
  /** Joint-limit margin, rad (negative outside; +∞ when unlimited). */
  jointMargin = Infinity;
  /** Actuated joint angles θ_i, rad (valid when reachable). */
  theta1 = 0;
  theta2 = 0;
  /** Crank unit vectors e(θ_i). */
  e1x = 0; e1y = 0; e2x = 0; e2y = 0;
  /** Elbows C_i, m. */
  c1x = 0; c1y = 0; c2x = 0; c2y = 0;
  /** Rod unit vectors u_i = (P − C_i)/d_i. */
  u1x = 0; u1y = 0; u2x = 0; u2y = 0;
  /** Leg transmission sines s_i = cross(e_i, u_i). */
  s1 = 0; s2 = 0;
  /** det A = cross(u_1, u_2) (sine of the angle between the rods). */
  detA = 0;
  /** 1/κ(J). */
  inverseCondition = 0;
  /** J = A⁻¹B, m/rad, row-major. */
  j11 = 0; j12 = 0; j21 = 0; j22 = 0;
  /** J⁻¹ = B⁻¹A, rad/m, row-major. */
  g11 = 0; g12 = 0; g21 = 0; g22 = 0;

  // --- filled by poseDynamics ---
  /** Joint-space inertia matrix D, kg·m² (symmetric: d12 = d21). */
  d11 = 0; d12 = 0; d22 = 0;
  /** Static holding torques τ_g, N·m. */
  tauG1 = 0; tauG2 = 0;
  /** Cartesian mass matrix M_x = J⁻ᵀ D J⁻¹, kg. */
  mx11 = 0; mx12 = 0; mx22 = 0;
  /** Cartesian stiffness K_x = Aᵀ diag(1/c_i) A, N/m. */
  kx11 = 0; kx12 = 0; kx22 = 0;
  /** Leg compliances c_i along the rods, m/N. */
  compliance1 = 0; compliance2 = 0;
  /** Smallest eigenvalue of K_x, N/m. */
  minStiffness = 0;
  /** Natural frequencies of M_x ẍ + K_x x = 0, Hz (lower, higher). */
  frequencyLow = 0; frequencyHigh = 0;
  /** Norms of the rows of D J⁻¹, kg·m (torque per unit end-point acceleration). */
  inertiaRowNorm1 = 0; inertiaRowNorm2 = 0;
  /** Norms of the rows of J⁻¹, rad/m (joint speed per unit end-point speed). */
  inverseJacobianRowNorm1 = 0; inverseJacobianRowNorm2 = 0;
  /** Largest singular value of J, m/rad. */
  maxSingularValue = 0;

  /** Rod angular-rate rows w_rod_i (β̇_i = w_i · θ̇), kept for reuse by callers and tests. */
  rodRate11 = 0; rodRate12 = 0; rodRate21 = 0; rodRate22 = 0;

  readonly eigenScratch = new Float64Array(2);
}

/**
 * Inverse kinematics and first-order kinematics at end point (x, y). Fills pose; returns its status.
 * Unreachable points still get `reachMargin`; other fields are then stale.
 */
export function solvePose(model: FiveBarModel, pose: FiveBarPose, x: number, y: number): PoseStatus {
  pose.x = x;
  pose.y = y;
  // Leg 1
  const p1 = model.crank[0];
  const d1 = model.rod[0];
  const r1x = x - model.pivotX[0];
  const r1y = y - model.pivotY[0];
  const rho1 = Math.sqrt(r1x * r1x + r1y * r1y);
  const m1 = Math.min(rho1 - Math.abs(p1 - d1), p1 + d1 - rho1);
  // Leg 2
  const p2 = model.crank[1];
  const d2 = model.rod[1];
  const r2x = x - model.pivotX[1];
  const r2y = y - model.pivotY[1];
  const rho2 = Math.sqrt(r2x * r2x + r2y * r2y);
  const m2 = Math.min(rho2 - Math.abs(p2 - d2), p2 + d2 - rho2);
  pose.reachMargin = Math.min(m1, m2);
  if (m1 < 0 || m2 < 0 || rho1 === 0 || rho2 === 0) {
    pose.status = PoseStatus.Unreachable;
    return pose.status;
  }
  // Crank direction: rotate r̂ by ±α, cos α = (p² + ρ² − d²)/(2 p ρ)  (law of cosines).
  let cos1 = (p1 * p1 + rho1 * rho1 - d1 * d1) / (2 * p1 * rho1);
  cos1 = cos1 > 1 ? 1 : cos1 < -1 ? -1 : cos1;
  const sin1 = model.sigma[0] * Math.sqrt(1 - cos1 * cos1);
  const n1x = r1x / rho1;
  const n1y = r1y / rho1;
  const e1x = n1x * cos1 - n1y * sin1;
  const e1y = n1y * cos1 + n1x * sin1;
  let cos2 = (p2 * p2 + rho2 * rho2 - d2 * d2) / (2 * p2 * rho2);
  cos2 = cos2 > 1 ? 1 : cos2 < -1 ? -1 : cos2;
  const sin2 = model.sigma[1] * Math.sqrt(1 - cos2 * cos2);
  const n2x = r2x / rho2;
  const n2y = r2y / rho2;
  const e2x = n2x * cos2 - n2y * sin2;
  const e2y = n2y * cos2 + n2x * sin2;

  pose.e1x = e1x; pose.e1y = e1y; pose.e2x = e2x; pose.e2y = e2y;
  pose.theta1 = Math.atan2(e1y, e1x);
  pose.theta2 = Math.atan2(e2y, e2x);
  const c1x = model.pivotX[0] + p1 * e1x;
  const c1y = model.pivotY[0] + p1 * e1y;
  const c2x = model.pivotX[1] + p2 * e2x;
  const c2y = model.pivotY[1] + p2 * e2y;
  pose.c1x = c1x; pose.c1y = c1y; pose.c2x = c2x; pose.c2y = c2y;
  const u1x = (x - c1x) / d1;
  const u1y = (y - c1y) / d1;
  const u2x = (x - c2x) / d2;
  const u2y = (y - c2y) / d2;
  pose.u1x = u1x; pose.u1y = u1y; pose.u2x = u2x; pose.u2y = u2y;
  const s1 = e1x * u1y - e1y * u1x;
  const s2 = e2x * u2y - e2y * u2x;
  pose.s1 = s1;
  pose.s2 = s2;
  const detA = u1x * u2y - u1y * u2x;
  pose.detA = detA;

  const b1 = p1 * s1;
  const b2 = p2 * s2;
  // 1/κ(J) = 1/κ(J⁻¹) = 1/κ of the matrix with rows b2·u1, b1·u2 (finite at every singularity).
  pose.inverseCondition = inverseCondition2(b2 * u1x, b2 * u1y, b1 * u2x, b1 * u2y);
  // J⁻¹ = B⁻¹ A (rows u_iᵀ / b_i) and J = A⁻¹ B.
  pose.g11 = u1x / b1; pose.g12 = u1y / b1;
  pose.g21 = u2x / b2; pose.g22 = u2y / b2;
  pose.j11 = (u2y * b1) / detA; pose.j12 = (-u1y * b2) / detA;
  pose.j21 = (-u2x * b1) / detA; pose.j22 = (u1x * b2) / detA;

  const limits = model.jointLimits;
  pose.jointMargin = Math.min(jointRangeMargin(pose.theta1, limits[0]), jointRangeMargin(pose.theta2, limits[1]));
  if (pose.jointMargin < 0) {
    pose.status = PoseStatus.OutsideJointLimits;
  } else if (detA * model.assembly <= 0) {
    pose.status = PoseStatus.WrongAssembly;
  } else {
    pose.status = PoseStatus.Assembled;
  }
  return pose.status;
}

/**
 * Reduced dynamics, statics and stiffness at the pose last solved (body-by-body form of the reduced
 * model: D = Σ_k m_k V_kᵀV_k + I_k w_kᵀw_k + reflected drive inertia; τ_g = −Σ_k m_k V_kᵀ γ).
 * Requires a reachable, non-singular pose (s_i ≠ 0, det A ≠ 0).
 */
export function poseDynamics(model: FiveBarModel, pose: FiveBarPose): void {
  const gx = model.gravity[0];
  const gy = model.gravity[1];
  const { e1x, e1y, e2x, e2y, u1x, u1y, u2x, u2y, j11, j12, j21, j22 } = pose;
  const p1 = model.crank[0];
  const p2 = model.crank[1];
  const d1 = model.rod[0];
  const d2 = model.rod[1];

  // Cranks: rotation about the pivot; Ċ_i = p_i e⊥(θ_i) θ̇_i.
  let d11 = model.crankInertiaAboutPivot[0] + model.reflectedInertia[0];
  let d22 = model.crankInertiaAboutPivot[1] + model.reflectedInertia[1];
  let d12 = 0;
  // e⊥ = (−e_y, e_x); τ_g,i = −m a e⊥·γ summed as first moment.
  let t1 = -model.crankFirstMoment[0] * (-e1y * gx + e1x * gy);
  let t2 = -model.crankFirstMoment[1] * (-e2y * gx + e2x * gy);

  // Rod angular rates: β̇_i = (cross(u_i, J θ̇) − δ_ik p_i (u_i·e_i) θ̇_k) / d_i.
  const ue1 = u1x * e1x + u1y * e1y;
  const ue2 = u2x * e2x + u2y * e2y;
  const w11 = (u1x * j21 - u1y * j11 - p1 * ue1) / d1;
  const w12 = (u1x * j22 - u1y * j12) / d1;
  const w21 = (u2x * j21 - u2y * j11) / d2;
  const w22 = (u2x * j22 - u2y * j12 - p2 * ue2) / d2;
  pose.rodRate11 = w11; pose.rodRate12 = w12; pose.rodRate21 = w21; pose.rodRate22 = w22;

  // Rod 1 centre of mass velocity: V = [p1 e⊥1, 0] + b1 u⊥1 w1  (u⊥ = (−u_y, u_x)).
  {
    const m = model.rodMass[0];
    const b = model.rodComDistance[0];
    const va1x = -p1 * e1y - b * u1y * w11;
    const va1y = p1 * e1x + b * u1x * w11;
    const va2x = -b * u1y * w12;
    const va2y = b * u1x * w12;
    const inertia = model.rodInertiaAboutCom[0];
    d11 += m * (va1x * va1x + va1y * va1y) + inertia * w11 * w11;
    d12 += m * (va1x * va2x + va1y * va2y) + inertia * w11 * w12;
    d22 += m * (va2x * va2x + va2y * va2y) + inertia * w12 * w12;
    t1 -= m * (va1x * gx + va1y * gy);
    t2 -= m * (va2x * gx + va2y * gy);
  }
  // Rod 2: V = [0, p2 e⊥2] + b2 u⊥2 w2.
  {
    const m = model.rodMass[1];
    const b = model.rodComDistance[1];
    const vb1x = -b * u2y * w21;
    const vb1y = b * u2x * w21;
    const vb2x = -p2 * e2y - b * u2y * w22;
    const vb2y = p2 * e2x + b * u2x * w22;
    const inertia = model.rodInertiaAboutCom[1];
    d11 += m * (vb1x * vb1x + vb1y * vb1y) + inertia * w21 * w21;
    d12 += m * (vb1x * vb2x + vb1y * vb2y) + inertia * w21 * w22;
    d22 += m * (vb2x * vb2x + vb2y * vb2y) + inertia * w22 * w22;
    t1 -= m * (vb1x * gx + vb1y * gy);
    t2 -= m * (vb2x * gx + vb2y * gy);
  }
  // End-point mass: V = J.
  {
    const m = model.endMass;
    d11 += m * (j11 * j11 + j21 * j21);
    d12 += m * (j11 * j12 + j21 * j22);
    d22 += m * (j12 * j12 + j22 * j22);
    t1 -= m * (j11 * gx + j21 * gy);
    t2 -= m * (j12 * gx + j22 * gy);
  }
  pose.d11 = d11; pose.d12 = d12; pose.d22 = d22;
  pose.tauG1 = t1; pose.tauG2 = t2;

  // M_x = Gᵀ D G with G = J⁻¹.
  const { g11, g12, g21, g22 } = pose;
  const dg11 = d11 * g11 + d12 * g21; // (D G) row 1
  const dg12 = d11 * g12 + d12 * g22;
  const dg21 = d12 * g11 + d22 * g21; // (D G) row 2
  const dg22 = d12 * g12 + d22 * g22;
  pose.mx11 = g11 * dg11 + g21 * dg21;
  pose.mx12 = g11 * dg12 + g21 * dg22;
  pose.mx22 = g12 * dg12 + g22 * dg22;
  pose.inertiaRowNorm1 = Math.sqrt(dg11 * dg11 + dg12 * dg12);
  pose.inertiaRowNorm2 = Math.sqrt(dg21 * dg21 + dg22 * dg22);
  pose.inverseJacobianRowNorm1 = Math.sqrt(g11 * g11 + g12 * g12);
  pose.inverseJacobianRowNorm2 = Math.sqrt(g21 * g21 + g22 * g22);
  pose.maxSingularValue = maxSingularValue2(j11, j12, j21, j22);

  // Stiffness: leg compliances in series along u_i, K_x = Aᵀ diag(1/c_i) A.
  const s1sq = pose.s1 * pose.s1;
  const s2sq = pose.s2 * pose.s2;
  const c1 = s1sq * model.complianceBending[0] + (1 - s1sq) * model.complianceCrankAxial[0] + model.complianceRodAxial[0];
  const c2 = s2sq * model.complianceBending[1] + (1 - s2sq) * model.complianceCrankAxial[1] + model.complianceRodAxial[1];
  pose.compliance1 = c1;
  pose.compliance2 = c2;
  const k1 = 1 / c1;
  const k2 = 1 / c2;
  pose.kx11 = k1 * u1x * u1x + k2 * u2x * u2x;
  pose.kx12 = k1 * u1x * u1y + k2 * u2x * u2y;
  pose.kx22 = k1 * u1y * u1y + k2 * u2y * u2y;
  pose.minStiffness = minEigenSymmetric2(pose.kx11, pose.kx12, pose.kx22);
  const eig = pose.eigenScratch;
  generalizedEigen2(pose.kx11, pose.kx12, pose.kx22, pose.mx11, pose.mx12, pose.mx22, eig);
  pose.frequencyLow = Math.sqrt(Math.max(eig[0], 0)) / (2 * Math.PI);
  pose.frequencyHigh = Math.sqrt(Math.max(eig[1], 0)) / (2 * Math.PI);
}

/**
 * Forward kinematics: end point for actuated angles (θ_1, θ_2) in the given assembly mode, as the
 * intersection of the circles (C_1, d_1) and (C_2, d_2). Writes (x, y) into out; returns false when
 * the circles do not meet.
 */
export function forwardKinematics(model: FiveBarModel, theta1: number, theta2: number, out: Float64Array): boolean {
  const c1x = model.pivotX[0] + model.crank[0] * Math.cos(theta1);
  const c1y = model.pivotY[0] + model.crank[0] * Math.sin(theta1);
  const c2x = model.pivotX[1] + model.crank[1] * Math.cos(theta2);
  const c2y = model.pivotY[1] + model.crank[1] * Math.sin(theta2);
  const dx = c2x - c1x;
  const dy = c2y - c1y;
  const dist = Math.sqrt(dx * dx + dy * dy);
  const r1 = model.rod[0];
  const r2 = model.rod[1];
  if (dist === 0 || dist > r1 + r2 || dist < Math.abs(r1 - r2)) return false;
  // Distance from C_1 along C_1C_2 to the chord, and half-chord height.
  const along = (r1 * r1 - r2 * r2 + dist * dist) / (2 * dist);
  const height = Math.sqrt(Math.max(r1 * r1 - along * along, 0));
  const ux = dx / dist;
  const uy = dy / dist;
  // cross(C2 − C1, P − C1) = dist · height · sign: the assembly sign picks the side.
  const side = model.assembly;
  out[0] = c1x + along * ux - side * height * uy;
  out[1] = c1y + along * uy + side * height * ux;
  return true;
}

/**
 * Bounding box of the reachable set, m: the intersection of the boxes of the legs' outer discs
 * (radius p_i + d_i about A_i); null when those boxes do not overlap.
 */
export function reachableBox(model: FiveBarModel): { xmin: number; xmax: number; ymin: number; ymax: number } | null {
  const r1 = model.crank[0] + model.rod[0];
  const r2 = model.crank[1] + model.rod[1];
  const xmin = Math.max(model.pivotX[0] - r1, model.pivotX[1] - r2);
  const xmax = Math.min(model.pivotX[0] + r1, model.pivotX[1] + r2);
  const ymin = Math.max(model.pivotY[0] - r1, model.pivotY[1] - r2);
  const ymax = Math.min(model.pivotY[0] + r1, model.pivotY[1] + r2);
  return xmax > xmin && ymax > ymin ? { xmin, xmax, ymin, ymax } : null;
}

/** Overall size proxy: distance between the pivots plus the longer leg's full reach, m. */
export function footprint(model: FiveBarModel): number {
  const span = Math.hypot(model.pivotX[1] - model.pivotX[0], model.pivotY[1] - model.pivotY[0]);
  return span + Math.max(model.crank[0] + model.rod[0], model.crank[1] + model.rod[1]);
}

/**
 * The closed-form model of a five-bar design of a study: the lumping the five-bar engine used (uniform
 * bars, elbow hub as a point mass at the crank end, drive inertia reflected to the joint).
 */
export function buildFiveBarModel(study: Study, resolved: ResolvedDesign): FiveBarModel {
  if (study.architecture !== 'five-bar' || study.members) throw new Error(`buildFiveBarModel: the study's architecture is ${study.members ? 'a comparison' : study.architecture}; use buildArchitectureModel`);
  const g = resolved.geometry;
  const crank = [g.crank_1!, g.crank_2!] as const;
  const rod = [g.rod_1!, g.rod_2!] as const;
  const cranks = [study.links.cranks[0]!, study.links.cranks[1]!] as const;
  const rods = [study.links.rods[0]!, study.links.rods[1]!] as const;
  const hub = study.elbowHubMass;

  // Uniform bar about one end: I = m L²/3, first moment m L/2; elbow hub is a point mass at the crank end.
  const crankMass = [cranks[0].massPerLength * crank[0], cranks[1].massPerLength * crank[1]] as const;
  const crankInertiaAboutPivot = [
    (crankMass[0] * crank[0] ** 2) / 3 + hub * crank[0] ** 2,
    (crankMass[1] * crank[1] ** 2) / 3 + hub * crank[1] ** 2,
  ] as const;
  const crankFirstMoment = [(crankMass[0] * crank[0]) / 2 + hub * crank[0], (crankMass[1] * crank[1]) / 2 + hub * crank[1]] as const;
  const rodMass = [rods[0].massPerLength * rod[0], rods[1].massPerLength * rod[1]] as const;

  const drives = resolved.drives;
  const reflected = (i: 0 | 1): number => (drives ? drives[i]!.gearRatio ** 2 * drives[i]!.rotorInertia + drives[i]!.gearInertia : 0);
  const jointStiffness = (i: 0 | 1): number => (drives ? drives[i]!.jointStiffness : Infinity);
  const bending = (i: 0 | 1): number =>
    crank[i] ** 2 / jointStiffness(i) + crank[i] ** 3 / (3 * cranks[i].youngsModulus * cranks[i].secondMoment);
  const [s1, s2] = resolved.workingMode === '++' ? [1, 1] : resolved.workingMode === '+-' ? [1, -1] : resolved.workingMode === '-+' ? [-1, 1] : [-1, -1];

  return {
    pivotX: [-g.base_span! / 2, g.base_span! / 2],
    pivotY: [0, g.base_rise!],
    crank,
    rod,
    sigma: [s1, s2],
    assembly: study.assemblyMode === '+' ? 1 : -1,
    jointLimits: [study.jointLimits[0] ?? null, study.jointLimits[1] ?? null],
    crankInertiaAboutPivot,
    crankFirstMoment,
    rodMass,
    rodComDistance: [rod[0] / 2, rod[1] / 2],
    rodInertiaAboutCom: [(rodMass[0] * rod[0] ** 2) / 12, (rodMass[1] * rod[1] ** 2) / 12],
    endMass: study.endHubMass + study.payloadMass,
    reflectedInertia: [reflected(0), reflected(1)],
    gravity: study.gravity,
    complianceBending: [bending(0), bending(1)],
    complianceCrankAxial: [crank[0] / (cranks[0].youngsModulus * cranks[0].area), crank[1] / (cranks[1].youngsModulus * cranks[1].area)],
    complianceRodAxial: [rod[0] / (rods[0].youngsModulus * rods[0].area), rod[1] / (rods[1].youngsModulus * rods[1].area)],
  };
}

/** The usability rule (src/mechanics/usability.ts) on a closed-form pose. */
export function usableMargin(pose: FiveBarPose, status: PoseStatus, study: UsabilitySettings): number {
  return usabilityMargin(status, pose.inverseCondition, [pose.s1, pose.s2], pose.detA, pose.jointMargin, study);
}
