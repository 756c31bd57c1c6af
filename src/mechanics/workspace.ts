/**
 * The one workspace sampler: the evaluation grid over the reachable box of a design (clipped to the
 * study's window), with every node's reach margin (m) and usability margin (dimensionless, the one
 * rule of usability.ts), the connected usable regions and the region the evaluator measures (the one
 * holding the task centre, else the largest). The evaluator runs it for every design; maps and
 * exports call `sampleWorkspace` to draw exactly what the metrics measured.
 */
import { PoseStatus } from '../core/pose.js';
import type { LeggedModel } from '../architectures/legged.js';
import type { ArchitectureModelBase, ArchitecturePose, PlanarArchitecture, PlaneBox } from '../architectures/types.js';
import type { Study } from '../study/types.js';
import type { AdaptiveArea } from './adaptive.js';
import { MarginGrid } from './grid.js';
import { JOINT_FAR } from '../architectures/legs/crankRod.js';
import { architectureUsableMargin, jointMarginScale, UsabilityRule } from './usability.js';

/** Called for every grid node after it is solved (the pose holds the node's solution). */
export type NodeVisitor = (index: number, pose: ArchitecturePose, status: PoseStatus) => void;

/** Reachable box at φ of a design, clipped to the study's window; null when empty. Throws when unbounded. */
export function evaluationBox(study: Study, architecture: PlanarArchitecture<ArchitectureModelBase>, model: ArchitectureModelBase, phi: number): PlaneBox | null {
  const raw = architecture.reachableBox(model, phi);
  if (!raw) return null;
  const w = study.evaluation.window;
  const box = w
    ? { xmin: Math.max(raw.xmin, w.xmin), xmax: Math.min(raw.xmax, w.xmax), ymin: Math.max(raw.ymin, w.ymin), ymax: Math.min(raw.ymax, w.ymax) }
    : raw;
  if (!(box.xmax > box.xmin && box.ymax > box.ymin)) return null;
  if (![box.xmin, box.xmax, box.ymin, box.ymax].every(Number.isFinite)) {
    throw new Error(`${study.architecture}: the reachable box is unbounded; give strokes (joint_limits) or evaluation.window`);
  }
  return box;
}

/** The joint-margin scale of a model in the usability rule (see jointMarginScale). */
export function modelJointScale(model: ArchitectureModelBase): number {
  return jointMarginScale(model.actuators, 'rod' in model ? (model as { rod: readonly number[] }).rod : undefined);
}

/**
 * Samples the grid over `box` (laid out with `cells` across its longer side): grid.values holds the
 * usability margin, grid.secondary the reach margin of every node; labels the usable regions.
 * Returns the label of the evaluation region (−1 when there is none). A window bounds the region:
 * nodes outside it count as unreachable, with the signed distance to its edge (m; divided by the
 * footprint for the dimensionless margin).
 */
export function sampleGrid(
  study: Study,
  architecture: PlanarArchitecture<ArchitectureModelBase>,
  model: ArchitectureModelBase,
  pose: ArchitecturePose,
  grid: MarginGrid,
  box: PlaneBox,
  phi: number,
  cells: number = study.evaluation.gridCells,
  visit?: NodeVisitor,
  continuous = false,
): number {
  const jointScale = modelJointScale(model);
  grid.layout(box.xmin, box.xmax, box.ymin, box.ymax, cells);
  const { nx, ny, x0, y0, h, values, secondary: reach } = grid;
  const kernel = new PointKernel(study, architecture, model, pose, phi, visit === undefined);
  kernel.continuous = continuous;
  for (let j = 0; j < ny; j++) {
    const y = y0 + j * h;
    for (let i = 0; i < nx; i++) {
      const x = x0 + i * h;
      const status = kernel.sample(x, y);
      reach[j * nx + i] = kernel.reach;
      values[j * nx + i] = kernel.usable;
      if (visit) visit(j * nx + i, pose, status);
    }
  }
  grid.labelRegions();
  return evaluationRegion(study, architecture, model, pose, grid, phi, jointScale);
}

/**
 * One design's per-point work with its constants hoisted: solve the pose, then the usability margin
 * (UsabilityRule) and the reach margin, both bounded by the study's window when it has one (the
 * signed distance to its edge, divided by the footprint for the dimensionless margin). Writes
 * `usable` and `reach` (no number returned but the status, so nothing is boxed per point).
 */
export class PointKernel {
  usable = 0;
  reach = 0;
  /**
   * Continuous margin outside the reach (adaptive sampling): an unreachable point's usability margin
   * is its reach margin divided by the joint scale (negative) instead of −1, so that the margin has
   * no jump where the usable set ends at a leg's reach (a strut's stroke): its zero crossing along a
   * cell edge is then interpolated between comparable values.
   */
  continuous = false;
  /**
   * The caller reads only `usable` and `reach`: revolute legs far inside their joint ranges skip
   * their angle (ArchitecturePose.marginOnly). Exact: a joint margin of 1 rad or more (over a joint
   * scale of at most 1) never is the smallest term of the usability margin, whose other terms are at
   * most 1 (1/κ − c_min, |s| − sin μ, the mechanism sine term).
   */
  private readonly test: Float64Array | null;
  private readonly jointScale: number;
  private readonly rule: UsabilityRule;
  private readonly window: Study['evaluation']['window'];
  private readonly scale: number;
  constructor(
    study: Study,
    private readonly architecture: PlanarArchitecture<ArchitectureModelBase>,
    private readonly model: ArchitectureModelBase,
    private readonly pose: ArchitecturePose,
    private readonly phi: number,
    marginsOnly = false,
  ) {
    this.jointScale = modelJointScale(model);
    this.rule = new UsabilityRule(study, this.jointScale);
    this.window = study.evaluation.window;
    this.scale = this.window ? architecture.footprint(model) : 1;
    this.test = marginsOnly ? marginJointTests(model, this.jointScale) : null;
  }

  sample(x: number, y: number): PoseStatus {
    const pose = this.pose;
    const test = this.test;
    if (test) {
      for (let k = 0; k < test.length; k++) pose.jointTest[k] = test[k]!;
      pose.marginOnly = true;
    }
    const status = this.architecture.solvePose(this.model, pose, x, y, this.phi);
    pose.marginOnly = false;
    let r = this.pose.reachMargin;
    let u = this.continuous && status === PoseStatus.Unreachable ? Math.min(r / this.jointScale, -1e-12) : this.rule.margin(this.pose, status);
    const w = this.window;
    if (w) {
      const inside = Math.min(x - w.xmin, w.xmax - x, y - w.ymin, w.ymax - y);
      if (inside < r) r = inside;
      if (inside / this.scale < u) u = inside / this.scale;
    }
    this.usable = u;
    this.reach = r;
    return status;
  }
}

/**
 * The joint tests of a margins-only solve (ArchitecturePose.marginOnly), per leg as its kind writes
 * them (LegKind.farJointTest; (0, 0, 2), never skip, otherwise). No leg skips when the joint scale
 * exceeds JOINT_FAR (a skipped joint's margin is JOINT_FAR over that scale). Null (the flag not worth
 * setting) for a model without legs, and for a 2-DOF model whose legs never skip; a 3-DOF platform
 * always gets its tests (a margins-only solve skips its Jacobians).
 */
export function marginJointTests(model: ArchitectureModelBase, jointScale: number): Float64Array | null {
  if (!('legs' in model)) return null;
  const legged = model as LeggedModel;
  const n = legged.legs.length;
  // (0, 0, 2) never skips: the dot product 0 does not exceed 2 (a direction with 2 would, up to 2√2).
  const out = new Float64Array(3 * n);
  for (let i = 0; i < n; i++) out[3 * i + 2] = 2;
  // A 3-DOF platform gains from the flag anyway (no Jacobians); a 2-DOF one only by skipped angles.
  const platform = legged.dof === 3;
  if (jointScale > JOINT_FAR) return platform ? out : null;
  let any = false;
  for (let i = 0; i < n; i++) if (legged.legs[i]!.farJointTest?.(legged, i, out)) any = true;
  return any || platform ? out : null;
}

/** The label of the evaluation region on a labelled grid (see sampleGrid). */
function evaluationRegion(
  study: Study,
  architecture: PlanarArchitecture<ArchitectureModelBase>,
  model: ArchitectureModelBase,
  pose: ArchitecturePose,
  grid: MarginGrid,
  phi: number,
  jointScale: number,
): number {
  const taskRegion = study.task.region;
  if (!taskRegion) return grid.workspaceRegion(null, false);
  const usable = (x: number, y: number): boolean => architectureUsableMargin(pose, architecture.solvePose(model, pose, x, y, phi), study, jointScale) >= 0;
  const centreX = taskRegion.centreX;
  const centreY = taskRegion.centreY;
  const centreUsable = usable(centreX, centreY);
  const region = grid.workspaceRegion({ x: centreX, y: centreY }, centreUsable);
  return region >= 0 || !centreUsable ? region : regionThroughFlood(grid, centreX, centreY, usable);
}

/** Sub-cells per grid cell, and grid cells on each side of the centre's cell, of regionThroughFlood's lattice. */
const FLOOD_SPLIT = 8;
const FLOOD_CELLS = 2;

/**
 * The region holding a usable task centre when no corner of the centre's grid cell lies in a region
 * (a part of the usable set narrower than a cell there, or a small region whose nodes are farther
 * off): a flood fill of the usable points of a lattice FLOOD_SPLIT times finer over the cells within
 * FLOOD_CELLS of the centre's cell, from the lattice nodes around the centre, stopping at the first
 * grid node it reaches that is labelled. −1 when it reaches none (a region with no grid node near
 * the centre is not measured). Runs only in that case, so its lattice is allocated here.
 */
function regionThroughFlood(grid: MarginGrid, cx: number, cy: number, usable: (x: number, y: number) => boolean): number {
  const { nx, ny, h, x0, y0, labels } = grid;
  const ci = Math.floor((cx - x0) / h);
  const cj = Math.floor((cy - y0) / h);
  const i0 = Math.max(ci - FLOOD_CELLS, 0);
  const j0 = Math.max(cj - FLOOD_CELLS, 0);
  const i1 = Math.min(ci + 1 + FLOOD_CELLS, nx - 1);
  const j1 = Math.min(cj + 1 + FLOOD_CELLS, ny - 1);
  if (!(i1 > i0 && j1 > j0)) return -1;
  const side = (i1 - i0) * FLOOD_SPLIT + 1;
  const rows = (j1 - j0) * FLOOD_SPLIT + 1;
  const hf = h / FLOOD_SPLIT;
  // 0: not looked at, 1: queued (usable), 2: not usable.
  const state = new Uint8Array(side * rows);
  const queue = new Int32Array(side * rows);
  let head = 0;
  let tail = 0;
  const visit = (qi: number, qj: number): void => {
    if (qi < 0 || qj < 0 || qi >= side || qj >= rows) return;
    const q = qj * side + qi;
    if (state[q] !== 0) return;
    const on = usable(x0 + (i0 * FLOOD_SPLIT + qi) * hf, y0 + (j0 * FLOOD_SPLIT + qj) * hf);
    state[q] = on ? 1 : 2;
    if (on) queue[tail++] = q;
  };
  const fi = Math.floor((cx - x0) / hf) - i0 * FLOOD_SPLIT;
  const fj = Math.floor((cy - y0) / hf) - j0 * FLOOD_SPLIT;
  visit(fi, fj);
  visit(fi + 1, fj);
  visit(fi, fj + 1);
  visit(fi + 1, fj + 1);
  while (head < tail) {
    const q = queue[head++]!;
    const qi = q % side;
    const qj = (q - qi) / side;
    if (qi % FLOOD_SPLIT === 0 && qj % FLOOD_SPLIT === 0) {
      const label = labels[(j0 + qj / FLOOD_SPLIT) * nx + i0 + qi / FLOOD_SPLIT]!;
      if (label >= 0) return label;
    }
    visit(qi + 1, qj);
    visit(qi - 1, qj);
    visit(qi, qj + 1);
    visit(qi, qj - 1);
  }
  return -1;
}

/** Bounds the reach margins of a sampled grid by the signed distance to the box (m). */
function clipReachToBox(grid: MarginGrid, box: PlaneBox): void {
  const { nx, ny, x0, y0, h, secondary } = grid;
  for (let j = 0; j < ny; j++) {
    const y = y0 + j * h;
    for (let i = 0; i < nx; i++) {
      const x = x0 + i * h;
      const inside = Math.min(x - box.xmin, box.xmax - x, y - box.ymin, box.ymax - y);
      if (inside < secondary[j * nx + i]!) secondary[j * nx + i] = inside;
    }
  }
}

/** Coarse grid cells across the longer side of the box for a relative tolerance (adaptive sampling). */
export function coarseCells(tolerance: number): number {
  return Math.round(Math.min(Math.max(24 * Math.sqrt(0.005 / tolerance), 16), 64));
}

/** Workspace measures of one design from adaptive sampling (m², m), with the area error estimates (m²). */
export interface AdaptiveWorkspace {
  readonly region: number;
  readonly reachableArea: number;
  readonly reachableAreaError: number;
  readonly workspaceArea: number;
  readonly workspaceAreaError: number;
  readonly inscribedRadius: number;
  /** Points solved: coarse nodes plus sub-samples. */
  readonly samples: number;
}

/**
 * The evaluator's workspace at the study's tolerance: the coarse grid (coarseCells) sampled and
 * labelled as sampleGrid does, then the reachable set and the evaluation region refined near their
 * boundaries (adaptive.ts) until the estimated error of each area is within the tolerance, and the
 * inscribed radius found against the refined boundary.
 */
export function sampleAdaptive(
  study: Study,
  architecture: PlanarArchitecture<ArchitectureModelBase>,
  model: ArchitectureModelBase,
  pose: ArchitecturePose,
  grid: MarginGrid,
  box: PlaneBox,
  phi: number,
  adaptive: AdaptiveArea,
  tolerance: number,
): AdaptiveWorkspace {
  const region = sampleGrid(study, architecture, model, pose, grid, box, phi, coarseCells(tolerance), undefined, true);
  clipReachToBox(grid, box);
  const w = study.evaluation.window;
  const kernel = new PointKernel(study, architecture, model, pose, phi, true);
  kernel.continuous = true;
  const sampler = (x: number, y: number, out: Float64Array): void => {
    kernel.sample(x, y);
    out[0] = kernel.usable;
    // The reach margin is bounded by the box, as on the fixed grid when its cells shrink.
    out[1] = Math.min(kernel.reach, x - box.xmin, box.xmax - x, y - box.ymin, box.ymax - y);
  };
  adaptive.thinArms = architecture.dof === 3;
  adaptive.begin(grid, sampler, region);
  const exact = architecture.exactReachableArea ? architecture.exactReachableArea(model, box, phi, !!w) : null;
  const reachable = exact !== null ? { area: exact, error: 0, levels: 0 } : adaptive.area(1, tolerance);
  const workspace = region >= 0 ? adaptive.area(0, tolerance) : { area: 0, error: 0, levels: 0 };
  const inscribedRadius = region >= 0 ? adaptive.inscribedRadius(region) : 0;
  return {
    region,
    reachableArea: reachable.area,
    reachableAreaError: reachable.error,
    workspaceArea: workspace.area,
    workspaceAreaError: workspace.error,
    inscribedRadius,
    samples: grid.nx * grid.ny + adaptive.samples,
  };
}

/** Grid fields of one design for maps and exports (any architecture). */
export interface WorkspaceSample {
  readonly grid: MarginGrid;
  /** Label of the evaluation region, or −1. */
  readonly region: number;
  /** Per node: pose status, 1/κ(J_h), mechanism sine and leg sines (n per node, leg-major within a node). */
  readonly status: Uint8Array;
  readonly inverseCondition: Float64Array;
  readonly mechanismSine: Float64Array;
  readonly legSines: Float64Array;
  /** Largest inscribed circle of the evaluation region: radius (m). */
  readonly inscribedRadius: number;
}

/**
 * The evaluator's grid for one design at orientation φ, with per-node fields for a map; null when
 * nothing is reachable. `cells` defaults to the study's evaluation.grid_cells.
 */
export function sampleWorkspace(
  study: Study,
  architecture: PlanarArchitecture<ArchitectureModelBase>,
  model: ArchitectureModelBase,
  phi = 0,
  cells: number = study.evaluation.gridCells,
): WorkspaceSample | null {
  const box = evaluationBox(study, architecture, model, phi);
  if (!box) return null;
  const grid = new MarginGrid(cells + 4);
  const pose = architecture.createPose();
  const n = architecture.dof;
  let status = new Uint8Array(0);
  let inverseCondition = new Float64Array(0);
  let mechanismSine = new Float64Array(0);
  let legSines = new Float64Array(0);
  const region = sampleGrid(study, architecture, model, pose, grid, box, phi, cells, (index, p, s) => {
    if (index === 0) {
      const count = grid.nx * grid.ny;
      status = new Uint8Array(count);
      inverseCondition = new Float64Array(count);
      mechanismSine = new Float64Array(count);
      legSines = new Float64Array(count * n);
    }
    status[index] = s;
    if (s === PoseStatus.Unreachable) return;
    inverseCondition[index] = p.inverseCondition;
    mechanismSine[index] = p.mechanismSine;
    for (let i = 0; i < n; i++) legSines[index * n + i] = p.legSine[i]!;
  });
  return { grid, region, status, inverseCondition, mechanismSine, legSines, inscribedRadius: grid.inscribedRadius(region) };
}
