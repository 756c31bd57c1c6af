/**
 * Reference check of the reduced dynamics of the 2-PRR, 3-RRR and 3-PRR models
 * (src/architectures/legged.ts) against MuJoCo, as tests/mechanics/reference-mujoco.test.ts does for
 * the five-bar.
 *
 * Sources:
 * - Reduced model of a closed chain: Ghorbel, Chételat, Gunawardana & Longchamp, "Modeling and set
 *   point control of closed-chain mechanisms: theory and experiment", IEEE Trans. Control Systems
 *   Technology 8(5), 2000. Cut the loops to get an open free system with coordinates q′; with
 *   ρ = ∂q′/∂q the actuated-space inertia and gravity are D = ρᵀD′ρ and g = ρᵀg′.
 * - MuJoCo (WebAssembly build, npm mujoco-js@0.0.7, Apache-2.0) supplies D′ (mj_fullM) and g′
 *   (qfrc_bias at rest) of the free system, built in the MuJoCo x–z plane (y ↦ z), hinge axes −y.
 *
 * Free systems (each rod cut at its distal pin except leg 1, which keeps the platform):
 * - leg i revolute: crank hinge θ_i, rod hinge β_i − θ_i (relative);
 *   leg i prismatic: slide along the rail (q_i), rod hinge β_i (the slider does not turn);
 * - 3-DOF: the platform hangs on the tip of rod 1 by a hinge φ − β_1; 2-DOF: the end-point masses
 *   ride on the tip of rod 1 (a point mass there moves with Ṗ = J q̇, as on P).
 * Bodies are built from parts (uniform bars, point masses) on the MuJoCo side; the engine model gets
 * lumped fields computed from the same parts (parallel-axis theorem, derived).
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { buildLeggedModel, type LeggedModel } from '../../src/architectures/legged.js';
import { ArchitecturePose, PoseStatus, RIGID_MASSLESS, type PlanarArchitecture } from '../../src/architectures/types.js';
import { prr2 } from '../../src/architectures/prr2.js';
import { prr3 } from '../../src/architectures/prr3.js';
import { rrr3 } from '../../src/architectures/rrr3.js';
import { loadMujoco, MujocoSystem, type MujocoModule } from '../helpers/mujoco.js';
import { findPoses, PRR2_INPUT, PRR3_INPUT, RRR3_INPUT, type ArchitectureCase } from './models.js';

/** Physical parts of one leg (invented values), SI. */
interface LegParts {
  readonly crankBarMass: number;
  readonly elbowHubMass: number;
  readonly sliderMass: number;
  readonly rodTubeMass: number;
  /** Point mass at the rod's proximal end: moves the rod's centre of mass off its middle. */
  readonly rodFittingMass: number;
  /** Drive inertia at the joint (MuJoCo: armature), kg·m² or kg. */
  readonly reflectedInertia: number;
}

const PARTS: readonly LegParts[] = [
  { crankBarMass: 0.45, elbowHubMass: 0.12, sliderMass: 0.9, rodTubeMass: 0.28, rodFittingMass: 0.12, reflectedInertia: 0.004 },
  { crankBarMass: 0.38, elbowHubMass: 0.09, sliderMass: 0.7, rodTubeMass: 0.35, rodFittingMass: 0.15, reflectedInertia: 0.0025 },
  { crankBarMass: 0.41, elbowHubMass: 0.11, sliderMass: 0.8, rodTubeMass: 0.3, rodFittingMass: 0.05, reflectedInertia: 0.003 },
];
const PLATFORM_MASS = 0.55;
const PLATFORM_INERTIA = 0.0021;
const PAYLOAD_MASS = 0.35;
const GRAVITY: readonly [number, number] = [1.2, -9.81];

/** Engine model with the lumped fields of the parts. */
function modelFromParts(base: LeggedModel): LeggedModel {
  const n = base.dof;
  const pick = <T>(f: (parts: LegParts, i: number) => T): T[] => Array.from({ length: n }, (_, i) => f(PARTS[i]!, i));
  return {
    ...base,
    proximalInertia: pick((parts, i) =>
      base.actuators[i] === 'revolute' ? (parts.crankBarMass * base.crank[i]! ** 2) / 3 + parts.elbowHubMass * base.crank[i]! ** 2 : parts.sliderMass),
    proximalFirstMoment: pick((parts, i) =>
      base.actuators[i] === 'revolute' ? (parts.crankBarMass * base.crank[i]!) / 2 + parts.elbowHubMass * base.crank[i]! : parts.sliderMass),
    rodMass: pick((parts) => parts.rodTubeMass + parts.rodFittingMass),
    rodComDistance: pick((parts, i) => (parts.rodTubeMass * base.rod[i]!) / 2 / (parts.rodTubeMass + parts.rodFittingMass)),
    rodInertiaAboutCom: pick((parts, i) => {
      const d = base.rod[i]!;
      const b = (parts.rodTubeMass * d) / 2 / (parts.rodTubeMass + parts.rodFittingMass);
      return (parts.rodTubeMass * d * d) / 12 + parts.rodTubeMass * (d / 2 - b) ** 2 + parts.rodFittingMass * b * b;
    }),
    platformMass: PLATFORM_MASS,
    platformInertia: n === 3 ? PLATFORM_INERTIA : 0,
    payloadMass: PAYLOAD_MASS,
    reflectedInertia: pick((parts) => parts.reflectedInertia),
    gravity: GRAVITY,
  };
}

function slenderBar(mass: number, length: number): string {
  const transverse = (mass * length * length) / 12;
  return `<inertial pos="${length / 2} 0 0" mass="${mass}" diaginertia="${transverse * 1e-3} ${transverse} ${transverse}"/>`;
}
function pointMass(name: string, x: number, z: number, mass: number): string {
  return `<body name="${name}" pos="${x} 0 ${z}"><inertial pos="0 0 0" mass="${mass}" diaginertia="0 0 0"/></body>`;
}

/** MJCF of the free system of a legged model. */
function freeSystemMjcf(model: LeggedModel): string {
  const n = model.dof;
  const legs: string[] = [];
  for (let i = 0; i < n; i++) {
    const parts = PARTS[i]!;
    const d = model.rod[i]!;
    let tipContent = '';
    if (i === 0) {
      if (n === 3) {
        // Platform frame origin at B_1; P sits at −b_1 in the platform frame; pins of legs 2, 3 at b_k − b_1.
        const px = -model.platformX[0]!;
        const pz = -model.platformY[0]!;
        const sites = [1, 2]
          .map((k) => `<site name="pin${k + 1}" pos="${model.platformX[k]! - model.platformX[0]!} 0 ${model.platformY[k]! - model.platformY[0]!}"/>`)
          .join('');
        tipContent = `<body name="platform" pos="${d} 0 0">
          <joint name="platformHinge" type="hinge" axis="0 -1 0"/>
          <inertial pos="${px} 0 ${pz}" mass="${PLATFORM_MASS}" diaginertia="${PLATFORM_INERTIA} ${PLATFORM_INERTIA} ${PLATFORM_INERTIA}"/>
          ${pointMass('payload', px, pz, PAYLOAD_MASS)}
          <site name="centre" pos="${px} 0 ${pz}"/>
          ${sites}
        </body>`;
      } else {
        tipContent = pointMass('endMasses', d, 0, PLATFORM_MASS + PAYLOAD_MASS);
      }
    }
    const rod = `<body name="rod${i + 1}" pos="POS">
        <joint name="rodHinge${i + 1}" type="hinge" axis="0 -1 0"/>
        ${slenderBar(parts.rodTubeMass, d)}
        ${pointMass(`fitting${i + 1}`, 0, 0, parts.rodFittingMass)}
        <site name="tip${i + 1}" pos="${d} 0 0"/>
        ${tipContent}
      </body>`;
    if (model.actuators[i] === 'revolute') {
      const p = model.crank[i]!;
      legs.push(`<body name="crank${i + 1}" pos="${model.baseX[i]} 0 ${model.baseY[i]}">
      <joint name="q${i + 1}" type="hinge" axis="0 -1 0" armature="${parts.reflectedInertia}"/>
      ${slenderBar(parts.crankBarMass, p)}
      ${pointMass(`hub${i + 1}`, p, 0, parts.elbowHubMass)}
      ${rod.replace('POS', `${p} 0 0`)}
    </body>`);
    } else {
      legs.push(`<body name="slider${i + 1}" pos="${model.baseX[i]} 0 ${model.baseY[i]}">
      <joint name="q${i + 1}" type="slide" axis="${model.railX[i]} 0 ${model.railY[i]}" armature="${parts.reflectedInertia}"/>
      <inertial pos="0 0 0" mass="${parts.sliderMass}" diaginertia="1e-6 1e-6 1e-6"/>
      ${rod.replace('POS', '0 0 0')}
    </body>`);
    }
  }
  return `<mujoco model="free system">
  <compiler angle="radian" inertiafromgeom="false"/>
  <option gravity="${GRAVITY[0]} 0 ${GRAVITY[1]}"/>
  <worldbody>${legs.join('\n')}</worldbody>
</mujoco>`;
}

/** Free coordinates and ρ = ∂q′/∂q (rows per free coordinate, n columns), in MuJoCo's qpos order. */
function freeCoordinates(model: LeggedModel, pose: ArchitecturePose): { qpos: number[]; rho: number[][] } {
  const n = model.dof;
  const qpos: number[] = [];
  const rho: number[][] = [];
  const unit = (i: number): number[] => Array.from({ length: n }, (_, k) => (k === i ? 1 : 0));
  const rodRow = (i: number): number[] => Array.from({ length: n }, (_, k) => pose.rodRate[i * n + k]!);
  for (let i = 0; i < n; i++) {
    const beta = Math.atan2(pose.rodDirection[2 * i + 1]!, pose.rodDirection[2 * i]!);
    qpos.push(pose.q[i]!);
    rho.push(unit(i));
    if (model.actuators[i] === 'revolute') {
      // derived: hinge = β_i − θ_i, rate w_i − e_i.
      qpos.push(beta - pose.q[i]!);
      rho.push(rodRow(i).map((v, k) => v - (k === i ? 1 : 0)));
    } else {
      qpos.push(beta);
      rho.push(rodRow(i));
    }
    if (i === 0 && n === 3) {
      // derived: hinge = φ − β_1, rate J_φ − w_1.
      qpos.push(pose.phi - beta);
      rho.push(Array.from({ length: n }, (_, k) => pose.J[2 * n + k]! - pose.rodRate[k]!));
    }
  }
  return { qpos, rho };
}

function norm(values: readonly number[]): number {
  return Math.sqrt(values.reduce((s, v) => s + v * v, 0));
}

interface Reference {
  readonly label: string;
  readonly architecture: PlanarArchitecture<LeggedModel>;
  readonly caseOf: ArchitectureCase;
}

const REFERENCES: readonly Reference[] = [
  { label: '2-PRR', architecture: prr2, caseOf: { label: '2-PRR', architecture: prr2, input: PRR2_INPUT, box: { x: 0, y: 0.05, half: 0.3, phiHalf: 0 } } },
  { label: '3-RRR', architecture: rrr3, caseOf: { label: '3-RRR', architecture: rrr3, input: RRR3_INPUT, box: { x: 0, y: 0, half: 0.25, phiHalf: 0.6 } } },
  { label: '3-PRR', architecture: prr3, caseOf: { label: '3-PRR', architecture: prr3, input: PRR3_INPUT, box: { x: 0, y: 0, half: 0.25, phiHalf: 0.6 } } },
];

const measured: string[] = [];
let mj: MujocoModule;

beforeAll(async () => {
  mj = await loadMujoco();
});

afterAll(() => {
  for (const line of measured) console.info(line);
});

describe.each(REFERENCES)('$label reduced dynamics against MuJoCo', (ref) => {
  it('τ_g and D equal ρᵀg′ and ρᵀD′ρ of the free system in every working mode, to 1e-9 relative', () => {
    let worstInertia = 0;
    let worstGravity = 0;
    let worstConstraint = 0;
    let checked = 0;
    for (const mode of ref.architecture.workingModes) {
      const probeModel = ref.architecture.buildModel({ ...ref.caseOf.input, workingMode: mode });
      const poses = findPoses(ref.caseOf, probeModel, 2, 29);
      expect(poses.length).toBeGreaterThanOrEqual(1);
      for (const found of poses) {
        const base = ref.architecture.buildModel({ ...ref.caseOf.input, workingMode: mode, assembly: found.assembly });
        const model = modelFromParts(base);
        const pose = ref.architecture.createPose();
        expect(ref.architecture.solvePose(model, pose, found.x, found.y, found.phi)).toBe(PoseStatus.Assembled);
        ref.architecture.poseDynamics(model, pose);
        const system = new MujocoSystem(mj, freeSystemMjcf(model), `${ref.label}-${mode}-${checked}.xml`);
        try {
          const { qpos, rho } = freeCoordinates(model, pose);
          expect(system.degreesOfFreedom).toBe(qpos.length);
          system.placeAtRest(qpos);
          const nv = qpos.length;
          const n = model.dof;
          // Cut ends meet the engine's distal joints (angle and axis conventions; derived).
          for (let i = 0; i < n; i++) {
            const tip = system.sitePosition(`tip${i + 1}`);
            expect(Math.abs(tip[0] - pose.distalJoint[2 * i]!)).toBeLessThan(1e-12);
            expect(Math.abs(tip[2] - pose.distalJoint[2 * i + 1]!)).toBeLessThan(1e-12);
          }
          // Loop closure Φ_q′ ρ = 0 from MuJoCo's site Jacobians (Ghorbel et al. 2000: ρ spans the
          // constraint null space): 2-DOF tip1 = tip2; 3-DOF tip_k = platform pin k (k = 2, 3).
          const pairs = n === 2 ? [['tip1', 'tip2']] : [['tip2', 'pin2'], ['tip3', 'pin3']];
          const residual: number[] = [];
          const entries: number[] = [];
          for (const [a, b] of pairs) {
            const ja = system.siteTranslationJacobian(a!);
            const jb = system.siteTranslationJacobian(b!);
            for (const row of [0, 2]) {
              for (let col = 0; col < n; col++) {
                let s = 0;
                for (let k = 0; k < nv; k++) s += (ja[nv * row + k]! - jb[nv * row + k]!) * rho[k]![col]!;
                residual.push(s);
              }
              for (let k = 0; k < nv; k++) entries.push(ja[nv * row + k]! - jb[nv * row + k]!);
            }
          }
          const constraintRelative = norm(residual) / (norm(entries) * norm(rho.flat()));
          worstConstraint = Math.max(worstConstraint, constraintRelative);
          expect(constraintRelative).toBeLessThan(1e-12);
          // D = ρᵀD′ρ, g = ρᵀg′ (Ghorbel et al. 2000; D′ = mj_fullM, g′ = qfrc_bias at rest, MuJoCo).
          // qfrc_bias at rest is the holding effort, the engine's τ_g sense (checked on a bar in
          // tests/mechanics/reference-mujoco.test.ts): no sign flip. Prismatic rows are N and kg.
          const full = system.denseMassMatrix();
          const bias = system.biasForces();
          const reducedD: number[] = [];
          const reducedG: number[] = [];
          for (let a = 0; a < n; a++) {
            let g = 0;
            for (let i = 0; i < nv; i++) g += rho[i]![a]! * bias[i]!;
            reducedG.push(g);
            for (let b = 0; b < n; b++) {
              let s = 0;
              for (let i = 0; i < nv; i++) for (let j = 0; j < nv; j++) s += rho[i]![a]! * full[nv * i + j]! * rho[j]![b]!;
              reducedD.push(s);
            }
          }
          const engineD = Array.from(pose.D);
          const engineG = Array.from(pose.tauG);
          const inertiaRelative = norm(reducedD.map((v, k) => v - engineD[k]!)) / norm(engineD);
          const gravityRelative = norm(reducedG.map((v, k) => v - engineG[k]!)) / norm(engineG);
          worstInertia = Math.max(worstInertia, inertiaRelative);
          worstGravity = Math.max(worstGravity, gravityRelative);
          expect(inertiaRelative).toBeLessThanOrEqual(1e-9);
          expect(gravityRelative).toBeLessThanOrEqual(1e-9);
          checked++;
        } finally {
          system.dispose();
        }
      }
    }
    measured.push(
      `${ref.label}: ${checked} poses, |ρᵀD′ρ − D|/|D| ≤ ${worstInertia.toExponential(2)}, |ρᵀg′ − τ_g|/|τ_g| ≤ ${worstGravity.toExponential(2)}, ` +
        `|Φ_q′ρ| rel ≤ ${worstConstraint.toExponential(2)}`,
    );
    expect(checked).toBeGreaterThanOrEqual(ref.architecture.workingModes.length);
  });
});

describe('prismatic units against MuJoCo: a lone slider', () => {
  it('a 2-PRR whose only mass is slider 1 on a rail tilted by gravity gives D₁₁ = m + armature (kg) and τ_g,1 = −m g·e_rail (N)', () => {
    const base = buildLeggedModel(
      '2-prr',
      2,
      [
        { actuator: 'prismatic', base: [0, 0], railAngle: 0, rod: 0.3 },
        { actuator: 'prismatic', base: [0, 0], railAngle: 0, rod: 0.3 },
      ],
      [-1, 1],
      { ...PRR2_INPUT, rods: [RIGID_MASSLESS, RIGID_MASSLESS], sliderMass: 0, endHubMass: 0, payloadMass: 0, drives: null, gravity: [3, -9.81] },
    );
    const model: LeggedModel = { ...base, proximalInertia: [1.7, 0], proximalFirstMoment: [1.7, 0], reflectedInertia: [0.4, 0] };
    const pose = new ArchitecturePose(2);
    expect(prr2.solvePose(model, pose, 0.02, 0.2)).toBe(PoseStatus.Assembled);
    prr2.poseDynamics(model, pose);
    const xml = `<mujoco><option gravity="3 0 -9.81"/><worldbody><body name="s" pos="0 0 0">
      <joint type="slide" axis="1 0 0" armature="0.4"/><inertial pos="0 0 0" mass="1.7" diaginertia="1e-6 1e-6 1e-6"/></body></worldbody></mujoco>`;
    const system = new MujocoSystem(mj, xml, 'slider.xml');
    try {
      system.placeAtRest([pose.q[0]!]);
      // MuJoCo slide joint: mass matrix m + armature, bias −m g_x (holding force), in kg and N.
      expect(Math.abs(system.denseMassMatrix()[0]! - pose.D[0]!)).toBeLessThan(1e-12);
      expect(Math.abs(system.biasForces()[0]! - pose.tauG[0]!)).toBeLessThan(1e-12);
      // derived: τ_g = −m γ·e_rail = −1.7 · 3 N.
      expect(Math.abs(pose.tauG[0]! - -1.7 * 3)).toBeLessThan(1e-12);
    } finally {
      system.dispose();
    }
  });
});
