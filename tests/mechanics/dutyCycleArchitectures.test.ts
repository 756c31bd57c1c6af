/**
 * Duty cycles on every architecture through the PlanarArchitecture interface (src/mechanics/dutyCycle.ts):
 * the generic path against the five-bar's closed forms, rates against finite differences, the energy
 * balance, exact time scaling, and the 2-PRR and 3-RRR demo cycle studies in the evaluator. The
 * MuJoCo check of the efforts is in reference-mujoco-cycle.test.ts.
 */
import { describe, expect, it } from 'vitest';
import { fiveBar } from '../../src/architectures/fivebar.js';
import { legModelOf } from '../helpers/fiveBarLegModel.js';
import { prr2 } from '../../src/architectures/prr2.js';
import { prr3 } from '../../src/architectures/prr3.js';
import { rpr3 } from '../../src/architectures/rpr3.js';
import { rrr3 } from '../../src/architectures/rrr3.js';
import { PoseStatus, type ArchitectureModelBase, type ModelInput, type PlanarArchitecture } from '../../src/architectures/types.js';
import { CycleDynamics, CycleSamples, CycleSummary, CycleTrajectory, DutyCycleAnalysis, type CyclePath, type EndPointState } from '../../src/mechanics/dutyCycle.js';
import { FiveBarMotion, inverseDynamics, jointRatesFromPath } from '../helpers/fiveBarClosedFormCycle.js';
import { Evaluator, constraintDefinitions } from '../../src/mechanics/evaluate.js';
import { FiveBarPose, solvePose, type FiveBarModel } from '../helpers/fiveBarClosedForm.js';
import { metricIndex, metricKind } from '../../src/mechanics/metrics.js';
import { loadStudyFile, parseStudyText, StudyError } from '../../src/study/parse.js';
import { findPoses, PRR2_INPUT, PRR3_INPUT, RPR3_INPUT, RRR3_INPUT } from '../architectures/models.js';

const generic = (a: unknown): PlanarArchitecture<ArchitectureModelBase> => a as PlanarArchitecture<ArchitectureModelBase>;

/** Asymmetric five-bar with every inertia field non-zero (invented numbers; as in dutyCycle.test.ts). */
const FIVE_BAR: FiveBarModel = {
  pivotX: [-0.12, 0.1], pivotY: [0.0, 0.05], crank: [0.2, 0.16], rod: [0.28, 0.32], sigma: [1, -1], assembly: 1,
  jointLimits: [null, null], crankInertiaAboutPivot: [0.0108, 0.0065], crankFirstMoment: [0.069, 0.044], rodMass: [0.4, 0.5],
  rodComDistance: [0.098, 0.112], rodInertiaAboutCom: [0.0031, 0.0052], endMass: 0.6, reflectedInertia: [0.004, 0.0025],
  gravity: [0.7, -9.81], complianceBending: [2e-6, 3e-6], complianceCrankAxial: [1e-8, 1e-8], complianceRodAxial: [2e-8, 2e-8],
};
const FIVE_BAR_PATH: CyclePath = {
  start: [-0.1, 0.25],
  steps: [
    { kind: 'move', to: [0.1, 0.3], law: 'cycloidal', time: 0.22 },
    { kind: 'move', to: [0.05, 0.36], law: 'poly5', time: 0.12 },
    { kind: 'dwell', time: 0.05 },
    { kind: 'arc', centre: [0.0, 0.3], angle: 0.9, law: 'poly7', time: 0.18 },
    { kind: 'move', to: [-0.1, 0.25], law: 'trapezoidal', time: 0.2, accelFraction: 0.25 },
  ],
};

/** A closed cycle around (x, y, φ): line with a turn, arc, dwell, lines back (every motion law). */
function cycleAround(x: number, y: number, phi: number, r: number, dof: number): CyclePath {
  const withPhi = (value: number): { phi?: number } => (dof === 3 ? { phi: value } : {});
  return {
    start: [x, y],
    ...(dof === 3 ? { startPhi: phi } : {}),
    steps: [
      { kind: 'move', to: [x + r, y], ...withPhi(phi + 0.15), law: 'cycloidal', time: 0.2 },
      { kind: 'arc', centre: [x, y], angle: Math.PI / 2, ...withPhi(phi - 0.15), law: 'poly7', time: 0.25 },
      { kind: 'dwell', time: 0.05 },
      { kind: 'move', to: [x, y - 0.5 * r], law: 'poly5', time: 0.15 },
      { kind: 'move', to: [x, y], ...withPhi(phi), law: 'trapezoidal', accelFraction: 0.25, time: 0.2 },
    ],
  };
}

interface Case {
  readonly label: string;
  readonly architecture: PlanarArchitecture<ArchitectureModelBase>;
  readonly model: ArchitectureModelBase;
  readonly path: CyclePath;
}

function legCase(label: string, architecture: unknown, input: ModelInput, box: { x: number; y: number; half: number; phiHalf: number }): Case {
  const arch = generic(architecture);
  const typed = architecture as typeof prr2;
  const probe = typed.buildModel(input);
  for (const found of findPoses({ label, architecture: typed, input, box }, probe, 40, 7)) {
    const model = typed.buildModel({ ...input, assembly: found.assembly });
    const path = cycleAround(found.x, found.y, found.phi, 0.03, model.dof);
    if (new DutyCycleAnalysis(new CycleSamples(new CycleTrajectory(path), 60), null, arch).run(model)) return { label, architecture: arch, model, path };
  }
  throw new Error(`${label}: no test cycle`);
}

const CASES: readonly Case[] = [
  { label: 'five-bar', architecture: generic(fiveBar), model: legModelOf(FIVE_BAR), path: FIVE_BAR_PATH },
  legCase('2-PRR', prr2, PRR2_INPUT, { x: 0, y: 0.05, half: 0.3, phiHalf: 0 }),
  legCase('3-RRR', rrr3, RRR3_INPUT, { x: 0, y: 0, half: 0.25, phiHalf: 0.6 }),
  legCase('3-PRR', prr3, PRR3_INPUT, { x: 0, y: 0, half: 0.25, phiHalf: 0.6 }),
  // The telescoping-strut leg: nothing in dutyCycle.ts knows it; the interface is enough.
  legCase('3-RPR', rpr3, RPR3_INPUT, { x: 0, y: 0, half: 0.2, phiHalf: 0.6 }),
];

function newState(): EndPointState {
  return { x: 0, y: 0, vx: 0, vy: 0, ax: 0, ay: 0, phi: 0, vphi: 0, aphi: 0 };
}

/** Interior times of every move (away from the step ends, where laws switch). */
function interiorTimes(path: CyclePath, perStep: number): number[] {
  const out: number[] = [];
  let t0 = 0;
  for (const step of path.steps) {
    if (step.kind !== 'dwell') for (let j = 1; j <= perStep; j++) out.push(t0 + (step.time * j) / (perStep + 1));
    t0 += step.time;
  }
  return out;
}

/** Solves the instant of the trajectory at time t; returns the dynamics. */
function solveAtTime(d: CycleDynamics, model: ArchitectureModelBase, trajectory: CycleTrajectory, t: number, s: EndPointState): CycleDynamics {
  trajectory.stateAt(t, s);
  expect(d.solveAt(model, s.x, s.y, s.phi ?? 0)).toBe(PoseStatus.Assembled);
  d.fromTaskMotion([s.vx, s.vy, s.vphi ?? 0], [s.ax, s.ay, s.aphi ?? 0]);
  return d;
}

describe('the generic path on the five-bar', () => {
  it('gives the closed-form θ̇, θ̈, β̇, β̈ and torques of the closed forms (tests/helpers/fiveBarClosedFormCycle.ts) along a cycle (1e-10 relative)', () => {
    const trajectory = new CycleTrajectory(FIVE_BAR_PATH);
    const samples = new CycleSamples(trajectory, 200);
    const d = new CycleDynamics(generic(fiveBar));
    const pose = new FiveBarPose();
    const motion = new FiveBarMotion();
    const model = legModelOf(FIVE_BAR);
    let worstRate = 0;
    let worstTorque = 0;
    for (let k = 0; k < samples.count; k++) {
      expect(d.solveAt(model, samples.x[k]!, samples.y[k]!)).toBe(PoseStatus.Assembled);
      d.fromTaskMotion([samples.vx[k]!, samples.vy[k]!], [samples.ax[k]!, samples.ay[k]!]);
      solvePose(FIVE_BAR, pose, samples.x[k]!, samples.y[k]!);
      jointRatesFromPath(FIVE_BAR, pose, samples.vx[k]!, samples.vy[k]!, samples.ax[k]!, samples.ay[k]!, motion);
      inverseDynamics(FIVE_BAR, pose, motion);
      // The closed forms are checked against MuJoCo and finite differences in dutyCycle.test.ts.
      const closed = [motion.dtheta1, motion.dtheta2, motion.drod1, motion.drod2, motion.ddtheta1, motion.ddtheta2, motion.ddrod1, motion.ddrod2];
      const mine = [d.qd[0]!, d.qd[1]!, d.rodRate[0]!, d.rodRate[1]!, d.qdd[0]!, d.qdd[1]!, d.rodAccel[0]!, d.rodAccel[1]!];
      const rateScale = Math.hypot(...closed.slice(0, 4)) + 1;
      const accelScale = Math.hypot(...closed.slice(4)) + 10;
      for (let i = 0; i < 8; i++) worstRate = Math.max(worstRate, Math.abs(mine[i]! - closed[i]!) / (i < 4 ? rateScale : accelScale));
      const tau = [motion.tauInertial1 + motion.tauGravity1, motion.tauInertial2 + motion.tauGravity2];
      const gap = Math.hypot(d.effortInertial[0]! + d.effortGravity[0]! - tau[0]!, d.effortInertial[1]! + d.effortGravity[1]! - tau[1]!) / Math.hypot(tau[0]!, tau[1]!);
      worstTorque = Math.max(worstTorque, gap);
    }
    console.info(`five-bar generic vs closed form: rates ${worstRate.toExponential(2)}, torques ${worstTorque.toExponential(2)} (relative)`);
    expect(worstRate).toBeLessThan(1e-10);
    expect(worstTorque).toBeLessThan(1e-10);
  });
});

describe.each(CASES)('$label cycle kinematics and dynamics through the interface', (c) => {
  const trajectory = new CycleTrajectory(c.path);
  const n = c.architecture.dof;

  it('q̇, q̈, β̇, β̈ equal central differences of the inverse kinematics in time', () => {
    const d = new CycleDynamics(c.architecture);
    const probe = new CycleDynamics(c.architecture);
    const s = newState();
    const h = 1e-5;
    let worst = 0;
    const positions = (t: number): number[] => {
      solveAtTime(probe, c.model, trajectory, t, s);
      const p = probe.pose;
      const out: number[] = [];
      for (let i = 0; i < n; i++) out.push(p.q[i]!, Math.atan2(p.rodDirection[2 * i + 1]!, p.rodDirection[2 * i]!));
      for (let i = 0; i < n; i++) out.push(probe.qd[i]!, probe.rodRate[i]!);
      return out;
    };
    for (const t of interiorTimes(c.path, 6)) {
      solveAtTime(d, c.model, trajectory, t, s);
      const ahead = positions(t + h);
      const behind = positions(t - h);
      const mine: number[] = [];
      for (let i = 0; i < n; i++) mine.push(d.qd[i]!, d.rodRate[i]!);
      for (let i = 0; i < n; i++) mine.push(d.qdd[i]!, d.rodAccel[i]!);
      mine.forEach((v, i) => {
        // O(h²) central differences (derived): rates to ~1e-8, accelerations to ~1e-5 relative.
        const fd = (ahead[i]! - behind[i]!) / (2 * h);
        const gap = Math.abs(fd - v) / (Math.abs(v) + (i < 2 * n ? 1 : 10));
        worst = Math.max(worst, gap);
        expect(gap, `component ${i} at t = ${t}`).toBeLessThan(1e-6);
      });
    }
    console.info(`${c.label}: q̇, q̈, β̇, β̈ vs finite differences, worst scaled gap ${worst.toExponential(2)}`);
  });

  it('(D q̈ + C q̇)·q̇ equals dT/dt, T = ½ q̇ᵀDq̇ (derived: Ḋ − 2C is skew)', () => {
    const d = new CycleDynamics(c.architecture);
    const s = newState();
    const kinetic = (t: number): number => {
      solveAtTime(d, c.model, trajectory, t, s);
      let e = 0;
      for (let a = 0; a < n; a++) for (let b = 0; b < n; b++) e += 0.5 * d.qd[a]! * d.pose.D[a * n + b]! * d.qd[b]!;
      return e;
    };
    const h = 1e-5;
    let worst = 0;
    let peak = 0;
    const gaps: number[] = [];
    for (const t of interiorTimes(c.path, 8)) {
      const rate = (kinetic(t + h) - kinetic(t - h)) / (2 * h);
      solveAtTime(d, c.model, trajectory, t, s);
      let inertialPower = 0;
      for (let i = 0; i < n; i++) inertialPower += d.effortInertial[i]! * d.qd[i]!;
      peak = Math.max(peak, Math.abs(inertialPower));
      gaps.push(Math.abs(inertialPower - rate));
    }
    for (const g of gaps) worst = Math.max(worst, g / peak);
    console.info(`${c.label}: energy balance, worst |(Dq̈ + Cq̇)·q̇ − dT/dt| / peak = ${worst.toExponential(2)} (peak ${peak.toExponential(2)} W)`);
    expect(peak).toBeGreaterThan(1e-3);
    expect(worst).toBeLessThan(1e-7);
  });

  it('the velocity term is quadratic in the rates, and the efforts at any pace equal solving the slowed cycle again', () => {
    const d = new CycleDynamics(c.architecture);
    const s = newState();
    const t = interiorTimes(c.path, 3)[2]!;
    solveAtTime(d, c.model, trajectory, t, s);
    const once = Array.from(d.effortVelocity.subarray(0, n));
    d.fromTaskMotion([2 * s.vx, 2 * s.vy, 2 * (s.vphi ?? 0)], [0, 0, 0]);
    once.forEach((v, i) => expect(d.effortVelocity[i]!).toBeCloseTo(4 * v, 10));
    const friction = Array.from({ length: n }, (_, i) => ({ viscous: 0.02 * (i + 1), coulomb: 0.1 }));
    const base = new DutyCycleAnalysis(new CycleSamples(trajectory, 120), friction, c.architecture);
    expect(base.run(c.model)).toBe(true);
    const scale = 1.7;
    const slowed: CyclePath = { ...c.path, steps: c.path.steps.map((st) => (st.kind === 'dwell' ? st : { ...st, time: st.time * scale })) };
    const direct = new DutyCycleAnalysis(new CycleSamples(new CycleTrajectory(slowed), 120), friction, c.architecture);
    expect(direct.run(c.model)).toBe(true);
    const a = base.summarise(scale, null, new CycleSummary());
    const b = direct.summarise(1, null, new CycleSummary());
    for (let i = 0; i < n; i++) {
      expect(a.rmsTorque[i]).toBeCloseTo(b.rmsTorque[i]!, 9);
      expect(a.peakSpeed[i]).toBeCloseTo(b.peakSpeed[i]!, 11);
      for (let k = 0; k < base.samples.count; k++) expect(base.torque[i]![k]).toBeCloseTo(direct.torque[i]![k]!, 9);
    }
    expect(a.actuators).toBe(n);
  });
});

describe('cycle studies of the 2-PRR and 3-RRR', () => {
  const studyPath = (name: string): string => new URL(`../../studies/${name}.yaml`, import.meta.url).pathname;

  it('the 2-PRR demo cycle evaluates to finite slider forces (N) and speeds (m/s), with the cycle drive limits', () => {
    const loaded = loadStudyFile(studyPath('rail-sorter-2prr-cycle'));
    expect(loaded.study.friction).toHaveLength(2);
    expect(loaded.study.friction![0]!.viscous).toBeCloseTo(15, 12);
    expect(loaded.study.friction![0]!.coulomb).toBeCloseTo(8, 12);
    const names = constraintDefinitions(loaded.study).map((c) => c.name);
    for (const name of ['cycle_torque_1', 'cycle_rms_2', 'cycle_speed_1', 'cycle_rate']) expect(names).toContain(name);
    const evaluator = new Evaluator(loaded.study);
    const result = evaluator.evaluate(Float64Array.of(0.55));
    for (const name of ['cycle_peak_torque_1', 'cycle_rms_torque_2', 'cycle_peak_speed', 'cycle_peak_power', 'min_cycle_time']) {
      expect(Number.isFinite(result.metrics[metricIndex(name)]!), name).toBe(true);
    }
    expect(result.metrics[metricIndex('cycle_peak_torque_3')]).toBeNaN();
    expect(metricKind('cycle_peak_torque_1', ['prismatic', 'prismatic'])).toBe('force');
    expect(metricKind('cycle_peak_speed', ['prismatic', 'prismatic'])).toBe('speed');
    // At the shortest cycle time the tightest cycle limit is met with no margin to spare.
    const minTime = result.metrics[metricIndex('min_cycle_time')]!;
    const atMin = parseStudyText(loaded.text.replace('required_rate: 30 1/min', `cycle_time: ${minTime * (1 + 1e-9)} s`), 'at-min');
    const again = new Evaluator(atMin.study).evaluate(Float64Array.of(0.55));
    let tightest = Infinity;
    constraintDefinitions(atMin.study).forEach((c, k) => {
      if (c.name.startsWith('cycle_') && c.origin === 'drive') {
        expect(again.margins[k]!, c.name).toBeGreaterThanOrEqual(-1e-9);
        tightest = Math.min(tightest, again.margins[k]!);
      }
    });
    expect(tightest).toBeLessThan(1e-6);
  });

  it('the 3-RRR demo cycle turns the platform along the path and evaluates to finite figures on three cranks', () => {
    const loaded = loadStudyFile(studyPath('platform-3rrr-cycle'));
    const duty = loaded.study.dutyCycle!;
    expect(duty.path.startPhi).toBe(0);
    const firstMove = duty.path.steps[0]!;
    expect(firstMove.kind === 'move' && firstMove.phi).toBeCloseTo((10 * Math.PI) / 180, 14);
    const evaluator = new Evaluator(loaded.study);
    const design = evaluator.variables.map((v) => (v.name === 'base_radius' ? 0.35 : v.name === 'platform_radius' ? 0.08 : 0.25));
    const result = evaluator.evaluate(Float64Array.from(design));
    for (const name of ['cycle_peak_torque_3', 'cycle_rms_torque_1', 'cycle_peak_speed_2', 'cycle_peak_power_3', 'min_cycle_time']) {
      expect(Number.isFinite(result.metrics[metricIndex(name)]!), name).toBe(true);
    }
    const names = constraintDefinitions(loaded.study).map((c) => c.name);
    expect(names).toContain('cycle_rms_3');
    // Turning matters: the same cycle without the turns needs different crank torques.
    const flat = parseStudyText(loaded.text.replace(/, (-?\d+) deg\]/g, ']').replace(', phi: 5 deg', ''), 'flat');
    const still = new Evaluator(flat.study).evaluate(Float64Array.from(design));
    expect(Math.abs(still.metrics[metricIndex('cycle_rms_torque')]! - result.metrics[metricIndex('cycle_rms_torque')]!)).toBeGreaterThan(1e-3);
  });

  it('refuses an orientation on a 2-DOF cycle, a cycle that does not turn back, and friction for a fourth actuator', () => {
    const prr = loadStudyFile(studyPath('rail-sorter-2prr-cycle')).text;
    expect(() => parseStudyText(prr.replace('pick: [-200 mm, -400 mm]', 'pick: [-200 mm, -400 mm, 5 deg]'), 'bad')).toThrow(/has no platform orientation/);
    expect(() => parseStudyText(prr.replace('both: { viscous: 15 N*s/m', 'actuator_3: { viscous: 1 }\n  both: { viscous: 15 N*s/m'), 'bad')).toThrow(/2 actuators/);
    expect(() => parseStudyText(prr.replace('viscous: 15 N*s/m', 'viscous: 15 N*m'), 'bad')).toThrow(StudyError);
    const rrr = loadStudyFile(studyPath('platform-3rrr-cycle')).text;
    expect(() => parseStudyText(rrr.replace('home: [0 mm, 0 mm, 0 deg]', 'home: [0 mm, 0 mm, 3 deg]').replace('start: home', 'start: [0 mm, 0 mm, 0 deg]'), 'bad')).toThrow(
      /ends at orientation 3 deg, not the 0 deg/,
    );
  });

  it('a comparison study runs one duty cycle on every member (five-bar and 2-PRR)', () => {
    const text = loadStudyFile(studyPath('compare-fivebar-2prr')).text.replace('\ntask:', `
duty_cycle:
  waypoints: { pick: [-150 mm, -500 mm], above_pick: [-150 mm, -400 mm], above_place: [150 mm, -400 mm], place: [150 mm, -500 mm] }
  steps:
    - { move_to: above_pick, law: poly5, time: 150 ms }
    - { move_to: above_place, law: cycloidal, time: 300 ms }
    - { move_to: place, law: poly5, time: 150 ms }
    - { dwell: 100 ms }
    - { move_to: above_place, law: poly5, time: 150 ms }
    - { move_to: above_pick, law: cycloidal, time: 300 ms }
    - { move_to: pick, law: poly5, time: 150 ms }
  cycle_time: 2 s

task:`);
    const study = parseStudyText(text, 'compare-cycle').study;
    expect(study.members!.every((m) => m.dutyCycle)).toBe(true);
    const evaluator = new Evaluator(study);
    const seen: number[] = [];
    for (const member of study.members!) {
      const design = Float64Array.from(evaluator.variables.map((v) => (v.name === 'architecture' ? study.members!.indexOf(member) : (study.baseline[v.name] as number | undefined) ?? 0.3)));
      const metrics = evaluator.evaluate(design).metrics;
      expect(Number.isFinite(metrics[metricIndex('cycle_rms_torque')]!), member.architecture).toBe(true);
      seen.push(metrics[metricIndex('cycle_rms_torque')]!);
    }
    // Two different members were evaluated (N·m for the five-bar's cranks, N for the sliders).
    expect(seen[0]).not.toBe(seen[1]);
  });
});
