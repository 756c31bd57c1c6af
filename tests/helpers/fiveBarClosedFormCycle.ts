/**
 * The five-bar's closed-form cycle kinematics and inverse dynamics, on the closed-form five-bar of
 * fiveBarClosedForm.ts: the analytic formulas of docs/duty-cycle.md for two revolute legs. The
 * pipeline does not use them (src/mechanics/dutyCycle.ts works on every architecture through the
 * PlanarArchitecture interface); they are the tests' analytic cross-check of it. Test support only.
 *
 * Kinematics along the path (derived by differentiating the leg closure |P − C_i|² = d_i² twice,
 * C_i = A_i + p_i e_i):
 *   first order   u_i·Ṗ = p_i s_i θ̇_i                                  (the rows of A Ṗ = B θ̇)
 *   rod rate      β̇_i = cross(u_i, Ṗ − p_i e⊥_i θ̇_i) / d_i
 *   second order  p_i s_i θ̈_i = u_i·P̈ + p_i (u_i·e_i) θ̇_i² + d_i β̇_i²
 *   rod accel.    β̈_i = (cross(u_i, P̈) − p_i (u_i·e_i) θ̈_i − p_i s_i θ̇_i²) / d_i
 *
 * Inverse dynamics (virtual power, body by body, the same bodies as poseDynamics):
 *   τ = Σ_k V_kᵀ m_k (a_k − γ) + w_k I_k α_k + J_refl θ̈  =  D(θ) θ̈ + C(θ, θ̇) θ̇ + g(θ)
 */
import { FiveBarPose, PoseStatus, forwardKinematics, jointRangeMargin, type FiveBarModel } from './fiveBarClosedForm.js';
import { inverseCondition2 } from '../../src/architectures/linalg2.js';

/**
 * Rates and torques at one instant (reusable scratch; every field is overwritten). Filled by
 * `jointRatesFromPath` or `endPointAcceleration`, then `inverseDynamics`.
 */
export class FiveBarMotion {
  /** Joint rates θ̇_i, rad/s, and accelerations θ̈_i, rad/s². */
  dtheta1 = 0; dtheta2 = 0; ddtheta1 = 0; ddtheta2 = 0;
  /** Absolute rod angular rates β̇_i, rad/s, and accelerations β̈_i, rad/s². */
  drod1 = 0; drod2 = 0; ddrod1 = 0; ddrod2 = 0;
  /** End-point velocity, m/s, and acceleration, m/s². */
  vx = 0; vy = 0; ax = 0; ay = 0;
  /** Rod-rate rows w_i (β̇_i = w_i1 θ̇_1 + w_i2 θ̇_2), 1. */
  w11 = 0; w12 = 0; w21 = 0; w22 = 0;
  /** D θ̈ + C(θ, θ̇) θ̇ (inertial and velocity terms, no gravity), N·m. */
  tauInertial1 = 0; tauInertial2 = 0;
  /** g(θ): holding torque against gravity, N·m. */
  tauGravity1 = 0; tauGravity2 = 0;
}

/** Rod-rate rows w_i (β̇_i = w_i·θ̇) of a solved pose, written into motion (same as poseDynamics). */
function rodRateRows(model: FiveBarModel, pose: FiveBarPose, motion: FiveBarMotion): void {
  const p1 = model.crank[0];
  const p2 = model.crank[1];
  const d1 = model.rod[0];
  const d2 = model.rod[1];
  const { e1x, e1y, e2x, e2y, u1x, u1y, u2x, u2y, j11, j12, j21, j22 } = pose;
  const ue1 = u1x * e1x + u1y * e1y;
  const ue2 = u2x * e2x + u2y * e2y;
  motion.w11 = (u1x * j21 - u1y * j11 - p1 * ue1) / d1;
  motion.w12 = (u1x * j22 - u1y * j12) / d1;
  motion.w21 = (u2x * j21 - u2y * j11) / d2;
  motion.w22 = (u2x * j22 - u2y * j12 - p2 * ue2) / d2;
}

/**
 * Velocity and acceleration analysis from the end point: θ̇ = J⁻¹Ṗ, β̇, then θ̈ and β̈ from the
 * second derivative of the leg closure (module header). `pose` must be solved at the same point
 * and non-singular. Allocation-free.
 */
export function jointRatesFromPath(
  model: FiveBarModel, pose: FiveBarPose, vx: number, vy: number, ax: number, ay: number, motion: FiveBarMotion,
): void {
  const p1 = model.crank[0];
  const p2 = model.crank[1];
  const d1 = model.rod[0];
  const d2 = model.rod[1];
  const { e1x, e1y, e2x, e2y, u1x, u1y, u2x, u2y, s1, s2 } = pose;
  const b1 = p1 * s1;
  const b2 = p2 * s2;
  const dt1 = (u1x * vx + u1y * vy) / b1;
  const dt2 = (u2x * vx + u2y * vy) / b2;
  // Relative velocity of P over the elbow, v_i = Ṗ − p_i e⊥_i θ̇_i; β̇_i = cross(u_i, v_i)/d_i.
  const v1x = vx + p1 * e1y * dt1;
  const v1y = vy - p1 * e1x * dt1;
  const v2x = vx + p2 * e2y * dt2;
  const v2y = vy - p2 * e2x * dt2;
  const dr1 = (u1x * v1y - u1y * v1x) / d1;
  const dr2 = (u2x * v2y - u2y * v2x) / d2;
  const ue1 = u1x * e1x + u1y * e1y;
  const ue2 = u2x * e2x + u2y * e2y;
  const ddt1 = (u1x * ax + u1y * ay + p1 * ue1 * dt1 * dt1 + d1 * dr1 * dr1) / b1;
  const ddt2 = (u2x * ax + u2y * ay + p2 * ue2 * dt2 * dt2 + d2 * dr2 * dr2) / b2;
  motion.dtheta1 = dt1; motion.dtheta2 = dt2;
  motion.ddtheta1 = ddt1; motion.ddtheta2 = ddt2;
  motion.drod1 = dr1; motion.drod2 = dr2;
  motion.ddrod1 = (u1x * ay - u1y * ax - p1 * ue1 * ddt1 - b1 * dt1 * dt1) / d1;
  motion.ddrod2 = (u2x * ay - u2y * ax - p2 * ue2 * ddt2 - b2 * dt2 * dt2) / d2;
  motion.vx = vx; motion.vy = vy; motion.ax = ax; motion.ay = ay;
  rodRateRows(model, pose, motion);
}

/**
 * End-point acceleration analysis from the joints: Ṗ = J θ̇ and P̈ = J θ̈ + J̇ θ̇, from
 * A P̈ = B θ̈ − r with r_i = p_i (u_i·e_i) θ̇_i² + d_i β̇_i² (module header), plus β̇ and β̈.
 * With θ̈ = 0 the result is the velocity-product term J̇ θ̇. Allocation-free.
 */
export function endPointAcceleration(
  model: FiveBarModel, pose: FiveBarPose, dtheta1: number, dtheta2: number, ddtheta1: number, ddtheta2: number, motion: FiveBarMotion,
): void {
  const p1 = model.crank[0];
  const p2 = model.crank[1];
  const d1 = model.rod[0];
  const d2 = model.rod[1];
  const { e1x, e1y, e2x, e2y, u1x, u1y, u2x, u2y, s1, s2, detA, j11, j12, j21, j22 } = pose;
  rodRateRows(model, pose, motion);
  const vx = j11 * dtheta1 + j12 * dtheta2;
  const vy = j21 * dtheta1 + j22 * dtheta2;
  const dr1 = motion.w11 * dtheta1 + motion.w12 * dtheta2;
  const dr2 = motion.w21 * dtheta1 + motion.w22 * dtheta2;
  const ue1 = u1x * e1x + u1y * e1y;
  const ue2 = u2x * e2x + u2y * e2y;
  const b1 = p1 * s1;
  const b2 = p2 * s2;
  const r1 = b1 * ddtheta1 - p1 * ue1 * dtheta1 * dtheta1 - d1 * dr1 * dr1;
  const r2 = b2 * ddtheta2 - p2 * ue2 * dtheta2 * dtheta2 - d2 * dr2 * dr2;
  const ax = (u2y * r1 - u1y * r2) / detA;
  const ay = (u1x * r2 - u2x * r1) / detA;
  motion.dtheta1 = dtheta1; motion.dtheta2 = dtheta2;
  motion.ddtheta1 = ddtheta1; motion.ddtheta2 = ddtheta2;
  motion.drod1 = dr1; motion.drod2 = dr2;
  motion.ddrod1 = (u1x * ay - u1y * ax - p1 * ue1 * ddtheta1 - b1 * dtheta1 * dtheta1) / d1;
  motion.ddrod2 = (u2x * ay - u2y * ax - p2 * ue2 * ddtheta2 - b2 * dtheta2 * dtheta2) / d2;
  motion.vx = vx; motion.vy = vy; motion.ax = ax; motion.ay = ay;
}

/**
 * Inverse dynamics at the instant held in `motion` (filled by `jointRatesFromPath` or
 * `endPointAcceleration` at this pose): writes τ_inertial = D θ̈ + C θ̇ and τ_gravity = g(θ) into
 * motion. The drive torque without friction is their sum. Allocation-free.
 */
export function inverseDynamics(model: FiveBarModel, pose: FiveBarPose, motion: FiveBarMotion): void {
  const gx = model.gravity[0];
  const gy = model.gravity[1];
  const p1 = model.crank[0];
  const p2 = model.crank[1];
  const { e1x, e1y, e2x, e2y, u1x, u1y, u2x, u2y, j11, j12, j21, j22 } = pose;
  const { dtheta1, dtheta2, ddtheta1, ddtheta2, drod1, drod2, ddrod1, ddrod2, ax, ay, w11, w12, w21, w22 } = motion;

  // Cranks about their fixed pivots (centripetal terms give no moment about the pivot).
  let t1 = (model.crankInertiaAboutPivot[0] + model.reflectedInertia[0]) * ddtheta1;
  let t2 = (model.crankInertiaAboutPivot[1] + model.reflectedInertia[1]) * ddtheta2;
  let g1 = -model.crankFirstMoment[0] * (-e1y * gx + e1x * gy);
  let g2 = -model.crankFirstMoment[1] * (-e2y * gx + e2x * gy);

  // Rod 1: centre R = C_1 + b u_1; R̈ = p_1 (e⊥ θ̈_1 − e θ̇_1²) + b (β̈ u⊥ − β̇² u).
  {
    const m = model.rodMass[0];
    const b = model.rodComDistance[0];
    const rax = p1 * (-e1y * ddtheta1 - e1x * dtheta1 * dtheta1) + b * (-u1y * ddrod1 - u1x * drod1 * drod1);
    const ray = p1 * (e1x * ddtheta1 - e1y * dtheta1 * dtheta1) + b * (u1x * ddrod1 - u1y * drod1 * drod1);
    // Velocity map columns: V_1 = p_1 e⊥_1 + b u⊥ w_11, V_2 = b u⊥ w_12.
    const va1x = -p1 * e1y - b * u1y * w11;
    const va1y = p1 * e1x + b * u1x * w11;
    const va2x = -b * u1y * w12;
    const va2y = b * u1x * w12;
    const spin = model.rodInertiaAboutCom[0] * ddrod1;
    t1 += m * (va1x * rax + va1y * ray) + w11 * spin;
    t2 += m * (va2x * rax + va2y * ray) + w12 * spin;
    g1 -= m * (va1x * gx + va1y * gy);
    g2 -= m * (va2x * gx + va2y * gy);
  }
  // Rod 2.
  {
    const m = model.rodMass[1];
    const b = model.rodComDistance[1];
    const rax = p2 * (-e2y * ddtheta2 - e2x * dtheta2 * dtheta2) + b * (-u2y * ddrod2 - u2x * drod2 * drod2);
    const ray = p2 * (e2x * ddtheta2 - e2y * dtheta2 * dtheta2) + b * (u2x * ddrod2 - u2y * drod2 * drod2);
    const vb1x = -b * u2y * w21;
    const vb1y = b * u2x * w21;
    const vb2x = -p2 * e2y - b * u2y * w22;
    const vb2y = p2 * e2x + b * u2x * w22;
    const spin = model.rodInertiaAboutCom[1] * ddrod2;
    t1 += m * (vb1x * rax + vb1y * ray) + w21 * spin;
    t2 += m * (vb2x * rax + vb2y * ray) + w22 * spin;
    g1 -= m * (vb1x * gx + vb1y * gy);
    g2 -= m * (vb2x * gx + vb2y * gy);
  }
  // End-point mass: V = J.
  {
    const m = model.endMass;
    t1 += m * (j11 * ax + j21 * ay);
    t2 += m * (j12 * ax + j22 * ay);
    g1 -= m * (j11 * gx + j21 * gy);
    g2 -= m * (j12 * gx + j22 * gy);
  }
  motion.tauInertial1 = t1;
  motion.tauInertial2 = t2;
  motion.tauGravity1 = g1;
  motion.tauGravity2 = g2;
}

/**
 * Places the five-bar at actuated angles (θ_1, θ_2) (forward kinematics in the model's assembly
 * mode) and fills the first-order fields of `pose` that the dynamics use (e_i, C_i, u_i, s_i, det A,
 * J, J⁻¹, 1/κ, joint margin). Returns Assembled, Unreachable (the rods cannot meet) or
 * OutsideJointLimits. The working mode is whatever the angles give: `pose` does not check σ.
 */
export function poseFromJointAngles(model: FiveBarModel, pose: FiveBarPose, theta1: number, theta2: number, scratch: Float64Array): PoseStatus {
  if (!forwardKinematics(model, theta1, theta2, scratch)) {
    pose.status = PoseStatus.Unreachable;
    return pose.status;
  }
  const x = scratch[0]!;
  const y = scratch[1]!;
  const p1 = model.crank[0];
  const p2 = model.crank[1];
  const e1x = Math.cos(theta1);
  const e1y = Math.sin(theta1);
  const e2x = Math.cos(theta2);
  const e2y = Math.sin(theta2);
  const c1x = model.pivotX[0] + p1 * e1x;
  const c1y = model.pivotY[0] + p1 * e1y;
  const c2x = model.pivotX[1] + p2 * e2x;
  const c2y = model.pivotY[1] + p2 * e2y;
  const u1x = (x - c1x) / model.rod[0];
  const u1y = (y - c1y) / model.rod[0];
  const u2x = (x - c2x) / model.rod[1];
  const u2y = (y - c2y) / model.rod[1];
  const s1 = e1x * u1y - e1y * u1x;
  const s2 = e2x * u2y - e2y * u2x;
  const detA = u1x * u2y - u1y * u2x;
  const b1 = p1 * s1;
  const b2 = p2 * s2;
  pose.x = x; pose.y = y;
  pose.theta1 = theta1; pose.theta2 = theta2;
  pose.e1x = e1x; pose.e1y = e1y; pose.e2x = e2x; pose.e2y = e2y;
  pose.c1x = c1x; pose.c1y = c1y; pose.c2x = c2x; pose.c2y = c2y;
  pose.u1x = u1x; pose.u1y = u1y; pose.u2x = u2x; pose.u2y = u2y;
  pose.s1 = s1; pose.s2 = s2; pose.detA = detA;
  pose.inverseCondition = inverseCondition2(b2 * u1x, b2 * u1y, b1 * u2x, b1 * u2y);
  pose.g11 = u1x / b1; pose.g12 = u1y / b1;
  pose.g21 = u2x / b2; pose.g22 = u2y / b2;
  pose.j11 = (u2y * b1) / detA; pose.j12 = (-u1y * b2) / detA;
  pose.j21 = (-u2x * b1) / detA; pose.j22 = (u1x * b2) / detA;
  pose.reachMargin = 0;
  pose.jointMargin = Math.min(jointRangeMargin(theta1, model.jointLimits[0]), jointRangeMargin(theta2, model.jointLimits[1]));
  pose.status = pose.jointMargin < 0 ? PoseStatus.OutsideJointLimits : PoseStatus.Assembled;
  return pose.status;
}

/** The terms of M(θ) θ̈ + C(θ, θ̇) θ̇ + g(θ) = τ at one state, in actuated coordinates. */
export class JointSpaceDynamics {
  /** Inertia matrix D(θ), kg·m² (symmetric). */
  d11 = 0; d12 = 0; d22 = 0;
  /** Velocity term C(θ, θ̇) θ̇, N·m. */
  c1 = 0; c2 = 0;
  /** Gravity term g(θ) (holding torque), N·m. */
  g1 = 0; g2 = 0;
  /** End-point position P, m, velocity J θ̇, m/s, and velocity-product acceleration J̇ θ̇, m/s² (P̈ = J θ̈ + J̇ θ̇). */
  x = 0; y = 0; vx = 0; vy = 0; biasAx = 0; biasAy = 0;
  /** End-point Jacobian J, m/rad (row-major). */
  j11 = 0; j12 = 0; j21 = 0; j22 = 0;
  readonly pose = new FiveBarPose();
  readonly motion = new FiveBarMotion();
  readonly scratch = new Float64Array(2);
}

/**
 * D(θ), C(θ, θ̇) θ̇ and g(θ) of a model at joint state (θ, θ̇), and the end-point acceleration
 * analysis (P̈ = J θ̈ + J̇ θ̇) — the pieces a forward simulation needs (θ̈ = D⁻¹(τ − C θ̇ − g)).
 * Returns the pose status; the terms are valid when it is Assembled (or OutsideJointLimits) and
 * the pose is not singular. Allocation-free.
 */
export function jointSpaceDynamics(
  model: FiveBarModel, theta1: number, theta2: number, dtheta1: number, dtheta2: number, out: JointSpaceDynamics,
): PoseStatus {
  const pose = out.pose;
  const motion = out.motion;
  const status = poseFromJointAngles(model, pose, theta1, theta2, out.scratch);
  if (status === PoseStatus.Unreachable) return status;
  // Columns of D: inertial torques for θ̈ = e_k at θ̇ = 0.
  endPointAcceleration(model, pose, 0, 0, 1, 0, motion);
  inverseDynamics(model, pose, motion);
  out.d11 = motion.tauInertial1;
  out.d12 = motion.tauInertial2;
  endPointAcceleration(model, pose, 0, 0, 0, 1, motion);
  inverseDynamics(model, pose, motion);
  out.d22 = motion.tauInertial2;
  // Velocity terms: θ̈ = 0 at the given θ̇.
  endPointAcceleration(model, pose, dtheta1, dtheta2, 0, 0, motion);
  inverseDynamics(model, pose, motion);
  out.c1 = motion.tauInertial1;
  out.c2 = motion.tauInertial2;
  out.g1 = motion.tauGravity1;
  out.g2 = motion.tauGravity2;
  out.x = pose.x; out.y = pose.y;
  out.vx = motion.vx; out.vy = motion.vy;
  out.biasAx = motion.ax; out.biasAy = motion.ay;
  out.j11 = pose.j11; out.j12 = pose.j12; out.j21 = pose.j21; out.j22 = pose.j22;
  return status;
}

