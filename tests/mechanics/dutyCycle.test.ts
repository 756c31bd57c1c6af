/**
 * Duty cycles (src/mechanics/dutyCycle.ts): motion-law boundary conditions, velocity and
 * acceleration analysis against finite differences, the joint-space terms against poseDynamics,
 * the energy balance, RMS torque against its definition and a closed form, time scaling, the
 * shortest cycle time, and the study/evaluator integration. The MuJoCo check of τ is in
 * reference-mujoco-dynamics.test.ts.
 */
import { describe, expect, it } from 'vitest';
import { FiveBarPose, PoseStatus, poseDynamics, solvePose, type FiveBarModel } from '../helpers/fiveBarClosedForm.js';
import {
  CycleSamples,
  CycleSummary,
  CycleTrajectory,
  DutyCycleAnalysis as GenericDutyCycleAnalysis,
  MOTION_LAWS,
  motionLaw,
  type CycleDriveLimits,
  type CyclePath,
  type CycleStep,
  type EndPointState,
  type JointFriction,
} from '../../src/mechanics/dutyCycle.js';
import {
  FiveBarMotion,
  JointSpaceDynamics,
  endPointAcceleration,
  inverseDynamics,
  jointRatesFromPath,
  jointSpaceDynamics,
  poseFromJointAngles,
} from '../helpers/fiveBarClosedFormCycle.js';
import { fiveBar } from '../../src/architectures/fivebar.js';
import { legModelOf } from '../helpers/fiveBarLegModel.js';
import type { ArchitectureModelBase, PlanarArchitecture } from '../../src/architectures/types.js';
import { Evaluator, constraintDefinitions } from '../../src/mechanics/evaluate.js';
import { metricIndex } from '../../src/mechanics/metrics.js';
import { loadStudyFile, parseStudyText, StudyError } from '../../src/study/parse.js';

/** The generic analysis on a five-bar engine model, through the architecture interface. */
class DutyCycleAnalysis extends GenericDutyCycleAnalysis {
  constructor(samples: CycleSamples, friction: readonly JointFriction[] | null = null) {
    super(samples, friction, fiveBar as unknown as PlanarArchitecture<ArchitectureModelBase>);
  }
  runFiveBar(model: FiveBarModel): boolean {
    return this.run(legModelOf(model));
  }
}

/** Asymmetric five-bar with every inertia field non-zero (invented numbers). */
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

function newState(): EndPointState {
  return { x: 0, y: 0, vx: 0, vy: 0, ax: 0, ay: 0 };
}

/** Interior times of every move of PATH (away from the step ends, where laws switch). */
function interiorTimes(trajectory: CycleTrajectory, perStep: number): number[] {
  const out: number[] = [];
  let t0 = 0;
  for (const step of trajectory.path.steps) {
    if (step.kind !== 'dwell') for (let j = 1; j <= perStep; j++) out.push(t0 + (step.time * j) / (perStep + 1));
    t0 += step.time;
  }
  return out;
}

describe('motion laws', () => {
  const out = new Float64Array(4);
  const at = (law: (typeof MOTION_LAWS)[number], tau: number, f?: number): number[] => {
    motionLaw(law, tau, out, f);
    return Array.from(out);
  };

  it.each(MOTION_LAWS)('%s runs from 0 to 1 and its derivatives match finite differences', (law) => {
    expect(at(law, 0)[0]).toBe(0);
    expect(at(law, 1)[0]).toBeCloseTo(1, 14);
    const h = 1e-5;
    for (const tau of [0.11, 0.3, 0.52, 0.77, 0.93]) {
      const [, v, a, j] = at(law, tau);
      // Central differences, O(h²) (derived).
      expect((at(law, tau + h)[0]! - at(law, tau - h)[0]!) / (2 * h)).toBeCloseTo(v!, 7);
      expect((at(law, tau + h)[1]! - at(law, tau - h)[1]!) / (2 * h)).toBeCloseTo(a!, 5);
      if (law !== 'trapezoidal') expect((at(law, tau + h)[2]! - at(law, tau - h)[2]!) / (2 * h)).toBeCloseTo(j!, 4);
    }
  });

  it('cycloidal, poly5 and poly7 start and stop with zero velocity and acceleration; poly7 also with zero jerk', () => {
    // Boundary conditions of these laws by construction (derived from their polynomials / sine term).
    for (const law of ['cycloidal', 'poly5', 'poly7'] as const) {
      for (const tau of [0, 1]) {
        const [, v, a, j] = at(law, tau);
        expect(Math.abs(v!), `${law} velocity at ${tau}`).toBeLessThan(1e-12);
        expect(Math.abs(a!), `${law} acceleration at ${tau}`).toBeLessThan(1e-12);
        if (law === 'poly7') expect(Math.abs(j!), `poly7 jerk at ${tau}`).toBeLessThan(1e-12);
      }
    }
    // ...and the others do not (so the checks above can fail): poly5 and cycloidal jerk ≠ 0 at the ends.
    expect(Math.abs(at('poly5', 0)[3]!)).toBe(60);
    expect(at('cycloidal', 0)[3]).toBeCloseTo(4 * Math.PI * Math.PI, 12);
    // Peak normalised speeds: cycloidal 2, poly5 15/8, poly7 35/16 at τ = 1/2 (derived by substitution).
    expect(at('cycloidal', 0.5)[1]).toBeCloseTo(2, 14);
    expect(at('poly5', 0.5)[1]).toBeCloseTo(15 / 8, 14);
    expect(at('poly7', 0.5)[1]).toBeCloseTo(35 / 16, 14);
  });

  it('trapezoidal velocity: zero speed at the ends, cruise speed 1/(1 − f), continuous position and speed', () => {
    for (const f of [0.1, 0.25, 1 / 3, 0.5]) {
      expect(at('trapezoidal', 0, f)[1]).toBe(0);
      expect(at('trapezoidal', 1, f)[1]).toBeCloseTo(0, 14);
      expect(at('trapezoidal', 0.5, f)[1]).toBeCloseTo(1 / (1 - f), 12);
      // Derived: area under the speed trapezoid is 1 → cruise speed 1/(1 − f), acceleration 1/(f(1 − f)).
      expect(at('trapezoidal', f / 2, f)[2]).toBeCloseTo(1 / (f * (1 - f)), 12);
      for (const edge of [f, 1 - f]) {
        expect(at('trapezoidal', edge - 1e-12, f)[0]).toBeCloseTo(at('trapezoidal', edge + 1e-12, f)[0]!, 9);
        expect(at('trapezoidal', edge - 1e-12, f)[1]).toBeCloseTo(at('trapezoidal', edge + 1e-12, f)[1]!, 9);
      }
    }
  });
});

describe('cycle path and samples', () => {
  it('positions and velocities along the path match finite differences; samples carry the cycle time as weights', () => {
    const trajectory = new CycleTrajectory(PATH);
    const s = newState();
    const a = newState();
    const b = newState();
    const h = 1e-6;
    // 6 interior times per step: none falls on the trapezoidal law's switch points (f = 1/4, 3/4).
    for (const t of interiorTimes(trajectory, 6)) {
      trajectory.stateAt(t, s);
      trajectory.stateAt(t + h, a);
      trajectory.stateAt(t - h, b);
      expect((a.x - b.x) / (2 * h)).toBeCloseTo(s.vx, 6);
      expect((a.y - b.y) / (2 * h)).toBeCloseTo(s.vy, 6);
      expect((a.vx - b.vx) / (2 * h)).toBeCloseTo(s.ax, 3);
      expect((a.vy - b.vy) / (2 * h)).toBeCloseTo(s.ay, 3);
    }
    // The arc keeps its radius about the centre (derived).
    trajectory.stateAt(0.22 + 0.12 + 0.05 + 0.09, s);
    expect(Math.hypot(s.x - 0.0, s.y - 0.3)).toBeCloseTo(Math.hypot(0.05, 0.06), 14);
    const samples = new CycleSamples(trajectory, 200);
    let moving = 0;
    let dwelling = 0;
    for (let k = 0; k < samples.count; k++) (samples.moving[k] ? (moving += samples.weight[k]!) : (dwelling += samples.weight[k]!));
    expect(moving).toBeCloseTo(0.72, 14);
    expect(dwelling).toBeCloseTo(0.05, 14);
    expect(Math.abs(samples.count - 200)).toBeLessThanOrEqual(4);
  });
});

describe('velocity and acceleration analysis along the path', () => {
  it('θ̇, θ̈, β̇, β̈ equal central differences of the inverse kinematics in time', () => {
    const trajectory = new CycleTrajectory(PATH);
    const s = newState();
    const pose = new FiveBarPose();
    const motion = new FiveBarMotion();
    const probe = new FiveBarPose();
    const probeMotion = new FiveBarMotion();
    const angles = (t: number): number[] => {
      trajectory.stateAt(t, s);
      expect(solvePose(MODEL, probe, s.x, s.y)).toBe(PoseStatus.Assembled);
      jointRatesFromPath(MODEL, probe, s.vx, s.vy, s.ax, s.ay, probeMotion);
      return [probe.theta1, probe.theta2, Math.atan2(probe.u1y, probe.u1x), Math.atan2(probe.u2y, probe.u2x), probeMotion.dtheta1, probeMotion.dtheta2, probeMotion.drod1, probeMotion.drod2];
    };
    const h = 1e-5;
    let worst = 0;
    for (const t of interiorTimes(trajectory, 9)) {
      trajectory.stateAt(t, s);
      expect(solvePose(MODEL, pose, s.x, s.y)).toBe(PoseStatus.Assembled);
      jointRatesFromPath(MODEL, pose, s.vx, s.vy, s.ax, s.ay, motion);
      const ahead = angles(t + h);
      const behind = angles(t - h);
      const fd = ahead.map((v, i) => (v - behind[i]!) / (2 * h));
      const engine = [motion.dtheta1, motion.dtheta2, motion.drod1, motion.drod2, motion.ddtheta1, motion.ddtheta2, motion.ddrod1, motion.ddrod2];
      for (let i = 0; i < 8; i++) {
        // O(h²) central differences (derived): rates to ~1e-8, accelerations to ~1e-5 relative.
        const scale = Math.abs(engine[i]!) + (i < 4 ? 1 : 10);
        const gap = Math.abs(fd[i]! - engine[i]!) / scale;
        worst = Math.max(worst, gap);
        expect(gap, `component ${i} at t = ${t}`).toBeLessThan(1e-6);
      }
    }
    console.info(`θ̇, θ̈, β̇, β̈ vs finite differences: worst scaled gap ${worst.toExponential(2)}`);
  });

  it('endPointAcceleration inverts jointRatesFromPath: P̈ = J θ̈ + J̇ θ̇ gives back the path acceleration', () => {
    const trajectory = new CycleTrajectory(PATH);
    const s = newState();
    const pose = new FiveBarPose();
    const motion = new FiveBarMotion();
    const back = new FiveBarMotion();
    for (const t of interiorTimes(trajectory, 5)) {
      trajectory.stateAt(t, s);
      solvePose(MODEL, pose, s.x, s.y);
      jointRatesFromPath(MODEL, pose, s.vx, s.vy, s.ax, s.ay, motion);
      endPointAcceleration(MODEL, pose, motion.dtheta1, motion.dtheta2, motion.ddtheta1, motion.ddtheta2, back);
      const scale = Math.hypot(s.ax, s.ay) + 1;
      expect(Math.abs(back.vx - s.vx) + Math.abs(back.vy - s.vy)).toBeLessThan(1e-12 * (Math.hypot(s.vx, s.vy) + 1));
      expect(Math.abs(back.ax - s.ax) + Math.abs(back.ay - s.ay)).toBeLessThan(1e-10 * scale);
      expect(back.ddrod1).toBeCloseTo(motion.ddrod1, 9);
      expect(back.ddrod2).toBeCloseTo(motion.ddrod2, 9);
    }
  });
});

describe('joint-space dynamics terms', () => {
  it('D and g equal poseDynamics; D θ̈ + C θ̇ + g equals the inverse dynamics along the path', () => {
    const trajectory = new CycleTrajectory(PATH);
    const s = newState();
    const pose = new FiveBarPose();
    const motion = new FiveBarMotion();
    const terms = new JointSpaceDynamics();
    for (const t of interiorTimes(trajectory, 5)) {
      trajectory.stateAt(t, s);
      solvePose(MODEL, pose, s.x, s.y);
      poseDynamics(MODEL, pose);
      jointRatesFromPath(MODEL, pose, s.vx, s.vy, s.ax, s.ay, motion);
      inverseDynamics(MODEL, pose, motion);
      expect(jointSpaceDynamics(MODEL, pose.theta1, pose.theta2, motion.dtheta1, motion.dtheta2, terms)).toBe(PoseStatus.Assembled);
      // Same end point from the joint angles (forward kinematics in the assembly mode).
      expect(Math.hypot(terms.x - s.x, terms.y - s.y)).toBeLessThan(1e-12);
      const dScale = Math.abs(pose.d11) + Math.abs(pose.d22);
      expect(Math.abs(terms.d11 - pose.d11) + Math.abs(terms.d12 - pose.d12) + Math.abs(terms.d22 - pose.d22)).toBeLessThan(1e-12 * dScale);
      expect(Math.abs(terms.g1 - pose.tauG1) + Math.abs(terms.g2 - pose.tauG2)).toBeLessThan(1e-12 * (Math.abs(pose.tauG1) + Math.abs(pose.tauG2)));
      const tau1 = terms.d11 * motion.ddtheta1 + terms.d12 * motion.ddtheta2 + terms.c1 + terms.g1;
      const tau2 = terms.d12 * motion.ddtheta1 + terms.d22 * motion.ddtheta2 + terms.c2 + terms.g2;
      const scale = Math.abs(motion.tauInertial1 + motion.tauGravity1) + Math.abs(motion.tauInertial2 + motion.tauGravity2);
      expect(Math.abs(tau1 - motion.tauInertial1 - motion.tauGravity1) + Math.abs(tau2 - motion.tauInertial2 - motion.tauGravity2)).toBeLessThan(1e-11 * scale);
      // End-point acceleration analysis: P̈ = J θ̈ + J̇ θ̇.
      const ax = terms.j11 * motion.ddtheta1 + terms.j12 * motion.ddtheta2 + terms.biasAx;
      const ay = terms.j21 * motion.ddtheta1 + terms.j22 * motion.ddtheta2 + terms.biasAy;
      expect(Math.abs(ax - s.ax) + Math.abs(ay - s.ay)).toBeLessThan(1e-10 * (Math.hypot(s.ax, s.ay) + 1));
      // The velocity term is quadratic in θ̇ (derived: C(θ, θ̇) is linear in θ̇).
      const doubled = new JointSpaceDynamics();
      jointSpaceDynamics(MODEL, pose.theta1, pose.theta2, 2 * motion.dtheta1, 2 * motion.dtheta2, doubled);
      expect(doubled.c1).toBeCloseTo(4 * terms.c1, 10);
      expect(doubled.c2).toBeCloseTo(4 * terms.c2, 10);
    }
  });

  it('poseFromJointAngles reports unreachable angles and refuses nothing it can assemble', () => {
    const pose = new FiveBarPose();
    const scratch = new Float64Array(2);
    // Short rod 2 (0.1 m): with θ = (0, π) the elbows are 0.149 m apart, less than |d_1 − d_2| = 0.18 m.
    expect(poseFromJointAngles({ ...MODEL, rod: [0.28, 0.1] }, pose, 0, Math.PI, scratch)).toBe(PoseStatus.Unreachable);
    solvePose(MODEL, pose, 0, 0.3);
    const [t1, t2] = [pose.theta1, pose.theta2];
    expect(poseFromJointAngles(MODEL, pose, t1, t2, scratch)).toBe(PoseStatus.Assembled);
    expect(Math.hypot(pose.x, pose.y - 0.3)).toBeLessThan(1e-12);
  });
});

describe('energy balance without friction', () => {
  it('the power τ·θ̇ equals dE/dt, E = ½ θ̇ᵀDθ̇ + V (derived: D θ̈ + C θ̇ + g = τ with Ḋ − 2C skew)', () => {
    const trajectory = new CycleTrajectory(PATH);
    const s = newState();
    const pose = new FiveBarPose();
    const motion = new FiveBarMotion();
    const [gx, gy] = MODEL.gravity;
    // Energy with D from poseDynamics (checked against MuJoCo elsewhere) and V = −γ·Σ m r.
    const energy = (t: number): number => {
      trajectory.stateAt(t, s);
      solvePose(MODEL, pose, s.x, s.y);
      poseDynamics(MODEL, pose);
      jointRatesFromPath(MODEL, pose, s.vx, s.vy, s.ax, s.ay, motion);
      const w1 = motion.dtheta1;
      const w2 = motion.dtheta2;
      const kinetic = 0.5 * (pose.d11 * w1 * w1 + 2 * pose.d12 * w1 * w2 + pose.d22 * w2 * w2);
      let firstMomentX = MODEL.crankFirstMoment[0] * pose.e1x + MODEL.crankFirstMoment[1] * pose.e2x;
      let firstMomentY = MODEL.crankFirstMoment[0] * pose.e1y + MODEL.crankFirstMoment[1] * pose.e2y;
      firstMomentX += MODEL.rodMass[0] * (pose.c1x + MODEL.rodComDistance[0] * pose.u1x) + MODEL.rodMass[1] * (pose.c2x + MODEL.rodComDistance[1] * pose.u2x);
      firstMomentY += MODEL.rodMass[0] * (pose.c1y + MODEL.rodComDistance[0] * pose.u1y) + MODEL.rodMass[1] * (pose.c2y + MODEL.rodComDistance[1] * pose.u2y);
      firstMomentX += MODEL.endMass * s.x;
      firstMomentY += MODEL.endMass * s.y;
      // Cranks' first moments are about the pivots; the constant pivot offsets drop out of dE/dt.
      return kinetic - (gx * firstMomentX + gy * firstMomentY);
    };
    const h = 1e-5;
    let worst = 0;
    let peakPower = 0;
    const gaps: number[] = [];
    // 10 interior times per step: none on the trapezoidal law's acceleration jumps (τ jumps there).
    for (const t of interiorTimes(trajectory, 10)) {
      trajectory.stateAt(t, s);
      solvePose(MODEL, pose, s.x, s.y);
      jointRatesFromPath(MODEL, pose, s.vx, s.vy, s.ax, s.ay, motion);
      inverseDynamics(MODEL, pose, motion);
      const power = (motion.tauInertial1 + motion.tauGravity1) * motion.dtheta1 + (motion.tauInertial2 + motion.tauGravity2) * motion.dtheta2;
      const rate = (energy(t + h) - energy(t - h)) / (2 * h);
      peakPower = Math.max(peakPower, Math.abs(power));
      gaps.push(Math.abs(power - rate));
    }
    for (const g of gaps) worst = Math.max(worst, g / peakPower);
    console.info(`energy balance: worst |τ·θ̇ − dE/dt| / peak power = ${worst.toExponential(2)} (peak power ${peakPower.toFixed(3)} W)`);
    expect(peakPower).toBeGreaterThan(1);
    expect(worst).toBeLessThan(1e-7);
  });
});

// ---------------------------------------------------------------------------------------------

/**
 * Single link: only crank 1 carries mass (a uniform bar, m, L = p_1); both pivots coincide and the
 * legs mirror each other, so when P runs round a circle about the pivot at constant speed the crank
 * turns rigidly with it: θ_1 = φ + const, θ̇_1 = ω, θ̈_1 = 0.
 */
const BAR_MASS = 1.3;
const G = 9.81;
function singleLinkModel(): FiveBarModel {
  const p = 0.2;
  return {
    pivotX: [0, 0], pivotY: [0, 0], crank: [p, p], rod: [0.3, 0.3], sigma: [1, -1], assembly: 1, jointLimits: [null, null],
    crankInertiaAboutPivot: [(BAR_MASS * p * p) / 3, 0], crankFirstMoment: [(BAR_MASS * p) / 2, 0],
    rodMass: [0, 0], rodComDistance: [0.15, 0.15], rodInertiaAboutCom: [0, 0], endMass: 0, reflectedInertia: [0, 0],
    gravity: [0, -G], complianceBending: [0, 0], complianceCrankAxial: [0, 0], complianceRodAxial: [0, 0],
  };
}

describe('RMS torque', () => {
  it('constant-speed single link: RMS = √(b²ω² + (m g L/2)²/2), peak speed ω, τ_2 = 0 (derived)', () => {
    let model = singleLinkModel();
    const pose = new FiveBarPose();
    const status = solvePose(model, pose, 0.35, 0);
    if (status === PoseStatus.WrongAssembly) model = { ...model, assembly: -1 };
    expect(solvePose(model, pose, 0.35, 0)).toBe(PoseStatus.Assembled);
    const period = 0.8; // s
    const omega = (2 * Math.PI) / period;
    const viscous = 0.05; // N·m·s/rad
    const friction: [JointFriction, JointFriction] = [{ viscous, coulomb: 0 }, { viscous: 0, coulomb: 0 }];
    const path: CyclePath = { start: [0.35, 0], steps: [{ kind: 'arc', centre: [0, 0], angle: 2 * Math.PI, law: 'constant-speed', time: period }] };
    const analysis = new DutyCycleAnalysis(new CycleSamples(new CycleTrajectory(path), 200), friction);
    expect(analysis.runFiveBar(model)).toBe(true);
    const summary = analysis.summarise(1, null, new CycleSummary());
    // τ_1(t) = b ω + m g (L/2) cos θ_1(t) with θ_1 uniform over a revolution: mean of cos² is 1/2 and of
    // cos is 0 (derived). The trapezoid rule over a whole period integrates these exactly.
    const halfWeight = (BAR_MASS * G * 0.2) / 2;
    const rmsClosedForm = Math.sqrt(viscous * viscous * omega * omega + (halfWeight * halfWeight) / 2);
    console.info(`single link: RMS ${summary.rmsTorque1} vs closed form ${rmsClosedForm} (relative ${Math.abs(summary.rmsTorque1 / rmsClosedForm - 1).toExponential(2)})`);
    expect(Math.abs(summary.rmsTorque1 / rmsClosedForm - 1)).toBeLessThan(1e-12);
    expect(summary.peakSpeed1).toBeCloseTo(omega, 12);
    expect(summary.rmsTorque2).toBeLessThan(1e-12);
    // Peak: b ω + m g L/2 (derived), reached to within the sampling of cos near its maximum.
    expect(summary.peakTorque1).toBeLessThanOrEqual(viscous * omega + halfWeight + 1e-12);
    expect(summary.peakTorque1).toBeGreaterThan((viscous * omega + halfWeight) * (1 - 1e-3));
    for (let k = 0; k < analysis.samples.count; k++) expect(Math.abs(analysis.ddtheta1[k]!)).toBeLessThan(1e-9);
  });

  it('equals the root of the time-mean of τ² computed independently on a fine grid (definition)', () => {
    const friction: [JointFriction, JointFriction] = [{ viscous: 0.03, coulomb: 0.2 }, { viscous: 0.01, coulomb: 0.1 }];
    const trajectory = new CycleTrajectory(PATH);
    const analysis = new DutyCycleAnalysis(new CycleSamples(trajectory, 4000), friction);
    expect(analysis.runFiveBar(MODEL)).toBe(true);
    const summary = analysis.summarise(1, null, new CycleSummary());
    // Independent: composite Simpson over each step with 2000 intervals, τ solved at each time.
    const s = newState();
    const pose = new FiveBarPose();
    const motion = new FiveBarMotion();
    const torqueAt = (k: number, t: number, out: number[]): void => {
      trajectory.stepStateAt(k, t, s);
      solvePose(MODEL, pose, s.x, s.y);
      jointRatesFromPath(MODEL, pose, s.vx, s.vy, s.ax, s.ay, motion);
      inverseDynamics(MODEL, pose, motion);
      out[0] = motion.tauInertial1 + motion.tauGravity1 + friction[0].viscous * motion.dtheta1 + friction[0].coulomb * Math.sign(motion.dtheta1);
      out[1] = motion.tauInertial2 + motion.tauGravity2 + friction[1].viscous * motion.dtheta2 + friction[1].coulomb * Math.sign(motion.dtheta2);
    };
    const integral = [0, 0];
    const tau = [0, 0];
    let t0 = 0;
    PATH.steps.forEach((step, k) => {
      const n = 2000;
      const h = step.time / n;
      for (let j = 0; j <= n; j++) {
        torqueAt(k, t0 + j * h, tau);
        const w = (h / 3) * (j === 0 || j === n ? 1 : j % 2 === 1 ? 4 : 2);
        integral[0] += w * tau[0]! * tau[0]!;
        integral[1] += w * tau[1]! * tau[1]!;
      }
      t0 += step.time;
    });
    const rms1 = Math.sqrt(integral[0]! / t0);
    const rms2 = Math.sqrt(integral[1]! / t0);
    console.info(`RMS vs fine Simpson: ${summary.rmsTorque1} / ${rms1}, ${summary.rmsTorque2} / ${rms2}`);
    // The engine's trapezoid nodes (≈4000) against Simpson on 2000 intervals per step; the trapezoidal
    // law's acceleration jumps limit both to O(h), hence 1e-4.
    expect(Math.abs(summary.rmsTorque1 / rms1 - 1)).toBeLessThan(1e-4);
    expect(Math.abs(summary.rmsTorque2 / rms2 - 1)).toBeLessThan(1e-4);
    // And the definition on the engine's own nodes: √(Σ w τ² / T).
    let sq = 0;
    for (let k = 0; k < analysis.samples.count; k++) sq += analysis.samples.weight[k]! * analysis.torque1[k]! ** 2;
    expect(Math.sqrt(sq / summary.cycleTime)).toBeCloseTo(summary.rmsTorque1, 12);
  });
});

describe('time scaling and the shortest cycle time', () => {
  const friction: [JointFriction, JointFriction] = [{ viscous: 0.03, coulomb: 0.2 }, { viscous: 0.01, coulomb: 0.1 }];
  const scaledPath = (scale: number): CyclePath => ({
    start: PATH.start,
    steps: PATH.steps.map((st): CycleStep => (st.kind === 'dwell' ? st : { ...st, time: st.time * scale })),
  });

  it('τ(s) = τ_const + τ_visc/s + τ_dyn/s² equals solving the slowed cycle again (derived)', () => {
    const base = new DutyCycleAnalysis(new CycleSamples(new CycleTrajectory(PATH), 200), friction);
    base.runFiveBar(MODEL);
    for (const scale of [0.6, 1.7, 3]) {
      const summary = base.summarise(scale, null, new CycleSummary());
      const direct = new DutyCycleAnalysis(new CycleSamples(new CycleTrajectory(scaledPath(scale)), 200), friction);
      direct.runFiveBar(MODEL);
      const reference = direct.summarise(1, null, new CycleSummary());
      expect(summary.cycleTime).toBeCloseTo(reference.cycleTime, 14);
      for (let k = 0; k < base.samples.count; k++) {
        expect(base.torque1[k]).toBeCloseTo(direct.torque1[k]!, 10);
        expect(base.torque2[k]).toBeCloseTo(direct.torque2[k]!, 10);
      }
      expect(summary.rmsTorque1).toBeCloseTo(reference.rmsTorque1, 11);
      expect(summary.peakPower2).toBeCloseTo(reference.peakPower2, 10);
      expect(summary.peakSpeed1).toBeCloseTo(reference.peakSpeed1, 11);
    }
  });

  it('min cycle time: every slower pace meets the limits, a slightly faster one does not (brute force over paces)', () => {
    const analysis = new DutyCycleAnalysis(new CycleSamples(new CycleTrajectory(PATH), 200), friction);
    analysis.runFiveBar(MODEL);
    const atReference = analysis.summarise(1, null, new CycleSummary());
    // Limits that bind at different paces: peak, RMS and speed each tested in turn (invented numbers).
    const cases: [string, CycleDriveLimits][] = [
      ['peak', { peakTorque: [0.8 * atReference.peakTorque1, 10 * atReference.peakTorque2], ratedTorque: [1e3, 1e3], speed: [1e3, 1e3] }],
      ['rms', { peakTorque: [1e3, 1e3], ratedTorque: [10 * atReference.rmsTorque1, 0.7 * atReference.rmsTorque2], speed: [1e3, 1e3] }],
      ['speed', { peakTorque: [1e3, 1e3], ratedTorque: [1e3, 1e3], speed: [0.5 * atReference.peakSpeed1, 1e3] }],
    ];
    const summary = new CycleSummary();
    const feasible = (cycleTime: number, limits: CycleDriveLimits): boolean => {
      analysis.summarise(analysis.timeScaleFor(cycleTime), null, summary);
      return (
        summary.peakTorque1 <= limits.peakTorque[0] && summary.peakTorque2 <= limits.peakTorque[1] &&
        summary.rmsTorque1 <= limits.ratedTorque[0] && summary.rmsTorque2 <= limits.ratedTorque[1] &&
        summary.peakSpeed1 <= limits.speed[0] && summary.peakSpeed2 <= limits.speed[1]
      );
    };
    for (const [name, limits] of cases) {
      const best = analysis.minCycleTime(limits);
      expect(Number.isFinite(best), name).toBe(true);
      expect(best, name).toBeGreaterThan(atReference.cycleTime);
      // Slower paces all feasible (sampled), a pace 1e-6 faster not.
      for (const factor of [1 + 1e-9, 1.001, 1.01, 1.1, 1.5, 3, 10]) expect(feasible(best * factor, limits), `${name} ×${factor}`).toBe(true);
      expect(feasible(best * (1 - 1e-6), limits), `${name} faster`).toBe(false);
    }
    // The speed case has a closed form: the pace where the peak speed meets the limit, T = s T_m + T_d (derived).
    const speedLimit = cases[2]![1].speed[0];
    expect(analysis.minCycleTime(cases[2]![1])).toBeCloseTo((atReference.peakSpeed1 / speedLimit) * 0.72 + 0.05, 12);
    // Gravity alone above the peak limit: no pace works.
    expect(analysis.minCycleTime({ peakTorque: [1e-3, 1e3], ratedTorque: [1e3, 1e3], speed: [1e3, 1e3] })).toBe(Infinity);
  });
});

// ---------------------------------------------------------------------------------------------

describe('study files and the evaluator', () => {
  const demoPath = new URL('../../studies/parcel-sorter-cycle.yaml', import.meta.url).pathname;

  it('the demo cycle study parses with units, closes its cycle, and evaluates to finite cycle metrics and drive limits', () => {
    const loaded = loadStudyFile(demoPath);
    const duty = loaded.study.dutyCycle!;
    expect(duty.path.start).toEqual([-0.15, -0.5]);
    expect(duty.path.steps).toHaveLength(8);
    expect(duty.requiredRate).toBeCloseTo(50 / 60, 14);
    expect(loaded.study.friction![0].viscous).toBeCloseTo(0.02, 14);
    expect(loaded.study.friction![1].coulomb).toBeCloseTo(0.15, 14);
    const names = constraintDefinitions(loaded.study).map((c) => c.name);
    for (const n of ['cycle_torque_1', 'cycle_rms_1', 'cycle_speed_1', 'cycle_torque_2', 'cycle_rms_2', 'cycle_speed_2', 'cycle_rate']) expect(names).toContain(n);
    const evaluator = new Evaluator(loaded.study);
    const design = Float64Array.of(0.2, 0.3, 0.45);
    const result = evaluator.evaluate(design);
    for (const name of ['cycle_peak_torque', 'cycle_rms_torque_1', 'cycle_peak_speed_2', 'cycle_peak_power', 'min_cycle_time']) {
      expect(Number.isFinite(result.metrics[metricIndex(name)]!), name).toBe(true);
    }
    // The shortest cycle time meets the limits at its own pace: evaluating there gives margins ≥ 0 on the drive limits.
    const minTime = result.metrics[metricIndex('min_cycle_time')]!;
    const atMin = parseStudyText(loaded.text.replace('required_rate: 50 1/min', `cycle_time: ${minTime * (1 + 1e-9)} s`), 'at-min');
    const again = new Evaluator(atMin.study).evaluate(design);
    const defs = constraintDefinitions(atMin.study);
    let tightest = Infinity;
    defs.forEach((c, k) => {
      if (c.name.startsWith('cycle_')) {
        expect(again.margins[k]!, c.name).toBeGreaterThanOrEqual(-1e-9);
        tightest = Math.min(tightest, again.margins[k]!);
      }
    });
    expect(tightest).toBeLessThan(1e-6);
    // Same numbers through evaluateWithWorkspace (rescore path).
    const workspace = ['reachable_area', 'workspace_area', 'task_coverage', 'inscribed_radius'].map((n) => result.metrics[metricIndex(n)]!);
    const rescored = evaluator.evaluateWithWorkspace(design, workspace);
    expect(rescored.metrics[metricIndex('cycle_rms_torque')]).toBe(result.metrics[metricIndex('cycle_rms_torque')]);
  });

  it('cycle metrics are NaN without a duty cycle, and a cycle metric needs a duty_cycle section', () => {
    const plain = loadStudyFile(new URL('../../studies/parcel-sorter.yaml', import.meta.url).pathname);
    const metrics = new Evaluator(plain.study).evaluate(Float64Array.of(0.2, 0.3, 0.45)).metrics;
    for (const name of ['cycle_peak_torque', 'cycle_rms_torque', 'min_cycle_time']) expect(metrics[metricIndex(name)]).toBeNaN();
    const text = plain.text.replace('- { metric: bandwidth, sense: max }', '- { metric: cycle_rms_torque, sense: min }');
    expect(() => parseStudyText(text, 'no-cycle')).toThrow(/needs a duty_cycle section/);
  });

  it('refuses an open cycle, an unknown waypoint and a viscous coefficient of the wrong kind', () => {
    const text = loadStudyFile(demoPath).text;
    expect(() => parseStudyText(text.replace('- { move_to: pick, law: poly7, time: 120 ms, label: lower }', ''), 'open')).toThrow(StudyError);
    expect(() => parseStudyText(text.replace('- { move_to: pick, law: poly7, time: 120 ms, label: lower }', ''), 'open')).toThrow(/not where it starts/);
    expect(() => parseStudyText(text.replace('move_to: above_place, law: cycloidal', 'move_to: nowhere, law: cycloidal'), 'bad')).toThrow(/"nowhere" is not a waypoint/);
    expect(() => parseStudyText(text.replace('viscous: 0.02 N*m*s/rad', 'viscous: 0.02 N*m'), 'bad')).toThrow(/friction\.both\.viscous/);
  });

  it('a point that leaves the workspace gives +∞ cycle figures', () => {
    const loaded = loadStudyFile(demoPath);
    const far = parseStudyText(loaded.text.replace('place: [150 mm, -500 mm]', 'place: [150 mm, -1500 mm]'), 'far');
    const metrics = new Evaluator(far.study).evaluate(Float64Array.of(0.2, 0.3, 0.45)).metrics;
    expect(metrics[metricIndex('cycle_peak_torque')]).toBe(Infinity);
    expect(metrics[metricIndex('min_cycle_time')]).toBe(Infinity);
  });
});
