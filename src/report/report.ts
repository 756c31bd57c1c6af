/**
 * Self-contained HTML report of one stored run: study summary and inputs, convergence (hypervolume
 * per generation), the objectives' scatter matrix (every evaluated member; the feasible front
 * highlighted), a sortable table of the front, and a metric card and workspace map for the leading
 * designs. Everything is inline (SVG charts, CSS, a small sorting script): the file opens offline
 * from disk and loads nothing from the network.
 */
import { existsSync, mkdirSync, writeFileSync } from 'node:fs';
import { join, resolve } from 'node:path';
import type { TopLevelSpec } from 'vega-lite';
import { constraintBounds, constraintDefinitions } from '../mechanics/evaluate.js';
import { designFromValues, designVariables, studyActuators, variableKind } from '../mechanics/designSpace.js';
import { METRICS, metricInfo, metricKind } from '../mechanics/metrics.js';
import { runFront } from '../run/front.js';
import { analyseFront, type StoredFrontAnalysis } from '../run/frontTools.js';
import { Store, StoreError, type RunRow, type StoredEvaluation } from '../store/store.js';
import { parseStudyText } from '../study/parse.js';
import { ARCHITECTURE_PREFIX, type ObjectiveSpec, type Study } from '../study/types.js';
import { displayUnit, formatQuantity } from '../study/units.js';
import { designMapSpec } from './designMap.js';
import { OKABE_ITO, renderVegaLiteSvg } from './render.js';
import { PARALLEL_SCRIPT } from './parallel.js';
import { BUILT_ARM_LIMITS } from '../accuracy/limits.js';

/** The caution every user-facing report carries (README, "Safety"). */
export const SAFETY_CAUTION =
  'loopsmith’s results are early-design estimates from simplified models (rigid bodies, frictionless pins, lumped compliance, static and standstill analyses). ' +
  'They are not a safety analysis and do not certify a machine. Moving machines can hurt people: follow the machinery and robot safety standards and the local codes ' +
  'that apply to your machine, perform your own risk assessment, and have the design reviewed by a licensed engineer before anything is built or run.';

/**
 * Representatives asked for (front --representatives K): the leading designs are the front's
 * representatives (extremes and knees always, the rest farthest apart), each with a metric card and
 * a workspace map; there can be more when the extremes and knees alone exceed it.
 */
export const LEADING_DESIGNS = 4;

/** A constraint whose margin is below this fraction of its bound (and not violated) is binding (as in rescore). */
export const BINDING_MARGIN = 0.01;

/** Scatter axes span the PERCENTILE..(100 - PERCENTILE) range of the drawn designs (the front always inside). */
export const CLIP_PERCENTILE = 2;

export const MEMBER_STATUS = { front: 'on the feasible front', feasible: 'feasible', infeasible: 'infeasible' } as const;

export interface ReportData {
  readonly dbPath: string;
  readonly run: RunRow;
  readonly study: Study;
  readonly studyText: string;
  readonly hypervolume: readonly { generation: number; hypervolume: number }[];
  /** Feasible members per generation. */
  readonly feasiblePerGeneration: readonly { generation: number; feasible: number; evaluations: number }[];
  /** Distinct designs that were members of any generation of the run (failed evaluations left out). */
  readonly members: readonly StoredEvaluation[];
  readonly failedCount: number;
  /** The feasible non-dominated designs (runFront). */
  readonly front: readonly StoredEvaluation[];
  /** Front designs in table order: best first by the first objective. */
  readonly ranked: readonly StoredEvaluation[];
  /** Extremes, knees, representatives and redundancy of the front (src/run/frontTools.ts). */
  readonly analysis: StoredFrontAnalysis;
  /** The leading designs: the representatives, in their order (extremes, knees, spread). */
  readonly leading: readonly StoredEvaluation[];
  /** How an optimization run ended and where it stands (end reason, last window's gain, how to continue). */
  readonly standing?: string;
}

/** One sentence on how an optimization run ended, from runs.end_reason and the last generation's hv_improvement. */
export function runStanding(run: RunRow, last: { hvImprovement?: number | null } | undefined, studyName: string): string | undefined {
  if (run.kind !== 'optimize') return undefined;
  const termination = run.terminationJson ? (JSON.parse(run.terminationJson) as { convergence?: { window: number; tolerance: number } }) : {};
  const window = termination.convergence?.window ?? 20;
  const tolerance = termination.convergence?.tolerance ?? 0.001;
  const gain = last?.hvImprovement;
  const gainText = gain === null || gain === undefined ? `not known (fewer than ${window} generations)` : Number.isFinite(gain) ? `${(gain * 100).toPrecision(2)} % over the last ${window} generations` : 'a first front over the last window';
  const how = run.status === 'finished'
    ? run.endReason === 'converged' ? 'converged: the best front found stopped improving' : run.endReason === 'budget' ? 'ended on its budget (generation count or evaluation cap)' : 'finished'
    : `${run.status}`;
  const still = run.status === 'finished' && run.endReason === 'budget' && (gain === null || gain === undefined || gain >= tolerance);
  return `${how}; the best front's hypervolume grew by ${gainText}.` + (still ? ` It was still improving: continue it with loopsmith run STUDY --more converge --run ${run.id} (STUDY: the study file of ${studyName}).` : '');
}

/** Read everything a report shows from the store. */
export function readReportData(dbPath: string, runId?: number): ReportData {
  if (!existsSync(dbPath)) throw new StoreError(`${dbPath}: no such database (run a study first: loopsmith run STUDY)`);
  const front = runFront(dbPath, runId);
  const store = Store.open(dbPath);
  try {
    const run = store.getRun(front.runId)!;
    const studyRow = store.getStudy(run.studyId)!;
    const { study } = parseStudyText(studyRow.fileText, `${dbPath} (study of run ${run.id})`);
    const stats = store.generationStats(run.id);
    const standing = runStanding(run, stats.at(-1), study.name);
    const feasiblePerGeneration = stats.map((st) => ({ generation: st.generation, feasible: st.feasibleCount, evaluations: st.evaluations }));
    const hypervolume = stats
      .filter((s) => s.hypervolume !== null && Number.isFinite(s.hypervolume))
      .map((s) => ({ generation: s.generation, hypervolume: s.hypervolume! }));
    const byId = new Map<number, StoredEvaluation>();
    let failedCount = 0;
    const last = store.lastGeneration(run.id);
    for (let g = 0; last !== undefined && g <= last; g++) {
      for (const m of store.generationMembers(run.id, g)) {
        if (byId.has(m.id)) continue;
        byId.set(m.id, m);
      }
    }
    const members = [...byId.values()].filter((m) => {
      if (m.error !== null) failedCount++;
      return m.error === null;
    });
    const first = study.objectives[0];
    const ranked = [...front.designs].sort((a, b) => {
      if (!first) return a.id - b.id;
      const va = a.metrics[first.metric] ?? Number.NaN;
      const vb = b.metrics[first.metric] ?? Number.NaN;
      return (first.sense === 'max' ? vb - va : va - vb) || a.id - b.id;
    });
    const analysis = analyseFront(front, LEADING_DESIGNS);
    const byFrontId = new Map(front.designs.map((d) => [d.id, d]));
    const leading = analysis.representatives.map((r) => byFrontId.get(r.id)!);
    return { dbPath, run, study, studyText: studyRow.fileText, hypervolume, feasiblePerGeneration, members, failedCount, front: front.designs, ranked, analysis, leading, ...(standing ? { standing } : {}) };
  } finally {
    store.close();
  }
}

function escapeHtml(text: string): string {
  return text.replace(/&/g, '&amp;').replace(/</g, '&lt;').replace(/>/g, '&gt;').replace(/"/g, '&quot;');
}

/** Objective value in display units (e.g. N·m, Hz, mm), or null when missing or infinite. */
function displayValue(metric: string, value: number | null | undefined): number | null {
  if (value === null || value === undefined || !Number.isFinite(value)) return null;
  const info = metricInfo(metric);
  return info ? value / displayUnit(info.kind).factor : value;
}

function axisTitle(o: ObjectiveSpec): string {
  const info = metricInfo(o.metric);
  const symbol = info ? displayUnit(info.kind).symbol : '';
  return `${o.metric}${symbol ? ` (${prettyUnits(symbol)})` : ''} — ${o.sense === 'max' ? 'higher' : 'lower'} is better`;
}

/** Unit text as people read it: m², N·m, m/s². */
export function prettyUnits(text: string): string {
  return text.replace(/\^2/g, '²').replace(/\^3/g, '³').replace(/\*/g, '·');
}

/**
 * A metric value with its unit. `actuators`: the design's actuator kinds (sliders turn the
 * per-actuator effort and speed metrics into N and m/s); absent = cranks.
 */
function formatMetricValue(metric: string, value: number | null | undefined, actuators?: readonly ('revolute' | 'prismatic')[]): string {
  if (value === null || value === undefined || Number.isNaN(value)) return '—';
  if (!Number.isFinite(value)) return value > 0 ? '∞' : '−∞';
  const info = metricInfo(metric);
  const kind = info ? metricKind(metric, actuators) : 'dimensionless';
  // Encoder-scale lengths read best in µm.
  if (kind === 'length' && value !== 0 && Math.abs(value) < 1e-3) return `${Number((value * 1e6).toPrecision(4))} µm`;
  return prettyUnits(formatQuantity(value, kind, 4));
}

/**
 * False for a comparison study's variable of a member the design did not choose (its stored value is
 * carried by the optimizer but does not describe the design); true otherwise.
 */
function isActiveVariable(study: Study, name: string, values: Readonly<Record<string, number | string>>): boolean {
  if (!study.members || name === 'architecture') return true;
  const chosen = values['architecture'];
  if (typeof chosen !== 'string' || !(chosen in ARCHITECTURE_PREFIX)) return true;
  return name.startsWith(`${ARCHITECTURE_PREFIX[chosen as keyof typeof ARCHITECTURE_PREFIX]}_`);
}

/** A design variable's value: lengths in mm, angles in degrees, choices by name. */
function formatVariable(study: Study, name: string, value: number | string): string {
  return typeof value === 'number' ? formatQuantity(value, variableKind(study, name), 4) : value;
}

/**
 * Convergence: hypervolume per generation (one point per generation that has one) above the number
 * of feasible designs per generation (one bar per generation), on a shared generation axis.
 */
export function convergenceSpec(data: ReportData): TopLevelSpec {
  const last = data.feasiblePerGeneration.at(-1)?.generation ?? 0;
  const generationScale = { domain: [-0.5, last + 0.5], nice: false, zero: false };
  const generationAxis = { title: 'generation', tickMinStep: 1, format: 'd' };
  return {
    $schema: 'https://vega.github.io/schema/vega-lite/v6.json',
    title: { text: 'Hypervolume of the feasible designs (higher is better) and feasible designs per generation', fontSize: 13, fontWeight: 'normal' },
    vconcat: [
      {
        width: 560,
        height: 200,
        data: { values: data.hypervolume.map((h) => ({ generation: h.generation, hypervolume: h.hypervolume })) },
        encoding: {
          x: { field: 'generation', type: 'quantitative', axis: { ...generationAxis, title: null }, scale: generationScale },
          y: { field: 'hypervolume', type: 'quantitative', axis: { title: 'hypervolume (normalised)' }, scale: { zero: false } },
        },
        layer: [
          { name: 'hv_line', mark: { type: 'line', color: OKABE_ITO.blue, strokeWidth: 2 } },
          { name: 'hv_points', mark: { type: 'point', filled: true, color: OKABE_ITO.blue, size: 40 }, encoding: { tooltip: [{ field: 'generation', type: 'quantitative' }, { field: 'hypervolume', type: 'quantitative', format: '.4f' }] } },
        ],
      },
      {
        name: 'feasible_bars',
        width: 560,
        height: 110,
        data: { values: data.feasiblePerGeneration.map((f) => ({ generation: f.generation, feasible: f.feasible, evaluations: f.evaluations })) },
        mark: { type: 'bar', color: OKABE_ITO.bluishGreen, width: Math.max(2, Math.round((0.6 * 560) / (last + 1))) },
        encoding: {
          x: { field: 'generation', type: 'quantitative', axis: generationAxis, scale: generationScale },
          y: { field: 'feasible', type: 'quantitative', axis: { title: 'feasible designs', tickMinStep: 1, format: 'd' } },
          tooltip: [{ field: 'generation', type: 'quantitative' }, { field: 'feasible', type: 'quantitative' }, { field: 'evaluations', type: 'quantitative', title: 'population' }],
        },
      },
    ],
  } as TopLevelSpec;
}

interface ScatterRow { id: number; status: string; drawOrder: number; [objective: string]: number | string }

/** Rows of the scatter matrix (every member with finite objectives) and how many were left out. */
export function scatterRows(data: ReportData): { rows: ScatterRow[]; omitted: number } {
  const frontIds = new Set(data.front.map((d) => d.id));
  const rows: ScatterRow[] = [];
  let omitted = 0;
  for (const m of data.members) {
    const row: ScatterRow = {
      id: m.id,
      status: frontIds.has(m.id) ? MEMBER_STATUS.front : m.feasible ? MEMBER_STATUS.feasible : MEMBER_STATUS.infeasible,
      drawOrder: frontIds.has(m.id) ? 2 : m.feasible ? 1 : 0,
    };
    let finite = true;
    for (const o of data.study.objectives) {
      const v = displayValue(o.metric, m.metrics[o.metric]);
      if (v === null) { finite = false; break; }
      row[o.metric] = v;
    }
    if (finite) rows.push(row);
    else omitted++;
  }
  return { rows, omitted };
}

/** Number of panels in the scatter matrix: every pair of objectives (one panel for a single objective). */
export function scatterPanelCount(objectiveCount: number): number {
  return objectiveCount < 2 ? 1 : (objectiveCount * (objectiveCount - 1)) / 2;
}

export interface AxisClip {
  readonly metric: string;
  readonly domain: [number, number];
  /** Drawn designs beyond the domain (drawn on the axis edge), and the full range of the values. */
  readonly below: number;
  readonly above: number;
  readonly range: [number, number];
}

function percentile(sorted: readonly number[], p: number): number {
  if (sorted.length === 0) return Number.NaN;
  const position = (p / 100) * (sorted.length - 1);
  const lower = Math.floor(position);
  const upper = Math.min(sorted.length - 1, lower + 1);
  return sorted[lower]! + (sorted[upper]! - sorted[lower]!) * (position - lower);
}

/**
 * Axis domains robust to outliers: the CLIP_PERCENTILE..(100 - CLIP_PERCENTILE) range of the drawn
 * designs, widened to hold every front design and padded by 4 %; values beyond are counted (and drawn
 * on the edge). An axis whose full range is no more than 1.5 times that domain is not clipped.
 */
export function scatterClips(data: ReportData, rows: readonly ScatterRow[]): AxisClip[] {
  return data.study.objectives.map((o) => {
    const values = rows.map((r) => r[o.metric] as number).sort((a, b) => a - b);
    const front = rows.filter((r) => r.status === MEMBER_STATUS.front).map((r) => r[o.metric] as number);
    const range: [number, number] = [values[0] ?? 0, values.at(-1) ?? 0];
    let lo = Math.min(percentile(values, CLIP_PERCENTILE), ...front);
    let hi = Math.max(percentile(values, 100 - CLIP_PERCENTILE), ...front);
    const pad = 0.04 * (hi - lo || Math.abs(hi) || 1);
    lo -= pad;
    hi += pad;
    if (range[1] - range[0] <= 1.5 * (hi - lo)) return { metric: o.metric, domain: range, below: 0, above: 0, range };
    lo = Math.max(lo, range[0]);
    hi = Math.min(hi, range[1]);
    return { metric: o.metric, domain: [lo, hi], below: values.filter((v) => v < lo).length, above: values.filter((v) => v > hi).length, range };
  });
}

function clipText(clips: readonly AxisClip[], objectives: readonly ObjectiveSpec[]): string {
  const parts = clips
    .filter((c) => c.below + c.above > 0)
    .map((c) => {
      const o = objectives.find((x) => x.metric === c.metric)!;
      const unit = axisTitle(o).match(/\(([^)]*)\)/)?.[1] ?? '';
      const fmt = (v: number): string => `${Number(v.toPrecision(4))}${unit ? ' ' + unit : ''}`;
      const sides = [c.below > 0 ? `${c.below} below ${fmt(c.domain[0])} (down to ${fmt(c.range[0])})` : '', c.above > 0 ? `${c.above} above ${fmt(c.domain[1])} (up to ${fmt(c.range[1])})` : ''].filter(Boolean);
      return `${c.metric}: ${sides.join(', ')}`;
    });
  return parts.length === 0 ? '' : `Axes clipped to the ${CLIP_PERCENTILE}th–${100 - CLIP_PERCENTILE}th percentile of the drawn designs (every front design inside); designs beyond are drawn on the axis edge — ${parts.join('; ')}.`;
}

/** Scatter matrix: each pair of objectives once (lower triangle); feasible, infeasible and front told apart. */
export function scatterMatrixSpec(data: ReportData): TopLevelSpec {
  const { rows, omitted } = scatterRows(data);
  const objectives = data.study.objectives;
  const clips = new Map(scatterClips(data, rows).map((c) => [c.metric, c]));
  const scaleOf = (field: string) => {
    const clip = clips.get(field);
    return clip ? { zero: false, nice: false, domain: clip.domain, clamp: true } : { zero: false };
  };
  const statusDomain = [MEMBER_STATUS.front, MEMBER_STATUS.feasible, MEMBER_STATUS.infeasible];
  const colour = { field: 'status', type: 'nominal', scale: { domain: statusDomain, range: [OKABE_ITO.vermillion, OKABE_ITO.blue, '#9e9e9e'] }, legend: { title: 'designs', orient: 'top', labelLimit: 300 } } as const;
  const shape = { field: 'status', type: 'nominal', scale: { domain: statusDomain, range: ['diamond', 'circle', 'cross'] }, legend: { title: 'designs', orient: 'top', labelLimit: 300 } } as const;
  const size = Math.max(120, Math.min(260, Math.round(560 / Math.max(1, objectives.length - 1))));
  const panel = (xField: string, xTitle: string, yField: string, yTitle: string, name: string) => ({
    name,
    width: size,
    height: size,
    mark: { type: 'point', filled: true, opacity: 0.8, size: 30 },
    encoding: {
      x: { field: xField, type: 'quantitative', scale: scaleOf(xField), axis: { title: xTitle, titleFontSize: 11 } },
      y: { field: yField, type: 'quantitative', scale: scaleOf(yField), axis: { title: yTitle, titleFontSize: 11 } },
      color: colour,
      shape,
      order: { field: 'drawOrder', type: 'quantitative' },
      tooltip: [{ field: 'id', type: 'quantitative', title: 'design id' }, { field: 'status', type: 'nominal' }, { field: xField, type: 'quantitative', format: '.4~g' }, { field: yField, type: 'quantitative', format: '.4~g' }],
    },
  });
  const subtitle = `${rows.length} of the ${data.members.length} distinct designs kept in a population of run ${data.run.id}` + (omitted > 0 ? `; ${omitted} with an infinite or missing objective not shown` : '') +
    (data.failedCount > 0 ? `; ${data.failedCount} failed evaluations left out` : '');
  const base = { $schema: 'https://vega.github.io/schema/vega-lite/v6.json', title: { text: subtitle, fontSize: 13, fontWeight: 'normal' }, data: { values: rows } } as const;
  if (objectives.length < 2) {
    const o = objectives[0]!;
    return { ...base, ...panel('id', 'design id', o.metric, axisTitle(o), 'scatter_0') } as TopLevelSpec;
  }
  const vconcat = [];
  for (let i = 1; i < objectives.length; i++) {
    const hconcat = [];
    for (let j = 0; j < i; j++) {
      hconcat.push(panel(objectives[j]!.metric, axisTitle(objectives[j]!), objectives[i]!.metric, axisTitle(objectives[i]!), `scatter_${i}_${j}`));
    }
    vconcat.push({ hconcat });
  }
  return { ...base, vconcat, resolve: { scale: { x: 'independent', y: 'independent' } } } as TopLevelSpec;
}

/** Give every id of an SVG (gradients, clip paths) a prefix so that several SVGs can share one page. */
export function prefixSvgIds(svg: string, prefix: string): string {
  const ids = new Set<string>();
  for (const m of svg.matchAll(/\sid="([^"]+)"/g)) ids.add(m[1]!);
  let out = svg;
  for (const id of ids) {
    const safe = id.replace(/[.*+?^${}()|[\]\\]/g, '\\$&');
    out = out
      .replace(new RegExp(`\\sid="${safe}"`, 'g'), ` id="${prefix}${id}"`)
      .replace(new RegExp(`url\\(#${safe}\\)`, 'g'), `url(#${prefix}${id})`)
      .replace(new RegExp(`href="#${safe}"`, 'g'), `href="#${prefix}${id}"`);
  }
  return out;
}

function table(header: readonly string[], rows: readonly (readonly string[])[], className = ''): string {
  return `<table${className ? ` class="${className}"` : ''}><thead><tr>${header.map((h) => `<th>${escapeHtml(h)}</th>`).join('')}</tr></thead><tbody>${rows
    .map((r) => `<tr>${r.map((c) => `<td>${escapeHtml(c)}</td>`).join('')}</tr>`)
    .join('')}</tbody></table>`;
}

function studySection(data: ReportData): string {
  const s = data.study;
  const run = data.run;
  const vars = designVariables(s).map((v) =>
    v.kind === 'real' ? [v.name, `${formatQuantity(v.min, variableKind(s, v.name), 4)} … ${formatQuantity(v.max, variableKind(s, v.name), 4)}`] : [v.name, v.choices.join(', ')],
  );
  const cons = constraintDefinitions(s).map((c) => {
    const bounds = constraintBounds(c, s, s.drives ?? null);
    const perDesign = c.driveLimit !== undefined && bounds.min === undefined && bounds.max === undefined;
    return [c.name, c.metric, formatMetricValue(c.metric, bounds.min ?? null), perDesign ? 'from each design’s drive' : formatMetricValue(c.metric, bounds.max ?? null), c.origin];
  });
  const region = s.task.region;
  const task = region
    ? region.shape === 'rectangle'
      ? `rectangle ${formatQuantity(region.width, 'length')} × ${formatQuantity(region.height, 'length')} centred at (${formatQuantity(region.centreX, 'length')}, ${formatQuantity(region.centreY, 'length')})`
      : `circle of radius ${formatQuantity(region.radius, 'length')} centred at (${formatQuantity(region.centreX, 'length')}, ${formatQuantity(region.centreY, 'length')})`
    : 'none (metrics over the whole usable workspace)';
  const facts: [string, string][] = [
    ['study', `${s.name}${s.description ? ' — ' + s.description : ''}`],
    ['database', data.dbPath],
    ['run', `${run.id} (${run.kind}), status ${run.status}, seed ${run.seed}, ${run.generationsDone} generations, ${run.workers} workers, started ${run.startedAt}, ${run.elapsedSeconds.toFixed(0)} s`],
    ...(data.standing ? ([['ended', data.standing]] as [string, string][]) : []),
    // The same counts and words as the summary of \`loopsmith run\`.
    ['designs', `${data.feasiblePerGeneration.reduce((n, g) => n + g.evaluations, 0)} designs asked for over ${data.feasiblePerGeneration.length} generations; ${data.members.length} distinct designs kept in a population, ${data.members.filter((m) => m.feasible).length} feasible, ${data.front.length} on the feasible front`],
    ['architecture', s.members ? `comparison of ${s.members.map((m) => m.architecture).join(', ')} (a design variable)` : s.architecture],
    [
      'working mode / assembly',
      s.members ? s.members.map((m) => `${m.architecture}: ${m.workingModes.join(', ')} / ${m.assemblyMode}`).join('; ') : `${s.workingModes.join(', ')} / ${s.assemblyMode}`,
    ],
    ['task region', task],
    ['evaluation', `${s.evaluation.gridCells} grid cells, ${s.evaluation.taskSamples} task samples, usable when 1/κ ≥ ${s.evaluation.minInverseCondition} and transmission angles ≥ ${formatQuantity(s.evaluation.minTransmissionAngle, 'angle')}`],
  ];
  return `<section id="study"><h2>Study and inputs</h2>
<dl class="facts">${facts.map(([k, v]) => `<dt>${escapeHtml(k)}</dt><dd>${escapeHtml(v)}</dd>`).join('')}</dl>
<div class="tables">
<div><h3>Design variables</h3>${table(['variable', 'bounds or choices'], vars)}</div>
<div><h3>Objectives</h3>${table(['metric', 'sense', 'meaning'], s.objectives.map((o) => [o.metric, o.sense, metricInfo(o.metric)?.description ?? '']))}</div>
${cons.length > 0 ? `<div><h3>Constraints</h3>${table(['constraint', 'metric', 'min', 'max', 'from'], cons)}</div>` : ''}
</div>
<details><summary>Study file as stored with the run</summary><pre>${escapeHtml(data.studyText)}</pre></details>
</section>`;
}

/** Columns of the front table: design variables, objectives, then a few metrics a designer asks about. */
function frontColumns(data: ReportData): { variables: string[]; metrics: string[] } {
  const variables = designVariables(data.study).map((v) => v.name as string);
  const objectives = data.study.objectives.map((o) => o.metric);
  // At most nine metric columns in all, so the table fits the page; every metric is on the cards and in `loopsmith front --format csv`.
  const extra = ['task_coverage', 'inscribed_radius', 'min_transmission_angle', 'workspace_area', 'footprint', 'moving_mass']
    .filter((m) => !objectives.includes(m))
    .slice(0, Math.max(2, 9 - objectives.length));
  return { variables, metrics: [...objectives, ...extra] };
}

/** Names of the constraints a design holds with less than BINDING_MARGIN to spare. */
export function bindingConstraints(data: ReportData, d: StoredEvaluation): string[] {
  return constraintDefinitions(data.study)
    .filter((c) => {
      const margin = d.constraints[c.name];
      return margin !== null && margin !== undefined && margin >= 0 && margin < BINDING_MARGIN;
    })
    .map((c) => c.name);
}

/** Splits "3.661 N·m" into value and unit; values without a unit keep an empty unit. */
function splitUnit(text: string): [string, string] {
  const space = text.indexOf(' ');
  return space < 0 ? [text, ''] : [text.slice(0, space), text.slice(space + 1)];
}

function frontTable(data: ReportData): string {
  const { variables, metrics } = frontColumns(data);
  const rank = new Map(data.ranked.map((d, i) => [d.id, i + 1]));
  const chosen = new Map(data.analysis.representatives.map((r) => [r.id, r]));
  const objectiveSet = new Set(data.study.objectives.map((o) => o.metric));
  const texts = data.ranked.map((d) => {
    const actuators = studyActuators(data.study, d.variables);
    return {
      variables: variables.map((v) => {
        const value = d.variables[v];
        return value === undefined || !isActiveVariable(data.study, v, d.variables) ? '—' : formatVariable(data.study, v, value);
      }),
      metrics: metrics.map((m) => formatMetricValue(m, d.metrics[m], actuators)),
    };
  });
  // A column's unit goes in its heading when every row uses the same one; otherwise cells keep theirs.
  const unitOf = (cells: string[]): string | null => {
    const units = new Set(cells.filter((t) => t !== '—' && !t.startsWith('∞') && !t.startsWith('−∞')).map((t) => splitUnit(t)[1]));
    return units.size === 1 ? [...units][0]! : units.size === 0 ? '' : null;
  };
  const variableUnits = variables.map((_, c) => unitOf(texts.map((t) => t.variables[c]!)));
  const metricUnits = metrics.map((_, c) => unitOf(texts.map((t) => t.metrics[c]!)));
  const shown = (text: string, unit: string | null): string => (unit && text.endsWith(' ' + unit) ? splitUnit(text)[0] : text);
  const cell = (sortValue: number | string, text: string, className = ''): string =>
    `<td data-sort="${escapeHtml(String(sortValue))}"${className ? ` class="${className}"` : ''}>${escapeHtml(text)}</td>`;
  const rows = data.ranked.map((d, k) => {
    const representative = chosen.get(d.id);
    const binding = bindingConstraints(data, d);
    const cells = [cell(rank.get(d.id)!, String(rank.get(d.id))), cell(d.id, String(d.id)), cell(representative ? representative.reasons.join(', ') : '', representative ? representative.reasons.join(', ') : '', 'text')];
    variables.forEach((v, c) => {
      const value = d.variables[v];
      const text = texts[k]!.variables[c]!;
      cells.push(text === '—' ? cell('', '—') : cell(typeof value === 'number' ? value : String(value), shown(text, variableUnits[c]!)));
    });
    metrics.forEach((m, c) => {
      const value = d.metrics[m];
      const sort = value === null || value === undefined ? '' : Number.isFinite(value) ? value : value > 0 ? 1e308 : -1e308;
      cells.push(cell(sort, shown(texts[k]!.metrics[c]!, metricUnits[c]!), objectiveSet.has(m) ? 'objective' : ''));
    });
    cells.push(cell(binding.join(' '), binding.join(', ') || '—', binding.length > 0 ? 'text binding' : 'text'));
    return `<tr data-id="${d.id}"${representative ? ' class="representative"' : ''}>${cells.join('')}</tr>`;
  });
  const heading = (name: string, unit: string | null, className = ''): string =>
    `<th scope="col" class="${className}" title="click to sort">${escapeHtml(name).replace(/_/g, '_<wbr>')}${unit ? `<span class="unit">${escapeHtml(unit)}</span>` : ''}<span class="arrow"></span></th>`;
  const objectives = metrics.filter((m) => objectiveSet.has(m));
  const others = metrics.filter((m) => !objectiveSet.has(m));
  const groups = [
    ['design', 3],
    ['design variables', variables.length],
    ['objectives', objectives.length],
    ['other metrics', others.length],
    ['constraints', 1],
  ] as const;
  const groupRow = `<tr class="groups">${groups.filter(([, n]) => n > 0).map(([name, n]) => `<th colspan="${n}" scope="colgroup">${escapeHtml(name)}</th>`).join('')}</tr>`;
  const colgroups = groups.filter(([, n]) => n > 0).map(([name, n]) => `<colgroup span="${n}" class="group-${name.replace(/ /g, '-')}"></colgroup>`).join('');
  const columnRow = `<tr class="columns">${[
    heading('rank', null),
    heading('design id', null),
    heading('chosen as', null, 'text'),
    ...variables.map((v, c) => heading(v, variableUnits[c]!)),
    ...metrics.map((m, c) => heading(m, metricUnits[c]!, objectiveSet.has(m) ? 'objective' : '')),
    heading('binding', null, 'text'),
  ].join('')}</tr>`;
  return `<table class="sortable" id="front-table">${colgroups}<thead>${groupRow}${columnRow}</thead><tbody>${rows.join('')}</tbody></table>`;
}

export interface ParallelAxis {
  readonly key: string;
  readonly label: string;
  readonly unit: string;
  /** 'max' axes are drawn with the better end on top too: higher is better, so the top is the maximum. */
  readonly sense: 'min' | 'max' | 'none';
}

/**
 * Data of the parallel-coordinates chart: one axis per objective then per real design variable,
 * one line per front design (display units), the representatives marked.
 */
export function parallelData(data: ReportData): { axes: ParallelAxis[]; rows: { id: number; representative: boolean; values: (number | null)[] }[] } {
  const objectiveAxes: ParallelAxis[] = data.study.objectives.map((o) => {
    const info = metricInfo(o.metric);
    return { key: o.metric, label: o.metric, unit: info ? prettyUnits(displayUnit(info.kind).symbol) : '', sense: o.sense };
  });
  const variableAxes: ParallelAxis[] = designVariables(data.study)
    .filter((v) => v.kind === 'real')
    .map((v) => ({ key: v.name, label: v.name, unit: prettyUnits(displayUnit(variableKind(data.study, v.name)).symbol), sense: 'none' }));
  const representatives = new Set(data.analysis.representatives.map((r) => r.id));
  const rows = data.ranked.map((d) => ({
    id: d.id,
    representative: representatives.has(d.id),
    values: [
      ...objectiveAxes.map((a) => displayValue(a.key, d.metrics[a.key])),
      ...variableAxes.map((a) => {
        const value = d.variables[a.key];
        return typeof value === 'number' && isActiveVariable(data.study, a.key, d.variables) ? value / displayUnit(variableKind(data.study, a.key)).factor : null;
      }),
    ],
  }));
  return { axes: [...objectiveAxes, ...variableAxes], rows };
}

function metricCard(data: ReportData, d: StoredEvaluation, rankNumber: number, reasons: readonly string[]): string {
  const objectives = new Set(data.study.objectives.map((o) => o.metric));
  const actuators = studyActuators(data.study, d.variables);
  const rows = METRICS.map((m) => `<tr class="${objectives.has(m.name) ? 'objective' : ''}"><th scope="row" title="${escapeHtml(m.description)}">${escapeHtml(m.name)}</th><td>${escapeHtml(formatMetricValue(m.name, d.metrics[m.name], actuators))}</td></tr>`);
  const cons = constraintDefinitions(data.study).map((c) => {
    const margin = d.constraints[c.name];
    const binding = margin !== null && margin !== undefined && margin >= 0 && margin < BINDING_MARGIN;
    return `<tr${binding ? ' class="binding"' : ''}><th scope="row">${escapeHtml(c.name)}</th><td>${margin === null || margin === undefined ? '—' : `${margin >= 0 ? (binding ? 'binding' : 'holds') : 'VIOLATED'}, margin ${margin.toFixed(3)}`}</td></tr>`;
  });
  const design = Object.entries(d.variables)
    .filter(([k]) => isActiveVariable(data.study, k, d.variables))
    .map(([k, v]) => `${k} ${formatVariable(data.study, k, v)}`)
    .join(', ');
  return `<div class="card"><h3>#${rankNumber}: design ${d.id}</h3><p class="chosen">${escapeHtml(reasons.join(', '))}</p><p class="design">${escapeHtml(design)}</p>
<table class="metrics"><tbody>${rows.join('')}</tbody></table>
${cons.length > 0 ? `<h4>Constraint margins</h4><table class="metrics"><tbody>${cons.join('')}</tbody></table>` : ''}</div>`;
}

const STYLE = `
:root { --ink:#1a1a1a; --muted:#555; --rule:#d6d6d6; --accent:#0072B2; --warn:#D55E00; }
* { box-sizing: border-box; }
body { font-family: "DejaVu Sans", Verdana, Arial, sans-serif; color: var(--ink); margin: 0 auto; max-width: 1240px; padding: 24px 28px 48px; line-height: 1.45; background:#fff; }
h1 { font-size: 1.6rem; margin: 0 0 4px; } h2 { font-size: 1.25rem; border-bottom: 2px solid var(--accent); padding-bottom: 4px; margin-top: 36px; }
h3 { font-size: 1.05rem; margin: 12px 0 6px; } h4 { font-size: .95rem; margin: 12px 0 4px; }
.lead { color: var(--muted); margin: 0 0 12px; }
.caution { border-left: 6px solid var(--warn); background: #fff4ec; padding: 10px 14px; margin: 16px 0; font-size: .92rem; }
.caution strong { color: var(--warn); }
dl.facts { display: grid; grid-template-columns: max-content 1fr; gap: 3px 16px; margin: 0 0 12px; font-size: .93rem; }
dl.facts dt { font-weight: bold; } dl.facts dd { margin: 0; }
.tables { display: flex; flex-wrap: wrap; gap: 8px 32px; }
table { border-collapse: collapse; font-size: .88rem; margin: 4px 0 8px; }
th, td { border-bottom: 1px solid var(--rule); padding: 3px 8px; text-align: left; vertical-align: top; }
thead th { background: #f1f4f8; }
table.sortable th { cursor: pointer; user-select: none; white-space: nowrap; }
table.sortable th .arrow { color: var(--accent); padding-left: 4px; }
table.sortable td { font-variant-numeric: tabular-nums; text-align: right; white-space: nowrap; }
table.sortable th.objective, tr.objective th { color: var(--accent); }
.table-wrap { overflow-x: auto; }
figure.chart { margin: 8px 0 16px; } .leader figure.chart { flex: 1 1 560px; min-width: 0; } figure.chart svg { max-width: 100%; height: auto; }
figcaption { color: var(--muted); font-size: .88rem; max-width: 900px; }
.leader { display: flex; flex-wrap: wrap; gap: 16px 28px; align-items: flex-start; border-top: 1px solid var(--rule); padding-top: 8px; margin-top: 12px; }
.card { min-width: 280px; max-width: 330px; } .card .design { color: var(--muted); font-size: .9rem; margin: 0 0 6px; }
table.metrics td { text-align: right; font-variant-numeric: tabular-nums; }
details pre { background: #f7f7f7; padding: 10px; overflow-x: auto; font-size: .82rem; }
footer { margin-top: 40px; color: var(--muted); font-size: .85rem; }
#front-table { font-size: .78rem; }
#front-table th, #front-table td { padding: 2px 5px; }
#front-table thead th { white-space: normal; vertical-align: bottom; max-width: 6.5em; }
#front-table th .arrow { padding-left: 1px; }
#front-table td.text { white-space: normal; min-width: 5em; max-width: 9em; }
#front-table tr.groups th { text-align: center; cursor: default; border-left: 2px solid #fff; font-weight: normal; color: var(--muted); }
#front-table th .unit { display: block; font-weight: normal; color: var(--muted); font-size: .75rem; }
#front-table colgroup.group-objectives { background: #f3f8fc; }
#front-table td.text { text-align: left; }
#front-table tr.representative td { font-weight: bold; }
td.binding, tr.binding td, tr.binding th { background: #fde7d9; color: #8a3300; }
.card .chosen { font-weight: bold; color: var(--accent); margin: 0 0 4px; }
#parallel svg { max-width: 100%; height: auto; font-family: inherit; }
#parallel .pc-line { fill: none; stroke: #0072B2; stroke-opacity: .45; stroke-width: 1.2; }
#parallel .pc-line.rep { stroke: #D55E00; stroke-opacity: 1; stroke-width: 2.4; }
#parallel .pc-line.dim { stroke: #bbb; stroke-opacity: .25; stroke-width: 1; }
#parallel .pc-axis line { stroke: #333; }
#parallel .pc-label { font-size: 12px; text-anchor: middle; font-weight: bold; }
#parallel .pc-unit, #parallel .pc-tick { font-size: 11px; text-anchor: middle; fill: #555; }
#parallel .pc-hit { fill: transparent; cursor: ns-resize; }
#parallel .pc-brush { fill: #E69F00; fill-opacity: .35; stroke: #E69F00; }
#selection-status { color: var(--muted); font-size: .9rem; }
@media print { .table-wrap { overflow: visible; } #front-table { font-size: .62rem; } }
`;

const SORT_SCRIPT = `
(function () {
  document.querySelectorAll('table.sortable').forEach(function (table) {
    var heads = table.querySelectorAll('thead tr.columns th');
    if (heads.length === 0) heads = table.querySelectorAll('thead th');
    heads.forEach(function (th, column) {
      th.addEventListener('click', function () {
        var ascending = th.getAttribute('data-order') !== 'asc';
        heads.forEach(function (h) { h.removeAttribute('data-order'); h.querySelector('.arrow').textContent = ''; });
        th.setAttribute('data-order', ascending ? 'asc' : 'desc');
        th.querySelector('.arrow').textContent = ascending ? '\\u25B2' : '\\u25BC';
        var body = table.tBodies[0];
        var rows = Array.prototype.slice.call(body.rows);
        rows.sort(function (a, b) {
          var x = a.cells[column].getAttribute('data-sort'), y = b.cells[column].getAttribute('data-sort');
          var nx = parseFloat(x), ny = parseFloat(y);
          var c = (x === '' ? 1 : 0) - (y === '' ? 1 : 0);
          if (c !== 0) return c;
          if (!isNaN(nx) && !isNaN(ny)) c = nx - ny; else c = String(x).localeCompare(String(y));
          return ascending ? c : -c;
        });
        rows.forEach(function (r) { body.appendChild(r); });
      });
    });
  });
})();
`;

/** Counts (the same as loopsmith front), knees and redundant objectives in a few sentences. */
function frontSummary(data: ReportData): string {
  const a = data.analysis;
  const lines: string[] = [];
  lines.push(`${data.front.length} feasible non-dominated designs (the count of <code>loopsmith front ${escapeHtml(data.dbPath)} --run ${data.run.id}</code>); ${a.representatives.length} representatives cover every one within ${a.coverRadius.toFixed(2)} in normalised objective space (each objective's range on the front = 1).`);
  if (a.knees.length > 0) lines.push(`Knees (Das 1999, largest distance from the hyperplane through the extreme designs): ${a.knees.map((k) => `design ${k.id} (${k.distance.toFixed(3)})`).join(', ')}.`);
  else if (data.front.length > 2) lines.push('No knee: no design bulges towards the ideal point beyond the hyperplane through the extreme designs.');
  for (const r of a.redundancy.redundant) lines.push(`<strong>${escapeHtml(r.metric)} is redundant on this front</strong>: it follows ${escapeHtml(r.follows)} (correlation ${r.correlation.toFixed(2)} in minimisation form), so the trade-off has one objective fewer than the study states.`);
  for (const p of a.redundancy.agreeingPairs) {
    if (a.redundancy.redundant.some((r) => (r.metric === p.a && r.follows === p.b) || (r.metric === p.b && r.follows === p.a))) continue;
    lines.push(`${escapeHtml(p.a)} and ${escapeHtml(p.b)} do not conflict on this front (correlation ${p.correlation.toFixed(2)} in minimisation form).`);
  }
  return `<p class="lead" id="front-summary">${lines.join(' ')}</p>`;
}

/** Build the report's HTML (charts rendered to inline SVG). */
export async function buildReportHtml(data: ReportData): Promise<string> {
  let figureCount = 0;
  const figure = async (chart: string, spec: TopLevelSpec, caption: string): Promise<string> => {
    const svg = prefixSvgIds(await renderVegaLiteSvg(spec), `f${figureCount++}-`);
    return `<figure class="chart" data-chart="${chart}">${svg}<figcaption>${caption}</figcaption></figure>`;
  };
  const objectivesText = data.study.objectives.map((o) => `${o.metric} (${o.sense})`).join(', ');
  const first = data.study.objectives[0];
  const convergence = data.feasiblePerGeneration.length > 0
    ? await figure('convergence', convergenceSpec(data), 'Hypervolume is computed on objectives normalised by the spread of the first generation with feasible designs (reference point 1.1), so it is comparable within this run only; a flat tail means the search has settled.' +
      (data.hypervolume.length === 0 ? ' <strong>No hypervolume was recorded in this run</strong> (no generation had feasible designs with finite values in every objective).' : ''))
    : '<p class="lead">No generation of this run has been stored yet.</p>';
  const { rows: scatterRowList } = scatterRows(data);
  const clipNote = clipText(scatterClips(data, scatterRowList), data.study.objectives);
  const scatter = data.members.length > 0
    ? await figure('scatter', scatterMatrixSpec(data), `Every design evaluated in the run, one panel per pair of objectives (${escapeHtml(objectivesText)}). Grey crosses violate a constraint; blue dots are feasible; vermillion diamonds are the feasible Pareto front.${clipNote ? ' <strong>' + escapeHtml(clipNote) + '</strong>' : ''}`)
    : '<p class="lead">The run has no evaluated designs.</p>';
  const reasons = new Map(data.analysis.representatives.map((r) => [r.id, r.reasons]));
  const leaders: string[] = [];
  for (const [index, d] of data.leading.entries()) {
    const mapOptions = { maxWidthPx: 420, maxHeightPx: 440, maxColourCells: 100, title: `Workspace of design ${d.id} (#${index + 1})` };
    const design = designFromValues(designVariables(data.study), d.variables, true);
    const map = designMapSpec(data.study, design, mapOptions);
    const mapFigure = await figure(
      `map-${index + 1}`,
      map.spec,
      `${escapeHtml(map.architecture)} design. Colour: 1/κ where every leg reaches (1/κ(J_h) at the study's characteristic length for 3-DOF, at φ₀; 1 = isotropic, 0 = singular); dimmed where the legs reach but the pose is not usable. White outline: the usable workspace. Axes in mm, equal scales; y points up.`,
    );
    leaders.push(`<div class="leader">${metricCard(data, d, index + 1, reasons.get(d.id) ?? [])}${mapFigure}</div>`);
  }
  const parallel = parallelData(data);
  const parallelJson = JSON.stringify(parallel).replace(/</g, '\\u003c');
  const caution = `<aside class="caution" role="note"><strong>Safety.</strong> ${escapeHtml(SAFETY_CAUTION)}</aside>`;
  const title = `loopsmith report — ${data.study.name}, run ${data.run.id}`;
  return `<!DOCTYPE html>
<html lang="en">
<head>
<meta charset="utf-8">
<meta name="viewport" content="width=device-width, initial-scale=1">
<title>${escapeHtml(title)}</title>
<style>${STYLE}</style>
</head>
<body>
<header><h1>${escapeHtml(title)}</h1><p class="lead">${escapeHtml(data.study.description || '')}</p></header>
${caution}
${data.study.accuracy ? `<aside class="caution" role="note"><strong>What the built-arm models leave out.</strong> ${escapeHtml(BUILT_ARM_LIMITS)}</aside>` : ''}
${studySection(data)}
<section id="convergence"><h2>Convergence</h2>${data.standing ? `<p class="lead" data-standing>${escapeHtml(data.standing)}</p>` : ''}${convergence}</section>
<section id="objectives"><h2>Objectives and the Pareto front</h2>${scatter}</section>
<section id="front"><h2>Feasible Pareto front (${data.front.length} designs)</h2>
${frontSummary(data)}
${data.front.length > 0 ? `<figure class="chart" data-chart="parallel"><div id="parallel"></div><figcaption id="selection-status"></figcaption></figure><script type="application/json" id="parallel-data">${parallelJson}</script>` : ''}
<p class="lead">Ranked ${first ? `by the first objective, ${escapeHtml(first.metric)} (${first.sense === 'max' ? 'highest' : 'lowest'} first)` : 'by design id'}. Click a column heading to sort; objectives are shaded; units are under the headings. Representatives are in bold with the reason they were chosen; constraints held with less than ${100 * BINDING_MARGIN} % to spare are highlighted.</p>
${data.front.length > 0 ? `<div class="table-wrap">${frontTable(data)}</div>` : '<p>No feasible design yet: relax the constraints or run more generations.</p>'}
</section>
<section id="leading"><h2>Leading designs: the front's representatives</h2>
<p class="lead">${data.leading.length} genuinely different designs of the front (loopsmith front --representatives ${LEADING_DESIGNS}): the best design of each objective, the knees, then the designs farthest from those already chosen in normalised objective space. Each has every metric, its constraint margins (binding ones highlighted) and its workspace map.</p>
${leaders.join('\n')}
</section>
${caution}
<footer>Written by loopsmith from ${escapeHtml(data.dbPath)}. Invented demo studies say so in their first lines.</footer>
<script>${SORT_SCRIPT}</script>
<script>${PARALLEL_SCRIPT}</script>
</body>
</html>
`;
}

/** Write `index.html` into outDir for a run (default: the latest optimization or sweep). */
export async function writeReport(dbPath: string, runId: number | undefined, outDir: string): Promise<{ htmlPath: string; data: ReportData }> {
  const data = readReportData(dbPath, runId);
  const html = await buildReportHtml(data);
  mkdirSync(outDir, { recursive: true });
  const htmlPath = resolve(join(outDir, 'index.html'));
  writeFileSync(htmlPath, html);
  return { htmlPath, data };
}
