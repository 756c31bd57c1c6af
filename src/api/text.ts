/** Plain-text tables and value formatting: the study summary and the command line print with these. */
import { metricInfo, metricKind } from '../mechanics/metrics.js';
import { formatQuantity, type QuantityKind } from '../study/units.js';
import type { ActuatorKind } from '../architectures/types.js';

/** Align columns; numbers right-aligned. */
export function table(header: readonly string[], rows: readonly (readonly string[])[]): string {
  const widths = header.map((h, c) => Math.max(h.length, ...rows.map((r) => (r[c] ?? '').length)));
  const numeric = header.map((_, c) => rows.length > 0 && rows.every((r) => /^[-+]?[\d.]/.test(r[c] ?? '') || (r[c] ?? '') === '—'));
  const line = (cells: readonly string[]): string =>
    cells.map((cell, c) => (numeric[c] ? cell.padStart(widths[c]!) : cell.padEnd(widths[c]!))).join('  ').trimEnd();
  return [line(header), line(widths.map((w) => '-'.repeat(w))), ...rows.map(line)].join('\n');
}

export function formatValue(value: number | null | undefined, kind: QuantityKind): string {
  if (value === null || value === undefined || Number.isNaN(value)) return '—';
  if (!Number.isFinite(value)) return value > 0 ? '∞' : '−∞';
  // Areas of workspaces read best in m², encoder-scale lengths in µm.
  if (kind === 'area') return `${trim(value)} m²`;
  if (kind === 'length' && value !== 0 && Math.abs(value) < 1e-3) return `${trim(value * 1e6)} µm`;
  return formatQuantity(value, kind);
}

function trim(value: number): string {
  return Number(value.toPrecision(4)).toString();
}

/**
 * A metric value with its unit. `actuators` gives the architecture's actuator kinds: the per-actuator
 * effort and speed metrics are N and m/s for sliders (absent: the five-bar's N·m and rad/s).
 */
export function formatMetric(name: string, value: number | null | undefined, actuators?: readonly ActuatorKind[]): string {
  const info = metricInfo(name);
  return formatValue(value, info ? metricKind(name, actuators) : 'dimensionless');
}
