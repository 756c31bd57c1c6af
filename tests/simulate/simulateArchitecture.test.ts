/**
 * Forward simulation of the leg-based architectures (src/simulate/legChain.ts, simulateArchitecture.ts):
 * the cut-open chain against the reduced model, energy conservation and loop closure of the unforced
 * chain, and tracking of the 2-PRR, 3-RRR and 3-RPR demo duty cycles. Figures are printed for the notes.
 */
import { describe, expect, it } from 'vitest';
import { fiveBar } from '../../src/architectures/fivebar.js';
import { prr2 } from '../../src/architectures/prr2.js';
import { prr3 } from '../../src/architectures/prr3.js';
import { rpr3 } from '../../src/architectures/rpr3.js';
import { rrr3 } from '../../src/architectures/rrr3.js';
import { PoseStatus, type ArchitectureModelBase, type ModelInput, type PlanarArchitecture } from '../../src/architectures/types.js';
import { CycleDynamics, CycleTrajectory, type CyclePath } from '../../src/mechanics/dutyCycle.js';
import type { FiveBarModel } from '../helpers/fiveBarClosedForm.js';
import { simulateFreeChain } from '../helpers/fiveBarFreeChainSimulation.js';
import { legModelOf } from '../helpers/fiveBarLegModel.js';
import { LegChain } from '../../src/simulate/legChain.js';
import { cutChainState, simulateArchitecture } from '../../src/simulate/simulateArchitecture.js';
import { prepareStudySimulation, simulateStudyDesign } from '../../src/simulate/study.js';
import { loadStudyFile } from '../../src/study/parse.js';
import { findPoses, PRR2_INPUT, PRR3_INPUT, RPR3_INPUT, RRR3_INPUT, seededRandom } from '../architectures/models.js';

const generic = (a: unknown): PlanarArchitecture<ArchitectureModelBase> => a as PlanarArchitecture<ArchitectureModelBase>;

interface Case {
  readonly label: string;
  readonly architecture: PlanarArchitecture<ArchitectureModelBase>;
  readonly input: ModelInput;
  readonly box: { x: number; y: number; half: number; phiHalf: number };
}
const CASES: readonly Case[] = [
  { label: '2-PRR', architecture: generic(prr2), input: PRR2_INPUT, box: { x: 0, y: 0.05, half: 0.3, phiHalf: 0 } },
  { label: '3-RRR', architecture: generic(rrr3), input: RRR3_INPUT, box: { x: 0, y: 0, half: 0.25, phiHalf: 0.6 } },
  { label: '3-PRR', architecture: generic(prr3), input: PRR3_INPUT, box: { x: 0, y: 0, half: 0.25, phiHalf: 0.6 } },
  { label: '3-RPR', architecture: generic(rpr3), input: RPR3_INPUT, box: { x: 0, y: 0, half: 0.2, phiHalf: 0.6 } },
];

/** Well-conditioned poses of a case with the model in the matching assembly sign. */
function posesOf(c: Case, count: number): { model: ArchitectureModelBase; task: number[] }[] {
  const typed = c.architecture as unknown as typeof prr2;
  const probe = typed.buildModel(c.input);
  return findPoses({ label: c.label, architecture: typed, input: c.input, box: c.box }, probe, count, 17).map((p) => ({
    model: c.architecture.buildModel({ ...c.input, assembly: p.assembly }),
    task: [p.x, p.y, p.phi],
  }));
}

describe.each(CASES)('$label cut-open chain', (c) => {
  const n = c.architecture.dof;

  it('gives the reduced model\'s joint accelerations at consistent states (Ghorbel et al. 2000)', () => {
    // Derived: on the constraint manifold the cut chain's equations projected on the allowed motions are
    // the reduced D q̈ + C q̇ + τ_g = τ (Ghorbel, Chételat, Gunawardana & Longchamp 2000, IEEE TCST 8(5)).
    const random = seededRandom(99);
    const dynamics = new CycleDynamics(c.architecture);
    let compared = 0;
    let worst = 0;
    for (const { model, task } of posesOf(c, 12)) {
      const chain = new LegChain(c.architecture.cutOpenChain!(model)!);
      const rate = [0.4 * random() - 0.2, 0.4 * random() - 0.2, n === 3 ? 2 * random() - 1 : 0];
      const state = new Float64Array(2 * chain.size);
      expect(cutChainState(c.architecture, model, task, rate, state)).toBe(true);
      expect(chain.closureError(state)).toBeLessThan(1e-12);
      const efforts = Array.from({ length: n }, () => (c.architecture.actuators[0] === 'prismatic' ? 40 : 4) * (random() - 0.5));
      expect(chain.accelerations(state, efforts, 200)).toBe(true);
      // Reduced: D q̈ = τ − C q̇ − τ_g at the same joint state.
      expect(dynamics.solveAt(model, task[0]!, task[1]!, task[2]!)).not.toBe(PoseStatus.Unreachable);
      const qd = Array.from({ length: n }, (_, i) => state[chain.size + 2 * i]!);
      dynamics.fromJointMotion(qd, [0, 0, 0]);
      const D = dynamics.pose.D;
      const r = Array.from({ length: n }, (_, i) => efforts[i]! - dynamics.effortInertial[i]! - dynamics.effortGravity[i]!);
      // q̈ from the chain must satisfy D q̈ = r.
      const qdd = Array.from({ length: n }, (_, i) => chain.zdd[2 * i]!);
      const residual = Array.from({ length: n }, (_, a) => qdd.reduce((s, v, b) => s + D[a * n + b]! * v, 0) - r[a]!);
      // Relative to the largest term of the balance (the difference r may cancel).
      const scale = Math.max(...efforts.map(Math.abs), ...Array.from(dynamics.effortInertial.subarray(0, n), Math.abs), ...Array.from(dynamics.effortGravity.subarray(0, n), Math.abs));
      const gap = Math.max(...residual.map(Math.abs)) / scale;
      worst = Math.max(worst, gap);
      expect(gap).toBeLessThan(1e-8);
      compared++;
    }
    console.info(`${c.label}: cut chain vs reduced model, worst |D q̈ − (τ − Cq̇ − τ_g)| / max(|τ|, |Cq̇|, |τ_g|) = ${worst.toExponential(2)} over ${compared} states`);
    expect(compared).toBeGreaterThan(5);
  });

  it('conserves energy and keeps the loops closed over 1 s with no controller, friction or gravity', () => {
    // Derived: without drive effort, friction or gravity the chain is conservative and the closure
    // forces do no work on motions that keep Φ = 0, so T = ½ żᵀ M ż stays constant.
    const [{ model, task }] = posesOf(c, 1);
    const weightless = c.architecture.buildModel({ ...c.input, gravity: [0, 0], assembly: model!.assembly });
    const chain = new LegChain(c.architecture.cutOpenChain!(weightless)!);
    const state = new Float64Array(2 * chain.size);
    expect(cutChainState(c.architecture, weightless, task!, [0.3, -0.2, n === 3 ? 1.5 : 0], state)).toBe(true);
    const result = simulateArchitecture(c.architecture, weightless, { controller: 'none', trajectory: null, duration: 1, initialState: state });
    const s = result.series;
    const t0 = chain.kineticEnergy(state);
    let drift = 0;
    for (let k = 0; k < s.count; k++) drift = Math.max(drift, Math.abs(s.kinetic[k]! - t0) / t0);
    console.info(`${c.label}: unforced 1 s — relative kinetic-energy drift ${drift.toExponential(2)}, max |Φ| ${result.summary.maxClosureError.toExponential(2)} m, ` +
      `${result.summary.integrator.acceptedSteps} steps`);
    expect(drift).toBeLessThan(1e-6);
    expect(result.summary.relativeEnergyResidual).toBeLessThan(1e-6);
    expect(result.summary.maxClosureError).toBeLessThan(1e-6);
    // Not a standstill: the actuated joints moved.
    const moved = Math.max(...Array.from({ length: n }, (_, i) => Math.abs(result.finalState[2 * i]! - state[2 * i]!)));
    expect(moved).toBeGreaterThan(0.01);
  });
});

describe('simulate on the 2-PRR, 3-RRR and 3-RPR demo duty cycles', () => {
  const studyPath = (name: string): string => new URL(`../../studies/${name}.yaml`, import.meta.url).pathname;

  it.each([
    ['rail-sorter-2prr-cycle', 2],
    ['platform-3rrr-cycle', 3],
    ['platform-3rpr-cycle', 3],
  ] as const)('%s: computed torque tracks the cycle, the loops stay closed and the energy balances', (name, joints) => {
    const setup = prepareStudySimulation(loadStudyFile(studyPath(name)).study);
    expect(setup.model).toBeNull();
    expect(setup.actuators).toHaveLength(joints);
    const result = simulateStudyDesign(setup, { controller: 'computed-torque', duration: 0.6 });
    const s = result.summary;
    const worstError = Math.max(...s.joints.map((j) => j.maxTrackingError));
    console.info(
      `${name} (0.6 s, computed torque, 30 Hz): max joint error ${worstError.toExponential(2)}, max end-point error ${s.maxEndPointError.toExponential(2)} m, ` +
        `max |Φ| ${s.maxClosureError.toExponential(2)} m, energy residual ${s.energyResidual.toExponential(2)} J (${s.relativeEnergyResidual.toExponential(2)} of the largest kinetic energy), ` +
        `${s.integrator.acceptedSteps} steps`,
    );
    expect(s.joints).toHaveLength(joints);
    // A perfect model: the feedforward is exact and the error stays at integration accuracy (derived).
    expect(worstError).toBeLessThan(1e-7);
    expect(s.maxEndPointError).toBeLessThan(1e-7);
    expect(s.maxClosureError).toBeLessThan(1e-9);
    expect(s.relativeEnergyResidual).toBeLessThan(1e-6);
    // The efforts equal the cycle's inverse dynamics (dutyCycle.ts) plus the smoothed friction the
    // controller compensates, f_v q̇ + f_c tanh(q̇/ε) (derived: exact feedforward, zero error).
    const dynamics = new CycleDynamics(setup.architecture);
    const state = { x: 0, y: 0, vx: 0, vy: 0, ax: 0, ay: 0, phi: 0, vphi: 0, aphi: 0 };
    let checked = 0;
    for (const k of [37, 100, 251, 433]) {
      const t = result.series.time[k]!;
      setup.trajectory.stateAt(t, state);
      expect(dynamics.solveAt(setup.architectureModel, state.x, state.y, state.phi)).toBe(PoseStatus.Assembled);
      dynamics.fromTaskMotion([state.vx, state.vy, state.vphi], [state.ax, state.ay, state.aphi]);
      for (let i = 0; i < joints; i++) {
        const f = setup.friction![i]!;
        const v = dynamics.qd[i]!;
        const expected = dynamics.effortInertial[i]! + dynamics.effortGravity[i]! + f.viscous * v + f.coulomb * Math.tanh(v / 0.01);
        expect(Math.abs(result.series.torques[i]![k]! - expected)).toBeLessThan(1e-6 * (Math.abs(expected) + 1));
        checked++;
      }
    }
    expect(checked).toBe(4 * joints);
    expect(s.joints.every((j) => j.peakTorque > 0)).toBe(true);
  });

  it('PD with gravity compensation and an unknown payload leave a visible but bounded error on the 2-PRR', () => {
    const setup = prepareStudySimulation(loadStudyFile(studyPath('rail-sorter-2prr-cycle')).study);
    const pd = simulateStudyDesign(setup, { controller: 'pd', duration: 0.6 });
    const loaded = simulateStudyDesign(setup, { controller: 'computed-torque', duration: 0.6, extraEndMass: 0.5 });
    const pdError = Math.max(...pd.summary.joints.map((j) => j.maxTrackingError));
    const loadError = Math.max(...loaded.summary.joints.map((j) => j.maxTrackingError));
    console.info(`2-PRR demo (0.6 s): PD + gravity max slider error ${(pdError * 1000).toFixed(3)} mm, computed torque with 0.5 kg unknown ${(loadError * 1000).toFixed(3)} mm; |Φ| ≤ ${Math.max(pd.summary.maxClosureError, loaded.summary.maxClosureError).toExponential(2)} m`);
    expect(pdError).toBeGreaterThan(1e-5);
    expect(pdError).toBeLessThan(0.02);
    expect(loadError).toBeGreaterThan(1e-6);
    expect(loadError).toBeLessThan(pdError);
    expect(Math.max(pd.summary.maxClosureError, loaded.summary.maxClosureError)).toBeLessThan(1e-9);
  });
});

describe('the cut-open chain of the legs against the five-bar\'s own free chain', () => {
  it('gives the same efforts, errors and energies on an asymmetric five-bar (computed torque and PD)', () => {
    // Two formulations of the same closed chain (derived): the five-bar cut at P into two arms with P on
    // arm 1 (freeChain.ts, integrated by the former five-bar path kept in tests/helpers) and every rod
    // cut at P with P a free body (legChain.ts) must move alike.
    const model: FiveBarModel = {
      pivotX: [-0.12, 0.1], pivotY: [0.0, 0.05], crank: [0.2, 0.16], rod: [0.28, 0.32], sigma: [1, -1], assembly: 1,
      jointLimits: [null, null], crankInertiaAboutPivot: [0.0108, 0.0065], crankFirstMoment: [0.069, 0.044], rodMass: [0.4, 0.5],
      rodComDistance: [0.098, 0.112], rodInertiaAboutCom: [0.0031, 0.0052], endMass: 0.6, reflectedInertia: [0.004, 0.0025],
      gravity: [0.7, -9.81], complianceBending: [2e-6, 3e-6], complianceCrankAxial: [1e-8, 1e-8], complianceRodAxial: [2e-8, 2e-8],
    };
    const path: CyclePath = {
      start: [-0.1, 0.25],
      steps: [
        { kind: 'move', to: [0.1, 0.3], law: 'cycloidal', time: 0.22 },
        { kind: 'move', to: [0.05, 0.36], law: 'poly5', time: 0.12 },
        { kind: 'dwell', time: 0.05 },
        { kind: 'arc', centre: [0.0, 0.3], angle: 0.9, law: 'poly7', time: 0.18 },
        { kind: 'move', to: [-0.1, 0.25], law: 'trapezoidal', time: 0.2, accelFraction: 0.25 },
      ],
    };
    const friction = [{ viscous: 0.02, coulomb: 0.1 }, { viscous: 0.01, coulomb: 0.05 }];
    let worst = 0;
    for (const controller of ['computed-torque', 'pd'] as const) {
      const options = { controller, trajectory: new CycleTrajectory(path), duration: 0.77, friction, extraEndMass: 0.2 };
      const mine = simulateArchitecture(generic(fiveBar), legModelOf(model), options);
      const theirs = simulateFreeChain(model, options);
      expect(mine.series.count).toBe(theirs.series.count);
      for (let k = 0; k < mine.series.count; k += 7) {
        for (let i = 0; i < 2; i++) {
          const scale = Math.abs(theirs.series.torques[i]![k]!) + 0.1;
          const gap = Math.abs(mine.series.torques[i]![k]! - theirs.series.torques[i]![k]!) / scale;
          worst = Math.max(worst, gap);
          expect(gap, `${controller} τ${i + 1} at ${mine.series.time[k]}`).toBeLessThan(1e-6);
          expect(Math.abs(mine.series.positions[i]![k]! - theirs.series.positions[i]![k]!)).toBeLessThan(1e-8);
        }
        expect(Math.abs(mine.series.kinetic[k]! - theirs.series.kinetic[k]!)).toBeLessThan(1e-8 * (theirs.series.kinetic[k]! + 1e-3));
      }
      expect(mine.summary.joints[0]!.maxTrackingError).toBeCloseTo(theirs.summary.joints[0]!.maxTrackingError, 8);
    }
    console.info(`five-bar: cut chain of the legs vs the five-bar free chain, worst relative effort gap ${worst.toExponential(2)}`);
  });
});

describe('the singularly perturbed closure on strut legs', () => {
  it('3-RPR demo: the perturbed chain (legChain.ts terms) tends to the stabilised one as ε shrinks', () => {
    // Derived (src/simulate/perturbedChain.ts): ε²Φ̈ + 2εΦ̇ + Φ = ε²Φ̈_free, so the loop error and the
    // departure from the constrained motion shrink with ε; a leg assembled with the wrong terms would not.
    const studyPath = new URL('../../studies/platform-3rpr-cycle.yaml', import.meta.url).pathname;
    const setup = prepareStudySimulation(loadStudyFile(studyPath).study);
    const options = { controller: 'computed-torque' as const, duration: 0.3, outputInterval: 2e-3 };
    const exact = simulateStudyDesign(setup, options);
    const gaps = [4e-3, 1e-3].map((epsilon) => {
      const r = simulateStudyDesign(setup, { ...options, formulation: 'perturbed', epsilon });
      let worst = 0;
      for (let k = 0; k < r.series.count; k++) worst = Math.max(worst, Math.hypot(r.series.x[k]! - exact.series.x[k]!, r.series.y[k]! - exact.series.y[k]!));
      return { epsilon, endPoint: worst, closure: r.summary.maxClosureError };
    });
    console.info(`3-RPR demo (0.3 s): perturbed vs stabilised end point ${gaps.map((g) => `ε ${g.epsilon} s: ${(g.endPoint * 1e3).toExponential(2)} mm, max |Φ| ${(g.closure * 1e3).toExponential(2)} mm`).join('; ')}`);
    expect(gaps[1]!.endPoint).toBeLessThan(gaps[0]!.endPoint / 4);
    expect(gaps[1]!.closure).toBeLessThan(gaps[0]!.closure / 4);
    expect(gaps[1]!.endPoint).toBeLessThan(1e-4);
  });
});
