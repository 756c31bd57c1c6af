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
import { Store, StoreError, type RunRow, type StoredEvaluation } from '../store/store.js';
import { parseStudyText } from '../study/parse.js';
import { ARCHITECTURE_PREFIX, type ObjectiveSpec, type Study } from '../study/types.js';
import { displayUnit, formatQuantity } from '../study/units.js';
import { designMapSpec, usesFiveBarMap } from './designMap.js';
import { workspaceMapSpec } from './map.js';
import { OKABE_ITO, renderVegaLiteSvg } from './render.js';

/** The caution every user-facing report carries (README, "Safety"). */
export const SAFETY_CAUTION =
  'loopsmith’s results are early-design estimates from simplified models (rigid bodies, frictionless pins, lumped compliance, static and standstill analyses). ' +
  'They are not a safety analysis and do not certify a machine. Moving machines can hurt people: follow the machinery and robot safety standards and the local codes ' +
  'that apply to your machine, perform your own risk assessment, and have the design reviewed by a licensed engineer before anything is built or run.';

/** How many designs of the front get a metric card and a workspace map. */
export const LEADING_DESIGNS = 3;

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
  /** Front designs in leading order: best first by the first objective. */
  readonly ranked: readonly StoredEvaluation[];
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
    return { dbPath, run, study, studyText: studyRow.fileText, hypervolume, feasiblePerGeneration, members, failedCount, front: front.designs, ranked };
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

/** Scatter matrix: each pair of objectives once (lower triangle); feasible, infeasible and front told apart. */
export function scatterMatrixSpec(data: ReportData): TopLevelSpec {
  const { rows, omitted } = scatterRows(data);
  const objectives = data.study.objectives;
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
      x: { field: xField, type: 'quantitative', scale: { zero: false }, axis: { title: xTitle, titleFontSize: 11 } },
      y: { field: yField, type: 'quantitative', scale: { zero: false }, axis: { title: yTitle, titleFontSize: 11 } },
      color: colour,
      shape,
      order: { field: 'drawOrder', type: 'quantitative' },
      tooltip: [{ field: 'id', type: 'quantitative', title: 'design id' }, { field: 'status', type: 'nominal' }, { field: xField, type: 'quantitative', format: '.4~g' }, { field: yField, type: 'quantitative', format: '.4~g' }],
    },
  } as const);
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
  const extra = ['task_coverage', 'workspace_area', 'inscribed_radius', 'min_transmission_angle', 'footprint', 'moving_mass'].filter((m) => !objectives.includes(m));
  return { variables, metrics: [...objectives, ...extra] };
}

function frontTable(data: ReportData): string {
  const { variables, metrics } = frontColumns(data);
  const rank = new Map(data.ranked.map((d, i) => [d.id, i + 1]));
  const header = ['rank', 'design id', ...variables, ...metrics];
  const cell = (sortValue: number | string, text: string): string =>
    `<td data-sort="${escapeHtml(String(sortValue))}">${escapeHtml(text)}</td>`;
  const rows = data.ranked.map((d) => {
    const cells = [cell(rank.get(d.id)!, String(rank.get(d.id))), cell(d.id, String(d.id))];
    for (const v of variables) {
      const value = d.variables[v];
      const shown = value !== undefined && isActiveVariable(data.study, v, d.variables);
      cells.push(!shown ? cell('', '—') : cell(typeof value === 'number' ? value : value, formatVariable(data.study, v, value)));
    }
    const actuators = studyActuators(data.study, d.variables);
    for (const m of metrics) {
      const value = d.metrics[m];
      cells.push(cell(value === null || value === undefined ? '' : Number.isFinite(value) ? value : value > 0 ? 1e308 : -1e308, formatMetricValue(m, value, actuators)));
    }
    return `<tr>${cells.join('')}</tr>`;
  });
  const objectiveSet = new Set(data.study.objectives.map((o) => o.metric));
  return `<table class="sortable" id="front-table"><thead><tr>${header
    .map((h) => `<th scope="col" class="${objectiveSet.has(h) ? 'objective' : ''}" title="click to sort">${escapeHtml(h)}<span class="arrow"></span></th>`)
    .join('')}</tr></thead><tbody>${rows.join('')}</tbody></table>`;
}

function metricCard(data: ReportData, d: StoredEvaluation, rankNumber: number): string {
  const objectives = new Set(data.study.objectives.map((o) => o.metric));
  const actuators = studyActuators(data.study, d.variables);
  const rows = METRICS.map((m) => `<tr class="${objectives.has(m.name) ? 'objective' : ''}"><th scope="row" title="${escapeHtml(m.description)}">${escapeHtml(m.name)}</th><td>${escapeHtml(formatMetricValue(m.name, d.metrics[m.name], actuators))}</td></tr>`);
  const cons = constraintDefinitions(data.study).map((c) => {
    const margin = d.constraints[c.name];
    return `<tr><th scope="row">${escapeHtml(c.name)}</th><td>${margin === null || margin === undefined ? '—' : `${margin >= 0 ? 'holds' : 'VIOLATED'}, margin ${margin.toFixed(3)}`}</td></tr>`;
  });
  const design = Object.entries(d.variables)
    .filter(([k]) => isActiveVariable(data.study, k, d.variables))
    .map(([k, v]) => `${k} ${formatVariable(data.study, k, v)}`)
    .join(', ');
  return `<div class="card"><h3>#${rankNumber}: design ${d.id}</h3><p class="design">${escapeHtml(design)}</p>
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
`;

const SORT_SCRIPT = `
(function () {
  document.querySelectorAll('table.sortable').forEach(function (table) {
    var heads = table.querySelectorAll('thead th');
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
  const scatter = data.members.length > 0
    ? await figure('scatter', scatterMatrixSpec(data), `Every design evaluated in the run, one panel per pair of objectives (${escapeHtml(objectivesText)}). Grey crosses violate a constraint; blue dots are feasible; vermillion diamonds are the feasible Pareto front.`)
    : '<p class="lead">The run has no evaluated designs.</p>';
  const leaders: string[] = [];
  for (const [index, d] of data.ranked.slice(0, LEADING_DESIGNS).entries()) {
    const mapOptions = { maxWidthPx: 420, maxHeightPx: 440, maxColourCells: 100, title: `Workspace of design ${d.id} (#${index + 1})` };
    let mapFigure: string;
    if (usesFiveBarMap(data.study)) {
      const overrides = Object.entries(d.variables).map(([k, v]) => `${k}=${v}`);
      const map = workspaceMapSpec(data.study, overrides, mapOptions);
      mapFigure = await figure(`map-${index + 1}`, map.spec, 'Colour: 1/κ(J) where both legs reach (1 = isotropic, 0 = singular). White outline: the usable workspace the metrics measure. Axes in mm, equal scales; y points up.');
    } else {
      const design = designFromValues(designVariables(data.study), d.variables, true);
      const map = designMapSpec(data.study, design, mapOptions);
      mapFigure = await figure(
        `map-${index + 1}`,
        map.spec,
        `${escapeHtml(map.architecture)} design. Colour: 1/κ where every leg reaches (1/κ(J_h) at the study's characteristic length for 3-DOF, at φ₀; 1 = isotropic, 0 = singular), faded outside the strokes. White outline: the usable workspace. Axes in mm, equal scales; y points up.`,
      );
    }
    leaders.push(`<div class="leader">${metricCard(data, d, index + 1)}${mapFigure}</div>`);
  }
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
${studySection(data)}
<section id="convergence"><h2>Convergence</h2>${convergence}</section>
<section id="objectives"><h2>Objectives and the Pareto front</h2>${scatter}</section>
<section id="front"><h2>Feasible Pareto front (${data.front.length} designs)</h2>
<p class="lead">Ranked ${first ? `by the first objective, ${escapeHtml(first.metric)} (${first.sense === 'max' ? 'highest' : 'lowest'} first)` : 'by design id'}. Click a column heading to sort; objectives are in blue.</p>
${data.front.length > 0 ? `<div class="table-wrap">${frontTable(data)}</div>` : '<p>No feasible design yet: relax the constraints or run more generations.</p>'}
</section>
<section id="leading"><h2>Leading designs</h2>
<p class="lead">The first ${Math.min(LEADING_DESIGNS, data.ranked.length)} designs of the front in the order above, each with every metric and its workspace map.</p>
${leaders.join('\n')}
</section>
${caution}
<footer>Written by loopsmith from ${escapeHtml(data.dbPath)}. Invented demo studies say so in their first lines.</footer>
<script>${SORT_SCRIPT}</script>
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
