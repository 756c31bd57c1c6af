/**
 * Forward simulation of one design of any architecture that describes its bodies
 * (PlanarArchitecture.cutOpenChain) along a duty cycle: the cut-open chain of legChain.ts with the
 * loop closures held by Lagrange multipliers and Baumgarte stabilisation, integrated by ODEX between
 * the instants where the desired motion is not smooth (the five-bar included; simulate.ts is its
 * entry by body data). The
 * actuated joints follow the cycle's q_d(t), q̇_d, q̈_d (inverse kinematics and the acceleration
 * analysis of dutyCycle.ts) under the same controllers:
 *
 * - computed torque: τ = D(q)(q̈_d + K_d ė + K_p e) + C(q, q̇) q̇ + τ_g(q) + f̂(q̇), K_p = ω², K_d = 2ζω,
 *   from the reduced model (CycleDynamics) at the measured joint state;
 * - PD with gravity compensation: τ = K_p,i e_i + K_d,i ė_i + τ_g(q), gains scaled by D_ii(q_0);
 * - none: τ = 0;
 *
 * with e = q_d − q (wrapped for revolute joints). The plant has joint friction f_v q̇ + f_c tanh(q̇/ε)
 * and may carry an extra mass at P that the controller does not know about. The last state integrates
 * the net power ∫(τ − f)·q̇ dt for the energy balance.
 */
import { PoseStatus, type ArchitectureModelBase, type CutOpenChain, type PlanarArchitecture } from '../architectures/types.js';
import { CycleDynamics, CycleTrajectory, type EndPointState, type JointFriction } from '../mechanics/dutyCycle.js';
import { LegChain } from './legChain.js';
import { ODEX_CONVERGED, createOdexSolver } from './odex.js';
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
  type Segment,
  type SimulationOptions,
  type SimulationResult,
  type SimulationSeries,
  DEFAULT_STABILISATION_RATE,
} from './shared.js';
import { PerturbedLegChain } from './perturbedChain.js';
import type { DriveSimulationHooks } from './driveHooks.js';

/** Options of `simulateArchitecture`: as `simulate`, with the initial state in cut-chain coordinates (z then ż). */
export type ArchitectureSimulationOptions = Omit<SimulationOptions, 'initialState'> & { readonly initialState?: ArrayLike<number> } & DriveSimulationHooks;

/** Desired joint motion along the cycle at one instant. */
class DesiredJointMotion {
  readonly dynamics: CycleDynamics;
  readonly state: EndPointState = { x: 0, y: 0, vx: 0, vy: 0, ax: 0, ay: 0, phi: 0, vphi: 0, aphi: 0 };
  constructor(architecture: PlanarArchitecture<ArchitectureModelBase>, private readonly model: ArchitectureModelBase, private readonly trajectory: CycleTrajectory) {
    this.dynamics = new CycleDynamics(architecture);
  }
  /** Desired motion at time t inside `segment`; false when the design cannot assemble there. */
  at(t: number, segment: Segment): boolean {
    const step = this.trajectory.path.steps[segment.step]!;
    let fraction = (t - segment.stepStart) / step.time;
    const lo = segment.fractionLow + FRACTION_NUDGE;
    const hi = segment.fractionHigh - FRACTION_NUDGE;
    fraction = fraction < lo ? lo : fraction > hi ? hi : fraction;
    this.trajectory.stepStateAtFraction(segment.step, fraction, this.state);
    const s = this.state;
    const d = this.dynamics;
    const status = d.solveAt(this.model, s.x, s.y, s.phi ?? 0);
    if ((status !== PoseStatus.Assembled && status !== PoseStatus.OutsideJointLimits) || d.pose.inverseCondition === 0) return false;
    d.fromTaskMotion([s.vx, s.vy, s.vphi ?? 0], [s.ax, s.ay, s.aphi ?? 0]);
    return true;
  }
}

/**
 * A state of the cut chain (z then ż, 2N values) on the constraints at task pose (x, y, φ) with task
 * rates ṫ: q by inverse kinematics, β from the rod directions, q̇ = J⁻¹ṫ, β̇ from the rod-rate rows.
 */
export function cutChainState(
  architecture: PlanarArchitecture<ArchitectureModelBase>, model: ArchitectureModelBase, task: ArrayLike<number>, taskRate: ArrayLike<number>, out: Float64Array,
): boolean {
  const d = new CycleDynamics(architecture);
  const n = architecture.dof;
  const status = d.solveAt(model, task[0]!, task[1]!, n === 3 ? task[2]! : 0);
  if ((status !== PoseStatus.Assembled && status !== PoseStatus.OutsideJointLimits) || d.pose.inverseCondition === 0) return false;
  d.fromTaskMotion(taskRate, [0, 0, 0]);
  const N = 2 * n + (n === 3 ? 3 : 2);
  for (let i = 0; i < n; i++) {
    out[2 * i] = d.pose.q[i]!;
    out[2 * i + 1] = Math.atan2(d.pose.rodDirection[2 * i + 1]!, d.pose.rodDirection[2 * i]!);
    out[N + 2 * i] = d.qd[i]!;
    out[N + 2 * i + 1] = d.rodRate[i]!;
  }
  for (let k = 0; k < N - 2 * n; k++) {
    out[2 * n + k] = task[k]!;
    out[N + 2 * n + k] = taskRate[k]!;
  }
  return true;
}

/** The plant's chain: the architecture's bodies with an extra mass at P. */
function plantChain(architecture: PlanarArchitecture<ArchitectureModelBase>, model: ArchitectureModelBase, extraMass: number, hooks: DriveSimulationHooks = {}): LegChain {
  const chain: CutOpenChain | null | undefined = architecture.cutOpenChain?.(model);
  if (!chain) throw new SimulationError(`simulate: the ${architecture.name} does not describe its bodies as a cut-open chain yet, so it cannot be simulated`);
  const plant = extraMass > 0 ? { ...chain, platformMass: chain.platformMass + extraMass } : chain;
  return hooks.formulation === 'perturbed' ? new PerturbedLegChain(plant, hooks.epsilon ?? 0.01) : new LegChain(plant);
}

/** Duration, controller settings and Baumgarte rate of the options, checked (SimulationError on a bad value). */
function checkedSettings(options: ArchitectureSimulationOptions): { duration: number; naturalFrequency: number; dampingRatio: number; extraEndMass: number; alpha: number } {
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
  return { duration, naturalFrequency, dampingRatio, extraEndMass, alpha: options.stabilisationRate ?? DEFAULT_STABILISATION_RATE };
}

/** The initial cut-chain state: the given one, else the cycle's start pose with the path velocity there. */
function initialState(
  architecture: PlanarArchitecture<ArchitectureModelBase>, model: ArchitectureModelBase, options: ArchitectureSimulationOptions, size: number,
): Float64Array {
  const state0 = new Float64Array(2 * size);
  const trajectory = options.trajectory;
  if (options.initialState) {
    if (options.initialState.length !== 2 * size) throw new SimulationError(`the initial state needs ${2 * size} values (cut-chain coordinates and their rates)`);
    state0.set(Array.from(options.initialState));
    return state0;
  }
  if (!trajectory) throw new SimulationError('give a trajectory or an initial state');
  const s: EndPointState = { x: 0, y: 0, vx: 0, vy: 0, ax: 0, ay: 0, phi: 0, vphi: 0, aphi: 0 };
  trajectory.stepStateAtFraction(0, 0, s);
  if (!cutChainState(architecture, model, [s.x, s.y, s.phi ?? 0], [s.vx, s.vy, s.vphi ?? 0], state0)) {
    throw new SimulationError('the cycle\'s start point cannot be assembled in the design\'s working and assembly modes');
  }
  return state0;
}

/**
 * Integrates the closed chain of any architecture under the chosen controller. `model` is the
 * controller's model; the plant is the same model with `extraEndMass` added at P. Throws
 * SimulationError when the desired motion leaves the assembled poses, the controller's model
 * cannot be evaluated, or the integrator gives up.
 */
export function simulateArchitecture(
  architecture: PlanarArchitecture<ArchitectureModelBase>, model: ArchitectureModelBase, options: ArchitectureSimulationOptions,
): SimulationResult {
  const { duration, naturalFrequency, dampingRatio, extraEndMass, alpha } = checkedSettings(options);
  const trajectory = options.trajectory;
  const n = architecture.dof;
  const chain = plantChain(architecture, model, extraEndMass, options);
  const N = chain.size;
  const P = chain.platformIndex;
  const friction = options.friction ?? null;
  if (friction && friction.length < n) throw new SimulationError(`friction: the ${architecture.name} needs ${n} entries`);
  const smoothing = options.frictionSmoothing ?? DEFAULT_FRICTION_SMOOTHING;
  const frictionOf = (i: number, speed: number): number => (friction ? friction[i]!.viscous * speed + friction[i]!.coulomb * Math.tanh(speed / smoothing) : 0);

  const state0 = initialState(architecture, model, options, N);
  const desired = trajectory ? new DesiredJointMotion(architecture, model, trajectory) : null;
  const measured = new CycleDynamics(architecture);
  const omega = 2 * Math.PI * naturalFrequency;
  const kp = omega * omega;
  const kd = 2 * dampingRatio * omega;
  const pdScale = new Float64Array(n);
  if (options.controller === 'pd') {
    const status = measured.solveAtJoints(model, Array.from({ length: n }, (_, i) => state0[2 * i]!), state0.subarray(P, P + n));
    if (status === PoseStatus.Unreachable) throw new SimulationError('the start pose cannot be assembled, so the PD gains cannot be scaled');
    for (let i = 0; i < n; i++) pdScale[i] = measured.pose.D[i * n + i]!;
  }
  const torque = new Float64Array(n);
  const frictionNow = new Float64Array(n);
  const q = new Float64Array(n);
  const qd = new Float64Array(n);
  const v = new Float64Array(n);
  const zero = new Float64Array(3);
  const commanded = new Float64Array(n);
  let currentSegment: Segment = buildSegments(trajectory, duration)[0]!;
  let failure: string | null = null;

  /** Efforts at (t, state) into `torque`, friction into `frictionNow`; false on failure. */
  const effortsAt = (t: number, y: ArrayLike<number>): boolean => {
    for (let i = 0; i < n; i++) {
      q[i] = y[2 * i]!;
      qd[i] = y[N + 2 * i]!;
      frictionNow[i] = frictionOf(i, qd[i]!);
    }
    const tracking = desired !== null && currentSegment.step >= 0;
    if (options.controller === 'none' || !tracking) {
      torque.fill(0);
      return true;
    }
    if (!desired.at(t, currentSegment)) {
      failure = `the desired motion cannot be assembled at t = ${t.toFixed(4)} s`;
      return false;
    }
    // Measured joint state: forward kinematics from q, started at the chain's own platform pose.
    if (measured.solveAtJoints(model, q, y.length >= P + n ? [y[P]!, y[P + 1]!, n === 3 ? y[P + 2]! : 0] : zero) === PoseStatus.Unreachable) {
      failure = `the controller's model cannot be evaluated at t = ${t.toFixed(4)} s (the chain left its assembly)`;
      return false;
    }
    const want = desired.dynamics;
    for (let i = 0; i < n; i++) {
      const rawError = want.pose.q[i]! - q[i]!;
      const e = architecture.actuators[i] === 'revolute' ? wrapAngle(rawError) : rawError;
      v[i] = e;
    }
    if (options.controller === 'computed-torque') {
      const acc = commanded;
      for (let i = 0; i < n; i++) acc[i] = want.qdd[i]! + kd * (want.qd[i]! - qd[i]!) + kp * v[i]!;
      measured.fromJointMotion(qd, acc);
      for (let i = 0; i < n; i++) torque[i] = measured.effortInertial[i]! + measured.effortGravity[i]! + frictionNow[i]!;
    } else {
      for (let i = 0; i < n; i++) torque[i] = pdScale[i]! * (kp * v[i]! + kd * (want.qd[i]! - qd[i]!)) + measured.pose.tauG[i]!;
    }
    options.saturate?.(torque, qd);
    return true;
  };

  const size = 2 * N + 1;
  const derivative: number[] = new Array<number>(size).fill(0);
  const drive = new Float64Array(n);
  const rhs = (t: number, y: number[]): number[] => {
    if (failure !== null || !effortsAt(t, y)) {
      derivative.fill(0);
      return derivative;
    }
    let power = 0;
    for (let i = 0; i < n; i++) {
      drive[i] = torque[i]! - frictionNow[i]!;
      power += drive[i]! * y[N + 2 * i]!;
    }
    if (!chain.accelerations(y, drive, alpha)) {
      failure = `the cut-open chain is singular at t = ${t.toFixed(4)} s`;
      derivative.fill(0);
      return derivative;
    }
    for (let j = 0; j < N; j++) {
      derivative[j] = y[N + j]!;
      derivative[N + j] = chain.zdd[j]!;
    }
    derivative[2 * N] = power;
    return derivative;
  };
  return integrate(architecture, chain, { ...options, duration, naturalFrequency, dampingRatio }, state0, rhs, effortsAt, torque, frictionNow, desired, (segment) => (currentSegment = segment), () => failure);
}

/** The integration loop and recording shared by every controller (one ODEX run per smooth segment). */
function integrate(
  architecture: PlanarArchitecture<ArchitectureModelBase>,
  chain: LegChain,
  options: ArchitectureSimulationOptions & { readonly duration: number },
  state0: Float64Array,
  rhs: (t: number, y: number[]) => number[],
  effortsAt: (t: number, y: ArrayLike<number>) => boolean,
  torque: Float64Array,
  frictionNow: Float64Array,
  desired: DesiredJointMotion | null,
  enterSegment: (segment: Segment) => void,
  failed: () => string | null,
): SimulationResult {
  const n = architecture.dof;
  const N = chain.size;
  const duration = options.duration;
  const trajectory = options.trajectory;
  const outputInterval = options.outputInterval ?? DEFAULT_OUTPUT_INTERVAL;
  const segments = buildSegments(trajectory, duration);
  const sampleCount = Math.max(2, Math.ceil(duration / outputInterval - 1e-9) + 1);
  const series = allocateSeries(sampleCount, architecture.actuators, n === 3);
  const sampleTime = (k: number): number => (k === sampleCount - 1 ? duration : k * outputInterval);
  let nextSample = 0;
  let tracking = false;

  const record = (k: number, t: number, y: ArrayLike<number>): void => recordSample(series, k, t, y, { architecture, chain, effortsAt, torque, frictionNow, desired: tracking ? desired : null, failed });

  const initialEnergy = chain.kineticEnergy(state0) + chain.potentialEnergy(state0);
  let energyResidual = 0;
  let energyScale = chain.kineticEnergy(state0);
  let maxClosure = chain.closureError(state0);
  const checkAccepted = (y: ArrayLike<number>): void => {
    const kinetic = chain.kineticEnergy(y);
    if (kinetic > energyScale) energyScale = kinetic;
    const residual = Math.abs(kinetic + chain.potentialEnergy(y) - initialEnergy - y[2 * N]!);
    if (residual > energyResidual) energyResidual = residual;
    const closure = chain.closureError(y);
    if (closure > maxClosure) maxClosure = closure;
  };

  const size = 2 * N + 1;
  const sampleState = new Float64Array(size);
  let y: number[] = [...state0, 0];
  let accepted = 0, rejected = 0, evaluations = 0;
  for (const segment of segments) {
    enterSegment(segment);
    tracking = desired !== null && segment.step >= 0;
    const solver = createOdexSolver(size);
    solver.denseOutput = true;
    // Off: at rest (dwells) the accelerations are round-off noise and the check would stall the step size.
    solver.stabilityCheckCount = 0;
    solver.relativeTolerance = options.relativeTolerance ?? 1e-10;
    solver.absoluteTolerance = options.absoluteTolerance ?? 1e-11;
    solver.maxSteps = 200_000;
    solver.initialStepSize = Math.min(1e-4, segment.end - segment.start);
    solver.maxStepSize = segment.end - segment.start;
    const endTolerance = 1e-12 * Math.max(1, segment.end);
    const result = solver.solve(rhs, segment.start, y, segment.end, (nr, xOld, x, yStep, dense) => {
      if (failed() !== null) return false;
      if (nr > 1) checkAccepted(yStep);
      while (nextSample < sampleCount && sampleTime(nextSample) <= x + endTolerance) {
        const t = sampleTime(nextSample);
        if (nr === 1 || !dense || t >= x) {
          record(nextSample, t, yStep);
        } else {
          const tc = t < xOld ? xOld : t;
          for (let i = 0; i < size; i++) sampleState[i] = dense(i, tc);
          record(nextSample, t, sampleState);
        }
        nextSample++;
      }
      return true;
    });
    const failure = failed();
    if (failure !== null) throw new SimulationError(failure);
    if (result.outcome !== ODEX_CONVERGED) throw new SimulationError(`the integrator gave up at t ≈ ${segment.start.toFixed(4)} s (outcome ${result.outcome}, ${result.nAccept} steps); try looser tolerances or a shorter run`);
    y = result.y;
    accepted += result.nAccept;
    rejected += result.nReject;
    evaluations += result.nEval;
  }
  while (nextSample < sampleCount) {
    record(nextSample, sampleTime(nextSample), y);
    nextSample++;
  }
  for (let k = 0; k < sampleCount; k++) if (series.closure[k]! > maxClosure) maxClosure = series.closure[k]!;
  const summary = summarise(series, {
    controller: options.controller, duration, naturalFrequency: options.naturalFrequency ?? DEFAULT_NATURAL_FREQUENCY,
    dampingRatio: options.dampingRatio ?? DEFAULT_DAMPING_RATIO, extraEndMass: options.extraEndMass ?? 0, limits: options.limits ?? null,
    maxClosure, energyResidual, energyScale,
    integrator: { segments: segments.length, acceptedSteps: accepted, rejectedSteps: rejected, evaluations },
    tracking: trajectory !== null,
  });
  return { summary, series, finalState: Float64Array.from(y.slice(0, 2 * N)) };
}

/** What `recordSample` reads besides the state. */
interface RecordContext {
  readonly architecture: PlanarArchitecture<ArchitectureModelBase>;
  readonly chain: LegChain;
  readonly effortsAt: (t: number, y: ArrayLike<number>) => boolean;
  readonly torque: Float64Array;
  readonly frictionNow: Float64Array;
  /** The desired motion while tracking, else null. */
  readonly desired: DesiredJointMotion | null;
  readonly failed: () => string | null;
}

/** Writes sample k (time t, state y) of every series. */
function recordSample(series: SimulationSeries, k: number, t: number, y: ArrayLike<number>, c: RecordContext): void {
  const { architecture, chain, effortsAt, torque, frictionNow, desired, failed } = c;
  const n = architecture.dof;
  const N = chain.size;
  const P = chain.platformIndex;
  const s = series;
  s.time[k] = t;
  effortsAt(t, y);
  for (let i = 0; i < n; i++) {
    s.positions[i]![k] = y[2 * i]!;
    s.speeds[i]![k] = y[N + 2 * i]!;
    s.torques[i]![k] = torque[i]!;
    s.frictions[i]![k] = frictionNow[i]!;
  }
  s.x[k] = y[P]!; s.y[k] = y[P + 1]!;
  if (s.phi) s.phi[k] = y[P + 2]!;
  if (desired && failed() === null) {
    const want = desired.dynamics;
    for (let i = 0; i < n; i++) {
      const raw = want.pose.q[i]! - y[2 * i]!;
      const e = architecture.actuators[i] === 'revolute' ? wrapAngle(raw) : raw;
      s.desiredPositions[i]![k] = y[2 * i]! + e;
      s.desiredSpeeds[i]![k] = want.qd[i]!;
      s.errors[i]![k] = e;
    }
    s.desiredX[k] = desired.state.x; s.desiredY[k] = desired.state.y;
    if (s.desiredPhi) s.desiredPhi[k] = desired.state.phi ?? 0;
    s.endPointError[k] = Math.hypot(desired.state.x - y[P]!, desired.state.y - y[P + 1]!);
  } else {
    for (let i = 0; i < n; i++) s.desiredPositions[i]![k] = s.desiredSpeeds[i]![k] = s.errors[i]![k] = Number.NaN;
    s.desiredX[k] = s.desiredY[k] = s.endPointError[k] = Number.NaN;
    if (s.desiredPhi) s.desiredPhi[k] = Number.NaN;
  }
  s.closure[k] = chain.closureError(y);
  s.kinetic[k] = chain.kineticEnergy(y);
  s.potential[k] = chain.potentialEnergy(y);
  s.work[k] = y[2 * N]!;
}

/** Friction entries for the plant (re-exported type for callers). */
export type { JointFriction };
