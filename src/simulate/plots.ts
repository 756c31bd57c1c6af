/**
 * Charts and files of a forward simulation: drive torque and joint speed per joint against time
 * (with the drive limits), tracking error, loop-closure error, and the torque–speed points over the
 * drive's envelope (the peak-torque × speed rectangle and the rated torque). Vega-Lite specs rendered
 * with our theme (report/render.ts); joint 1 and joint 2 take the first two Okabe–Ito colours.
 */
import { mkdirSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import type { TopLevelSpec } from 'vega-lite';
import { OKABE_ITO, renderVegaLiteSvg, svgToPng } from '../report/render.js';
import type { SimulationDriveLimits, SimulationResult, SimulationSeries } from './simulate.js';

const SCHEMA = 'https://vega.github.io/schema/vega-lite/v6.json';
const JOINTS = ['joint 1', 'joint 2'] as const;
const JOINT_SCALE = { domain: [...JOINTS], range: [OKABE_ITO.blue, OKABE_ITO.vermillion] };
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

function timeRows(series: SimulationSeries, a: Float64Array, b: Float64Array, scale: number, indices: readonly number[]): TimeRow[] {
  const rows: TimeRow[] = [];
  for (const k of indices) {
    rows.push({ t: series.time[k]!, value: a[k]! * scale, joint: JOINTS[0] });
    rows.push({ t: series.time[k]!, value: b[k]! * scale, joint: JOINTS[1] });
  }
  return rows;
}

function symmetricLimitRows(limits: readonly [number, number], kind: string): LimitRow[] {
  return [
    { value: limits[0], joint: JOINTS[0], kind }, { value: -limits[0], joint: JOINTS[0], kind },
    { value: limits[1], joint: JOINTS[1], kind }, { value: -limits[1], joint: JOINTS[1], kind },
  ];
}

function timeChart(title: string, subtitle: string, yTitle: string, rows: TimeRow[], limits: LimitRow[], logScale = false): TopLevelSpec {
  const colour = { field: 'joint', type: 'nominal' as const, scale: JOINT_SCALE, title: null };
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
  const indices = sampleIndices(s.count, 2000);
  const sub = `${title} — controller: ${result.summary.controller}`;
  const torqueLimits = limits ? [...symmetricLimitRows(limits.peakTorque, 'peak'), ...symmetricLimitRows(limits.ratedTorque, 'rated')] : [];
  const speedLimits = limits ? symmetricLimitRows(limits.speed, 'speed') : [];
  const specs: Record<string, TopLevelSpec> = {
    torque: timeChart('Drive torque (joint side)', `${sub}; dashed: peak η N τ_peak, dotted: rated η N τ_rated`, 'torque (N·m)', timeRows(s, s.torque1, s.torque2, 1, indices), torqueLimits),
    speed: timeChart('Joint speed', `${sub}; dashed: ω_max / N`, 'speed (rad/s)', timeRows(s, s.speed1, s.speed2, 1, indices), speedLimits),
  };
  if (!Number.isNaN(result.summary.maxEndPointError)) {
    specs['tracking-error'] = timeChart('Tracking error θ_d − θ', sub, 'error (mrad)', timeRows(s, s.error1, s.error2, 1000, indices), []);
  }
  // Loop-closure error on a log scale (floored so exact zeros can be drawn).
  const closureRows = indices.map((k) => ({ t: s.time[k]!, value: Math.max(s.closure[k]!, 1e-18) }));
  specs['closure'] = {
    $schema: SCHEMA,
    title: { text: 'Loop-closure error |Φ| = |T₁ − T₂|', subtitle: sub },
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
  for (const k of indices) {
    points.push({ speed: s.speed1[k]!, torque: s.torque1[k]!, joint: JOINTS[0] });
    points.push({ speed: s.speed2[k]!, torque: s.torque2[k]!, joint: JOINTS[1] });
  }
  const colour = { field: 'joint', type: 'nominal' as const, scale: JOINT_SCALE, title: null };
  const envelope = limits
    ? JOINTS.map((joint, i) => ({ joint, speedLow: -limits.speed[i]!, speedHigh: limits.speed[i]!, torqueLow: -limits.peakTorque[i]!, torqueHigh: limits.peakTorque[i]! }))
    : [];
  const rated = limits ? symmetricLimitRows(limits.ratedTorque, 'rated') : [];
  specs['torque-speed'] = {
    $schema: SCHEMA,
    title: { text: 'Torque–speed points against the drive envelope', subtitle: limits ? `${sub}; box: ±ω_max/N × ±η N τ_peak, dotted: ±η N τ_rated` : `${sub}; no drives given` },
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
          x: { field: 'speed', type: 'quantitative', title: 'joint speed (rad/s)' },
          y: { field: 'torque', type: 'quantitative', title: 'drive torque (N·m)' },
          color: colour,
        },
      },
    ],
  };
  return specs;
}

const CSV_COLUMNS: readonly (readonly [string, keyof SimulationSeries])[] = [
  ['t_s', 'time'],
  ['theta1_rad', 'theta1'], ['theta2_rad', 'theta2'],
  ['theta1_desired_rad', 'desiredTheta1'], ['theta2_desired_rad', 'desiredTheta2'],
  ['error1_rad', 'error1'], ['error2_rad', 'error2'],
  ['speed1_rad_s', 'speed1'], ['speed2_rad_s', 'speed2'],
  ['speed1_desired_rad_s', 'desiredSpeed1'], ['speed2_desired_rad_s', 'desiredSpeed2'],
  ['torque1_Nm', 'torque1'], ['torque2_Nm', 'torque2'],
  ['friction1_Nm', 'friction1'], ['friction2_Nm', 'friction2'],
  ['x_m', 'x'], ['y_m', 'y'], ['x_desired_m', 'desiredX'], ['y_desired_m', 'desiredY'],
  ['end_point_error_m', 'endPointError'],
  ['closure_error_m', 'closure'],
  ['kinetic_energy_J', 'kinetic'], ['potential_energy_J', 'potential'], ['net_work_J', 'work'],
];

/** The time series as CSV (SI units in the column names; empty cells for NaN). */
export function simulationCsv(series: SimulationSeries): string {
  const lines = [CSV_COLUMNS.map(([name]) => name).join(',')];
  for (let k = 0; k < series.count; k++) {
    lines.push(CSV_COLUMNS.map(([, key]) => {
      const v = (series[key] as Float64Array)[k]!;
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
