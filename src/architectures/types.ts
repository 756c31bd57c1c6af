/**
 * The small interface every planar parallel architecture implements, so that the workspace grid,
 * the metrics, the optimizer, the store and the exports can run on any of them unchanged.
 *
 * Conventions (see docs/architectures.md):
 * - SI units. Plane coordinates (x, y), y up when gravity is (0, −g). Platform orientation φ (rad,
 *   counter-clockwise), only for 3-DOF architectures; 2-DOF architectures ignore it.
 * - Task-space velocity t = (ẋ, ẏ) for 2-DOF and (ẋ, ẏ, φ̇) for 3-DOF. Actuated joint rates q̇
 *   (rad/s for revolute, m/s for prismatic drives). Velocity relation A t = B q̇, J = A⁻¹B, t = J q̇.
 * - Homogenised Jacobian (3-DOF): with a characteristic length L (m), the twist is written
 *   t_h = (ẋ, ẏ, L φ̇), so J_h = diag(1, 1, L) J and A_h = A diag(1, 1, 1/L). Every entry of J_h then
 *   has the units of a translational rate per joint rate, and κ(J_h) is free of unit choices
 *   (scaling every length and L by the same factor leaves κ unchanged). For 2-DOF J_h = J.
 * - Matrices are n×n row-major Float64Array, n = degrees of freedom = number of legs.
 */
import { PoseStatus, type JointRange } from '../core/pose.js';
import { WORK_LENGTH } from './dense.js';

export { PoseStatus };
export type { JointRange };

/** Names of the architectures: the keys of the one registry, `ARCHITECTURES` in index.ts. */
export type { ArchitectureName } from './index.js';
import type { ArchitectureName } from './index.js';

/** Kind of an actuated joint: revolute (efforts N·m, stiffness N·m/rad) or prismatic (N, N/m). */
export type ActuatorKind = 'revolute' | 'prismatic';

/** Physical units of one actuated joint's quantities, for display and schema text. */
export interface ActuatorUnits {
  readonly position: 'rad' | 'm';
  readonly speed: 'rad/s' | 'm/s';
  readonly effort: 'N·m' | 'N';
  readonly stiffness: 'N·m/rad' | 'N/m';
  readonly inertia: 'kg·m²' | 'kg';
}

export function actuatorUnits(kind: ActuatorKind): ActuatorUnits {
  return kind === 'revolute'
    ? { position: 'rad', speed: 'rad/s', effort: 'N·m', stiffness: 'N·m/rad', inertia: 'kg·m²' }
    : { position: 'm', speed: 'm/s', effort: 'N', stiffness: 'N/m', inertia: 'kg' };
}

/** One geometry parameter a study can fix, vary or tie. */
export interface ParameterInfo {
  readonly name: string;
  /** 'length' values are m; 'angle' values are rad. */
  readonly kind: 'length' | 'angle';
  /** One-line meaning, in our own words. */
  readonly description: string;
  /** A position rather than a size: may be negative (lengths only; angles are always signed). */
  readonly signed?: boolean;
  /** May be zero (lengths only; sizes must otherwise be positive). */
  readonly mayBeZero?: boolean;
}

/** Cross-section and material of a link (uniform bar). Infinity = rigid. */
export interface LinkSection {
  /** kg/m */
  readonly massPerLength: number;
  /** Axial section area, m². */
  readonly area: number;
  /** Second moment of area for in-plane bending, m⁴. */
  readonly secondMoment: number;
  /** Young's modulus, Pa. */
  readonly youngsModulus: number;
}

/** A rigid, massless link section. */
export const RIGID_MASSLESS: LinkSection = { massPerLength: 0, area: Infinity, secondMoment: Infinity, youngsModulus: Infinity };

/**
 * A drive referred to its joint. Units follow the actuator kind (`actuatorUnits`): a revolute drive's
 * effort is N·m and stiffness N·m/rad; a prismatic drive's effort is N and stiffness N/m.
 */
export interface DriveAtJoint {
  /** Inertia reflected to the joint (N² J_rotor + J_gear for a gearbox; J_rotor (2π/lead)² for a screw): kg·m² or kg. */
  readonly reflectedInertia: number;
  /** Servo plus transmission stiffness at the joint: N·m/rad or N/m (Infinity = rigid). */
  readonly jointStiffness: number;
  /** Peak and rated effort available at the joint (η N τ_motor for a gearbox): N·m or N. */
  readonly peakEffort: number;
  readonly ratedEffort: number;
  /** Largest joint speed: rad/s or m/s. */
  readonly maxSpeed: number;
  /** Joint step per encoder count: rad or m (0 = no encoder given). */
  readonly encoderStep: number;
}

/** Everything a model is built from: parameter values (SI) plus masses, sections and drives. */
export interface ModelInput {
  /** Every parameter of the architecture by name: m for lengths, rad for angles. */
  readonly parameters: Readonly<Record<string, number>>;
  /** One of the architecture's working modes. */
  readonly workingMode: string;
  /** Required sign of det A (see each architecture for its meaning). */
  readonly assembly: 1 | -1;
  /** Actuated joint ranges per leg (rad or m), null = unlimited; default all unlimited. */
  readonly jointLimits?: readonly (JointRange | null)[];
  /** Crank sections per leg (revolute legs only). */
  readonly cranks?: readonly LinkSection[];
  /** Rod sections per leg. */
  readonly rods: readonly LinkSection[];
  /** Hub at each crank's elbow (revolute legs), point mass, kg. */
  readonly elbowHubMass?: number;
  /** Slider carriage per leg (prismatic legs), translating mass, kg. */
  readonly sliderMass?: number;
  /** 2-DOF: hub at the common end point, kg. 3-DOF: unused. */
  readonly endHubMass?: number;
  /** 3-DOF: rigid platform, mass (kg) and inertia about its centre P (kg·m²); its centre of mass is P. */
  readonly platform?: { readonly mass: number; readonly inertiaAboutCentre: number };
  /** Payload, point mass at P, kg. */
  readonly payloadMass: number;
  /** Gravity in the plane of motion, m/s². */
  readonly gravity: readonly [number, number];
  /** Drives per leg, or null (no drive data: rigid joints, no reflected inertia). */
  readonly drives: readonly DriveAtJoint[] | null;
  /** 3-DOF: characteristic length L for the homogenised Jacobian, m (default: the platform circumradius). */
  readonly characteristicLength?: number;
}

/** Every architecture's immutable model carries at least this. */
export interface ArchitectureModelBase {
  readonly architecture: ArchitectureName;
  /** Degrees of freedom = legs = actuators (2 or 3). */
  readonly dof: 2 | 3;
  readonly actuators: readonly ActuatorKind[];
  /** Required sign of det A. */
  readonly assembly: 1 | -1;
  /** Characteristic length for the homogenised Jacobian, m (1 and unused for 2-DOF). */
  readonly characteristicLength: number;
  /** Drives per leg, or null. */
  readonly drives: readonly DriveAtJoint[] | null;
}

/** Axis-aligned box of the plane, m (entries may be ±Infinity for unbounded reach, e.g. unlimited rails). */
export interface PlaneBox {
  readonly xmin: number;
  readonly xmax: number;
  readonly ymin: number;
  readonly ymax: number;
}

/**
 * Reusable per-pose data of any architecture with n ≤ 3 legs. One per worker; `solvePose` and
 * `poseDynamics` overwrite its fields and allocate nothing.
 */
export class ArchitecturePose {
  readonly dof: number;
  status: PoseStatus = PoseStatus.Unreachable;
  /** Pose: P (m) and φ (rad; 0 for 2-DOF). */
  x = 0;
  y = 0;
  phi = 0;
  /** Smallest reach margin over the legs, m (negative outside a leg's reach). */
  reachMargin = 0;
  /** Reach margin of each leg, m (see LegKind.solve). */
  readonly legReach: Float64Array;
  /** Joint-range margin of each leg's actuated joint (see LegKind.solve). */
  readonly legJoint: Float64Array;
  /** Smallest joint-range margin, in joint units (rad or m; +∞ when unlimited). */
  jointMargin = Infinity;
  /** Actuated joint positions q_i: rad (revolute) or m (prismatic slider position along its rail). */
  readonly q: Float64Array;
  /** Actuator direction per leg: crank unit vector e(θ_i) (revolute) or rail unit vector (prismatic); x, y interleaved. */
  readonly actuatorDirection: Float64Array;
  /** Proximal joint of each rod: elbow C_i (revolute) or slider joint S_i (prismatic), m; x, y interleaved. */
  readonly proximalJoint: Float64Array;
  /** Distal joint of each rod: the end point (2-DOF) or the platform joint B_i (3-DOF), m; x, y interleaved. */
  readonly distalJoint: Float64Array;
  /** Rod unit vectors u_i (proximal → distal); x, y interleaved. */
  readonly rodDirection: Float64Array;
  /** Leg transmission sine s_i (dimensionless; 0 at a leg singularity). Revolute: cross(e_i, u_i); prismatic: u_i · e_rail,i. */
  readonly legSine: Float64Array;
  /** det A (dimensionless for 2-DOF, m for 3-DOF). */
  detA = 0;
  /** det A_h / Π‖row_i(A_h)‖ ∈ [−1, 1]: signed, dimensionless mechanism transmission (cross(u_1, u_2) for 2-DOF). */
  mechanismSine = 0;
  /** 1/κ(J_h) (1 = isotropic, 0 singular). */
  inverseCondition = 0;
  /** A (rows per leg, columns x, y[, φ]) and B (diagonal, stored full). */
  readonly A: Float64Array;
  readonly B: Float64Array;
  /** J = A⁻¹B: task rate per joint rate (rows ẋ, ẏ[, φ̇]). */
  readonly J: Float64Array;
  /** J⁻¹ = B⁻¹A. */
  readonly Jinv: Float64Array;
  /** Homogenised J_h = diag(1, 1, L) J and its inverse (equal to J, J⁻¹ for 2-DOF). */
  readonly Jh: Float64Array;
  readonly Jhinv: Float64Array;
  /** Rod angular-rate rows: β̇_i = Σ_k rodRate[i n + k] q̇_k (β_i the absolute rod angle). */
  readonly rodRate: Float64Array;

  // --- filled by poseDynamics ---
  /** Joint-space inertia D (kg·m², kg, or mixed for mixed actuators), symmetric. */
  readonly D: Float64Array;
  /** Static holding efforts τ_g per joint (N·m revolute, N prismatic). */
  readonly tauG: Float64Array;
  /** Task-space mass matrix M_x = J⁻ᵀ D J⁻¹ (kg; kg·m and kg·m² in φ entries). */
  readonly Mx: Float64Array;
  /** Task-space stiffness K_x = Aᵀ diag(1/c_i) A (N/m; N and N·m/rad in φ entries). */
  readonly Kx: Float64Array;
  /** Leg compliances c_i along the rods, m/N. */
  readonly legCompliance: Float64Array;
  /**
   * Smallest translational stiffness, N/m: λ_min(K_x) for 2-DOF; for 3-DOF λ_min of the Schur
   * complement K_tt − K_tφ K_φφ⁻¹ K_φt (a force at P with no moment: the platform may turn).
   */
  minStiffness = 0;
  /** 3-DOF: rotational stiffness 1/(K_x⁻¹)_φφ, N·m/rad (a pure moment, P free to move). NaN for 2-DOF. */
  rotationalStiffness = Number.NaN;
  /** Natural frequencies of M_x ẍ + K_x x = 0, Hz, ascending. */
  readonly frequencies: Float64Array;
  /** Norms of the rows of D J_h⁻¹: effort per unit homogenised task acceleration (kg·m or kg). */
  readonly inertiaRowNorm: Float64Array;
  /** Norms of the rows of J_h⁻¹: joint rate per unit homogenised task rate. */
  readonly inverseJacobianRowNorm: Float64Array;
  /** Largest singular value of J_h. */
  maxSingularValue = 0;

  /**
   * Set by a caller that reads only the margins of the next solve (src/mechanics/workspace.ts
   * PointKernel; the orientation scans and task quadrature of regionMetrics.ts on a pose of their
   * own): a revolute leg whose joint is certainly more than 1 rad inside its range (by the sign test
   * of `jointTest`) then skips its angle, writing 1 rad as its joint margin and NaN as q, and a 3-DOF
   * platform leaves J, J⁻¹, J_h, J_h⁻¹ unwritten (legs/platform3.ts). Status, reach, leg sines, A, B,
   * det A, 1/κ and the mechanism sine are written as always.
   */
  marginOnly = false;
  /** Per leg: the unit direction of the middle of its joint range and cos(half span − 1 rad); (0, 0, 2): never skip. */
  readonly jointTest: Float64Array;

  /** Scratch for the routines (not data). */
  readonly work = new Float64Array(WORK_LENGTH);
  readonly work2 = new Float64Array(WORK_LENGTH);

  constructor(dof: number) {
    if (dof < 1 || dof > 3) throw new Error(`ArchitecturePose supports 1 to 3 degrees of freedom, not ${dof}`);
    this.dof = dof;
    const n = dof;
    this.q = new Float64Array(n);
    this.legReach = new Float64Array(n);
    this.legJoint = new Float64Array(n);
    // (0, 0, 2): the dot product 0 never exceeds 2, no angle is skipped.
    this.jointTest = new Float64Array(3 * n);
    for (let i = 0; i < n; i++) this.jointTest[3 * i + 2] = 2;
    this.actuatorDirection = new Float64Array(2 * n);
    this.proximalJoint = new Float64Array(2 * n);
    this.distalJoint = new Float64Array(2 * n);
    this.rodDirection = new Float64Array(2 * n);
    this.legSine = new Float64Array(n);
    this.A = new Float64Array(n * n);
    this.B = new Float64Array(n * n);
    this.J = new Float64Array(n * n);
    this.Jinv = new Float64Array(n * n);
    this.Jh = new Float64Array(n * n);
    this.Jhinv = new Float64Array(n * n);
    this.rodRate = new Float64Array(n * n);
    this.D = new Float64Array(n * n);
    this.tauG = new Float64Array(n);
    this.Mx = new Float64Array(n * n);
    this.Kx = new Float64Array(n * n);
    this.legCompliance = new Float64Array(n);
    this.frequencies = new Float64Array(n);
    this.inertiaRowNorm = new Float64Array(n);
    this.inverseJacobianRowNorm = new Float64Array(n);
  }
}

/**
 * One leg of the cut-open chain that `simulate` integrates (docs/simulate.md): the serial chain
 * base → actuated joint → rod → distal pin, cut at the distal pin. SI units.
 */
export interface CutOpenLeg {
  /** Revolute: crank turning about the pivot (q = θ); prismatic: slider along a rail (q = position along it). */
  readonly actuator: ActuatorKind;
  /**
   * Leg kind (default from `actuator`: crank + rod or slider + rod). 'strut': a housing hinged at the
   * pivot (`base`) turning with the strut angle β and a tube sliding in it, q = strut length (m); then
   * `proximalInertia` and `proximalFirstMoment` are the housing's about the pivot (kg·m², kg·m),
   * `rodMass`/`rodInertia` the tube's, `rodComDistance` the tube's centre of mass measured from the
   * distal pin back towards the pivot (m), and `crank`, `rod`, `railX`, `railY` are unused.
   */
  readonly leg?: 'crank-rod' | 'slider-rod' | 'strut';
  /** Pivot A (revolute) or rail origin O (prismatic), m; rail unit vector (prismatic; unused for revolute). */
  readonly baseX: number;
  readonly baseY: number;
  readonly railX: number;
  readonly railY: number;
  /** Crank length p (revolute; 0 for prismatic) and rod length d, m. */
  readonly crank: number;
  readonly rod: number;
  /** Distal pin in the platform frame, m (0 for 2-DOF). */
  readonly pinX: number;
  readonly pinY: number;
  /** Actuated body: revolute inertia about the pivot (kg·m²) and first moment (kg·m); prismatic translating mass (kg) for both. */
  readonly proximalInertia: number;
  readonly proximalFirstMoment: number;
  /** Drive inertia reflected to the joint, kg·m² or kg. */
  readonly reflectedInertia: number;
  /** Rod mass (kg), centre-of-mass distance from the proximal joint (m), inertia about its centre of mass (kg·m²). */
  readonly rodMass: number;
  readonly rodComDistance: number;
  readonly rodInertia: number;
}

/** The bodies of a design as the cut-open chain of `simulate`: legs, plus the body carried at P. */
export interface CutOpenChain {
  readonly legs: readonly CutOpenLeg[];
  /** Body at P (platform or end hub, payload included): mass (kg), centre of mass at P, inertia about P (kg·m²; 0 for 2-DOF). */
  readonly platformMass: number;
  readonly platformInertia: number;
  readonly gravity: readonly [number, number];
}

/**
 * The design cut open into a tree of rigid bodies (every loop cut at one pin), plus the pins that
 * close the loops again: what a multibody program needs (the MJCF export walks it) and what the
 * candidate sheet lists. Frames: each body has a planar frame (x, y in the plane of motion); at zero
 * joint coordinate it sits at `origin` in its parent's frame with the parent's orientation. A
 * revolute joint turns the body about its origin (counter-clockwise positive, axis = plane normal);
 * a prismatic joint moves it along `axis` (a unit vector in the parent frame).
 */
export interface TreeJoint {
  readonly name: string;
  readonly kind: ActuatorKind;
  /** Prismatic: unit direction of travel in the parent frame. Revolute: (0, 0), the axis is the plane normal. */
  readonly axis: readonly [number, number];
  /** Index of the actuator this joint is (0-based), or null for a passive joint. */
  readonly actuator: number | null;
  /** Joint range (rad or m), null = free. */
  readonly range: JointRange | null;
  /** Drive inertia reflected to this joint (kg·m² or kg); 0 for passive joints. */
  readonly armature: number;
}

/** A point of a body that something attaches to (loop-closure pins, the end point), in the body frame, m. */
export interface TreeSite {
  readonly name: string;
  readonly at: readonly [number, number];
}

/**
 * One rigid body of the tree. `shape` says how it is drawn and how its out-of-plane inertia is
 * completed: `bar` (a link from the origin to (length, 0)), `carriage` (a translating block that never
 * turns), `point` (a point mass), `plate` (a rigid plate through its sites).
 */
export interface TreeBody {
  readonly name: string;
  /** Parent body, or null for the ground. Parents come before their children in `BodyTree.bodies`. */
  readonly parent: string | null;
  readonly origin: readonly [number, number];
  /** The joint to the parent, or null when the body is fixed to it. */
  readonly joint: TreeJoint | null;
  readonly shape: 'bar' | 'carriage' | 'point' | 'plate';
  /** Bar length, m (0 for other shapes). */
  readonly length: number;
  /** A bar that runs from its origin back along −x (a tube whose frame sits at its far pin); default false. */
  readonly reversed?: boolean;
  readonly mass: number;
  /** Centre of mass in the body frame, m. */
  readonly centreOfMass: readonly [number, number];
  /** Inertia about the centre of mass about the plane normal, kg·m² (a carriage: 0, it does not turn). */
  readonly inertiaAboutCom: number;
  readonly sites: readonly TreeSite[];
  /** What the body is made of, in words. */
  readonly parts: string;
}

/** A pin that closes a loop: the two sites coincide in every assembled pose. */
export interface TreeClosure {
  readonly name: string;
  readonly site1: string;
  readonly site2: string;
}

export interface BodyTree {
  /** Depth-first order (a body, then its subtree): the joint order is the order of `bodies` with a joint. */
  readonly bodies: readonly TreeBody[];
  readonly closures: readonly TreeClosure[];
  /** Gravity in the plane of motion, m/s². */
  readonly gravity: readonly [number, number];
}

/**
 * A planar parallel architecture. `TModel` is its immutable model; every per-pose quantity goes
 * into an `ArchitecturePose` made by `createPose`.
 */
export interface PlanarArchitecture<TModel extends ArchitectureModelBase = ArchitectureModelBase> {
  readonly name: ArchitectureName;
  /** Prefix of its design variables in a comparison study (`fivebar_crank_1`, …): letters and digits. */
  readonly variablePrefix: string;
  readonly dof: 2 | 3;
  /** Actuator kind per leg. */
  readonly actuators: readonly ActuatorKind[];
  /** Geometry parameters in design-vector order. */
  readonly parameters: readonly ParameterInfo[];
  /** Working-mode names (one sign per leg, '+' or '-'). */
  readonly workingModes: readonly string[];
  /** Immutable model of one design. Throws on an unknown working mode or a missing parameter. */
  buildModel(input: ModelInput): TModel;
  createPose(): ArchitecturePose;
  /** Inverse kinematics and first-order kinematics at (x, y[, φ]); fills pose and returns its status. */
  solvePose(model: TModel, pose: ArchitecturePose, x: number, y: number, phi?: number): PoseStatus;
  /** D, τ_g, M_x, K_x, compliances, frequencies at the pose last solved (reachable and non-singular). */
  poseDynamics(model: TModel, pose: ArchitecturePose): void;
  /**
   * Forward kinematics: task pose for joint positions q, in the model's assembly mode. `pose`
   * holds (x, y[, φ]) on return; on entry it is the starting guess for architectures whose FK is
   * numerical (3-DOF: Newton from a nearby pose). Returns false when no solution is found.
   */
  forwardKinematics(model: TModel, q: ArrayLike<number>, pose: Float64Array): boolean;
  /** Box that holds every reachable P at orientation φ (2-DOF: φ ignored); null when nothing is reachable. */
  reachableBox(model: TModel, phi?: number): PlaneBox | null;
  /**
   * Area of the reachable set at orientation φ inside the evaluation box (m²) where a closed form
   * holds, else null or absent (the area is then sampled to the tolerance). `windowed`:
   * evaluation.window cut the box.
   */
  exactReachableArea?(model: TModel, box: PlaneBox, phi: number, windowed: boolean): number | null;
  /** Size proxy, m. */
  footprint(model: TModel): number;
  /** Mass of the moving links, sliders, hubs and platform (payload excluded), kg. */
  movingMass(model: TModel): number;
  /**
   * The design's bodies as the cut-open chain of forward simulation (src/simulate), or null/absent
   * when the architecture does not describe its bodies that way.
   */
  cutOpenChain?(model: TModel): CutOpenChain | null;
  /** The design as a tree of rigid bodies plus loop-closing pins (see BodyTree). */
  bodyTree(model: TModel): BodyTree;
  /**
   * Joint coordinates of `bodyTree(model)`'s joints in tree order (rad or m) at the pose last solved
   * by `solvePose` (assembled): actuated angles written inside their ranges, passive angles in (−π, π].
   */
  bodyTreeJoints(model: TModel, pose: ArchitecturePose): Float64Array;
}

/** Signs per leg of a working-mode name such as "+-+". */
export function signsOfMode(mode: string, legs: number): number[] {
  if (mode.length !== legs || !/^[+-]+$/.test(mode)) throw new Error(`working mode "${mode}" must be ${legs} signs (+ or -)`);
  return [...mode].map((c) => (c === '+' ? 1 : -1));
}

/** Every working-mode name for a number of legs ("++", "+-", …). */
export function allWorkingModes(legs: number): string[] {
  const out: string[] = [];
  for (let mask = 0; mask < 1 << legs; mask++) {
    let name = '';
    for (let i = 0; i < legs; i++) name += mask & (1 << (legs - 1 - i)) ? '-' : '+';
    out.push(name);
  }
  return out;
}

/** Parameter value from an input, with a clear error when missing. */
export function parameterValue(input: ModelInput, name: string): number {
  const v = input.parameters[name];
  if (v === undefined || !Number.isFinite(v)) throw new Error(`parameter "${name}" is missing or not a finite number`);
  return v;
}
