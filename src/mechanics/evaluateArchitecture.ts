/**
 * The one evaluator of a single-architecture study (every architecture, the five-bar included):
 * grid workspace (workspace.ts), connected usable region, task coverage, per-pose metrics aggregated
 * over the evaluation region on the generic `ArchitecturePose`, duty-cycle metrics where the study
 * has a cycle, and the constraints. A comparison study delegates to one of these per member
 * (evaluate.ts). Made once per study and per worker: it owns every buffer.
 *
 * Conventions, all documented in docs/architectures.md:
 * - joint margins of sliders (m) are divided by the longest rod so that min() over the usability
 *   terms compares dimensionless numbers; the zero level (the usable boundary) is unchanged;
 * - 3-DOF: the workspace is the constant-orientation workspace at φ_0; at every task point the usable
 *   orientation ranges are scanned, `orientation_margin` is the worst margin of φ_0 ± Δφ and a task
 *   point counts as covered only when the requirement holds there;
 * - `accel_capability` and `peak_joint_speed` use J_h (an angular part counts as L·φ̈, L·φ̇);
 *   `encoder_resolution` (formerly `resolution`) is the largest step of P for one encoder count on each joint (orientation excluded).
 */
import { characteristicLengthForPoses } from '../architectures/conditioning.js';
import type { LeggedModel } from '../architectures/legged.js';
import { maxSingularValue2 } from '../architectures/linalg2.js';
import { orientationRanges, orientationRequirementMargin } from '../architectures/orientation.js';
import { type ArchitectureModelBase, type ArchitecturePose, type DriveAtJoint, type PlanarArchitecture } from '../architectures/types.js';
import { ARCHITECTURES } from '../architectures/index.js';
import { PoseStatus } from '../core/pose.js';
import { METRICS, metricIndex } from '../core/metrics.js';
import { MarginGrid } from './grid.js';
import { designVariables, drivesAtJoint, modelInput, resolveDesign, type DesignVariable, type ResolvedDesign } from './designSpace.js';
import { applyConstraints, constraintDefinitions, type ConstraintDefinition, type DesignEvaluation } from './constraints.js';
import { taskSamples } from './taskSamples.js';
import { architectureUsableMargin, UsabilityRule } from './usability.js';
import { AdaptiveArea } from './adaptive.js';
import { coarseCells, evaluationBox, modelJointScale, sampleAdaptive, sampleGrid } from './workspace.js';
import { CycleMetrics } from './cycleMetrics.js';
import { BuiltArmChecks, isLeggedModel } from '../accuracy/builtArm.js';
import { withBearings } from '../accuracy/joints.js';
import { builtArmDesign, cycleLoadPath } from './builtArmDesign.js';
import { trainsOf, writeStaticDriveMetrics } from './driveMetrics.js';
import { jointPeakEffortAtSpeed } from '../drives/envelope.js';
import type { DriveTrain } from '../drives/types.js';
import type { Study } from '../study/types.js';
import { mountModel } from '../cell/mounting.js';
import { CellAnalysis } from './cellMetrics.js';

export { architectureUsableMargin };

const M = {
  reachable: metricIndex('reachable_area'),
  workspace: metricIndex('workspace_area'),
  coverage: metricIndex('task_coverage'),
  inscribed: metricIndex('inscribed_radius'),
  gci: metricIndex('gci'),
  minInvCond: metricIndex('min_inv_condition'),
  minTransmission: metricIndex('min_transmission_angle'),
  minStiffness: metricIndex('min_stiffness'),
  peakTorque: metricIndex('peak_gravity_torque'),
  peakTorqueOf: [metricIndex('peak_gravity_torque_1'), metricIndex('peak_gravity_torque_2'), metricIndex('peak_gravity_torque_3')],
  bandwidth: metricIndex('first_mode_in_plane'),
  accel: metricIndex('accel_capability'),
  peakSpeed: metricIndex('peak_joint_speed'),
  peakSpeedOf: [metricIndex('peak_joint_speed_1'), metricIndex('peak_joint_speed_2'), metricIndex('peak_joint_speed_3')],
  resolution: metricIndex('encoder_resolution'),
  footprint: metricIndex('footprint'),
  movingMass: metricIndex('moving_mass'),
  orientationMargin: metricIndex('orientation_margin'),
  orientationRange: metricIndex('orientation_range'),
} as const;
const M_ACCEL_AT_SPEED = metricIndex('accel_capability_at_speed');

/** Most orientation ranges kept per point (more are dropped by orientationRanges). */
const MAX_RANGES = 16;

/** Running aggregate of the per-pose metrics, per-joint entries for up to three actuators. */
class ArchitectureAggregate {
  weight = 0;
  invCondSum = 0;
  minInvCond = Infinity;
  minTransmissionSine = Infinity;
  minStiffness = Infinity;
  minFrequency = Infinity;
  minAccel = Infinity;
  /** Drive trains: acceleration available while moving at the required speed (peak envelope). */
  minAccelAtSpeed = Infinity;
  maxStep = 0;
  readonly peakEffort = new Float64Array(3);
  readonly peakSpeed = new Float64Array(3);
  minOrientationMargin = Infinity;
  minOrientationRange = Infinity;
  reset(): void {
    this.weight = 0; this.invCondSum = 0; this.minInvCond = Infinity; this.minTransmissionSine = Infinity;
    this.minStiffness = Infinity; this.minFrequency = Infinity; this.minAccel = Infinity; this.maxStep = 0; this.minAccelAtSpeed = Infinity;
    this.peakEffort.fill(0); this.peakSpeed.fill(0);
    this.minOrientationMargin = Infinity; this.minOrientationRange = Infinity;
  }
}

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

/** The evaluator of one single-architecture study (any architecture). */
export class ArchitectureEvaluator {
  readonly study: Study;
  readonly architecture: PlanarArchitecture<ArchitectureModelBase>;
  readonly variables: readonly DesignVariable[];
  readonly constraints: readonly ConstraintDefinition[];
  private readonly pose: ArchitecturePose;
  private readonly grid: MarginGrid;
  private readonly task: { x: Float64Array; y: Float64Array; weight: Float64Array } | null;
  private readonly aggregate = new ArchitectureAggregate();
  private readonly ranges = new Float64Array(2 * MAX_RANGES);
  /** Study orientation φ_0, rad (0 for 2-DOF). */
  private readonly phi0: number;
  /** Joint-margin scale of the design in hand (1 or the longest rod, m). */
  private jointScale = 1;
  private drives: readonly DriveAtJoint[] | null = null;
  /** Motor, gearbox and stage per actuator when the study builds drives from catalogues (docs/drives.md). */
  private trains: readonly DriveTrain[] | null = null;
  /** Every drive of the design in hand has an encoder step (for `resolution`). */
  private encodersKnown = false;
  /** Duty-cycle buffers, or null without a duty cycle. */
  private readonly cycle: CycleMetrics | null;
  /**
   * Adaptive sampling at the study's tolerance, or null for a fixed grid (grid_cells without a
   * tolerance, or a study with a cell section: its checks and metrics work on the fixed grid).
   */
  private readonly adaptive: AdaptiveArea | null;
  /** Estimated absolute errors of the last evaluation's area metrics (m²), by metric name. */
  private errors: Record<string, number> = {};
  /** Points solved for the workspace of the last evaluation. */
  lastSamples = 0;
  /** Cell checks and metrics (docs/cell.md), or null without a cell section. */
  readonly cell: CellAnalysis | null;
  /** Label of the evaluation region of the design in hand (−1 = none). */
  private region = -1;
  /** Tolerances, out-of-plane mode and strength (docs/accuracy.md); inactive without those study sections. */
  private readonly builtArm: BuiltArmChecks;

  constructor(study: Study) {
    if (study.members) throw new Error('ArchitectureEvaluator: a comparison study is evaluated by its members');
    this.study = study;
    this.architecture = ARCHITECTURES[study.architecture];
    this.variables = designVariables(study);
    this.constraints = constraintDefinitions(study);
    this.pose = this.architecture.createPose();
    this.cell = CellAnalysis.forStudy(study, this.architecture);
    const tolerance = this.cell ? undefined : study.evaluation.tolerance;
    this.adaptive = tolerance !== undefined ? new AdaptiveArea() : null;
    this.grid = new MarginGrid((tolerance !== undefined ? coarseCells(tolerance) : study.evaluation.gridCells) + 4);
    this.task = study.task.region ? taskSamples(study.task.region, study.evaluation.taskSamples) : null;
    this.phi0 = this.architecture.dof === 3 ? (study.orientation?.phi0 ?? 0) : 0;
    this.cycle = CycleMetrics.forStudy(study, this.architecture);
    this.builtArm = new BuiltArmChecks(this.architecture.dof);
    if (study.accuracy && study.dutyCycle) this.builtArm.setCycle(cycleLoadPath(study.dutyCycle), this.architecture.createPose());
  }

  resolve(design: ArrayLike<number>): ResolvedDesign {
    return resolveDesign(this.study, this.variables, design);
  }

  /**
   * The immutable model of a resolved design. With `characteristic_length: auto` the model is built
   * twice: once to solve the task points at φ_0, then with the L that maximises their mean 1/κ(J_h),
   * searched between 10⁻³ and 10 footprints (the model's default L when no task point is assembled).
   */
  buildModel(resolved: ResolvedDesign): ArchitectureModelBase {
    const architecture = this.architecture;
    const model = mountModel(this.withJoints(architecture.buildModel(modelInput(this.study, resolved))), resolved.mount);
    if (this.study.orientation?.characteristicLength !== 'auto' || !this.task) return model;
    const task = this.task;
    const points = new Float64Array(3 * task.x.length);
    for (let k = 0; k < task.x.length; k++) {
      points[3 * k] = task.x[k]!;
      points[3 * k + 1] = task.y[k]!;
      points[3 * k + 2] = this.phi0;
    }
    const scale = architecture.footprint(model);
    const best = characteristicLengthForPoses(architecture, model, this.pose, points, 1e-3 * scale, 10 * scale);
    return best ? mountModel(this.withJoints(architecture.buildModel(modelInput(this.study, resolved, best.length))), resolved.mount) : model;
  }

  /** The model with the bearings of the study's joints section (unchanged without it). */
  private withJoints(model: ArchitectureModelBase): ArchitectureModelBase {
    const joints = this.study.accuracy?.joints ?? null;
    return joints && isLeggedModel(model) ? withBearings(model, joints) : model;
  }

  /** Model of a design vector. */
  model(design: ArrayLike<number>): ArchitectureModelBase {
    return this.buildModel(this.resolve(design));
  }

  private prepare(resolved: ResolvedDesign, model: ArchitectureModelBase): void {
    this.drives = drivesAtJoint(this.study, resolved.drives);
    this.trains = trainsOf(resolved.drives);
    this.encodersKnown = this.drives !== null && this.drives.every((d) => d.encoderStep > 0);
    this.jointScale = modelJointScale(model);
    this.rule = new UsabilityRule(this.study, this.jointScale);
    this.cell?.prepare(model, resolved.mount, this.trains);
    this.builtArm.prepare(model, builtArmDesign(this.study, resolved, this.drives));
    this.builtArm.reset();
  }

  /** The usability rule of the design in hand (constants hoisted). */
  private rule: UsabilityRule | null = null;

  private usable(status: PoseStatus): number {
    const u = this.rule!.margin(this.pose, status);
    return this.cell?.restricts ? Math.min(u, this.cell.nodeMargin(this.pose, status)) : u;
  }

  evaluate(design: ArrayLike<number>): DesignEvaluation {
    const resolved = this.resolve(design);
    const model = this.buildModel(resolved);
    this.prepare(resolved, model);
    const metrics = new Float64Array(METRICS.length).fill(Number.NaN);
    this.analyseWorkspace(model, metrics);
    this.finishMetrics(model, metrics);
    this.cycle?.write(model, this.drives, metrics, this.trains);
    this.cell?.write(model, this.pose, (status) => this.usable(status), this.grid, this.region, metrics);
    const result = this.withConstraints(metrics, resolved);
    return this.adaptive ? { ...result, estimatedErrors: this.errors } : result;
  }

  /** As Evaluator.evaluateWithWorkspace: workspace metrics from an earlier evaluation, the rest recomputed. */
  evaluateWithWorkspace(design: ArrayLike<number>, workspace: ArrayLike<number>): DesignEvaluation {
    if (!this.task) throw new Error('evaluateWithWorkspace needs a study with a task region');
    // The cell metrics need the grid: evaluate in full.
    if (this.cell) return this.evaluate(design);
    const resolved = this.resolve(design);
    const model = this.buildModel(resolved);
    this.prepare(resolved, model);
    const metrics = new Float64Array(METRICS.length).fill(Number.NaN);
    this.aggregate.reset();
    this.aggregateTask(model, -1);
    metrics[M.reachable] = workspace[0]!;
    metrics[M.workspace] = workspace[1]!;
    metrics[M.coverage] = workspace[2]!;
    metrics[M.inscribed] = workspace[3]!;
    this.finishMetrics(model, metrics);
    this.cycle?.write(model, this.drives, metrics, this.trains);
    return this.withConstraints(metrics, resolved);
  }

  private withConstraints(metrics: Float64Array, resolved: ResolvedDesign): DesignEvaluation {
    return applyConstraints(this.constraints, this.study, resolved.drives, metrics);
  }

  private analyseWorkspace(model: ArchitectureModelBase, metrics: Float64Array): void {
    const grid = this.grid;
    const box = evaluationBox(this.study, this.architecture, model, this.phi0);
    this.aggregate.reset();
    this.errors = { reachable_area: 0, workspace_area: 0 };
    this.lastSamples = 0;
    this.region = -1;
    if (!box) {
      metrics[M.reachable] = 0;
      metrics[M.workspace] = 0;
      metrics[M.inscribed] = 0;
      metrics[M.coverage] = this.task ? 0 : Number.NaN;
      if (this.task) this.aggregateTask(model, -1);
      return;
    }
    let region: number;
    if (this.adaptive) {
      const sampled = sampleAdaptive(this.study, this.architecture, model, this.pose, grid, box, this.phi0, this.adaptive, this.study.evaluation.tolerance!);
      region = sampled.region;
      metrics[M.reachable] = sampled.reachableArea;
      metrics[M.workspace] = sampled.workspaceArea;
      metrics[M.inscribed] = sampled.inscribedRadius;
      this.errors = { reachable_area: sampled.reachableAreaError, workspace_area: sampled.workspaceAreaError };
      this.lastSamples = sampled.samples;
    } else {
      const cell = this.cell?.restricts ? this.cell : null;
      // With cell checks every node's margin also honours them (docs/cell.md); without, the grid is sampled as before.
      region = cell
        ? sampleGrid(this.study, this.architecture, model, this.pose, grid, box, this.phi0, this.study.evaluation.gridCells, (index, pose, status) => {
            const m = cell.nodeMargin(pose, status);
            if (m < grid.values[index]!) grid.values[index] = m;
          })
        : sampleGrid(this.study, this.architecture, model, this.pose, grid, box, this.phi0);
      metrics[M.reachable] = grid.positiveArea(grid.secondary);
      metrics[M.workspace] = grid.regionArea(region);
      metrics[M.inscribed] = grid.inscribedRadius(region);
      this.lastSamples = grid.nx * grid.ny;
    }
    this.region = region;
    if (this.task) {
      metrics[M.coverage] = this.aggregateTask(model, region);
    } else if (this.adaptive) {
      this.aggregateRegionLattice(model, region, box);
    } else {
      this.aggregateRegionNodes(model, region);
    }
  }

  /**
   * Adaptive sampling, no task region: the per-pose metrics over the usable nodes of the region on
   * the lattice of evaluation.grid_cells over the box (the nodes a fixed grid would use), a node
   * counting as the region's when the coarse grid places it there (MarginGrid.regionAt).
   */
  private aggregateRegionLattice(model: ArchitectureModelBase, region: number, box: { xmin: number; xmax: number; ymin: number; ymax: number }): void {
    if (region < 0) return;
    const cells = this.study.evaluation.gridCells;
    const h = Math.max(box.xmax - box.xmin, box.ymax - box.ymin) / cells;
    const nx = Math.ceil((box.xmax - box.xmin) / h - 1e-9) + 3;
    const ny = Math.ceil((box.ymax - box.ymin) / h - 1e-9) + 3;
    for (let j = 0; j < ny; j++) {
      const y = box.ymin - h + j * h;
      for (let i = 0; i < nx; i++) {
        const x = box.xmin - h + i * h;
        if (this.grid.regionAt(x, y) !== region) continue;
        const status = this.architecture.solvePose(model, this.pose, x, y, this.phi0);
        if (this.usable(status) < 0) continue;
        this.accumulate(model, status, 1);
      }
    }
  }

  /**
   * Per-pose metrics over the task samples at φ_0; returns the covered fraction of the task area.
   * 3-DOF: at every sample also the usable orientation ranges, the requirement margin of φ_0 ± Δφ
   * and the width of the range holding φ_0; a sample counts as covered only when the requirement holds.
   */
  private aggregateTask(model: ArchitectureModelBase, region: number): number {
    const task = this.task!;
    const pose = this.pose;
    const architecture = this.architecture;
    const orientation = architecture.dof === 3 ? this.study.orientation : null;
    const rule = this.rule!;
    const accept = (p: ArchitecturePose, status: PoseStatus): boolean => rule.margin(p, status) >= 0;
    let covered = 0;
    let coveredPoints = 0;
    for (let k = 0; k < task.x.length; k++) {
      const x = task.x[k]!;
      const y = task.y[k]!;
      const status = architecture.solvePose(model, pose, x, y, this.phi0);
      let ok = region >= 0 && this.usable(status) >= 0 && this.grid.regionAt(x, y) === region;
      this.accumulate(model, status, task.weight[k]!);
      if (orientation) {
        const count = orientationRanges(architecture, model, pose, x, y, this.ranges, { step: orientation.step, tolerance: 1e-7, accept });
        const margin = Math.max(orientationRequirementMargin(this.ranges, count, orientation.phi0, orientation.range), -Math.PI);
        const width = rangeWidthAt(this.ranges, count, orientation.phi0);
        const agg = this.aggregate;
        if (margin < agg.minOrientationMargin) agg.minOrientationMargin = margin;
        if (width < agg.minOrientationRange) agg.minOrientationRange = width;
        if (margin < 0) ok = false;
      }
      if (ok) {
        covered += task.weight[k]!;
        coveredPoints++;
      }
    }
    return coveredPoints === task.x.length ? 1 : Math.min(covered, 1);
  }

  private aggregateRegionNodes(model: ArchitectureModelBase, region: number): void {
    if (region < 0) return;
    const grid = this.grid;
    const { nx, ny, x0, y0, h, labels } = grid;
    for (let j = 0; j < ny; j++) {
      for (let i = 0; i < nx; i++) {
        if (labels[j * nx + i] !== region) continue;
        const status = this.architecture.solvePose(model, this.pose, x0 + i * h, y0 + j * h, this.phi0);
        this.accumulate(model, status, 1);
      }
    }
  }

  private accumulate(model: ArchitectureModelBase, status: PoseStatus, weight: number): void {
    const agg = this.aggregate;
    const pose = this.pose;
    const n = pose.dof;
    agg.weight += weight;
    if (status !== PoseStatus.Assembled || pose.inverseCondition === 0) {
      agg.minInvCond = 0;
      agg.minTransmissionSine = 0;
      agg.minStiffness = 0;
      agg.minFrequency = 0;
      agg.minAccel = 0;
      agg.minAccelAtSpeed = 0;
      agg.peakEffort.fill(Infinity);
      agg.peakSpeed.fill(Infinity);
      agg.maxStep = Infinity;
      this.builtArm.singular();
      return;
    }
    this.architecture.poseDynamics(model, pose);
    this.builtArm.atPose(model, pose);
    agg.invCondSum += weight * pose.inverseCondition;
    if (pose.inverseCondition < agg.minInvCond) agg.minInvCond = pose.inverseCondition;
    let ts = Math.abs(pose.mechanismSine);
    for (let i = 0; i < n; i++) {
      const s = Math.abs(pose.legSine[i]!);
      if (s < ts) ts = s;
    }
    if (ts < agg.minTransmissionSine) agg.minTransmissionSine = ts;
    if (pose.minStiffness < agg.minStiffness) agg.minStiffness = pose.minStiffness;
    if (pose.frequencies[0]! < agg.minFrequency) agg.minFrequency = pose.frequencies[0]!;
    const v = this.study.task.speed;
    const drives = this.drives;
    for (let i = 0; i < n; i++) {
      const effort = Math.abs(pose.tauG[i]!);
      if (effort > agg.peakEffort[i]!) agg.peakEffort[i] = effort;
      const speed = v * pose.inverseJacobianRowNorm[i]!;
      if (speed > agg.peakSpeed[i]!) agg.peakSpeed[i] = speed;
      if (drives) {
        const a = (drives[i]!.peakEffort - effort) / pose.inertiaRowNorm[i]!;
        if (a < agg.minAccel) agg.minAccel = a;
      }
      if (this.trains) {
        const a = (jointPeakEffortAtSpeed(this.trains[i]!, speed) - effort) / pose.inertiaRowNorm[i]!;
        if (a < agg.minAccelAtSpeed) agg.minAccelAtSpeed = a;
      }
    }
    if (drives && this.encodersKnown) {
      // Largest step of P for one count on each joint: σ_max of the translational rows of J diag(δq).
      if (n === 2) {
        const d1 = drives[0]!.encoderStep;
        const d2 = drives[1]!.encoderStep;
        const step = maxSingularValue2(pose.J[0]! * d1, pose.J[1]! * d2, pose.J[2]! * d1, pose.J[3]! * d2);
        if (step > agg.maxStep) agg.maxStep = step;
        return;
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
      const step = Math.sqrt(half + Math.sqrt(Math.max(half * half - (g11 * g22 - g12 * g12), 0)));
      if (step > agg.maxStep) agg.maxStep = step;
    }
  }

  private finishMetrics(model: ArchitectureModelBase, metrics: Float64Array): void {
    const agg = this.aggregate;
    const n = this.architecture.dof;
    const empty = agg.weight === 0;
    const worst = (v: number, fallback: number): number => (empty ? fallback : v);
    metrics[M.gci] = empty ? 0 : agg.invCondSum / agg.weight;
    metrics[M.minInvCond] = worst(agg.minInvCond, 0);
    metrics[M.minTransmission] = worst(Math.asin(Math.min(agg.minTransmissionSine, 1)), 0);
    let stiffnessKnown = true;
    if (isLegged(model)) {
      for (let i = 0; i < n; i++) {
        if (!(model.complianceTransverse[i]! + model.complianceProximalAxial[i]! + model.complianceRodAxial[i]! > 0)) stiffnessKnown = false;
      }
    }
    metrics[M.minStiffness] = stiffnessKnown ? worst(agg.minStiffness, 0) : Number.NaN;
    metrics[M.bandwidth] = stiffnessKnown ? worst(agg.minFrequency, 0) : Number.NaN;
    let peakEffort = 0;
    let peakSpeed = 0;
    for (let i = 0; i < n; i++) {
      metrics[M.peakTorqueOf[i]!] = worst(agg.peakEffort[i]!, Infinity);
      peakEffort = Math.max(peakEffort, metrics[M.peakTorqueOf[i]!]!);
      if (this.study.task.speed > 0) {
        metrics[M.peakSpeedOf[i]!] = worst(agg.peakSpeed[i]!, Infinity);
        peakSpeed = Math.max(peakSpeed, metrics[M.peakSpeedOf[i]!]!);
      }
    }
    metrics[M.peakTorque] = peakEffort;
    if (this.study.task.speed > 0) metrics[M.peakSpeed] = peakSpeed;
    metrics[M.accel] = this.drives ? worst(agg.minAccel, 0) : Number.NaN;
    metrics[M.resolution] = this.drives && this.drives.every((d) => d.encoderStep > 0) ? worst(agg.maxStep, Infinity) : Number.NaN;
    this.builtArm.runCycle(model, this.architecture);
    this.builtArm.write(metrics);
    if (this.trains) {
      metrics[M_ACCEL_AT_SPEED] = worst(agg.minAccelAtSpeed, 0);
      writeStaticDriveMetrics(this.trains, this.study.driveTrains?.brakeFactor ?? 1.5, metrics);
    }
    metrics[M.footprint] = this.architecture.footprint(model);
    metrics[M.movingMass] = this.architecture.movingMass(model);
    if (n === 3 && this.task) {
      metrics[M.orientationMargin] = worst(agg.minOrientationMargin, -Math.PI);
      metrics[M.orientationRange] = worst(agg.minOrientationRange, 0);
    }
  }
}
