/** Plain-text tables and value formatting for the terminal (src/api/text.ts), and JSON output. */
export { table, formatValue, formatMetric } from '../api/text.js';
export { studyActuators, variableKind } from '../mechanics/designSpace.js';

/** JSON with Infinity written as the strings "Infinity"/"-Infinity" (JSON has no infinities). */
export function toJson(value: unknown): string {
  return JSON.stringify(
    value,
    (_key, v: unknown) => (typeof v === 'number' && !Number.isFinite(v) && !Number.isNaN(v) ? (v > 0 ? 'Infinity' : '-Infinity') : v),
    2,
  );
}
