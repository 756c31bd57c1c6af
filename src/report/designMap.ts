/**
 * Workspace map of one design of any study (every architecture, comparison members included) through
 * the architecture interface: the one map specification (architectureMap.ts) with the study's task
 * region, usable thresholds, orientation φ_0 and grid window (`evaluation.window`, clipped to the
 * reach; without it the map's own window, which follows the strokes), and the evaluator's verdict:
 * a feasibility line (feasible, or each failing constraint with its value and bound), the design and
 * the metrics as label–value pairs.
 */
import type { ArchitectureModelBase, PlanarArchitecture, PlaneBox } from '../architectures/types.js';
import { constraintDefinitions, Evaluator, type DesignEvaluation } from '../mechanics/evaluate.js';
import { METRICS, metricIndex } from '../mechanics/metrics.js';
import type { Study } from '../study/types.js';
import { formatQuantity } from '../study/units.js';
import { architectureMapSpec, type ArchitectureMapSpec, type MapCellLayer } from './architectureMap.js';
import { CellAnalysis } from '../mechanics/cellMetrics.js';
import { rectanglePolygon } from '../cell/geometry.js';
import { shapeOutline } from '../cell/taskShapes.js';
import type { Mount } from '../cell/types.js';
import { errorEllipseLayer } from './errorEllipses.js';

/** Default smallest grid of a map (cells across the window). */
export const MIN_MAP_CELLS = 120;

/** A metric value with its unit (a metric the study cannot compute: "n/a"). */
function metricText(name: string, value: number): string {
  if (Number.isNaN(value)) return 'n/a';
  const info = METRICS[metricIndex(name)];
  return formatQuantity(value, info ? info.kind : 'dimensionless', 3).replace('m^2', 'm²');
}

/** "feasible (n constraints hold)", or "NOT feasible — fails: <constraint> <value> (needs ≥ / ≤ <bound>); …". */
export function feasibilityLine(study: Study, result: DesignEvaluation): string {
  const defs = constraintDefinitions(study);
  if (result.feasible) return defs.length > 0 ? `feasible: all ${defs.length} constraints hold` : 'feasible (the study sets no constraints)';
  const failing = defs.flatMap((def, k) => {
    if (!(result.margins[k]! < 0)) return [];
    const value = result.metrics[def.metricIndex]!;
    const min = result.constraintMin[k]!;
    const max = result.constraintMax[k]!;
    const bound = Number.isFinite(min) && value < min ? `needs ≥ ${metricText(def.metric, min)}` : Number.isFinite(max) ? `needs ≤ ${metricText(def.metric, max)}` : `margin ${result.margins[k]!.toFixed(3)}`;
    return [`${def.name} ${metricText(def.metric, value)} (${bound})`];
  });
  return `NOT feasible — fails: ${failing.join('; ')}`;
}

/** Label–value pairs of the metrics a designer reads first. */
function metricsLine(study: Study, result: DesignEvaluation): string {
  const names = ['workspace_area', 'inscribed_radius', ...(study.task.region ? ['task_coverage'] : []), 'gci', 'min_inv_condition', ...(study.cell ? ['regular_workspace_area', 'min_clearance'] : [])];
  return names.map((name) => `${name}: ${metricText(name, result.metrics[metricIndex(name)]!)}`).join('   ');
}

/** Platform orientation the study's workspace is taken at, rad (0 for 2-DOF). */
export function studyPhi0(study: Study, dof: number): number {
  return dof === 3 ? (study.orientation?.phi0 ?? 0) : 0;
}

/**
 * The evaluator's grid box: the reachable box at φ_0 clipped to the study's `evaluation.window`;
 * undefined when it is unbounded or empty.
 */
export function studyGridBox(architecture: PlanarArchitecture<ArchitectureModelBase>, model: ArchitectureModelBase, study: Study, phi0: number): PlaneBox | undefined {
  const raw = architecture.reachableBox(model, phi0);
  if (!raw) return undefined;
  const w = study.evaluation.window;
  const box = w ? { xmin: Math.max(raw.xmin, w.xmin), xmax: Math.min(raw.xmax, w.xmax), ymin: Math.max(raw.ymin, w.ymin), ymax: Math.min(raw.ymax, w.ymax) } : raw;
  if (![box.xmin, box.xmax, box.ymin, box.ymax].every(Number.isFinite) || !(box.xmax > box.xmin && box.ymax > box.ymin)) return undefined;
  return box;
}

export interface DesignMapOptions {
  /** Grid cells across the window (default: the study's grid_cells, at least MIN_MAP_CELLS). */
  readonly cells?: number;
  readonly title?: string;
  readonly maxWidthPx?: number;
  readonly maxHeightPx?: number;
  readonly maxColourCells?: number;
}

/** Outlines of the drive housings at the (mounted) pivots of a leg model. */
function housingOutlines(cell: NonNullable<Study['cell']>, model: ArchitectureModelBase, mount: Mount | undefined): Float64Array[] {
  const m = model as ArchitectureModelBase & { baseX?: readonly number[]; baseY?: readonly number[]; legs?: readonly { name: string }[] };
  if (!cell.interference || !m.baseX || !m.baseY) return [];
  const out: Float64Array[] = [];
  cell.interference.housings.forEach((h, i) => {
    if (!h || m.legs?.[i]?.name === 'slider-rod') return;
    const x = m.baseX![i]!;
    const y = m.baseY![i]!;
    out.push(h.shape === 'circle' ? shapeOutline({ shape: 'circle', centreX: x, centreY: y, radius: h.radius }) : rectanglePolygon(x, y, h.width, h.height, h.angle + (mount?.angle ?? 0)));
  });
  return out;
}

/** The cell layer of a design's map: keep-outs, zones, its clearance checks and its regular rectangle (from the metrics). */
function cellLayer(study: Study, architecture: PlanarArchitecture<ArchitectureModelBase>, model: ArchitectureModelBase, mount: Mount | undefined, metrics: Float64Array): MapCellLayer {
  const cell = study.cell!;
  const analysis = CellAnalysis.forStudy(study, architecture)!;
  analysis.prepare(model, mount);
  const width = metrics[metricIndex('regular_workspace_width')]!;
  const x = metrics[metricIndex('regular_workspace_x')]!;
  const y = metrics[metricIndex('regular_workspace_y')]!;
  const rectangle = width > 0 && Number.isFinite(x) ? rectanglePolygon(x, y, width, width / cell.regular.aspect, cell.regular.angle) : null;
  return {
    ...(analysis.restricts ? { nodeMargin: (pose, status) => analysis.nodeMargin(pose, status), restricts: true } : {}),
    keepOuts: cell.keepOuts.map(shapeOutline),
    zones: cell.zones.map(shapeOutline),
    housings: housingOutlines(cell, model, mount),
    rectangle,
  };
}

/** The workspace-map spec of one design vector of a study (any architecture, comparison included). */
export function designMapSpec(
  study: Study,
  design: ArrayLike<number>,
  options: DesignMapOptions = {},
): ArchitectureMapSpec & { readonly architecture: string; readonly metrics: Float64Array; readonly feasible: boolean } {
  const evaluator = new Evaluator(study);
  const built = evaluator.architectureDesign(design);
  const result = evaluator.evaluate(design);
  const member = built.study;
  const { architecture, model } = built;
  const phi0 = studyPhi0(member, model.dof);
  const box = member.evaluation.window ? studyGridBox(architecture, model, member, phi0) : undefined;
  // The design's variable parameters (fixed and tied ones follow from the study) as label–value pairs.
  const label = architecture.parameters
    .filter((p) => member.geometry[p.name]?.kind === 'variable')
    .map((p) => `${p.name}: ${formatQuantity(built.resolved.geometry[p.name]!, p.kind === 'angle' ? 'angle' : 'length', 4)}`)
    .join('   ') || 'fixed geometry';
  const map = architectureMapSpec(architecture, model, {
    usable: { minInverseCondition: member.evaluation.minInverseCondition, minTransmissionAngle: member.evaluation.minTransmissionAngle },
    taskRegion: member.task.region ?? null,
    phi0,
    cells: options.cells ?? Math.max(member.evaluation.gridCells, MIN_MAP_CELLS),
    title: options.title ?? `Workspace of ${study.name}${study.members ? ` (${architecture.name} member)` : ''}`,
    designLabel: `${architecture.name} — ${label}`,
    feasibility: feasibilityLine(study, result),
    metricsLabel: metricsLine(study, result),
    workingMode: built.resolved.workingMode,
    ...(box ? { window: box } : {}),
    ...(options.maxWidthPx !== undefined ? { maxWidthPx: options.maxWidthPx } : {}),
    ...(options.maxHeightPx !== undefined ? { maxHeightPx: options.maxHeightPx } : {}),
    ...(options.maxColourCells !== undefined ? { maxColourCells: options.maxColourCells } : {}),
    ...(member.cell ? { cell: cellLayer(member, architecture, model, built.resolved.mount, result.metrics) } : {}),
  });
  // First-order error ellipses over the task region when the study gives tolerances (docs/accuracy.md).
  const ellipses = errorEllipseLayer(built, map.layout);
  if (ellipses) {
    (map.spec as { layer: object[] }).layer.push(ellipses.layer);
    const note = `error ellipses (${ellipses.coverage}σ, drawn ×${ellipses.magnification}): position_error_rss ${metricText('position_error_rss', result.metrics[metricIndex('position_error_rss')]!)}`;
    const spec = map.spec as { title?: { text?: unknown; subtitle?: unknown } };
    if (spec.title && Array.isArray(spec.title.subtitle)) spec.title.subtitle = [...(spec.title.subtitle as string[]), note];
  }
  return { ...map, architecture: architecture.name, metrics: result.metrics, feasible: result.feasible };
}
