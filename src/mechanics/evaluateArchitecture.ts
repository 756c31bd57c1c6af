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
import { type ArchitectureModelBase, type ArchitecturePose, type DriveAtJoint, type PlanarArchitecture, type PlaneBox } from '../architectures/types.js';
import { ARCHITECTURES } from '../architectures/index.js';
import { PoseStatus } from '../core/pose.js';
import { METRICS, metricIndex } from '../core/metrics.js';
import { MarginGrid } from './grid.js';
import { designVariables, drivesAtJoint, modelInput, resolveDesign, type DesignVariable, type ResolvedDesign } from './designSpace.js';
import { applyConstraints, constraintDefinitions, type ConstraintDefinition, type DesignEvaluation } from './constraints.js';
import { RegionMetrics } from './regionMetrics.js';
import { architectureUsableMargin, UsabilityRule } from './usability.js';
import { AdaptiveArea } from './adaptive.js';
import { coarseCells, evaluationBox, modelJointScale, sampleAdaptive, sampleGrid } from './workspace.js';
import { CycleMetrics } from './cycleMetrics.js';
import { BuiltArmChecks, isLeggedModel } from '../accuracy/builtArm.js';
import { withBearings } from '../accuracy/joints.js';
import { builtArmDesign, cycleLoadPath } from './builtArmDesign.js';
import { trainsOf, writeStaticDriveMetrics } from './driveMetrics.js';
import type { DriveTrain } from '../drives/types.js';
import type { Study } from '../study/types.js';
import { mountModel } from '../cell/mounting.js';
import { CellAnalysis } from './cellMetrics.js';

export { architectureUsableMargin };
export { rangeWidthAt } from './regionMetrics.js';

const M = {
  reachable: metricIndex('reachable_area'),
  workspace: metricIndex('workspace_area'),
  coverage: metricIndex('task_coverage'),
  inscribed: metricIndex('inscribed_radius'),
  footprint: metricIndex('footprint'),
  movingMass: metricIndex('moving_mass'),
} as const;

/** The evaluator of one single-architecture study (any architecture). */
export class ArchitectureEvaluator {
  readonly study: Study;
  readonly architecture: PlanarArchitecture<ArchitectureModelBase>;
  readonly variables: readonly DesignVariable[];
  readonly constraints: readonly ConstraintDefinition[];
  private readonly pose: ArchitecturePose;
  private readonly grid: MarginGrid;
  private readonly task: { x: Float64Array; y: Float64Array; weight: Float64Array } | null;
  /** Region averages and extremes (regionMetrics.ts). */
  private readonly regionMetrics: RegionMetrics;
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
  /**
   * Adaptive areas without a task region: the lattice of evaluation.grid_cells on which the region
   * averages and extremes start (regionMetrics.workspacePass needs a node lattice); else null.
   */
  private readonly regionGrid: MarginGrid | null;
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
    // Adaptive areas without a task region: the region averages and extremes run on a lattice of
    // evaluation.grid_cells (the nodes a fixed grid would use), see analyseWorkspace.
    this.regionGrid = this.adaptive && !study.task.region ? new MarginGrid(study.evaluation.gridCells + 4) : null;
    this.phi0 = this.architecture.dof === 3 ? (study.orientation?.phi0 ?? 0) : 0;
    this.builtArm = new BuiltArmChecks(this.architecture.dof);
    this.regionMetrics = new RegionMetrics(study, this.architecture, this.pose, this.phi0, (status) => this.usable(status), this.builtArm);
    this.task = this.regionMetrics.lattice;
    this.cycle = CycleMetrics.forStudy(study, this.architecture);
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
    this.regionMetrics.begin(model, { drives: this.drives, encodersKnown: this.encodersKnown, speed: this.study.task.speed, trains: this.trains }, this.jointScale);
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
    const errors = new Float64Array(METRICS.length).fill(Number.NaN);
    this.analyseWorkspace(model, metrics, errors);
    this.finishMetrics(model, metrics, errors);
    this.cycle?.write(model, this.drives, metrics, this.trains);
    this.cell?.write(model, this.pose, (status) => this.usable(status), this.grid, this.region, metrics);
    return this.withConstraints(metrics, resolved, errors);
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
    const errors = new Float64Array(METRICS.length).fill(Number.NaN);
    this.regionMetrics.taskPass(null, -1);
    metrics[M.reachable] = workspace[0]!;
    metrics[M.workspace] = workspace[1]!;
    metrics[M.coverage] = workspace[2]!;
    metrics[M.inscribed] = workspace[3]!;
    this.finishMetrics(model, metrics, errors);
    this.cycle?.write(model, this.drives, metrics, this.trains);
    return this.withConstraints(metrics, resolved, errors);
  }

  private withConstraints(metrics: Float64Array, resolved: ResolvedDesign, errors: Float64Array): DesignEvaluation {
    return { ...applyConstraints(this.constraints, this.study, resolved.drives, metrics), errors };
  }

  /** Areas, inscribed radius and coverage, then the region pass; `errors` gets the area estimates (adaptive). */
  private analyseWorkspace(model: ArchitectureModelBase, metrics: Float64Array, errors: Float64Array): void {
    const grid = this.grid;
    const box = evaluationBox(this.study, this.architecture, model, this.phi0);
    this.lastSamples = 0;
    this.region = -1;
    if (!box) {
      metrics[M.reachable] = 0;
      metrics[M.workspace] = 0;
      metrics[M.inscribed] = 0;
      metrics[M.coverage] = this.task ? 0 : Number.NaN;
      if (this.adaptive) {
        errors[M.reachable] = 0;
        errors[M.workspace] = 0;
      }
      if (this.task) this.regionMetrics.taskPass(null, -1);
      return;
    }
    let region: number;
    if (this.adaptive) {
      const sampled = sampleAdaptive(this.study, this.architecture, model, this.pose, grid, box, this.phi0, this.adaptive, this.study.evaluation.tolerance!);
      region = sampled.region;
      metrics[M.reachable] = sampled.reachableArea;
      metrics[M.workspace] = sampled.workspaceArea;
      metrics[M.inscribed] = sampled.inscribedRadius;
      errors[M.reachable] = sampled.reachableAreaError;
      errors[M.workspace] = sampled.workspaceAreaError;
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
      metrics[M.coverage] = this.regionMetrics.taskPass(grid, region);
    } else if (this.adaptive) {
      this.regionLatticePass(model, region, box);
    } else {
      this.regionMetrics.workspacePass(grid, region);
    }
  }

  /**
   * Adaptive areas, no task region: the region averages and extremes need a node lattice, and the
   * adaptive grid is coarse (coarseCells). They run on the lattice of evaluation.grid_cells over the
   * box, sampled as a fixed grid is (the nodes the fixed grid of grid_cells uses, so the extremes start
   * from the same samples and the built-arm checks see the same poses); the areas keep the adaptive
   * values. Costs one fixed-grid sampling per design on this path (correctness first).
   */
  private regionLatticePass(model: ArchitectureModelBase, region: number, box: PlaneBox): void {
    if (region < 0) return;
    const lattice = this.regionGrid!;
    const fineRegion = sampleGrid(this.study, this.architecture, model, this.pose, lattice, box, this.phi0);
    this.lastSamples += lattice.nx * lattice.ny;
    this.regionMetrics.workspacePass(lattice, fineRegion);
  }

  private finishMetrics(model: ArchitectureModelBase, metrics: Float64Array, errors: Float64Array): void {
    this.regionMetrics.finish(model, metrics, errors);
    if (this.trains) writeStaticDriveMetrics(this.trains, this.study.driveTrains?.brakeFactor ?? 1.5, metrics);
    this.builtArm.runCycle(model, this.architecture);
    this.builtArm.write(metrics);
    metrics[M.footprint] = this.architecture.footprint(model);
    metrics[M.movingMass] = this.architecture.movingMass(model);
  }
}
