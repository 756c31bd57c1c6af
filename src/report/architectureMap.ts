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
import { curveAndJointLayers, mapAxes, type MapLayer } from './mapLayers.js';
import type { TopLevelSpec } from 'vega-lite';
import {
  ArchitecturePose,
  PoseStatus,
  type ArchitectureModelBase,
  type BodyTree,
  type PlanarArchitecture,
  type PlaneBox,
} from '../architectures/types.js';
import { MarginGrid } from '../mechanics/grid.js';
import { zeroContours, type Polyline } from './contour.js';
import { renderVegaLiteSvg } from './render.js';
import { MAP_COLOUR_SCHEME, MAP_CURVE_STYLES, MAP_FEATURE_COLOURS, MAP_FEATURES, MAP_JOINT_STYLES, UNUSABLE_OPACITY, type MapFeature } from './mapStyle.js';

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
  /** Design line of the title (e.g. the design's parameters as label–value pairs); the map adds modes, area and the home pose. */
  readonly designLabel?: string;
  /** Feasibility line of the title (e.g. "feasible", or the failing constraints with their values); first line when given. */
  readonly feasibility?: string;
  /** Metric line of the title (label–value pairs from the evaluator). */
  readonly metricsLabel?: string;
  /** Working-mode name shown with the modes (e.g. "+-+"). */
  readonly workingMode?: string;
  /** Largest plotting-area width and height, px (defaults 560 and 520). */
  readonly maxWidthPx?: number;
  readonly maxHeightPx?: number;
  /** Colour-map cells across the longer side at most (default 120). */
  readonly maxColourCells?: number;
  /** The machine in its cell (docs/cell.md): keep-outs, task zones, the regular workspace and the clearance checks. */
  readonly cell?: MapCellLayer;
}

/** Cell layer of a map: outlines (x, y interleaved, m) and the per-node clearance checks. */
export interface MapCellLayer {
  /** Cell margin of a solved node (≥ 0 clear); min()-ed into the usable margin when `restricts`, and its zero level is drawn. */
  readonly nodeMargin?: (pose: ArchitecturePose, status: PoseStatus) => number;
  /** Whether the usable workspace honours `nodeMargin` (as the evaluator does). */
  readonly restricts?: boolean;
  readonly keepOuts: readonly Float64Array[];
  readonly zones: readonly Float64Array[];
  /** Drive housings at the pivots (outlines). */
  readonly housings?: readonly Float64Array[];
  /** Corners of the regular-workspace rectangle, or null. */
  readonly rectangle?: Float64Array | null;
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
  /** Cell margin per node (maps with a cell layer; NaN where unreachable). */
  readonly cellMargin?: Float64Array;
}

/** The mechanism at its home pose, m. */
export interface ArchitectureMapHome {
  readonly x: number;
  readonly y: number;
  readonly phi: number;
  readonly source: 'given' | 'task-centre' | 'usable-centre';
  readonly status: PoseStatus;
  /** Per leg: base point (pivot A_i or rail origin O_i), proximal joint (C_i or S_i), distal joint (P or B_i); null when not reachable. */
  readonly legs: readonly { readonly base: readonly [number, number]; readonly proximal: readonly [number, number]; readonly distal: readonly [number, number]; readonly baseKind: 'slider' | 'actuated pivot' | 'passive pivot' }[] | null;
}

export interface ArchitectureMapSpec {
  readonly spec: TopLevelSpec;
  /** Axis domains (mm) and plotting-area size (px), the same mm per px on both axes. */
  readonly layout: { readonly xDomainMm: readonly [number, number]; readonly yDomainMm: readonly [number, number]; readonly widthPx: number; readonly heightPx: number };
  readonly fields: ArchitectureMapFields | null;
  readonly home: ArchitectureMapHome | null;
}

/** Legend entries of the curve layer (the one palette: src/report/mapStyle.ts). */
export const ARCHITECTURE_MAP_FEATURES = MAP_FEATURES;
type Feature = MapFeature;
const FEATURE_STYLE = MAP_CURVE_STYLES;
/** Stroke colour of each line feature (what the SVG paths carry). */
export const ARCHITECTURE_MAP_FEATURE_COLOURS = MAP_FEATURE_COLOURS;
const JOINT_STYLE = MAP_JOINT_STYLES;

interface LineRow { x: number; y: number; feature: Feature; part: string; order: number; widthPx: number }
interface ColourRow { x0: number; x1: number; y0: number; y1: number; inverseCondition: number; opacity: number }
interface ColourPolygonRow { x: number; y: number; part: string; order: number; inverseCondition: number; opacity: number }
interface JointRow { x: number; y: number; joint: string }

const MM = 1000;
const DEFAULT_CELLS = 160;

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

/** Longest chain of bars from the ground plus the largest site distance on a body, m; for windows of unbounded reach. */
function legSpan(tree: BodyTree): number {
  const depth = new Map<string, number>();
  let span = 0;
  for (const b of tree.bodies) {
    const reach = (b.parent === null ? 0 : (depth.get(b.parent) ?? 0)) + b.length + Math.max(0, ...b.sites.map((t) => Math.hypot(t.at[0], t.at[1])));
    depth.set(b.name, reach);
    span = Math.max(span, reach);
  }
  return span > 0 ? span : 1;
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
  const half = 1.5 * legSpan(architecture.bodyTree(model));
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
  const cellCheck = options.cell?.nodeMargin;
  const cellMargin = cellCheck ? new Float64Array(nodes).fill(Number.NaN) : undefined;
  const pose = architecture.createPose();
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
      if (cellCheck && cellMargin && st !== PoseStatus.Unreachable) {
        cellMargin[k] = cellCheck(pose, st);
        if (options.cell?.restricts && cellMargin[k]! < values[k]!) values[k] = cellMargin[k]!;
      }
      for (let leg = 0; leg < n; leg++) {
        const margin = pose.legReach[leg]!;
        legReachMargin[leg * nodes + k] = margin;
        legSine[leg * nodes + k] = margin >= 0 ? pose.legSine[leg]! : Number.NaN;
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
  return { nx, ny, x0, y0, h, phi0, windowCut: window.cut, status, reachMargin, legReachMargin, legSine, mechanismSine, inverseCondition, usable, regionMargin, region, regionArea, ...(cellMargin ? { cellMargin } : {}) };
}

/**
 * A vertex of a reach-edge contour of leg `leg` moved onto the exact edge (Newton on the leg's reach
 * margin, gradient by central differences), kept only when the leg is singular there (|s_i| ≤ 1e-2
 * just inside the edge): true for crank + rod and slider + rod legs (derived, see the file comment),
 * and a leg kind whose reach ends elsewhere (e.g. a strut at its stroke end) draws nothing there.
 */
function onSingularLegEdge(
  architecture: PlanarArchitecture<ArchitectureModelBase>,
  model: ArchitectureModelBase,
  pose: ArchitecturePose,
  leg: number,
  phi: number,
  x: number,
  y: number,
  h: number,
): [number, number] | null {
  const margin = (ax: number, ay: number): number => {
    architecture.solvePose(model, pose, ax, ay, phi);
    return pose.legReach[leg]!;
  };
  const d = 1e-6 * h;
  let px = x;
  let py = y;
  let gx = 0;
  let gy = 0;
  for (let iteration = 0; iteration < 6; iteration++) {
    const f = margin(px, py);
    gx = (margin(px + d, py) - margin(px - d, py)) / (2 * d);
    gy = (margin(px, py + d) - margin(px, py - d)) / (2 * d);
    const g2 = gx * gx + gy * gy;
    if (!(g2 > 0) || !Number.isFinite(f)) return null;
    px -= (f * gx) / g2;
    py -= (f * gy) / g2;
    if (Math.abs(f) < 1e-13 * h) break;
  }
  if (Math.hypot(px - x, py - y) > 2 * h) return null;
  const g = Math.hypot(gx, gy);
  const inward = 1e-7 * h;
  const inside = margin(px + (inward * gx) / g, py + (inward * gy) / g);
  if (!(inside >= 0) || !(Math.abs(pose.legSine[leg]!) <= 1e-2)) return null;
  return [px, py];
}

/**
 * Leg singularity curves (see the file comment): per leg, sign changes of s_i inside the leg's reach
 * where the mechanism assembles, and the edge of the leg's reach where s_i → 0 and the other legs
 * reach. With the architecture and model given, the edge curves are moved onto the exact edge and
 * kept only where the leg is singular there.
 */
export function architectureLegSingularityCurves(
  fields: ArchitectureMapFields,
  dof: number,
  architecture?: PlanarArchitecture<ArchitectureModelBase>,
  model?: ArchitectureModelBase,
): Polyline[] {
  const nodes = fields.nx * fields.ny;
  const out: Polyline[] = [];
  const edge = new Float64Array(nodes);
  const pose = architecture ? architecture.createPose() : null;
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
    const curves = zeroContours(fields, edge, othersReach);
    if (!architecture || !model || !pose) {
      out.push(...curves);
      continue;
    }
    for (const curve of curves) {
      let run: Polyline = { x: [], y: [] };
      for (let k = 0; k < curve.x.length; k++) {
        const p = onSingularLegEdge(architecture, model, pose, leg, fields.phi0, curve.x[k]!, curve.y[k]!, fields.h);
        if (p) {
          run.x.push(p[0]);
          run.y.push(p[1]);
        } else if (run.x.length > 0) {
          if (run.x.length > 1) out.push(run);
          run = { x: [], y: [] };
        }
      }
      if (run.x.length > 1) out.push(run);
    }
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
    // Leg i starts at the i-th ground body of the body tree: its pivot (a ground hinge) or, on a rail, the slider itself.
    const roots = architecture.bodyTree(model).bodies.filter((b) => b.parent === null);
    legs = Array.from({ length: model.dof }, (_, i) => {
      const proximal: [number, number] = [pose.proximalJoint[2 * i]!, pose.proximalJoint[2 * i + 1]!];
      const root = roots[i];
      const pivot = root && root.joint?.kind === 'revolute';
      const base: [number, number] = pivot ? [root.origin[0], root.origin[1]] : proximal;
      const baseKind: 'slider' | 'actuated pivot' | 'passive pivot' = !pivot ? 'slider' : root.joint!.actuator !== null ? 'actuated pivot' : 'passive pivot';
      return { base, proximal, distal: [pose.distalJoint[2 * i]!, pose.distalJoint[2 * i + 1]!] as [number, number], baseKind };
    });
  }
  return { x: point[0], y: point[1], phi, source, status, legs };
}

/** Corners of a cell: value of a field at (0,0), (1,0), (1,1), (0,1) in cell coordinates. */
type CellValues = readonly [number, number, number, number];

/** Bilinear value of a cell field at (u, v) ∈ [0, 1]². */
function bilinear(c: CellValues, u: number, v: number): number {
  return (1 - u) * (1 - v) * c[0] + u * (1 - v) * c[1] + u * v * c[2] + (1 - u) * v * c[3];
}

/** The part of a polygon (cell coordinates) where the bilinear cell field is ≥ 0 (Sutherland–Hodgman, crossings interpolated along each edge). */
function clipCellPolygon(polygon: readonly (readonly [number, number])[], c: CellValues): [number, number][] {
  const out: [number, number][] = [];
  for (let k = 0; k < polygon.length; k++) {
    const a = polygon[k]!;
    const b = polygon[(k + 1) % polygon.length]!;
    const va = bilinear(c, a[0], a[1]);
    const vb = bilinear(c, b[0], b[1]);
    if (va >= 0) out.push([a[0], a[1]]);
    if ((va >= 0) !== (vb >= 0)) {
      const t = va / (va - vb);
      out.push([a[0] + t * (b[0] - a[0]), a[1] + t * (b[1] - a[1])]);
    }
  }
  return out;
}

const UNIT_CELL: readonly (readonly [number, number])[] = [[0, 0], [1, 0], [1, 1], [0, 1]];

/**
 * The 1/κ colour map, cell by cell (cells between grid nodes, thinned to at most `maxCells` across):
 * cells inside the reach and wholly usable or wholly not are rectangles; cells the reach edge or the
 * usable region's edge crosses are cut along those edges (the margins interpolated), so both edges
 * are smooth. Reachable but unusable parts are dimmed (UNUSABLE_OPACITY).
 */
function colourMapRows(fields: ArchitectureMapFields, maxCells: number): { colour: ColourRow[]; polygons: ColourPolygonRow[]; dimmed: boolean } {
  const { nx, ny, x0, y0, h } = fields;
  const stride = Math.max(1, Math.ceil(Math.max(nx, ny) / maxCells));
  const step = stride * h * MM;
  // Opaque rectangles overlap by 12 % so that anti-aliased edges leave no seams; dimmed ones abut (an overlap would show as stripes).
  const overlap = 0.06 * step;
  const colour: ColourRow[] = [];
  const polygons: ColourPolygonRow[] = [];
  let dimmed = false;
  let part = 0;
  for (let j = 0; j + stride < ny; j += stride) {
    for (let i = 0; i + stride < nx; i += stride) {
      const ks = [j * nx + i, j * nx + i + stride, (j + stride) * nx + i + stride, (j + stride) * nx + i];
      const reach = ks.map((k) => fields.reachMargin[k]!) as unknown as CellValues;
      if (reach.every((r) => r < 0)) continue;
      const usable = ks.map((k) => fields.regionMargin[k]!) as unknown as CellValues;
      let sum = 0;
      let count = 0;
      for (const k of ks) if (fields.status[k] !== PoseStatus.Unreachable) { sum += fields.inverseCondition[k]!; count++; }
      const value = count > 0 ? Math.round((sum / count) * 1e4) / 1e4 : 0;
      const x = (x0 + i * h) * MM;
      const y = (y0 + j * h) * MM;
      const allUsable = usable.every((u) => u >= 0);
      const noneUsable = usable.every((u) => u < 0);
      if (reach.every((r) => r >= 0) && (allUsable || noneUsable)) {
        if (noneUsable) dimmed = true;
        const e = noneUsable ? 0 : overlap;
        colour.push({ x0: x - e, x1: x + step + e, y0: y - e, y1: y + step + e, inverseCondition: value, opacity: noneUsable ? UNUSABLE_OPACITY : 1 });
        continue;
      }
      const inReach = clipCellPolygon(UNIT_CELL, reach);
      const negated = usable.map((u) => -u - 1e-300) as unknown as CellValues;
      for (const [piece, opacity] of [[clipCellPolygon(inReach, usable), 1], [clipCellPolygon(inReach, negated), UNUSABLE_OPACITY]] as const) {
        if (piece.length < 3) continue;
        if (opacity < 1) dimmed = true;
        const id = `c${part++}`;
        piece.forEach(([u, v], order) => polygons.push({ x: x + u * step, y: y + v * step, part: id, order, inverseCondition: value, opacity }));
      }
    }
  }
  return { colour, polygons, dimmed };
}

function formatMm(value: number): string {
  return `${(value * MM).toFixed(0)} mm`;
}

/** A closed outline (x, y interleaved) as a polyline. */
function closedOutline(poly: Float64Array): Polyline {
  const x: number[] = [];
  const y: number[] = [];
  for (let k = 0; k <= poly.length; k += 2) {
    x.push(poly[k % poly.length]!);
    y.push(poly[(k + 1) % poly.length]!);
  }
  return { x, y };
}

/** Keep-outs, task zones, the regular workspace and the zero level of the cell margin (interference curves). */
function addCellLines(cell: MapCellLayer, fields: ArchitectureMapFields | null, addLine: (feature: Feature, line: Polyline) => void): void {
  for (const k of cell.keepOuts) addLine(ARCHITECTURE_MAP_FEATURES.keepOut, closedOutline(k));
  for (const z of cell.zones) addLine(ARCHITECTURE_MAP_FEATURES.zone, closedOutline(z));
  for (const h of cell.housings ?? []) addLine(ARCHITECTURE_MAP_FEATURES.housing, closedOutline(h));
  if (fields?.cellMargin) {
    const margin = fields.cellMargin;
    zeroContours(fields, margin, (k) => !Number.isNaN(margin[k]!)).forEach((l) => addLine(ARCHITECTURE_MAP_FEATURES.interference, l));
  }
  if (cell.rectangle) addLine(ARCHITECTURE_MAP_FEATURES.regular, closedOutline(cell.rectangle));
}

/** The drawing's window: the sampled grid (rails are clipped to it), m. */
interface MapWindow { readonly x0: number; readonly y0: number; readonly x1: number; readonly y1: number }

/** Rows of the curve layer, each polyline a part of its own. */
class MapLines {
  readonly rows: LineRow[] = [];
  private partCount = 0;

  add(feature: Feature, line: Polyline): void {
    const part = `p${String(this.partCount++).padStart(5, '0')}`;
    const widthPx = FEATURE_STYLE.find((f) => f.feature === feature)!.width;
    for (let k = 0; k < line.x.length; k++) this.rows.push({ x: line.x[k]! * MM, y: line.y[k]! * MM, feature, part, order: k, widthPx });
  }
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
  const window: MapWindow = fields
    ? { x0: fields.x0, y0: fields.y0, x1: fields.x0 + (fields.nx - 1) * fields.h, y1: fields.y0 + (fields.ny - 1) * fields.h }
    : { x0: -0.1, y0: -0.1, x1: 0.1, y1: 0.1 };
  const lines = new MapLines();
  addRails(lines, architecture.bodyTree(model), window);
  if (fields) {
    architectureReachBoundary(fields).forEach((l) => lines.add(ARCHITECTURE_MAP_FEATURES.reach, l));
    architectureLegSingularityCurves(fields, n, architecture, model).forEach((l) => lines.add(ARCHITECTURE_MAP_FEATURES.legSingularity, l));
    architectureMechanismSingularityCurves(fields).forEach((l) => lines.add(ARCHITECTURE_MAP_FEATURES.mechanismSingularity, l));
    architectureUsableBoundary(fields).forEach((l) => lines.add(ARCHITECTURE_MAP_FEATURES.usable, l));
  }
  const task = options.taskRegion ?? null;
  if (task) lines.add(ARCHITECTURE_MAP_FEATURES.task, taskOutline(task));
  if (options.cell) addCellLines(options.cell, fields, (feature, line) => lines.add(feature, line));
  const joints = home ? addMechanism(lines, home, n) : [];

  const { colour, polygons, dimmed } = fields ? colourMapRows(fields, options.maxColourCells ?? 120) : { colour: [], polygons: [], dimmed: false };
  const layout = mapLayout(lines.rows, joints, window, options);
  const subtitle = mapSubtitle(model, fields, home, dimmed, options);
  const jointStyles = JOINT_STYLE.filter((j) => joints.some((row) => row.joint === j.joint));
  const featureStyles = FEATURE_STYLE.filter((f) => lines.rows.some((row) => row.feature === f.feature));
  const spec: TopLevelSpec = {
    $schema: 'https://vega.github.io/schema/vega-lite/v6.json',
    title: { text: options.title ?? `Workspace of the ${architecture.name.toUpperCase()} design`, subtitle },
    width: layout.widthPx,
    height: layout.heightPx,
    layer: [
      ...colourLayers(colour, polygons, layout, n, options),
      ...curveAndJointLayers(layout, lines.rows, joints, featureStyles, jointStyles),
    ],
    resolve: { scale: { color: 'independent', shape: 'independent', fill: 'independent', strokeDash: 'independent' }, legend: { color: 'independent' } },
  };
  return { spec, layout, fields, home };
}

/** Rails of the ground slides (body tree): the stroke when limited, else the rail line across the window. */
function addRails(lines: MapLines, tree: BodyTree, window: MapWindow): void {
  const across = Math.hypot(window.x1 - window.x0, window.y1 - window.y0);
  for (const body of tree.bodies) {
    const joint = body.joint;
    if (body.parent !== null || joint?.kind !== 'prismatic') continue;
    const [ox, oy] = body.origin;
    const [ex, ey] = joint.axis;
    let qa: number;
    let qb: number;
    if (joint.range) { qa = joint.range.min; qb = joint.range.max; } else {
      // Parameter of the window centre's projection ± the window diagonal.
      const t = ((window.x0 + window.x1) / 2 - ox) * ex + ((window.y0 + window.y1) / 2 - oy) * ey;
      qa = t - across; qb = t + across;
    }
    lines.add(ARCHITECTURE_MAP_FEATURES.rail, { x: [ox + qa * ex, ox + qb * ex], y: [oy + qa * ey, oy + qb * ey] });
  }
}

/** The mechanism at its home pose: leg lines (and the platform) into `lines`; its joints as rows. */
function addMechanism(lines: MapLines, home: ArchitectureMapHome, n: number): JointRow[] {
  const joints: JointRow[] = [];
  if (!home.legs) {
    joints.push({ x: home.x * MM, y: home.y * MM, joint: 'home point (not reachable)' });
    return joints;
  }
  for (const leg of home.legs) {
    // The leg from its ground joint (body tree): a slider on its rail, or a pivot (actuated or passive) with an elbow when the proximal joint lies off the pivot.
    const onRail = leg.baseKind === 'slider';
    const elbow = !onRail && Math.hypot(leg.proximal[0] - leg.base[0], leg.proximal[1] - leg.base[1]) > 1e-9;
    const path = elbow ? { x: [leg.base[0], leg.proximal[0], leg.distal[0]], y: [leg.base[1], leg.proximal[1], leg.distal[1]] }
      : { x: [leg.base[0], leg.distal[0]], y: [leg.base[1], leg.distal[1]] };
    lines.add(ARCHITECTURE_MAP_FEATURES.mechanism, path);
    const baseJoint = onRail ? 'slider Sᵢ (actuated)' : leg.baseKind === 'actuated pivot' ? 'actuated pivot Aᵢ' : 'base pivot (passive)';
    joints.push({ x: leg.base[0] * MM, y: leg.base[1] * MM, joint: baseJoint });
    if (elbow) joints.push({ x: leg.proximal[0] * MM, y: leg.proximal[1] * MM, joint: 'elbow Cᵢ' });
  }
  if (n === 3) {
    const pins = home.legs.map((l) => l.distal);
    lines.add(ARCHITECTURE_MAP_FEATURES.platform, { x: [...pins.map((p) => p[0]), pins[0]![0]], y: [...pins.map((p) => p[1]), pins[0]![1]] });
    for (const p of pins) joints.push({ x: p[0] * MM, y: p[1] * MM, joint: 'platform pin Bᵢ' });
  }
  joints.push({ x: home.x * MM, y: home.y * MM, joint: 'end point P (home)' });
  return joints;
}

/** Axis domains: the reachable region, the task, the mechanism (not the unclipped rails), padded; equal mm per px. */
function mapLayout(lines: readonly LineRow[], joints: readonly JointRow[], window: MapWindow, options: ArchitectureMapOptions): ArchitectureMapSpec['layout'] {
  let xmin = Infinity, xmax = -Infinity, ymin = Infinity, ymax = -Infinity;
  const include = (x: number, y: number): void => {
    if (x < xmin) xmin = x; if (x > xmax) xmax = x;
    if (y < ymin) ymin = y; if (y > ymax) ymax = y;
  };
  // Rails and keep-outs (a conveyor may run far past the arm) are clipped to the drawing, not fitted.
  for (const r of lines) if (r.feature !== ARCHITECTURE_MAP_FEATURES.rail && r.feature !== ARCHITECTURE_MAP_FEATURES.keepOut) include(r.x, r.y);
  for (const r of joints) include(r.x, r.y);
  if (!Number.isFinite(xmin)) { xmin = window.x0 * MM; xmax = window.x1 * MM; ymin = window.y0 * MM; ymax = window.y1 * MM; }
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
  return { xDomainMm, yDomainMm, widthPx, heightPx };
}

/** One kind of information per line: feasibility, design (label–value pairs), modes, metrics, workspace, home pose, notes. */
function mapSubtitle(model: ArchitectureModelBase, fields: ArchitectureMapFields | null, home: ArchitectureMapHome | null, dimmed: boolean, options: ArchitectureMapOptions): string[] {
  const task = options.taskRegion ?? null;
  const modeText = options.workingMode ? `working mode ${options.workingMode}, ` : '';
  const modes = `${modeText}assembly sign ${model.assembly > 0 ? '+' : '−'}` + (model.dof === 3 ? `, platform at φ₀ = ${(((options.phi0 ?? 0) * 180) / Math.PI).toFixed(1)}°` : '');
  const areaCm2 = fields ? fields.regionArea * 1e4 : 0;
  const summary = fields && fields.region >= 0
    ? `usable workspace ${areaCm2.toFixed(areaCm2 < 100 ? 1 : 0)} cm² (usable: 1/κ ≥ ${options.usable.minInverseCondition}, transmission angles ≥ ${((options.usable.minTransmissionAngle * 180) / Math.PI).toFixed(0)}°)`
    : 'no usable workspace' + (task ? ' at the task centre' : '');
  const homeText = home
    ? `mechanism drawn at ${home.source === 'task-centre' ? 'the task centre' : home.source === 'given' ? 'the home pose' : 'the usable region’s deepest point'} (${formatMm(home.x).replace(' mm', '')}, ${formatMm(home.y)})` +
      (home.status === PoseStatus.Unreachable ? ' — NOT reachable' : home.status === PoseStatus.Assembled ? '' : ' — not a usable pose')
    : 'no home pose (no task region and no usable workspace)';
  const notes: string[] = [];
  if (dimmed) notes.push('dimmed colours: the legs reach, but the pose is not usable (conditioning, transmission angle, joint range, or outside the chosen region)');
  if (fields?.windowCut) notes.push('the reach continues beyond the drawn window (rails without stroke limits)');
  return [
    ...(options.feasibility ? [options.feasibility] : []),
    ...(options.designLabel ? [options.designLabel] : []),
    modes,
    ...(options.metricsLabel ? [options.metricsLabel] : []),
    summary,
    homeText,
    ...notes,
  ];
}

/** The conditioning colour map: whole cells as rectangles, cut cells as filled polygons. */
function colourLayers(colour: readonly ColourRow[], polygons: readonly ColourPolygonRow[], layout: ArchitectureMapSpec['layout'], n: number, options: ArchitectureMapOptions): MapLayer[] {
  const { xScale, yScale, xAxis, yAxis } = mapAxes(layout);
  const conditioning = n === 3 ? '1/κ(Jₕ), conditioning' : '1/κ(J), conditioning';
  return [
    {
      name: 'colour_map',
      data: { values: [...colour] },
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
          scale: { scheme: MAP_COLOUR_SCHEME, domain: [0, 1] },
          legend: { title: [conditioning, `(usable needs ≥ ${options.usable.minInverseCondition})`], titleLimit: 320, orient: 'right', gradientLength: Math.min(200, layout.heightPx - 40), direction: 'vertical' },
        },
      },
    },
    {
      name: 'colour_edges',
      data: { values: [...polygons] },
      mark: { type: 'line', filled: true, interpolate: 'linear-closed', strokeWidth: 0, clip: true },
      encoding: {
        x: { field: 'x', type: 'quantitative', scale: xScale, axis: xAxis },
        y: { field: 'y', type: 'quantitative', scale: yScale, axis: yAxis },
        detail: { field: 'part', type: 'nominal' },
        order: { field: 'order', type: 'quantitative' },
        opacity: { field: 'opacity', type: 'quantitative', scale: null, legend: null },
        fill: { field: 'inverseCondition', type: 'quantitative', scale: { scheme: MAP_COLOUR_SCHEME, domain: [0, 1] }, legend: null },
      },
    },
  ];
}

/** SVG of the workspace map of one design of an architecture. */
export async function renderArchitectureMap(
  architecture: PlanarArchitecture<ArchitectureModelBase>,
  model: ArchitectureModelBase,
  options: ArchitectureMapOptions,
): Promise<string> {
  return renderVegaLiteSvg(architectureMapSpec(architecture, model, options).spec);
}
