/**
 * What a study says about the built arm (docs/accuracy.md): manufacturing tolerances, real joints
 * (bearings, gearbox and servo stiffness), strength data and a list of tube sections the optimizer
 * may choose from. SI units throughout. Parsed by src/study/accuracySection.ts; absent sections
 * leave every earlier result unchanged.
 */
import type { SectionProperties } from './sections.js';

/**
 * Tolerances and play. Dimensional tolerances (lengths, positions) are ± limits taken as 3σ of a
 * normal distribution (common practice, no source); clearance, backlash and encoder quantisation are
 * uniform over their play (see docs/accuracy.md for the exact distributions).
 */
export interface ToleranceSpec {
  /** ± tolerance on every link length between pin centres (cranks, rods), m. */
  readonly linkLength: number;
  /** Radius of the position zone of every base pivot, rail origin and platform pin, m. */
  readonly pivotPosition: number;
  /** Radial clearance of every pin joint (pin radius to bore radius), m. */
  readonly jointClearance: number;
  /** Total backlash (play) of each drive at its joint: rad for cranks, m for sliders and struts. */
  readonly backlash: readonly number[];
  /** Include ± half an encoder count of each drive (needs drives with encoder counts). */
  readonly encoder: boolean;
  /** Coverage factor k of the statistical figures (position_error_rss = k σ along the worst direction). */
  readonly coverage: number;
}

/** Stiffness of the real joints. Absent values leave the earlier model as it was. */
export interface JointStiffnessSpec {
  /** Radial stiffness of the bearing of every passive pin joint, N/m (Infinity = rigid). */
  readonly bearingRadialStiffness: number;
  /** Gearbox torsional stiffness at its output, N·m/rad (rotary drives; null = use the drive's joint stiffness). */
  readonly gearboxStiffness: number | null;
  /** Servo (position loop) stiffness at the motor shaft, N·m/rad (null = use the drive's joint stiffness). */
  readonly servoStiffness: number | null;
}

/** Strength data: yield strength of the link material, the study's factor, a design load at P. */
export interface StrengthSpec {
  /** Yield strength of the link material, Pa (null: no automatic stress constraint). */
  readonly yieldStrength: number | null;
  /** Factor on yield: the automatic constraint is peak_link_stress ≤ yield / factor. */
  readonly safetyFactor: number;
  /** Required Euler factor: the automatic constraint is buckling_margin ≥ this (with a yield strength given). */
  readonly bucklingFactor: number;
  /** Force at P in any in-plane direction on top of the payload's weight, N. */
  readonly endLoad: number;
  /** Poisson's ratio of the link material (shear modulus G = E / (2 (1 + ν))). */
  readonly poissonRatio: number;
}

/** One tube of the section list: its properties plus what the mass and stiffness models need. */
export interface TubeOption {
  readonly label: string;
  readonly section: SectionProperties;
  /** kg/m */
  readonly massPerLength: number;
  /** Pa */
  readonly youngsModulus: number;
}

/** Link sections chosen by the optimizer from a list of tubes (a categorical design variable). */
export interface SectionChoiceSpec {
  /** Which links take the chosen tube. */
  readonly appliesTo: 'rods' | 'cranks' | 'links';
  readonly options: readonly TubeOption[];
}

export interface AccuracySpec {
  readonly tolerances: ToleranceSpec | null;
  readonly joints: JointStiffnessSpec | null;
  readonly strength: StrengthSpec | null;
  /** Full section properties per leg where the study gives a section shape (null: not known). */
  readonly crankSections: readonly (SectionProperties | null)[];
  readonly rodSections: readonly (SectionProperties | null)[];
  readonly sectionChoice: SectionChoiceSpec | null;
}
