/**
 * Reference check of the duty-cycle inverse dynamics (src/mechanics/dutyCycle.ts) against MuJoCo.
 *
 * Sources:
 * - Reduced model of a closed chain: Ghorbel, Chételat, Gunawardana & Longchamp, "Modeling and set
 *   point control of closed-chain mechanisms: theory and experiment", IEEE Trans. Control Systems
 *   Technology 8(5), 2000, pp. 801–815. Cut the loop to get an open "free" system with coordinates
 *   q′ = q′(θ); with ρ = ∂q′/∂θ the actuated-space torque that produces a constraint-consistent motion
 *   is τ = ρᵀ τ′, where τ′ is the free system's inverse dynamics at q̇′ = ρ θ̇ and
 *   q̈′ = ρ θ̈ + ρ̇ θ̇ (the constraint forces at the cut do no virtual work along ρ).
 * - MuJoCo, a general-purpose multibody physics engine (WebAssembly build, npm mujoco-js@0.0.7,
 *   Apache-2.0): mj_inverse(m, d) computes qfrc_inverse = M(q) q̈ + c(q, q̇) + g(q) (with armature in
 *   M) from mjData.qpos, qvel and qacc.
 *
 * The free system is the one of tests/mechanics/reference-mujoco.test.ts (same parts, same x–z plane
 * convention, hinge axes −y, relative hinges q′ = (θ_1, β_1 − θ_1, θ_2, β_2 − θ_2)). The reflected
 * drive inertia is the crank joints' armature. Here the velocities and accelerations are not zero:
 * q̇′ = (θ̇_1, β̇_1 − θ̇_1, θ̇_2, β̇_2 − θ̇_2) and q̈′ = (θ̈_1, β̈_1 − θ̈_1, θ̈_2, β̈_2 − θ̈_2), which is
 * ρ θ̈ + ρ̇ θ̇ written with the rod accelerations β̈_i of the engine's acceleration analysis (derived:
 * the second derivative of q′(θ(t)) is ρ θ̈ + ρ̇ θ̇, and β̈_i is that derivative for the rod angles).
 * Independently of the engine, MuJoCo's own site Jacobians check that q̇′ keeps both cut ends
 * together, and a finite difference of the engine's free velocities checks q̈′ (so a wrong β̈ would
 * show up here, not only in the torque).
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { FiveBarPose, PoseStatus, solvePose, type FiveBarModel } from '../helpers/fiveBarClosedForm.js';
import { CycleSamples, CycleTrajectory, type CyclePath, type EndPointState } from '../../src/mechanics/dutyCycle.js';
import { FiveBarMotion, inverseDynamics, jointRatesFromPath } from '../helpers/fiveBarClosedFormCycle.js';
import { CycleDynamics } from '../../src/mechanics/dutyCycle.js';
import { fiveBar } from '../../src/architectures/fivebar.js';
import { legModelOf } from '../helpers/fiveBarLegModel.js';
import type { ArchitectureModelBase, PlanarArchitecture } from '../../src/architectures/types.js';
import { loadMujoco, type MujocoModule } from '../helpers/mujoco.js';

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
  readonly site_xpos: Float64Array;
  delete(): void;
}
interface InverseModule {
  readonly MjModel: { loadFromXML(path: string): InverseModel };
  readonly MjData: new (model: InverseModel) => InverseData;
  readonly FS: { writeFile(path: string, contents: string): void };
  readonly DoubleBuffer: new (length: number) => { GetView(): Float64Array; delete(): void };
  readonly mjtObj: { readonly mjOBJ_SITE: { readonly value: number } };
  mj_inverse(model: InverseModel, data: InverseData): void;
  mj_forward(model: InverseModel, data: InverseData): void;
  mj_jacSite(model: InverseModel, data: InverseData, jacp: { GetView(): Float64Array }, jacr: { GetView(): Float64Array }, site: number): void;
  mj_name2id(model: InverseModel, type: number, name: string): number;
}

interface LegParts {
  readonly pivot: readonly [number, number];
  readonly crankLength: number;
  readonly rodLength: number;
  readonly crankBarMass: number;
  readonly elbowHubMass: number;
  readonly rodTubeMass: number;
  readonly rodFittingMass: number;
  readonly reflectedInertia: number;
}

/** Asymmetric design (the parts of tests/mechanics/reference-mujoco.test.ts). */
const LEG_1: LegParts = {
  pivot: [-0.12, 0.0], crankLength: 0.2, rodLength: 0.28, crankBarMass: 0.45, elbowHubMass: 0.12,
  rodTubeMass: 0.28, rodFittingMass: 0.12, reflectedInertia: 0.004,
};
const LEG_2: LegParts = {
  pivot: [0.1, 0.05], crankLength: 0.16, rodLength: 0.32, crankBarMass: 0.38, elbowHubMass: 0.09,
  rodTubeMass: 0.35, rodFittingMass: 0.15, reflectedInertia: 0.0025,
};
const PAYLOAD_MASS = 0.6;
const GRAVITY: readonly [number, number] = [0, -9.81];

/** Lumped fields from the parts (derived, parallel-axis theorem), as in the static reference test. */
function rodMass(leg: LegParts): number {
  return leg.rodTubeMass + leg.rodFittingMass;
}
function rodComDistance(leg: LegParts): number {
  return (leg.rodTubeMass * leg.rodLength) / 2 / rodMass(leg);
}
function rodInertiaAboutCom(leg: LegParts): number {
  const d = leg.rodLength;
  const b = rodComDistance(leg);
  return (leg.rodTubeMass * d * d) / 12 + leg.rodTubeMass * (d / 2 - b) ** 2 + leg.rodFittingMass * b * b;
}
function crankInertiaAboutPivot(leg: LegParts): number {
  return (leg.crankBarMass * leg.crankLength ** 2) / 3 + leg.elbowHubMass * leg.crankLength ** 2;
}
function crankFirstMoment(leg: LegParts): number {
  return (leg.crankBarMass * leg.crankLength) / 2 + leg.elbowHubMass * leg.crankLength;
}

const MODEL: FiveBarModel = {
  pivotX: [LEG_1.pivot[0], LEG_2.pivot[0]],
  pivotY: [LEG_1.pivot[1], LEG_2.pivot[1]],
  crank: [LEG_1.crankLength, LEG_2.crankLength],
  rod: [LEG_1.rodLength, LEG_2.rodLength],
  sigma: [1, -1],
  assembly: 1,
  jointLimits: [null, null],
  crankInertiaAboutPivot: [crankInertiaAboutPivot(LEG_1), crankInertiaAboutPivot(LEG_2)],
  crankFirstMoment: [crankFirstMoment(LEG_1), crankFirstMoment(LEG_2)],
  rodMass: [rodMass(LEG_1), rodMass(LEG_2)],
  rodComDistance: [rodComDistance(LEG_1), rodComDistance(LEG_2)],
  rodInertiaAboutCom: [rodInertiaAboutCom(LEG_1), rodInertiaAboutCom(LEG_2)],
  endMass: PAYLOAD_MASS,
  reflectedInertia: [LEG_1.reflectedInertia, LEG_2.reflectedInertia],
  gravity: GRAVITY,
  complianceBending: [2e-6, 3e-6],
  complianceCrankAxial: [1e-8, 1e-8],
  complianceRodAxial: [2e-8, 2e-8],
};

function slenderBarInertial(mass: number, length: number): string {
  const transverse = (mass * length * length) / 12;
  return `<inertial pos="${length / 2} 0 0" mass="${mass}" diaginertia="${transverse * 1e-3} ${transverse} ${transverse}"/>`;
}
function pointMassBody(name: string, x: number, mass: number): string {
  return `<body name="${name}" pos="${x} 0 0"><inertial pos="0 0 0" mass="${mass}" diaginertia="0 0 0"/></body>`;
}
function armMjcf(index: 1 | 2, leg: LegParts, payloadMass: number): string {
  const p = leg.crankLength;
  const d = leg.rodLength;
  const payload = payloadMass > 0 ? pointMassBody('payload', d, payloadMass) : '';
  return `
    <body name="crank${index}" pos="${leg.pivot[0]} 0 ${leg.pivot[1]}">
      <joint name="theta${index}" type="hinge" axis="0 -1 0" armature="${leg.reflectedInertia}"/>
      ${slenderBarInertial(leg.crankBarMass, p)}
      ${pointMassBody(`elbowHub${index}`, p, leg.elbowHubMass)}
      <body name="rod${index}" pos="${p} 0 0">
        <joint name="elbow${index}" type="hinge" axis="0 -1 0"/>
        ${slenderBarInertial(leg.rodTubeMass, d)}
        ${pointMassBody(`rodFitting${index}`, 0, leg.rodFittingMass)}
        <site name="tip${index}" pos="${d} 0 0"/>
        ${payload}
      </body>
    </body>`;
}
const FREE_SYSTEM_MJCF = `<mujoco model="five-bar free system (dynamics)">
  <compiler angle="radian" inertiafromgeom="false"/>
  <option gravity="${GRAVITY[0]} 0 ${GRAVITY[1]}"/>
  <worldbody>${armMjcf(1, LEG_1, PAYLOAD_MASS)}${armMjcf(2, LEG_2, 0)}
  </worldbody>
</mujoco>`;

/** A cycle with every motion law, an arc and a dwell, inside the usable region of this design. */
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

const FREE_DOF = 4;

describe('duty-cycle inverse dynamics against MuJoCo mj_inverse (free system reduced with ρ)', () => {
  let mj: InverseModule;
  let model: InverseModel;
  let data: InverseData;
  const errors: number[] = [];
  const accelerationErrors: number[] = [];

  beforeAll(async () => {
    const module: MujocoModule = await loadMujoco();
    mj = module as unknown as InverseModule;
    mj.FS.writeFile('/mjcf/five-bar-free-dynamics.xml', FREE_SYSTEM_MJCF);
    model = mj.MjModel.loadFromXML('/mjcf/five-bar-free-dynamics.xml');
    data = new mj.MjData(model);
  });

  afterAll(() => {
    data?.delete();
    model?.delete();
    if (errors.length > 0) {
      console.info(
        `mj_inverse vs engine along the cycle: ${errors.length} nodes, max |ρᵀτ′ − τ|/|τ| = ${Math.max(...errors).toExponential(2)}; ` +
          `max relative error of q̈′ against a finite difference = ${Math.max(...accelerationErrors).toExponential(2)}`,
      );
    }
  });

  /** Free coordinates and rates of the engine at one cycle node. */
  function freeState(state: EndPointState, pose: FiveBarPose, motion: FiveBarMotion): { q: number[]; qd: number[]; qdd: number[] } {
    expect(solvePose(MODEL, pose, state.x, state.y)).toBe(PoseStatus.Assembled);
    jointRatesFromPath(MODEL, pose, state.vx, state.vy, state.ax, state.ay, motion);
    const beta1 = Math.atan2(pose.u1y, pose.u1x);
    const beta2 = Math.atan2(pose.u2y, pose.u2x);
    return {
      q: [pose.theta1, beta1 - pose.theta1, pose.theta2, beta2 - pose.theta2],
      qd: [motion.dtheta1, motion.drod1 - motion.dtheta1, motion.dtheta2, motion.drod2 - motion.dtheta2],
      qdd: [motion.ddtheta1, motion.ddrod1 - motion.ddtheta1, motion.ddtheta2, motion.ddrod2 - motion.ddtheta2],
    };
  }

  it('builds the free system with four hinges', () => {
    expect(model.nv).toBe(FREE_DOF);
  });

  it('τ = ρᵀ qfrc_inverse at every node of a cycle on an asymmetric five-bar (1e-8 relative)', () => {
    const trajectory = new CycleTrajectory(PATH);
    const samples = new CycleSamples(trajectory, 60);
    const pose = new FiveBarPose();
    const motion = new FiveBarMotion();
    const state: EndPointState = { x: 0, y: 0, vx: 0, vy: 0, ax: 0, ay: 0 };
    const jacp = new mj.DoubleBuffer(3 * FREE_DOF);
    const jacr = new mj.DoubleBuffer(3 * FREE_DOF);
    const tip1 = mj.mj_name2id(model, mj.mjtObj.mjOBJ_SITE.value, 'tip1');
    const tip2 = mj.mj_name2id(model, mj.mjtObj.mjOBJ_SITE.value, 'tip2');
    let checked = 0;
    let moving = 0;
    try {
      for (let k = 0; k < samples.count; k++) {
        state.x = samples.x[k]!; state.y = samples.y[k]!;
        state.vx = samples.vx[k]!; state.vy = samples.vy[k]!;
        state.ax = samples.ax[k]!; state.ay = samples.ay[k]!;
        const { q, qd, qdd } = freeState(state, pose, motion);
        inverseDynamics(MODEL, pose, motion);
        const engineTorque = [motion.tauInertial1 + motion.tauGravity1, motion.tauInertial2 + motion.tauGravity2];

        // q̈′ against a central difference of the engine's q̇′ in time (derived; h = 1e-5 s, O(h²)).
        const h = 1e-5;
        const t = samples.time[k]!;
        if (samples.moving[k] === 1 && t - h > 0 && t + h < trajectory.cycleTime) {
          const qdAt = (time: number): number[] => {
            trajectory.stateAt(time, state);
            const probePose = new FiveBarPose();
            const probeMotion = new FiveBarMotion();
            return freeState(state, probePose, probeMotion).qd;
          };
          const ahead = qdAt(t + h);
          const behind = qdAt(t - h);
          const fd = ahead.map((v, i) => (v - behind[i]!) / (2 * h));
          const scale = Math.hypot(...qdd) + 1;
          const gap = Math.hypot(...fd.map((v, i) => v - qdd[i]!)) / scale;
          // A step's first and last nodes carry half a trapezoid weight; there t ± h would straddle two
          // steps (different laws), so the difference is taken only at interior nodes.
          const atBoundary = samples.weight[k]! < 0.75 * (samples.weight[k + 1] ?? 0) || samples.weight[k]! < 0.75 * (samples.weight[k - 1] ?? 0);
          if (!atBoundary) {
            accelerationErrors.push(gap);
            expect(gap).toBeLessThan(1e-6);
          }
        }

        for (let i = 0; i < FREE_DOF; i++) {
          data.qpos[i] = q[i]!;
          data.qvel[i] = qd[i]!;
          data.qacc[i] = qdd[i]!;
        }
        mj.mj_inverse(model, data);
        const inverse = Float64Array.from(data.qfrc_inverse.subarray(0, FREE_DOF));

        // Cut ends together and moving together under q̇′ (MuJoCo site positions and Jacobians).
        mj.mj_forward(model, data);
        const xpos = Float64Array.from(data.site_xpos.subarray(0, 6));
        expect(Math.hypot(xpos[3 * tip1]! - xpos[3 * tip2]!, xpos[3 * tip1 + 2]! - xpos[3 * tip2 + 2]!)).toBeLessThan(1e-12);
        mj.mj_jacSite(model, data, jacp, jacr, tip1);
        const j1 = Float64Array.from(jacp.GetView());
        mj.mj_jacSite(model, data, jacp, jacr, tip2);
        const j2 = Float64Array.from(jacp.GetView());
        for (const row of [0, 2]) {
          let v1 = 0;
          let v2 = 0;
          for (let i = 0; i < FREE_DOF; i++) {
            v1 += j1[FREE_DOF * row + i]! * qd[i]!;
            v2 += j2[FREE_DOF * row + i]! * qd[i]!;
          }
          expect(Math.abs(v1 - v2)).toBeLessThan(1e-12 * (Math.abs(v1) + 1));
          // The tip moves with the path's end-point velocity (x ↦ x, engine y ↦ MuJoCo z).
          expect(Math.abs(v1 - (row === 0 ? samples.vx[k]! : samples.vy[k]!))).toBeLessThan(1e-12 * (Math.abs(v1) + 1));
        }

        // ρ rows (1, 0), w_1 − (1, 0), (0, 1), w_2 − (0, 1); τ = ρᵀ τ′ (Ghorbel et al. 2000).
        const rho = [1, 0, motion.w11 - 1, motion.w12, 0, 1, motion.w21, motion.w22 - 1];
        const reduced = [0, 0];
        for (let i = 0; i < FREE_DOF; i++) {
          reduced[0] += rho[2 * i]! * inverse[i]!;
          reduced[1] += rho[2 * i + 1]! * inverse[i]!;
        }
        const relative = Math.hypot(reduced[0]! - engineTorque[0]!, reduced[1]! - engineTorque[1]!) / Math.hypot(engineTorque[0]!, engineTorque[1]!);
        errors.push(relative);
        expect(relative).toBeLessThanOrEqual(1e-8);
        checked++;
        if (samples.moving[k] === 1 && Math.hypot(motion.ddtheta1, motion.ddtheta2) > 1) moving++;
      }
    } finally {
      jacp.delete();
      jacr.delete();
    }
    expect(checked).toBe(samples.count);
    // The check covers real motion, not only standstill (accelerations above 1 rad/s² at many nodes).
    expect(moving).toBeGreaterThan(samples.count / 2);
  });
  it('the generic cycle dynamics through the architecture interface give the same τ = ρᵀ qfrc_inverse (1e-8 relative)', () => {
    // Same free system and reduction (Ghorbel et al. 2000); q̇′, q̈′ and ρ from the generic engine of
    // dutyCycle.ts (rod rates W and their derivative) instead of the five-bar closed forms.
    const samples = new CycleSamples(new CycleTrajectory(PATH), 60);
    const dynamics = new CycleDynamics(fiveBar as unknown as PlanarArchitecture<ArchitectureModelBase>);
    const wrapped = legModelOf(MODEL);
    let worst = 0;
    for (let k = 0; k < samples.count; k++) {
      expect(dynamics.solveAt(wrapped, samples.x[k]!, samples.y[k]!)).toBe(PoseStatus.Assembled);
      dynamics.fromTaskMotion([samples.vx[k]!, samples.vy[k]!], [samples.ax[k]!, samples.ay[k]!]);
      const pose = dynamics.pose;
      const beta = [0, 1].map((i) => Math.atan2(pose.rodDirection[2 * i + 1]!, pose.rodDirection[2 * i]!));
      const q = [pose.q[0]!, beta[0]! - pose.q[0]!, pose.q[1]!, beta[1]! - pose.q[1]!];
      const qd = [dynamics.qd[0]!, dynamics.rodRate[0]! - dynamics.qd[0]!, dynamics.qd[1]!, dynamics.rodRate[1]! - dynamics.qd[1]!];
      const qdd = [dynamics.qdd[0]!, dynamics.rodAccel[0]! - dynamics.qdd[0]!, dynamics.qdd[1]!, dynamics.rodAccel[1]! - dynamics.qdd[1]!];
      for (let i = 0; i < FREE_DOF; i++) {
        data.qpos[i] = q[i]!;
        data.qvel[i] = qd[i]!;
        data.qacc[i] = qdd[i]!;
      }
      mj.mj_inverse(model, data);
      const inverse = Float64Array.from(data.qfrc_inverse.subarray(0, FREE_DOF));
      const W = pose.rodRate;
      const rho = [1, 0, W[0]! - 1, W[1]!, 0, 1, W[2]!, W[3]! - 1];
      const reduced = [0, 0];
      for (let i = 0; i < FREE_DOF; i++) {
        reduced[0] += rho[2 * i]! * inverse[i]!;
        reduced[1] += rho[2 * i + 1]! * inverse[i]!;
      }
      const engine = [dynamics.effortInertial[0]! + dynamics.effortGravity[0]!, dynamics.effortInertial[1]! + dynamics.effortGravity[1]!];
      const relative = Math.hypot(reduced[0]! - engine[0]!, reduced[1]! - engine[1]!) / Math.hypot(engine[0]!, engine[1]!);
      worst = Math.max(worst, relative);
      expect(relative).toBeLessThanOrEqual(1e-8);
    }
    console.info(`mj_inverse vs the generic engine (five-bar through the interface): max relative ${worst.toExponential(2)}`);
  });
});
