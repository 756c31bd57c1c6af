/**
 * Metrics over the evaluation region (the task region when the study has one, else the usable
 * workspace region), for every architecture:
 * - per-pose quantities at a solved pose (`poseValues`), folded into their worst value and where it is;
 * - `gci`, the area mean of 1/κ(J_h), by the quadrature of regionQuadrature.ts: over the task region
 *   on its lattice (1/κ taken as 0 where the pose is not assembled), over the usable workspace with
 *   the sub-cell geometry of its boundary; both refined to the study's tolerance;
 * - the extremes refined by a local search on the point inside the region (extremeSearch.ts), started
 *   at the worst sample of each quantity; every point the searches solve also counts for the others;
 * - an estimated absolute error for each of these metrics.
 */
import type { LeggedModel } from '../architectures/legged.js';
import { maxSingularValue2 } from '../architectures/linalg2.js';
import { orientationRangeAt, orientationRanges, orientationRequirementMargin, type OrientationScanOptions } from '../architectures/orientation.js';
import type { ArchitectureModelBase, ArchitecturePose, DriveAtJoint, PlanarArchitecture } from '../architectures/types.js';
import { PoseStatus } from '../core/pose.js';
import { jointPeakEffortAtSpeed } from '../drives/envelope.js';
import type { DriveTrain } from '../drives/types.js';
import { metricIndex } from '../core/metrics.js';
import { DEFAULT_EVALUATION_TOLERANCE, type Study } from '../study/types.js';
import type { BuiltArmChecks } from '../accuracy/builtArm.js';
import { ExtremeSearch, PointMemo, type ExtremeObjective } from './extremeSearch.js';
import type { MarginGrid } from './grid.js';
import { MAX_LEGS, RegionQuadrature, type LevelField, type NodeLattice } from './regionQuadrature.js';
import { projectOntoTask, taskLattice, taskPoint, type TaskLattice } from './taskSamples.js';
import { gaussLegendre, periodicTensorIntegrals, tensorIntegral } from './gaussRule.js';
import { architectureUsableMargin, UsabilityRule } from './usability.js';
import { marginJointTests } from './workspace.js';

/** Per-pose quantities, in this order; `SENSE` says which end is the worst (−1 smallest, +1 largest). */
export const Q = {
  invCond: 0,
  sine: 1,
  stiffness: 2,
  frequency: 3,
  accel: 4,
  effort: 5,
  speed: 8,
  step: 11,
  accelAtSpeed: 12,
  orientationMargin: 13,
  orientationRange: 14,
} as const;
export const QUANTITIES = 15;
/** The quantities of a pose (the orientation ones follow, from a scan). */
const POSE_QUANTITIES = 13;
const SENSE: readonly (1 | -1)[] = [-1, -1, -1, -1, -1, 1, 1, 1, 1, 1, 1, 1, -1, -1, -1];
/** Worst value of each quantity at a pose that is not assembled or is singular. */
const SINGULAR_VALUE: readonly number[] = [0, 0, 0, 0, 0, Infinity, Infinity, Infinity, Infinity, Infinity, Infinity, Infinity, 0, Number.NaN, Number.NaN];
/** Most orientation ranges kept per point (more are dropped by orientationRanges). */
const MAX_RANGES = 16;
/** Budgets of one local search (evaluations): pose quantities, orientation quantities (a scan each). */
const SEARCH_EVALUATIONS = 40;
const ORIENTATION_SEARCH_EVALUATIONS = 8;
/**
 * Points remembered per refineExtremes (PointMemo): every search of a pass fits (15 quantities, two
 * searches each, 40 evaluations at most). Flags of an entry: outside the region, pose quantities
 * known, orientation quantities known too.
 */
const MEMO_POINTS = 1280;
const MEMO_OUTSIDE = 1;
const MEMO_POSE = 2;
const MEMO_ORIENTATION = 3;
/** A second search starts at the worst sample away from the first when it is within this fraction of the worst. */
const SECOND_START_GAP = 0.01;
/** Relative differences below this are rounding, not a worse pose (searches). */
const ROUNDING = 1e-12;

const M = {
  gci: metricIndex('gci'),
  minInvCond: metricIndex('min_inv_condition'),
  minTransmission: metricIndex('min_transmission_angle'),
  minStiffness: metricIndex('min_stiffness'),
  peakTorque: metricIndex('peak_gravity_torque'),
  peakTorqueOf: [metricIndex('peak_gravity_torque_1'), metricIndex('peak_gravity_torque_2'), metricIndex('peak_gravity_torque_3')],
  bandwidth: metricIndex('first_mode_in_plane'),
  accel: metricIndex('accel_capability'),
  accelAtSpeed: metricIndex('accel_capability_at_speed'),
  peakSpeed: metricIndex('peak_joint_speed'),
  peakSpeedOf: [metricIndex('peak_joint_speed_1'), metricIndex('peak_joint_speed_2'), metricIndex('peak_joint_speed_3')],
  resolution: metricIndex('encoder_resolution'),
  orientationMargin: metricIndex('orientation_margin'),
  orientationRange: metricIndex('orientation_range'),
} as const;

function isLegged(model: ArchitectureModelBase): model is LeggedModel {
  return 'complianceTransverse' in model;
}

/** Width of the orientation range (rad) that holds φ_0, 0 when none does; 2π for a full turn. */
export function rangeWidthAt(ranges: Float64Array, count: number, phi0: number): number {
  for (let k = 0; k < count; k++) {
    const lo = ranges[2 * k]!;
    const hi = ranges[2 * k + 1]!;
    if (hi - lo >= 2 * Math.PI - 1e-12) return 2 * Math.PI;
    const shifted = phi0 + 2 * Math.PI * Math.ceil((lo - phi0) / (2 * Math.PI));
    if (shifted <= hi) return hi - lo;
  }
  return 0;
}

/** What a design brings to the per-pose quantities. */
export interface PoseContext {
  drives: readonly DriveAtJoint[] | null;
  encodersKnown: boolean;
  /** Required end-point speed, m/s. */
  speed: number;
  /** Motor, gearbox and stage per actuator when the study builds drives from catalogues, else null. */
  trains: readonly DriveTrain[] | null;
}

/**
 * The per-pose quantities of the pose last solved (with `status`) into out[0..11] (the orientation
 * entries are left alone): 1/κ, smallest transmission sine, stiffness, lowest frequency, acceleration
 * capability (+∞ without drives), holding effort and joint speed per joint (0 for absent joints),
 * encoder step (0 without encoders). A pose that is not assembled or is singular gets the worst values.
 */
export function poseValues(architecture: PlanarArchitecture<ArchitectureModelBase>, model: ArchitectureModelBase, pose: ArchitecturePose, status: PoseStatus, context: PoseContext, out: Float64Array): void {
  const n = pose.dof;
  if (status !== PoseStatus.Assembled || pose.inverseCondition === 0) {
    for (let k = 0; k < POSE_QUANTITIES; k++) out[k] = SINGULAR_VALUE[k]!;
    for (let i = n; i < 3; i++) { out[Q.effort + i] = 0; out[Q.speed + i] = 0; }
    if (!context.drives) out[Q.accel] = 0;
    if (!(context.drives && context.encodersKnown)) out[Q.step] = Infinity;
    return;
  }
  architecture.poseDynamics(model, pose);
  out[Q.invCond] = pose.inverseCondition;
  let ts = Math.abs(pose.mechanismSine);
  for (let i = 0; i < n; i++) ts = Math.min(ts, Math.abs(pose.legSine[i]!));
  out[Q.sine] = ts;
  out[Q.stiffness] = pose.minStiffness;
  out[Q.frequency] = pose.frequencies[0]!;
  const drives = context.drives;
  const trains = context.trains;
  let accel = Infinity;
  let accelAtSpeed = Infinity;
  for (let i = 0; i < 3; i++) {
    if (i >= n) { out[Q.effort + i] = 0; out[Q.speed + i] = 0; continue; }
    const effort = Math.abs(pose.tauG[i]!);
    const speed = context.speed * pose.inverseJacobianRowNorm[i]!;
    out[Q.effort + i] = effort;
    out[Q.speed + i] = speed;
    if (drives) accel = Math.min(accel, (drives[i]!.peakEffort - effort) / pose.inertiaRowNorm[i]!);
    // Drive trains: acceleration available while moving at the required speed (peak envelope).
    if (trains) accelAtSpeed = Math.min(accelAtSpeed, (jointPeakEffortAtSpeed(trains[i]!, speed) - effort) / pose.inertiaRowNorm[i]!);
  }
  out[Q.accel] = accel;
  out[Q.accelAtSpeed] = accelAtSpeed;
  out[Q.step] = drives && context.encodersKnown ? encoderStepAt(pose, drives) : 0;
}

/** Largest step of P for one count on each joint: σ_max of the translational rows of J diag(δq). */
function encoderStepAt(pose: ArchitecturePose, drives: readonly DriveAtJoint[]): number {
  const n = pose.dof;
  if (n === 2) {
    const d1 = drives[0]!.encoderStep;
    const d2 = drives[1]!.encoderStep;
    return maxSingularValue2(pose.J[0]! * d1, pose.J[1]! * d2, pose.J[2]! * d1, pose.J[3]! * d2);
  }
  let g11 = 0;
  let g12 = 0;
  let g22 = 0;
  for (let i = 0; i < n; i++) {
    const a = pose.J[i]! * drives[i]!.encoderStep;
    const b = pose.J[n + i]! * drives[i]!.encoderStep;
    g11 += a * a;
    g12 += a * b;
    g22 += b * b;
  }
  const half = 0.5 * (g11 + g22);
  return Math.sqrt(half + Math.sqrt(Math.max(half * half - (g11 * g22 - g12 * g12), 0)));
}

/**
 * Worst value of every quantity so far and the point where it was met; also the worst value met
 * farther than `separation` from it (the start of a second search: another local extreme).
 */
class WorstValues {
  readonly value = new Float64Array(QUANTITIES);
  readonly x = new Float64Array(QUANTITIES);
  readonly y = new Float64Array(QUANTITIES);
  readonly second = new Float64Array(QUANTITIES);
  readonly secondX = new Float64Array(QUANTITIES);
  readonly secondY = new Float64Array(QUANTITIES);
  /** Estimated absolute error of each worst value (0 when exact, NaN when not estimated). */
  readonly error = new Float64Array(QUANTITIES);
  separation = 0;
  /** A pose of the region was not assembled or singular: the pose quantities are at their worst. */
  singular = false;
  count = 0;
  reset(): void {
    for (let k = 0; k < QUANTITIES; k++) {
      this.value[k] = SENSE[k]! > 0 ? 0 : Infinity;
      this.second[k] = this.value[k]!;
    }
    this.error.fill(0);
    this.singular = false;
    this.count = 0;
  }
  /**
   * Takes the values of one point. `slack` (relative): a point the searches found must beat the worst
   * by more than this to count (differences of rounding are not another pose's worst case).
   */
  fold(values: Float64Array, x: number, y: number, from: number, to: number, slack = 0): void {
    const sep2 = this.separation * this.separation;
    for (let k = from; k < to; k++) {
      const v = values[k]!;
      const sense = SENSE[k]!;
      if (sense * (v - this.second[k]!) <= 0) continue;
      if (slack > 0 && sense * (v - this.value[k]!) <= slack * Math.abs(this.value[k]!) && sense * (v - this.value[k]!) > 0) continue;
      const far = (x - this.x[k]!) ** 2 + (y - this.y[k]!) ** 2 > sep2;
      if (sense * (v - this.value[k]!) > 0) {
        if (far) {
          this.second[k] = this.value[k]!;
          this.secondX[k] = this.x[k]!;
          this.secondY[k] = this.y[k]!;
        }
        this.value[k] = v;
        this.x[k] = x;
        this.y[k] = y;
      } else if (far) {
        this.second[k] = v;
        this.secondX[k] = x;
        this.secondY[k] = y;
      }
    }
  }
}

/** The region metrics of one evaluator; one per study and worker, it owns every buffer. */
/**
 * Gauss–Legendre orders of the smooth task-region mean (smoothTaskMean): 5 × 5 and 8 × 8 points,
 * exact for polynomials of degree 9 and 15 in each parameter.
 */
const SMOOTH_RULES = [gaussLegendre(5), gaussLegendre(8)] as const;
const SMOOTH_ERROR_FACTOR = 3;
/**
 * Points of the disc's periodic rule along its angle (smoothTaskMean): 16, with the 8 of every other
 * one as the nested coarser rule. On the 3-RRR demo near its baseline (30 designs, against 256 angles
 * × 40 radii) the 16 × 8 rule was within 2e-6 of the value, the 8 × 8 Gauss–Legendre rule 0.1 % off.
 */
const DISC_ANGLES = 16;

export class RegionMetrics {
  private readonly study: Study;
  private readonly architecture: PlanarArchitecture<ArchitectureModelBase>;
  private readonly pose: ArchitecturePose;
  /** The pose of the orientation scans and the task quadrature's points: margins only (ArchitecturePose.marginOnly, set for good). */
  private readonly samplingPose: ArchitecturePose;
  private readonly phi0: number;
  readonly lattice: TaskLattice | null;
  private readonly tolerance: number;
  private readonly worst = new WorstValues();
  private readonly values = new Float64Array(QUANTITIES);
  private readonly ranges = new Float64Array(2 * MAX_RANGES);
  private readonly at = new Float64Array(2);
  /** The two sums of periodicTensorIntegrals (smoothTaskMean on a disc). */
  private readonly smoothSums = new Float64Array(2);
  private readonly quadrature = new RegionQuadrature();
  private readonly search = new ExtremeSearch();
  /** The points the searches of one refineExtremes have solved, with their quantities (searchValue). */
  private readonly memo = new PointMemo(QUANTITIES, MEMO_POINTS);
  private readonly usable: (status: PoseStatus) => number;
  private readonly taskInvCond: Float64Array;
  private readonly taskMargin: Float64Array;
  private readonly taskSecond: Float64Array;
  /** Per task sample: each leg's reach margin over the footprint (MAX_LEGS per sample). */
  private readonly taskLegs: Float64Array;
  /** The second margin written by the last `assembledMargins` (joint ranges and assembly sign). */
  private secondMargin = 0;
  private nodeSecond = new Float64Array(0);
  private nodeLegs = new Float64Array(0);
  /** Footprint of the design in hand, m (scales the reach margin). */
  private footprint = 1;
  private nodeValues = new Float64Array(0);
  private nodeSolved = new Uint8Array(0);
  private nodeRefinable = new Uint8Array(0);
  private model: ArchitectureModelBase | null = null;
  private context: PoseContext = { drives: null, encodersKnown: false, speed: 0, trains: null };
  private jointScale = 1;
  private gci = 0;
  private gciError = 0;
  /** Search state: which quantity, and the region (task, or the workspace grid and its label). */
  private target = 0;
  private grid: MarginGrid | null = null;
  private regionLabel = -1;
  private lastStatus: PoseStatus = PoseStatus.Unreachable;
  /** Built-arm checks (docs/accuracy.md), fed at the region's samples only (not at search points). */
  private readonly builtArm: BuiltArmChecks | null;

  /**
   * `usable`: the usability margin of the pose just solved with the given status (the evaluator's
   * rule, cell checks included); default the rule of usability.ts.
   */
  constructor(
    study: Study,
    architecture: PlanarArchitecture<ArchitectureModelBase>,
    pose: ArchitecturePose,
    phi0: number,
    usable?: (status: PoseStatus) => number,
    builtArm: BuiltArmChecks | null = null,
  ) {
    this.study = study;
    this.orientationScan = { step: study.orientation?.step, tolerance: 1e-7, margin: (p, status) => this.scanRule!.margin(p, status) };
    this.builtArm = builtArm;
    this.usable = usable ?? ((status) => architectureUsableMargin(this.pose, status, this.study, this.jointScale));
    this.architecture = architecture;
    this.pose = pose;
    this.samplingPose = architecture.createPose();
    this.samplingPose.marginOnly = true;
    this.phi0 = phi0;
    this.lattice = study.task.region ? taskLattice(study.task.region, study.evaluation.taskSamples) : null;
    this.taskInvCond = new Float64Array(this.lattice ? this.lattice.x.length : 0);
    this.taskMargin = new Float64Array(this.lattice ? this.lattice.x.length : 0);
    this.taskSecond = new Float64Array(this.lattice ? this.lattice.x.length : 0);
    this.taskLegs = new Float64Array(this.lattice ? MAX_LEGS * this.lattice.x.length : 0);
    // One setting: absent (a fixed area grid) still refines averages and extremes to the default.
    this.tolerance = study.evaluation.tolerance ?? DEFAULT_EVALUATION_TOLERANCE;
  }

  /** Starts a design. */
  begin(model: ArchitectureModelBase, context: PoseContext, jointScale: number): void {
    this.model = model;
    this.context = context;
    this.jointScale = jointScale;
    this.scanRule = new UsabilityRule(this.study, jointScale);
    const tests = marginJointTests(model, jointScale);
    if (tests) this.samplingPose.jointTest.set(tests);
    this.footprint = this.architecture.footprint(model);
    this.worst.reset();
    this.gci = 0;
    this.gciError = 0;
  }

  /** Solves (x, y) at φ_0 and writes the pose quantities into `values`; returns the status. */
  private solveValues(x: number, y: number): PoseStatus {
    const status = this.architecture.solvePose(this.model!, this.pose, x, y, this.phi0);
    poseValues(this.architecture, this.model!, this.pose, status, this.context, this.values);
    if (status !== PoseStatus.Assembled || this.pose.inverseCondition === 0) this.worst.singular = true;
    return status;
  }

  /**
   * The built-arm checks at a region sample just solved (poseValues has run poseDynamics on a regular
   * pose): the same samples as the evaluator's per-pose pass before the region refinement (task
   * samples, or the region's grid nodes), so the accuracy and strength figures keep their points.
   */
  private sampleBuiltArm(status: PoseStatus): void {
    const arm = this.builtArm;
    if (!arm) return;
    if (status !== PoseStatus.Assembled || this.pose.inverseCondition === 0) arm.singular();
    else arm.atPose(this.model!, this.pose);
  }

  /**
   * Orientation quantities at (x, y) into `values` (3-DOF with a requirement): the requirement margin
   * of φ_0 ± Δφ and the width of the usable range holding φ_0. Solves on the sampling pose.
   */
  private orientationValues(x: number, y: number): void {
    const orientation = this.study.orientation!;
    const options = this.orientationScan;
    // The range holding φ_0 decides both values when there is one (orientationRangeAt): walked from φ_0.
    const pose = this.samplingPose;
    const count = orientationRangeAt(this.architecture, this.model!, pose, x, y, orientation.phi0, this.ranges, options)
      ? 1
      : orientationRanges(this.architecture, this.model!, pose, x, y, this.ranges, options);
    this.values[Q.orientationMargin] = Math.max(orientationRequirementMargin(this.ranges, count, orientation.phi0, orientation.range), -Math.PI);
    this.values[Q.orientationRange] = rangeWidthAt(this.ranges, count, orientation.phi0);
  }

  /** Orientation scan settings: the study's step, boundaries to 1e-7 rad by regula falsi on the usability margin (the study's rule). */
  private readonly orientationScan: OrientationScanOptions;
  /** The study's usability rule for the design in hand (the orientation scans' acceptance; the same values as usabilityMargin). */
  private scanRule: UsabilityRule | null = null;

  private get orientationTask(): boolean {
    return this.architecture.dof === 3 && !!this.study.orientation && !!this.lattice;
  }

  /**
   * The task region: every sample's quantities (3-DOF: also the orientation ones), `gci` by the
   * refined quadrature, the extremes refined. Returns the covered fraction (samples in `region` of
   * the grid and usable, with the orientation requirement for 3-DOF), as before.
   */
  taskPass(grid: MarginGrid | null, region: number): number {
    const lattice = this.lattice!;
    const orientation = this.orientationTask;
    let covered = 0;
    let coveredPoints = 0;
    const samples = lattice.x.length;
    this.worst.separation = 1.5 * lattice.spacing;
    const invCond = this.taskInvCond;
    for (let k = 0; k < samples; k++) {
      const x = lattice.x[k]!;
      const y = lattice.y[k]!;
      const status = this.solveValues(x, y);
      this.sampleBuiltArm(status);
      invCond[k] = status === PoseStatus.Unreachable ? 0 : this.pose.inverseCondition;
      this.taskMargin[k] = this.assembledMargins(status);
      this.taskSecond[k] = this.secondMargin;
      this.legMargins(this.pose, this.taskLegs, MAX_LEGS * k);
      let ok = region >= 0 && grid !== null && this.usable(status) >= 0 && grid.regionAt(x, y) === region;
      this.worst.fold(this.values, x, y, 0, POSE_QUANTITIES);
      if (orientation) {
        this.orientationValues(x, y);
        this.worst.fold(this.values, x, y, POSE_QUANTITIES, QUANTITIES);
        if (this.values[Q.orientationMargin]! < 0) ok = false;
      }
      this.worst.count++;
      if (ok) {
        covered += lattice.weight[k]!;
        coveredPoints++;
      }
    }
    this.taskMean(lattice, invCond);
    this.refineExtremes(lattice.spacing);
    return coveredPoints === samples ? 1 : Math.min(covered, 1);
  }

  /**
   * gci over the task region: ∫ 1/κ dA over its assembled part / its area, on the lattice (u, v) with
   * the sub-cell geometry of the assembled part's edge (1/κ may jump there, at a joint limit), refined
   * to the tolerance.
   */
  private taskMean(lattice: TaskLattice, invCond: Float64Array): void {
    const nodes = lattice.nu * lattice.nv;
    const values = this.nodeBuffers(nodes);
    if (this.nodeSecond.length < nodes) this.nodeSecond = new Float64Array(nodes);
    if (this.nodeLegs.length < MAX_LEGS * nodes) this.nodeLegs = new Float64Array(MAX_LEGS * nodes);
    const second = this.nodeSecond;
    const legs = this.nodeLegs;
    const region = lattice.region;
    for (let k = 0; k < nodes; k++) {
      const j = Math.floor(k / lattice.nu);
      const jacobian = taskPoint(region, (k % lattice.nu) / (lattice.nu - 1), j / (lattice.nv - 1), this.at);
      const sample = lattice.sampleOf[k]!;
      let f: number;
      let margin: number;
      if (sample >= 0) {
        f = invCond[sample]!;
        margin = this.taskMargin[sample]!;
        second[k] = this.taskSecond[sample]!;
        for (let leg = 0; leg < MAX_LEGS; leg++) legs[MAX_LEGS * k + leg] = this.taskLegs[MAX_LEGS * sample + leg]!;
      } else {
        const status = this.architecture.solvePose(this.model!, this.samplingPose, this.at[0]!, this.at[1]!, this.phi0);
        f = status === PoseStatus.Unreachable ? 0 : this.samplingPose.inverseCondition;
        margin = this.assembledMargins(status, this.samplingPose);
        second[k] = this.secondMargin;
        this.legMargins(this.samplingPose, legs, MAX_LEGS * k);
      }
      values[3 * k] = margin;
      values[3 * k + 1] = f * jacobian;
      values[3 * k + 2] = 1;
      this.nodeRefinable[k] = 1;
    }
    if (this.smoothTaskMean(lattice, values, second, nodes)) return;
    // Split margins where the lattice holds a node that is not assembled: the reach part known
    // everywhere, the joint and assembly part only where reached (regionQuadrature.ts). A lattice
    // assembled at every node keeps the single margin, the smaller of both, and its values as before.
    let split = false;
    for (let k = 0; k < nodes && !split; k++) if (!(values[3 * k]! >= 0 && second[k]! >= 0)) split = true;
    if (!split) for (let k = 0; k < nodes; k++) values[3 * k] = Math.min(values[3 * k]!, second[k]!);
    // Legs that are not singular at the end of their reach (struts): each leg's reach margin apart,
    // so that a corner of the assembled part between two legs' stroke limits is not cut off.
    const rootEdge = this.reachIsSingular();
    const legCount = split && !rootEdge ? this.legCount() : 0;
    const field: LevelField = {
      split,
      rootEdge,
      legs: legCount,
      sample: (u, v, out) => {
        const jacobian = taskPoint(region, u, v, this.at);
        const status = this.architecture.solvePose(this.model!, this.samplingPose, this.at[0]!, this.at[1]!, this.phi0);
        out[0] = (status === PoseStatus.Unreachable ? 0 : this.samplingPose.inverseCondition) * jacobian;
        out[1] = 1;
        const margin = this.assembledMargins(status, this.samplingPose);
        out[2] = this.secondMargin;
        for (let leg = 0; leg < legCount; leg++) out[3 + leg] = this.samplingPose.legReach[leg]! / this.footprint;
        return split || status === PoseStatus.Unreachable ? margin : Math.min(margin, this.secondMargin);
      },
    };
    // The node lattice's leg margins are MAX_LEGS per node; the quadrature reads `legs` per node.
    if (legCount > 0 && legCount < MAX_LEGS) for (let k = 0; k < nodes; k++) for (let leg = 0; leg < legCount; leg++) legs[legCount * k + leg] = legs[MAX_LEGS * k + leg]!;
    const nodeLattice: NodeLattice = { nu: lattice.nu, nv: lattice.nv, u0: 0, v0: 0, hu: 1 / (lattice.nu - 1), hv: 1 / (lattice.nv - 1), values, refinable: this.nodeRefinable, second, legMargins: legs };
    // The area is exact here, but the error estimate may run a little low at edges: half the tolerance.
    const result = this.quadrature.integrate(nodeLattice, field, 0.5 * this.tolerance, 'all', 200 * nodes);
    this.gci = result.integral / lattice.area;
    this.gciError = result.integralError / lattice.area;
  }

  /** Legs whose reach margins the task quadrature carries apart: every leg of a legged design (at most MAX_LEGS), else 0. */
  private legCount(): number {
    const model = this.model!;
    return isLegged(model) && model.legs.length <= MAX_LEGS ? model.legs.length : 0;
  }

  /** Each leg's reach margin over the footprint at the pose just solved, into out[at …] (MAX_LEGS; +∞ past the legs). */
  private legMargins(pose: ArchitecturePose, out: Float64Array, at: number): void {
    const n = pose.legReach.length;
    for (let leg = 0; leg < MAX_LEGS; leg++) out[at + leg] = leg < n ? pose.legReach[leg]! / this.footprint : Infinity;
  }

  /**
   * Whether every leg of the design is singular at the end of its reach (crank and rod, or slider and
   * rod, in line: 1/κ falls as the square root of the reach margin there); a strut's reach ends at its
   * stroke, where 1/κ need not vanish.
   */
  private reachIsSingular(): boolean {
    const model = this.model!;
    return isLegged(model) && model.legs.every((leg) => leg.singularAtReach);
  }

  /**
   * gci over a task region assembled at every lattice node, by tensor Gauss–Legendre rules of
   * SMOOTH_RULES (gaussRule.ts) in the region's parameters (a disc: the trapezoidal rule of
   * DISC_ANGLES points along its periodic angle): accepted when every rule point is
   * assembled too and three times the two rules' difference (the error estimate of the higher one's
   * value) is within half the tolerance. False (nothing written) otherwise: an edge of the
   * assembled part or a sharp feature inside the region, left to the refined lattice quadrature.
   */
  private smoothTaskMean(lattice: TaskLattice, values: Float64Array, second: Float64Array, nodes: number): boolean {
    for (let k = 0; k < nodes; k++) if (!(values[3 * k]! >= 0 && second[k]! >= 0)) return false;
    const region = lattice.region;
    const integrand = (u: number, v: number): number => {
      const jacobian = taskPoint(region, u, v, this.at);
      const pose = this.samplingPose;
      const status = this.architecture.solvePose(this.model!, pose, this.at[0]!, this.at[1]!, this.phi0);
      if (status !== PoseStatus.Assembled || !(this.assembledMargins(status, pose) >= 0 && this.secondMargin >= 0)) return Number.NaN;
      return pose.inverseCondition * jacobian;
    };
    let high: number;
    let difference: number;
    if (region.shape === 'circle') {
      // Polar parameters, periodic in the angle u: the trapezoidal rule along u, checked against its
      // nested half (the angle's error) and against the lower Gauss–Legendre order in the radius.
      const sums = this.smoothSums;
      if (!periodicTensorIntegrals(DISC_ANGLES, SMOOTH_RULES[1], integrand, sums)) return false;
      high = sums[0]!;
      const halfAngles = sums[1]!;
      if (!periodicTensorIntegrals(DISC_ANGLES, SMOOTH_RULES[0], integrand, sums)) return false;
      difference = Math.abs(high - halfAngles) + Math.abs(high - sums[0]!);
    } else {
      const low = tensorIntegral(SMOOTH_RULES[0], integrand);
      if (low === null) return false;
      const upper = tensorIntegral(SMOOTH_RULES[1], integrand);
      if (upper === null) return false;
      high = upper;
      difference = Math.abs(high - low);
    }
    // The difference of the two rules overstates the error of the higher one for a smooth integrand,
    // but where 1/κ has a kink in the region (an isotropic point, a switch of the smaller singular
    // value) both converge slowly: three times the difference, measured to cover the error of the
    // 8 × 8 rule on random demo designs against the converged quadrature.
    const error = SMOOTH_ERROR_FACTOR * difference;
    if (!(error <= 0.5 * this.tolerance * Math.abs(high))) return false;
    this.gci = high / lattice.area;
    this.gciError = error / lattice.area;
    return true;
  }

  /**
   * Signed margins of "assembled" at the pose just solved, continuous across the boundaries that
   * end it: returns the reach margin over the footprint (known everywhere; < 0 where a leg does not
   * reach) and writes into `secondMargin` the smaller of the joint-range margin over its scale and
   * the mechanism sine times the assembly sign (det A changes sign between assemblies); NaN where a
   * leg does not reach. Both are ≥ 0 exactly where the pose is assembled.
   */
  private assembledMargins(status: PoseStatus, pose: ArchitecturePose = this.pose): number {
    const reach = pose.reachMargin / this.footprint;
    if (status === PoseStatus.Unreachable) {
      this.secondMargin = Number.NaN;
      return Math.min(reach, -1e-300);
    }
    let second = Math.min(pose.jointMargin / this.jointScale, this.model!.assembly * pose.mechanismSine);
    if (status !== PoseStatus.Assembled && second >= 0) second = -1e-300;
    if (status === PoseStatus.Assembled && second < 0) second = 0;
    this.secondMargin = second;
    return Math.max(reach, 0);
  }

  private nodeBuffers(nodes: number): Float64Array {
    if (this.nodeValues.length < 3 * nodes) {
      this.nodeValues = new Float64Array(3 * nodes);
      this.nodeSolved = new Uint8Array(nodes);
      this.nodeRefinable = new Uint8Array(nodes);
    }
    return this.nodeValues;
  }

  /**
   * The usable workspace region `region` of the sampled grid: the quantities at its nodes, `gci` by
   * the sub-cell quadrature refined at the boundary, the extremes refined inside the region.
   */
  workspacePass(grid: MarginGrid, region: number): void {
    if (region < 0) return;
    const { nx, ny, x0, y0, h, labels } = grid;
    const values = this.nodeBuffers(nx * ny);
    const solved = this.nodeSolved;
    this.worst.separation = 1.5 * h;
    solved.fill(0, 0, nx * ny);
    for (let j = 0; j + 1 < ny; j++) {
      for (let i = 0; i + 1 < nx; i++) {
        const k = j * nx + i;
        if (labels[k] !== region && labels[k + 1] !== region && labels[k + nx] !== region && labels[k + nx + 1] !== region) continue;
        for (let c = 0; c < 4; c++) {
          const node = k + (c & 1) + (c >> 1) * nx;
          if (solved[node]) continue;
          solved[node] = 1;
          this.workspaceNode(grid, region, node, x0 + (node % nx) * h, y0 + Math.floor(node / nx) * h);
        }
      }
    }
    for (let k = 0; k < nx * ny; k++) {
      if (solved[k]) continue;
      values[3 * k] = -1;
      values[3 * k + 1] = 0;
      values[3 * k + 2] = 0;
      this.nodeRefinable[k] = 1;
    }
    const field: LevelField = { sample: (x, y, out) => this.workspaceSample(grid, x, y, out) };
    const lattice: NodeLattice = { nu: nx, nv: ny, u0: x0, v0: y0, hu: h, hv: h, values, refinable: this.nodeRefinable };
    const result = this.quadrature.integrate(lattice, field, 0.5 * this.tolerance, 'boundary', 32 * nx * ny);
    this.gci = result.area > 0 ? result.integral / result.area : 0;
    this.gciError = result.area > 0 ? Math.abs(this.gci) * (result.integralError / Math.max(Math.abs(result.integral), 1e-300) + result.areaError / result.area) : 0;
    this.grid = grid;
    this.regionLabel = region;
    this.refineExtremes(h);
    this.grid = null;
  }

  /** One node of a cell touching the region: lattice values; a node of the region also counts for the extremes. */
  private workspaceNode(grid: MarginGrid, region: number, node: number, x: number, y: number): void {
    const values = this.nodeValues;
    const margin = grid.values[node]!;
    const status = this.architecture.solvePose(this.model!, this.pose, x, y, this.phi0);
    const label = grid.labels[node]!;
    values[3 * node] = label === region || margin < 0 ? margin : -margin - 1e-300;
    values[3 * node + 1] = status === PoseStatus.Assembled ? this.pose.inverseCondition : 0;
    values[3 * node + 2] = status === PoseStatus.Unreachable ? 0 : 1;
    this.nodeRefinable[node] = label === region || label < 0 ? 1 : 0;
    if (label !== region) return;
    poseValues(this.architecture, this.model!, this.pose, status, this.context, this.values);
    if (status !== PoseStatus.Assembled || this.pose.inverseCondition === 0) this.worst.singular = true;
    this.sampleBuiltArm(status);
    this.worst.fold(this.values, x, y, 0, POSE_QUANTITIES);
    this.worst.count++;
  }

  /** Usability margin at (x, y), as the grid sampler computes it (window included); 1/κ into out[0]. */
  private workspaceSample(grid: MarginGrid, x: number, y: number, out: Float64Array): number {
    void grid;
    const status = this.architecture.solvePose(this.model!, this.pose, x, y, this.phi0);
    this.lastStatus = status;
    let u = this.usable(status);
    const w = this.study.evaluation.window;
    if (w) {
      const inside = Math.min(x - w.xmin, w.xmax - x, y - w.ymin, w.ymax - y) / this.architecture.footprint(this.model!);
      if (inside < u) u = inside;
    }
    out[0] = status === PoseStatus.Assembled ? this.pose.inverseCondition : 0;
    out[1] = status === PoseStatus.Unreachable ? 0 : 1;
    return u;
  }

  /** The value the current search maximises or minimises at (x, y); NaN outside the region. Folds every quantity. */
  private searchValue(x: number, y: number): number {
    const memo = this.memo;
    const values = this.values;
    let entry = memo.find(x, y);
    if (entry >= 0) {
      // Polled before in this pass (by another quantity's search): its values, folded again as before.
      if (memo.flags[entry] === MEMO_OUTSIDE) return Number.NaN;
      for (let k = 0; k < POSE_QUANTITIES; k++) values[k] = memo.values[QUANTITIES * entry + k]!;
    } else {
      if (this.grid) {
        // workspaceSample solves the pose; its quantities follow from the same solution.
        const inside = this.workspaceSample(this.grid, x, y, values) >= 0 && this.grid.regionAt(x, y) === this.regionLabel;
        if (!inside) {
          entry = memo.add(x, y);
          if (entry >= 0) memo.flags[entry] = MEMO_OUTSIDE;
          return Number.NaN;
        }
        poseValues(this.architecture, this.model!, this.pose, this.lastStatus, this.context, values);
        if (this.lastStatus !== PoseStatus.Assembled || this.pose.inverseCondition === 0) this.worst.singular = true;
      } else {
        this.solveValues(x, y);
      }
      entry = memo.add(x, y);
      if (entry >= 0) {
        memo.flags[entry] = MEMO_POSE;
        for (let k = 0; k < POSE_QUANTITIES; k++) memo.values[QUANTITIES * entry + k] = values[k]!;
      }
    }
    this.worst.fold(values, x, y, 0, POSE_QUANTITIES, ROUNDING);
    if (this.target >= Q.orientationMargin) {
      if (entry >= 0 && memo.flags[entry] === MEMO_ORIENTATION) {
        for (let k = POSE_QUANTITIES; k < QUANTITIES; k++) values[k] = memo.values[QUANTITIES * entry + k]!;
      } else {
        this.orientationValues(x, y);
        if (entry >= 0) {
          memo.flags[entry] = MEMO_ORIENTATION;
          for (let k = POSE_QUANTITIES; k < QUANTITIES; k++) memo.values[QUANTITIES * entry + k] = values[k]!;
        }
      }
      this.worst.fold(values, x, y, POSE_QUANTITIES, QUANTITIES, ROUNDING);
    }
    return values[this.target]!;
  }

  /** Local searches from the worst sample of every quantity that is not already at its worst possible value. */
  private refineExtremes(spacing: number): void {
    const worst = this.worst;
    if (worst.count === 0) return;
    this.memo.clear();
    const region = this.study.task.region;
    // A task disc is searched in polar coordinates (arc length on the rim's circle, radius; the
    // radius clamped to the disc): an extreme on the rim is then followed along it at full steps. In
    // (x, y) each step off the rim was projected back onto it and moved a fraction of a step, so such
    // searches used up their budget (half the 3-RRR demo's pose-quantity searches did).
    const disc = !this.grid && region?.shape === 'circle' ? region : null;
    const objective: ExtremeObjective = disc
      ? {
          value: (a, r) => this.searchValue(disc.centreX + r * Math.cos(a / disc.radius), disc.centreY + r * Math.sin(a / disc.radius)),
          project: (a: number, r: number, out: Float64Array) => {
            out[0] = a;
            out[1] = r < 0 ? 0 : r > disc.radius ? disc.radius : r;
          },
        }
      : {
          value: (x, y) => this.searchValue(x, y),
          ...(this.grid || !region ? {} : { project: (x: number, y: number, out: Float64Array) => projectOntoTask(region, x, y, out) }),
        };
    /** A point of the region in the search's coordinates, into this.at. */
    const start = (x: number, y: number): void => {
      if (!disc) {
        this.at[0] = x;
        this.at[1] = y;
        return;
      }
      this.at[0] = disc.radius * Math.atan2(y - disc.centreY, x - disc.centreX);
      this.at[1] = Math.min(Math.hypot(x - disc.centreX, y - disc.centreY), disc.radius);
    };
    const last = this.orientationTask ? QUANTITIES : POSE_QUANTITIES;
    for (let k = 0; k < last; k++) {
      worst.error[k] = 0;
      if (!this.worth(k)) continue;
      this.target = k;
      const budget = k >= Q.orientationMargin ? ORIENTATION_SEARCH_EVALUATIONS : SEARCH_EVALUATIONS;
      const sense = SENSE[k]!;
      // A second local extreme close in value to the worst one may end up worse once refined.
      const second = worst.second[k]!;
      const secondX = worst.secondX[k]!;
      const secondY = worst.secondY[k]!;
      start(worst.x[k]!, worst.y[k]!);
      const r = this.search.search(objective, sense, this.at[0]!, this.at[1]!, worst.value[k]!, spacing, spacing / 4096, this.tolerance, budget);
      let error = r.error;
      const value = r.value;
      if (k < Q.orientationMargin && Number.isFinite(second) && Math.abs(second - value) <= SECOND_START_GAP * Math.abs(value)) {
        start(secondX, secondY);
        const r2 = this.search.search(objective, sense, this.at[0]!, this.at[1]!, second, spacing, spacing / 4096, this.tolerance, budget);
        if (sense * (r2.value - value) > 0) error = r2.error;
      }
      worst.error[k] = error;
    }
  }

  /** Whether a quantity's worst value can still move: finite, not at a singular pose, of a joint that exists. */
  private worth(k: number): boolean {
    const v = this.worst.value[k]!;
    if (!Number.isFinite(v)) return false;
    if (k < POSE_QUANTITIES && this.worst.singular) return false;
    const n = this.architecture.dof;
    if (k >= Q.effort && k < Q.effort + 3) return k - Q.effort < n && v > 0;
    if (k >= Q.speed && k < Q.speed + 3) return k - Q.speed < n && this.context.speed > 0;
    if (k === Q.accel) return this.context.drives !== null;
    if (k === Q.accelAtSpeed) return this.context.trains !== null;
    if (k === Q.step) return this.context.drives !== null && this.context.encodersKnown;
    return true;
  }

  /** Writes the region metrics and their estimated errors (absolute, SI). */
  finish(model: ArchitectureModelBase, metrics: Float64Array, errors: Float64Array): void {
    const worst = this.worst;
    const n = this.architecture.dof;
    const empty = worst.count === 0;
    const pick = (k: number, fallback: number): number => (empty ? fallback : worst.value[k]!);
    const err = (k: number): number => (empty ? 0 : worst.error[k]!);
    metrics[M.gci] = empty ? 0 : this.gci;
    errors[M.gci] = empty ? 0 : this.gciError;
    metrics[M.minInvCond] = pick(Q.invCond, 0);
    errors[M.minInvCond] = err(Q.invCond);
    const sine = Math.min(pick(Q.sine, 0), 1);
    metrics[M.minTransmission] = Math.asin(sine);
    errors[M.minTransmission] = err(Q.sine) / Math.sqrt(Math.max(1 - sine * sine, 1e-12));
    let stiffnessKnown = true;
    if (isLegged(model)) {
      for (let i = 0; i < n; i++) {
        if (!(model.complianceTransverse[i]! + model.complianceProximalAxial[i]! + model.complianceRodAxial[i]! > 0)) stiffnessKnown = false;
      }
    }
    metrics[M.minStiffness] = stiffnessKnown ? pick(Q.stiffness, 0) : Number.NaN;
    errors[M.minStiffness] = stiffnessKnown ? err(Q.stiffness) : Number.NaN;
    metrics[M.bandwidth] = stiffnessKnown ? pick(Q.frequency, 0) : Number.NaN;
    errors[M.bandwidth] = stiffnessKnown ? err(Q.frequency) : Number.NaN;
    this.finishJoints(metrics, errors, pick, err);
    const drives = this.context.drives;
    metrics[M.accel] = drives ? pick(Q.accel, 0) : Number.NaN;
    errors[M.accel] = drives ? err(Q.accel) : Number.NaN;
    if (this.context.trains) {
      metrics[M.accelAtSpeed] = pick(Q.accelAtSpeed, 0);
      errors[M.accelAtSpeed] = err(Q.accelAtSpeed);
    }
    const encoders = drives !== null && drives.every((d) => d.encoderStep > 0);
    metrics[M.resolution] = encoders ? pick(Q.step, Infinity) : Number.NaN;
    errors[M.resolution] = encoders ? err(Q.step) : Number.NaN;
    if (n === 3 && this.lattice) {
      metrics[M.orientationMargin] = pick(Q.orientationMargin, -Math.PI);
      errors[M.orientationMargin] = err(Q.orientationMargin);
      metrics[M.orientationRange] = pick(Q.orientationRange, 0);
      errors[M.orientationRange] = err(Q.orientationRange);
    }
  }

  /** Per-joint peaks (effort, speed) and their largest. */
  private finishJoints(metrics: Float64Array, errors: Float64Array, pick: (k: number, fallback: number) => number, err: (k: number) => number): void {
    const n = this.architecture.dof;
    const withSpeed = this.study.task.speed > 0;
    let peakEffort = 0;
    let peakEffortError = 0;
    let peakSpeed = 0;
    let peakSpeedError = 0;
    for (let i = 0; i < n; i++) {
      const effort = pick(Q.effort + i, Infinity);
      metrics[M.peakTorqueOf[i]!] = effort;
      errors[M.peakTorqueOf[i]!] = err(Q.effort + i);
      if (effort > peakEffort || i === 0) { peakEffort = effort; peakEffortError = err(Q.effort + i); }
      if (withSpeed) {
        const speed = pick(Q.speed + i, Infinity);
        metrics[M.peakSpeedOf[i]!] = speed;
        errors[M.peakSpeedOf[i]!] = err(Q.speed + i);
        if (speed > peakSpeed || i === 0) { peakSpeed = speed; peakSpeedError = err(Q.speed + i); }
      }
    }
    metrics[M.peakTorque] = peakEffort;
    errors[M.peakTorque] = peakEffortError;
    if (withSpeed) {
      metrics[M.peakSpeed] = peakSpeed;
      errors[M.peakSpeed] = peakSpeedError;
    }
  }
}
