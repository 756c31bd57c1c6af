/**
 * Readable result tables for `front` and `query`: engineering units on terminals, column choice,
 * sorting by a metric, empty columns hidden; CSV with SI values and the unit in each header.
 */
import { currentMetricName, metricInfo, metricKind } from '../mechanics/metrics.js';
import type { QuantityKind } from '../study/units.js';
import type { ActuatorKind } from '../architectures/types.js';
import { formatValue } from './format.js';
import { UsageError } from './argChecks.js';

/** SI unit of each quantity kind as written in CSV headers (ASCII, as the study files accept it). */
const SI_UNITS: Readonly<Record<QuantityKind, string>> = {
  length: 'm', mass: 'kg', time: 's', angle: 'rad', speed: 'm/s', acceleration: 'm/s^2', angularSpeed: 'rad/s',
  angularAcceleration: 'rad/s^2', force: 'N', torque: 'N*m', rotationalStiffness: 'N*m/rad', linearStiffness: 'N/m',
  modulus: 'Pa', density: 'kg/m^3', massPerLength: 'kg/m', inertia: 'kg*m^2', area: 'm^2', secondMomentOfArea: 'm^4',
  frequency: 'Hz', power: 'W', dimensionless: '',
};

/** What one result column holds and how to show it. */
export interface ResultColumn {
  /** Key in the row records. */
  readonly key: string;
  /** Header on terminals. */
  readonly title: string;
  /** Quantity kind for units; null for text and counts. */
  readonly kind: QuantityKind | null;
}

/** The column of a stored name: `v_crank_1` / `crank_1` (variable), `m_gci` / `gci` (metric), `c_x` (margin). */
export function describeColumn(key: string, variableKind: (name: string) => QuantityKind | null, actuators?: readonly ActuatorKind[]): ResultColumn {
  const bare = key.replace(/^[vmc]_/, '');
  if (key.startsWith('c_')) return { key, title: key, kind: 'dimensionless' };
  if (key.startsWith('m_') || (!key.startsWith('v_') && metricInfo(bare))) {
    return { key, title: bare, kind: metricInfo(bare) ? metricKind(bare, actuators) : null };
  }
  if (key.startsWith('v_')) return { key, title: bare, kind: variableKind(bare) };
  const kind = variableKind(key);
  return { key, title: key, kind };
}

/** CSV header of a column: its key, with the SI unit in brackets when it has one (`m_peak_gravity_torque_1 [N*m]`). */
export function csvHeader(column: ResultColumn): string {
  const unit = column.kind ? SI_UNITS[column.kind] : '';
  return unit ? `${column.key} [${unit}]` : column.key;
}

/** Terminal text of one cell: numbers in engineering units, text as it is, NULL as —. */
export function displayCell(value: unknown, column: ResultColumn): string {
  if (value === null || value === undefined) return '—';
  if (typeof value === 'number') {
    if (column.kind === null) return Number.isInteger(value) ? String(value) : String(Number(value.toPrecision(4)));
    return formatValue(value, column.kind);
  }
  return String(value).replace(/\r/g, '\\r').replace(/\n/g, '\\n').replace(/\t/g, '\\t');
}

/** Columns without a single value in any row (metrics the study does not compute). */
export function emptyColumns(columns: readonly string[], rows: readonly Record<string, unknown>[]): Set<string> {
  return new Set(columns.filter((c) => rows.every((r) => r[c] === null || r[c] === undefined)));
}

/** Parses `--sort METRIC[:asc|:desc]` (or `METRIC asc`) against the available keys; accepts names with or without their prefix. */
export function parseSort(text: string, keys: readonly string[], defaultDirection: (key: string) => 'asc' | 'desc'): { key: string; direction: 'asc' | 'desc' } {
  const match = /^\s*([A-Za-z_][A-Za-z0-9_]*)(?:\s*[: ]\s*(asc|desc))?\s*$/i.exec(text);
  if (!match) throw new UsageError(`--sort ${text}: expected a metric or column name, optionally with :asc or :desc (for example --sort gci:desc)`);
  const name = match[1]!;
  const key = [name, `m_${name}`, `m_${currentMetricName(name)}`, `v_${name}`, `c_${name}`].find((k) => keys.includes(k));
  if (!key) throw new UsageError(`--sort ${text}: no column "${name}"; columns: ${keys.map((k) => k.replace(/^[vmc]_/, '')).join(', ')}`);
  const direction = match[2] ? (match[2].toLowerCase() as 'asc' | 'desc') : defaultDirection(key);
  return { key, direction };
}

/** Sorts rows by one key (nulls last), ties by id. */
export function sortRows<T extends Record<string, unknown>>(rows: readonly T[], key: string, direction: 'asc' | 'desc'): T[] {
  const sign = direction === 'asc' ? 1 : -1;
  return [...rows].sort((a, b) => {
    const x = a[key];
    const y = b[key];
    const xNull = x === null || x === undefined || (typeof x === 'number' && Number.isNaN(x));
    const yNull = y === null || y === undefined || (typeof y === 'number' && Number.isNaN(y));
    if (xNull !== yNull) return xNull ? 1 : -1;
    if (!xNull && x !== y) return (typeof x === 'number' && typeof y === 'number' ? x - y : String(x).localeCompare(String(y))) * sign;
    return Number(a['id'] ?? 0) - Number(b['id'] ?? 0);
  });
}

/** Resolves `--columns a,b,c` against the available keys (names with or without their prefix). */
export function chooseColumns(text: string, keys: readonly string[]): string[] {
  const names = text.split(',').map((s) => s.trim()).filter((s) => s !== '');
  if (names.length === 0) throw new UsageError('--columns: give column names separated by commas, for example --columns id,crank_1,gci');
  return names.map((name) => {
    const key = [name, `m_${name}`, `m_${currentMetricName(name)}`, `v_${name}`, `c_${name}`].find((k) => keys.includes(k));
    if (!key) throw new UsageError(`--columns: no column "${name}"; columns: ${keys.map((k) => k.replace(/^[vmc]_/, '')).join(', ')}`);
    return key;
  });
}

/** Better direction of a metric key for a default sort (max metrics descending). */
export function betterDirection(key: string): 'asc' | 'desc' {
  const info = metricInfo(key.replace(/^m_/, ''));
  return info && info.better === 'max' ? 'desc' : 'asc';
}
