/**
 * Duty cycles of the five-bar: an end-point path through waypoints with a motion law per step and
 * dwells, sampled once per study; along it, per design, inverse kinematics, velocity and
 * acceleration analysis, inverse dynamics in actuated coordinates with the velocity terms and
 * friction, and the per-actuator figures a drive must meet (peak and RMS torque, peak speed, peak
 * power), plus the shortest cycle time the drives allow by time scaling.
 *
 * Everything is SI. Conventions follow fivebar.ts: e_i = e(θ_i) crank direction, u_i rod unit
 * vector, s_i = cross(e_i, u_i), e⊥ = (−e_y, e_x), cross(a, b) = a_x b_y − a_y b_x, β_i the absolute
 * rod angle (u_i = e(β_i)). See docs/duty-cycle.md for the derivations.
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
 * with V_k, w_k the velocity maps of body k (∂v_k/∂θ̇, ∂ω_k/∂θ̇) and a_k, α_k its actual
 * accelerations; the velocity terms come from the centripetal parts of a_k and α_k. Planar bodies
 * have no gyroscopic term. g(θ) is the holding torque τ_g of poseDynamics.
 *
 * Hot path: `DutyCycleAnalysis.run` and `summarise` allocate nothing per sample.
 */
import { FiveBarPose, PoseStatus, forwardKinematics, jointRangeMargin, solvePose, type FiveBarModel } from './fivebar.js';
import { inverseCondition2 } from './linalg2.js';
import { MOTION_LAWS, pathEnd, type CyclePath, type CycleStep, type EndPointState, type JointFriction, type MotionLaw } from '../core/cycle.js';
// The cycle vocabulary lives in src/core/cycle.ts (below src/study, which reads it from study files).
export { MOTION_LAWS, pathEnd, type CyclePath, type CycleStep, type EndPointState, type JointFriction, type MotionLaw };

// ------------------------------------------------------------------------------------------------
// Motion laws
// ------------------------------------------------------------------------------------------------

/**
 * Normalised motion law s(τ) on τ ∈ [0, 1], s(0) = 0, s(1) = 1.
 * - `cycloidal`: s = τ − sin(2πτ)/(2π); zero velocity and acceleration at both ends.
 * - `poly5`: 10τ³ − 15τ⁴ + 6τ⁵; zero velocity and acceleration at both ends.
 * - `poly7`: 35τ⁴ − 84τ⁵ + 70τ⁶ − 20τ⁷; zero velocity, acceleration and jerk at both ends.
 * - `trapezoidal`: trapezoidal velocity (constant acceleration, cruise, constant deceleration);
 *   the acceleration and deceleration phases each last `accelFraction` of the step (default 1/3).
 * - `constant-speed`: s = τ (velocity jumps at the ends; for closed loops such as a full circle
 *   travelled at constant speed, programmatic use only).
 */

/** Default share of a trapezoidal step spent accelerating (and the same decelerating). */
export const DEFAULT_ACCEL_FRACTION = 1 / 3;

/**
 * Writes s(τ), s′(τ), s″(τ), s‴(τ) (derivatives with respect to τ) into out[0..3].
 * τ is clamped to [0, 1]; `accelFraction` (0 < f ≤ 1/2) is used by `trapezoidal` only.
 */
export function motionLaw(law: MotionLaw, tau: number, out: Float64Array, accelFraction = DEFAULT_ACCEL_FRACTION): void {
  const t = tau < 0 ? 0 : tau > 1 ? 1 : tau;
  switch (law) {
    case 'cycloidal': {
      const w = 2 * Math.PI;
      out[0] = t - Math.sin(w * t) / w;
      out[1] = 1 - Math.cos(w * t);
      out[2] = w * Math.sin(w * t);
      out[3] = w * w * Math.cos(w * t);
      return;
    }
    case 'poly5': {
      const t2 = t * t;
      out[0] = t2 * t * (10 - 15 * t + 6 * t2);
      out[1] = 30 * t2 * (1 - 2 * t + t2);
      out[2] = 60 * t * (1 - 3 * t + 2 * t2);
      out[3] = 60 - 360 * t + 360 * t2;
      return;
    }
    case 'poly7': {
      const t2 = t * t;
      const t3 = t2 * t;
      out[0] = t2 * t2 * (35 - 84 * t + 70 * t2 - 20 * t3);
      out[1] = 140 * t3 * (1 - 3 * t + 3 * t2 - t3);
      out[2] = 420 * t2 * (1 - 4 * t + 5 * t2 - 2 * t3);
      out[3] = 840 * t * (1 - 6 * t + 10 * t2 - 5 * t3);
      return;
    }
    case 'trapezoidal': {
      const f = accelFraction;
      const v = 1 / (1 - f);
      const a = v / f;
      if (t < f) {
        out[0] = 0.5 * a * t * t;
        out[1] = a * t;
        out[2] = a;
      } else if (t <= 1 - f) {
        out[0] = 0.5 * a * f * f + v * (t - f);
        out[1] = v;
        out[2] = 0;
      } else {
        const r = 1 - t;
        out[0] = 1 - 0.5 * a * r * r;
        out[1] = a * r;
        out[2] = -a;
      }
      out[3] = 0;
      return;
    }
    case 'constant-speed':
      out[0] = t;
      out[1] = 1;
      out[2] = 0;
      out[3] = 0;
      return;
  }
}

// ------------------------------------------------------------------------------------------------
// Cycle path
// ------------------------------------------------------------------------------------------------

/**
 * A cycle path compiled for evaluation at any time: step start times and points. Reference timing
 * is the steps' own times; `DutyCycleAnalysis` scales the moves from there.
 */
export class CycleTrajectory {
  readonly path: CyclePath;
  /** Total time of the moves and arcs, s. */
  readonly moveTime: number;
  /** Total dwell time, s. */
  readonly dwellTime: number;
  /** Start time of each step, s, and its start point, m. */
  private readonly stepStart: Float64Array;
  private readonly startX: Float64Array;
  private readonly startY: Float64Array;
  private readonly law = new Float64Array(4);

  constructor(path: CyclePath) {
    this.path = path;
    const n = path.steps.length;
    this.stepStart = new Float64Array(n + 1);
    this.startX = new Float64Array(n + 1);
    this.startY = new Float64Array(n + 1);
    let t = 0;
    let moveTime = 0;
    let dwellTime = 0;
    let x = path.start[0];
    let y = path.start[1];
    path.steps.forEach((step, k) => {
      if (!(step.time > 0) || !Number.isFinite(step.time)) throw new RangeError(`cycle step ${k + 1}: time must be positive`);
      if (step.kind !== 'dwell' && step.law === 'trapezoidal') {
        const f = step.accelFraction ?? DEFAULT_ACCEL_FRACTION;
        if (!(f > 0 && f <= 0.5)) throw new RangeError(`cycle step ${k + 1}: accelFraction must be in (0, 1/2]`);
      }
      this.stepStart[k] = t;
      this.startX[k] = x;
      this.startY[k] = y;
      t += step.time;
      if (step.kind === 'dwell') dwellTime += step.time;
      else moveTime += step.time;
      [x, y] = pathEnd({ start: [x, y], steps: [step] });
    });
    this.stepStart[n] = t;
    this.startX[n] = x;
    this.startY[n] = y;
    this.moveTime = moveTime;
    this.dwellTime = dwellTime;
  }

  /** Cycle time at reference timing, s. */
  get cycleTime(): number {
    return this.moveTime + this.dwellTime;
  }

  /**
   * End-point state at time t (reference timing) within step `index` (0-based); t is measured from
   * the cycle start and clamped to the step. Allocation-free.
   */
  stepStateAt(index: number, t: number, out: EndPointState): void {
    const step = this.path.steps[index]!;
    this.stepStateAtFraction(index, (t - this.stepStart[index]!) / step.time, out);
  }

  /**
   * End-point state at fraction τ ∈ [0, 1] of step `index` (τ = 0 its start, 1 its end). Exact τ
   * keeps the ends of a move exactly at rest (no round-off sign for Coulomb friction). Allocation-free.
   */
  stepStateAtFraction(index: number, fraction: number, out: EndPointState): void {
    const step = this.path.steps[index]!;
    const x0 = this.startX[index]!;
    const y0 = this.startY[index]!;
    if (step.kind === 'dwell') {
      out.x = x0; out.y = y0; out.vx = 0; out.vy = 0; out.ax = 0; out.ay = 0;
      return;
    }
    const T = step.time;
    const law = this.law;
    motionLaw(step.law, fraction, law, step.accelFraction ?? DEFAULT_ACCEL_FRACTION);
    const s = law[0]!;
    const sd = law[1]! / T;
    const sdd = law[2]! / (T * T);
    if (step.kind === 'move') {
      const dx = step.to[0] - x0;
      const dy = step.to[1] - y0;
      out.x = x0 + dx * s; out.y = y0 + dy * s;
      out.vx = dx * sd; out.vy = dy * sd;
      out.ax = dx * sdd; out.ay = dy * sdd;
      return;
    }
    // Arc: P = c + r e(φ), φ = φ0 + Δφ s; Ṗ = r φ̇ e⊥, P̈ = r φ̈ e⊥ − r φ̇² e.
    const cx = step.centre[0];
    const cy = step.centre[1];
    const rx = x0 - cx;
    const ry = y0 - cy;
    const r = Math.sqrt(rx * rx + ry * ry);
    const phi = Math.atan2(ry, rx) + step.angle * s;
    const phiDot = step.angle * sd;
    const phiDdot = step.angle * sdd;
    const ex = Math.cos(phi);
    const ey = Math.sin(phi);
    out.x = cx + r * ex; out.y = cy + r * ey;
    out.vx = -r * phiDot * ey; out.vy = r * phiDot * ex;
    out.ax = -r * phiDdot * ey - r * phiDot * phiDot * ex;
    out.ay = r * phiDdot * ex - r * phiDot * phiDot * ey;
  }

  /** End-point state at time t ∈ [0, cycleTime] (reference timing). At a step boundary the later step wins. */
  stateAt(t: number, out: EndPointState): void {
    const n = this.path.steps.length;
    let k = 0;
    while (k < n - 1 && t >= this.stepStart[k + 1]!) k++;
    this.stepStateAt(k, t, out);
  }
}

/**
 * Samples of a cycle in reference timing, with quadrature weights for time integrals: each move or
 * arc gets n_k + 1 nodes (both ends included, n_k ≥ 2 intervals, shared out in proportion to the
 * step times) with trapezoid weights; each dwell gets one node whose weight is its time (the pose
 * and torque are constant there). Σ weight over moves = moveTime, over dwells = dwellTime.
 */
export class CycleSamples {
  readonly count: number;
  readonly time: Float64Array;
  readonly weight: Float64Array;
  /** 1 for a node of a move or arc, 0 for a dwell node. */
  readonly moving: Uint8Array;
  readonly x: Float64Array; readonly y: Float64Array;
  readonly vx: Float64Array; readonly vy: Float64Array;
  readonly ax: Float64Array; readonly ay: Float64Array;
  readonly moveTime: number;
  readonly dwellTime: number;

  /** `samples` is the total node budget (at least 3 per move plus 1 per dwell is always used). */
  constructor(readonly trajectory: CycleTrajectory, samples: number) {
    const steps = trajectory.path.steps;
    const moves = steps.filter((s) => s.kind !== 'dwell');
    const dwells = steps.length - moves.length;
    const budget = Math.max(samples - dwells - moves.length, 2 * moves.length);
    // The small offset settles exact halves the same way for a path and its time-scaled copy.
    const intervals = steps.map((s) => (s.kind === 'dwell' ? 0 : Math.max(2, Math.floor((budget * s.time) / trajectory.moveTime + 0.5 + 1e-9))));
    const count = steps.reduce((sum, s, k) => sum + (s.kind === 'dwell' ? 1 : intervals[k]! + 1), 0);
    this.count = count;
    this.time = new Float64Array(count);
    this.weight = new Float64Array(count);
    this.moving = new Uint8Array(count);
    this.x = new Float64Array(count); this.y = new Float64Array(count);
    this.vx = new Float64Array(count); this.vy = new Float64Array(count);
    this.ax = new Float64Array(count); this.ay = new Float64Array(count);
    this.moveTime = trajectory.moveTime;
    this.dwellTime = trajectory.dwellTime;
    const state: EndPointState = { x: 0, y: 0, vx: 0, vy: 0, ax: 0, ay: 0 };
    let node = 0;
    let t0 = 0;
    steps.forEach((step, k) => {
      const put = (t: number, fraction: number, w: number, moving: number): void => {
        trajectory.stepStateAtFraction(k, fraction, state);
        this.time[node] = t; this.weight[node] = w; this.moving[node] = moving;
        this.x[node] = state.x; this.y[node] = state.y;
        this.vx[node] = state.vx; this.vy[node] = state.vy;
        this.ax[node] = state.ax; this.ay[node] = state.ay;
        node++;
      };
      if (step.kind === 'dwell') {
        put(t0 + step.time / 2, 0.5, step.time, 0);
      } else {
        const n = intervals[k]!;
        const h = step.time / n;
        for (let j = 0; j <= n; j++) put(t0 + j * h, j / n, j === 0 || j === n ? h / 2 : h, 1);
      }
      t0 += step.time;
    });
  }
}

// ------------------------------------------------------------------------------------------------
// Kinematics and dynamics at one instant
// ------------------------------------------------------------------------------------------------


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

// ------------------------------------------------------------------------------------------------
// Along the cycle
// ------------------------------------------------------------------------------------------------

/** Joint-side drive limits of one design: η N τ_peak, η N τ_rated (N·m) and ω_max/N (rad/s) per actuator. */
export interface CycleDriveLimits {
  readonly peakTorque: readonly [number, number];
  readonly ratedTorque: readonly [number, number];
  readonly speed: readonly [number, number];
}

/** Per-actuator figures of one cycle (reusable; every field is overwritten by `summarise`). */
export class CycleSummary {
  /** Every node assembled and non-singular; when false, every figure below is +∞. */
  assembled = false;
  /** Cycle time the figures are for, s, and the time scale of the moves against reference timing. */
  cycleTime = 0;
  timeScale = 1;
  /** max |τ_i| over the cycle, N·m. */
  peakTorque1 = 0; peakTorque2 = 0;
  /** √(time-mean of τ_i²) over the cycle, N·m. */
  rmsTorque1 = 0; rmsTorque2 = 0;
  /** max |θ̇_i|, rad/s. */
  peakSpeed1 = 0; peakSpeed2 = 0;
  /** max |τ_i θ̇_i|, W. */
  peakPower1 = 0; peakPower2 = 0;
  /** Shortest cycle time such that this and every slower pace meet the limits, s (NaN without limits, +∞ when none does). */
  minCycleTime = Number.NaN;
}

/**
 * Inverse dynamics along a sampled cycle for one design at a time. Made once per study (owns
 * every per-node buffer); `run(model)` solves the cycle at reference timing and keeps, per node
 * and actuator, the three parts of the torque that scale differently with the pace:
 *
 *   moves timed s times slower: θ̇ → θ̇/s, θ̈ → θ̈/s², and because C(θ, θ̇) is linear in θ̇,
 *   τ(s) = [g + f_c sign θ̇] + [f_v θ̇]/s + [D θ̈ + C θ̇]/s²        (derived; dwells do not change)
 *
 * so `summarise` gives the figures at any pace, and the shortest feasible cycle time, without
 * solving the mechanism again.
 */
export class DutyCycleAnalysis {
  readonly samples: CycleSamples;
  readonly friction: readonly [JointFriction, JointFriction] | null;
  /** Joint angles θ_i, rad, at reference timing per node. */
  readonly theta1: Float64Array; readonly theta2: Float64Array;
  /** Joint rates θ̇_i (rad/s) and accelerations θ̈_i (rad/s²) at reference timing. */
  readonly dtheta1: Float64Array; readonly dtheta2: Float64Array;
  readonly ddtheta1: Float64Array; readonly ddtheta2: Float64Array;
  /** Torque parts at reference timing, N·m: constant (g + Coulomb), ∝ 1/s (viscous), ∝ 1/s² (D θ̈ + C θ̇). */
  readonly tauConstant1: Float64Array; readonly tauConstant2: Float64Array;
  readonly tauViscous1: Float64Array; readonly tauViscous2: Float64Array;
  readonly tauInertial1: Float64Array; readonly tauInertial2: Float64Array;
  /** Torques τ_i, N·m, at the pace of the last `summarise`. */
  readonly torque1: Float64Array; readonly torque2: Float64Array;
  /** False after `run` when some node could not be assembled (or was singular). */
  assembled = false;
  private readonly pose = new FiveBarPose();
  private readonly motion = new FiveBarMotion();

  constructor(samples: CycleSamples, friction: readonly [JointFriction, JointFriction] | null = null) {
    this.samples = samples;
    this.friction = friction;
    const n = samples.count;
    this.theta1 = new Float64Array(n); this.theta2 = new Float64Array(n);
    this.dtheta1 = new Float64Array(n); this.dtheta2 = new Float64Array(n);
    this.ddtheta1 = new Float64Array(n); this.ddtheta2 = new Float64Array(n);
    this.tauConstant1 = new Float64Array(n); this.tauConstant2 = new Float64Array(n);
    this.tauViscous1 = new Float64Array(n); this.tauViscous2 = new Float64Array(n);
    this.tauInertial1 = new Float64Array(n); this.tauInertial2 = new Float64Array(n);
    this.torque1 = new Float64Array(n); this.torque2 = new Float64Array(n);
  }

  /** Solves every node for `model`; returns false (and stops) at the first node that cannot be assembled. */
  run(model: FiveBarModel): boolean {
    const s = this.samples;
    const pose = this.pose;
    const motion = this.motion;
    const f = this.friction;
    const viscous1 = f ? f[0].viscous : 0;
    const viscous2 = f ? f[1].viscous : 0;
    const coulomb1 = f ? f[0].coulomb : 0;
    const coulomb2 = f ? f[1].coulomb : 0;
    for (let k = 0; k < s.count; k++) {
      const status = solvePose(model, pose, s.x[k]!, s.y[k]!);
      if (status !== PoseStatus.Assembled || pose.inverseCondition === 0) {
        this.assembled = false;
        return false;
      }
      jointRatesFromPath(model, pose, s.vx[k]!, s.vy[k]!, s.ax[k]!, s.ay[k]!, motion);
      inverseDynamics(model, pose, motion);
      const dt1 = motion.dtheta1;
      const dt2 = motion.dtheta2;
      this.theta1[k] = pose.theta1; this.theta2[k] = pose.theta2;
      this.dtheta1[k] = dt1; this.dtheta2[k] = dt2;
      this.ddtheta1[k] = motion.ddtheta1; this.ddtheta2[k] = motion.ddtheta2;
      this.tauConstant1[k] = motion.tauGravity1 + (dt1 > 0 ? coulomb1 : dt1 < 0 ? -coulomb1 : 0);
      this.tauConstant2[k] = motion.tauGravity2 + (dt2 > 0 ? coulomb2 : dt2 < 0 ? -coulomb2 : 0);
      this.tauViscous1[k] = viscous1 * dt1;
      this.tauViscous2[k] = viscous2 * dt2;
      this.tauInertial1[k] = motion.tauInertial1;
      this.tauInertial2[k] = motion.tauInertial2;
    }
    this.assembled = true;
    return true;
  }

  /** Time scale of the moves that gives this cycle time (dwells unchanged); NaN when impossible. */
  timeScaleFor(cycleTime: number): number {
    const s = this.samples;
    if (s.moveTime === 0) return 1;
    const scale = (cycleTime - s.dwellTime) / s.moveTime;
    return scale > 0 ? scale : Number.NaN;
  }

  /**
   * Figures of the cycle with the moves timed `timeScale` times their reference time (after `run`),
   * and with `limits` the shortest feasible cycle time. Fills `torque1/2` at that pace.
   */
  summarise(timeScale: number, limits: CycleDriveLimits | null, out: CycleSummary): CycleSummary {
    const s = this.samples;
    out.timeScale = timeScale;
    out.cycleTime = timeScale * s.moveTime + s.dwellTime;
    if (!this.assembled) {
      out.assembled = false;
      out.peakTorque1 = out.peakTorque2 = out.rmsTorque1 = out.rmsTorque2 = Infinity;
      out.peakSpeed1 = out.peakSpeed2 = out.peakPower1 = out.peakPower2 = Infinity;
      out.minCycleTime = limits ? Infinity : Number.NaN;
      return out;
    }
    out.assembled = true;
    const u = 1 / timeScale;
    const u2 = u * u;
    let peakT1 = 0, peakT2 = 0, peakW1 = 0, peakW2 = 0, peakP1 = 0, peakP2 = 0, sq1 = 0, sq2 = 0;
    for (let k = 0; k < s.count; k++) {
      const t1 = this.tauConstant1[k]! + this.tauViscous1[k]! * u + this.tauInertial1[k]! * u2;
      const t2 = this.tauConstant2[k]! + this.tauViscous2[k]! * u + this.tauInertial2[k]! * u2;
      this.torque1[k] = t1;
      this.torque2[k] = t2;
      const w1 = this.dtheta1[k]! * u;
      const w2 = this.dtheta2[k]! * u;
      // Move weights are reference-time widths: they stretch with the moves.
      const weight = s.moving[k] === 1 ? s.weight[k]! * timeScale : s.weight[k]!;
      sq1 += weight * t1 * t1;
      sq2 += weight * t2 * t2;
      const a1 = Math.abs(t1), a2 = Math.abs(t2), b1 = Math.abs(w1), b2 = Math.abs(w2);
      if (a1 > peakT1) peakT1 = a1;
      if (a2 > peakT2) peakT2 = a2;
      if (b1 > peakW1) peakW1 = b1;
      if (b2 > peakW2) peakW2 = b2;
      if (a1 * b1 > peakP1) peakP1 = a1 * b1;
      if (a2 * b2 > peakP2) peakP2 = a2 * b2;
    }
    out.peakTorque1 = peakT1; out.peakTorque2 = peakT2;
    out.rmsTorque1 = Math.sqrt(sq1 / out.cycleTime);
    out.rmsTorque2 = Math.sqrt(sq2 / out.cycleTime);
    out.peakSpeed1 = peakW1; out.peakSpeed2 = peakW2;
    out.peakPower1 = peakP1; out.peakPower2 = peakP2;
    out.minCycleTime = limits ? this.minCycleTime(limits) : Number.NaN;
    return out;
  }

  /**
   * Shortest cycle time T* such that the cycle meets the limits at T* and at every slower pace
   * (moves scaled, dwells fixed), s; +∞ when even an infinitely slow cycle fails (|g + f_c| above
   * the peak or RMS limit). With u = 1/s: per node the torque is a + b u + c u² and the first u where
   * it leaves [−L, L] is a root of a quadratic (closed form); speed bounds u ≤ ω_lim/|θ̇|; the mean
   * square over the cycle is (Q(u) + E u)/(T_m + T_d u) with Q a quartic of moment sums, whose first
   * crossing of L_rms² is found by scanning and bisection on that polynomial (O(1) per trial).
   */
  minCycleTime(limits: CycleDriveLimits): number {
    if (!this.assembled) return Infinity;
    const s = this.samples;
    let uMax = Infinity;
    for (let axis = 0; axis < 2; axis++) {
      const constant = axis === 0 ? this.tauConstant1 : this.tauConstant2;
      const viscous = axis === 0 ? this.tauViscous1 : this.tauViscous2;
      const inertial = axis === 0 ? this.tauInertial1 : this.tauInertial2;
      const rate = axis === 0 ? this.dtheta1 : this.dtheta2;
      const peak = limits.peakTorque[axis]!;
      const speed = limits.speed[axis]!;
      for (let k = 0; k < s.count; k++) {
        const a = constant[k]!;
        if (Math.abs(a) > peak) return Infinity;
        const b = viscous[k]!;
        const c = inertial[k]!;
        const upper = firstPositiveRoot(c, b, a - peak);
        if (upper < uMax) uMax = upper;
        const lower = firstPositiveRoot(c, b, a + peak);
        if (lower < uMax) uMax = lower;
        const w = Math.abs(rate[k]!);
        if (w > 0 && speed / w < uMax) uMax = speed / w;
      }
    }
    // RMS: h(u) = Q(u) + E u − L² (T_m + T_d u) ≤ 0 on [0, u].
    for (let axis = 0; axis < 2; axis++) {
      const constant = axis === 0 ? this.tauConstant1 : this.tauConstant2;
      const viscous = axis === 0 ? this.tauViscous1 : this.tauViscous2;
      const inertial = axis === 0 ? this.tauInertial1 : this.tauInertial2;
      let saa = 0, sab = 0, sac = 0, sbb = 0, sbc = 0, scc = 0, dwell = 0;
      for (let k = 0; k < s.count; k++) {
        const w = s.weight[k]!;
        const a = constant[k]!;
        if (s.moving[k] === 0) {
          dwell += w * a * a;
          continue;
        }
        const b = viscous[k]!;
        const c = inertial[k]!;
        saa += w * a * a; sab += w * a * b; sac += w * a * c;
        sbb += w * b * b; sbc += w * b * c; scc += w * c * c;
      }
      const limitSq = limits.ratedTorque[axis]! ** 2;
      const q0 = saa - limitSq * s.moveTime;
      const q1 = 2 * sab + dwell - limitSq * s.dwellTime;
      const q2 = sbb + 2 * sac;
      const q3 = 2 * sbc;
      const q4 = scc;
      const h = (x: number): number => q0 + x * (q1 + x * (q2 + x * (q3 + x * q4)));
      if (s.moveTime === 0) {
        if (dwell > limitSq * s.dwellTime) return Infinity;
        continue;
      }
      if (q0 > 0) return Infinity;
      // Scan up to the peak/speed bound (or, without one, until h turns positive).
      let top = uMax;
      if (!Number.isFinite(top)) {
        top = 1;
        for (let i = 0; i < 200 && h(top) <= 0; i++) top *= 2;
        if (h(top) <= 0) continue;
      }
      const steps = 256;
      let previous = 0;
      for (let i = 1; i <= steps; i++) {
        const x = (top * i) / steps;
        if (h(x) > 0) {
          let lo = previous;
          let hi = x;
          for (let it = 0; it < 60; it++) {
            const mid = 0.5 * (lo + hi);
            if (h(mid) > 0) hi = mid;
            else lo = mid;
          }
          if (lo < uMax) uMax = lo;
          break;
        }
        previous = x;
      }
    }
    if (s.moveTime === 0) return s.dwellTime;
    return s.moveTime / uMax + s.dwellTime;
  }
}

/** Smallest u > 0 with c u² + b u + d = 0 (d ≤ 0 or d ≥ 0 given), +∞ when there is none. */
function firstPositiveRoot(c: number, b: number, d: number): number {
  // Exactly on the limit at u = 0 (measure-zero case): counted as leaving it at once (conservative).
  if (d === 0) return b !== 0 || c !== 0 ? 0 : Infinity;
  if (c === 0) {
    if (b === 0) return Infinity;
    const r = -d / b;
    return r > 0 ? r : Infinity;
  }
  const disc = b * b - 4 * c * d;
  if (disc < 0) return Infinity;
  // Stable roots: q = −(b + sign(b) √disc)/2, roots q/c and d/q.
  const root = Math.sqrt(disc);
  const q = -0.5 * (b + (b >= 0 ? root : -root));
  const r1 = q / c;
  const r2 = q !== 0 ? d / q : Infinity;
  let best = Infinity;
  if (r1 > 0 && r1 < best) best = r1;
  if (r2 > 0 && r2 < best) best = r2;
  return best;
}
