/**
 * Workspace map of one design as a Vega-Lite chart: 1/κ colour map over the reachable region, leg
 * (type 1) and mechanism (type 2) singularity curves, the usable workspace's outline, the task region,
 * the largest inscribed circle and the mechanism at its home pose, on axes in mm with equal scales.
 */
import { curveAndJointLayers, mapAxes } from './mapLayers.js';
import type { TopLevelSpec } from 'vega-lite';
import { chooseDesign } from '../api/design.js';
import { Evaluator } from '../mechanics/evaluate.js';
import { PoseStatus, type FiveBarModel } from '../mechanics/fivebar.js';
import { metricIndex } from '../mechanics/metrics.js';
import { homePose, sampleWorkspaceFields, type HomePose, type WorkspaceMapFields } from '../mechanics/workspaceMap.js';
import { formatQuantity } from '../study/units.js';
import type { Study, TaskRegion } from '../study/types.js';
import { zeroContours, type Polyline } from './contour.js';
import { OKABE_ITO, renderVegaLiteSvg } from './render.js';

export interface WorkspaceMapOptions {
  /**
   * Grid cells across the longer side of the reachable box (default: the study's evaluation.grid_cells,
   * at least 120 so that coarse evaluation grids still draw smooth curves; the subtitle's metrics are the
   * evaluator's at the study's own grid).
   */
  readonly cells?: number;
  /** Largest width and height of the plotting area, px (defaults 560 and 520). */
  readonly maxWidthPx?: number;
  readonly maxHeightPx?: number;
  /** Colour-map cells across the longer side at most (default 120): coarser keeps SVGs small. */
  readonly maxColourCells?: number;
  /** Title above the chart (default: "Workspace of <study>"). */
  readonly title?: string;
}

/** Plot geometry of a rendered map: how to turn an SVG pixel inside the plotting area into mm. */
export interface MapLayout {
  /** Axis domains, mm. */
  readonly xDomainMm: readonly [number, number];
  readonly yDomainMm: readonly [number, number];
  /** Plotting-area size, px (the same mm per px on both axes). */
  readonly widthPx: number;
  readonly heightPx: number;
}

export interface WorkspaceMapSpec {
  readonly spec: TopLevelSpec;
  readonly layout: MapLayout;
  readonly fields: WorkspaceMapFields | null;
  readonly home: HomePose | null;
  /** Metric values of the design (SI, METRICS order). */
  readonly metrics: Float64Array;
}

/** Legend entries of the line layer, in legend order. */
export const MAP_FEATURES = {
  legSingularity: 'leg singularity (s₁ or s₂ = 0)',
  mechanismSingularity: 'mechanism singularity (det A = 0)',
  usable: 'usable workspace (boundary)',
  task: 'task region',
  inscribed: 'largest inscribed circle',
  mechanism: 'mechanism at home pose',
} as const;
type Feature = (typeof MAP_FEATURES)[keyof typeof MAP_FEATURES];

const FEATURE_STYLE: readonly { feature: Feature; colour: string; dash: number[]; width: number }[] = [
  // Singular curves lie where 1/κ → 0 (dark end of viridis): bright colours there.
  { feature: MAP_FEATURES.legSingularity, colour: OKABE_ITO.orange, dash: [7, 3], width: 2.5 },
  { feature: MAP_FEATURES.mechanismSingularity, colour: OKABE_ITO.yellow, dash: [1, 0], width: 3 },
  { feature: MAP_FEATURES.usable, colour: '#ffffff', dash: [1, 0], width: 2.5 },
  // The task region and the inscribed circle normally lie in well-conditioned (green–yellow) areas.
  { feature: MAP_FEATURES.task, colour: OKABE_ITO.blue, dash: [1, 0], width: 2.5 },
  { feature: MAP_FEATURES.inscribed, colour: OKABE_ITO.reddishPurple, dash: [5, 3], width: 2.5 },
  { feature: MAP_FEATURES.mechanism, colour: '#1a1a1a', dash: [1, 0], width: 4.5 },
];

const JOINT_STYLE: readonly { joint: string; shape: string; fill: string }[] = [
  { joint: 'actuated pivot A₁, A₂', shape: 'square', fill: '#1a1a1a' },
  { joint: 'elbow C₁, C₂', shape: 'circle', fill: '#ffffff' },
  { joint: 'end point P (home)', shape: 'diamond', fill: OKABE_ITO.yellow },
  { joint: 'home point (not reachable)', shape: 'cross', fill: OKABE_ITO.vermillion },
];

/** Stroke colour of each line feature (what the SVG paths carry). */
export const MAP_FEATURE_COLOURS: Readonly<Record<string, string>> = Object.fromEntries(FEATURE_STYLE.map((f) => [f.feature, f.colour]));

interface LineRow { x: number; y: number; feature: Feature; part: string; order: number; widthPx: number }
interface ColourRow { x0: number; x1: number; y0: number; y1: number; inverseCondition: number }
interface JointRow { x: number; y: number; joint: string }

const MM = 1000;
/** Default smallest grid of a map (cells across the reachable box). */
export const MIN_MAP_CELLS = 120;

/** Points of a circle (closed polyline), m. */
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

function taskOutline(region: TaskRegion): Polyline {
  if (region.shape === 'circle') return circlePoints(region.centreX, region.centreY, region.radius, 144);
  const l = region.centreX - region.width / 2;
  const r = region.centreX + region.width / 2;
  const b = region.centreY - region.height / 2;
  const t = region.centreY + region.height / 2;
  return { x: [l, r, r, l, l], y: [b, b, t, t, b] };
}

/** Reach margin of one leg at (x, y), m (≥ 0 inside its annulus). */
function legReachMargin(model: FiveBarModel, leg: 0 | 1, x: number, y: number): number {
  const rho = Math.hypot(x - model.pivotX[leg], y - model.pivotY[leg]);
  const p = model.crank[leg];
  const d = model.rod[leg];
  return Math.min(rho - Math.abs(p - d), p + d - rho);
}

/**
 * Leg singularity curves in closed form: s_i = 0 exactly when crank and rod of leg i are aligned,
 * i.e. |P − A_i| = p_i + d_i or |p_i − d_i| (derived from s_i = cross(e_i, u_i)). Only the arcs the
 * other leg can reach are kept (elsewhere the mechanism cannot be assembled).
 */
export function legSingularityCurves(model: FiveBarModel, pointsPerCircle = 720): Polyline[] {
  const out: Polyline[] = [];
  for (const leg of [0, 1] as const) {
    const other = leg === 0 ? 1 : 0;
    const radii = [model.crank[leg] + model.rod[leg], Math.abs(model.crank[leg] - model.rod[leg])].filter((r) => r > 0);
    for (const r of radii) {
      const circle = circlePoints(model.pivotX[leg], model.pivotY[leg], r, pointsPerCircle);
      let run: Polyline = { x: [], y: [] };
      const runs: Polyline[] = [];
      for (let k = 0; k < circle.x.length; k++) {
        const x = circle.x[k]!;
        const y = circle.y[k]!;
        if (legReachMargin(model, other, x, y) >= -1e-12) {
          run.x.push(x);
          run.y.push(y);
        } else if (run.x.length > 0) {
          runs.push(run);
          run = { x: [], y: [] };
        }
      }
      if (run.x.length > 0) runs.push(run);
      // A run that wraps past angle 0 is one arc: join the last run onto the first.
      if (runs.length > 1 && runs[0]!.x[0] === circle.x[0] && runs.at(-1)!.x.at(-1) === circle.x.at(-1)) {
        const last = runs.pop()!;
        runs[0] = { x: [...last.x, ...runs[0]!.x.slice(1)], y: [...last.y, ...runs[0]!.y.slice(1)] };
      }
      out.push(...runs.filter((p) => p.x.length > 1));
    }
  }
  return out;
}

/** Mechanism singularity curves: det A = 0 contours over cells whose corners both legs reach. */
export function mechanismSingularityCurves(fields: WorkspaceMapFields): Polyline[] {
  return zeroContours(fields, fields.detA, (k) => fields.status[k] !== PoseStatus.Unreachable);
}

/** Boundary of the usable workspace (the region the metrics measure). */
export function usableBoundary(fields: WorkspaceMapFields): Polyline[] {
  if (fields.region < 0) return [];
  return zeroContours(fields, fields.regionMargin);
}

function designLabel(values: Readonly<Record<string, number | string>>): string {
  const parts = Object.entries(values).map(([k, v]) => `${k} ${typeof v === 'number' ? formatQuantity(v, 'length', 4) : v}`);
  return parts.length > 0 ? parts.join(', ') : 'fixed geometry';
}

/** Build the Vega-Lite spec of a workspace map for the study's baseline with `--set` style overrides. */
export function workspaceMapSpec(study: Study, overrides: readonly string[] = [], options: WorkspaceMapOptions = {}): WorkspaceMapSpec {
  const choice = chooseDesign(study, overrides);
  const evaluator = new Evaluator(choice.study);
  const model = evaluator.model(choice.design);
  const result = evaluator.evaluate(choice.design);
  const s = choice.study;
  const fields = sampleWorkspaceFields(s, model, options.cells ?? Math.max(s.evaluation.gridCells, MIN_MAP_CELLS));
  const home = homePose(s, model, fields);

  const lines: LineRow[] = [];
  let partCount = 0;
  const addLine = (feature: Feature, line: Polyline): void => {
    const part = `p${partCount++}`;
    const widthPx = FEATURE_STYLE.find((f) => f.feature === feature)!.width;
    for (let k = 0; k < line.x.length; k++) lines.push({ x: line.x[k]! * MM, y: line.y[k]! * MM, feature, part, order: k, widthPx });
  };
  legSingularityCurves(model).forEach((l) => addLine(MAP_FEATURES.legSingularity, l));
  if (fields) {
    mechanismSingularityCurves(fields).forEach((l) => addLine(MAP_FEATURES.mechanismSingularity, l));
    usableBoundary(fields).forEach((l) => addLine(MAP_FEATURES.usable, l));
  }
  if (s.task.region) addLine(MAP_FEATURES.task, taskOutline(s.task.region));
  if (fields?.inscribedCentre && fields.inscribedRadius > 0) {
    addLine(MAP_FEATURES.inscribed, circlePoints(fields.inscribedCentre[0], fields.inscribedCentre[1], fields.inscribedRadius, 144));
  }
  const joints: JointRow[] = [];
  if (home) {
    joints.push({ x: home.pivots[0][0] * MM, y: home.pivots[0][1] * MM, joint: 'actuated pivot A₁, A₂' });
    joints.push({ x: home.pivots[1][0] * MM, y: home.pivots[1][1] * MM, joint: 'actuated pivot A₁, A₂' });
    if (home.elbows) {
      const [a1, a2] = home.pivots;
      const [c1, c2] = home.elbows;
      addLine(MAP_FEATURES.mechanism, { x: [a1[0], c1[0], home.x, c2[0], a2[0]], y: [a1[1], c1[1], home.y, c2[1], a2[1]] });
      joints.push({ x: c1[0] * MM, y: c1[1] * MM, joint: 'elbow C₁, C₂' });
      joints.push({ x: c2[0] * MM, y: c2[1] * MM, joint: 'elbow C₁, C₂' });
      joints.push({ x: home.x * MM, y: home.y * MM, joint: 'end point P (home)' });
    } else {
      joints.push({ x: home.x * MM, y: home.y * MM, joint: 'home point (not reachable)' });
    }
  }

  // Colour map: 1/κ at reachable nodes, one rectangle per node (thinned to at most maxColourCells across).
  const colour: ColourRow[] = [];
  if (fields) {
    const stride = Math.max(1, Math.ceil(Math.max(fields.nx, fields.ny) / (options.maxColourCells ?? 160)));
    // Half a cell plus 12 % overlap, so that anti-aliased edges leave no seams between cells.
    const half = 0.56 * stride * fields.h * MM;
    for (let j = 0; j < fields.ny; j += stride) {
      for (let i = 0; i < fields.nx; i += stride) {
        const k = j * fields.nx + i;
        if (fields.status[k] === PoseStatus.Unreachable) continue;
        const x = (fields.x0 + i * fields.h) * MM;
        const y = (fields.y0 + j * fields.h) * MM;
        colour.push({ x0: x - half, x1: x + half, y0: y - half, y1: y + half, inverseCondition: Math.round(fields.inverseCondition[k]! * 1e4) / 1e4 });
      }
    }
  }

  // Axis domains: everything drawn, padded; then equal mm per px on both axes.
  let xmin = Infinity, xmax = -Infinity, ymin = Infinity, ymax = -Infinity;
  const include = (x: number, y: number): void => {
    if (x < xmin) xmin = x; if (x > xmax) xmax = x;
    if (y < ymin) ymin = y; if (y > ymax) ymax = y;
  };
  for (const r of lines) include(r.x, r.y);
  for (const r of joints) include(r.x, r.y);
  if (!Number.isFinite(xmin)) { xmin = -100; xmax = 100; ymin = -100; ymax = 100; }
  const pad = 0.04 * Math.max(xmax - xmin, ymax - ymin);
  const xDomainMm: [number, number] = [xmin - pad, xmax + pad];
  const yDomainMm: [number, number] = [ymin - pad, ymax + pad];
  const maxW = options.maxWidthPx ?? 560;
  const maxH = options.maxHeightPx ?? 520;
  const dx = xDomainMm[1] - xDomainMm[0];
  const dy = yDomainMm[1] - yDomainMm[0];
  const mmPerPx = Math.max(dx / maxW, dy / maxH);
  // Widen the shorter domain so that both sides are whole pixels at the same mm per px.
  const widthPx = Math.round(dx / mmPerPx);
  const heightPx = Math.round(dy / mmPerPx);
  const xMid = (xDomainMm[0] + xDomainMm[1]) / 2;
  const yMid = (yDomainMm[0] + yDomainMm[1]) / 2;
  xDomainMm[0] = xMid - (widthPx * mmPerPx) / 2; xDomainMm[1] = xMid + (widthPx * mmPerPx) / 2;
  yDomainMm[0] = yMid - (heightPx * mmPerPx) / 2; yDomainMm[1] = yMid + (heightPx * mmPerPx) / 2;

  const m = (name: string): number => result.metrics[metricIndex(name)]!;
  const summary = `usable area ${formatQuantity(m('workspace_area'), 'area', 3).replace('m^2', 'm²')}, inscribed radius ${formatQuantity(m('inscribed_radius'), 'length', 3)}, ` +
    (s.task.region ? `task coverage ${(m('task_coverage') * 100).toFixed(1)} %, ` : '') + `GCI ${m('gci').toFixed(3)}`;
  const homeText = home
    ? `mechanism drawn at ${home.source === 'task-centre' ? 'the task centre' : 'the inscribed circle centre'} (${(home.x * MM).toFixed(0)}, ${(home.y * MM).toFixed(0)}) mm` +
      (home.status === PoseStatus.Unreachable ? ' — NOT reachable' : home.status === PoseStatus.Assembled ? '' : ' — not a usable pose')
    : 'no home pose (no task region and no usable workspace)';
  const modes = `working mode ${model.sigma.map((v) => (v > 0 ? '+' : '-')).join('')}, assembly mode ${s.assemblyMode}`;

  const jointStyles = JOINT_STYLE.filter((j) => joints.some((row) => row.joint === j.joint));
  const { xScale, yScale, xAxis, yAxis } = mapAxes({ xDomainMm, yDomainMm, widthPx, heightPx });

  const spec: TopLevelSpec = {
    $schema: 'https://vega.github.io/schema/vega-lite/v6.json',
    title: {
      text: options.title ?? `Workspace of ${s.name}`,
      subtitle: [designLabel(choice.values) + '; ' + modes, summary, homeText],
    },
    width: widthPx,
    height: heightPx,
    layer: [
      {
        name: 'colour_map',
        data: { values: colour },
        mark: { type: 'rect', strokeWidth: 0 },
        encoding: {
          x: { field: 'x0', type: 'quantitative', scale: xScale, axis: xAxis },
          x2: { field: 'x1' },
          y: { field: 'y0', type: 'quantitative', scale: yScale, axis: yAxis },
          y2: { field: 'y1' },
          color: {
            field: 'inverseCondition',
            type: 'quantitative',
            scale: { scheme: 'viridis', domain: [0, 1] },
            legend: { title: ['1/κ(J), conditioning', `(usable needs ≥ ${s.evaluation.minInverseCondition})`], titleLimit: 320, orient: 'right', gradientLength: Math.min(200, heightPx - 40), direction: 'vertical' },
          },
        },
      },
      ...curveAndJointLayers({ xDomainMm, yDomainMm, widthPx, heightPx }, lines, joints, FEATURE_STYLE, jointStyles),
    ],
    resolve: { scale: { color: 'independent', shape: 'independent', fill: 'independent', strokeDash: 'independent' }, legend: { color: 'independent' } },
  };
  return { spec, layout: { xDomainMm, yDomainMm, widthPx, heightPx }, fields, home, metrics: result.metrics };
}

/** SVG of the workspace map of the study's baseline design with `--set` style overrides. */
export async function renderWorkspaceMap(study: Study, overrides: readonly string[] = [], options: WorkspaceMapOptions = {}): Promise<string> {
  return renderVegaLiteSvg(workspaceMapSpec(study, overrides, options).spec);
}
