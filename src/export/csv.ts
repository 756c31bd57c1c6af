/**
 * Candidate sheets as one CSV table: the sheet's fields flattened to dotted column names
 * (`geometry.crank_1`, `homePose.theta_1`, `bodies.rod_2.inertiaAboutCom`, ...), one row per candidate.
 * Numbers are written in full precision (SI), infinities as `Infinity`, missing values as empty cells.
 */
import type { CandidateSheet } from './candidate.js';

/** Earlier name of the one sheet type. */
type AnyCandidateSheet = CandidateSheet;

export type FlatValue = number | string | boolean | null;

/** Dotted-path leaves of a JSON-like value, in key order; arrays by index. */
export function flattenSheet(sheet: AnyCandidateSheet): Map<string, FlatValue> {
  const out = new Map<string, FlatValue>();
  const walk = (value: unknown, path: string): void => {
    if (value === null || value === undefined) {
      out.set(path, null);
    } else if (Array.isArray(value)) {
      value.forEach((item, k) => walk(item, `${path}.${k}`));
    } else if (typeof value === 'object') {
      for (const [key, member] of Object.entries(value as Record<string, unknown>)) walk(member, path ? `${path}.${key}` : key);
    } else if (typeof value === 'number' || typeof value === 'string' || typeof value === 'boolean') {
      out.set(path, value);
    } else {
      out.set(path, String(value));
    }
  };
  walk(sheet, '');
  return out;
}

function cell(value: FlatValue | undefined): string {
  if (value === null || value === undefined) return '';
  if (typeof value === 'number') {
    if (Number.isNaN(value)) return '';
    if (!Number.isFinite(value)) return value > 0 ? 'Infinity' : '-Infinity';
    return String(value);
  }
  const text = String(value);
  return /[",\n\r]/.test(text) || text !== text.trim() ? `"${text.replaceAll('"', '""')}"` : text;
}

/** CSV text: a header of dotted names (the union over the sheets, in first-seen order), then one row per sheet. */
export function candidatesCsv(sheets: readonly AnyCandidateSheet[]): string {
  const rows = sheets.map(flattenSheet);
  const columns: string[] = [];
  const seen = new Set<string>();
  for (const row of rows) {
    for (const key of row.keys()) {
      if (!seen.has(key)) {
        seen.add(key);
        columns.push(key);
      }
    }
  }
  const lines = [columns.map((c) => cell(c)).join(',')];
  for (const row of rows) lines.push(columns.map((c) => cell(row.get(c))).join(','));
  return lines.join('\n') + '\n';
}
