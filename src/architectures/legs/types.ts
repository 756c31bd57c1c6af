/**
 * Leg kinds of the leg layer (src/architectures/legged.ts). A leg joins the base to the distal joint
 * B_i (the end point of a 2-DOF mechanism, or a platform pin of a 3-DOF one) through one actuated
 * joint. Each kind lives in its own file and supplies, for leg i of a `LeggedModel`:
 * - `lump`: its model fields (inertia, compliance, moving mass) from the geometry and the input;
 * - `solve`: inverse kinematics to B_i in its working-mode sign, its velocity row (A row u_iᵀ, B_ii)
 *   and transmission sine, its reach margin and its joint margin;
 * - `addBodies`: its bodies' contribution to D and τ_g (the velocity map of B_i is given);
 * - `compliance`: its compliance along its line of action, m/N;
 * - `circle`, `reachBox`, `basePoints`, `reach`: forward kinematics, bounding box and size;
 * - `bodies`: its body list (joint, axis, mass, centre of mass, inertia) for exports.
 */
import type { ActuatorKind, ArchitecturePose, DriveAtJoint, LinkSection, TreeBody } from '../types.js';
import type { JointRange } from '../../core/pose.js';

/** Leg geometry an architecture derives from its parameters. */
export interface LegGeometry {
  /** Actuator kind; with no `leg`, picks the crank + rod (revolute) or slider + rod (prismatic) leg. */
  readonly actuator: ActuatorKind;
  /** Leg kind (default from `actuator`). */
  readonly leg?: LegKind;
  /** Base point: pivot A_i (crank, strut) or rail origin O_i (slider), m. */
  readonly base: readonly [number, number];
  /** Rail angle from the x axis, rad (slider only). */
  readonly railAngle?: number;
  /** Crank length, m (crank only). */
  readonly crank?: number;
  /** Rod length, m (crank, slider); ignored by the strut, whose length is its joint position. */
  readonly rod: number;
  /** Distal pin in the platform frame, m (3-DOF). */
  readonly platformPin?: readonly [number, number];
}

/** What a leg contributes to the immutable model (see LeggedModel for each field's meaning). */
export interface LegLumped {
  readonly crank: number;
  readonly rod: number;
  readonly proximalInertia: number;
  readonly proximalFirstMoment: number;
  readonly rodMass: number;
  readonly rodComDistance: number;
  readonly rodInertiaAboutCom: number;
  readonly complianceTransverse: number;
  readonly complianceProximalAxial: number;
  readonly complianceRodAxial: number;
  /** Moving mass of the leg's actuated body (crank with hub, slider, strut housing), kg. */
  readonly proximalMass: number;
}

/** Masses, sections and drive of one leg, taken from the model input. */
export interface LegInput {
  readonly crankSection: LinkSection;
  readonly rodSection: LinkSection;
  readonly elbowHubMass: number;
  readonly sliderMass: number;
  readonly drive: DriveAtJoint | null;
  readonly jointLimit: JointRange | null;
}

/** One rigid body of a leg, in the pose's current configuration (for exports and drawings). */
export interface LegBody {
  readonly name: string;
  /** Joint that carries the body: a hinge about the plane normal or a slide along `axis`. */
  readonly joint: 'hinge' | 'slide';
  /** Joint position and, for a slide, its unit direction (m; for a hinge the axis is the plane normal). */
  readonly jointPosition: readonly [number, number];
  readonly axis: readonly [number, number];
  readonly mass: number;
  readonly centreOfMass: readonly [number, number];
  /** Inertia about the centre of mass, about the plane normal, kg·m². */
  readonly inertia: number;
}

/** The model fields a leg kind reads (a `LeggedModel` has them all). */
export interface LegModelView {
  readonly dof: 2 | 3;
  readonly baseX: readonly number[];
  readonly baseY: readonly number[];
  readonly railX: readonly number[];
  readonly railY: readonly number[];
  readonly crank: readonly number[];
  readonly rod: readonly number[];
  readonly sigma: readonly number[];
  readonly jointLimits: readonly (JointRange | null)[];
  readonly proximalMass: readonly number[];
  readonly proximalInertia: readonly number[];
  readonly proximalFirstMoment: readonly number[];
  readonly rodMass: readonly number[];
  readonly rodComDistance: readonly number[];
  readonly rodInertiaAboutCom: readonly number[];
  readonly reflectedInertia: readonly number[];
  /** 3-DOF: the distal pins in the platform frame, m (0 for 2-DOF). */
  readonly platformX: readonly number[];
  readonly platformY: readonly number[];
  readonly complianceTransverse: readonly number[];
  readonly complianceProximalAxial: readonly number[];
  readonly complianceRodAxial: readonly number[];
}

export interface LegKind {
  /** The kind's name; the cut-open chain of forward simulation (src/simulate/legChain.ts) dispatches on it. */
  readonly name: 'crank-rod' | 'slider-rod' | 'strut';
  readonly actuator: ActuatorKind;
  /**
   * Whether the leg is singular where its reach ends (its links in line there, so 1/κ falls as the
   * square root of the reach margin near that edge): the task-region quadrature's square-root rule
   * (regionQuadrature.ts) applies at that edge only when every leg says so.
   */
  readonly singularAtReach: boolean;
  lump(geometry: LegGeometry, input: LegInput): LegLumped;
  /**
   * Inverse kinematics of leg i to its distal joint B_i, read from pose.distalJoint[2i, 2i + 1]
   * (passed in the pose, not as numbers, which would be boxed): writes q_i, the actuator direction,
   * proximal joint, rod direction u_i, leg sine s_i, A row entries (u_iᵀ) and B_ii, the leg's
   * reach margin in pose.legReach[i] (m, negative outside its reach) and its joint margin in
   * pose.legJoint[i] (rad or m, +∞ when unlimited). Returns false when the leg cannot reach B_i (then
   * only legReach[i] is written). The margin is not returned: a number returned from a function too
   * large to inline is boxed, one allocation per leg and point on the hot path.
   */
  solve(model: LegModelView, i: number, pose: ArchitecturePose): boolean;
  /**
   * Optional, for solves that read only margins (ArchitecturePose.marginOnly): writes into
   * out[3i … 3i + 2] the test by which `solve` may skip the joint's angle (see crankRod); returns
   * false when the leg never skips (out left at its "never" entry). A leg without it never skips.
   */
  farJointTest?(model: LegModelView, i: number, out: Float64Array): boolean;
  /**
   * Adds the leg's bodies to pose.D and pose.tauG and writes its rod-rate row, given the velocity
   * map of B_i per unit joint rate in pose.work2 (see legs/bodies.ts for the layout).
   */
  addBodies(model: LegModelView, i: number, pose: ArchitecturePose, gx: number, gy: number): void;
  /** Compliance of the leg along its line of action at leg sine s, m/N. */
  compliance(model: LegModelView, i: number, legSine: number): number;
  /** Forward kinematics: B_i lies on the circle (centre, radius) for joint position q; writes cx, cy, r. */
  circle(model: LegModelView, i: number, q: number, out: Float64Array): void;
  /** Box holding every reachable B_i translated by (−ox, −oy) from the base: writes xmin, xmax, ymin, ymax. */
  reachBox(model: LegModelView, i: number, ox: number, oy: number, out: Float64Array): void;
  /**
   * The set of B_i the leg reaches, where it is a ring about the base point (crank + rod; a strut with
   * a stroke): writes its inner and outer radius (m) into out[0], out[1] and returns true; false or
   * absent otherwise. Gives the closed-form reachable area (legged.ts leggedRingsArea).
   */
  reachRing?(model: LegModelView, i: number, out: Float64Array): boolean;
  /**
   * The set of B_i the leg reaches, where it is a strip about the rail line through the base point
   * along (railX, railY) (slider + rod): its half-width, m; absent otherwise (legged.ts sliderStripsArea).
   */
  reachStrip?(model: LegModelView, i: number): number;
  /** Fixed points of the leg on the base (pivot; the stroke ends of a limited rail, else its origin). */
  basePoints(model: LegModelView, i: number): [number, number][];
  /** Longest distance from the base point to B_i, m. */
  reach(model: LegModelView, i: number): number;
  /** The leg's bodies at the pose last solved. */
  bodies(model: LegModelView, i: number, pose: ArchitecturePose): LegBody[];
  /**
   * The leg as a chain of tree bodies from the base (the first body's parent is the ground, each next
   * one's the body before), the last one carrying the site `tip_<i+1>` at the distal joint B_i
   * (`tip`, in its frame). See BodyTree in ../types.ts.
   */
  treeBodies(model: LegModelView, i: number): { readonly bodies: TreeBody[]; readonly tip: readonly [number, number] };
  /** The chain's joint coordinates at the pose last solved, written to out from index k; returns the next index. */
  treeJoints(model: LegModelView, i: number, pose: ArchitecturePose, out: Float64Array, k: number): number;
}
