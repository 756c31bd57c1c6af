/**
 * Evaluation of one candidate design: workspace by grid, connected usable region, task coverage,
 * every per-pose metric aggregated over the evaluation region, and the constraint values.
 *
 * An Evaluator is made once per study and per worker; it owns every buffer, so evaluating a design
 * allocates only its small result object. Pure: no I/O.
 */
import { FiveBarPose, PoseStatus, footprint, poseDynamics, reachableBox, solvePose, type FiveBarModel } from './fivebar.js';
import { MarginGrid } from './grid.js';
import { METRICS, metricIndex } from './metrics.js';
import { buildFiveBarModel, designVariables, drivesAtJoint, memberDesign, movingMass, resolveDesign, type DesignVariable, type ResolvedDesign } from './designSpace.js';
import type { DriveSpec, Study, TaskRegion } from '../study/types.js';
import { ARCHITECTURES } from '../architectures/index.js';
import { fiveBar, wrapFiveBarModel } from '../architectures/fivebar.js';
import type { ArchitectureModelBase, PlanarArchitecture } from '../architectures/types.js';
import { ArchitectureEvaluator } from './evaluateArchitecture.js';
import { CycleSamples, CycleSummary, CycleTrajectory, DutyCycleAnalysis, type CycleDriveLimits } from './dutyCycle.js';

export interface ConstraintDefinition {
  /** Column-safe name, e.g. "task_coverage" or "drive_torque_1". */
  readonly name: string;
  readonly metric: string;
  readonly metricIndex: number;
  readonly min?: number;
  readonly max?: number;
  /** Where the bound comes from, for messages. */
  readonly origin: 'study' | 'drive';
  /** Drive limits: the bound follows from the design's drive on this actuator (0-based; 0 to 2). */
  readonly driveLimit?: { readonly kind: 'torque' | 'speed' | 'cyclePeakTorque' | 'cycleRmsTorque'; readonly actuator: number };
}

/**
 * Bounds of a constraint for a design with the given drives (one per actuator). Drive limits are at
 * the joint: N·m and rad/s for cranks, N and m/s for sliders (see src/study/drives.ts). For a
 * comparison study the drive bounds depend on the member: pass the member study.
 */
export function constraintBounds(
  def: ConstraintDefinition,
  study: Pick<Study, 'torqueSafetyFactor'> & Partial<Pick<Study, 'architecture' | 'members'>>,
  drives: readonly DriveSpec[] | null,
): { min?: number; max?: number } {
  if (!def.driveLimit) return { ...(def.min !== undefined ? { min: def.min } : {}), ...(def.max !== undefined ? { max: def.max } : {}) };
  if (!drives || study.members) return {};
  const drive = drives[def.driveLimit.actuator];
  if (!drive) return {};
  if (study.architecture !== undefined && study.architecture !== 'five-bar') {
    const atJoint = drivesAtJoint(study as Study, drives)![def.driveLimit.actuator]!;
    switch (def.driveLimit.kind) {
      case 'torque':
        return { max: atJoint.ratedEffort / study.torqueSafetyFactor };
      case 'cyclePeakTorque':
        return { max: atJoint.peakEffort };
      case 'cycleRmsTorque':
        return { max: atJoint.ratedEffort };
      default:
        return { max: atJoint.maxSpeed };
    }
  }
  switch (def.driveLimit.kind) {
    case 'torque':
      return { max: (drive.efficiency * drive.gearRatio * drive.ratedTorque) / study.torqueSafetyFactor };
    case 'cyclePeakTorque':
      return { max: drive.efficiency * drive.gearRatio * drive.peakTorque };
    case 'cycleRmsTorque':
      return { max: drive.efficiency * drive.gearRatio * drive.ratedTorque };
    default:
      return { max: drive.maxSpeed / drive.gearRatio };
  }
}

export interface DesignEvaluation {
  /** Bounds used per constraint (NaN = none); drive limits follow the design's drives. */
  readonly constraintMin: Float64Array;
  readonly constraintMax: Float64Array;
  /** Metric values in METRICS order (SI). NaN = not available for this study (e.g. no drives given). */
  readonly metrics: Float64Array;
  /** Signed normalised margin per constraint: ≥ 0 satisfied, < 0 violated (by that fraction of the bound). */
  readonly margins: Float64Array;
  /** Total normalised violation Σ max(0, −margin); 0 when feasible. */
  readonly violation: number;
  readonly feasible: boolean;
}

/** Constraint list of a study: its own constraints plus the drive limits of mechanics §6. */
export function constraintDefinitions(study: Study): ConstraintDefinition[] {
  if (study.members) return comparisonConstraints(study.members.map(constraintDefinitions)).union;
  const out: ConstraintDefinition[] = [];
  const seen = new Map<string, number>();
  for (const c of study.constraints) {
    const count = seen.get(c.metric) ?? 0;
    seen.set(c.metric, count + 1);
    const name = count === 0 ? c.metric : `${c.metric}_${count + 1}`;
    const def: { -readonly [K in keyof ConstraintDefinition]: ConstraintDefinition[K] } = {
      name, metric: c.metric, metricIndex: metricIndex(c.metric), origin: 'study',
    };
    if (c.min !== undefined) def.min = c.min;
    if (c.max !== undefined) def.max = c.max;
    out.push(def);
  }
  if (study.architecture !== 'five-bar' && (study.drives || study.driveChoice.kind !== 'fixed')) {
    // Drive limits over the n actuators, at the joint (N·m or N; rad/s or m/s).
    const n = ARCHITECTURES[study.architecture].dof;
    for (let i = 0; i < n; i++) {
      const k = i + 1;
      out.push({ name: `drive_torque_${k}`, metric: `peak_gravity_torque_${k}`, metricIndex: metricIndex(`peak_gravity_torque_${k}`), origin: 'drive', driveLimit: { kind: 'torque', actuator: i } });
      if (study.task.speed > 0) {
        out.push({ name: `drive_speed_${k}`, metric: `peak_joint_speed_${k}`, metricIndex: metricIndex(`peak_joint_speed_${k}`), origin: 'drive', driveLimit: { kind: 'speed', actuator: i } });
      }
    }
    if (study.task.acceleration > 0) {
      out.push({ name: 'drive_acceleration', metric: 'accel_capability', metricIndex: metricIndex('accel_capability'), min: study.task.acceleration, origin: 'drive' });
    }
    out.push(...cycleConstraintDefinitions(study, n));
    return out;
  }
  if (study.drives || study.driveChoice.kind !== 'fixed') {
    for (const i of [0, 1] as const) {
      const n = i + 1;
      out.push({
        name: `drive_torque_${n}`, metric: `peak_gravity_torque_${n}`, metricIndex: metricIndex(`peak_gravity_torque_${n}`),
        origin: 'drive', driveLimit: { kind: 'torque', actuator: i },
      });
      if (study.task.speed > 0) {
        out.push({
          name: `drive_speed_${n}`, metric: `peak_joint_speed_${n}`, metricIndex: metricIndex(`peak_joint_speed_${n}`),
          origin: 'drive', driveLimit: { kind: 'speed', actuator: i },
        });
      }
    }
    if (study.task.acceleration > 0) {
      out.push({ name: 'drive_acceleration', metric: 'accel_capability', metricIndex: metricIndex('accel_capability'), min: study.task.acceleration, origin: 'drive' });
    }
    out.push(...cycleConstraintDefinitions(study, 2));
  }
  return out;
}

/**
 * Duty-cycle drive limits of `n` actuators (docs/duty-cycle.md): peak ≤ η N τ_peak, RMS ≤ η N τ_rated,
 * speed ≤ ω_max/N at the joint (N·m, rad/s; N, m/s for sliders), and min_cycle_time ≤ 1/rate.
 */
function cycleConstraintDefinitions(study: Study, n: number): ConstraintDefinition[] {
  const out: ConstraintDefinition[] = [];
  if (!study.dutyCycle) return out;
  for (let i = 0; i < n; i++) {
    const k = i + 1;
    out.push(
      { name: `cycle_torque_${k}`, metric: `cycle_peak_torque_${k}`, metricIndex: metricIndex(`cycle_peak_torque_${k}`), origin: 'drive', driveLimit: { kind: 'cyclePeakTorque', actuator: i } },
      { name: `cycle_rms_${k}`, metric: `cycle_rms_torque_${k}`, metricIndex: metricIndex(`cycle_rms_torque_${k}`), origin: 'drive', driveLimit: { kind: 'cycleRmsTorque', actuator: i } },
      { name: `cycle_speed_${k}`, metric: `cycle_peak_speed_${k}`, metricIndex: metricIndex(`cycle_peak_speed_${k}`), origin: 'drive', driveLimit: { kind: 'speed', actuator: i } },
    );
  }
  if (study.dutyCycle.requiredRate) {
    out.push({ name: 'cycle_rate', metric: 'min_cycle_time', metricIndex: metricIndex('min_cycle_time'), max: 1 / study.dutyCycle.requiredRate, origin: 'drive' });
  }
  return out;
}

/**
 * Constraint columns of a comparison study: the union of the members' constraints by name, in order
 * of first appearance, and per member the column of each of its constraints.
 */
export function comparisonConstraints(perMember: readonly (readonly ConstraintDefinition[])[]): { union: ConstraintDefinition[]; columns: number[][] } {
  const union: ConstraintDefinition[] = [];
  const byName = new Map<string, number>();
  const columns = perMember.map((list) =>
    list.map((c) => {
      let k = byName.get(c.name);
      if (k === undefined) {
        k = union.length;
        byName.set(c.name, k);
        union.push(c);
      }
      return k;
    }),
  );
  return { union, columns };
}

/** Violations beyond this many times the bound count as this much (keeps infinite metrics comparable). */
const MAX_NORMALISED_VIOLATION = 1e6;

/** A design's metrics with every constraint's bounds (for its drives), signed margin and the total violation. */
export function applyConstraints(
  constraints: readonly ConstraintDefinition[],
  study: Parameters<typeof constraintBounds>[1],
  drives: readonly DriveSpec[] | null,
  metrics: Float64Array,
): DesignEvaluation {
  const n = constraints.length;
  const margins = new Float64Array(n);
  const constraintMin = new Float64Array(n).fill(Number.NaN);
  const constraintMax = new Float64Array(n).fill(Number.NaN);
  let violation = 0;
  constraints.forEach((c, k) => {
    const bounds = constraintBounds(c, study, drives);
    if (bounds.min !== undefined) constraintMin[k] = bounds.min;
    if (bounds.max !== undefined) constraintMax[k] = bounds.max;
    const margin = constraintMargin(bounds, metrics[c.metricIndex]!);
    margins[k] = margin;
    if (margin < 0) violation -= margin;
  });
  return { metrics, margins, constraintMin, constraintMax, violation, feasible: violation === 0 };
}

export function constraintMargin(bounds: { min?: number; max?: number }, value: number): number {
  if (Number.isNaN(value)) return -MAX_NORMALISED_VIOLATION;
  let margin = Infinity;
  if (bounds.min !== undefined) margin = Math.min(margin, (value - bounds.min) / (Math.abs(bounds.min) || 1));
  if (bounds.max !== undefined) margin = Math.min(margin, (bounds.max - value) / (Math.abs(bounds.max) || 1));
  return Math.max(margin, -MAX_NORMALISED_VIOLATION);
}

/** Task-region sample points with area weights (summing to 1). Edges and corners are included. */
export function taskSamples(region: TaskRegion, intervals: number): { x: Float64Array; y: Float64Array; weight: Float64Array } {
  const xs: number[] = [];
  const ys: number[] = [];
  const ws: number[] = [];
  if (region.shape === 'rectangle') {
    const long = Math.max(region.width, region.height);
    const nxIntervals = Math.max(2, Math.round((intervals * region.width) / long));
    const nyIntervals = Math.max(2, Math.round((intervals * region.height) / long));
    for (let j = 0; j <= nyIntervals; j++) {
      for (let i = 0; i <= nxIntervals; i++) {
        xs.push(region.centreX - region.width / 2 + (region.width * i) / nxIntervals);
        ys.push(region.centreY - region.height / 2 + (region.height * j) / nyIntervals);
        // Trapezoid rule weights.
        ws.push((i === 0 || i === nxIntervals ? 0.5 : 1) * (j === 0 || j === nyIntervals ? 0.5 : 1));
      }
    }
  } else {
    const rings = Math.max(2, Math.round(intervals / 2));
    const dr = region.radius / rings;
    xs.push(region.centreX);
    ys.push(region.centreY);
    ws.push(Math.PI * (dr / 2) ** 2);
    for (let k = 1; k <= rings; k++) {
      const r = k * dr;
      const count = 6 * k;
      const dphi = (2 * Math.PI) / count;
      const radialWidth = k === rings ? dr / 2 : dr;
      const ringRadius = k === rings ? r - dr / 4 : r;
      for (let m = 0; m < count; m++) {
        xs.push(region.centreX + r * Math.cos(m * dphi));
        ys.push(region.centreY + r * Math.sin(m * dphi));
        ws.push(ringRadius * radialWidth * dphi);
      }
    }
  }
  const total = ws.reduce((a, b) => a + b, 0);
  return { x: Float64Array.from(xs), y: Float64Array.from(ys), weight: Float64Array.from(ws, (w) => w / total) };
}

/** Metrics that `evaluateWithWorkspace` takes from an earlier evaluation, in its argument order. */
export const WORKSPACE_METRICS = ['reachable_area', 'workspace_area', 'task_coverage', 'inscribed_radius'] as const;

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
  peakTorque1: metricIndex('peak_gravity_torque_1'),
  peakTorque2: metricIndex('peak_gravity_torque_2'),
  bandwidth: metricIndex('bandwidth'),
  accel: metricIndex('accel_capability'),
  peakSpeed: metricIndex('peak_joint_speed'),
  peakSpeed1: metricIndex('peak_joint_speed_1'),
  peakSpeed2: metricIndex('peak_joint_speed_2'),
  resolution: metricIndex('resolution'),
  footprint: metricIndex('footprint'),
  movingMass: metricIndex('moving_mass'),
  cyclePeakTorque: metricIndex('cycle_peak_torque'),
  cyclePeakTorque1: metricIndex('cycle_peak_torque_1'),
  cyclePeakTorque2: metricIndex('cycle_peak_torque_2'),
  cycleRmsTorque: metricIndex('cycle_rms_torque'),
  cycleRmsTorque1: metricIndex('cycle_rms_torque_1'),
  cycleRmsTorque2: metricIndex('cycle_rms_torque_2'),
  cyclePeakSpeed: metricIndex('cycle_peak_speed'),
  cyclePeakSpeed1: metricIndex('cycle_peak_speed_1'),
  cyclePeakSpeed2: metricIndex('cycle_peak_speed_2'),
  cyclePeakPower: metricIndex('cycle_peak_power'),
  cyclePeakPower1: metricIndex('cycle_peak_power_1'),
  cyclePeakPower2: metricIndex('cycle_peak_power_2'),
  minCycleTime: metricIndex('min_cycle_time'),
} as const;

/** Running aggregate of the per-pose metrics over the evaluation region. */
class RegionAggregate {
  weight = 0;
  invCondSum = 0;
  minInvCond = Infinity;
  minTransmissionSine = Infinity;
  minStiffness = Infinity;
  peakTorque1 = 0;
  peakTorque2 = 0;
  minFrequency = Infinity;
  minAccel = Infinity;
  peakSpeed1 = 0;
  peakSpeed2 = 0;
  maxStep = 0;
  count = 0;
  unassembled = 0;
  reset(): void {
    this.weight = 0; this.invCondSum = 0; this.minInvCond = Infinity; this.minTransmissionSine = Infinity;
    this.minStiffness = Infinity; this.peakTorque1 = 0; this.peakTorque2 = 0; this.minFrequency = Infinity;
    this.minAccel = Infinity; this.peakSpeed1 = 0; this.peakSpeed2 = 0; this.maxStep = 0; this.count = 0; this.unassembled = 0;
  }
}

/**
 * Usability margin of a solved pose (dimensionless; ≥ 0 when usable): the smallest of
 * 1/κ − c_min, |s_i| − sin μ_min, σ_a det A − sin μ_min and the joint-limit margin (rad);
 * −1 when a leg cannot reach. Its zero level is the boundary of the usable workspace.
 */
export function usableMargin(pose: FiveBarPose, status: PoseStatus, study: Pick<Study, 'evaluation' | 'assemblyMode'>): number {
  if (status === PoseStatus.Unreachable) return -1;
  const e = study.evaluation;
  const sinMin = Math.sin(e.minTransmissionAngle);
  const assembly = study.assemblyMode === '+' ? 1 : -1;
  let m = pose.inverseCondition - e.minInverseCondition;
  const t1 = Math.abs(pose.s1) - sinMin;
  const t2 = Math.abs(pose.s2) - sinMin;
  const t3 = assembly * pose.detA - sinMin;
  if (t1 < m) m = t1;
  if (t2 < m) m = t2;
  if (t3 < m) m = t3;
  if (pose.jointMargin < m) m = pose.jointMargin;
  // Zero-threshold settings still exclude exact singularities and the wrong assembly mode.
  if (m === 0 && (pose.inverseCondition === 0 || assembly * pose.detA <= 0)) m = -1e-12;
  return m;
}

/** The five-bar's own evaluation path (src/mechanics/fivebar.ts engine); `Evaluator` picks it for five-bar studies. */
export class FiveBarEvaluator {
  readonly study: Study;
  readonly variables: readonly DesignVariable[];
  readonly constraints: readonly ConstraintDefinition[];
  private readonly grid: MarginGrid;
  private readonly pose = new FiveBarPose();
  private readonly task: { x: Float64Array; y: Float64Array; weight: Float64Array } | null;
  private readonly aggregate = new RegionAggregate();
  /** Joint torque limits for acceleration (η N τ_peak), N·m, and joint step per encoder count, rad, of the design in hand. */
  private peakJointTorque: readonly [number, number] | null = null;
  private encoderStep: readonly [number, number] | null = null;
  /** Duty-cycle analysis (buffers for the study's cycle), or null without a duty cycle. */
  private readonly cycle: DutyCycleAnalysis | null;
  private readonly cycleSummary = new CycleSummary();

  constructor(study: Study) {
    this.study = study;
    this.variables = designVariables(study);
    this.constraints = constraintDefinitions(study);
    this.grid = new MarginGrid(study.evaluation.gridCells + 4);
    this.task = study.task.region ? taskSamples(study.task.region, study.evaluation.taskSamples) : null;
    const duty = study.dutyCycle;
    this.cycle = duty ? new DutyCycleAnalysis(new CycleSamples(new CycleTrajectory(duty.path), duty.samples), study.friction ?? null, fiveBar as unknown as PlanarArchitecture<ArchitectureModelBase>) : null;
  }

  /** Model of a design vector. */
  model(design: ArrayLike<number>): FiveBarModel {
    return buildFiveBarModel(this.study, resolveDesign(this.study, this.variables, design));
  }

  /** Geometry, working mode and drives of a design vector. */
  resolve(design: ArrayLike<number>): ResolvedDesign {
    return resolveDesign(this.study, this.variables, design);
  }

  private useDrives(pair: readonly DriveSpec[] | null): void {
    const drives = pair ? ([pair[0]!, pair[1]!] as const) : null;
    this.peakJointTorque = drives
      ? [drives[0].efficiency * drives[0].gearRatio * drives[0].peakTorque, drives[1].efficiency * drives[1].gearRatio * drives[1].peakTorque]
      : null;
    this.encoderStep =
      drives && drives[0].encoderCounts > 0 && drives[1].encoderCounts > 0
        ? [(2 * Math.PI) / (drives[0].encoderCounts * drives[0].gearRatio), (2 * Math.PI) / (drives[1].encoderCounts * drives[1].gearRatio)]
        : null;
  }

  /** Usability margin of the pose last solved: ≥ 0 when usable (see usableMargin). */
  private usableMargin(status: PoseStatus): number {
    return usableMargin(this.pose, status, this.study);
  }

  evaluate(design: ArrayLike<number>): DesignEvaluation {
    const resolved = this.resolve(design);
    const model = buildFiveBarModel(this.study, resolved);
    this.useDrives(resolved.drives);
    const metrics = new Float64Array(METRICS.length).fill(Number.NaN);
    this.analyseWorkspace(model, metrics);
    this.finishMetrics(model, resolved, metrics);
    this.cycleMetrics(model, resolved, metrics);
    return this.withConstraints(metrics, resolved);
  }

  /**
   * Evaluate with the workspace metrics (reachable_area, workspace_area, task_coverage,
   * inscribed_radius, in that order) taken from an earlier evaluation of the same geometry: only the
   * per-pose metrics over the task region are recomputed. Valid when nothing that shapes the
   * workspace changed (same `workspaceSettingsHash`), for studies with a task region. Gives exactly
   * the numbers of a full evaluation.
   */
  evaluateWithWorkspace(design: ArrayLike<number>, workspace: ArrayLike<number>): DesignEvaluation {
    if (!this.task) throw new Error('evaluateWithWorkspace needs a study with a task region');
    const resolved = this.resolve(design);
    const model = buildFiveBarModel(this.study, resolved);
    this.useDrives(resolved.drives);
    const metrics = new Float64Array(METRICS.length).fill(Number.NaN);
    this.aggregate.reset();
    this.aggregateTask(model, -1);
    metrics[M.reachable] = workspace[0]!;
    metrics[M.workspace] = workspace[1]!;
    metrics[M.coverage] = workspace[2]!;
    metrics[M.inscribed] = workspace[3]!;
    this.finishMetrics(model, resolved, metrics);
    this.cycleMetrics(model, resolved, metrics);
    return this.withConstraints(metrics, resolved);
  }

  private withConstraints(metrics: Float64Array, resolved: ResolvedDesign): DesignEvaluation {
    return applyConstraints(this.constraints, this.study, resolved.drives, metrics);
  }

  private analyseWorkspace(model: FiveBarModel, metrics: Float64Array): void {
    const grid = this.grid;
    const pose = this.pose;
    const box = reachableBox(model);
    const agg = this.aggregate;
    agg.reset();
    if (!box) {
      metrics[M.reachable] = 0;
      metrics[M.workspace] = 0;
      metrics[M.inscribed] = 0;
      metrics[M.coverage] = this.task ? 0 : Number.NaN;
      if (this.task) this.aggregateTask(model, -1);
      return;
    }
    grid.layout(box.xmin, box.xmax, box.ymin, box.ymax, this.study.evaluation.gridCells);
    const { nx, ny, x0, y0, h, values, secondary: reach } = grid;
    // One sampling pass: reach margin (m) for the reachable area, usable margin for the workspace.
    for (let j = 0; j < ny; j++) {
      const y = y0 + j * h;
      for (let i = 0; i < nx; i++) {
        const status = solvePose(model, pose, x0 + i * h, y);
        reach[j * nx + i] = pose.reachMargin;
        values[j * nx + i] = this.usableMargin(status);
      }
    }
    metrics[M.reachable] = grid.positiveArea(reach);
    grid.labelRegions();
    const taskRegion = this.study.task.region;
    const region = taskRegion
      ? grid.workspaceRegion({ x: taskRegion.centreX, y: taskRegion.centreY }, this.usableMargin(solvePose(model, pose, taskRegion.centreX, taskRegion.centreY)) >= 0)
      : grid.workspaceRegion(null, false);
    metrics[M.workspace] = grid.regionArea(region);
    metrics[M.inscribed] = grid.inscribedRadius(region);
    if (this.task) {
      metrics[M.coverage] = this.aggregateTask(model, region);
    } else {
      this.aggregateRegionNodes(model, region);
    }
  }

  /** Per-pose metrics over the task samples; returns the covered fraction of the task area. */
  private aggregateTask(model: FiveBarModel, region: number): number {
    const task = this.task!;
    const pose = this.pose;
    let covered = 0;
    let coveredPoints = 0;
    for (let k = 0; k < task.x.length; k++) {
      const x = task.x[k]!;
      const y = task.y[k]!;
      const status = solvePose(model, pose, x, y);
      if (region >= 0 && this.usableMargin(status) >= 0 && this.grid.regionAt(x, y) === region) {
        covered += task.weight[k]!;
        coveredPoints++;
      }
      this.accumulate(model, status, task.weight[k]!);
    }
    // Every sample covered is exactly full coverage (the weights' sum carries rounding error).
    return coveredPoints === task.x.length ? 1 : Math.min(covered, 1);
  }

  /** Per-pose metrics over the nodes of the usable region (no task region given). */
  private aggregateRegionNodes(model: FiveBarModel, region: number): void {
    if (region < 0) return;
    const grid = this.grid;
    const { nx, ny, x0, y0, h, labels } = grid;
    for (let j = 0; j < ny; j++) {
      for (let i = 0; i < nx; i++) {
        if (labels[j * nx + i] !== region) continue;
        const status = solvePose(model, this.pose, x0 + i * h, y0 + j * h);
        this.accumulate(model, status, 1);
      }
    }
  }

  private accumulate(model: FiveBarModel, status: PoseStatus, weight: number): void {
    const agg = this.aggregate;
    const pose = this.pose;
    agg.weight += weight;
    if (status !== PoseStatus.Assembled || pose.inverseCondition === 0) {
      // Not a pose the mechanism can hold: the worst limit of every per-pose metric.
      agg.unassembled++;
      agg.minInvCond = 0;
      agg.minTransmissionSine = 0;
      agg.minStiffness = 0;
      agg.minFrequency = 0;
      agg.minAccel = 0;
      agg.peakTorque1 = Infinity;
      agg.peakTorque2 = Infinity;
      agg.peakSpeed1 = Infinity;
      agg.peakSpeed2 = Infinity;
      agg.maxStep = Infinity;
      return;
    }
    agg.count++;
    poseDynamics(model, pose);
    agg.invCondSum += weight * pose.inverseCondition;
    if (pose.inverseCondition < agg.minInvCond) agg.minInvCond = pose.inverseCondition;
    const ts = Math.min(Math.abs(pose.s1), Math.abs(pose.s2), Math.abs(pose.detA));
    if (ts < agg.minTransmissionSine) agg.minTransmissionSine = ts;
    if (pose.minStiffness < agg.minStiffness) agg.minStiffness = pose.minStiffness;
    if (pose.frequencyLow < agg.minFrequency) agg.minFrequency = pose.frequencyLow;
    const t1 = Math.abs(pose.tauG1);
    const t2 = Math.abs(pose.tauG2);
    if (t1 > agg.peakTorque1) agg.peakTorque1 = t1;
    if (t2 > agg.peakTorque2) agg.peakTorque2 = t2;
    if (this.peakJointTorque) {
      const a1 = (this.peakJointTorque[0] - t1) / pose.inertiaRowNorm1;
      const a2 = (this.peakJointTorque[1] - t2) / pose.inertiaRowNorm2;
      const a = a1 < a2 ? a1 : a2;
      if (a < agg.minAccel) agg.minAccel = a;
    }
    const v = this.study.task.speed;
    if (v * pose.inverseJacobianRowNorm1 > agg.peakSpeed1) agg.peakSpeed1 = v * pose.inverseJacobianRowNorm1;
    if (v * pose.inverseJacobianRowNorm2 > agg.peakSpeed2) agg.peakSpeed2 = v * pose.inverseJacobianRowNorm2;
    if (this.encoderStep) {
      // Largest end-point step for one count on each joint: σ_max(J diag(δθ_1, δθ_2)).
      const d1 = this.encoderStep[0];
      const d2 = this.encoderStep[1];
      const a = pose.j11 * d1, b = pose.j12 * d2, c = pose.j21 * d1, d = pose.j22 * d2;
      const frob = a * a + b * b + c * c + d * d;
      const det = a * d - b * c;
      const step = Math.sqrt((frob + Math.sqrt(Math.max(frob * frob - 4 * det * det, 0))) / 2);
      if (step > agg.maxStep) agg.maxStep = step;
    }
  }

  /**
   * Duty-cycle metrics (docs/duty-cycle.md): figures at the study's cycle time (or 1/required rate,
   * else the steps' own times) and, with drives, the shortest cycle time. A cycle that leaves the
   * assembled, non-singular poses gives +∞ for every figure. Left NaN without a duty cycle.
   */
  private cycleMetrics(model: FiveBarModel, resolved: ResolvedDesign, metrics: Float64Array): void {
    const cycle = this.cycle;
    const duty = this.study.dutyCycle;
    if (!cycle || !duty) return;
    cycle.run(wrapFiveBarModel(model, 0));
    const drives = resolved.drives ? ([resolved.drives[0]!, resolved.drives[1]!] as const) : null;
    const limits: CycleDriveLimits | null = drives
      ? {
          peakTorque: [drives[0].efficiency * drives[0].gearRatio * drives[0].peakTorque, drives[1].efficiency * drives[1].gearRatio * drives[1].peakTorque],
          ratedTorque: [drives[0].efficiency * drives[0].gearRatio * drives[0].ratedTorque, drives[1].efficiency * drives[1].gearRatio * drives[1].ratedTorque],
          speed: [drives[0].maxSpeed / drives[0].gearRatio, drives[1].maxSpeed / drives[1].gearRatio],
        }
      : null;
    const cycleTime = duty.cycleTime ?? (duty.requiredRate ? 1 / duty.requiredRate : null);
    const scale = cycleTime === null ? 1 : cycle.timeScaleFor(cycleTime);
    const r = cycle.summarise(scale, limits, this.cycleSummary);
    metrics[M.cyclePeakTorque1] = r.peakTorque1;
    metrics[M.cyclePeakTorque2] = r.peakTorque2;
    metrics[M.cyclePeakTorque] = Math.max(r.peakTorque1, r.peakTorque2);
    metrics[M.cycleRmsTorque1] = r.rmsTorque1;
    metrics[M.cycleRmsTorque2] = r.rmsTorque2;
    metrics[M.cycleRmsTorque] = Math.max(r.rmsTorque1, r.rmsTorque2);
    metrics[M.cyclePeakSpeed1] = r.peakSpeed1;
    metrics[M.cyclePeakSpeed2] = r.peakSpeed2;
    metrics[M.cyclePeakSpeed] = Math.max(r.peakSpeed1, r.peakSpeed2);
    metrics[M.cyclePeakPower1] = r.peakPower1;
    metrics[M.cyclePeakPower2] = r.peakPower2;
    metrics[M.cyclePeakPower] = Math.max(r.peakPower1, r.peakPower2);
    metrics[M.minCycleTime] = r.minCycleTime;
  }

  private finishMetrics(model: FiveBarModel, resolved: ResolvedDesign, metrics: Float64Array): void {
    const agg = this.aggregate;
    const empty = agg.weight === 0;
    const worst = (v: number, fallback: number): number => (empty ? fallback : v);
    metrics[M.gci] = empty ? 0 : agg.invCondSum / agg.weight;
    metrics[M.minInvCond] = worst(agg.minInvCond, 0);
    metrics[M.minTransmission] = worst(Math.asin(Math.min(agg.minTransmissionSine, 1)), 0);
    const stiffnessKnown = model.complianceBending[0] + model.complianceCrankAxial[0] + model.complianceRodAxial[0] > 0
      && model.complianceBending[1] + model.complianceCrankAxial[1] + model.complianceRodAxial[1] > 0;
    metrics[M.minStiffness] = stiffnessKnown ? worst(agg.minStiffness, 0) : Number.NaN;
    metrics[M.bandwidth] = stiffnessKnown ? worst(agg.minFrequency, 0) : Number.NaN;
    metrics[M.peakTorque1] = worst(agg.peakTorque1, Infinity);
    metrics[M.peakTorque2] = worst(agg.peakTorque2, Infinity);
    metrics[M.peakTorque] = Math.max(metrics[M.peakTorque1]!, metrics[M.peakTorque2]!);
    metrics[M.accel] = this.peakJointTorque ? worst(agg.minAccel, 0) : Number.NaN;
    if (this.study.task.speed > 0) {
      metrics[M.peakSpeed1] = worst(agg.peakSpeed1, Infinity);
      metrics[M.peakSpeed2] = worst(agg.peakSpeed2, Infinity);
      metrics[M.peakSpeed] = Math.max(metrics[M.peakSpeed1]!, metrics[M.peakSpeed2]!);
    }
    metrics[M.resolution] = this.encoderStep ? worst(agg.maxStep, Infinity) : Number.NaN;
    metrics[M.footprint] = footprint(model);
    metrics[M.movingMass] = movingMass(this.study, resolved.geometry);
  }
}

/** What every evaluation path offers (five-bar engine, architecture interface, comparison). */
interface EvaluationPath {
  readonly variables: readonly DesignVariable[];
  readonly constraints: readonly ConstraintDefinition[];
  evaluate(design: ArrayLike<number>): DesignEvaluation;
  evaluateWithWorkspace(design: ArrayLike<number>, workspace: ArrayLike<number>): DesignEvaluation;
}

/** The architecture, model and resolved design behind one design vector (any architecture). */
export interface ArchitectureDesign {
  /** The study the model was built from: the study itself, or for a comparison study the selected member. */
  readonly study: Study;
  readonly architecture: PlanarArchitecture<ArchitectureModelBase>;
  readonly model: ArchitectureModelBase;
  readonly resolved: ResolvedDesign;
}

/**
 * A comparison study: one evaluator per member; the design variable `architecture` picks the member,
 * whose own variables are taken from the design vector (the other members' values are carried but
 * ignored). Constraint margins of constraints the member does not have are NaN; the violation is
 * the member's.
 */
class ComparisonEvaluator implements EvaluationPath {
  readonly variables: readonly DesignVariable[];
  readonly constraints: readonly ConstraintDefinition[];
  private readonly study: Study;
  readonly members: readonly Evaluator[];
  private readonly columns: readonly (readonly number[])[];

  constructor(study: Study) {
    this.study = study;
    this.variables = designVariables(study);
    this.members = study.members!.map((m) => new Evaluator(m));
    const { union, columns } = comparisonConstraints(this.members.map((m) => m.constraints));
    this.constraints = union;
    this.columns = columns;
  }

  private spread(index: number, inner: DesignEvaluation): DesignEvaluation {
    const n = this.constraints.length;
    const margins = new Float64Array(n).fill(Number.NaN);
    const constraintMin = new Float64Array(n).fill(Number.NaN);
    const constraintMax = new Float64Array(n).fill(Number.NaN);
    this.columns[index]!.forEach((column, k) => {
      margins[column] = inner.margins[k]!;
      constraintMin[column] = inner.constraintMin[k]!;
      constraintMax[column] = inner.constraintMax[k]!;
    });
    return { metrics: inner.metrics, margins, constraintMin, constraintMax, violation: inner.violation, feasible: inner.feasible };
  }

  evaluate(design: ArrayLike<number>): DesignEvaluation {
    const m = memberDesign(this.study, this.variables, design);
    return this.spread(m.index, this.members[m.index]!.evaluate(m.design));
  }

  evaluateWithWorkspace(design: ArrayLike<number>, workspace: ArrayLike<number>): DesignEvaluation {
    const m = memberDesign(this.study, this.variables, design);
    return this.spread(m.index, this.members[m.index]!.evaluateWithWorkspace(m.design, workspace));
  }
}

/**
 * Evaluator of a study, made once per study and per worker. Five-bar studies take the five-bar
 * engine's own path (numbers unchanged); the 2-PRR, 3-RRR and 3-PRR go through the architecture
 * interface (evaluateArchitecture.ts); a comparison study delegates to its members.
 */
export class Evaluator {
  readonly study: Study;
  readonly variables: readonly DesignVariable[];
  readonly constraints: readonly ConstraintDefinition[];
  private readonly path: FiveBarEvaluator | ArchitectureEvaluator | ComparisonEvaluator;

  constructor(study: Study) {
    this.study = study;
    this.path = study.members ? new ComparisonEvaluator(study) : study.architecture === 'five-bar' ? new FiveBarEvaluator(study) : new ArchitectureEvaluator(study);
    this.variables = this.path.variables;
    this.constraints = this.path.constraints;
  }

  evaluate(design: ArrayLike<number>): DesignEvaluation {
    return this.path.evaluate(design);
  }

  evaluateWithWorkspace(design: ArrayLike<number>, workspace: ArrayLike<number>): DesignEvaluation {
    return this.path.evaluateWithWorkspace(design, workspace);
  }

  /** Geometry, working mode and drives of a design vector (a comparison study: of the selected member). */
  resolve(design: ArrayLike<number>): ResolvedDesign {
    return resolveDesign(this.study, this.variables, design);
  }

  /** The five-bar engine's model of a design vector (five-bar studies only; see `architectureDesign` for any architecture). */
  model(design: ArrayLike<number>): FiveBarModel {
    if (!(this.path instanceof FiveBarEvaluator)) {
      throw new Error(`Evaluator.model gives the five-bar engine's model; the study's architecture is ${this.study.members ? 'a comparison' : this.study.architecture} (use architectureDesign)`);
    }
    return this.path.model(design);
  }

  /**
   * Architecture, immutable model and resolved design of a design vector, for any study: the model
   * the evaluation uses (for a five-bar, the engine's model wrapped by the adapter; for a 3-DOF with
   * characteristic_length auto, the per-design L). Poses: `architecture.createPose()`, then
   * `architecture.solvePose(model, pose, x, y, phi)` and `poseDynamics(model, pose)`.
   */
  architectureDesign(design: ArrayLike<number>): ArchitectureDesign {
    const path = this.path;
    if (path instanceof ComparisonEvaluator) {
      const m = memberDesign(this.study, this.variables, design);
      return path.members[m.index]!.architectureDesign(m.design);
    }
    const resolved = this.resolve(design);
    if (path instanceof FiveBarEvaluator) {
      const engine = buildFiveBarModel(this.study, resolved);
      const model = wrapFiveBarModel(engine, movingMass(this.study, resolved.geometry), drivesAtJoint(this.study, resolved.drives));
      return { study: this.study, architecture: ARCHITECTURES['five-bar'], model, resolved };
    }
    return { study: this.study, architecture: path.architecture, model: path.buildModel(resolved), resolved };
  }
}
