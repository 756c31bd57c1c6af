/**
 * Reference check of the five-bar reduced dynamics (the closed forms of tests/helpers/fiveBarClosedForm.ts) against MuJoCo.
 *
 * Sources:
 * - Reduced model of a closed chain: Ghorbel, Chételat, Gunawardana & Longchamp, "Modeling and set
 *   point control of closed-chain mechanisms: theory and experiment", IEEE Trans. Control Systems
 *   Technology 8(5), 2000, pp. 801–815. Cut the loop to get an open "free" system with coordinates
 *   q′; with ρ = ∂q′/∂θ the actuated-space inertia and gravity are D = ρᵀ D′ ρ and g = ρᵀ g′.
 * - MuJoCo, a general-purpose multibody physics engine (WebAssembly build, npm mujoco-js@0.0.7,
 *   Apache-2.0). It supplies D′ (mj_fullM) and g′ (qfrc_bias at rest) of the free system.
 *
 * The free system: the five-bar cut at the end point P into two open serial 2R arms, built in the
 * MuJoCo x–z plane (engine y ↦ MuJoCo z, gravity (g_x, g_y) ↦ (g_x, 0, g_y)). Hinge axes are −y: a
 * rotation about −y by a positive angle turns +x toward +z, the engine's counter-clockwise sense.
 * MuJoCo hinges are relative, so q′ = (θ_1, β_1 − θ_1, θ_2, β_2 − θ_2) with β_i the absolute rod angle.
 * The payload is a point mass on the tip of rod 1: its velocity there is Ṗ = J θ̇, the same as a
 * point mass riding on P, so the reduced D and g are the same.
 *
 * Each body is assembled from its parts (uniform bars, point masses) on the MuJoCo side; the engine
 * model gets the lumped fields its interface asks for, computed from the same parts by the
 * parallel-axis theorem. MuJoCo does its own composition of the parts.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import {
  FiveBarPose,
  PoseStatus,
  poseDynamics,
  solvePose,
  type FiveBarModel,
  type WorkingMode,
} from '../helpers/fiveBarClosedForm.js';
import { loadMujoco, MujocoSystem, type MujocoModule } from '../helpers/mujoco.js';

/** Physical parts of one leg, SI. */
interface LegParts {
  /** Actuated pivot A_i, m. */
  readonly pivot: readonly [number, number];
  /** Crank length p_i and rod length d_i, m. */
  readonly crankLength: number;
  readonly rodLength: number;
  /** Crank: uniform bar, kg. */
  readonly crankBarMass: number;
  /** Elbow hub carried by the crank: point mass at the elbow, kg. */
  readonly elbowHubMass: number;
  /** Rod: uniform tube plus a fitting (point mass) at its elbow end, kg. */
  readonly rodTubeMass: number;
  readonly rodFittingMass: number;
  /** Drive inertia reflected to the crank joint (MuJoCo: joint armature), kg·m². */
  readonly reflectedInertia: number;
}

/**
 * Asymmetric design: different cranks, rods and masses per leg, pivots at different heights.
 * Fitting mass = 3/7 of the tube mass puts each rod's centre of mass at 0.35 d from the elbow
 * (derived: (m_t d/2)/(m_t + 3 m_t/7) = 0.35 d).
 */
const LEG_1: LegParts = {
  pivot: [-0.12, 0.0],
  crankLength: 0.2,
  rodLength: 0.28,
  crankBarMass: 0.45,
  elbowHubMass: 0.12,
  rodTubeMass: 0.28,
  rodFittingMass: 0.12,
  reflectedInertia: 0.004,
};
const LEG_2: LegParts = {
  pivot: [0.1, 0.05],
  crankLength: 0.16,
  rodLength: 0.32,
  crankBarMass: 0.38,
  elbowHubMass: 0.09,
  rodTubeMass: 0.35,
  rodFittingMass: 0.15,
  reflectedInertia: 0.0025,
};
/** Payload point mass at P, kg. */
const PAYLOAD_MASS = 0.6;
/** Gravity in the plane of motion (vertical plane, y up), m/s². */
const GRAVITY: readonly [number, number] = [0, -9.81];

/** Lumped crank fields (derived, parallel-axis theorem): I_A = m_bar p²/3 + m_hub p², S = m_bar p/2 + m_hub p. */
function crankInertiaAboutPivot(leg: LegParts): number {
  const p = leg.crankLength;
  return (leg.crankBarMass * p * p) / 3 + leg.elbowHubMass * p * p;
}
function crankFirstMoment(leg: LegParts): number {
  const p = leg.crankLength;
  return (leg.crankBarMass * p) / 2 + leg.elbowHubMass * p;
}
/** Rod mass, centre-of-mass distance from the elbow, and inertia about the centre of mass (derived). */
function rodMass(leg: LegParts): number {
  return leg.rodTubeMass + leg.rodFittingMass;
}
function rodComDistance(leg: LegParts): number {
  return (leg.rodTubeMass * leg.rodLength) / 2 / rodMass(leg);
}
function rodInertiaAboutCom(leg: LegParts): number {
  const d = leg.rodLength;
  const b = rodComDistance(leg);
  const offsetTube = d / 2 - b;
  return (leg.rodTubeMass * d * d) / 12 + leg.rodTubeMass * offsetTube * offsetTube + leg.rodFittingMass * b * b;
}

function fiveBarModel(sigma: readonly [number, number], assembly: 1 | -1): FiveBarModel {
  return {
    pivotX: [LEG_1.pivot[0], LEG_2.pivot[0]],
    pivotY: [LEG_1.pivot[1], LEG_2.pivot[1]],
    crank: [LEG_1.crankLength, LEG_2.crankLength],
    rod: [LEG_1.rodLength, LEG_2.rodLength],
    sigma,
    assembly,
    jointLimits: [null, null],
    crankInertiaAboutPivot: [crankInertiaAboutPivot(LEG_1), crankInertiaAboutPivot(LEG_2)],
    crankFirstMoment: [crankFirstMoment(LEG_1), crankFirstMoment(LEG_2)],
    rodMass: [rodMass(LEG_1), rodMass(LEG_2)],
    rodComDistance: [rodComDistance(LEG_1), rodComDistance(LEG_2)],
    rodInertiaAboutCom: [rodInertiaAboutCom(LEG_1), rodInertiaAboutCom(LEG_2)],
    endMass: PAYLOAD_MASS,
    reflectedInertia: [LEG_1.reflectedInertia, LEG_2.reflectedInertia],
    gravity: GRAVITY,
    // Stiffness does not enter D or τ_g; plausible finite compliances keep the rest of poseDynamics finite.
    complianceBending: [2e-6, 3e-6],
    complianceCrankAxial: [1e-8, 1e-8],
    complianceRodAxial: [2e-8, 2e-8],
  };
}

/**
 * Slender uniform bar along the body x axis, inertia about its centre (axial, m L²/12, m L²/12).
 * Only the y component enters motion about the −y hinges; the axial component is set to a small
 * positive value because MuJoCo rejects a singular inertia on a moving body.
 */
function slenderBarInertial(mass: number, length: number): string {
  const transverse = (mass * length * length) / 12;
  const axial = transverse * 1e-3;
  return `<inertial pos="${length / 2} 0 0" mass="${mass}" diaginertia="${axial} ${transverse} ${transverse}"/>`;
}
function pointMassBody(name: string, x: number, mass: number): string {
  return `<body name="${name}" pos="${x} 0 0"><inertial pos="0 0 0" mass="${mass}" diaginertia="0 0 0"/></body>`;
}

/** One open 2R arm: crank hinge θ_i, rod hinge β_i − θ_i (relative), tip site at the rod end. */
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

function freeSystemMjcf(): string {
  return `<mujoco model="five-bar free system">
  <compiler angle="radian" inertiafromgeom="false"/>
  <option gravity="${GRAVITY[0]} 0 ${GRAVITY[1]}"/>
  <worldbody>${armMjcf(1, LEG_1, PAYLOAD_MASS)}${armMjcf(2, LEG_2, 0)}
  </worldbody>
</mujoco>`;
}

const SIGMA_OF: Record<WorkingMode, readonly [number, number]> = {
  '++': [1, 1],
  '+-': [1, -1],
  '-+': [-1, 1],
  '--': [-1, -1],
};

interface PoseCase {
  readonly mode: WorkingMode;
  readonly assembly: 1 | -1;
  /** End point P, m. */
  readonly x: number;
  readonly y: number;
}

/** Every working mode; assembly "+" where the mode has room for it, "−" as well for coverage. */
const POSES: readonly PoseCase[] = [
  { mode: '+-', assembly: 1, x: 0.0, y: 0.3 },
  { mode: '+-', assembly: 1, x: -0.2, y: 0.2 },
  { mode: '+-', assembly: 1, x: 0.15, y: 0.35 },
  { mode: '+-', assembly: 1, x: 0.2, y: -0.2 },
  { mode: '++', assembly: 1, x: -0.1, y: 0.4 },
  { mode: '++', assembly: 1, x: 0.15, y: 0.25 },
  { mode: '--', assembly: 1, x: 0.05, y: 0.35 },
  { mode: '--', assembly: 1, x: -0.15, y: 0.2 },
  { mode: '-+', assembly: 1, x: -0.05, y: 0.15 },
  { mode: '-+', assembly: -1, x: 0.1, y: 0.3 },
  { mode: '-+', assembly: -1, x: 0.0, y: -0.3 },
  { mode: '++', assembly: -1, x: 0.1, y: -0.25 },
];

/** Number of free coordinates q′ = (θ_1, β_1 − θ_1, θ_2, β_2 − θ_2). */
const FREE_DOF = 4;

/**
 * ρ = ∂q′/∂θ (4 × 2, row-major) from the engine's rod-rate rows w_i (β̇_i = w_i · θ̇):
 * rows (1, 0), w_1 − (1, 0), (0, 1), w_2 − (0, 1)   (derived: q′_2 = β_1 − θ_1, q′_4 = β_2 − θ_2).
 */
function reductionMatrix(pose: FiveBarPose): Float64Array {
  return Float64Array.from([
    1, 0,
    pose.rodRate11 - 1, pose.rodRate12,
    0, 1,
    pose.rodRate21, pose.rodRate22 - 1,
  ]);
}

/** ρᵀ M ρ for M (n × n) and ρ (n × 2), returned as [a11, a12, a21, a22]. */
function reduceMatrix(fullMatrix: Float64Array, rho: Float64Array, n: number): [number, number, number, number] {
  const out: [number, number, number, number] = [0, 0, 0, 0];
  for (let a = 0; a < 2; a++) {
    for (let b = 0; b < 2; b++) {
      let sum = 0;
      for (let i = 0; i < n; i++) {
        for (let j = 0; j < n; j++) sum += rho[2 * i + a]! * fullMatrix[n * i + j]! * rho[2 * j + b]!;
      }
      out[2 * a + b] = sum;
    }
  }
  return out;
}

/** ρᵀ v for v (n) and ρ (n × 2). */
function reduceVector(vector: Float64Array, rho: Float64Array, n: number): [number, number] {
  let first = 0;
  let second = 0;
  for (let i = 0; i < n; i++) {
    first += rho[2 * i]! * vector[i]!;
    second += rho[2 * i + 1]! * vector[i]!;
  }
  return [first, second];
}

function norm(values: readonly number[]): number {
  let sum = 0;
  for (const v of values) sum += v * v;
  return Math.sqrt(sum);
}

interface MeasuredErrors {
  readonly label: string;
  readonly inertiaRelative: number;
  readonly gravityRelative: number;
  readonly constraintRelative: number;
}

describe('five-bar reduced dynamics against MuJoCo (free system reduced with ρ)', () => {
  let mj: MujocoModule;
  let freeSystem: MujocoSystem;
  const measured: MeasuredErrors[] = [];

  beforeAll(async () => {
    mj = await loadMujoco();
    freeSystem = new MujocoSystem(mj, freeSystemMjcf(), 'five-bar-free.xml');
  });

  afterAll(() => {
    freeSystem?.dispose();
    for (const m of measured) {
      console.info(
        `${m.label}: |ρᵀD′ρ − D|/|D| = ${m.inertiaRelative.toExponential(2)}, ` +
          `|ρᵀg′ − τ_g|/|τ_g| = ${m.gravityRelative.toExponential(2)}, ` +
          `|Φ_q′ ρ|/(|Φ_q′||ρ|) = ${m.constraintRelative.toExponential(2)}`,
      );
    }
  });

  it('builds the free system with four hinges', () => {
    expect(freeSystem.degreesOfFreedom).toBe(FREE_DOF);
  });

  it.each(POSES)('mode $mode, assembly $assembly, P = ($x, $y)', (poseCase) => {
    const model = fiveBarModel(SIGMA_OF[poseCase.mode], poseCase.assembly);
    const pose = new FiveBarPose();
    expect(solvePose(model, pose, poseCase.x, poseCase.y)).toBe(PoseStatus.Assembled);
    poseDynamics(model, pose);

    const beta1 = Math.atan2(pose.u1y, pose.u1x);
    const beta2 = Math.atan2(pose.u2y, pose.u2x);
    freeSystem.placeAtRest([pose.theta1, beta1 - pose.theta1, pose.theta2, beta2 - pose.theta2]);

    // Both cut ends sit on P: checks the angle convention (axis −y, x–z plane) — derived.
    const tip1 = freeSystem.sitePosition('tip1');
    const tip2 = freeSystem.sitePosition('tip2');
    for (const tip of [tip1, tip2]) {
      expect(Math.abs(tip[0] - poseCase.x)).toBeLessThan(1e-12);
      expect(Math.abs(tip[1])).toBeLessThan(1e-12);
      expect(Math.abs(tip[2] - poseCase.y)).toBeLessThan(1e-12);
    }

    // ρ must satisfy the loop-closure velocity constraint Φ_q′ ρ = 0, Φ = tip1 − tip2 (x and z rows),
    // with Φ_q′ from MuJoCo's site Jacobians (Ghorbel et al. 2000: ρ spans the constraint null space
    // with identity active rows, which fixes it uniquely away from singularities). This makes the
    // engine's rod rates, used for ρ below, an independently checked input rather than an assumption.
    const rho = reductionMatrix(pose);
    const jacobianTip1 = freeSystem.siteTranslationJacobian('tip1');
    const jacobianTip2 = freeSystem.siteTranslationJacobian('tip2');
    const constraintResidual: number[] = [];
    const constraintEntries: number[] = [];
    for (const row of [0, 2]) {
      for (let col = 0; col < 2; col++) {
        let residual = 0;
        for (let k = 0; k < FREE_DOF; k++) {
          residual += (jacobianTip1[FREE_DOF * row + k]! - jacobianTip2[FREE_DOF * row + k]!) * rho[2 * k + col]!;
        }
        constraintResidual.push(residual);
      }
      for (let k = 0; k < FREE_DOF; k++) constraintEntries.push(jacobianTip1[FREE_DOF * row + k]! - jacobianTip2[FREE_DOF * row + k]!);
    }
    const constraintRelative = norm(constraintResidual) / (norm(constraintEntries) * norm(Array.from(rho)));
    expect(constraintRelative).toBeLessThan(1e-12);

    // The tip of arm 1 moves with Ṗ = J θ̇ once reduced (derived: P is that tip).
    const tipVelocity = [0, 0, 0, 0];
    for (let r = 0; r < 2; r++) {
      const row = r === 0 ? 0 : 2;
      for (let col = 0; col < 2; col++) {
        let sum = 0;
        for (let k = 0; k < FREE_DOF; k++) sum += jacobianTip1[FREE_DOF * row + k]! * rho[2 * k + col]!;
        tipVelocity[2 * r + col] = sum;
      }
    }
    const engineJacobian = [pose.j11, pose.j12, pose.j21, pose.j22];
    const jacobianError = norm(tipVelocity.map((v, i) => v - engineJacobian[i]!)) / norm(engineJacobian);
    expect(jacobianError).toBeLessThan(1e-12);

    // D = ρᵀ D′ ρ and g = ρᵀ g′ (Ghorbel et al. 2000, reduced model; D′ from mj_fullM, g′ = qfrc_bias
    // at rest, MuJoCo). Sign: MuJoCo's equation of motion is M q̈ + qfrc_bias = τ, so at rest qfrc_bias
    // is the torque that holds the system against gravity — the same sense as the engine's τ_g
    // (holding torque), verified below on the single bar: τ_g = +ρᵀ g′, no sign flip.
    const reducedInertia = reduceMatrix(freeSystem.denseMassMatrix(), rho, FREE_DOF);
    const reducedGravity = reduceVector(freeSystem.biasForces(), rho, FREE_DOF);
    const engineInertia = [pose.d11, pose.d12, pose.d12, pose.d22];
    const inertiaRelative =
      norm(reducedInertia.map((v, i) => v - engineInertia[i]!)) / norm(engineInertia);
    const engineGravity = [pose.tauG1, pose.tauG2];
    const gravityRelative =
      norm(reducedGravity.map((v, i) => v - engineGravity[i]!)) / norm(engineGravity);
    measured.push({
      label: `${poseCase.mode}/${poseCase.assembly > 0 ? '+' : '-'} P=(${poseCase.x}, ${poseCase.y})`,
      inertiaRelative,
      gravityRelative,
      constraintRelative,
    });
    expect(inertiaRelative).toBeLessThanOrEqual(1e-9);
    expect(gravityRelative).toBeLessThanOrEqual(1e-9);
  });
});

describe('uniform bar about one end (hand values)', () => {
  const barMass = 1.3; // kg
  const barLength = 0.42; // m
  const g = 9.81; // m/s²
  let mj: MujocoModule;
  let bar: MujocoSystem;

  beforeAll(async () => {
    mj = await loadMujoco();
    const xml = `<mujoco model="uniform bar">
  <compiler angle="radian" inertiafromgeom="false"/>
  <option gravity="0 0 ${-g}"/>
  <worldbody>
    <body name="bar">
      <joint name="hinge" type="hinge" axis="0 -1 0"/>
      ${slenderBarInertial(barMass, barLength)}
    </body>
  </worldbody>
</mujoco>`;
    bar = new MujocoSystem(mj, xml, 'uniform-bar.xml');
  });

  afterAll(() => bar?.dispose());

  it.each([0.3, 1.1, 2.4, -0.8])('MuJoCo bar at θ = %f rad: I = m L²/3, holding torque m g (L/2) cos θ', (theta) => {
    bar.placeAtRest([theta]);
    // Uniform bar about one end: I = m L²/3 (Meriam & Kraige, Engineering Mechanics: Dynamics,
    // mass moments of inertia table; from memory). MuJoCo gets it from m L²/12 at the centre.
    const inertiaAboutEnd = (barMass * barLength * barLength) / 3;
    expect(Math.abs(bar.denseMassMatrix()[0]! - inertiaAboutEnd) / inertiaAboutEnd).toBeLessThan(1e-12);
    // Holding torque of a bar pivoted at one end, angle from the horizontal: m g (L/2) cos θ
    // (statics of a uniform bar, same text; from memory). Positive at θ = 0.3: qfrc_bias is the
    // holding torque, counter-clockwise under the −y hinge axis.
    const holdingTorque = barMass * g * (barLength / 2) * Math.cos(theta);
    expect(Math.abs(bar.biasForces()[0]! - holdingTorque)).toBeLessThan(1e-12 * barMass * g * barLength);
  });

  it('engine: a five-bar whose only mass is crank 1 as a uniform bar gives m L²/3 and m g (L/2) cos θ_1', () => {
    const base = fiveBarModel([1, -1], 1);
    // The bar is crank 1 itself, so its length is the crank length (the geometry stays assembled).
    const crankLength = base.crank[0];
    const model: FiveBarModel = {
      ...base,
      crankInertiaAboutPivot: [(barMass * crankLength * crankLength) / 3, 0],
      crankFirstMoment: [(barMass * crankLength) / 2, 0],
      rodMass: [0, 0],
      rodInertiaAboutCom: [0, 0],
      endMass: 0,
      reflectedInertia: [0, 0],
      gravity: [0, -g],
    };
    const pose = new FiveBarPose();
    let checked = 0;
    for (const [x, y] of [[0.0, 0.3], [-0.2, 0.2], [0.2, -0.2]] as const) {
      expect(solvePose(model, pose, x, y)).toBe(PoseStatus.Assembled);
      poseDynamics(model, pose);
      const inertiaAboutEnd = (barMass * crankLength * crankLength) / 3;
      const holdingTorque = barMass * g * (crankLength / 2) * Math.cos(pose.theta1);
      // Meriam & Kraige as above (from memory); nothing else in the model has mass.
      expect(Math.abs(pose.d11 - inertiaAboutEnd) / inertiaAboutEnd).toBeLessThan(1e-12);
      expect(Math.abs(pose.d12)).toBe(0);
      expect(Math.abs(pose.tauG1 - holdingTorque)).toBeLessThan(1e-12 * barMass * g * crankLength);
      expect(Math.abs(pose.tauG2)).toBe(0);
      checked++;
    }
    expect(checked).toBe(3);
  });
});
