/**
 * Duty cycles of every architecture: a task path (end point, plus the platform orientation φ for 3-DOF
 * architectures) through waypoints with a motion law per step and dwells, sampled once per study;
 * along it, per design, inverse kinematics, velocity and acceleration analysis, inverse dynamics in
 * actuated coordinates with the velocity terms and friction, and the per-actuator figures a drive
 * must meet (peak and RMS effort, peak speed, peak power), plus the shortest cycle time the drives
 * allow by time scaling. Everything goes through the `PlanarArchitecture` interface
 * (src/architectures/types.ts): solvePose (q, J, J⁻¹, rod rates) and poseDynamics (D, τ_g).
 *
 * SI units; efforts are N·m for revolute and N for prismatic drives, speeds rad/s or m/s. Task pose
 * t = (x, y[, φ]), task rates ṫ, ẗ; actuated joints q (see types.ts). See docs/duty-cycle.md.
 *
 * Inverse dynamics (Lagrange's equations of the closed chain in the actuated coordinates, derived):
 * with T = ½ q̇ᵀ D(q) q̇ and the holding effort τ_g = ∂V/∂q,
 *   τ = D q̈ + Ḋ q̇ − ½ ∂(q̇ᵀ D q̇)/∂q + τ_g = D q̈ + C(q, q̇) q̇ + τ_g.
 * Kinematics: q̇ = J⁻¹ ṫ, q̈ = J⁻¹ ẗ + (d/dt J⁻¹) ṫ; rod rates β̇ = W q̇ (W the pose's rodRate rows),
 * β̈ = W q̈ + Ẇ q̇. The pose derivatives ∂D/∂t_j, ∂J⁻¹/∂t_j and ∂W/∂t_j come from fourth-order central
 * differences of the architecture's own D, J⁻¹ and W at t ± h e_j, t ± 2h e_j (the task pose is the
 * free coordinate: inverse kinematics is closed-form and smooth, so no forward kinematics is needed);
 * then Ḋ = Σ_j ṫ_j ∂D/∂t_j and ∂D/∂q_k = Σ_j J_jk ∂D/∂t_j. D, J⁻¹, W and τ_g themselves are exact.
 * Every term is exactly linear in q̈ and quadratic in the rates, which the time scaling relies on.
 *
 * Hot path: `DutyCycleAnalysis.run` and `summarise` allocate nothing per sample.
 */
import { metricIndex } from './metrics.js';
import { MOTION_LAWS, pathEnd, pathEndPhi, type CyclePath, type CycleStep, type EndPointState, type JointFriction, type MotionLaw } from '../core/cycle.js';
// The cycle vocabulary lives in src/core/cycle.ts (below src/study, which reads it from study files).
export { MOTION_LAWS, pathEnd, pathEndPhi, type CyclePath, type CycleStep, type EndPointState, type JointFriction, type MotionLaw };
import { PoseStatus, type ArchitectureModelBase, type ArchitecturePose, type DriveAtJoint, type PlanarArchitecture } from '../architectures/types.js';

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
  /** Start time of each step, s, its start point, m, and start orientation, rad. */
  private readonly stepStart: Float64Array;
  private readonly startX: Float64Array;
  private readonly startY: Float64Array;
  private readonly startPhi: Float64Array;
  private readonly law = new Float64Array(4);

  constructor(path: CyclePath) {
    this.path = path;
    const n = path.steps.length;
    this.stepStart = new Float64Array(n + 1);
    this.startX = new Float64Array(n + 1);
    this.startY = new Float64Array(n + 1);
    this.startPhi = new Float64Array(n + 1);
    let t = 0;
    let moveTime = 0;
    let dwellTime = 0;
    let x = path.start[0];
    let y = path.start[1];
    let phi = path.startPhi ?? 0;
    path.steps.forEach((step, k) => {
      if (!(step.time > 0) || !Number.isFinite(step.time)) throw new RangeError(`cycle step ${k + 1}: time must be positive`);
      if (step.kind !== 'dwell' && step.law === 'trapezoidal') {
        const f = step.accelFraction ?? DEFAULT_ACCEL_FRACTION;
        if (!(f > 0 && f <= 0.5)) throw new RangeError(`cycle step ${k + 1}: accelFraction must be in (0, 1/2]`);
      }
      this.stepStart[k] = t;
      this.startX[k] = x;
      this.startY[k] = y;
      this.startPhi[k] = phi;
      t += step.time;
      if (step.kind === 'dwell') dwellTime += step.time;
      else {
        moveTime += step.time;
        if (step.phi !== undefined) phi = step.phi;
      }
      [x, y] = pathEnd({ start: [x, y], steps: [step] });
    });
    this.stepStart[n] = t;
    this.startX[n] = x;
    this.startY[n] = y;
    this.startPhi[n] = phi;
    this.moveTime = moveTime;
    this.dwellTime = dwellTime;
  }

  /** Cycle time at reference timing, s. */
  get cycleTime(): number {
    return this.moveTime + this.dwellTime;
  }

  /**
   * Task state at time t (reference timing) within step `index` (0-based); t is measured from
   * the cycle start and clamped to the step. Allocation-free.
   */
  stepStateAt(index: number, t: number, out: EndPointState): void {
    const step = this.path.steps[index]!;
    this.stepStateAtFraction(index, (t - this.stepStart[index]!) / step.time, out);
  }

  /**
   * Task state at fraction τ ∈ [0, 1] of step `index` (τ = 0 its start, 1 its end). Exact τ keeps
   * the ends of a move exactly at rest (no round-off sign for Coulomb friction). Allocation-free.
   */
  stepStateAtFraction(index: number, fraction: number, out: EndPointState): void {
    const step = this.path.steps[index]!;
    const x0 = this.startX[index]!;
    const y0 = this.startY[index]!;
    const phi0 = this.startPhi[index]!;
    if (step.kind === 'dwell') {
      out.x = x0; out.y = y0; out.vx = 0; out.vy = 0; out.ax = 0; out.ay = 0;
      out.phi = phi0; out.vphi = 0; out.aphi = 0;
      return;
    }
    const T = step.time;
    const law = this.law;
    motionLaw(step.law, fraction, law, step.accelFraction ?? DEFAULT_ACCEL_FRACTION);
    const s = law[0]!;
    const sd = law[1]! / T;
    const sdd = law[2]! / (T * T);
    const turn = step.phi === undefined ? 0 : step.phi - phi0;
    out.phi = phi0 + turn * s; out.vphi = turn * sd; out.aphi = turn * sdd;
    if (step.kind === 'move') {
      const dx = step.to[0] - x0;
      const dy = step.to[1] - y0;
      out.x = x0 + dx * s; out.y = y0 + dy * s;
      out.vx = dx * sd; out.vy = dy * sd;
      out.ax = dx * sdd; out.ay = dy * sdd;
      return;
    }
    // Arc: P = c + r e(ψ), ψ = ψ0 + Δψ s; Ṗ = r ψ̇ e⊥, P̈ = r ψ̈ e⊥ − r ψ̇² e.
    const cx = step.centre[0];
    const cy = step.centre[1];
    const rx = x0 - cx;
    const ry = y0 - cy;
    const r = Math.sqrt(rx * rx + ry * ry);
    const psi = Math.atan2(ry, rx) + step.angle * s;
    const psiDot = step.angle * sd;
    const psiDdot = step.angle * sdd;
    const ex = Math.cos(psi);
    const ey = Math.sin(psi);
    out.x = cx + r * ex; out.y = cy + r * ey;
    out.vx = -r * psiDot * ey; out.vy = r * psiDot * ex;
    out.ax = -r * psiDdot * ey - r * psiDot * psiDot * ex;
    out.ay = r * psiDdot * ex - r * psiDot * psiDot * ey;
  }

  /** Task state at time t ∈ [0, cycleTime] (reference timing). At a step boundary the later step wins. */
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
 * and effort are constant there). Σ weight over moves = moveTime, over dwells = dwellTime.
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
  /** Orientation φ (rad), its rate and acceleration (3-DOF paths; 0 when the path does not turn). */
  readonly phi: Float64Array; readonly vphi: Float64Array; readonly aphi: Float64Array;
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
    this.phi = new Float64Array(count); this.vphi = new Float64Array(count); this.aphi = new Float64Array(count);
    this.moveTime = trajectory.moveTime;
    this.dwellTime = trajectory.dwellTime;
    const state: EndPointState = { x: 0, y: 0, vx: 0, vy: 0, ax: 0, ay: 0, phi: 0, vphi: 0, aphi: 0 };
    let node = 0;
    let t0 = 0;
    steps.forEach((step, k) => {
      const put = (t: number, fraction: number, w: number, moving: number): void => {
        trajectory.stepStateAtFraction(k, fraction, state);
        this.time[node] = t; this.weight[node] = w; this.moving[node] = moving;
        this.x[node] = state.x; this.y[node] = state.y;
        this.vx[node] = state.vx; this.vy[node] = state.vy;
        this.ax[node] = state.ax; this.ay[node] = state.ay;
        this.phi[node] = state.phi!; this.vphi[node] = state.vphi!; this.aphi[node] = state.aphi!;
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
// Kinematics and dynamics at one instant, any architecture
// ------------------------------------------------------------------------------------------------

/** Largest number of actuators (and task coordinates). */
const MAX_DOF = 3;

/**
 * Differentiation steps: h = STEP_FRACTION · footprint for x and y (m), and STEP_PHI for φ (rad). With
 * the fourth-order stencil the truncation error is O((h/ℓ)⁴), ℓ the distance to a singularity, and the
 * round-off O(ε ℓ/h). At these steps the measured errors of C q̇ stay near 1e-11 relative down to
 * 1/κ ≈ 0.1 (tests/simulate/simulateArchitecture.test.ts, tests/mechanics/reference-mujoco-cycle.test.ts).
 */
const STEP_FRACTION = 3e-5;
const STEP_PHI = 2e-4;
/** Offsets of the stencil, in steps, and their weights: f′ ≈ Σ w f(t + o h) / (12 h). */
const STENCIL_OFFSETS = [-2, -1, 1, 2] as const;
const STENCIL_WEIGHTS = [1, -8, 8, -1] as const;

/**
 * Rates, accelerations and efforts at one instant of one design, for any architecture (reusable;
 * one per worker; allocation-free after construction). Use:
 * 1. `solveAt(model, x, y, φ)` — inverse kinematics, D, τ_g and their pose derivatives;
 * 2. `fromTaskMotion(ṫ, ẗ)` (a path) or `fromJointMotion(q̇, q̈)` (a joint state);
 * then read `qd`, `qdd`, `rodRate`, `rodAccel`, `taskVelocity`, `taskAcceleration`, `effortInertial`
 * (D q̈ + C q̇), `effortVelocity` (C q̇) and `effortGravity` (τ_g).
 */
export class CycleDynamics {
  readonly architecture: PlanarArchitecture<ArchitectureModelBase>;
  readonly dof: number;
  /** The pose at the instant (after `solveAt`): q, J, J⁻¹, D, τ_g, rod directions, … */
  readonly pose: ArchitecturePose;
  /** Joint rates q̇ (rad/s or m/s) and accelerations q̈. */
  readonly qd = new Float64Array(MAX_DOF);
  readonly qdd = new Float64Array(MAX_DOF);
  /** Absolute rod angular rates β̇_i (rad/s) and accelerations β̈_i (rad/s²). */
  readonly rodRate = new Float64Array(MAX_DOF);
  readonly rodAccel = new Float64Array(MAX_DOF);
  /** Task rates ṫ = (ẋ, ẏ[, φ̇]) and accelerations ẗ. */
  readonly taskVelocity = new Float64Array(MAX_DOF);
  readonly taskAcceleration = new Float64Array(MAX_DOF);
  /** Velocity-product part of the task acceleration, J̇ q̇ (ẗ = J q̈ + J̇ q̇). */
  readonly taskBias = new Float64Array(MAX_DOF);
  /** Efforts: D q̈ + C q̇, C q̇ alone, and τ_g (N·m or N per joint). */
  readonly effortInertial = new Float64Array(MAX_DOF);
  readonly effortVelocity = new Float64Array(MAX_DOF);
  readonly effortGravity = new Float64Array(MAX_DOF);
  /** ∂D/∂t_j, ∂J⁻¹/∂t_j, ∂W/∂t_j (W the rod-rate rows): block j of n² entries each. */
  readonly dD: Float64Array;
  readonly dJinv: Float64Array;
  readonly dRod: Float64Array;
  private readonly probe: ArchitecturePose;
  private readonly scratch = new Float64Array(2 * MAX_DOF * MAX_DOF);
  private readonly fkGuess = new Float64Array(MAX_DOF);

  constructor(architecture: PlanarArchitecture<ArchitectureModelBase>) {
    this.architecture = architecture;
    this.dof = architecture.dof;
    this.pose = architecture.createPose();
    this.probe = architecture.createPose();
    const n = this.dof;
    this.dD = new Float64Array(n * n * n);
    this.dJinv = new Float64Array(n * n * n);
    this.dRod = new Float64Array(n * n * n);
  }

  /**
   * Solves the pose at (x, y[, φ]) with its dynamics and the pose derivatives. Returns the pose
   * status; the derivatives are valid when it is not Unreachable (Unreachable is also returned when
   * a stencil point, within 4e-4 footprints, cannot be reached).
   */
  solveAt(model: ArchitectureModelBase, x: number, y: number, phi = 0): PoseStatus {
    const arch = this.architecture;
    const status = arch.solvePose(model, this.pose, x, y, phi);
    if (status === PoseStatus.Unreachable) return status;
    arch.poseDynamics(model, this.pose);
    const n = this.dof;
    const nn = n * n;
    const probe = this.probe;
    this.dD.fill(0);
    this.dJinv.fill(0);
    this.dRod.fill(0);
    const hxy = STEP_FRACTION * arch.footprint(model);
    for (let j = 0; j < n; j++) {
      const h = j === 2 ? STEP_PHI : hxy;
      const base = j * nn;
      for (let s = 0; s < STENCIL_OFFSETS.length; s++) {
        const o = STENCIL_OFFSETS[s]! * h;
        const st = arch.solvePose(model, probe, j === 0 ? x + o : x, j === 1 ? y + o : y, j === 2 ? phi + o : phi);
        if (st === PoseStatus.Unreachable) return PoseStatus.Unreachable;
        arch.poseDynamics(model, probe);
        const w = STENCIL_WEIGHTS[s]! / (12 * h);
        for (let e = 0; e < nn; e++) {
          this.dD[base + e] = this.dD[base + e]! + w * probe.D[e]!;
          this.dJinv[base + e] = this.dJinv[base + e]! + w * probe.Jinv[e]!;
          this.dRod[base + e] = this.dRod[base + e]! + w * probe.rodRate[e]!;
        }
      }
    }
    return status;
  }

  /**
   * Places the mechanism at joint positions q (forward kinematics in the model's assembly mode,
   * starting from `guess` = (x, y[, φ]) for numerical forward kinematics) and solves there as
   * `solveAt`. Returns Unreachable when forward kinematics fails or lands in another working mode.
   */
  solveAtJoints(model: ArchitectureModelBase, q: ArrayLike<number>, guess: ArrayLike<number>): PoseStatus {
    const n = this.dof;
    const t = this.fkGuess;
    for (let k = 0; k < n; k++) t[k] = guess[k] ?? 0;
    if (!this.architecture.forwardKinematics(model, q, t)) return PoseStatus.Unreachable;
    const status = this.solveAt(model, t[0]!, t[1]!, n === 3 ? t[2]! : 0);
    if (status === PoseStatus.Unreachable) return status;
    for (let k = 0; k < n; k++) {
      const gap = this.architecture.actuators[k] === 'revolute' ? wrapToPi(this.pose.q[k]! - q[k]!) : this.pose.q[k]! - q[k]!;
      if (Math.abs(gap) > 1e-7) return PoseStatus.Unreachable;
    }
    return status;
  }

  /** From task rates ṫ and accelerations ẗ (length n): q̇, q̈, β̇, β̈ and the efforts. */
  fromTaskMotion(velocity: ArrayLike<number>, acceleration: ArrayLike<number>): void {
    const n = this.dof;
    const Jinv = this.pose.Jinv;
    for (let k = 0; k < n; k++) {
      this.taskVelocity[k] = velocity[k]!;
      this.taskAcceleration[k] = acceleration[k]!;
    }
    // q̇ = J⁻¹ ṫ; bias b = (d/dt J⁻¹) ṫ; q̈ = J⁻¹ ẗ + b.
    const bias = this.scratch;
    this.rateDerivative(this.dJinv, this.taskVelocity, this.taskVelocity, bias);
    for (let a = 0; a < n; a++) {
      let v = 0;
      let acc = bias[a]!;
      for (let k = 0; k < n; k++) {
        v += Jinv[a * n + k]! * this.taskVelocity[k]!;
        acc += Jinv[a * n + k]! * this.taskAcceleration[k]!;
      }
      this.qd[a] = v;
      this.qdd[a] = acc;
    }
    this.finishTaskBias(bias);
    this.finishRodsAndEfforts();
  }

  /** From joint rates q̇ and accelerations q̈ (length n): ṫ = J q̇, ẗ = J q̈ + J̇ q̇, β̇, β̈ and the efforts. */
  fromJointMotion(qd: ArrayLike<number>, qdd: ArrayLike<number>): void {
    const n = this.dof;
    const J = this.pose.J;
    for (let a = 0; a < n; a++) {
      this.qd[a] = qd[a]!;
      this.qdd[a] = qdd[a]!;
      let v = 0;
      for (let k = 0; k < n; k++) v += J[a * n + k]! * qd[k]!;
      this.taskVelocity[a] = v;
    }
    const bias = this.scratch;
    this.rateDerivative(this.dJinv, this.taskVelocity, this.taskVelocity, bias);
    // q̈ = J⁻¹ ẗ + b  ⇒  ẗ = J (q̈ − b).
    for (let a = 0; a < n; a++) {
      let acc = 0;
      for (let k = 0; k < n; k++) acc += J[a * n + k]! * (qdd[k]! - bias[k]!);
      this.taskAcceleration[a] = acc;
    }
    this.finishTaskBias(bias);
    this.finishRodsAndEfforts();
  }

  /** out = Σ_j ṫ_j (∂M/∂t_j) v for a field M of n×n blocks. */
  private rateDerivative(field: Float64Array, rates: Float64Array, v: ArrayLike<number>, out: Float64Array): void {
    const n = this.dof;
    const nn = n * n;
    for (let a = 0; a < n; a++) {
      let s = 0;
      for (let j = 0; j < n; j++) {
        const r = rates[j]!;
        if (r === 0) continue;
        let row = 0;
        for (let k = 0; k < n; k++) row += field[j * nn + a * n + k]! * v[k]!;
        s += r * row;
      }
      out[a] = s;
    }
  }

  /** J̇ q̇ = −J b (from J J⁻¹ = I). */
  private finishTaskBias(bias: Float64Array): void {
    const n = this.dof;
    const J = this.pose.J;
    for (let a = 0; a < n; a++) {
      let s = 0;
      for (let k = 0; k < n; k++) s -= J[a * n + k]! * bias[k]!;
      this.taskBias[a] = s;
    }
  }

  private finishRodsAndEfforts(): void {
    const n = this.dof;
    const nn = n * n;
    const { D, J, rodRate, tauG } = this.pose;
    const qd = this.qd;
    const tmp = this.scratch;
    // β̇ = W q̇, β̈ = W q̈ + Ẇ q̇.
    this.rateDerivative(this.dRod, this.taskVelocity, qd, tmp);
    for (let i = 0; i < n; i++) {
      let v = 0;
      let acc = tmp[i]!;
      for (let k = 0; k < n; k++) {
        v += rodRate[i * n + k]! * qd[k]!;
        acc += rodRate[i * n + k]! * this.qdd[k]!;
      }
      this.rodRate[i] = v;
      this.rodAccel[i] = acc;
    }
    // C q̇ = Ḋ q̇ − ½ ∂(q̇ᵀDq̇)/∂q, with ∂/∂q_a = Σ_j J_ja ∂/∂t_j.
    this.rateDerivative(this.dD, this.taskVelocity, qd, tmp);
    const quad = this.scratch.subarray(MAX_DOF, 2 * MAX_DOF);
    for (let j = 0; j < n; j++) {
      let s = 0;
      for (let a = 0; a < n; a++) {
        let row = 0;
        for (let b = 0; b < n; b++) row += this.dD[j * nn + a * n + b]! * qd[b]!;
        s += qd[a]! * row;
      }
      quad[j] = s;
    }
    for (let a = 0; a < n; a++) {
      let grad = 0;
      for (let j = 0; j < n; j++) grad += J[j * n + a]! * quad[j]!;
      const velocity = tmp[a]! - 0.5 * grad;
      let inertial = velocity;
      for (let b = 0; b < n; b++) inertial += D[a * n + b]! * this.qdd[b]!;
      this.effortVelocity[a] = velocity;
      this.effortInertial[a] = inertial;
      this.effortGravity[a] = tauG[a]!;
    }
  }
}

/** Angle wrapped to (−π, π]. */
function wrapToPi(angle: number): number {
  let a = angle % (2 * Math.PI);
  if (a <= -Math.PI) a += 2 * Math.PI;
  else if (a > Math.PI) a -= 2 * Math.PI;
  return a;
}

/** Joint-side drive limits of one design, per actuator: peak and rated effort (N·m or N) and speed (rad/s or m/s). */
export interface CycleDriveLimits {
  readonly peakTorque: readonly number[];
  readonly ratedTorque: readonly number[];
  readonly speed: readonly number[];
}

/** Cycle limits from drives referred to their joints (η N τ_peak, η N τ_rated, ω_max/N or their screw equivalents). */
export function cycleDriveLimits(drives: readonly DriveAtJoint[] | null): CycleDriveLimits | null {
  if (!drives) return null;
  return { peakTorque: drives.map((d) => d.peakEffort), ratedTorque: drives.map((d) => d.ratedEffort), speed: drives.map((d) => d.maxSpeed) };
}

// ------------------------------------------------------------------------------------------------
// Along the cycle
// ------------------------------------------------------------------------------------------------

/** Per-actuator figures of one cycle (reusable; every field is overwritten by `summarise`). */
export class CycleSummary {
  /** Every node assembled and non-singular; when false, every figure below is +∞. */
  assembled = false;
  /** Cycle time the figures are for, s, and the time scale of the moves against reference timing. */
  cycleTime = 0;
  timeScale = 1;
  /** Number of actuators the figures are for. */
  actuators = 0;
  /** Per actuator: max |τ_i| (N·m or N), √(time-mean of τ_i²), max |q̇_i| (rad/s or m/s), max |τ_i q̇_i| (W). */
  readonly peakTorque = new Float64Array(MAX_DOF);
  readonly rmsTorque = new Float64Array(MAX_DOF);
  readonly peakSpeed = new Float64Array(MAX_DOF);
  readonly peakPower = new Float64Array(MAX_DOF);
  /** Shortest cycle time such that this and every slower pace meet the limits, s (NaN without limits, +∞ when none does). */
  minCycleTime = Number.NaN;
  get peakTorque1(): number { return this.peakTorque[0]!; }
  get peakTorque2(): number { return this.peakTorque[1]!; }
  get peakTorque3(): number { return this.peakTorque[2]!; }
  get rmsTorque1(): number { return this.rmsTorque[0]!; }
  get rmsTorque2(): number { return this.rmsTorque[1]!; }
  get rmsTorque3(): number { return this.rmsTorque[2]!; }
  get peakSpeed1(): number { return this.peakSpeed[0]!; }
  get peakSpeed2(): number { return this.peakSpeed[1]!; }
  get peakSpeed3(): number { return this.peakSpeed[2]!; }
  get peakPower1(): number { return this.peakPower[0]!; }
  get peakPower2(): number { return this.peakPower[1]!; }
  get peakPower3(): number { return this.peakPower[2]!; }
}

/** Per-node arrays, one Float64Array per actuator. */
function perActuator(n: number, count: number): Float64Array[] {
  return Array.from({ length: n }, () => new Float64Array(count));
}

/**
 * Inverse dynamics along a sampled cycle for one design at a time. Made once per study and
 * architecture (owns every per-node buffer); `run(model)` solves the cycle at reference timing and
 * keeps, per node and actuator, the three parts of the effort that scale differently with the pace:
 *
 *   moves timed s times slower: q̇ → q̇/s, q̈ → q̈/s², and because C(q, q̇) is linear in q̇,
 *   τ(s) = [τ_g + f_c sign q̇] + [f_v q̇]/s + [D q̈ + C q̇]/s²        (derived; dwells do not change)
 *
 * so `summarise` gives the figures at any pace, and the shortest feasible cycle time, without
 * solving the mechanism again.
 */
export class DutyCycleAnalysis {
  readonly samples: CycleSamples;
  readonly architecture: PlanarArchitecture<ArchitectureModelBase>;
  readonly dof: number;
  readonly friction: readonly JointFriction[] | null;
  /** Per actuator and node, at reference timing: q (rad or m), q̇, q̈. */
  readonly q: Float64Array[];
  readonly qd: Float64Array[];
  readonly qdd: Float64Array[];
  /** Effort parts at reference timing: constant (τ_g + Coulomb), ∝ 1/s (viscous), ∝ 1/s² (D q̈ + C q̇). */
  readonly effortConstant: Float64Array[];
  readonly effortViscous: Float64Array[];
  readonly effortInertial: Float64Array[];
  /** Holding effort τ_g alone (N·m or N) and the diagonal D_ii of the joint-space inertia (drive inertia included), per node. */
  readonly effortGravity: Float64Array[];
  readonly inertiaDiagonal: Float64Array[];
  /** Efforts τ_i at the pace of the last `summarise`. */
  readonly torque: Float64Array[];
  /** False after `run` when some node could not be assembled (or was singular). */
  assembled = false;
  private readonly dynamics: CycleDynamics;
  private readonly velocity = new Float64Array(MAX_DOF);
  private readonly acceleration = new Float64Array(MAX_DOF);

  constructor(samples: CycleSamples, friction: readonly JointFriction[] | null, architecture: PlanarArchitecture<ArchitectureModelBase>) {
    this.samples = samples;
    this.friction = friction;
    this.architecture = architecture;
    const n = architecture.dof;
    this.dof = n;
    if (friction && friction.length < n) throw new RangeError(`friction: ${n} actuators need ${n} entries`);
    const count = samples.count;
    this.q = perActuator(n, count);
    this.qd = perActuator(n, count);
    this.qdd = perActuator(n, count);
    this.effortConstant = perActuator(n, count);
    this.effortViscous = perActuator(n, count);
    this.effortInertial = perActuator(n, count);
    this.effortGravity = perActuator(n, count);
    this.inertiaDiagonal = perActuator(n, count);
    this.torque = perActuator(n, count);
    this.dynamics = new CycleDynamics(architecture);
  }

  // Two-actuator names kept from the five-bar (joint 1 and 2).
  get theta1(): Float64Array { return this.q[0]!; }
  get theta2(): Float64Array { return this.q[1]!; }
  get dtheta1(): Float64Array { return this.qd[0]!; }
  get dtheta2(): Float64Array { return this.qd[1]!; }
  get ddtheta1(): Float64Array { return this.qdd[0]!; }
  get ddtheta2(): Float64Array { return this.qdd[1]!; }
  get torque1(): Float64Array { return this.torque[0]!; }
  get torque2(): Float64Array { return this.torque[1]!; }

  /** Solves every node for `model`; returns false (and stops) at the first node that cannot be assembled. */
  run(model: ArchitectureModelBase): boolean {
    const s = this.samples;
    const n = this.dof;
    const dyn = this.dynamics;
    const f = this.friction;
    const v = this.velocity;
    const a = this.acceleration;
    for (let k = 0; k < s.count; k++) {
      const status = dyn.solveAt(model, s.x[k]!, s.y[k]!, n === 3 ? s.phi[k]! : 0);
      if (status !== PoseStatus.Assembled || dyn.pose.inverseCondition === 0) {
        this.assembled = false;
        return false;
      }
      v[0] = s.vx[k]!; v[1] = s.vy[k]!; v[2] = s.vphi[k]!;
      a[0] = s.ax[k]!; a[1] = s.ay[k]!; a[2] = s.aphi[k]!;
      dyn.fromTaskMotion(v, a);
      for (let i = 0; i < n; i++) {
        const rate = dyn.qd[i]!;
        const coulomb = f ? f[i]!.coulomb : 0;
        this.q[i]![k] = dyn.pose.q[i]!;
        this.qd[i]![k] = rate;
        this.qdd[i]![k] = dyn.qdd[i]!;
        this.effortConstant[i]![k] = dyn.effortGravity[i]! + (rate > 0 ? coulomb : rate < 0 ? -coulomb : 0);
        this.effortViscous[i]![k] = (f ? f[i]!.viscous : 0) * rate;
        this.effortInertial[i]![k] = dyn.effortInertial[i]!;
        this.effortGravity[i]![k] = dyn.effortGravity[i]!;
        this.inertiaDiagonal[i]![k] = dyn.pose.D[i * n + i]!;
      }
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
   * and with `limits` the shortest feasible cycle time. Fills `torque` at that pace.
   */
  summarise(timeScale: number, limits: CycleDriveLimits | null, out: CycleSummary): CycleSummary {
    const s = this.samples;
    const n = this.dof;
    out.timeScale = timeScale;
    out.cycleTime = timeScale * s.moveTime + s.dwellTime;
    out.actuators = n;
    out.peakTorque.fill(Number.NaN); out.rmsTorque.fill(Number.NaN); out.peakSpeed.fill(Number.NaN); out.peakPower.fill(Number.NaN);
    if (!this.assembled) {
      out.assembled = false;
      for (let i = 0; i < n; i++) out.peakTorque[i] = out.rmsTorque[i] = out.peakSpeed[i] = out.peakPower[i] = Infinity;
      out.minCycleTime = limits ? Infinity : Number.NaN;
      return out;
    }
    out.assembled = true;
    const u = 1 / timeScale;
    const u2 = u * u;
    for (let i = 0; i < n; i++) {
      const constant = this.effortConstant[i]!;
      const viscous = this.effortViscous[i]!;
      const inertial = this.effortInertial[i]!;
      const rate = this.qd[i]!;
      const torque = this.torque[i]!;
      let peakT = 0, peakW = 0, peakP = 0, sq = 0;
      for (let k = 0; k < s.count; k++) {
        const t = constant[k]! + viscous[k]! * u + inertial[k]! * u2;
        torque[k] = t;
        const w = rate[k]! * u;
        // Move weights are reference-time widths: they stretch with the moves.
        const weight = s.moving[k] === 1 ? s.weight[k]! * timeScale : s.weight[k]!;
        sq += weight * t * t;
        const at = Math.abs(t), aw = Math.abs(w);
        if (at > peakT) peakT = at;
        if (aw > peakW) peakW = aw;
        if (at * aw > peakP) peakP = at * aw;
      }
      out.peakTorque[i] = peakT;
      out.rmsTorque[i] = Math.sqrt(sq / out.cycleTime);
      out.peakSpeed[i] = peakW;
      out.peakPower[i] = peakP;
    }
    out.minCycleTime = limits ? this.minCycleTime(limits) : Number.NaN;
    return out;
  }

  /**
   * Shortest cycle time T* such that the cycle meets the limits at T* and at every slower pace
   * (moves scaled, dwells fixed), s; +∞ when even an infinitely slow cycle fails (|τ_g + f_c| above
   * the peak or RMS limit). With u = 1/s: per node the effort is a + b u + c u² and the first u where
   * it leaves [−L, L] is a root of a quadratic (closed form); speed bounds u ≤ ω_lim/|q̇|; the mean
   * square over the cycle is (Q(u) + E u)/(T_m + T_d u) with Q a quartic of moment sums, whose first
   * crossing of L_rms² is found by scanning and bisection on that polynomial (O(1) per trial).
   */
  minCycleTime(limits: CycleDriveLimits): number {
    if (!this.assembled) return Infinity;
    const s = this.samples;
    let uMax = Infinity;
    for (let axis = 0; axis < this.dof; axis++) {
      const bound = this.peakAndSpeedBound(axis, limits);
      if (bound < uMax) uMax = bound;
    }
    for (let axis = 0; axis < this.dof; axis++) {
      const bound = this.rmsBound(axis, limits.ratedTorque[axis]!, uMax);
      if (bound < uMax) uMax = bound;
    }
    if (s.moveTime === 0) return uMax > 0 ? s.dwellTime : Infinity;
    return s.moveTime / uMax + s.dwellTime;
  }

  /** Largest u for which the peak-effort and speed limits of one axis hold on [0, u] (0 when none does: T* = ∞). */
  private peakAndSpeedBound(axis: number, limits: CycleDriveLimits): number {
    const s = this.samples;
    const constant = this.effortConstant[axis]!;
    const viscous = this.effortViscous[axis]!;
    const inertial = this.effortInertial[axis]!;
    const rate = this.qd[axis]!;
    const peak = limits.peakTorque[axis]!;
    const speed = limits.speed[axis]!;
    let uMax = Infinity;
    for (let k = 0; k < s.count; k++) {
      const a = constant[k]!;
      if (Math.abs(a) > peak) return 0;
      const b = viscous[k]!;
      const c = inertial[k]!;
      const upper = firstPositiveRoot(c, b, a - peak);
      if (upper < uMax) uMax = upper;
      const lower = firstPositiveRoot(c, b, a + peak);
      if (lower < uMax) uMax = lower;
      const w = Math.abs(rate[k]!);
      if (w > 0 && speed / w < uMax) uMax = speed / w;
    }
    return uMax;
  }

  /** Largest u ≤ uMax for which the RMS limit of one axis holds on [0, u]: h(u) = Q(u) + E u − L² (T_m + T_d u) ≤ 0. */
  private rmsBound(axis: number, rated: number, uMax: number): number {
    const s = this.samples;
    const constant = this.effortConstant[axis]!;
    const viscous = this.effortViscous[axis]!;
    const inertial = this.effortInertial[axis]!;
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
    const limitSq = rated * rated;
    if (s.moveTime === 0) return dwell > limitSq * s.dwellTime ? 0 : Infinity;
    const q0 = saa - limitSq * s.moveTime;
    const q1 = 2 * sab + dwell - limitSq * s.dwellTime;
    const q2 = sbb + 2 * sac;
    const q3 = 2 * sbc;
    const q4 = scc;
    const h = (x: number): number => q0 + x * (q1 + x * (q2 + x * (q3 + x * q4)));
    if (q0 > 0) return 0;
    // Scan up to the peak/speed bound (or, without one, until h turns positive).
    let top = uMax;
    if (!Number.isFinite(top)) {
      top = 1;
      for (let i = 0; i < 200 && h(top) <= 0; i++) top *= 2;
      if (h(top) <= 0) return Infinity;
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
        return lo;
      }
      previous = x;
    }
    return Infinity;
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

// ------------------------------------------------------------------------------------------------
// Cycle metrics of one design
// ------------------------------------------------------------------------------------------------

const CYCLE_METRIC = {
  peakTorque: metricIndex('cycle_peak_torque'),
  rmsTorque: metricIndex('cycle_rms_torque'),
  peakSpeed: metricIndex('cycle_peak_speed'),
  peakPower: metricIndex('cycle_peak_power'),
  minCycleTime: metricIndex('min_cycle_time'),
  peakTorqueOf: [1, 2, 3].map((i) => metricIndex(`cycle_peak_torque_${i}`)),
  rmsTorqueOf: [1, 2, 3].map((i) => metricIndex(`cycle_rms_torque_${i}`)),
  peakSpeedOf: [1, 2, 3].map((i) => metricIndex(`cycle_peak_speed_${i}`)),
  peakPowerOf: [1, 2, 3].map((i) => metricIndex(`cycle_peak_power_${i}`)),
} as const;

/** The pace a study evaluates its cycle at: cycle_time, else 1/required_rate, else the steps' own times (null). */
export function evaluatedCycleTime(duty: { readonly cycleTime: number | null; readonly requiredRate: number | null }): number | null {
  return duty.cycleTime ?? (duty.requiredRate ? 1 / duty.requiredRate : null);
}

/**
 * Duty-cycle metrics of one design (docs/duty-cycle.md), written into `metrics` (METRICS order): the
 * figures at the study's pace and, with limits, the shortest cycle time. The unsuffixed metric is
 * the largest over the actuators. A cycle that leaves the assembled, non-singular poses gives +∞
 * for every figure.
 */
export function writeCycleMetrics(
  analysis: DutyCycleAnalysis,
  model: ArchitectureModelBase,
  duty: { readonly cycleTime: number | null; readonly requiredRate: number | null },
  limits: CycleDriveLimits | null,
  summary: CycleSummary,
  metrics: Float64Array,
): void {
  analysis.run(model);
  const cycleTime = evaluatedCycleTime(duty);
  const r = analysis.summarise(cycleTime === null ? 1 : analysis.timeScaleFor(cycleTime), limits, summary);
  let peakTorque = 0, rmsTorque = 0, peakSpeed = 0, peakPower = 0;
  for (let i = 0; i < analysis.dof; i++) {
    metrics[CYCLE_METRIC.peakTorqueOf[i]!] = r.peakTorque[i]!;
    metrics[CYCLE_METRIC.rmsTorqueOf[i]!] = r.rmsTorque[i]!;
    metrics[CYCLE_METRIC.peakSpeedOf[i]!] = r.peakSpeed[i]!;
    metrics[CYCLE_METRIC.peakPowerOf[i]!] = r.peakPower[i]!;
    peakTorque = Math.max(peakTorque, r.peakTorque[i]!);
    rmsTorque = Math.max(rmsTorque, r.rmsTorque[i]!);
    peakSpeed = Math.max(peakSpeed, r.peakSpeed[i]!);
    peakPower = Math.max(peakPower, r.peakPower[i]!);
  }
  metrics[CYCLE_METRIC.peakTorque] = peakTorque;
  metrics[CYCLE_METRIC.rmsTorque] = rmsTorque;
  metrics[CYCLE_METRIC.peakSpeed] = peakSpeed;
  metrics[CYCLE_METRIC.peakPower] = peakPower;
  metrics[CYCLE_METRIC.minCycleTime] = r.minCycleTime;
}
