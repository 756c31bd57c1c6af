import type { TopLevelSpec } from 'vega-lite';

/** One layer of a layered Vega-Lite spec. */
export type MapLayer = NonNullable<Extract<TopLevelSpec, { layer: unknown }>['layer']>[number];

/**
 * Vega-Lite layers shared by every workspace map (five-bar and the other architectures): the curve
 * layer (one styled line per feature) and the joint-marker layer, on the same mm scales.
 */

export interface MapScales {
  readonly xDomainMm: readonly [number, number];
  readonly yDomainMm: readonly [number, number];
  readonly widthPx: number;
  readonly heightPx: number;
}

export interface CurveStyle {
  readonly feature: string;
  readonly colour: string;
  readonly dash: readonly number[];
}

export interface JointStyle {
  readonly joint: string;
  readonly shape: string;
  readonly fill: string;
}

/** Equal-aspect mm scales and axes for a map. */
export function mapAxes(s: MapScales) {
  return {
    xScale: { domain: [...s.xDomainMm], nice: false, zero: false },
    yScale: { domain: [...s.yDomainMm], nice: false, zero: false },
    xAxis: { title: 'x (mm)', tickCount: Math.max(3, Math.round(s.widthPx / 80)) },
    yAxis: { title: 'y (mm)', tickCount: Math.max(3, Math.round(s.heightPx / 80)) },
  };
}

/**
 * The curve and joint layers. Rows of `lines` carry x, y (mm), feature, part, order and widthPx;
 * rows of `joints` carry x, y and joint.
 */
export function curveAndJointLayers(
  s: MapScales,
  lines: readonly object[],
  joints: readonly object[],
  curveStyles: readonly CurveStyle[],
  jointStyles: readonly JointStyle[],
): MapLayer[] {
  const { xScale, yScale, xAxis, yAxis } = mapAxes(s);
  return [
    {
      name: 'curves',
      data: { values: [...lines] },
      // The width is a mark expression, not a strokeWidth encoding: compiled with REPORT_THEME, the
      // theme's line.strokeWidth replaced the encoding and every curve came out 2 px (measured).
      mark: { type: 'line', strokeCap: 'round', strokeJoin: 'round', clip: true, strokeWidth: { expr: 'datum.widthPx' } },
      encoding: {
        x: { field: 'x', type: 'quantitative', scale: xScale, axis: xAxis },
        y: { field: 'y', type: 'quantitative', scale: yScale, axis: yAxis },
        detail: { field: 'part', type: 'nominal' },
        order: { field: 'order', type: 'quantitative' },
        color: { field: 'feature', type: 'nominal', scale: { domain: curveStyles.map((f) => f.feature), range: curveStyles.map((f) => f.colour) }, legend: { title: 'curves', orient: 'right', symbolType: 'stroke', symbolStrokeWidth: 3, symbolSize: 300, fillColor: '#e6e6e6', strokeColor: '#c8c8c8', padding: 5, labelLimit: 320 } },
        strokeDash: { field: 'feature', type: 'nominal', scale: { domain: curveStyles.map((f) => f.feature), range: curveStyles.map((f) => [...f.dash]) }, legend: { title: 'curves' } },
      },
    },
    {
      name: 'joints',
      data: { values: [...joints] },
      mark: { type: 'point', filled: true, size: 80, stroke: '#1a1a1a', strokeWidth: 1.5, clip: true },
      encoding: {
        x: { field: 'x', type: 'quantitative', scale: xScale, axis: xAxis },
        y: { field: 'y', type: 'quantitative', scale: yScale, axis: yAxis },
        shape: { field: 'joint', type: 'nominal', scale: { domain: jointStyles.map((j) => j.joint), range: jointStyles.map((j) => j.shape) }, legend: { title: 'joints', orient: 'right', labelLimit: 320 } },
        fill: { field: 'joint', type: 'nominal', scale: { domain: jointStyles.map((j) => j.joint), range: jointStyles.map((j) => j.fill) }, legend: { title: 'joints' } },
      },
    },
  ];
}
