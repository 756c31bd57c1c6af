/**
 * Workspace map of one design of any planar architecture (2-PRR, 3-RRR, 3-PRR; the five-bar too,
 * through its adapter) as a Vega-Lite chart, built from the architecture interface alone
 * (`ARCHITECTURES[name].buildModel(input)`, `solvePose`): a 1/κ colour map over the reachable region
 * (`reachMargin` ≥ 0), its outline, the leg (type 1) and mechanism (type 2) singularity curves, the
 * usable region's outline, the task region and the mechanism at a home pose (rails drawn for sliders,
 * the platform polygon for 3-DOF), on axes in mm with equal scales, in the style of the five-bar map
 * (src/report/map.ts). 3-DOF architectures are mapped at one platform orientation φ_0.
 *
 * Curves come from fields sampled on a regular grid (zero contours by marching squares,
 * src/report/contour.ts):
 * - mechanism singularities: `mechanismSine` = 0 over cells whose corners all reach;
 * - leg singularities: `legSine_i` = 0. Where leg i's sine changes sign inside its reach, the contour
 *   of legSine_i itself. For the leg kinds of loopsmith (crank + rod, slider + rod) s_i keeps its sign
 *   inside the leg's reach and reaches 0 exactly on the edge of that reach (crank and rod aligned; rod
 *   perpendicular to its rail — derived from s_i = cross(e_i, u_i) and u_i·e_rail,i), where the
 *   inverse kinematics of that leg stops. There the map contours the field s_i² inside leg i's reach,
 *   continued outside by leg i's own reach margin (negative), over cells whose corners the other legs
 *   reach: the curve lies within a grid cell of s_i = 0.
 */
import { curveAndJointLayers, mapAxes } from './mapLayers.js';
import type { TopLevelSpec } from 'vega-lite';
import type { LeggedModel } from '../architectures/legged.js';
import {
  ArchitecturePose,
  PoseStatus,
  type ArchitectureModelBase,
  type PlanarArchitecture,
  type PlaneBox,
} from '../architectures/types.js';
import { MarginGrid } from '../mechanics/grid.js';
import { zeroContours, type Polyline } from './contour.js';
import { OKABE_ITO, renderVegaLiteSvg } from './render.js';

/** A task region, as in a study (m): a rectangle or a circle about its centre. */
export type MapTaskRegion =
  | { readonly shape: 'rectangle'; readonly centreX: number; readonly centreY: number; readonly width: number; readonly height: number }
  | { readonly shape: 'circle'; readonly centreX: number; readonly centreY: number; readonly radius: number };

/** Thresholds that make a pose usable (the study's evaluation settings). */
export interface MapUsableThresholds {
  /** Smallest 1/κ(J_h) of a usable pose. */
  readonly minInverseCondition: number;
  /** Smallest transmission angle, rad: |s_i| and assembly · mechanismSine must be ≥ its sine. */
  readonly minTransmissionAngle: number;
}

export interface ArchitectureMapOptions {
  /** Usable-pose thresholds (the study's `evaluation.min_inverse_condition`, `min_transmission_angle`). */
  readonly usable: MapUsableThresholds;
  /** Task region, m (drawn, and the home pose's default); null or absent = none. */
  readonly taskRegion?: MapTaskRegion | null;
  /** Platform orientation of the map, rad (3-DOF; default 0). */
  readonly phi0?: number;
  /**
   * Home pose of the drawn mechanism, m (default: the task region's centre, else the usable node
   * deepest inside the usable region).
   */
  readonly home?: { readonly x: number; readonly y: number };
  /**
   * Sampled window, m (default: the architecture's reachable box at φ_0). A side the box leaves
   * unbounded (rails without stroke limits) spans ±1.5 × the longest leg (crank + rod) plus the
   * platform radius about the task centre (or the origin).
   */
  readonly window?: PlaneBox;
  /** Grid cells across the longer side of the window (default 160). */
  readonly cells?: number;
  /** Chart title (default "Workspace of the <architecture> design"). */
  readonly title?: string;
  /** First subtitle line (e.g. the design's parameters); the map adds modes, area and the home pose. */
  readonly designLabel?: string;
  /** Largest plotting-area width and height, px (defaults 560 and 520). */
  readonly maxWidthPx?: number;
  readonly maxHeightPx?: number;
  /** Colour-map cells across the longer side at most (default 120). */
  readonly maxColourCells?: number;
}

/** Sampled fields of an architecture map (row-major, index j·nx + i). */
export interface ArchitectureMapFields {
  readonly nx: number;
  readonly ny: number;
  /** Node (0, 0) and spacing, m. */
  readonly x0: number;
  readonly y0: number;
  readonly h: number;
  /** Orientation of the sampling, rad (0 for 2-DOF). */
  readonly phi0: number;
  /** Pose status per node (PoseStatus values). */
  readonly status: Uint8Array;
  /** Smallest reach margin over the legs, m (`pose.reachMargin`). */
  readonly reachMargin: Float64Array;
  /** Each leg's own reach margin, m (legs × nodes, leg-major). */
  readonly legReachMargin: Float64Array;
  /** legSine_i per node (legs × nodes, leg-major); NaN where leg i does not reach. */
  readonly legSine: Float64Array;
  /** mechanismSine per node (0 where unreachable). */
  readonly mechanismSine: Float64Array;
  /** 1/κ(J_h) per node (0 where unreachable). */
  readonly inverseCondition: Float64Array;
  /** Usable margin (≥ 0 where usable) and the same restricted to the chosen usable region. */
  readonly usable: Float64Array;
  readonly regionMargin: Float64Array;
  /** True when the grid window cuts a reachable set that continues beyond it (rails without stroke limits). */
  readonly windowCut: boolean;
  /** Label of the chosen usable region (−1 when none) and its area, m². */
  readonly region: number;
  readonly regionArea: number;
}

/** The mechanism at its home pose, m. */
export interface ArchitectureMapHome {
  readonly x: number;
  readonly y: number;
  readonly phi: number;
  readonly source: 'given' | 'task-centre' | 'usable-centre';
  readonly status: PoseStatus;
  /** Per leg: base point (pivot A_i or rail origin O_i), proximal joint (C_i or S_i), distal joint (P or B_i); null when not reachable. */
  readonly legs: readonly { readonly base: readonly [number, number]; readonly proximal: readonly [number, number]; readonly distal: readonly [number, number] }[] | null;
}

export interface ArchitectureMapSpec {
  readonly spec: TopLevelSpec;
  /** Axis domains (mm) and plotting-area size (px), the same mm per px on both axes. */
  readonly layout: { readonly xDomainMm: readonly [number, number]; readonly yDomainMm: readonly [number, number]; readonly widthPx: number; readonly heightPx: number };
  readonly fields: ArchitectureMapFields | null;
  readonly home: ArchitectureMapHome | null;
}

/** Legend entries of the line layer, in legend order. */
export const ARCHITECTURE_MAP_FEATURES = {
  reach: 'reachable region (boundary)',
  legSingularity: 'leg singularity (some sᵢ = 0)',
  mechanismSingularity: 'mechanism singularity (det A = 0)',
  usable: 'usable workspace (boundary)',
  task: 'task region',
  rail: 'slider rail',
  mechanism: 'mechanism at home pose',
  platform: 'platform at home pose',
} as const;
type Feature = (typeof ARCHITECTURE_MAP_FEATURES)[keyof typeof ARCHITECTURE_MAP_FEATURES];

const FEATURE_STYLE: readonly { feature: Feature; colour: string; dash: number[]; width: number }[] = [
  { feature: ARCHITECTURE_MAP_FEATURES.reach, colour: '#8c8c8c', dash: [1, 0], width: 1.5 },
  // As the five-bar map: singular curves lie where 1/κ → 0 (dark end of viridis), so bright colours.
  { feature: ARCHITECTURE_MAP_FEATURES.legSingularity, colour: OKABE_ITO.orange, dash: [7, 3], width: 2.5 },
  { feature: ARCHITECTURE_MAP_FEATURES.mechanismSingularity, colour: OKABE_ITO.yellow, dash: [1, 0], width: 3 },
  { feature: ARCHITECTURE_MAP_FEATURES.usable, colour: '#ffffff', dash: [1, 0], width: 2.5 },
  { feature: ARCHITECTURE_MAP_FEATURES.task, colour: OKABE_ITO.blue, dash: [1, 0], width: 2.5 },
  // Rails are drawn first and wide, so that a curve along a rail (the 2-PRR's det A = 0) shows on top of it.
  { feature: ARCHITECTURE_MAP_FEATURES.rail, colour: OKABE_ITO.reddishPurple, dash: [1, 0], width: 6 },
  { feature: ARCHITECTURE_MAP_FEATURES.mechanism, colour: '#1a1a1a', dash: [1, 0], width: 4.5 },
  { feature: ARCHITECTURE_MAP_FEATURES.platform, colour: OKABE_ITO.vermillion, dash: [1, 0], width: 3.5 },
];

/** Stroke colour of each line feature (what the SVG paths carry). */
export const ARCHITECTURE_MAP_FEATURE_COLOURS: Readonly<Record<string, string>> = Object.fromEntries(FEATURE_STYLE.map((f) => [f.feature, f.colour]));

const JOINT_STYLE: readonly { joint: string; shape: string; fill: string }[] = [
  { joint: 'actuated pivot Aᵢ', shape: 'square', fill: '#1a1a1a' },
  { joint: 'slider Sᵢ (actuated)', shape: 'square', fill: '#1a1a1a' },
  { joint: 'elbow Cᵢ', shape: 'circle', fill: '#ffffff' },
  { joint: 'platform pin Bᵢ', shape: 'circle', fill: OKABE_ITO.vermillion },
  { joint: 'end point P (home)', shape: 'diamond', fill: OKABE_ITO.yellow },
  { joint: 'home point (not reachable)', shape: 'cross', fill: OKABE_ITO.vermillion },
];

interface LineRow { x: number; y: number; feature: Feature; part: string; order: number; widthPx: number }
interface ColourRow { x0: number; x1: number; y0: number; y1: number; inverseCondition: number; opacity: number }
interface JointRow { x: number; y: number; joint: string }

const MM = 1000;
const DEFAULT_CELLS = 160;
/** Opacity of colour-map cells outside the actuated joint ranges. */
const FADED_OPACITY = 0.3;

function isLegged(model: ArchitectureModelBase): model is LeggedModel {
  const m = model as Partial<LeggedModel>;
  return Array.isArray(m.baseX) && Array.isArray(m.railX) && Array.isArray(m.platformX) && Array.isArray(m.crank);
}

/**
 * Reach margin of each leg of a leg-engine model at (x, y, φ), m, into `out` (the engine's formulas,
 * src/architectures/legged.ts): revolute min(ρ − |p − d|, p + d − ρ) with ρ = |B_i − A_i|;
 * prismatic d − |cross(e_r, B_i − O_i)|.
 */
export function legReachMargins(model: LeggedModel, x: number, y: number, phi: number, out: Float64Array): void {
  const angle = model.dof === 3 ? phi : 0;
  const c = Math.cos(angle);
  const s = Math.sin(angle);
  for (let i = 0; i < model.dof; i++) {
    const bx = x + c * model.platformX[i]! - s * model.platformY[i]!;
    const by = y + s * model.platformX[i]! + c * model.platformY[i]!;
    const wx = bx - model.baseX[i]!;
    const wy = by - model.baseY[i]!;
    const d = model.rod[i]!;
    if (model.actuators[i] === 'revolute') {
      const p = model.crank[i]!;
      const rho = Math.sqrt(wx * wx + wy * wy);
      out[i] = Math.min(rho - Math.abs(p - d), p + d - rho);
    } else {
      out[i] = d - Math.abs(model.railX[i]! * wy - model.railY[i]! * wx);
    }
  }
}

/** Usable margin of a solved pose (≥ 0 usable): the five-bar evaluator's rule on the interface's fields. */
export function architectureUsableMargin(pose: ArchitecturePose, status: PoseStatus, assembly: 1 | -1, usable: MapUsableThresholds): number {
  if (status === PoseStatus.Unreachable) return -1;
  const sinMin = Math.sin(usable.minTransmissionAngle);
  let m = pose.inverseCondition - usable.minInverseCondition;
  for (let i = 0; i < pose.dof; i++) {
    const t = Math.abs(pose.legSine[i]!) - sinMin;
    if (t < m) m = t;
  }
  const t = assembly * pose.mechanismSine - sinMin;
  if (t < m) m = t;
  // Joint margins are rad or m; only their sign matters for the region (scale shifts no zero crossing).
  if (pose.jointMargin < m) m = pose.jointMargin;
  if (m === 0 && (pose.inverseCondition === 0 || assembly * pose.mechanismSine <= 0)) m = -1e-12;
  return m;
}

/** Longest leg (crank + rod) plus the platform circumradius, m; for windows of unbounded reach. */
function legSpan(model: ArchitectureModelBase): number {
  if (!isLegged(model)) return 1;
  let span = 0;
  for (let i = 0; i < model.dof; i++) span = Math.max(span, model.crank[i]! + model.rod[i]! + Math.hypot(model.platformX[i]!, model.platformY[i]!));
  return span;
}

/** Window of the sampled grid, and whether it cuts an unbounded reachable set (rails without strokes). */
function sampleWindow(
  architecture: PlanarArchitecture<ArchitectureModelBase>,
  model: ArchitectureModelBase,
  phi0: number,
  options: ArchitectureMapOptions,
): { box: PlaneBox; cut: boolean } | null {
  if (options.window) return { box: options.window, cut: false };
  const box = architecture.reachableBox(model, phi0);
  if (!box) return null;
  if (Number.isFinite(box.xmin) && Number.isFinite(box.xmax) && Number.isFinite(box.ymin) && Number.isFinite(box.ymax)) return { box, cut: false };
  const half = 1.5 * legSpan(model);
  const cx = options.taskRegion?.centreX ?? options.home?.x ?? 0;
  const cy = options.taskRegion?.centreY ?? options.home?.y ?? 0;
  const xmin = Number.isFinite(box.xmin) ? box.xmin : Math.min(cx - half, Number.isFinite(box.xmax) ? box.xmax - half : Infinity);
  const xmax = Number.isFinite(box.xmax) ? box.xmax : Math.max(cx + half, xmin + half);
  const ymin = Number.isFinite(box.ymin) ? box.ymin : Math.min(cy - half, Number.isFinite(box.ymax) ? box.ymax - half : Infinity);
  const ymax = Number.isFinite(box.ymax) ? box.ymax : Math.max(cy + half, ymin + half);
  if (!(xmax > xmin && ymax > ymin)) return null;
  // Pilot pass: shrink the window to the reachable nodes (a bounded set, e.g. three slanted rails' bands, gets a tight grid).
  const pilotCells = 80;
  const step = Math.max(xmax - xmin, ymax - ymin) / pilotCells;
  const pose = architecture.createPose();
  let rx0 = Infinity, rx1 = -Infinity, ry0 = Infinity, ry1 = -Infinity;
  for (let y = ymin; y <= ymax + 1e-12; y += step) {
    for (let x = xmin; x <= xmax + 1e-12; x += step) {
      architecture.solvePose(model, pose, x, y, phi0);
      if (pose.reachMargin < 0) continue;
      if (x < rx0) rx0 = x; if (x > rx1) rx1 = x;
      if (y < ry0) ry0 = y; if (y > ry1) ry1 = y;
    }
  }
  if (!(rx1 >= rx0)) return null;
  const tight = {
    xmin: Math.max(xmin, rx0 - step), xmax: Math.min(xmax, rx1 + step),
    ymin: Math.max(ymin, ry0 - step), ymax: Math.min(ymax, ry1 + step),
  };
  const cut = tight.xmin <= xmin || tight.xmax >= xmax || tight.ymin <= ymin || tight.ymax >= ymax;
  return { box: tight, cut };
}

/** Sample every field of the map. Null when the window is empty. */
export function sampleArchitectureMapFields(
  architecture: PlanarArchitecture<ArchitectureModelBase>,
  model: ArchitectureModelBase,
  options: ArchitectureMapOptions,
): ArchitectureMapFields | null {
  const n = model.dof;
  const phi0 = n === 3 ? (options.phi0 ?? 0) : 0;
  const window = sampleWindow(architecture, model, phi0, options);
  if (!window) return null;
  const box = window.box;
  const cells = options.cells ?? DEFAULT_CELLS;
  const grid = new MarginGrid(cells + 4);
  grid.layout(box.xmin, box.xmax, box.ymin, box.ymax, cells);
  const { nx, ny, x0, y0, h, values } = grid;
  const nodes = nx * ny;
  const status = new Uint8Array(nodes);
  const reachMargin = new Float64Array(nodes);
  const legReachMargin = new Float64Array(n * nodes);
  const legSine = new Float64Array(n * nodes);
  const mechanismSine = new Float64Array(nodes);
  const inverseCondition = new Float64Array(nodes);
  const pose = architecture.createPose();
  const margins = new Float64Array(n);
  const legged = isLegged(model) ? model : null;
  for (let j = 0; j < ny; j++) {
    const y = y0 + j * h;
    for (let i = 0; i < nx; i++) {
      const k = j * nx + i;
      const x = x0 + i * h;
      // Legs the solve skips (out of their reach) keep NaN.
      pose.legSine.fill(Number.NaN);
      const st = architecture.solvePose(model, pose, x, y, phi0);
      status[k] = st;
      reachMargin[k] = pose.reachMargin;
      values[k] = architectureUsableMargin(pose, st, model.assembly, options.usable);
      if (legged) legReachMargins(legged, x, y, phi0, margins);
      else margins.fill(pose.reachMargin);
      for (let leg = 0; leg < n; leg++) {
        legReachMargin[leg * nodes + k] = margins[leg]!;
        legSine[leg * nodes + k] = margins[leg]! >= 0 ? pose.legSine[leg]! : Number.NaN;
      }
      if (st !== PoseStatus.Unreachable) {
        mechanismSine[k] = pose.mechanismSine;
        inverseCondition[k] = pose.inverseCondition;
      }
    }
  }
  grid.labelRegions();
  const task = options.taskRegion ?? null;
  const region = task
    ? grid.workspaceRegion(
        { x: task.centreX, y: task.centreY },
        architectureUsableMargin(pose, architecture.solvePose(model, pose, task.centreX, task.centreY, phi0), model.assembly, options.usable) >= 0,
      )
    : grid.workspaceRegion(null, false);
  const usable = Float64Array.from(values.subarray(0, nodes));
  const regionMargin = new Float64Array(nodes);
  for (let k = 0; k < nodes; k++) {
    const v = usable[k]!;
    regionMargin[k] = grid.labels[k] === region ? v : v >= 0 ? -v - 1e-300 : v;
  }
  const regionArea = grid.regionArea(region);
  return { nx, ny, x0, y0, h, phi0, windowCut: window.cut, status, reachMargin, legReachMargin, legSine, mechanismSine, inverseCondition, usable, regionMargin, region, regionArea };
}

/**
 * Leg singularity curves (see the file comment): per leg, sign changes of s_i inside the leg's reach
 * where the mechanism assembles, and the edge of the leg's reach (s_i → 0) where the other legs reach.
 */
export function architectureLegSingularityCurves(fields: ArchitectureMapFields, dof: number): Polyline[] {
  const nodes = fields.nx * fields.ny;
  const out: Polyline[] = [];
  const edge = new Float64Array(nodes);
  for (let leg = 0; leg < dof; leg++) {
    const sine = fields.legSine.subarray(leg * nodes, (leg + 1) * nodes);
    const reach = fields.legReachMargin.subarray(leg * nodes, (leg + 1) * nodes);
    out.push(...zeroContours(fields, Float64Array.from(sine), (k) => fields.status[k] !== PoseStatus.Unreachable));
    for (let k = 0; k < nodes; k++) {
      const s = sine[k]!;
      edge[k] = reach[k]! >= 0 && Number.isFinite(s) ? s * s : Math.min(reach[k]!, -1e-300);
    }
    const othersReach = (k: number): boolean => {
      for (let other = 0; other < dof; other++) if (other !== leg && fields.legReachMargin[other * nodes + k]! < 0) return false;
      return true;
    };
    out.push(...zeroContours(fields, edge, othersReach));
  }
  return out;
}

/** Mechanism singularity curves: mechanismSine = 0 over cells whose corners all reach. */
export function architectureMechanismSingularityCurves(fields: ArchitectureMapFields): Polyline[] {
  return zeroContours(fields, fields.mechanismSine, (k) => fields.status[k] !== PoseStatus.Unreachable);
}

/** Outline of the reachable region (reachMargin = 0). */
export function architectureReachBoundary(fields: ArchitectureMapFields): Polyline[] {
  return zeroContours(fields, fields.reachMargin);
}

/** Outline of the chosen usable region. */
export function architectureUsableBoundary(fields: ArchitectureMapFields): Polyline[] {
  return fields.region < 0 ? [] : zeroContours(fields, fields.regionMargin);
}

function circlePoints(cx: number, cy: number, r: number, count: number): Polyline {
  const x: number[] = [];
  const y: number[] = [];
  for (let k = 0; k <= count; k++) {
    const a = (2 * Math.PI * k) / count;
    x.push(cx + r * Math.cos(a));
    y.push(cy + r * Math.sin(a));
  }
  return { x, y };
}

function taskOutline(region: MapTaskRegion): Polyline {
  if (region.shape === 'circle') return circlePoints(region.centreX, region.centreY, region.radius, 144);
  const l = region.centreX - region.width / 2;
  const r = region.centreX + region.width / 2;
  const b = region.centreY - region.height / 2;
  const t = region.centreY + region.height / 2;
  return { x: [l, r, r, l, l], y: [b, b, t, t, b] };
}

/** Usable node farthest (in node steps) from every non-usable node of the region margin: brute force, map-sized grids only. */
export function deepestUsableNode(fields: ArchitectureMapFields): [number, number] | null {
  const { nx, ny, x0, y0, h, regionMargin } = fields;
  const outside: number[] = [];
  for (let k = 0; k < nx * ny; k++) if (!(regionMargin[k]! >= 0)) outside.push(k);
  let best: [number, number] | null = null;
  let bestSq = -1;
  for (let k = 0; k < nx * ny; k++) {
    if (!(regionMargin[k]! >= 0)) continue;
    const i = k % nx;
    const j = (k - i) / nx;
    let minSq = Infinity;
    for (let o = 0; o < outside.length && minSq > bestSq; o++) {
      const q = outside[o]!;
      const di = (q % nx) - i;
      const dj = Math.floor(q / nx) - j;
      const d = di * di + dj * dj;
      if (d < minSq) minSq = d;
    }
    if (minSq > bestSq) { bestSq = minSq; best = [x0 + i * h, y0 + j * h]; }
  }
  return best;
}

/** The mechanism at its home pose (given, task centre, or deepest usable node). */
export function architectureMapHome(
  architecture: PlanarArchitecture<ArchitectureModelBase>,
  model: ArchitectureModelBase,
  fields: ArchitectureMapFields | null,
  options: ArchitectureMapOptions,
): ArchitectureMapHome | null {
  let point: [number, number] | null = null;
  let source: ArchitectureMapHome['source'] = 'given';
  if (options.home) point = [options.home.x, options.home.y];
  else if (options.taskRegion) { point = [options.taskRegion.centreX, options.taskRegion.centreY]; source = 'task-centre'; }
  else if (fields) { point = deepestUsableNode(fields); source = 'usable-centre'; }
  if (!point) return null;
  const phi = model.dof === 3 ? (options.phi0 ?? 0) : 0;
  const pose = architecture.createPose();
  const status = architecture.solvePose(model, pose, point[0], point[1], phi);
  let legs: ArchitectureMapHome['legs'] = null;
  if (status !== PoseStatus.Unreachable) {
    legs = Array.from({ length: model.dof }, (_, i) => {
      const proximal: [number, number] = [pose.proximalJoint[2 * i]!, pose.proximalJoint[2 * i + 1]!];
      let base: [number, number];
      if (isLegged(model)) base = model.actuators[i] === 'revolute' ? [model.baseX[i]!, model.baseY[i]!] : proximal;
      else base = [proximal[0] - pose.actuatorDirection[2 * i]!, proximal[1] - pose.actuatorDirection[2 * i + 1]!];
      return { base, proximal, distal: [pose.distalJoint[2 * i]!, pose.distalJoint[2 * i + 1]!] as [number, number] };
    });
  }
  return { x: point[0], y: point[1], phi, source, status, legs };
}

function formatMm(value: number): string {
  return `${(value * MM).toFixed(0)} mm`;
}

/** The Vega-Lite spec of an architecture's workspace map, with its layout, fields and home pose. */
export function architectureMapSpec(
  architecture: PlanarArchitecture<ArchitectureModelBase>,
  model: ArchitectureModelBase,
  options: ArchitectureMapOptions,
): ArchitectureMapSpec {
  const n = model.dof;
  const fields = sampleArchitectureMapFields(architecture, model, options);
  const home = architectureMapHome(architecture, model, fields, options);
  const legged = isLegged(model) ? model : null;

  const lines: LineRow[] = [];
  let partCount = 0;
  const addLine = (feature: Feature, line: Polyline): void => {
    const part = `p${String(partCount++).padStart(5, '0')}`;
    const widthPx = FEATURE_STYLE.find((f) => f.feature === feature)!.width;
    for (let k = 0; k < line.x.length; k++) lines.push({ x: line.x[k]! * MM, y: line.y[k]! * MM, feature, part, order: k, widthPx });
  };
  // Window of the drawing: the sampled grid (rails are clipped to it).
  const gx0 = fields ? fields.x0 : -0.1;
  const gy0 = fields ? fields.y0 : -0.1;
  const gx1 = fields ? fields.x0 + (fields.nx - 1) * fields.h : 0.1;
  const gy1 = fields ? fields.y0 + (fields.ny - 1) * fields.h : 0.1;
  if (legged) {
    // Rails: the stroke when limited, else the rail line across the sampled window.
    const across = Math.hypot(gx1 - gx0, gy1 - gy0);
    for (let i = 0; i < n; i++) {
      if (legged.actuators[i] !== 'prismatic') continue;
      const range = legged.jointLimits[i] ?? null;
      const ox = legged.baseX[i]!;
      const oy = legged.baseY[i]!;
      const ex = legged.railX[i]!;
      const ey = legged.railY[i]!;
      let qa: number;
      let qb: number;
      if (range) { qa = range.min; qb = range.max; } else {
        // Parameter of the window centre's projection ± the window diagonal.
        const t = ((gx0 + gx1) / 2 - ox) * ex + ((gy0 + gy1) / 2 - oy) * ey;
        qa = t - across; qb = t + across;
      }
      addLine(ARCHITECTURE_MAP_FEATURES.rail, { x: [ox + qa * ex, ox + qb * ex], y: [oy + qa * ey, oy + qb * ey] });
    }
  }
  if (fields) {
    architectureReachBoundary(fields).forEach((l) => addLine(ARCHITECTURE_MAP_FEATURES.reach, l));
    architectureLegSingularityCurves(fields, n).forEach((l) => addLine(ARCHITECTURE_MAP_FEATURES.legSingularity, l));
    architectureMechanismSingularityCurves(fields).forEach((l) => addLine(ARCHITECTURE_MAP_FEATURES.mechanismSingularity, l));
    architectureUsableBoundary(fields).forEach((l) => addLine(ARCHITECTURE_MAP_FEATURES.usable, l));
  }
  const task = options.taskRegion ?? null;
  if (task) addLine(ARCHITECTURE_MAP_FEATURES.task, taskOutline(task));

  const joints: JointRow[] = [];
  if (home) {
    if (home.legs) {
      for (const [i, leg] of home.legs.entries()) {
        const prismatic = model.actuators[i] === 'prismatic';
        const path = prismatic ? { x: [leg.proximal[0], leg.distal[0]], y: [leg.proximal[1], leg.distal[1]] }
          : { x: [leg.base[0], leg.proximal[0], leg.distal[0]], y: [leg.base[1], leg.proximal[1], leg.distal[1]] };
        addLine(ARCHITECTURE_MAP_FEATURES.mechanism, path);
        if (prismatic) joints.push({ x: leg.proximal[0] * MM, y: leg.proximal[1] * MM, joint: 'slider Sᵢ (actuated)' });
        else {
          joints.push({ x: leg.base[0] * MM, y: leg.base[1] * MM, joint: 'actuated pivot Aᵢ' });
          joints.push({ x: leg.proximal[0] * MM, y: leg.proximal[1] * MM, joint: 'elbow Cᵢ' });
        }
      }
      if (n === 3) {
        const pins = home.legs.map((l) => l.distal);
        addLine(ARCHITECTURE_MAP_FEATURES.platform, { x: [...pins.map((p) => p[0]), pins[0]![0]], y: [...pins.map((p) => p[1]), pins[0]![1]] });
        for (const p of pins) joints.push({ x: p[0] * MM, y: p[1] * MM, joint: 'platform pin Bᵢ' });
      }
      joints.push({ x: home.x * MM, y: home.y * MM, joint: 'end point P (home)' });
    } else {
      joints.push({ x: home.x * MM, y: home.y * MM, joint: 'home point (not reachable)' });
    }
  }

  const colour: ColourRow[] = [];
  let outsideJointRanges = false;
  if (fields) {
    const stride = Math.max(1, Math.ceil(Math.max(fields.nx, fields.ny) / (options.maxColourCells ?? 120)));
    // Half a cell plus 12 % overlap, so that anti-aliased edges leave no seams between cells; faded
    // (translucent) cells abut exactly, since an overlap would show as darker stripes.
    const half = 0.56 * stride * fields.h * MM;
    const halfFaded = 0.5 * stride * fields.h * MM;
    for (let j = 0; j < fields.ny; j += stride) {
      for (let i = 0; i < fields.nx; i += stride) {
        const k = j * fields.nx + i;
        if (fields.status[k] === PoseStatus.Unreachable) continue;
        const x = (fields.x0 + i * fields.h) * MM;
        const y = (fields.y0 + j * fields.h) * MM;
        // Nodes the legs reach but whose actuated joints leave their ranges (strokes): faded.
        const outside = fields.status[k] === PoseStatus.OutsideJointLimits;
        if (outside) outsideJointRanges = true;
        const e = outside ? halfFaded : half;
        colour.push({ x0: x - e, x1: x + e, y0: y - e, y1: y + e, inverseCondition: Math.round(fields.inverseCondition[k]! * 1e4) / 1e4, opacity: outside ? FADED_OPACITY : 1 });
      }
    }
  }

  // Axis domains: the reachable region, the task, the mechanism (not the unclipped rails), padded; equal mm per px.
  let xmin = Infinity, xmax = -Infinity, ymin = Infinity, ymax = -Infinity;
  const include = (x: number, y: number): void => {
    if (x < xmin) xmin = x; if (x > xmax) xmax = x;
    if (y < ymin) ymin = y; if (y > ymax) ymax = y;
  };
  for (const r of lines) if (r.feature !== ARCHITECTURE_MAP_FEATURES.rail) include(r.x, r.y);
  for (const r of joints) include(r.x, r.y);
  if (!Number.isFinite(xmin)) { xmin = gx0 * MM; xmax = gx1 * MM; ymin = gy0 * MM; ymax = gy1 * MM; }
  const pad = 0.04 * Math.max(xmax - xmin, ymax - ymin);
  const xDomainMm: [number, number] = [xmin - pad, xmax + pad];
  const yDomainMm: [number, number] = [ymin - pad, ymax + pad];
  const maxW = options.maxWidthPx ?? 560;
  const maxH = options.maxHeightPx ?? 520;
  const dx = xDomainMm[1] - xDomainMm[0];
  const dy = yDomainMm[1] - yDomainMm[0];
  const mmPerPx = Math.max(dx / maxW, dy / maxH);
  const widthPx = Math.round(dx / mmPerPx);
  const heightPx = Math.round(dy / mmPerPx);
  const xMid = (xDomainMm[0] + xDomainMm[1]) / 2;
  const yMid = (yDomainMm[0] + yDomainMm[1]) / 2;
  xDomainMm[0] = xMid - (widthPx * mmPerPx) / 2; xDomainMm[1] = xMid + (widthPx * mmPerPx) / 2;
  yDomainMm[0] = yMid - (heightPx * mmPerPx) / 2; yDomainMm[1] = yMid + (heightPx * mmPerPx) / 2;

  const modeText = legged ? `working mode ${legged.sigma.map((v) => (v > 0 ? '+' : '-')).join('')}, ` : '';
  const modes = `${modeText}assembly sign ${model.assembly > 0 ? '+' : '−'}` + (n === 3 ? `, platform at φ₀ = ${(((options.phi0 ?? 0) * 180) / Math.PI).toFixed(1)}°` : '');
  const areaCm2 = fields ? fields.regionArea * 1e4 : 0;
  const summary = fields && fields.region >= 0
    ? `usable workspace ${areaCm2.toFixed(areaCm2 < 100 ? 1 : 0)} cm² (usable: 1/κ ≥ ${options.usable.minInverseCondition}, transmission angles ≥ ${((options.usable.minTransmissionAngle * 180) / Math.PI).toFixed(0)}°)`
    : 'no usable workspace' + (task ? ' at the task centre' : '');
  const homeText = home
    ? `mechanism drawn at ${home.source === 'task-centre' ? 'the task centre' : home.source === 'given' ? 'the home pose' : 'the usable region’s deepest point'} (${formatMm(home.x).replace(' mm', '')}, ${formatMm(home.y)})` +
      (home.status === PoseStatus.Unreachable ? ' — NOT reachable' : home.status === PoseStatus.Assembled ? '' : ' — not a usable pose')
    : 'no home pose (no task region and no usable workspace)';
  const notes: string[] = [];
  if (outsideJointRanges) notes.push('faded colours: the legs reach, but an actuated joint leaves its range');
  if (fields?.windowCut) notes.push('the reach continues beyond the drawn window (rails without stroke limits)');
  const subtitle = [...(options.designLabel ? [`${options.designLabel}; ${modes}`] : [modes]), summary, homeText, ...(notes.length > 0 ? [notes.join('; ')] : [])];

  const jointStyles = JOINT_STYLE.filter((j) => joints.some((row) => row.joint === j.joint));
  const featureStyles = FEATURE_STYLE.filter((f) => lines.some((row) => row.feature === f.feature));
  const { xScale, yScale, xAxis, yAxis } = mapAxes({ xDomainMm, yDomainMm, widthPx, heightPx });
  const conditioning = n === 3 ? '1/κ(Jₕ), conditioning' : '1/κ(J), conditioning';

  const spec: TopLevelSpec = {
    $schema: 'https://vega.github.io/schema/vega-lite/v6.json',
    title: { text: options.title ?? `Workspace of the ${architecture.name.toUpperCase()} design`, subtitle },
    width: widthPx,
    height: heightPx,
    layer: [
      {
        name: 'colour_map',
        data: { values: colour },
        mark: { type: 'rect', strokeWidth: 0, clip: true },
        encoding: {
          x: { field: 'x0', type: 'quantitative', scale: xScale, axis: xAxis },
          x2: { field: 'x1' },
          y: { field: 'y0', type: 'quantitative', scale: yScale, axis: yAxis },
          y2: { field: 'y1' },
          opacity: { field: 'opacity', type: 'quantitative', scale: null, legend: null },
          color: {
            field: 'inverseCondition',
            type: 'quantitative',
            scale: { scheme: 'viridis', domain: [0, 1] },
            legend: { title: [conditioning, `(usable needs ≥ ${options.usable.minInverseCondition})`], titleLimit: 320, orient: 'right', gradientLength: Math.min(200, heightPx - 40), direction: 'vertical' },
          },
        },
      },
      ...curveAndJointLayers({ xDomainMm, yDomainMm, widthPx, heightPx }, lines, joints, featureStyles, jointStyles),
    ],
    resolve: { scale: { color: 'independent', shape: 'independent', fill: 'independent', strokeDash: 'independent' }, legend: { color: 'independent' } },
  };
  return { spec, layout: { xDomainMm, yDomainMm, widthPx, heightPx }, fields, home };
}

/** SVG of the workspace map of one design of an architecture. */
export async function renderArchitectureMap(
  architecture: PlanarArchitecture<ArchitectureModelBase>,
  model: ArchitectureModelBase,
  options: ArchitectureMapOptions,
): Promise<string> {
  return renderVegaLiteSvg(architectureMapSpec(architecture, model, options).spec);
}
