/**
 * Reference check of the duty-cycle inverse dynamics of every leg-based architecture
 * (src/mechanics/dutyCycle.ts through the PlanarArchitecture interface) against MuJoCo's inverse
 * dynamics, as reference-mujoco-dynamics.test.ts does for the five-bar's closed forms.
 *
 * Sources:
 * - Reduced model of a closed chain: Ghorbel, Chételat, Gunawardana & Longchamp, "Modeling and set
 *   point control of closed-chain mechanisms: theory and experiment", IEEE Trans. Control Systems
 *   Technology 8(5), 2000. With the cut-open free system q′ = q′(q) and ρ = ∂q′/∂q, the actuated
 *   efforts of a constraint-consistent motion are τ = ρᵀ τ′, τ′ the free system's inverse dynamics at
 *   q̇′ = ρ q̇ and q̈′ = ρ q̈ + ρ̇ q̇ (the cut forces do no virtual work along ρ).
 * - MuJoCo, a general-purpose multibody physics engine (WebAssembly build, npm mujoco-js@0.0.7,
 *   Apache-2.0): mj_inverse(m, d) gives qfrc_inverse = M(q) q̈ + c(q, q̇) + g(q), armature included.
 *
 * The free systems and the parts are those of tests/helpers/freeSystem.ts. Here q̇′ and q̈′ are built
 * from the engine's q̇, q̈, rod rates β̇ and rod accelerations β̈ and the platform's φ̇, φ̈; q̈′ is also
 * checked against a central difference of q̇′ in time, so a wrong β̈ shows up on its own.
 *
 * The cycle of each architecture is generated around a well-conditioned pose found by a seeded
 * search: a line with a turn of the platform, an arc, a dwell and a line back, with every motion law.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { LeggedModel } from '../../src/architectures/legged.js';
import { prr2 } from '../../src/architectures/prr2.js';
import { prr3 } from '../../src/architectures/prr3.js';
import { rpr3 } from '../../src/architectures/rpr3.js';
import { rrr3 } from '../../src/architectures/rrr3.js';
import type { ArchitectureModelBase, ModelInput, PlanarArchitecture } from '../../src/architectures/types.js';
import { CycleDynamics, CycleSamples, CycleTrajectory, DutyCycleAnalysis, type CyclePath, type EndPointState } from '../../src/mechanics/dutyCycle.js';
import { findPoses, PRR2_INPUT, PRR3_INPUT, RPR3_INPUT, RRR3_INPUT, type ArchitectureCase } from '../architectures/models.js';
import { freeState, freeSystemMjcf, modelFromParts } from '../helpers/freeSystem.js';
import { loadMujoco } from '../helpers/mujoco.js';

/** The few mjModel/mjData members this test needs beyond tests/helpers/mujoco.ts. */
interface InverseModel {
  readonly nv: number;
  delete(): void;
}
interface InverseData {
  readonly qpos: Float64Array;
  readonly qvel: Float64Array;
  readonly qacc: Float64Array;
  readonly qfrc_inverse: Float64Array;
  delete(): void;
}
interface InverseModule {
  readonly MjModel: { loadFromXML(path: string): InverseModel };
  readonly MjData: new (model: InverseModel) => InverseData;
  readonly FS: { writeFile(path: string, contents: string): void };
  mj_inverse(model: InverseModel, data: InverseData): void;
}

interface CycleCase {
  readonly label: string;
  readonly architecture: PlanarArchitecture<LeggedModel>;
  readonly input: ModelInput;
  readonly box: ArchitectureCase['box'];
}

/** Every leg-based architecture: crank + rod, slider + rod and strut legs (add a case when a leg kind joins the free-system builder). */
const CASES: readonly CycleCase[] = [
  { label: '2-PRR', architecture: prr2, input: PRR2_INPUT, box: { x: 0, y: 0.05, half: 0.3, phiHalf: 0 } },
  { label: '3-RRR', architecture: rrr3, input: RRR3_INPUT, box: { x: 0, y: 0, half: 0.25, phiHalf: 0.6 } },
  { label: '3-PRR', architecture: prr3, input: PRR3_INPUT, box: { x: 0, y: 0, half: 0.25, phiHalf: 0.6 } },
  { label: '3-RPR', architecture: rpr3, input: RPR3_INPUT, box: { x: 0, y: 0, half: 0.2, phiHalf: 0.6 } },
];

/** A closed cycle around (x, y, φ) with radius r: every motion law, an arc, a dwell and a turn (3-DOF). */
function cycleAround(x: number, y: number, phi: number, r: number, dof: number): CyclePath {
  const turn = dof === 3 ? 0.15 : 0;
  const withPhi = (value: number): { phi?: number } => (dof === 3 ? { phi: value } : {});
  return {
    start: [x, y],
    ...(dof === 3 ? { startPhi: phi } : {}),
    steps: [
      { kind: 'move', to: [x + r, y], ...withPhi(phi + turn), law: 'cycloidal', time: 0.2 },
      { kind: 'arc', centre: [x, y], angle: Math.PI / 2, ...withPhi(phi - turn), law: 'poly7', time: 0.25 },
      { kind: 'dwell', time: 0.05 },
      { kind: 'move', to: [x, y - 0.5 * r], law: 'poly5', time: 0.15 },
      { kind: 'move', to: [x, y], ...withPhi(phi), law: 'trapezoidal', accelFraction: 0.25, time: 0.2 },
    ],
  };
}

/** A model and a cycle it can follow (every node assembled), from the first suitable pose of a seeded search. */
function modelAndCycle(c: CycleCase): { model: LeggedModel; path: CyclePath } {
  const probe = c.architecture.buildModel(c.input);
  for (const found of findPoses({ label: c.label, architecture: c.architecture, input: c.input, box: c.box }, probe, 40, 101)) {
    const model = modelFromParts(c.architecture.buildModel({ ...c.input, assembly: found.assembly }));
    const path = cycleAround(found.x, found.y, found.phi, 0.03, model.dof);
    const analysis = new DutyCycleAnalysis(new CycleSamples(new CycleTrajectory(path), 60), null, c.architecture as unknown as PlanarArchitecture<ArchitectureModelBase>);
    if (analysis.run(model)) return { model, path };
  }
  throw new Error(`${c.label}: no pose found for a test cycle`);
}

const measured: string[] = [];
let mj: InverseModule;

beforeAll(async () => {
  mj = (await loadMujoco()) as unknown as InverseModule;
});

afterAll(() => {
  for (const line of measured) console.info(line);
});

describe.each(CASES)('$label cycle inverse dynamics against MuJoCo mj_inverse (free system reduced with ρ)', (c) => {
  it('τ = ρᵀ qfrc_inverse at every node of a cycle (1e-8 relative), q̈′ equal to a difference of q̇′', () => {
    const { model, path } = modelAndCycle(c);
    const architecture = c.architecture as unknown as PlanarArchitecture<ArchitectureModelBase>;
    const n = model.dof;
    const file = `/mjcf/cycle-${c.label}.xml`;
    mj.FS.writeFile(file, freeSystemMjcf(model));
    const mjModel = mj.MjModel.loadFromXML(file);
    const data = new mj.MjData(mjModel);
    const trajectory = new CycleTrajectory(path);
    const samples = new CycleSamples(trajectory, 60);
    const dynamics = new CycleDynamics(architecture);
    const probe = new CycleDynamics(architecture);
    const state: EndPointState = { x: 0, y: 0, vx: 0, vy: 0, ax: 0, ay: 0, phi: 0, vphi: 0, aphi: 0 };
    /** Free state of one instant solved by `d` at the task state `s`. */
    const free = (d: CycleDynamics, s: EndPointState): ReturnType<typeof freeState> => {
      d.solveAt(model, s.x, s.y, s.phi ?? 0);
      d.fromTaskMotion([s.vx, s.vy, s.vphi ?? 0], [s.ax, s.ay, s.aphi ?? 0]);
      const pose = d.pose;
      return freeState(model, {
        q: pose.q,
        rodAngle: Array.from({ length: n }, (_, i) => Math.atan2(pose.rodDirection[2 * i + 1]!, pose.rodDirection[2 * i]!)),
        phi: pose.phi,
        qd: d.qd, rodRate: d.rodRate, phiRate: n === 3 ? d.taskVelocity[2]! : 0,
        qdd: d.qdd, rodAccel: d.rodAccel, phiAccel: n === 3 ? d.taskAcceleration[2]! : 0,
        rodRows: pose.rodRate,
        phiRow: n === 3 ? pose.J.subarray(2 * n, 3 * n) : [],
      });
    };
    let worst = 0;
    let worstAcceleration = 0;
    let velocityShare = 0;
    let moving = 0;
    try {
      expect(mjModel.nv).toBe(n === 3 ? 7 : 4);
      for (let k = 0; k < samples.count; k++) {
        state.x = samples.x[k]!; state.y = samples.y[k]!; state.phi = samples.phi[k]!;
        state.vx = samples.vx[k]!; state.vy = samples.vy[k]!; state.vphi = samples.vphi[k]!;
        state.ax = samples.ax[k]!; state.ay = samples.ay[k]!; state.aphi = samples.aphi[k]!;
        const f = free(dynamics, state);
        const engine = Array.from({ length: n }, (_, i) => dynamics.effortInertial[i]! + dynamics.effortGravity[i]!);
        // q̈′ against a central difference of q̇′ in time (derived; h = 1e-5 s, O(h²)), interior nodes only.
        const h = 1e-5;
        const t = samples.time[k]!;
        const interior = samples.weight[k]! >= 0.75 * (samples.weight[k + 1] ?? 0) && samples.weight[k]! >= 0.75 * (samples.weight[k - 1] ?? 0);
        if (samples.moving[k] === 1 && interior && t - h > 0 && t + h < trajectory.cycleTime) {
          const ahead = (trajectory.stateAt(t + h, state), free(probe, state).qvel);
          const behind = (trajectory.stateAt(t - h, state), free(probe, state).qvel);
          const gap = Math.hypot(...ahead.map((v, i) => (v - behind[i]!) / (2 * h) - f.qacc[i]!)) / (Math.hypot(...f.qacc) + 1);
          worstAcceleration = Math.max(worstAcceleration, gap);
          expect(gap).toBeLessThan(1e-6);
        }
        f.qpos.forEach((v, i) => (data.qpos[i] = v));
        f.qvel.forEach((v, i) => (data.qvel[i] = v));
        f.qacc.forEach((v, i) => (data.qacc[i] = v));
        mj.mj_inverse(mjModel, data);
        const inverse = Float64Array.from(data.qfrc_inverse.subarray(0, mjModel.nv));
        const reduced = Array.from({ length: n }, (_, a) => f.rho.reduce((s, row, i) => s + row[a]! * inverse[i]!, 0));
        const relative = Math.hypot(...reduced.map((v, i) => v - engine[i]!)) / Math.hypot(...engine);
        worst = Math.max(worst, relative);
        expect(relative, `node ${k}`).toBeLessThanOrEqual(1e-8);
        if (samples.moving[k] === 1 && Math.hypot(...Array.from(dynamics.qdd.subarray(0, n))) > 0.5) moving++;
        velocityShare = Math.max(velocityShare, Math.hypot(...Array.from(dynamics.effortVelocity.subarray(0, n))) / Math.hypot(...engine));
      }
    } finally {
      data.delete();
      mjModel.delete();
    }
    measured.push(
      `${c.label}: mj_inverse vs engine along a ${samples.count}-node cycle: max |ρᵀτ′ − τ|/|τ| = ${worst.toExponential(2)}; ` +
        `q̈′ vs central difference ≤ ${worstAcceleration.toExponential(2)}; largest |C q̇|/|τ| ${velocityShare.toExponential(2)}`,
    );
    // The velocity terms are far above the tolerance, so leaving them out would fail the check.
    expect(velocityShare).toBeGreaterThan(1e-4);
    // Real motion, not only standstill.
    expect(moving).toBeGreaterThan(samples.count / 2);
  });
});
