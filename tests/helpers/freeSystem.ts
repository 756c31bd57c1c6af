/**
 * The cut-open ("free") system of a leg-based model as MJCF for MuJoCo, with its coordinates and the
 * map ρ = ∂q′/∂q (Ghorbel, Chételat, Gunawardana & Longchamp, "Modeling and set point control of
 * closed-chain mechanisms: theory and experiment", IEEE Trans. Control Systems Technology 8(5), 2000).
 * The same construction as tests/architectures/reference-mujoco.test.ts, extended with rates and
 * accelerations for the duty-cycle check: bodies from invented parts (uniform bars, point masses),
 * MuJoCo x–z plane (y ↦ z), hinge axes −y.
 *
 * Free system: every rod cut at its distal pin except leg 1's, which keeps the platform (3-DOF: a
 * hinge φ − β_1 at the tip of rod 1) or the end-point masses (2-DOF: point masses at the tip).
 * Leg i revolute: crank hinge θ_i, rod hinge β_i − θ_i; prismatic: slide q_i, rod hinge β_i;
 * strut (3-RPR): housing hinge β_i at the base pivot, then the tube's slide q_i (the strut length) along
 * the housing, the tube's frame at its distal pin (so the order is β_i, q_i). Strut parts: the housing a
 * uniform bar (`sliderMass`, length h = the model's retracted length) from the pivot, the tube a uniform
 * bar (`rodTubeMass`, length h) running back from the pin with the fitting mass at its inner end.
 */
import type { LeggedModel } from '../../src/architectures/legged.js';

/** Physical parts of one leg (invented values), SI. */
export interface LegParts {
  readonly crankBarMass: number;
  readonly elbowHubMass: number;
  readonly sliderMass: number;
  readonly rodTubeMass: number;
  /** Point mass at the rod's proximal end: moves the rod's centre of mass off its middle. */
  readonly rodFittingMass: number;
  /** Drive inertia at the joint (MuJoCo: armature), kg·m² or kg. */
  readonly reflectedInertia: number;
}

export const PARTS: readonly LegParts[] = [
  { crankBarMass: 0.45, elbowHubMass: 0.12, sliderMass: 0.9, rodTubeMass: 0.28, rodFittingMass: 0.12, reflectedInertia: 0.004 },
  { crankBarMass: 0.38, elbowHubMass: 0.09, sliderMass: 0.7, rodTubeMass: 0.35, rodFittingMass: 0.15, reflectedInertia: 0.0025 },
  { crankBarMass: 0.41, elbowHubMass: 0.11, sliderMass: 0.8, rodTubeMass: 0.3, rodFittingMass: 0.05, reflectedInertia: 0.003 },
];
export const PLATFORM_MASS = 0.55;
export const PLATFORM_INERTIA = 0.0021;
export const PAYLOAD_MASS = 0.35;
export const GRAVITY: readonly [number, number] = [1.2, -9.81];

const isStrut = (model: LeggedModel, i: number): boolean => model.legs[i]!.name === 'strut';

/** Engine model with the lumped fields of the parts (parallel-axis theorem, derived). */
export function modelFromParts(base: LeggedModel): LeggedModel {
  const n = base.dof;
  const pick = <T>(f: (parts: LegParts, i: number) => T): T[] => Array.from({ length: n }, (_, i) => f(PARTS[i]!, i));
  // Strut tube: the fitting sits at the inner end, h from the pin; the centre of mass is measured from the pin (as rodComDistance of a strut).
  const tubeCom = (parts: LegParts, h: number): number => (parts.rodTubeMass * h / 2 + parts.rodFittingMass * h) / (parts.rodTubeMass + parts.rodFittingMass);
  return {
    ...base,
    proximalMass: pick((parts, i) => (isStrut(base, i) ? parts.sliderMass : base.proximalMass[i]!)),
    proximalInertia: pick((parts, i) =>
      isStrut(base, i) ? (parts.sliderMass * base.rod[i]! ** 2) / 3
        : base.actuators[i] === 'revolute' ? (parts.crankBarMass * base.crank[i]! ** 2) / 3 + parts.elbowHubMass * base.crank[i]! ** 2 : parts.sliderMass),
    proximalFirstMoment: pick((parts, i) =>
      isStrut(base, i) ? (parts.sliderMass * base.rod[i]!) / 2
        : base.actuators[i] === 'revolute' ? (parts.crankBarMass * base.crank[i]!) / 2 + parts.elbowHubMass * base.crank[i]! : parts.sliderMass),
    rodMass: pick((parts) => parts.rodTubeMass + parts.rodFittingMass),
    rodComDistance: pick((parts, i) => (isStrut(base, i) ? tubeCom(parts, base.rod[i]!) : (parts.rodTubeMass * base.rod[i]!) / 2 / (parts.rodTubeMass + parts.rodFittingMass))),
    rodInertiaAboutCom: pick((parts, i) => {
      if (isStrut(base, i)) {
        const h = base.rod[i]!;
        const c = tubeCom(parts, h);
        return (parts.rodTubeMass * h * h) / 12 + parts.rodTubeMass * (h / 2 - c) ** 2 + parts.rodFittingMass * (h - c) ** 2;
      }
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

/** Uniform bar along x, its centre at `centre` (default: from the frame origin to +length). */
function slenderBar(mass: number, length: number, centre = length / 2): string {
  const transverse = (mass * length * length) / 12;
  return `<inertial pos="${centre} 0 0" mass="${mass}" diaginertia="${transverse * 1e-3} ${transverse} ${transverse}"/>`;
}
function pointMass(name: string, x: number, z: number, mass: number): string {
  return `<body name="${name}" pos="${x} 0 ${z}"><inertial pos="0 0 0" mass="${mass}" diaginertia="0 0 0"/></body>`;
}

/** MJCF of the free system of a legged model (modelFromParts). */
export function freeSystemMjcf(model: LeggedModel): string {
  const n = model.dof;
  const legs: string[] = [];
  for (let i = 0; i < n; i++) {
    const parts = PARTS[i]!;
    const d = model.rod[i]!;
    let tipContent = '';
    if (i === 0) {
      if (n === 3) {
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
    if (isStrut(model, i)) {
      const h = model.rod[i]!;
      const tube = `<body name="tube${i + 1}" pos="0 0 0">
        <joint name="q${i + 1}" type="slide" axis="1 0 0" armature="${parts.reflectedInertia}"/>
        ${slenderBar(parts.rodTubeMass, h, -h / 2)}
        ${pointMass(`fitting${i + 1}`, -h, 0, parts.rodFittingMass)}
        <site name="tip${i + 1}" pos="0 0 0"/>
        ${tipContent.replace(`pos="${d} 0 0"`, 'pos="0 0 0"')}
      </body>`;
      legs.push(`<body name="housing${i + 1}" pos="${model.baseX[i]} 0 ${model.baseY[i]}">
      <joint name="beta${i + 1}" type="hinge" axis="0 -1 0"/>
      ${slenderBar(parts.sliderMass, h)}
      ${tube}
    </body>`);
    } else if (model.actuators[i] === 'revolute') {
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

/** What the free state is built from: the engine's pose and motion at one instant. */
export interface InstantState {
  readonly q: ArrayLike<number>;
  readonly rodAngle: ArrayLike<number>;
  readonly phi: number;
  readonly qd: ArrayLike<number>;
  readonly rodRate: ArrayLike<number>;
  readonly phiRate: number;
  readonly qdd: ArrayLike<number>;
  readonly rodAccel: ArrayLike<number>;
  readonly phiAccel: number;
  /** ρ rows for the rod angles: β̇ = W q̇ (n × n row-major) and for φ (n entries). */
  readonly rodRows: ArrayLike<number>;
  readonly phiRow: ArrayLike<number>;
}

/** Free positions, rates, accelerations and ρ (rows per free coordinate) in MuJoCo's qpos order (derived). */
export function freeState(model: LeggedModel, s: InstantState): { qpos: number[]; qvel: number[]; qacc: number[]; rho: number[][] } {
  const n = model.dof;
  const qpos: number[] = [];
  const qvel: number[] = [];
  const qacc: number[] = [];
  const rho: number[][] = [];
  const unit = (i: number): number[] => Array.from({ length: n }, (_, k) => (k === i ? 1 : 0));
  const rodRow = (i: number): number[] => Array.from({ length: n }, (_, k) => s.rodRows[i * n + k]!);
  for (let i = 0; i < n; i++) {
    if (isStrut(model, i)) {
      // Housing hinge β_i first, then the slide q_i (tree order).
      qpos.push(s.rodAngle[i]!, s.q[i]!); qvel.push(s.rodRate[i]!, s.qd[i]!); qacc.push(s.rodAccel[i]!, s.qdd[i]!);
      rho.push(rodRow(i), unit(i));
    } else if (model.actuators[i] === 'revolute') {
      qpos.push(s.q[i]!); qvel.push(s.qd[i]!); qacc.push(s.qdd[i]!);
      rho.push(unit(i));
      // hinge = β_i − θ_i, rate W_i − e_i.
      qpos.push(s.rodAngle[i]! - s.q[i]!); qvel.push(s.rodRate[i]! - s.qd[i]!); qacc.push(s.rodAccel[i]! - s.qdd[i]!);
      rho.push(rodRow(i).map((v, k) => v - (k === i ? 1 : 0)));
    } else {
      qpos.push(s.q[i]!); qvel.push(s.qd[i]!); qacc.push(s.qdd[i]!);
      rho.push(unit(i));
      qpos.push(s.rodAngle[i]!); qvel.push(s.rodRate[i]!); qacc.push(s.rodAccel[i]!);
      rho.push(rodRow(i));
    }
    if (i === 0 && n === 3) {
      // hinge = φ − β_1, rate J_φ − W_1.
      qpos.push(s.phi - s.rodAngle[0]!); qvel.push(s.phiRate - s.rodRate[0]!); qacc.push(s.phiAccel - s.rodAccel[0]!);
      rho.push(Array.from({ length: n }, (_, k) => s.phiRow[k]! - s.rodRows[k]!));
    }
  }
  return { qpos, qvel, qacc, rho };
}
