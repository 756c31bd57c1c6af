/**
 * Forward simulation of one five-bar design along a duty cycle: the closed chain is integrated as the
 * free chain of freeChain.ts with the loop closure held by Lagrange multipliers and Baumgarte
 * stabilisation, with ODEX (extrapolation, dense output) between the instants where the desired
 * motion is not smooth (step boundaries, trapezoidal phase switches). The actuated joints follow the
 * cycle's θ_d(t), θ̇_d, θ̈_d (inverse kinematics and the acceleration analysis of dutyCycle.ts) under
 *
 * - computed torque: τ = D(θ)(θ̈_d + K_d ė + K_p e) + C(θ, θ̇) θ̇ + g(θ) + f̂(θ̇), with K_p = ω², K_d = 2ζω,
 *   from the reduced model at the measured joint state (jointSpaceDynamics);
 * - PD with gravity compensation: τ = K_p e + K_d ė + g(θ), K_p,i = ω² D_ii(θ_0), K_d,i = 2ζω D_ii(θ_0);
 * - none: τ = 0;
 *
 * with e = θ_d − θ. The plant has joint friction f(θ̇) = f_v θ̇ + f_c tanh(θ̇/ε) (Coulomb friction
 * smoothed over ε so the right-hand side stays smooth; common practice, no source) and may carry an
 * extra end mass the controller does not know about. A ninth state integrates the net power into the
 * chain, ∫(τ − f)·θ̇ dt, so the energy balance E(t) − E(0) = W(t) can be checked in every run.
 */
import { LoopsmithUserError } from '../core/errors.js';
import { CycleTrajectory, FiveBarMotion, JointSpaceDynamics, jointRatesFromPath, jointSpaceDynamics, type EndPointState, type JointFriction } from '../mechanics/dutyCycle.js';
import { FiveBarPose, PoseStatus, solvePose, type FiveBarModel } from '../mechanics/fivebar.js';
import {
  DEFAULT_STABILISATION_RATE,
  FreeChainAcceleration,
  closureError,
  consistentState,
  freeAccelerations,
  freeChain,
  kineticEnergy,
  potentialEnergy,
  tipPosition,
  type FreeChain,
} from './freeChain.js';
import { ODEX_CONVERGED, createOdexSolver } from './odex.js';

/** A user-facing problem with a simulation (bad options, a cycle the design cannot follow). */
export class SimulationError extends LoopsmithUserError {
  constructor(message: string) {
    super(message);
    this.name = 'SimulationError';
  }
}

export type ControllerKind = 'computed-torque' | 'pd' | 'none';
export const CONTROLLER_KINDS: readonly ControllerKind[] = ['computed-torque', 'pd', 'none'];

/** Default closed-loop natural frequency of the tracking error, Hz, and damping ratio. */
export const DEFAULT_NATURAL_FREQUENCY = 30;
export const DEFAULT_DAMPING_RATIO = 1;
/** Velocity over which Coulomb friction is smoothed, rad/s. */
export const DEFAULT_FRICTION_SMOOTHING = 0.01;
/** Default spacing of the recorded samples, s. */
export const DEFAULT_OUTPUT_INTERVAL = 1e-3;

/** Joint-side drive limits: η N τ_peak, η N τ_rated (N·m) and ω_max/N (rad/s) per actuator. */
export interface SimulationDriveLimits {
  readonly peakTorque: readonly [number, number];
  readonly ratedTorque: readonly [number, number];
  readonly speed: readonly [number, number];
}

export interface SimulationOptions {
  readonly controller: ControllerKind;
  /** Simulated time, s (default: one cycle; required without a trajectory). */
  readonly duration?: number;
  /** Desired end-point motion (a closed cycle, repeated when the duration is longer); null = none. */
  readonly trajectory: CycleTrajectory | null;
  /** Closed-loop natural frequency, Hz, and damping ratio of the tracking error. */
  readonly naturalFrequency?: number;
  readonly dampingRatio?: number;
  /** Joint friction of the plant (computed torque compensates it with the same model); null = none. */
  readonly friction?: readonly [JointFriction, JointFriction] | null;
  /** Coulomb smoothing velocity ε, rad/s. */
  readonly frictionSmoothing?: number;
  /** Extra end mass carried by the plant but not known to the controller, kg. */
  readonly extraEndMass?: number;
  /** Initial state (θ_1, β_1, θ_2, β_2, θ̇_1, β̇_1, θ̇_2, β̇_2); default: the cycle's start pose with the path velocity there. */
  readonly initialState?: ArrayLike<number>;
  /** Spacing of recorded samples, s. */
  readonly outputInterval?: number;
  /** ODEX tolerances (per component, rad and rad/s). */
  readonly relativeTolerance?: number;
  readonly absoluteTolerance?: number;
  /** Baumgarte rate α of the closure, 1/s. */
  readonly stabilisationRate?: number;
  /** Drive limits to report against; null = none. */
  readonly limits?: SimulationDriveLimits | null;
}

/** Time series of a simulation, one entry per recorded sample (SI). */
export interface SimulationSeries {
  readonly count: number;
  readonly time: Float64Array;
  readonly theta1: Float64Array; readonly theta2: Float64Array;
  readonly speed1: Float64Array; readonly speed2: Float64Array;
  /** Desired angles (made continuous with the measured ones) and rates; NaN without a trajectory. */
  readonly desiredTheta1: Float64Array; readonly desiredTheta2: Float64Array;
  readonly desiredSpeed1: Float64Array; readonly desiredSpeed2: Float64Array;
  /** e_i = θ_d,i − θ_i, rad. */
  readonly error1: Float64Array; readonly error2: Float64Array;
  /** End point (arm 1's tip), its desired place and their distance, m. */
  readonly x: Float64Array; readonly y: Float64Array;
  readonly desiredX: Float64Array; readonly desiredY: Float64Array;
  readonly endPointError: Float64Array;
  /** Drive torques τ_i (N·m) and friction torques f_i (N·m). */
  readonly torque1: Float64Array; readonly torque2: Float64Array;
  readonly friction1: Float64Array; readonly friction2: Float64Array;
  /** |Φ|, m. */
  readonly closure: Float64Array;
  /** Kinetic and potential energy, J, and net work ∫(τ − f)·θ̇ dt, J. */
  readonly kinetic: Float64Array; readonly potential: Float64Array; readonly work: Float64Array;
}

export interface JointSimulationSummary {
  /** max |e| and RMS e over the run, rad. */
  readonly maxTrackingError: number;
  readonly rmsTrackingError: number;
  /** max |τ|, N·m, √(mean τ²), N·m, and max |θ̇|, rad/s. */
  readonly peakTorque: number;
  readonly rmsTorque: number;
  readonly peakSpeed: number;
  /** Against the drive limits (null without drives). */
  readonly peakTorqueLimit: number | null;
  readonly ratedTorqueLimit: number | null;
  readonly speedLimit: number | null;
  readonly withinPeakTorque: boolean | null;
  readonly withinRatedTorque: boolean | null;
  readonly withinSpeed: boolean | null;
  /** Samples whose (θ̇, τ) lies outside the peak-torque × speed rectangle. */
  readonly samplesOutsideEnvelope: number;
}

export interface SimulationSummary {
  readonly controller: ControllerKind;
  readonly duration: number;
  readonly naturalFrequency: number;
  readonly dampingRatio: number;
  readonly extraEndMass: number;
  /** max distance of the end point from its desired place, m (NaN without a trajectory). */
  readonly maxEndPointError: number;
  /** max |Φ| over the samples and the accepted integration steps, m. */
  readonly maxClosureError: number;
  /** max |E(t) − E(0) − W(t)| over the accepted steps, J, and the energy scale it is relative to (max kinetic energy), J. */
  readonly energyResidual: number;
  readonly energyScale: number;
  readonly relativeEnergyResidual: number;
  readonly joints: readonly [JointSimulationSummary, JointSimulationSummary];
  readonly integrator: { readonly segments: number; readonly acceptedSteps: number; readonly rejectedSteps: number; readonly evaluations: number };
}

export interface SimulationResult {
  readonly summary: SimulationSummary;
  readonly series: SimulationSeries;
  /** State at the end of the run (8 values). */
  readonly finalState: Float64Array;
}

/** Wraps an angle difference into (−π, π]. */
export function wrapAngle(angle: number): number {
  const twoPi = 2 * Math.PI;
  let a = angle % twoPi;
  if (a > Math.PI) a -= twoPi;
  else if (a <= -Math.PI) a += twoPi;
  return a;
}

/** A stretch of time with smooth desired motion: one step of the cycle (or a phase of a trapezoidal step). */
interface Segment {
  readonly start: number;
  readonly end: number;
  /** Step index in the cycle, or −1 without a trajectory. */
  readonly step: number;
  /** Cycle-relative start time of the step, s, and its fraction range covered by this segment. */
  readonly stepStart: number;
  readonly fractionLow: number;
  readonly fractionHigh: number;
}

/** Fraction nudge that keeps evaluations at a segment's ends on the segment's side of a law switch. */
const FRACTION_NUDGE = 1e-12;

function buildSegments(trajectory: CycleTrajectory | null, duration: number): Segment[] {
  const segments: Segment[] = [];
  if (!trajectory) {
    segments.push({ start: 0, end: duration, step: -1, stepStart: 0, fractionLow: 0, fractionHigh: 1 });
    return segments;
  }
  const steps = trajectory.path.steps;
  const cycleTime = trajectory.cycleTime;
  for (let cycleStart = 0; cycleStart < duration; cycleStart += cycleTime) {
    let t = 0;
    for (let k = 0; k < steps.length; k++) {
      const step = steps[k]!;
      const cuts = [0, 1];
      if (step.kind !== 'dwell' && step.law === 'trapezoidal') {
        const f = step.accelFraction ?? 1 / 3;
        cuts.splice(1, 0, f, 1 - f);
      }
      for (let c = 0; c + 1 < cuts.length; c++) {
        const lo = cuts[c]!;
        const hi = cuts[c + 1]!;
        if (hi <= lo) continue;
        const start = cycleStart + t + lo * step.time;
        const end = Math.min(cycleStart + t + hi * step.time, duration);
        if (end > start) segments.push({ start, end, step: k, stepStart: cycleStart + t, fractionLow: lo, fractionHigh: hi });
      }
      t += step.time;
    }
  }
  return segments;
}

/** Desired joint motion along the cycle at one instant (reusable scratch). */
class DesiredMotion {
  theta1 = 0; theta2 = 0; speed1 = 0; speed2 = 0; accel1 = 0; accel2 = 0; x = 0; y = 0;
  private readonly pose = new FiveBarPose();
  private readonly motion = new FiveBarMotion();
  private readonly state: EndPointState = { x: 0, y: 0, vx: 0, vy: 0, ax: 0, ay: 0 };
  constructor(private readonly model: FiveBarModel, private readonly trajectory: CycleTrajectory) {}

  /** Desired motion at time t inside `segment`; false when the design cannot assemble there. */
  at(t: number, segment: Segment): boolean {
    const step = this.trajectory.path.steps[segment.step]!;
    let fraction = (t - segment.stepStart) / step.time;
    const lo = segment.fractionLow + FRACTION_NUDGE;
    const hi = segment.fractionHigh - FRACTION_NUDGE;
    fraction = fraction < lo ? lo : fraction > hi ? hi : fraction;
    this.trajectory.stepStateAtFraction(segment.step, fraction, this.state);
    const s = this.state;
    const status = solvePose(this.model, this.pose, s.x, s.y);
    if ((status !== PoseStatus.Assembled && status !== PoseStatus.OutsideJointLimits) || this.pose.inverseCondition === 0) return false;
    jointRatesFromPath(this.model, this.pose, s.vx, s.vy, s.ax, s.ay, this.motion);
    this.theta1 = this.pose.theta1; this.theta2 = this.pose.theta2;
    this.speed1 = this.motion.dtheta1; this.speed2 = this.motion.dtheta2;
    this.accel1 = this.motion.ddtheta1; this.accel2 = this.motion.ddtheta2;
    this.x = s.x; this.y = s.y;
    return true;
  }
}

/** Reads (θ, θ̇) from a free-chain state and returns the drive torques into `torque` (scratch owner). */
class Controller {
  readonly torque = new Float64Array(2);
  readonly dynamics = new JointSpaceDynamics();
  readonly kp: number;
  readonly kd: number;
  /** PD gains per joint, N·m/rad and N·m·s/rad. */
  readonly pdKp: Float64Array = new Float64Array(2);
  readonly pdKd: Float64Array = new Float64Array(2);

  constructor(
    readonly kind: ControllerKind,
    private readonly model: FiveBarModel,
    naturalFrequency: number,
    dampingRatio: number,
    initialTheta1: number,
    initialTheta2: number,
    private readonly friction: FrictionModel,
  ) {
    const omega = 2 * Math.PI * naturalFrequency;
    this.kp = omega * omega;
    this.kd = 2 * dampingRatio * omega;
    if (kind === 'pd') {
      const status = jointSpaceDynamics(model, initialTheta1, initialTheta2, 0, 0, this.dynamics);
      if (status === PoseStatus.Unreachable) throw new SimulationError('the start pose cannot be assembled, so the PD gains cannot be scaled');
      this.pdKp[0] = this.kp * this.dynamics.d11; this.pdKp[1] = this.kp * this.dynamics.d22;
      this.pdKd[0] = this.kd * this.dynamics.d11; this.pdKd[1] = this.kd * this.dynamics.d22;
    }
  }

  /** Torques at measured (θ, θ̇) against the desired motion (null = nothing to track). */
  compute(theta1: number, theta2: number, speed1: number, speed2: number, desired: DesiredMotion | null): boolean {
    if (this.kind === 'none' || desired === null) {
      this.torque[0] = 0;
      this.torque[1] = 0;
      return true;
    }
    const e1 = wrapAngle(desired.theta1 - theta1);
    const e2 = wrapAngle(desired.theta2 - theta2);
    const de1 = desired.speed1 - speed1;
    const de2 = desired.speed2 - speed2;
    const status = jointSpaceDynamics(this.model, theta1, theta2, speed1, speed2, this.dynamics);
    if (status === PoseStatus.Unreachable) return false;
    const dyn = this.dynamics;
    if (this.kind === 'computed-torque') {
      const v1 = desired.accel1 + this.kd * de1 + this.kp * e1;
      const v2 = desired.accel2 + this.kd * de2 + this.kp * e2;
      this.torque[0] = dyn.d11 * v1 + dyn.d12 * v2 + dyn.c1 + dyn.g1 + this.friction.torque(0, speed1);
      this.torque[1] = dyn.d12 * v1 + dyn.d22 * v2 + dyn.c2 + dyn.g2 + this.friction.torque(1, speed2);
    } else {
      this.torque[0] = this.pdKp[0]! * e1 + this.pdKd[0]! * de1 + dyn.g1;
      this.torque[1] = this.pdKp[1]! * e2 + this.pdKd[1]! * de2 + dyn.g2;
    }
    return true;
  }
}

/** Smoothed joint friction f_v θ̇ + f_c tanh(θ̇/ε). */
class FrictionModel {
  constructor(private readonly friction: readonly [JointFriction, JointFriction] | null, private readonly smoothing: number) {}
  torque(joint: 0 | 1, speed: number): number {
    const f = this.friction;
    if (f === null) return 0;
    const j = f[joint];
    return j.viscous * speed + j.coulomb * Math.tanh(speed / this.smoothing);
  }
}

function allocateSeries(count: number): SimulationSeries {
  const a = (): Float64Array => new Float64Array(count);
  return {
    count,
    time: a(), theta1: a(), theta2: a(), speed1: a(), speed2: a(),
    desiredTheta1: a(), desiredTheta2: a(), desiredSpeed1: a(), desiredSpeed2: a(),
    error1: a(), error2: a(), x: a(), y: a(), desiredX: a(), desiredY: a(), endPointError: a(),
    torque1: a(), torque2: a(), friction1: a(), friction2: a(), closure: a(), kinetic: a(), potential: a(), work: a(),
  };
}

/** The initial state on the cycle: θ by inverse kinematics at the start, β from the pose, q̇ from the path velocity. */
export function cycleStartState(model: FiveBarModel, trajectory: CycleTrajectory, out: Float64Array): boolean {
  const state: EndPointState = { x: 0, y: 0, vx: 0, vy: 0, ax: 0, ay: 0 };
  trajectory.stepStateAtFraction(0, 0, state);
  const pose = new FiveBarPose();
  const status = solvePose(model, pose, state.x, state.y);
  if ((status !== PoseStatus.Assembled && status !== PoseStatus.OutsideJointLimits) || pose.inverseCondition === 0) return false;
  const motion = new FiveBarMotion();
  jointRatesFromPath(model, pose, state.vx, state.vy, state.ax, state.ay, motion);
  return consistentState(model, pose.theta1, pose.theta2, motion.dtheta1, motion.dtheta2, out);
}

/**
 * Integrates the closed chain under the chosen controller. `model` is the controller's model; the
 * plant is the same model with `extraEndMass` added at the end point. Throws SimulationError when the
 * desired motion leaves the assembled poses, the controller's model cannot be evaluated, or the
 * integrator gives up.
 */
export function simulate(model: FiveBarModel, options: SimulationOptions): SimulationResult {
  const trajectory = options.trajectory;
  const duration = options.duration ?? (trajectory ? trajectory.cycleTime : Number.NaN);
  if (!(duration > 0) || !Number.isFinite(duration)) throw new SimulationError('the simulated duration must be a positive number of seconds');
  const naturalFrequency = options.naturalFrequency ?? DEFAULT_NATURAL_FREQUENCY;
  const dampingRatio = options.dampingRatio ?? DEFAULT_DAMPING_RATIO;
  if (!(naturalFrequency > 0) || !(dampingRatio > 0)) throw new SimulationError('controller natural frequency and damping ratio must be positive');
  const extraEndMass = options.extraEndMass ?? 0;
  if (!(extraEndMass >= 0)) throw new SimulationError('the extra end mass must be zero or positive');
  const outputInterval = options.outputInterval ?? DEFAULT_OUTPUT_INTERVAL;
  if (!(outputInterval > 0)) throw new SimulationError('the output interval must be positive');
  const stabilisationRate = options.stabilisationRate ?? DEFAULT_STABILISATION_RATE;
  const relativeTolerance = options.relativeTolerance ?? 1e-10;
  const absoluteTolerance = options.absoluteTolerance ?? 1e-11;
  const limits = options.limits ?? null;

  const plantModel: FiveBarModel = extraEndMass > 0 ? { ...model, endMass: model.endMass + extraEndMass } : model;
  const chain: FreeChain = freeChain(plantModel);
  const friction = new FrictionModel(options.friction ?? null, options.frictionSmoothing ?? DEFAULT_FRICTION_SMOOTHING);

  const state0 = new Float64Array(8);
  if (options.initialState) {
    if (options.initialState.length !== 8) throw new SimulationError('the initial state needs 8 values (θ1, β1, θ2, β2 and their rates)');
    for (let i = 0; i < 8; i++) state0[i] = options.initialState[i]!;
  } else if (!trajectory) {
    throw new SimulationError('give a trajectory or an initial state');
  } else if (!cycleStartState(model, trajectory, state0)) {
    throw new SimulationError('the cycle\'s start point cannot be assembled in the design\'s working and assembly modes');
  }

  const desired = trajectory ? new DesiredMotion(model, trajectory) : null;
  const controller = new Controller(options.controller, model, naturalFrequency, dampingRatio, state0[0]!, state0[2]!, friction);
  const acceleration = new FreeChainAcceleration();
  const segments = buildSegments(trajectory, duration);

  // Recorded samples at k·Δ, the last one exactly at the end.
  const sampleCount = Math.max(2, Math.ceil(duration / outputInterval - 1e-9) + 1);
  const series = allocateSeries(sampleCount);
  const sampleTime = (k: number): number => (k === sampleCount - 1 ? duration : k * outputInterval);
  let nextSample = 0;

  let currentSegment: Segment = segments[0]!;
  const derivative: number[] = new Array<number>(9).fill(0);
  const frictionOut = new Float64Array(2);
  let failure: string | null = null;

  /** Torques at (t, state) into controller.torque, friction into frictionOut; false on failure. */
  const torquesAt = (t: number, y: ArrayLike<number>): boolean => {
    let target: DesiredMotion | null = null;
    if (desired && currentSegment.step >= 0) {
      if (!desired.at(t, currentSegment)) {
        failure = `the desired motion cannot be assembled at t = ${t.toFixed(4)} s`;
        return false;
      }
      target = desired;
    }
    if (!controller.compute(y[0]!, y[2]!, y[4]!, y[6]!, target)) {
      failure = `the controller's model cannot be evaluated at t = ${t.toFixed(4)} s (the chain left its assembly)`;
      return false;
    }
    frictionOut[0] = friction.torque(0, y[4]!);
    frictionOut[1] = friction.torque(1, y[6]!);
    return true;
  };

  const rhs = (t: number, y: number[]): number[] => {
    if (failure !== null || !torquesAt(t, y)) {
      derivative.fill(0);
      return derivative;
    }
    const q1 = controller.torque[0]! - frictionOut[0]!;
    const q2 = controller.torque[1]! - frictionOut[1]!;
    freeAccelerations(chain, y, q1, q2, stabilisationRate, acceleration);
    const qdd = acceleration.qdd;
    derivative[0] = y[4]!; derivative[1] = y[5]!; derivative[2] = y[6]!; derivative[3] = y[7]!;
    derivative[4] = qdd[0]!; derivative[5] = qdd[1]!; derivative[6] = qdd[2]!; derivative[7] = qdd[3]!;
    derivative[8] = q1 * y[4]! + q2 * y[6]!;
    return derivative;
  };

  const tip = new Float64Array(2);
  const sampleState = new Float64Array(9);
  const record = (k: number, t: number, y: ArrayLike<number>): void => {
    const s = series;
    s.time[k] = t;
    const theta1 = y[0]!, theta2 = y[2]!, w1 = y[4]!, w2 = y[6]!;
    s.theta1[k] = theta1; s.theta2[k] = theta2; s.speed1[k] = w1; s.speed2[k] = w2;
    torquesAt(t, y);
    s.torque1[k] = controller.torque[0]!; s.torque2[k] = controller.torque[1]!;
    s.friction1[k] = frictionOut[0]!; s.friction2[k] = frictionOut[1]!;
    tipPosition(chain, y, tip);
    s.x[k] = tip[0]!; s.y[k] = tip[1]!;
    if (desired && currentSegment.step >= 0 && failure === null) {
      const e1 = wrapAngle(desired.theta1 - theta1);
      const e2 = wrapAngle(desired.theta2 - theta2);
      s.desiredTheta1[k] = theta1 + e1; s.desiredTheta2[k] = theta2 + e2;
      s.desiredSpeed1[k] = desired.speed1; s.desiredSpeed2[k] = desired.speed2;
      s.error1[k] = e1; s.error2[k] = e2;
      s.desiredX[k] = desired.x; s.desiredY[k] = desired.y;
      s.endPointError[k] = Math.hypot(desired.x - tip[0]!, desired.y - tip[1]!);
    } else {
      s.desiredTheta1[k] = s.desiredTheta2[k] = s.desiredSpeed1[k] = s.desiredSpeed2[k] = Number.NaN;
      s.error1[k] = s.error2[k] = s.desiredX[k] = s.desiredY[k] = s.endPointError[k] = Number.NaN;
    }
    s.closure[k] = closureError(chain, y);
    s.kinetic[k] = kineticEnergy(chain, y);
    s.potential[k] = potentialEnergy(chain, y);
    s.work[k] = y[8]!;
  };

  const initialEnergy = kineticEnergy(chain, state0) + potentialEnergy(chain, state0);
  let energyResidual = 0;
  let energyScale = kineticEnergy(chain, state0);
  let maxClosure = closureError(chain, state0);
  const checkAccepted = (y: ArrayLike<number>): void => {
    const kinetic = kineticEnergy(chain, y);
    if (kinetic > energyScale) energyScale = kinetic;
    const residual = Math.abs(kinetic + potentialEnergy(chain, y) - initialEnergy - y[8]!);
    if (residual > energyResidual) energyResidual = residual;
    const closure = closureError(chain, y);
    if (closure > maxClosure) maxClosure = closure;
  };

  let y: number[] = [...state0, 0];
  let accepted = 0, rejected = 0, evaluations = 0;
  for (const segment of segments) {
    currentSegment = segment;
    const solver = createOdexSolver(9);
    solver.denseOutput = true;
    // Off: at rest (dwells) the accelerations are round-off noise and the check would stall the step size.
    solver.stabilityCheckCount = 0;
    solver.relativeTolerance = relativeTolerance;
    solver.absoluteTolerance = absoluteTolerance;
    solver.maxSteps = 200_000;
    solver.initialStepSize = Math.min(1e-4, segment.end - segment.start);
    solver.maxStepSize = segment.end - segment.start;
    const endTolerance = 1e-12 * Math.max(1, segment.end);
    const result = solver.solve(rhs, segment.start, y, segment.end, (nr, xOld, x, yStep, dense) => {
      if (failure !== null) return false;
      if (nr > 1) checkAccepted(yStep);
      while (nextSample < sampleCount && sampleTime(nextSample) <= x + endTolerance) {
        const t = sampleTime(nextSample);
        if (nr === 1 || !dense || t >= x) {
          record(nextSample, t, yStep);
        } else {
          const tc = t < xOld ? xOld : t;
          for (let i = 0; i < 9; i++) sampleState[i] = dense(i, tc);
          record(nextSample, t, sampleState);
        }
        nextSample++;
      }
      return true;
    });
    if (failure !== null) throw new SimulationError(failure);
    if (result.outcome !== ODEX_CONVERGED) throw new SimulationError(`the integrator gave up at t ≈ ${segment.start.toFixed(4)} s (outcome ${result.outcome}, ${result.nAccept} steps); try looser tolerances or a shorter run`);
    y = result.y;
    accepted += result.nAccept;
    rejected += result.nReject;
    evaluations += result.nEval;
  }
  // Samples not reached (round-off at the very end) take the final state.
  while (nextSample < sampleCount) {
    record(nextSample, sampleTime(nextSample), y);
    nextSample++;
  }
  for (let k = 0; k < sampleCount; k++) if (series.closure[k]! > maxClosure) maxClosure = series.closure[k]!;

  const summary = summarise(series, {
    controller: options.controller, duration, naturalFrequency, dampingRatio, extraEndMass, limits,
    maxClosure, energyResidual, energyScale,
    integrator: { segments: segments.length, acceptedSteps: accepted, rejectedSteps: rejected, evaluations },
    tracking: trajectory !== null,
  });
  return { summary, series, finalState: Float64Array.from(y.slice(0, 8)) };
}

interface SummaryInputs {
  readonly controller: ControllerKind;
  readonly duration: number;
  readonly naturalFrequency: number;
  readonly dampingRatio: number;
  readonly extraEndMass: number;
  readonly limits: SimulationDriveLimits | null;
  readonly maxClosure: number;
  readonly energyResidual: number;
  readonly energyScale: number;
  readonly integrator: SimulationSummary['integrator'];
  readonly tracking: boolean;
}

/** Trapezoid-rule RMS of a sampled signal over its time span. */
function rms(time: Float64Array, values: Float64Array): number {
  let sum = 0;
  for (let k = 1; k < time.length; k++) {
    const a = values[k - 1]!, b = values[k]!;
    sum += 0.5 * (a * a + b * b) * (time[k]! - time[k - 1]!);
  }
  const span = time[time.length - 1]! - time[0]!;
  return span > 0 ? Math.sqrt(sum / span) : Math.abs(values[0]!);
}

function maxAbs(values: Float64Array): number {
  let m = 0;
  for (let k = 0; k < values.length; k++) {
    const v = Math.abs(values[k]!);
    if (v > m) m = v;
  }
  return m;
}

function summarise(series: SimulationSeries, inputs: SummaryInputs): SimulationSummary {
  const joint = (axis: 0 | 1): JointSimulationSummary => {
    const torque = axis === 0 ? series.torque1 : series.torque2;
    const speed = axis === 0 ? series.speed1 : series.speed2;
    const error = axis === 0 ? series.error1 : series.error2;
    const peakTorque = maxAbs(torque);
    const rmsTorque = rms(series.time, torque);
    const peakSpeed = maxAbs(speed);
    const limits = inputs.limits;
    const peakLimit = limits ? limits.peakTorque[axis] : null;
    const ratedLimit = limits ? limits.ratedTorque[axis] : null;
    const speedLimit = limits ? limits.speed[axis] : null;
    let outside = 0;
    if (peakLimit !== null && speedLimit !== null) {
      for (let k = 0; k < series.count; k++) if (Math.abs(torque[k]!) > peakLimit || Math.abs(speed[k]!) > speedLimit) outside++;
    }
    return {
      maxTrackingError: inputs.tracking ? maxAbs(error) : Number.NaN,
      rmsTrackingError: inputs.tracking ? rms(series.time, error) : Number.NaN,
      peakTorque, rmsTorque, peakSpeed,
      peakTorqueLimit: peakLimit, ratedTorqueLimit: ratedLimit, speedLimit,
      withinPeakTorque: peakLimit === null ? null : peakTorque <= peakLimit,
      withinRatedTorque: ratedLimit === null ? null : rmsTorque <= ratedLimit,
      withinSpeed: speedLimit === null ? null : peakSpeed <= speedLimit,
      samplesOutsideEnvelope: outside,
    };
  };
  return {
    controller: inputs.controller,
    duration: inputs.duration,
    naturalFrequency: inputs.naturalFrequency,
    dampingRatio: inputs.dampingRatio,
    extraEndMass: inputs.extraEndMass,
    maxEndPointError: inputs.tracking ? maxAbs(series.endPointError) : Number.NaN,
    maxClosureError: inputs.maxClosure,
    energyResidual: inputs.energyResidual,
    energyScale: inputs.energyScale,
    relativeEnergyResidual: inputs.energyScale > 0 ? inputs.energyResidual / inputs.energyScale : 0,
    joints: [joint(0), joint(1)],
    integrator: inputs.integrator,
  };
}
