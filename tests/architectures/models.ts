/**
 * Invented test designs for the architecture tests (SI units; not taken from any product), and small
 * helpers: a seeded random source and a search for well-conditioned poses in a working mode.
 */
import { prr2 } from '../../src/architectures/prr2.js';
import { prr3 } from '../../src/architectures/prr3.js';
import { rrr3 } from '../../src/architectures/rrr3.js';
import { rpr3 } from '../../src/architectures/rpr3.js';
import { PoseStatus, type LinkSection, type ModelInput, type PlanarArchitecture } from '../../src/architectures/types.js';
import type { LeggedModel } from '../../src/architectures/legged.js';

/** Aluminium-like tube: 1.1 kg/m, 70 GPa, 1.2e-4 m², 1.5e-9 m⁴ (invented values). */
export const TUBE: LinkSection = { massPerLength: 1.1, area: 1.2e-4, secondMoment: 1.5e-9, youngsModulus: 70e9 };
export const LIGHT_TUBE: LinkSection = { massPerLength: 0.7, area: 0.8e-4, secondMoment: 0.9e-9, youngsModulus: 70e9 };

export const PRR2_INPUT: ModelInput = {
  parameters: { rail_height: 0.05, rod_1: 0.35, rod_2: 0.3 },
  workingMode: '-+',
  assembly: 1,
  rods: [TUBE, LIGHT_TUBE],
  sliderMass: 0.8,
  endHubMass: 0.05,
  payloadMass: 0.4,
  gravity: [0, -9.81],
  drives: [
    { reflectedInertia: 1.5, jointStiffness: 2e6, peakEffort: 400, ratedEffort: 150, maxSpeed: 2, encoderStep: 1e-6 },
    { reflectedInertia: 1.2, jointStiffness: 1.5e6, peakEffort: 400, ratedEffort: 150, maxSpeed: 2, encoderStep: 1e-6 },
  ],
};

export const RRR3_INPUT: ModelInput = {
  parameters: {
    base_radius: 0.3, platform_radius: 0.08, platform_twist: 0.2,
    crank_1: 0.2, rod_1: 0.25, crank_2: 0.22, rod_2: 0.23, crank_3: 0.18, rod_3: 0.27,
  },
  workingMode: '+++',
  assembly: 1,
  cranks: [TUBE, TUBE, LIGHT_TUBE],
  rods: [LIGHT_TUBE, TUBE, LIGHT_TUBE],
  elbowHubMass: 0.1,
  platform: { mass: 0.6, inertiaAboutCentre: 0.0015 },
  payloadMass: 0.3,
  gravity: [0, -9.81],
  drives: [0, 1, 2].map(() => ({ reflectedInertia: 0.003, jointStiffness: 4e4, peakEffort: 20, ratedEffort: 8, maxSpeed: 6, encoderStep: 1e-4 })),
};

export const PRR3_INPUT: ModelInput = {
  parameters: { base_radius: 0.2, rail_angle: Math.PI / 2, platform_radius: 0.07, platform_twist: -0.15, rod_1: 0.25, rod_2: 0.22, rod_3: 0.28 },
  workingMode: '+++',
  assembly: 1,
  rods: [TUBE, LIGHT_TUBE, TUBE],
  sliderMass: 0.5,
  platform: { mass: 0.5, inertiaAboutCentre: 0.001 },
  payloadMass: 0.25,
  gravity: [0.5, -9.81],
  drives: [0, 1, 2].map(() => ({ reflectedInertia: 0.8, jointStiffness: 1e6, peakEffort: 300, ratedEffort: 100, maxSpeed: 1.5, encoderStep: 1e-6 })),
};

/** 3-RPR with strokes 0.12 m to 0.45 m (the retracted length is the housing and tube length). */
export const RPR3_INPUT: ModelInput = {
  parameters: { base_radius: 0.3, platform_radius: 0.08, platform_twist: 0.25 },
  workingMode: '+++',
  assembly: 1,
  jointLimits: [0, 1, 2].map(() => ({ min: 0.12, max: 0.45 })),
  rods: [TUBE, LIGHT_TUBE, TUBE],
  sliderMass: 0.6,
  platform: { mass: 0.55, inertiaAboutCentre: 0.0012 },
  payloadMass: 0.3,
  gravity: [0.8, -9.81],
  drives: [0, 1, 2].map(() => ({ reflectedInertia: 0.9, jointStiffness: 1.2e6, peakEffort: 300, ratedEffort: 100, maxSpeed: 1, encoderStep: 1e-6 })),
};

export interface ArchitectureCase {
  readonly label: string;
  readonly architecture: PlanarArchitecture<LeggedModel>;
  readonly input: ModelInput;
  /** Search box for poses: centre ± half-size (m), φ ± half-range (rad). */
  readonly box: { readonly x: number; readonly y: number; readonly half: number; readonly phiHalf: number };
}

export const CASES: readonly ArchitectureCase[] = [
  { label: '2-PRR', architecture: prr2, input: PRR2_INPUT, box: { x: 0, y: 0.05, half: 0.3, phiHalf: 0 } },
  { label: '3-RRR', architecture: rrr3, input: RRR3_INPUT, box: { x: 0, y: 0, half: 0.25, phiHalf: 0.6 } },
  { label: '3-PRR', architecture: prr3, input: PRR3_INPUT, box: { x: 0, y: 0, half: 0.25, phiHalf: 0.6 } },
  { label: '3-RPR', architecture: rpr3, input: RPR3_INPUT, box: { x: 0, y: 0, half: 0.2, phiHalf: 0.6 } },
];

/** Deterministic random numbers in [0, 1) (mulberry32). */
export function seededRandom(seed: number): () => number {
  let a = seed >>> 0;
  return () => {
    a = (a + 0x6d2b79f5) >>> 0;
    let t = a;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
}

export interface FoundPose {
  readonly x: number;
  readonly y: number;
  readonly phi: number;
  /** sign det A at this pose. */
  readonly assembly: 1 | -1;
}

/**
 * Up to `count` poses of the case's box where every leg reaches in the model's working mode, each
 * |s_i| ≥ 0.25 and |mechanism sine| ≥ 0.15 (far from both singularity kinds), either assembly sign.
 */
export function findPoses(c: ArchitectureCase, model: LeggedModel, count: number, seed: number): FoundPose[] {
  const rng = seededRandom(seed);
  const pose = c.architecture.createPose();
  const out: FoundPose[] = [];
  for (let attempt = 0; attempt < 20000 && out.length < count; attempt++) {
    const x = c.box.x + (2 * rng() - 1) * c.box.half;
    const y = c.box.y + (2 * rng() - 1) * c.box.half;
    const phi = (2 * rng() - 1) * c.box.phiHalf;
    const status = c.architecture.solvePose(model, pose, x, y, phi);
    if (status === PoseStatus.Unreachable || status === PoseStatus.OutsideJointLimits) continue;
    let ok = Math.abs(pose.mechanismSine) >= 0.15;
    for (let i = 0; i < model.dof; i++) if (Math.abs(pose.legSine[i]!) < 0.25) ok = false;
    if (ok) out.push({ x, y, phi, assembly: pose.detA > 0 ? 1 : -1 });
  }
  return out;
}

/** The case's input with another working mode and assembly sign. */
export function withMode(input: ModelInput, workingMode: string, assembly: 1 | -1 = input.assembly): ModelInput {
  return { ...input, workingMode, assembly };
}
