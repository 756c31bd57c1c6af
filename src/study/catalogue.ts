/**
 * Drive catalogues: a CSV or YAML file of motor-and-gearbox options that a study references.
 *
 * YAML: `options:` a list of drive records (the same fields as a drive in a study, plus `name` and
 * `mass`). CSV: a header row with those field names, one option per row; cells may carry units
 * ("0.64 N*m"). Lines starting with "#" are comments in both.
 */
import { LoopsmithUserError } from '../core/errors.js';
import { createRequire } from 'node:module';
import type { DriveSpec } from './types.js';

/**
 * The YAML parser, loaded on first use: evaluation threads import this module (through the drive
 * trains) but never read a catalogue file, and loading the parser would slow every thread's start.
 */
function parseYaml(text: string, options: { maxAliasCount: number }): unknown {
  const yaml = createRequire(import.meta.url)('yaml') as typeof import('yaml');
  return yaml.parse(text, options);
}

export class CatalogueError extends LoopsmithUserError {
  override readonly name = 'CatalogueError';
}

export const CATALOGUE_FIELDS = [
  'name', 'gear_ratio', 'efficiency', 'rotor_inertia', 'gear_inertia', 'rated_torque', 'peak_torque',
  'max_speed', 'mass', 'joint_stiffness', 'encoder_counts',
] as const;

/** RFC 4180 CSV (quoted fields, doubled quotes, CRLF or LF); "#" comment lines and blank lines skipped. */
export function parseCsv(text: string): string[][] {
  const rows: string[][] = [];
  let row: string[] = [];
  let field = '';
  let quoted = false;
  let atLineStart = true;
  for (let i = 0; i < text.length; i++) {
    const ch = text[i]!;
    if (quoted) {
      if (ch === '"') {
        if (text[i + 1] === '"') { field += '"'; i++; } else quoted = false;
      } else field += ch;
      continue;
    }
    if (atLineStart && ch === '#') {
      while (i < text.length && text[i] !== '\n') i++;
      continue;
    }
    atLineStart = false;
    if (ch === '"') quoted = true;
    else if (ch === ',') { row.push(field); field = ''; }
    else if (ch === '\n' || ch === '\r') {
      if (ch === '\r' && text[i + 1] === '\n') i++;
      row.push(field);
      if (row.some((f) => f.trim() !== '')) rows.push(row);
      row = [];
      field = '';
      atLineStart = true;
    } else field += ch;
  }
  if (quoted) throw new CatalogueError('unterminated quoted field');
  row.push(field);
  if (row.some((f) => f.trim() !== '')) rows.push(row);
  return rows;
}

/**
 * Raw option records of a catalogue (values still unparsed), keyed by field name.
 * `buildDrive` in parse.ts turns each into a DriveSpec with units checked.
 */
export function catalogueRecords(text: string, path: string, fields: readonly string[] = CATALOGUE_FIELDS): Record<string, unknown>[] {
  if (/\.csv$/i.test(path)) {
    let rows: string[][];
    try {
      rows = parseCsv(text);
    } catch (error) {
      if (error instanceof CatalogueError) throw new CatalogueError(`${path}: ${error.message}`);
      throw error;
    }
    if (rows.length < 2) throw new CatalogueError(`${path}: a CSV catalogue needs a header row and at least one option`);
    const header = rows[0]!.map((h) => h.trim());
    for (const h of header) {
      if (!fields.includes(h)) {
        throw new CatalogueError(`${path}: unknown column "${h}" (columns: ${fields.join(', ')})`);
      }
    }
    return rows.slice(1).map((r, i) => {
      if (r.length !== header.length) throw new CatalogueError(`${path}: row ${i + 2} has ${r.length} cells, the header has ${header.length}`);
      const record: Record<string, unknown> = {};
      header.forEach((h, c) => {
        const cell = r[c]!.trim();
        if (cell === '') return;
        record[h] = h === 'name' ? cell : /^[-+]?(\d+\.?\d*|\.\d+)([eE][-+]?\d+)?$/.test(cell) ? Number(cell) : cell;
      });
      return record;
    });
  }
  let data: { options?: unknown } | null;
  try {
    data = parseYaml(text, { maxAliasCount: 100 }) as { options?: unknown } | null;
  } catch (error) {
    throw new CatalogueError(`${path}: not valid YAML (${error instanceof Error ? error.message.split('\n')[0] : String(error)})`);
  }
  if (!data || !Array.isArray(data.options)) throw new CatalogueError(`${path}: a YAML catalogue needs a list "options:"`);
  return data.options.map((o, i) => {
    if (typeof o !== 'object' || o === null || Array.isArray(o)) throw new CatalogueError(`${path}: options[${i}] is not a mapping`);
    for (const key of Object.keys(o)) {
      const label = typeof (o as Record<string, unknown>)['name'] === 'string' ? `option "${String((o as Record<string, unknown>)['name'])}"` : `options[${i}]`;
      if (!fields.includes(key)) throw new CatalogueError(`${path}: ${label}: unknown field "${key}" (fields: ${fields.join(', ')})`);
    }
    return o as Record<string, unknown>;
  });
}

export function findOption(options: readonly DriveSpec[], name: string, where: string): DriveSpec {
  const hit = options.find((o) => o.label === name);
  if (!hit) throw new CatalogueError(`${where}: no option "${name}" in the drive catalogue (options: ${options.map((o) => o.label).join(', ')})`);
  return hit;
}
