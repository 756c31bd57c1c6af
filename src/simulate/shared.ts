/**
 * What every forward simulation shares (src/simulate): options, the recorded series and summary, the
 * smooth stretches of a duty cycle the integrator runs between, and the user error. The integration
 * itself is simulateArchitecture.ts (the cut-open chain of legChain.ts, every architecture).
 */
import { LoopsmithUserError } from '../core/errors.js';
import type { CycleTrajectory, JointFriction } from '../mechanics/dutyCycle.js';

/** Baumgarte stabilisation rate α, 1/s: Φ̈ + 2αΦ̇ + α²Φ = 0 (critically damped). */
export const DEFAULT_STABILISATION_RATE = 200;

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

/** Joint-side drive limits per actuator: η N τ_peak, η N τ_rated (N·m or N) and ω_max/N (rad/s or m/s). */
export interface SimulationDriveLimits {
  readonly peakTorque: readonly number[];
  readonly ratedTorque: readonly number[];
  readonly speed: readonly number[];
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
  readonly friction?: readonly JointFriction[] | null;
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
  /**
   * Per actuated joint (any number of joints; for joints 1 and 2 the same arrays as the named fields
   * above): position q (rad or m), speed, desired position and speed, error, drive effort and friction
   * (N·m or N). `actuators` gives each joint's kind.
   */
  readonly actuators: readonly ('revolute' | 'prismatic')[];
  readonly positions: readonly Float64Array[];
  readonly speeds: readonly Float64Array[];
  readonly desiredPositions: readonly Float64Array[];
  readonly desiredSpeeds: readonly Float64Array[];
  readonly errors: readonly Float64Array[];
  readonly torques: readonly Float64Array[];
  readonly frictions: readonly Float64Array[];
  /** Platform orientation φ and its desired value, rad (3-DOF; absent for 2-DOF). */
  readonly phi?: Float64Array;
  readonly desiredPhi?: Float64Array;
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
  /** One entry per actuated joint. */
  readonly joints: readonly JointSimulationSummary[];
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
export interface Segment {
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
export const FRACTION_NUDGE = 1e-12;

export function buildSegments(trajectory: CycleTrajectory | null, duration: number): Segment[] {
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

/** Series buffers for `joints` actuated joints; the named joint-1/2 fields alias the per-joint arrays. */
export function allocateSeries(count: number, actuators: readonly ('revolute' | 'prismatic')[] = ['revolute', 'revolute'], platformTurns = false): SimulationSeries {
  const a = (): Float64Array => new Float64Array(count);
  const per = (): Float64Array[] => actuators.map(() => a());
  const positions = per(), speeds = per(), desiredPositions = per(), desiredSpeeds = per(), errors = per(), torques = per(), frictions = per();
  const second = (list: Float64Array[]): Float64Array => list[1] ?? a();
  return {
    count,
    time: a(), theta1: positions[0]!, theta2: second(positions), speed1: speeds[0]!, speed2: second(speeds),
    desiredTheta1: desiredPositions[0]!, desiredTheta2: second(desiredPositions), desiredSpeed1: desiredSpeeds[0]!, desiredSpeed2: second(desiredSpeeds),
    error1: errors[0]!, error2: second(errors), x: a(), y: a(), desiredX: a(), desiredY: a(), endPointError: a(),
    torque1: torques[0]!, torque2: second(torques), friction1: frictions[0]!, friction2: second(frictions), closure: a(), kinetic: a(), potential: a(), work: a(),
    actuators, positions, speeds, desiredPositions, desiredSpeeds, errors, torques, frictions,
    ...(platformTurns ? { phi: a(), desiredPhi: a() } : {}),
  };
}

export interface SummaryInputs {
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

export function summarise(series: SimulationSeries, inputs: SummaryInputs): SimulationSummary {
  const joint = (axis: number): JointSimulationSummary => {
    const torque = series.torques[axis]!;
    const speed = series.speeds[axis]!;
    const error = series.errors[axis]!;
    const peakTorque = maxAbs(torque);
    const rmsTorque = rms(series.time, torque);
    const peakSpeed = maxAbs(speed);
    const limits = inputs.limits;
    const peakLimit = limits ? limits.peakTorque[axis]! : null;
    const ratedLimit = limits ? limits.ratedTorque[axis]! : null;
    const speedLimit = limits ? limits.speed[axis]! : null;
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
    joints: series.positions.map((_, axis) => joint(axis)),
    integrator: inputs.integrator,
  };
}
