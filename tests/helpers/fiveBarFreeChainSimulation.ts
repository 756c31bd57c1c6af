/**
 * The five-bar's former forward simulation, kept in the tests as an independent cross-check of the one
 * path every architecture takes (src/simulate/simulateArchitecture.ts on the cut-open chain of
 * legChain.ts): the five-bar cut at the end point into two arms with the end mass on arm 1's tip
 * (src/simulate/freeChain.ts), its closed-form reduced model for the controllers
 * (tests/helpers/fiveBarClosedFormCycle.ts) and the same ODEX stretches, controllers and recording.
 *
 * - computed torque: τ = D(θ)(θ̈_d + K_d ė + K_p e) + C(θ, θ̇) θ̇ + g(θ) + f̂(θ̇), with K_p = ω², K_d = 2ζω,
 *   from the reduced model at the measured joint state (jointSpaceDynamics);
 * - PD with gravity compensation: τ = K_p e + K_d ė + g(θ), K_p,i = ω² D_ii(θ_0), K_d,i = 2ζω D_ii(θ_0);
 * - none: τ = 0;
 *
 * with e = θ_d − θ, joint friction f(θ̇) = f_v θ̇ + f_c tanh(θ̇/ε) (common practice, no source) and an
 * extra end mass the controller does not know about. A ninth state integrates ∫(τ − f)·θ̇ dt.
 */
import { CycleTrajectory, type EndPointState, type JointFriction } from '../../src/mechanics/dutyCycle.js';
import { FiveBarMotion, JointSpaceDynamics, endPointAcceleration, jointRatesFromPath, jointSpaceDynamics, poseFromJointAngles } from './fiveBarClosedFormCycle.js';
import { FiveBarPose, PoseStatus, solvePose, type FiveBarModel } from './fiveBarClosedForm.js';
import {
  DEFAULT_STABILISATION_RATE,
  FreeChainAcceleration,
  closureError,
  freeAccelerations,
  freeChain,
  kineticEnergy,
  potentialEnergy,
  tipPosition,
  type FreeChain,
} from '../../src/simulate/freeChain.js';
import { ODEX_CONVERGED, createOdexSolver } from '../../src/simulate/odex.js';
import {
  DEFAULT_DAMPING_RATIO,
  DEFAULT_FRICTION_SMOOTHING,
  DEFAULT_NATURAL_FREQUENCY,
  DEFAULT_OUTPUT_INTERVAL,
  FRACTION_NUDGE,
  SimulationError,
  allocateSeries,
  buildSegments,
  summarise,
  wrapAngle,
  type ControllerKind,
  type Segment,
  type SimulationOptions,
  type SimulationResult,
} from '../../src/simulate/shared.js';

/** A consistent free-chain state (8 values) from θ, θ̇ by the five-bar's closed-form forward kinematics. */
function consistentState(model: FiveBarModel, theta1: number, theta2: number, dtheta1: number, dtheta2: number, out: Float64Array): boolean {
  const pose = new FiveBarPose();
  const motion = new FiveBarMotion();
  const status = poseFromJointAngles(model, pose, theta1, theta2, new Float64Array(2));
  if (status === PoseStatus.Unreachable || pose.detA === 0) return false;
  endPointAcceleration(model, pose, dtheta1, dtheta2, 0, 0, motion);
  out[0] = theta1;
  out[1] = Math.atan2(pose.u1y, pose.u1x);
  out[2] = theta2;
  out[3] = Math.atan2(pose.u2y, pose.u2x);
  out[4] = dtheta1;
  out[5] = motion.drod1;
  out[6] = dtheta2;
  out[7] = motion.drod2;
  return true;
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
  constructor(private readonly friction: readonly JointFriction[] | null, private readonly smoothing: number) {}
  torque(joint: 0 | 1, speed: number): number {
    const f = this.friction;
    if (f === null) return 0;
    const j = f[joint]!;
    return j.viscous * speed + j.coulomb * Math.tanh(speed / this.smoothing);
  }
}

/** The initial state on the cycle: θ by inverse kinematics at the start, β from the pose, q̇ from the path velocity. */
function cycleStartState(model: FiveBarModel, trajectory: CycleTrajectory, out: Float64Array): boolean {
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
export function simulateFreeChain(model: FiveBarModel, options: SimulationOptions): SimulationResult {
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
