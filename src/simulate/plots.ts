/**
 * Charts and files of a forward simulation: drive effort and joint speed per joint against time
 * (with the drive limits), tracking error, loop-closure error, and the effort–speed points over the
 * drive's envelope (the peak-effort × speed rectangle and the rated effort). Vega-Lite specs rendered
 * with our theme (report/render.ts); joints 1, 2, 3 take the first Okabe–Ito colours. Units follow
 * the joints: N·m and rad/s for cranks, N and m/s for sliders.
 */
import { mkdirSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import type { TopLevelSpec } from 'vega-lite';
import { OKABE_ITO, renderVegaLiteSvg, svgToPng } from '../report/render.js';
import type { SimulationDriveLimits, SimulationResult, SimulationSeries } from './shared.js';

const SCHEMA = 'https://vega.github.io/schema/vega-lite/v6.json';
const JOINTS = ['joint 1', 'joint 2', 'joint 3'] as const;
const JOINT_COLOURS = [OKABE_ITO.blue, OKABE_ITO.vermillion, OKABE_ITO.bluishGreen];
const WIDTH = 640;
const HEIGHT = 260;

interface TimeRow { t: number; value: number; joint: string }
interface LimitRow { value: number; joint: string; kind: string }

/** Every `stride`-th sample (and the last), so long runs keep charts light. */
function sampleIndices(count: number, maxPoints: number): number[] {
  const stride = Math.max(1, Math.ceil(count / maxPoints));
  const out: number[] = [];
  for (let k = 0; k < count; k += stride) out.push(k);
  if (out[out.length - 1] !== count - 1) out.push(count - 1);
  return out;
}

function jointScale(count: number): { domain: string[]; range: string[] } {
  return { domain: JOINTS.slice(0, count), range: JOINT_COLOURS.slice(0, count) };
}

function timeRows(series: SimulationSeries, perJoint: readonly Float64Array[], scale: number, indices: readonly number[]): TimeRow[] {
  const rows: TimeRow[] = [];
  for (const k of indices) perJoint.forEach((values, i) => rows.push({ t: series.time[k]!, value: values[k]! * scale, joint: JOINTS[i]! }));
  return rows;
}

function symmetricLimitRows(limits: readonly number[], count: number, kind: string): LimitRow[] {
  const rows: LimitRow[] = [];
  for (let i = 0; i < count; i++) rows.push({ value: limits[i]!, joint: JOINTS[i]!, kind }, { value: -limits[i]!, joint: JOINTS[i]!, kind });
  return rows;
}

/** Axis units of the joints' efforts and speeds (cranks, sliders or both). */
function jointUnits(actuators: readonly string[]): { effort: string; speed: string; error: string; errorScale: number } {
  if (actuators.every((a) => a === 'revolute')) return { effort: 'torque (N·m)', speed: 'speed (rad/s)', error: 'error (mrad)', errorScale: 1000 };
  if (actuators.every((a) => a === 'prismatic')) return { effort: 'force (N)', speed: 'speed (m/s)', error: 'error (mm)', errorScale: 1000 };
  return { effort: 'effort (N·m or N)', speed: 'speed (rad/s or m/s)', error: 'error (mrad or mm)', errorScale: 1000 };
}

function timeChart(title: string, subtitle: string, yTitle: string, rows: TimeRow[], limits: LimitRow[], count: number, logScale = false): TopLevelSpec {
  const colour = { field: 'joint', type: 'nominal' as const, scale: jointScale(count), title: null };
  return {
    $schema: SCHEMA,
    title: { text: title, subtitle },
    width: WIDTH,
    height: HEIGHT,
    layer: [
      {
        data: { values: rows },
        mark: { type: 'line', clip: true },
        encoding: {
          x: { field: 't', type: 'quantitative', title: 'time (s)' },
          y: { field: 'value', type: 'quantitative', title: yTitle, ...(logScale ? { scale: { type: 'log' } } : {}) },
          color: colour,
        },
      },
      ...(limits.length > 0
        ? [{
            data: { values: limits },
            mark: { type: 'rule' as const, strokeWidth: 1.5 },
            encoding: {
              y: { field: 'value', type: 'quantitative' as const },
              color: colour,
              strokeDash: { field: 'kind', type: 'nominal' as const, title: 'limit', scale: { domain: [...new Set(limits.map((l) => l.kind))], range: [[6, 3], [2, 2]] } },
            },
          }]
        : []),
    ],
  };
}

/** Vega-Lite specs of the simulation charts, by file stem. */
export function simulationChartSpecs(result: SimulationResult, limits: SimulationDriveLimits | null, title: string): Record<string, TopLevelSpec> {
  const s = result.series;
  const count = s.positions.length;
  const units = jointUnits(s.actuators);
  const indices = sampleIndices(s.count, 2000);
  const sub = `${title} — controller: ${result.summary.controller}`;
  const torqueLimits = limits ? [...symmetricLimitRows(limits.peakTorque, count, 'peak'), ...symmetricLimitRows(limits.ratedTorque, count, 'rated')] : [];
  const speedLimits = limits ? symmetricLimitRows(limits.speed, count, 'speed') : [];
  const specs: Record<string, TopLevelSpec> = {
    torque: timeChart('Drive effort (joint side)', `${sub}; dashed: peak limit, dotted: rated limit`, units.effort, timeRows(s, s.torques, 1, indices), torqueLimits, count),
    speed: timeChart('Joint speed', `${sub}; dashed: speed limit`, units.speed, timeRows(s, s.speeds, 1, indices), speedLimits, count),
  };
  if (!Number.isNaN(result.summary.maxEndPointError)) {
    specs['tracking-error'] = timeChart('Tracking error q_d − q', sub, units.error, timeRows(s, s.errors, units.errorScale, indices), [], count);
  }
  // Loop-closure error on a log scale (floored so exact zeros can be drawn).
  const closureRows = indices.map((k) => ({ t: s.time[k]!, value: Math.max(s.closure[k]!, 1e-18) }));
  specs['closure'] = {
    $schema: SCHEMA,
    title: { text: 'Loop-closure error |Φ| (largest gap at a cut)', subtitle: sub },
    width: WIDTH,
    height: HEIGHT,
    data: { values: closureRows },
    mark: { type: 'line', color: OKABE_ITO.bluishGreen },
    encoding: {
      x: { field: 't', type: 'quantitative', title: 'time (s)' },
      y: { field: 'value', type: 'quantitative', title: '|Φ| (m)', scale: { type: 'log' }, axis: { format: '.0e' } },
    },
  };
  // Torque–speed points over the envelope.
  const points: { speed: number; torque: number; joint: string }[] = [];
  for (const k of indices) for (let i = 0; i < count; i++) points.push({ speed: s.speeds[i]![k]!, torque: s.torques[i]![k]!, joint: JOINTS[i]! });
  const colour = { field: 'joint', type: 'nominal' as const, scale: jointScale(count), title: null };
  const envelope = limits
    ? JOINTS.slice(0, count).map((joint, i) => ({ joint, speedLow: -limits.speed[i]!, speedHigh: limits.speed[i]!, torqueLow: -limits.peakTorque[i]!, torqueHigh: limits.peakTorque[i]! }))
    : [];
  const rated = limits ? symmetricLimitRows(limits.ratedTorque, count, 'rated') : [];
  specs['torque-speed'] = {
    $schema: SCHEMA,
    title: { text: 'Effort–speed points against the drive envelope', subtitle: limits ? `${sub}; box: ±speed limit × ±peak effort, dotted: ±rated effort` : `${sub}; no drives given` },
    width: 520,
    height: 420,
    layer: [
      ...(limits
        ? [
            { data: { values: envelope }, mark: { type: 'rect' as const, fillOpacity: 0, strokeWidth: 2, strokeDash: [6, 3] }, encoding: { x: { field: 'speedLow', type: 'quantitative' as const }, x2: { field: 'speedHigh' }, y: { field: 'torqueLow', type: 'quantitative' as const }, y2: { field: 'torqueHigh' }, stroke: colour } },
            { data: { values: rated }, mark: { type: 'rule' as const, strokeWidth: 1.5, strokeDash: [2, 2] }, encoding: { y: { field: 'value', type: 'quantitative' as const }, color: colour } },
          ]
        : []),
      {
        data: { values: points },
        mark: { type: 'point', filled: true, size: 10, opacity: 0.6 },
        encoding: {
          x: { field: 'speed', type: 'quantitative', title: `joint ${units.speed}` },
          y: { field: 'torque', type: 'quantitative', title: `drive ${units.effort}` },
          color: colour,
        },
      },
    ],
  };
  return specs;
}

/**
 * CSV columns: SI units in the names. Per joint i: crank θi (rad, rad/s, N·m) or slider si (m, m/s, N);
 * a two-crank design gives exactly the five-bar's columns.
 */
function csvColumns(series: SimulationSeries): { name: string; values: Float64Array }[] {
  const columns: { name: string; values: Float64Array }[] = [{ name: 't_s', values: series.time }];
  const joints = series.actuators.map((kind, i) => {
    const revolute = kind === 'revolute';
    return { i: i + 1, position: revolute ? 'theta' : 's', unit: revolute ? 'rad' : 'm', speed: revolute ? 'rad_s' : 'm_s', effort: revolute ? 'Nm' : 'N' };
  });
  const add = (make: (j: (typeof joints)[number]) => string, list: readonly Float64Array[]): void => joints.forEach((j, k) => columns.push({ name: make(j), values: list[k]! }));
  add((j) => `${j.position}${j.i}_${j.unit}`, series.positions);
  add((j) => `${j.position}${j.i}_desired_${j.unit}`, series.desiredPositions);
  add((j) => `error${j.i}_${j.unit}`, series.errors);
  add((j) => `speed${j.i}_${j.speed}`, series.speeds);
  add((j) => `speed${j.i}_desired_${j.speed}`, series.desiredSpeeds);
  add((j) => `${j.effort === 'N' ? 'force' : 'torque'}${j.i}_${j.effort}`, series.torques);
  add((j) => `friction${j.i}_${j.effort}`, series.frictions);
  columns.push({ name: 'x_m', values: series.x }, { name: 'y_m', values: series.y });
  if (series.phi) columns.push({ name: 'phi_rad', values: series.phi });
  columns.push({ name: 'x_desired_m', values: series.desiredX }, { name: 'y_desired_m', values: series.desiredY });
  if (series.desiredPhi) columns.push({ name: 'phi_desired_rad', values: series.desiredPhi });
  columns.push(
    { name: 'end_point_error_m', values: series.endPointError },
    { name: 'closure_error_m', values: series.closure },
    { name: 'kinetic_energy_J', values: series.kinetic },
    { name: 'potential_energy_J', values: series.potential },
    { name: 'net_work_J', values: series.work },
  );
  return columns;
}

/** The time series as CSV (SI units in the column names; empty cells for NaN). */
export function simulationCsv(series: SimulationSeries): string {
  const columns = csvColumns(series);
  const lines = [columns.map((c) => c.name).join(',')];
  for (let k = 0; k < series.count; k++) {
    lines.push(columns.map((c) => {
      const v = c.values[k]!;
      return Number.isNaN(v) ? '' : String(v);
    }).join(','));
  }
  return lines.join('\n') + '\n';
}

/** Writes the charts (SVG and PNG), the CSV and the summary JSON into `directory`; returns the paths written. */
export async function writeSimulationOutputs(
  directory: string, result: SimulationResult, limits: SimulationDriveLimits | null, title: string, summaryJson: string,
): Promise<string[]> {
  mkdirSync(directory, { recursive: true });
  const written: string[] = [];
  const specs = simulationChartSpecs(result, limits, title);
  for (const [stem, spec] of Object.entries(specs)) {
    const svg = await renderVegaLiteSvg(spec);
    const svgPath = join(directory, `${stem}.svg`);
    writeFileSync(svgPath, svg);
    const pngPath = join(directory, `${stem}.png`);
    writeFileSync(pngPath, svgToPng(svg));
    written.push(svgPath, pngPath);
  }
  const csvPath = join(directory, 'timeseries.csv');
  writeFileSync(csvPath, simulationCsv(result.series));
  const jsonPath = join(directory, 'summary.json');
  writeFileSync(jsonPath, summaryJson.endsWith('\n') ? summaryJson : summaryJson + '\n');
  written.push(csvPath, jsonPath);
  return written;
}
