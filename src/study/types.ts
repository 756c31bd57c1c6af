/**
 * A study after parsing and validation: typed, every quantity in SI units.
 */
import type { AssemblyMode, JointRange } from '../core/pose.js';
import type { CyclePath, JointFriction } from '../core/cycle.js';
import { ARCHITECTURES, ARCHITECTURE_NAMES, type ArchitectureName } from '../architectures/index.js';
import type { DriveAtJoint } from '../architectures/types.js';
import type { CellSpec } from '../cell/types.js';
import type { AccuracySpec } from '../accuracy/spec.js';
import type { DriveTrain, GearboxSpec, LinearStageSpec, MotorSpec } from '../drives/types.js';

/** The study's mechanism architecture (see docs/architectures.md). */
export type Architecture = ArchitectureName;

/** Variable-name prefix of each architecture in a comparison study (store columns need [a-z0-9_]). */
export const ARCHITECTURE_PREFIX: Readonly<Record<ArchitectureName, string>> = Object.fromEntries(
  ARCHITECTURE_NAMES.map((name) => [name, ARCHITECTURES[name].variablePrefix]),
) as Record<ArchitectureName, string>;

/** Geometry parameters of the five-bar, in the order design vectors list them. */
export const FIVE_BAR_PARAMETERS = ['base_span', 'base_rise', 'crank_1', 'rod_1', 'crank_2', 'rod_2'] as const;
export type FiveBarParameter = (typeof FIVE_BAR_PARAMETERS)[number];

export type ParameterSpec =
  | { readonly kind: 'fixed'; readonly value: number }
  | { readonly kind: 'variable'; readonly min: number; readonly max: number }
  | { readonly kind: 'tied'; readonly to: string };

export interface LinkSpec {
  /** Mass per unit length, kg/m. */
  readonly massPerLength: number;
  /** Cross-section area for axial stiffness, m² (Infinity = rigid). */
  readonly area: number;
  /** Second moment of area for in-plane bending, m⁴ (Infinity = rigid). */
  readonly secondMoment: number;
  /** Young's modulus, Pa (Infinity = rigid). */
  readonly youngsModulus: number;
  /** Human-readable description of section and material. */
  readonly label: string;
}

export interface DriveSpec {
  /** Name (a catalogue option's name, or the study's label for an inline drive). */
  readonly label: string;
  /** Mass of motor and gearbox, kg (0 when not given; it sits at the base and does not move). */
  readonly mass: number;
  /** Gear ratio N (motor turns per joint turn). */
  readonly gearRatio: number;
  /** Gearbox efficiency η (0..1]. */
  readonly efficiency: number;
  /** Motor rotor inertia, kg·m² (motor side). */
  readonly rotorInertia: number;
  /** Gearbox inertia referred to the joint, kg·m². */
  readonly gearInertia: number;
  /** Motor continuous (rated) torque, N·m (motor side). */
  readonly ratedTorque: number;
  /** Motor peak torque, N·m (motor side). */
  readonly peakTorque: number;
  /** Motor maximum speed, rad/s (motor side). */
  readonly maxSpeed: number;
  /** Torsional stiffness of servo plus transmission at the joint, N·m/rad (Infinity = rigid). */
  readonly jointStiffness: number;
  /** Encoder counts per motor revolution. */
  readonly encoderCounts: number;
  /**
   * Prismatic joints only: screw lead or belt travel per turn of the gearbox output, m/rev. With it,
   * the motor-side figures above are referred to the slider (see `driveAtJoint`). Absent for rotary joints.
   */
  readonly lead?: number;
  /** Prismatic joints only: a linear drive given directly in joint units (N, m/s, kg, N/m, m); the motor-side fields are then unused. */
  readonly linear?: DriveAtJoint;
  /** The motor, gearbox and stage this drive was built from (catalogue drive trains, docs/drives.md); absent for a plain drive. */
  readonly train?: DriveTrain;
}

/** Drive trains chosen from separate motor and gearbox catalogues (docs/drives.md). */
export interface DriveTrainSetup {
  /** Catalogue files as written in the study. */
  readonly motorsPath: string;
  readonly gearboxesPath: string | null;
  /** The options in play (the study's subsets, else every catalogue entry). */
  readonly motors: readonly MotorSpec[];
  readonly gearboxes: readonly GearboxSpec[];
  /** One choice for all actuators (variables motor, gearbox, gear_ratio) or one per actuator (motor_1, …). */
  readonly choose: 'shared' | 'per-actuator';
  /** Continuous gear ratio bounds (the design variable gear_ratio[_i]); null = the gearbox's own ratio. */
  readonly ratio: { readonly min: number; readonly max: number } | null;
  /** The sliders' screw or belt (prismatic architectures), else null. */
  readonly stage: LinearStageSpec | null;
  /** The brake must hold this factor times the largest static holding torque. */
  readonly brakeFactor: number;
  /** Upper bound on inertia_ratio (a constraint), or null. */
  readonly maxInertiaRatio: number | null;
}

export type TaskRegion =
  | { readonly shape: 'rectangle'; readonly centreX: number; readonly centreY: number; readonly width: number; readonly height: number }
  | { readonly shape: 'circle'; readonly centreX: number; readonly centreY: number; readonly radius: number };

/**
 * Default relative tolerance (0.5 %) of the areas, region averages and region extremes; defined here,
 * without parse.ts's dependencies, so that the evaluator's modules can read it (DEFAULT_EVALUATION uses it).
 */
export const DEFAULT_EVALUATION_TOLERANCE = 0.005;

export interface EvaluationSettings {
  /** Grid cells across the longer side of the reachable bounding box. */
  readonly gridCells: number;
  /** Task-region samples across the region's longer side. */
  readonly taskSamples: number;
  /** Threshold c_min on 1/κ(J) for a well-conditioned pose. */
  readonly minInverseCondition: number;
  /** Minimum transmission angle μ_min, rad. */
  readonly minTransmissionAngle: number;
  /**
   * Relative accuracy target (dimensionless, e.g. 0.005 = 0.5 %). Areas: the engine picks its sampling
   * from it (coarse grid plus boundary refinement, see mechanics/adaptive.ts); absent when the study
   * fixes grid_cells without giving a tolerance, and the fixed grid is used for the areas then (their
   * numbers unchanged). Region averages and extremes (regionMetrics.ts) are refined to this value, or
   * to DEFAULT_EVALUATION.tolerance when it is absent: one setting governs all three.
   */
  readonly tolerance?: number;
  /** Grid window, m: clips the reachable box (required for rails without strokes). Absent = none. */
  readonly window?: { readonly xmin: number; readonly xmax: number; readonly ymin: number; readonly ymax: number };
}

/** 3-DOF platforms: the study orientation and the orientation requirement at every task point. */
export interface OrientationSpec {
  /** Study orientation φ_0, rad: the constant-orientation workspace is taken at it. */
  readonly phi0: number;
  /** Required range Δφ ≥ 0, rad: every φ in [φ_0 − Δφ, φ_0 + Δφ] must be usable at each task point. */
  readonly range: number;
  /** Characteristic length L of the homogenised Jacobian, m; 'auto' = per design, the L that maximises the mean 1/κ over the task points at φ_0; 'platform' (default) = the platform circumradius. */
  readonly characteristicLength: number | 'auto' | 'platform';
  /** Scan step of the orientation ranges, rad. */
  readonly step: number;
}

export interface ObjectiveSpec {
  readonly metric: string;
  readonly sense: 'min' | 'max';
}

export interface ConstraintSpec {
  readonly metric: string;
  readonly min?: number;
  readonly max?: number;
}

export interface OptimizerSettings {
  /** Search algorithm: NSGA-II (default) or NSGA-III (reference directions; for four or more objectives). */
  readonly algorithm: 'nsga2' | 'nsga3';
  readonly population: number;
  /** Generations in all, the initial population included: the fixed count when `termination.kind` is 'generations' (default 100 otherwise, unused by `run`). */
  readonly generations: number;
  readonly seed: number;
  /** How `run` decides to stop: a fixed generation count, or convergence of the front (the default). */
  readonly termination: StudyTermination;
}

/** `optimizer.generations` given: exactly that many generations (as before convergence existed). */
export interface FixedGenerationsTermination {
  readonly kind: 'generations';
  readonly generations: number;
}

/** No generation count given: stop when the front stops improving (see docs/optimizer.md). */
export interface ConvergenceTermination {
  readonly kind: 'convergence';
  /** W: generations over which the improvement is measured (default 20). */
  readonly window: number;
  /** Relative archive hypervolume improvement over W generations below which the front counts as found (default 0.001). */
  readonly tolerance: number;
  /** Cap on evaluations (default 10,000). */
  readonly maxEvaluations: number;
}

export type StudyTermination = FixedGenerationsTermination | ConvergenceTermination;

/** A duty cycle the design must run (see docs/duty-cycle.md). */
export interface DutyCycleSpec {
  /** The closed end-point path: start point and steps (moves, arcs, dwells) in reference timing, SI. */
  readonly path: CyclePath;
  /** Cycle time to evaluate at, s: the moves are scaled to reach it (dwells unchanged); null = the steps' own times. */
  readonly cycleTime: number | null;
  /** Required cycle rate, cycles/s; adds the constraint min_cycle_time ≤ 1/rate. Null = none. */
  readonly requiredRate: number | null;
  /** Sample budget along the cycle. */
  readonly samples: number;
}

export interface Study {
  readonly name: string;
  readonly description: string;
  /** The architecture (for a comparison study: the first of `members`). */
  readonly architecture: Architecture;
  /** Geometry by the architecture's parameter names (SI: m, rad). */
  readonly geometry: Readonly<Record<string, ParameterSpec>>;
  /** Working modes allowed (the architecture's mode names): one = fixed; several = the optimizer chooses. */
  readonly workingModes: readonly string[];
  readonly assemblyMode: AssemblyMode;
  /** Actuated-joint ranges per actuator: rad for cranks, m (slider position on its rail) for sliders; null = unlimited. */
  readonly jointLimits: readonly (JointRange | null)[];
  /** Link sections per leg (cranks: revolute legs only; prismatic legs keep an unused massless entry). */
  readonly links: { readonly cranks: readonly LinkSpec[]; readonly rods: readonly LinkSpec[] };
  /** Lumped masses, kg. */
  readonly elbowHubMass: number;
  readonly endHubMass: number;
  readonly payloadMass: number;
  /** Slider carriage mass per prismatic leg, kg (absent = 0 / five-bar). */
  readonly sliderMass?: number;
  /** 3-DOF: platform mass (kg) and inertia about its centre P (kg·m²); absent for 2-DOF. */
  readonly platform?: { readonly mass: number; readonly inertia: number } | null;
  /** 3-DOF: orientation settings; absent for 2-DOF. */
  readonly orientation?: OrientationSpec | null;
  /**
   * Comparison study (`architecture: [a, b, …]`): one complete member study per architecture, sharing
   * task, evaluation, objectives and constraints. The design variable `architecture` picks the member;
   * the members' own variables are prefixed (see designSpace.ts). Absent for a single architecture.
   */
  readonly members?: readonly Study[] | null;
  /** Gravity in the plane of motion, m/s² (x, y). */
  readonly gravity: readonly [number, number];
  /** Fixed drives of every design (one per actuator), or null when there are none or the optimizer chooses them. */
  readonly drives: readonly DriveSpec[] | null;
  /** How drives are chosen: fixed (see `drives`), or catalogue options shared by all actuators or per actuator. */
  readonly driveChoice:
    | { readonly kind: 'fixed' }
    | { readonly kind: 'shared' | 'per-actuator'; readonly options: readonly DriveSpec[] };
  /** The referenced drive catalogue, if any (path as written in the study). */
  readonly driveCatalogue: { readonly path: string; readonly options: readonly DriveSpec[] } | null;
  /** Drive trains from motor and gearbox catalogues, or absent/null (docs/drives.md). */
  readonly driveTrains?: DriveTrainSetup | null;
  /** Safety factor on the rated torque for the static-torque drive limit. */
  readonly torqueSafetyFactor: number;
  readonly task: {
    readonly region: TaskRegion | null;
    /** Required end-point speed, m/s. */
    readonly speed: number;
    /** Required end-point acceleration, m/s² (0 = no requirement). */
    readonly acceleration: number;
  };
  readonly evaluation: EvaluationSettings;
  /** Duty cycle, when the study gives one (absent or null = none). */
  readonly dutyCycle?: DutyCycleSpec | null;
  /** Joint friction per actuator (joint side), used along the duty cycle. */
  readonly friction?: readonly JointFriction[] | null;
  readonly objectives: readonly ObjectiveSpec[];
  readonly constraints: readonly ConstraintSpec[];
  /** Tolerances, real joints, strength data and tube list (docs/accuracy.md); absent = none of them given. */
  readonly accuracy?: AccuracySpec | null;
  /** Baseline design: a value for every design variable. */
  readonly baseline: Readonly<Record<string, number | string>>;
  readonly optimizer: OptimizerSettings;
  /** The machine in its cell: task zones, keep-outs, interference, mounting, regular workspace (docs/cell.md); absent = none. */
  readonly cell?: CellSpec | null;
}
