/**
 * Forward simulation (src/simulate): the free-chain formulation against the reduced model, energy
 * conservation and loop closure of the unforced chain, Baumgarte stabilisation, tracking under
 * computed torque and PD with gravity compensation on the demo duty cycle, and the torques of a
 * perfectly tracked cycle against the inverse dynamics of dutyCycle.ts.
 */
import { describe, expect, it } from 'vitest';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { CycleTrajectory, type CyclePath, type EndPointState } from '../../src/mechanics/dutyCycle.js';
import { FiveBarMotion, JointSpaceDynamics, inverseDynamics, jointRatesFromPath, jointSpaceDynamics } from '../helpers/fiveBarClosedFormCycle.js';
import { FiveBarPose, PoseStatus, solvePose, type FiveBarModel } from '../helpers/fiveBarClosedForm.js';
import {
  FreeChainAcceleration,
  closureError,
  consistentState,
  freeAccelerations,
  freeChain,
  kineticEnergy,
  potentialEnergy,
} from '../../src/simulate/freeChain.js';
import { SimulationError, cycleStartState, simulate, wrapAngle } from '../../src/simulate/simulate.js';
import { prepareStudySimulation, simulateStudyDesign } from '../../src/simulate/study.js';
import { loadStudyFile } from '../../src/study/parse.js';

const REPO = fileURLToPath(new URL('../../', import.meta.url));
const CYCLE_STUDY = join(REPO, 'studies', 'parcel-sorter-cycle.yaml');
const PLAIN_STUDY = join(REPO, 'studies', 'parcel-sorter.yaml');

/** Asymmetric five-bar with every inertia field non-zero and pivots at different heights (invented numbers). */
const MODEL: FiveBarModel = {
  pivotX: [-0.12, 0.1],
  pivotY: [0.0, 0.05],
  crank: [0.2, 0.16],
  rod: [0.28, 0.32],
  sigma: [1, -1],
  assembly: 1,
  jointLimits: [null, null],
  crankInertiaAboutPivot: [0.0108, 0.0065],
  crankFirstMoment: [0.069, 0.044],
  rodMass: [0.4, 0.5],
  rodComDistance: [0.098, 0.112],
  rodInertiaAboutCom: [0.0031, 0.0052],
  endMass: 0.6,
  reflectedInertia: [0.004, 0.0025],
  gravity: [0.7, -9.81],
  complianceBending: [2e-6, 3e-6],
  complianceCrankAxial: [1e-8, 1e-8],
  complianceRodAxial: [2e-8, 2e-8],
};
const ZERO_GRAVITY: FiveBarModel = { ...MODEL, gravity: [0, 0] };

/** A closed path in MODEL's workspace with a line, a dwell, an arc and a trapezoidal move. */
const PATH: CyclePath = {
  start: [-0.1, 0.25],
  steps: [
    { kind: 'move', to: [0.1, 0.3], law: 'cycloidal', time: 0.22 },
    { kind: 'move', to: [0.05, 0.36], law: 'poly5', time: 0.12 },
    { kind: 'dwell', time: 0.05 },
    { kind: 'arc', centre: [0.0, 0.3], angle: 0.9, law: 'poly7', time: 0.18 },
    { kind: 'move', to: [-0.1, 0.25], law: 'trapezoidal', time: 0.2, accelFraction: 0.25 },
  ],
};

/** A consistent state of MODEL at end point (x, y) with joint rates (w1, w2). */
function stateAt(model: FiveBarModel, x: number, y: number, w1: number, w2: number): Float64Array {
  const pose = new FiveBarPose();
  expect(solvePose(model, pose, x, y)).toBe(PoseStatus.Assembled);
  const state = new Float64Array(8);
  expect(consistentState(model, pose.theta1, pose.theta2, w1, w2, state)).toBe(true);
  return state;
}

/** Seeded uniform numbers (Park–Miller minimal standard generator; common practice, no source). */
function seeded(seed: number): () => number {
  let s = seed;
  return () => {
    s = (s * 16807) % 2147483647;
    return s / 2147483647;
  };
}

describe('free chain with the loop constraint', () => {
  it('gives the reduced model\'s joint accelerations at consistent states', () => {
    // Derived: on the constraint manifold the free equations M q̈ = Q − h − G + Φ_qᵀλ, projected onto
    // the velocities allowed by Φ_q q̇ = 0, are the reduced equations D θ̈ + C θ̇ + g = τ
    // (Ghorbel, Chételat, Gunawardana, Longchamp 2000, "A reduced model for constrained rigid bodies
    // with application to parallel robots", IEEE TCST 8(5)), so θ̈ must agree.
    const random = seeded(12345);
    const dynamics = new JointSpaceDynamics();
    const out = new FreeChainAcceleration();
    let compared = 0;
    for (let trial = 0; trial < 40; trial++) {
      const x = -0.12 + 0.24 * random();
      const y = 0.22 + 0.16 * random();
      const pose = new FiveBarPose();
      if (solvePose(MODEL, pose, x, y) !== PoseStatus.Assembled || pose.inverseCondition < 0.05) continue;
      const w1 = 6 * random() - 3;
      const w2 = 6 * random() - 3;
      const tau1 = 4 * random() - 2;
      const tau2 = 4 * random() - 2;
      const state = stateAt(MODEL, x, y, w1, w2);
      freeAccelerations(freeChain(MODEL), state, tau1, tau2, 200, out);
      expect(jointSpaceDynamics(MODEL, state[0]!, state[2]!, w1, w2, dynamics)).toBe(PoseStatus.Assembled);
      const r1 = tau1 - dynamics.c1 - dynamics.g1;
      const r2 = tau2 - dynamics.c2 - dynamics.g2;
      const det = dynamics.d11 * dynamics.d22 - dynamics.d12 * dynamics.d12;
      const reduced1 = (dynamics.d22 * r1 - dynamics.d12 * r2) / det;
      const reduced2 = (dynamics.d11 * r2 - dynamics.d12 * r1) / det;
      const scale = Math.max(1, Math.abs(reduced1), Math.abs(reduced2));
      expect(Math.abs(out.qdd[0]! - reduced1) / scale).toBeLessThan(1e-9);
      expect(Math.abs(out.qdd[2]! - reduced2) / scale).toBeLessThan(1e-9);
      // The closure's acceleration vanishes too: Φ̈ = Φ_q q̈ + (Φ_q q̇)_q q̇ = 0 (derived from Φ ≡ 0).
      const p = MODEL.crank, d = MODEL.rod;
      const [t1, b1, t2, b2, dt1, db1, dt2, db2] = state as unknown as number[];
      const [a0, a1, a2, a3] = out.qdd;
      const phiDdotX = -p[0] * Math.sin(t1!) * a0! - d[0] * Math.sin(b1!) * a1! + p[1] * Math.sin(t2!) * a2! + d[1] * Math.sin(b2!) * a3!
        - p[0] * Math.cos(t1!) * dt1! ** 2 - d[0] * Math.cos(b1!) * db1! ** 2 + p[1] * Math.cos(t2!) * dt2! ** 2 + d[1] * Math.cos(b2!) * db2! ** 2;
      expect(Math.abs(phiDdotX)).toBeLessThan(1e-9);
      compared++;
    }
    expect(compared).toBeGreaterThan(15);
  });

  it('conserves kinetic energy to 1e-6 and keeps |Φ| below 1e-6 m over 1 s with no controller, friction or gravity', () => {
    // Derived: without drive torque, friction or gravity the chain is conservative and its constraint
    // forces do no work on motions that keep Φ = 0, so T = ½ q̇ᵀ M q̇ stays constant.
    const initial = stateAt(ZERO_GRAVITY, 0.0, 0.3, 4, -3);
    const result = simulate(ZERO_GRAVITY, { controller: 'none', trajectory: null, duration: 1, initialState: initial });
    const s = result.series;
    const chain = freeChain(ZERO_GRAVITY);
    const t0 = kineticEnergy(chain, initial);
    let drift = 0;
    for (let k = 0; k < s.count; k++) drift = Math.max(drift, Math.abs(s.kinetic[k]! - t0) / t0);
    expect(drift).toBeLessThan(1e-6);
    expect(result.summary.relativeEnergyResidual).toBeLessThan(1e-6);
    expect(result.summary.maxClosureError).toBeLessThan(1e-6);
    expect(closureError(chain, result.finalState)).toBeLessThan(1e-6);
    // Not a standstill: the cranks turned and the kinetic energy moved between the bodies.
    expect(Math.abs(result.finalState[0]! - initial[0]!)).toBeGreaterThan(0.5);
    expect(s.time[s.count - 1]).toBe(1);
    console.log(`energy test: relative kinetic-energy drift ${drift.toExponential(2)}, max |Φ| ${result.summary.maxClosureError.toExponential(2)} m`);
  });

  it('conserves kinetic plus potential energy under gravity with no controller', () => {
    // Derived: gravity is conservative, so T + V is constant; measured against the largest T reached.
    const initial = stateAt(MODEL, 0.0, 0.3, 0, 0);
    const result = simulate(MODEL, { controller: 'none', trajectory: null, duration: 1, initialState: initial });
    const s = result.series;
    const chain = freeChain(MODEL);
    const e0 = kineticEnergy(chain, initial) + potentialEnergy(chain, initial);
    let maxKinetic = 0;
    let drift = 0;
    for (let k = 0; k < s.count; k++) {
      maxKinetic = Math.max(maxKinetic, s.kinetic[k]!);
      drift = Math.max(drift, Math.abs(s.kinetic[k]! + s.potential[k]! - e0));
    }
    expect(maxKinetic).toBeGreaterThan(0.5); // it fell and swung
    expect(drift / maxKinetic).toBeLessThan(1e-6);
    expect(result.summary.maxClosureError).toBeLessThan(1e-6);
  });

  it('pulls a state started off the constraint back onto it (Baumgarte)', () => {
    // Derived: Φ̈ + 2αΦ̇ + α²Φ = 0 with α = 200/s decays as (1 + αt) e^{−αt}: after 0.2 s a factor ~1e-16.
    const initial = stateAt(ZERO_GRAVITY, 0.0, 0.3, 1, -1);
    initial[1] = initial[1]! + 1e-3 / ZERO_GRAVITY.rod[0]; // rod 1 turned: |Φ| ≈ 1 mm
    const chain = freeChain(ZERO_GRAVITY);
    expect(closureError(chain, initial)).toBeGreaterThan(5e-4);
    const result = simulate(ZERO_GRAVITY, { controller: 'none', trajectory: null, duration: 0.2, initialState: initial });
    expect(closureError(chain, result.finalState)).toBeLessThan(1e-9);
  });
});

describe('tracking a cycle', () => {
  it('tracks an asymmetric model\'s cycle (lines, dwell, arc, trapezoid) under computed torque', () => {
    const trajectory = new CycleTrajectory(PATH);
    const result = simulate(MODEL, { controller: 'computed-torque', trajectory });
    const s = result.summary;
    // With a perfect model the feedforward is exact: the error stays at integration accuracy.
    expect(s.joints[0].maxTrackingError).toBeLessThan(1e-7);
    expect(s.joints[1].maxTrackingError).toBeLessThan(1e-7);
    expect(s.maxEndPointError).toBeLessThan(1e-7);
    expect(s.maxClosureError).toBeLessThan(1e-9);
    expect(s.relativeEnergyResidual).toBeLessThan(1e-6);
  });

  it('drives a perfectly tracked cycle with the inverse-dynamics torques of dutyCycle.ts', () => {
    const trajectory = new CycleTrajectory(PATH);
    const result = simulate(MODEL, { controller: 'computed-torque', trajectory });
    const series = result.series;
    // Instants where the desired acceleration may jump (step ends, trapezoid switches) are skipped.
    const breaks: number[] = [];
    let t0 = 0;
    for (const step of PATH.steps) {
      breaks.push(t0);
      if (step.kind === 'move' && step.law === 'trapezoidal') {
        const f = step.accelFraction ?? 1 / 3;
        breaks.push(t0 + f * step.time, t0 + (1 - f) * step.time);
      }
      t0 += step.time;
    }
    breaks.push(t0);
    const state: EndPointState = { x: 0, y: 0, vx: 0, vy: 0, ax: 0, ay: 0 };
    const pose = new FiveBarPose();
    const motion = new FiveBarMotion();
    let worst = 0;
    let peak = 0;
    let compared = 0;
    for (let k = 0; k < series.count; k++) {
      const t = series.time[k]!;
      if (breaks.some((b) => Math.abs(b - t) < 1e-9)) continue;
      trajectory.stateAt(t, state);
      solvePose(MODEL, pose, state.x, state.y);
      jointRatesFromPath(MODEL, pose, state.vx, state.vy, state.ax, state.ay, motion);
      inverseDynamics(MODEL, pose, motion);
      const tau1 = motion.tauInertial1 + motion.tauGravity1;
      const tau2 = motion.tauInertial2 + motion.tauGravity2;
      worst = Math.max(worst, Math.abs(series.torque1[k]! - tau1), Math.abs(series.torque2[k]! - tau2));
      peak = Math.max(peak, Math.abs(tau1), Math.abs(tau2));
      compared++;
    }
    expect(compared).toBeGreaterThan(700);
    expect(worst / peak).toBeLessThan(1e-6);
  });

  it('tracks the demo cycle: computed torque within integration accuracy, with an unknown payload within ~1 mrad; PD + gravity worse but bounded', () => {
    const setup = prepareStudySimulation(loadStudyFile(CYCLE_STUDY).study);
    expect(setup.cycleTime).toBeCloseTo(1.2, 12); // required_rate 50/min
    const exact = simulateStudyDesign(setup, { controller: 'computed-torque' });
    const unknownLoad = simulateStudyDesign(setup, { controller: 'computed-torque', extraEndMass: 0.3 });
    const pd = simulateStudyDesign(setup, { controller: 'pd' });
    const maxError = (r: typeof exact): number => Math.max(r.summary.joints[0].maxTrackingError, r.summary.joints[1].maxTrackingError);
    console.log(`demo cycle, max joint tracking error: computed torque ${maxError(exact).toExponential(2)} rad, with 0.3 kg unknown payload ${maxError(unknownLoad).toExponential(2)} rad, PD+g ${maxError(pd).toExponential(2)} rad; end point ${exact.summary.maxEndPointError.toExponential(2)} / ${unknownLoad.summary.maxEndPointError.toExponential(2)} / ${pd.summary.maxEndPointError.toExponential(2)} m`);
    expect(maxError(exact)).toBeLessThan(1e-8);
    expect(maxError(unknownLoad)).toBeGreaterThan(1e-5); // the mismatch is felt…
    expect(maxError(unknownLoad)).toBeLessThan(5e-3); // …and held to a few mrad by the 30 Hz loop
    expect(maxError(pd)).toBeGreaterThan(maxError(unknownLoad));
    expect(maxError(pd)).toBeLessThan(2e-2);
    for (const r of [exact, unknownLoad, pd]) {
      expect(r.summary.maxClosureError).toBeLessThan(1e-9);
      // Derived: E(t) − E(0) = ∫(τ − f)·θ̇ dt (constraint forces do no work).
      expect(r.summary.relativeEnergyResidual).toBeLessThan(1e-6);
      expect(r.summary.joints[0].peakTorqueLimit).toBeCloseTo(0.85 * 10 * 3.8, 9); // η N τ_peak of the demo drive
      expect(r.summary.joints[0].speedLimit).toBeCloseTo((3000 * 2 * Math.PI) / 60 / 10, 9);
    }
    // The heavier plant needs more torque than the nominal one.
    expect(unknownLoad.summary.joints[0].peakTorque).toBeGreaterThan(exact.summary.joints[0].peakTorque);
  });

  it('starts on the cycle, wraps angle errors, and refuses what it cannot simulate', () => {
    const trajectory = new CycleTrajectory(PATH);
    const start = new Float64Array(8);
    expect(cycleStartState(MODEL, trajectory, start)).toBe(true);
    expect(closureError(freeChain(MODEL), start)).toBeLessThan(1e-12);
    expect(wrapAngle(2 * Math.PI + 0.1)).toBeCloseTo(0.1, 12);
    expect(wrapAngle(-Math.PI - 0.1)).toBeCloseTo(Math.PI - 0.1, 12);
    expect(() => simulate(MODEL, { controller: 'none', trajectory: null })).toThrow(SimulationError);
    expect(() => prepareStudySimulation(loadStudyFile(PLAIN_STUDY).study)).toThrow(/no duty_cycle/);
    const dynamics = new JointSpaceDynamics();
    expect(jointSpaceDynamics(MODEL, start[0]!, start[2]!, 0, 0, dynamics)).toBe(PoseStatus.Assembled);
  });
});
