/**
 * The cell metrics of one design, for the one evaluator (src/mechanics/evaluateArchitecture.ts):
 * `min_clearance` and `passive_joint_margin` over the task region, the zones and the duty cycle
 * (over the usable region's nodes when the study has none of them), `zone_coverage`,
 * `cycle_coverage` and the regular workspace. When the study declares keep-outs or interference,
 * the usable workspace honours them: `nodeMargin` is min()-ed into each grid node's usability margin
 * (clearance divided by the footprint, the passive margin in rad; the zero level is what counts).
 */
import type { LeggedModel } from '../architectures/legged.js';
import type { ArchitectureModelBase, ArchitecturePose, PlanarArchitecture } from '../architectures/types.js';
import { PoseStatus } from '../core/pose.js';
import { metricIndex } from '../core/metrics.js';
import type { MarginGrid } from './grid.js';
import { CycleSamples, CycleTrajectory } from './dutyCycle.js';
import { taskSamples } from './taskSamples.js';
import type { Study } from '../study/types.js';
import { CellChecker } from '../cell/clearance.js';
import { pointInPolygon } from '../cell/geometry.js';
import { RegularWorkspaceFinder, type PlacedRectangle } from '../cell/regularWorkspace.js';
import { cellRestrictsWorkspace, type CellShape, type CellSpec, type Mount } from '../cell/types.js';

const M = {
  clearance: metricIndex('min_clearance'),
  passive: metricIndex('passive_joint_margin'),
  zones: metricIndex('zone_coverage'),
  cycle: metricIndex('cycle_coverage'),
  regularArea: metricIndex('regular_workspace_area'),
  regularWidth: metricIndex('regular_workspace_width'),
  regularX: metricIndex('regular_workspace_x'),
  regularY: metricIndex('regular_workspace_y'),
} as const;

export interface ShapeSamples {
  readonly x: Float64Array;
  readonly y: Float64Array;
  /** Area weights, summing to 1. */
  readonly weight: Float64Array;
}

/**
 * Sample points of a shape with `intervals` steps across its longer side. Rectangles (turned by their
 * angle) and circles as the task region (trapezoid and ring weights); a polygon: the lattice points
 * inside it (weight 1 each) plus its corners and edge midpoints (weight ½), so that its edges are checked.
 */
export function shapeSamples(shape: CellShape, intervals: number): ShapeSamples {
  if (shape.shape === 'circle') return taskSamples({ shape: 'circle', centreX: shape.centreX, centreY: shape.centreY, radius: shape.radius }, intervals);
  if (shape.shape === 'rectangle') {
    const local = taskSamples({ shape: 'rectangle', centreX: 0, centreY: 0, width: shape.width, height: shape.height }, intervals);
    const c = Math.cos(shape.angle);
    const s = Math.sin(shape.angle);
    const x = local.x.map((u, k) => shape.centreX + c * u - s * local.y[k]!);
    const y = local.y.map((v, k) => shape.centreY + s * local.x[k]! + c * v);
    return { x, y, weight: local.weight };
  }
  const poly = Float64Array.from(shape.vertices);
  let xmin = Infinity, xmax = -Infinity, ymin = Infinity, ymax = -Infinity;
  for (let k = 0; k < poly.length; k += 2) {
    xmin = Math.min(xmin, poly[k]!); xmax = Math.max(xmax, poly[k]!);
    ymin = Math.min(ymin, poly[k + 1]!); ymax = Math.max(ymax, poly[k + 1]!);
  }
  const step = Math.max(xmax - xmin, ymax - ymin) / Math.max(intervals, 2);
  const xs: number[] = [];
  const ys: number[] = [];
  const ws: number[] = [];
  for (let y = ymin + step / 2; y < ymax; y += step) {
    for (let x = xmin + step / 2; x < xmax; x += step) {
      if (pointInPolygon(x, y, poly)) { xs.push(x); ys.push(y); ws.push(1); }
    }
  }
  const n = poly.length >> 1;
  for (let k = 0; k < n; k++) {
    const j = (k + 1) % n;
    xs.push(poly[2 * k]!, 0.5 * (poly[2 * k]! + poly[2 * j]!));
    ys.push(poly[2 * k + 1]!, 0.5 * (poly[2 * k + 1]! + poly[2 * j + 1]!));
    ws.push(0.5, 0.5);
  }
  const total = ws.reduce((a, b) => a + b, 0);
  return { x: Float64Array.from(xs), y: Float64Array.from(ys), weight: Float64Array.from(ws, (w) => w / total) };
}

/** Whether a pose may be checked: reachable with a finite solution. */
function solved(status: PoseStatus): boolean {
  return status !== PoseStatus.Unreachable;
}

/** One study's cell analysis; owns its buffers (one per evaluator). */
export class CellAnalysis {
  readonly spec: CellSpec;
  /** The usable workspace honours the clearance checks. */
  readonly restricts: boolean;
  private readonly checker: CellChecker;
  private readonly finder = new RegularWorkspaceFinder();
  private readonly zones: readonly ShapeSamples[];
  private readonly region: ShapeSamples | null;
  private readonly cycle: CycleSamples | null;
  private readonly phi0: number;
  private scale = 1;
  /** The last regular rectangle found (for maps). */
  lastRectangle: PlacedRectangle | null = null;

  private constructor(study: Study, spec: CellSpec, private readonly architecture: PlanarArchitecture<ArchitectureModelBase>) {
    this.spec = spec;
    this.restricts = cellRestrictsWorkspace(spec);
    this.checker = new CellChecker(spec, architecture.dof);
    const intervals = study.evaluation.taskSamples;
    this.zones = spec.zones.map((z) => shapeSamples(z, intervals));
    this.region = study.task.region ? taskSamples(study.task.region, intervals) : null;
    this.cycle = study.dutyCycle ? new CycleSamples(new CycleTrajectory(study.dutyCycle.path), study.dutyCycle.samples) : null;
    this.phi0 = architecture.dof === 3 ? (study.orientation?.phi0 ?? 0) : 0;
  }

  /** The analysis of a study with a cell section, else null (no cell metrics, results as before). */
  static forStudy(study: Study, architecture: PlanarArchitecture<ArchitectureModelBase>): CellAnalysis | null {
    return study.cell ? new CellAnalysis(study, study.cell, architecture) : null;
  }

  /** Per design, before any pose: housings, slider pairs; the footprint scales the node margin. */
  prepare(model: ArchitectureModelBase, mount: Mount | undefined): void {
    this.checker.prepare(model as LeggedModel, mount);
    this.scale = this.architecture.footprint(model);
  }

  /** Usability margin contribution of a solved pose (dimensionless; ≥ 0 when clear). */
  nodeMargin(pose: ArchitecturePose, status: PoseStatus): number {
    if (!solved(status)) return -1;
    return Math.min(this.checker.clearance(pose) / this.scale, this.checker.passiveMargin(pose));
  }

  /** Clearance of the solved pose, m (after the allowance; negative = collision). */
  poseClearance(pose: ArchitecturePose): number {
    return this.checker.clearance(pose);
  }

  /**
   * Writes the cell metrics. `usable(status)` is the evaluator's usability margin of the pose just
   * solved (the cell's own checks included when it restricts the workspace); `grid` and `region` the
   * sampled workspace (region −1 = none).
   */
  write(model: ArchitectureModelBase, pose: ArchitecturePose, usable: (status: PoseStatus) => number, grid: MarginGrid, region: number, metrics: Float64Array): void {
    const worst = { clearance: Infinity, passive: Infinity, points: 0 };
    const visit = (x: number, y: number, phi: number): boolean => {
      const status = this.architecture.solvePose(model, pose, x, y, phi);
      if (!solved(status)) return false;
      worst.clearance = Math.min(worst.clearance, this.checker.clearance(pose));
      worst.passive = Math.min(worst.passive, this.checker.passiveMargin(pose));
      worst.points++;
      return usable(status) >= 0 && grid.regionAt(x, y) === region && region >= 0;
    };
    // Every point covered counts as exactly 1 (the weights' float sum may fall short of it by an ulp).
    const covered = (s: ShapeSamples): number => {
      let sum = 0;
      let points = 0;
      for (let k = 0; k < s.x.length; k++) if (visit(s.x[k]!, s.y[k]!, this.phi0)) { sum += s.weight[k]!; points++; }
      return points === s.x.length ? 1 : Math.min(sum, 1);
    };
    if (this.region) covered(this.region);
    let zones = 1;
    for (const z of this.zones) zones = Math.min(zones, covered(z));
    metrics[M.zones] = this.zones.length > 0 ? zones : Number.NaN;
    if (this.cycle && this.spec.cycleAsTask) {
      const c = this.cycle;
      // Fraction of the cycle's samples (each point of the path counts once).
      let inside = 0;
      for (let k = 0; k < c.count; k++) if (visit(c.x[k]!, c.y[k]!, c.phi[k]!)) inside++;
      metrics[M.cycle] = c.count > 0 ? inside / c.count : Number.NaN;
    } else if (this.cycle) {
      for (let k = 0; k < this.cycle.count; k++) visit(this.cycle.x[k]!, this.cycle.y[k]!, this.cycle.phi[k]!);
    }
    if (!this.region && this.zones.length === 0 && !this.cycle) this.visitRegion(grid, region, visit);
    const checks = this.restricts || this.spec.interference !== null;
    metrics[M.clearance] = !checks ? Number.NaN : worst.points > 0 ? worst.clearance : -Infinity;
    metrics[M.passive] = this.spec.interference?.passiveMinAngle == null ? Number.NaN : worst.points > 0 ? worst.passive : -Infinity;
    const rect = this.finder.find(grid, region, this.spec.regular.aspect, this.spec.regular.angle);
    this.lastRectangle = rect;
    metrics[M.regularArea] = rect ? rect.width * rect.height : 0;
    metrics[M.regularWidth] = rect ? rect.width : 0;
    metrics[M.regularX] = rect ? rect.centreX : Number.NaN;
    metrics[M.regularY] = rect ? rect.centreY : Number.NaN;
  }

  private visitRegion(grid: MarginGrid, region: number, visit: (x: number, y: number, phi: number) => boolean): void {
    if (region < 0) return;
    const { nx, ny, x0, y0, h, labels } = grid;
    for (let j = 0; j < ny; j++) for (let i = 0; i < nx; i++) if (labels[j * nx + i] === region) visit(x0 + i * h, y0 + j * h, this.phi0);
  }
}
