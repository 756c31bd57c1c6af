/**
 * Drive-train checks along a duty cycle (docs/drives.md): every node's motor (speed, torque) inside
 * the peak envelope, the RMS motor torque inside the continuous curve at the mean motor speed, the
 * gearbox output torque within its acceleration rating (every node) and its rated torque (cubic
 * mean), a slider stage's thrust, the input speed, and the inertia ratio; then the shortest cycle
 * time at which all of them hold. Works on any architecture's `DutyCycleAnalysis` (after `run`):
 * at a pace u = 1/s (moves timed s times their reference time) the joint state of a node is
 *   q̇ = q̇_ref u,  q̈ = q̈_ref u²,  τ = τ_const + τ_visc u + τ_inertial u²   (see dutyCycle.ts).
 *
 * Allocation-free per call after construction.
 */
import { curveTorque, driveInertiaAtJoint, forwardEfficiency, gearboxOutputTorque, maxMotorSpeed, motorTorque, transmission, use } from '../drives/envelope.js';
import type { DriveTrain } from '../drives/types.js';

/** The per-node joint data the checks read (DutyCycleAnalysis has every field). */
export interface JointCycle {
  readonly dof: number;
  readonly samples: {
    readonly count: number;
    readonly weight: Float64Array;
    readonly moving: Uint8Array;
    readonly moveTime: number;
    readonly dwellTime: number;
  };
  readonly qd: readonly Float64Array[];
  readonly qdd: readonly Float64Array[];
  readonly effortConstant: readonly Float64Array[];
  readonly effortViscous: readonly Float64Array[];
  readonly effortInertial: readonly Float64Array[];
  readonly inertiaDiagonal: readonly Float64Array[];
}

/** Per-actuator results of one check (reused). Uses are value / limit (≤ 1 holds). */
export class DriveCheckResult {
  readonly peakUse = new Float64Array(3);
  readonly rmsUse = new Float64Array(3);
  readonly gearboxUse = new Float64Array(3);
  readonly speedUse = new Float64Array(3);
  readonly inertiaRatio = new Float64Array(3);
  /** Motor-side figures: largest |τ_m| (N·m), RMS τ_m (N·m), time-mean |ω_m| (rad/s), largest |ω_m| (rad/s). */
  readonly peakMotorTorque = new Float64Array(3);
  readonly rmsMotorTorque = new Float64Array(3);
  readonly meanMotorSpeed = new Float64Array(3);
  readonly peakMotorSpeed = new Float64Array(3);
  /** Gearbox output: largest |T_out| and cubic mean (N·m); stage thrust largest |F| (N; 0 without a stage). */
  readonly peakOutputTorque = new Float64Array(3);
  readonly cubicMeanOutputTorque = new Float64Array(3);
  readonly peakThrust = new Float64Array(3);
  /** Largest use of any check, over the actuators. */
  worst = 0;
}

/**
 * Checks one axis at pace u into `out` (index `axis`). Time weights: a move node's weight stretches
 * with the moves (weight / u); a dwell keeps its time.
 */
export function checkAxis(cycle: JointCycle, axis: number, train: DriveTrain, u: number, out: DriveCheckResult): void {
  const s = cycle.samples;
  const r = transmission(train);
  const eta = forwardEfficiency(train);
  const jDrive = driveInertiaAtJoint(train);
  const wMax = maxMotorSpeed(train);
  const motor = train.motor;
  const gear = train.gearbox;
  const qdRef = cycle.qd[axis]!;
  const qddRef = cycle.qdd[axis]!;
  const c0 = cycle.effortConstant[axis]!;
  const c1 = cycle.effortViscous[axis]!;
  const c2 = cycle.effortInertial[axis]!;
  const dii = cycle.inertiaDiagonal[axis]!;
  const u2 = u * u;
  let peakUse = 0, peakT = 0, peakW = 0, sumT2 = 0, sumW = 0, time = 0;
  let peakOut = 0, sumOut3 = 0, peakF = 0, worstInertia = 0;
  for (let k = 0; k < s.count; k++) {
    const qd = qdRef[k]! * u;
    const qdd = qddRef[k]! * u2;
    const tau = c0[k]! + c1[k]! * u + c2[k]! * u2;
    const dt = s.moving[k] === 1 ? s.weight[k]! / u : s.weight[k]!;
    const tm = motorTorque(tau, qd, qdd, r, eta, jDrive);
    const wm = Math.abs(qd) / r;
    const atm = Math.abs(tm);
    const pu = wm > wMax * (1 + 1e-12) ? (atm > 0 ? Infinity : 0) : use(atm, curveTorque(motor.peak, wm));
    if (pu > peakUse) peakUse = pu;
    if (atm > peakT) peakT = atm;
    if (wm > peakW) peakW = wm;
    sumT2 += dt * tm * tm;
    sumW += dt * wm;
    time += dt;
    const tOut = Math.abs(gearboxOutputTorque(tau, qd, qdd, train, jDrive));
    if (tOut > peakOut) peakOut = tOut;
    sumOut3 += dt * tOut * tOut * tOut;
    if (train.stage) {
      const f = Math.abs(tau - jDrive * qdd);
      if (f > peakF) peakF = f;
    }
    // Load inertia reflected to the motor: D_ii r² holds the rotor itself, which is taken out.
    const ratio = (dii[k]! * r * r - motor.rotorInertia) / motor.rotorInertia;
    if (ratio > worstInertia) worstInertia = ratio;
  }
  const rms = Math.sqrt(sumT2 / time);
  const meanW = sumW / time;
  const cubic = Math.cbrt(sumOut3 / time);
  out.peakUse[axis] = peakUse;
  out.rmsUse[axis] = meanW > wMax ? Infinity : use(rms, curveTorque(motor.continuous, meanW));
  let gearUse = Math.max(use(peakOut, gear.accelerationTorque), use(cubic, gear.ratedTorque));
  if (train.stage) gearUse = Math.max(gearUse, use(peakF, train.stage.maxThrust));
  out.gearboxUse[axis] = gearUse;
  out.speedUse[axis] = use(peakW, wMax);
  out.inertiaRatio[axis] = worstInertia;
  out.peakMotorTorque[axis] = peakT;
  out.rmsMotorTorque[axis] = rms;
  out.meanMotorSpeed[axis] = meanW;
  out.peakMotorSpeed[axis] = peakW;
  out.peakOutputTorque[axis] = peakOut;
  out.cubicMeanOutputTorque[axis] = cubic;
  out.peakThrust[axis] = peakF;
}

/** Every axis at pace u; returns the largest use of any pace-dependent check (peak, RMS, gearbox, speed). */
export function checkCycle(cycle: JointCycle, trains: readonly DriveTrain[], u: number, out: DriveCheckResult): number {
  let worst = 0;
  for (let i = 0; i < cycle.dof; i++) {
    checkAxis(cycle, i, trains[i]!, u, out);
    worst = Math.max(worst, out.peakUse[i]!, out.rmsUse[i]!, out.gearboxUse[i]!, out.speedUse[i]!);
  }
  out.worst = worst;
  return worst;
}

/**
 * Shortest cycle time, s, at which every pace-dependent drive check holds, and holds at every slower
 * pace scanned: the pace u = 1/s is scanned upward from slow (u_0 = 1/64 of the reference pace,
 * doubling until the checks fail, then 64 steps up to there) and the first failure is bisected.
 * +∞ when even the slowest scanned pace fails (the holding torque alone is too much).
 */
export function envelopeMinCycleTime(cycle: JointCycle, trains: readonly DriveTrain[], scratch: DriveCheckResult): number {
  const s = cycle.samples;
  const ok = (u: number): boolean => checkCycle(cycle, trains, u, scratch) <= 1;
  const slow = 1 / 64;
  if (!ok(slow)) return Infinity;
  let top = slow;
  for (let i = 0; i < 40 && ok(top * 2); i++) top *= 2;
  top *= 2;
  const steps = 64;
  let previous = slow;
  let found = top;
  for (let i = 1; i <= steps; i++) {
    const u = slow + ((top - slow) * i) / steps;
    if (!ok(u)) {
      let lo = previous;
      let hi = u;
      for (let it = 0; it < 45; it++) {
        const mid = 0.5 * (lo + hi);
        if (ok(mid)) lo = mid;
        else hi = mid;
      }
      found = lo;
      break;
    }
    previous = u;
  }
  if (s.moveTime === 0) return s.dwellTime;
  return s.moveTime / found + s.dwellTime;
}
