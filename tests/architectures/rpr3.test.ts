/**
 * 3-RPR (three base pivots, actuated telescoping struts, platform pivots; src/architectures/rpr3.ts
 * on the strut leg kind, src/architectures/legs/strut.ts). FK∘IK in every working mode, the
 * finite-difference Jacobians and the stiffness in actuator units run for it in kinematics.test.ts
 * and analysis.test.ts (CASES); here: both singularity kinds and the reduced dynamics against MuJoCo.
 *
 * Sources:
 * - Singularity kinds: Gosselin & Angeles, "Singularity analysis of closed-loop kinematic chains",
 *   IEEE Trans. Robotics and Automation 6(3), 1990 — type 1 (a leg at the boundary of its joint
 *   space: here a strut at a stroke end), type 2 (det A = 0: the three strut lines meet in one point
 *   or are parallel, and the platform can turn about that point with the struts locked).
 * - Reduced model of a closed chain: Ghorbel, Chételat, Gunawardana & Longchamp, "Modeling and set
 *   point control of closed-chain mechanisms: theory and experiment", IEEE Trans. Control Systems
 *   Technology 8(5), 2000: D = ρᵀD′ρ and g = ρᵀg′ with ρ = ∂q′/∂q of the cut-open chain.
 * - MuJoCo (npm mujoco-js, Apache-2.0) supplies D′ (mj_fullM) and g′ (qfrc_bias at rest) of the free
 *   system, built in the MuJoCo x–z plane (y ↦ z), hinge axes −y, as tests/architectures/reference-mujoco.test.ts.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { rpr3 } from '../../src/architectures/rpr3.js';
import type { LeggedModel } from '../../src/architectures/legged.js';
import { PoseStatus, type ArchitecturePose } from '../../src/architectures/types.js';
import { architectureUsableMargin } from '../../src/mechanics/usability.js';
import { loadMujoco, MujocoSystem, type MujocoModule } from '../helpers/mujoco.js';
import { findPoses, RPR3_INPUT, type ArchitectureCase } from './models.js';

const CASE: ArchitectureCase = { label: '3-RPR', architecture: rpr3, input: RPR3_INPUT, box: { x: 0, y: 0, half: 0.2, phiHalf: 0.6 } };
const SETTINGS = { evaluation: { minInverseCondition: 0, minTransmissionAngle: 0 }, assemblyMode: '+' } as const;
const measured: string[] = [];

describe('3-RPR singularities (Gosselin & Angeles 1990)', () => {
  it('type 1: strut 1 at its stroke end is the workspace boundary — reach margin 0, usable margin 0, and P cannot move outward along the strut', () => {
    const model = rpr3.buildModel(RPR3_INPUT);
    const pose = rpr3.createPose();
    const qmax = RPR3_INPUT.jointLimits![0]!.max;
    // derived: with φ = 0, B_1 = P + b_1; put B_1 at distance q_max from A_1 in a direction that keeps the other struts in stroke.
    const angle = -Math.PI / 2;
    const bx = model.baseX[0]! + qmax * Math.cos(angle);
    const by = model.baseY[0]! + qmax * Math.sin(angle);
    const x = bx - model.platformX[0]!;
    const y = by - model.platformY[0]!;
    const status = rpr3.solvePose(model, pose, x, y, 0);
    expect(status === PoseStatus.Assembled || status === PoseStatus.WrongAssembly).toBe(true);
    expect(Math.abs(pose.q[0]! - qmax)).toBeLessThan(1e-12);
    expect(Math.abs(pose.legReach[0]!)).toBeLessThan(1e-12);
    expect(Math.abs(pose.reachMargin)).toBeLessThan(1e-12);
    expect(Math.abs(pose.jointMargin)).toBeLessThan(1e-12);
    // In the assembly sign of this pose, the usability margin is the stroke margin: 0 on the boundary.
    const settings = { ...SETTINGS, assemblyMode: pose.detA > 0 ? '+' : '-' } as const;
    expect(Math.abs(architectureUsableMargin(pose, PoseStatus.Assembled, settings, 1))).toBeLessThan(1e-12);
    // q̇_1 = u_1·Ḃ_1: a step along +u_1 lengthens strut 1 beyond q_max (unreachable), along −u_1 stays inside.
    const ux = pose.rodDirection[0]!;
    const uy = pose.rodDirection[1]!;
    const step = 1e-6;
    expect(rpr3.solvePose(model, pose, x + step * ux, y + step * uy, 0)).toBe(PoseStatus.Unreachable);
    expect(rpr3.solvePose(model, pose, x - step * ux, y - step * uy, 0)).not.toBe(PoseStatus.Unreachable);
  });

  it('type 2: radial pins (no twist) at P = 0, φ = 0 make the three strut lines meet at P — det A = 0, 1/κ = 0, and locked struts let the platform turn about that point', () => {
    const model = rpr3.buildModel({ ...RPR3_INPUT, parameters: { ...RPR3_INPUT.parameters, platform_twist: 0 } });
    const pose = rpr3.createPose();
    rpr3.solvePose(model, pose, 0, 0, 0);
    expect(pose.status).not.toBe(PoseStatus.Unreachable);
    // derived: A_i and b_i are both radial along γ_i, so every strut line passes through the origin.
    expect(Math.abs(pose.detA)).toBeLessThan(1e-15);
    expect(pose.inverseCondition).toBeLessThan(1e-15);
    // A t = 0 for the twist t = (0, 0, 1) (turning about P = the meeting point): every q̇_i = 0.
    for (let i = 0; i < 3; i++) expect(Math.abs(pose.A[3 * i + 2]!)).toBeLessThan(1e-15);
    // Away from it (twisted pins) det A ≠ 0, and it changes sign across φ = 0 at P = 0: the singularity separates the assembly branches.
    const twisted = rpr3.buildModel(RPR3_INPUT);
    rpr3.solvePose(twisted, pose, 0, 0, -0.5 - RPR3_INPUT.parameters.platform_twist!);
    const before = pose.detA;
    rpr3.solvePose(twisted, pose, 0, 0, 0.5 - RPR3_INPUT.parameters.platform_twist!);
    expect(Math.sign(before)).toBe(-Math.sign(pose.detA));
    rpr3.solvePose(twisted, pose, 0, 0, -RPR3_INPUT.parameters.platform_twist!);
    expect(Math.abs(pose.detA)).toBeLessThan(1e-15);
  });

  it('type 2, parallel lines: struts parallel to one direction (pins offset by a common vector) give det A = 0 and a free translation across them', () => {
    // derived: with b_i = A_i − P − s_i e (all B_i − A_i ∥ e) the rows u_i are all ±e, so rank A ≤ 2 and A (e⊥, ·) has zero translational part.
    const model = rpr3.buildModel({ ...RPR3_INPUT, parameters: { base_radius: 0.3, platform_radius: 0.3, platform_twist: 0 } });
    const pose = rpr3.createPose();
    // Pins equal to the pivots shifted by −0.25 along y: every strut vertical, length 0.25.
    rpr3.solvePose(model, pose, 0, -0.25, 0);
    expect(pose.status).not.toBe(PoseStatus.Unreachable);
    for (let i = 0; i < 3; i++) {
      expect(Math.abs(pose.q[i]! - 0.25)).toBeLessThan(1e-12);
      expect(Math.abs(pose.rodDirection[2 * i]!)).toBeLessThan(1e-15);
    }
    expect(Math.abs(pose.detA)).toBeLessThan(1e-15);
    expect(pose.inverseCondition).toBeLessThan(1e-15);
  });
});

/** MJCF of the free system: per leg a housing hinged at A_i (β_i) and a tube sliding in it (q_i); the platform hangs on tube 1 (φ − β_1). */
function freeSystemMjcf(model: LeggedModel): string {
  const bar = (mass: number, length: number, centre: number): string => {
    const transverse = (mass * length * length) / 12;
    return `<inertial pos="${centre} 0 0" mass="${mass}" diaginertia="${transverse * 1e-3} ${transverse} ${transverse}"/>`;
  };
  const legs: string[] = [];
  for (let i = 0; i < 3; i++) {
    const h = model.rod[i]!;
    let platform = '';
    if (i === 0) {
      const px = -model.platformX[0]!;
      const pz = -model.platformY[0]!;
      const sites = [1, 2].map((k) => `<site name="pin${k + 1}" pos="${model.platformX[k]! - model.platformX[0]!} 0 ${model.platformY[k]! - model.platformY[0]!}"/>`).join('');
      platform = `<body name="platform" pos="0 0 0">
          <joint name="platformHinge" type="hinge" axis="0 -1 0"/>
          <inertial pos="${px} 0 ${pz}" mass="${model.platformMass}" diaginertia="${model.platformInertia} ${model.platformInertia} ${model.platformInertia}"/>
          <body name="payload" pos="${px} 0 ${pz}"><inertial pos="0 0 0" mass="${model.payloadMass}" diaginertia="0 0 0"/></body>
          ${sites}
        </body>`;
    }
    legs.push(`<body name="housing${i + 1}" pos="${model.baseX[i]} 0 ${model.baseY[i]}">
      <joint name="beta${i + 1}" type="hinge" axis="0 -1 0"/>
      ${bar(model.proximalMass[i]!, h, h / 2)}
      <body name="tube${i + 1}" pos="0 0 0">
        <joint name="q${i + 1}" type="slide" axis="1 0 0" armature="${model.reflectedInertia[i]}"/>
        ${bar(model.rodMass[i]!, h, -model.rodComDistance[i]!)}
        <site name="tip${i + 1}" pos="0 0 0"/>
        ${platform}
      </body>
    </body>`);
  }
  return `<mujoco model="3-rpr free system">
  <compiler angle="radian" inertiafromgeom="false"/>
  <option gravity="${model.gravity[0]} 0 ${model.gravity[1]}"/>
  <worldbody>${legs.join('\n')}</worldbody>
</mujoco>`;
}

/** Free coordinates (β_1, q_1, φ − β_1, β_2, q_2, β_3, q_3) and ρ = ∂q′/∂q (derived from the leg rates). */
function freeCoordinates(pose: ArchitecturePose): { qpos: number[]; rho: number[][] } {
  const qpos: number[] = [];
  const rho: number[][] = [];
  const row = (i: number): number[] => [0, 1, 2].map((k) => pose.rodRate[3 * i + k]!);
  for (let i = 0; i < 3; i++) {
    const beta = Math.atan2(pose.rodDirection[2 * i + 1]!, pose.rodDirection[2 * i]!);
    qpos.push(beta, pose.q[i]!);
    rho.push(row(i), [0, 1, 2].map((k) => (k === i ? 1 : 0)));
    if (i === 0) {
      qpos.push(pose.phi - beta);
      rho.push([0, 1, 2].map((k) => pose.J[6 + k]! - pose.rodRate[k]!));
    }
  }
  return { qpos, rho };
}

const norm = (v: readonly number[]): number => Math.sqrt(v.reduce((s, x) => s + x * x, 0));
let mj: MujocoModule;
beforeAll(async () => {
  mj = await loadMujoco();
});
afterAll(() => {
  for (const line of measured) console.info(line);
});

describe('3-RPR reduced dynamics against MuJoCo', () => {
  it('τ_g and D equal ρᵀg′ and ρᵀD′ρ of the free system in every working mode, to 1e-9 relative', () => {
    let worstInertia = 0;
    let worstGravity = 0;
    let worstClosure = 0;
    let checked = 0;
    for (const mode of rpr3.workingModes) {
      const probe = rpr3.buildModel({ ...RPR3_INPUT, workingMode: mode });
      const poses = findPoses(CASE, probe, 2, 31);
      expect(poses.length).toBeGreaterThanOrEqual(1);
      for (const found of poses) {
        const model = rpr3.buildModel({ ...RPR3_INPUT, workingMode: mode, assembly: found.assembly });
        expect(model.rodMass.every((m) => m > 0) && model.proximalMass.every((m) => m > 0)).toBe(true);
        const pose = rpr3.createPose();
        expect(rpr3.solvePose(model, pose, found.x, found.y, found.phi)).toBe(PoseStatus.Assembled);
        rpr3.poseDynamics(model, pose);
        const system = new MujocoSystem(mj, freeSystemMjcf(model), `rpr3-${mode}-${checked}.xml`);
        try {
          const { qpos, rho } = freeCoordinates(pose);
          expect(system.degreesOfFreedom).toBe(7);
          system.placeAtRest(qpos);
          for (let i = 0; i < 3; i++) {
            const tip = system.sitePosition(`tip${i + 1}`);
            worstClosure = Math.max(worstClosure, Math.hypot(tip[0] - pose.distalJoint[2 * i]!, tip[2] - pose.distalJoint[2 * i + 1]!));
          }
          for (const k of [2, 3]) {
            const pin = system.sitePosition(`pin${k}`);
            const tip = system.sitePosition(`tip${k}`);
            worstClosure = Math.max(worstClosure, Math.hypot(pin[0] - tip[0], pin[2] - tip[2]));
          }
          const nv = 7;
          const full = system.denseMassMatrix();
          const bias = system.biasForces();
          const reducedD: number[] = [];
          const reducedG: number[] = [];
          for (let a = 0; a < 3; a++) {
            let g = 0;
            for (let i = 0; i < nv; i++) g += rho[i]![a]! * bias[i]!;
            reducedG.push(g);
            for (let b = 0; b < 3; b++) {
              let s = 0;
              for (let i = 0; i < nv; i++) for (let j = 0; j < nv; j++) s += rho[i]![a]! * full[nv * i + j]! * rho[j]![b]!;
              reducedD.push(s);
            }
          }
          const engineD = Array.from(pose.D);
          const engineG = Array.from(pose.tauG);
          const inertia = norm(reducedD.map((v, k) => v - engineD[k]!)) / norm(engineD);
          const gravity = norm(reducedG.map((v, k) => v - engineG[k]!)) / norm(engineG);
          worstInertia = Math.max(worstInertia, inertia);
          worstGravity = Math.max(worstGravity, gravity);
          expect(inertia).toBeLessThanOrEqual(1e-9);
          expect(gravity).toBeLessThanOrEqual(1e-9);
          checked++;
        } finally {
          system.dispose();
        }
      }
    }
    measured.push(`3-RPR: ${checked} poses, |ρᵀD′ρ − D|/|D| ≤ ${worstInertia.toExponential(2)}, |ρᵀg′ − τ_g|/|τ_g| ≤ ${worstGravity.toExponential(2)}, loop closure ≤ ${worstClosure.toExponential(2)} m`);
    // The cut ends meet where the engine puts the platform pins (derived: same pose, same conventions).
    expect(worstClosure).toBeLessThan(1e-12);
    expect(checked).toBeGreaterThanOrEqual(8);
  });
});
