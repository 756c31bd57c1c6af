/**
 * One registry of names: the name lists in src/study/study.schema.json that come from a catalogue in
 * code are written from that catalogue (scripts/schema-names.mjs, `npm run schema:names`), never by
 * hand. The parser also puts the catalogue's list into the schema it validates with
 * (studySchemaForRegistry), so validation follows the catalogue even before the file is rewritten;
 * the shipped file serves editors (yaml-language-server completion) and readers.
 *
 * Generated: the study schema's definitions.metric.enum ← the metric catalogue (src/core/metrics.ts)
 * plus former metric names that are still read; the candidate-sheet schema's `metrics` objects
 * (src/export/candidate.schema.json, both sheets) ← the catalogue. Architecture names are not written
 * into the study schema at all (the parser adds them, see tests/architectures/one-engine-layout.test.ts);
 * the other lists that code also holds (materials, five-bar parameters, motion laws, mounting
 * variables) are checked by tests/study/schemaNames.test.ts.
 */
import * as catalogue from '../core/metrics.js';

/**
 * Metric names a study may use as an objective or a constraint: the catalogue, in its order, then any
 * former names still read (an old-name → new-name table `METRIC_ALIASES`, when the catalogue has one).
 */
export function studyMetricNames(): readonly string[] {
  const aliases = (catalogue as unknown as { METRIC_ALIASES?: Readonly<Record<string, string>> }).METRIC_ALIASES ?? {};
  const names = [...catalogue.METRIC_NAMES];
  for (const old of Object.keys(aliases)) if (!names.includes(old)) names.push(old);
  return names;
}

/** A name list of the study schema written from a catalogue. */
export interface GeneratedSchemaList {
  /** Path of the enum array in the parsed schema. */
  readonly path: readonly (string | number)[];
  /** Text just before the list's `[` in the schema file; must occur exactly once. */
  readonly anchor: RegExp;
  readonly names: () => readonly string[];
}

export const GENERATED_SCHEMA_LISTS: readonly GeneratedSchemaList[] = [
  {
    path: ['definitions', 'metric', 'enum'],
    anchor: /\n( *)"metric": \{\n *"enum": \[/g,
    names: studyMetricNames,
  },
];

function at(schema: unknown, path: readonly (string | number)[]): unknown {
  let node: unknown = schema;
  for (const key of path) node = node !== null && typeof node === 'object' ? (node as Record<string | number, unknown>)[key] : undefined;
  return node;
}

/** One line per generated list that differs from its catalogue: names missing from the schema, and extra ones. */
export function schemaNameDrift(schema: unknown, lists: readonly GeneratedSchemaList[] = GENERATED_SCHEMA_LISTS): string[] {
  const out: string[] = [];
  for (const list of lists) {
    const found = at(schema, list.path);
    const where = list.path.join('.');
    if (!Array.isArray(found)) {
      out.push(`${where}: not a list in the schema`);
      continue;
    }
    const want = list.names();
    const missing = want.filter((n) => !found.includes(n));
    const extra = found.filter((n) => !want.includes(n as string));
    if (missing.length > 0) out.push(`${where}: missing ${missing.join(', ')}`);
    if (extra.length > 0) out.push(`${where}: not in the catalogue ${extra.map(String).join(', ')}`);
    if (missing.length === 0 && extra.length === 0 && found.some((n, i) => n !== want[i])) out.push(`${where}: order differs from the catalogue`);
  }
  return out;
}

/**
 * The schema file's text with every generated list rewritten from its catalogue (one name per line,
 * indented as the file is); the rest of the text is left byte for byte. Throws when an anchor is not
 * found exactly once or the result does not parse to the catalogue's lists.
 */
export function writeSchemaNames(text: string, lists: readonly GeneratedSchemaList[] = GENERATED_SCHEMA_LISTS): string {
  let out = text;
  for (const list of lists) {
    const hits = [...out.matchAll(list.anchor)];
    if (hits.length !== 1) throw new Error(`schema names: ${list.path.join('.')}: expected one anchor ${String(list.anchor)}, found ${hits.length}`);
    const hit = hits[0]!;
    const start = hit.index + hit[0].length;
    const end = out.indexOf(']', start);
    if (end < 0) throw new Error(`schema names: ${list.path.join('.')}: the list has no closing ]`);
    const indent = hit[1] ?? '';
    const items = list.names().map((n) => `${indent}    ${JSON.stringify(n)}`).join(',\n');
    out = `${out.slice(0, start)}\n${items}\n${indent}  ${out.slice(end)}`;
  }
  const drift = schemaNameDrift(JSON.parse(out), lists);
  if (drift.length > 0) throw new Error(`schema names: the rewritten schema still differs: ${drift.join('; ')}`);
  return out;
}

/** The candidate-sheet schema (src/export/candidate.schema.json): each sheet's `metrics` object lists every catalogue metric. */
export const CANDIDATE_METRIC_SHEETS = ['fiveBarSheet', 'architectureSheet'] as const;
const OPTIONAL_NUMBER = { $ref: '#/definitions/optionalNumber' };

/** One line per sheet whose `metrics` object (required names, properties) differs from the catalogue. */
export function candidateMetricDrift(schema: unknown): string[] {
  const out: string[] = [];
  const want = catalogue.METRIC_NAMES;
  for (const sheet of CANDIDATE_METRIC_SHEETS) {
    const block = at(schema, ['definitions', sheet, 'properties', 'metrics']) as { required?: unknown; properties?: Record<string, unknown> } | undefined;
    const where = `definitions.${sheet}.properties.metrics`;
    const required = Array.isArray(block?.required) ? (block.required as string[]) : [];
    const names = Object.keys(block?.properties ?? {});
    for (const [label, list] of [['required', required], ['properties', names]] as const) {
      const missing = want.filter((n) => !list.includes(n));
      const extra = list.filter((n) => !want.includes(n));
      if (missing.length > 0) out.push(`${where}.${label}: missing ${missing.join(', ')}`);
      if (extra.length > 0) out.push(`${where}.${label}: not in the catalogue ${extra.join(', ')}`);
      if (missing.length === 0 && extra.length === 0 && list.some((n, i) => n !== want[i])) out.push(`${where}.${label}: order differs from the catalogue`);
    }
  }
  return out;
}

/** End (index after the closing brace) of the JSON object that opens at `start` (strings skipped). */
function objectEnd(text: string, start: number): number {
  let depth = 0;
  let inString = false;
  for (let i = start; i < text.length; i++) {
    const ch = text[i];
    if (inString) {
      if (ch === '\\') i++;
      else if (ch === '"') inString = false;
    } else if (ch === '"') inString = true;
    else if (ch === '{') depth++;
    else if (ch === '}' && --depth === 0) return i + 1;
  }
  throw new Error('schema names: unbalanced braces');
}

/**
 * The candidate-sheet schema's text with each sheet's `metrics` object written from the catalogue
 * (`required` and `properties`, every metric an optional number); the rest left byte for byte.
 */
export function writeCandidateMetrics(text: string): string {
  let out = text;
  let from = 0;
  let rewritten = 0;
  for (;;) {
    const key = out.indexOf('"metrics": {', from);
    if (key < 0) break;
    const open = key + '"metrics": '.length;
    const end = objectEnd(out, open);
    const block = JSON.parse(out.slice(open, end)) as Record<string, unknown>;
    from = end;
    if (!Array.isArray(block['required']) || typeof block['properties'] !== 'object') continue;
    const next = { ...block, required: [...catalogue.METRIC_NAMES], properties: Object.fromEntries(catalogue.METRIC_NAMES.map((n) => [n, OPTIONAL_NUMBER])) };
    const indent = out.slice(out.lastIndexOf('\n', key) + 1, key);
    const body = JSON.stringify(next, null, 2).replaceAll('\n', `\n${indent}`);
    out = `${out.slice(0, open)}${body}${out.slice(end)}`;
    from = open + body.length;
    rewritten++;
  }
  if (rewritten !== CANDIDATE_METRIC_SHEETS.length) throw new Error(`schema names: expected ${CANDIDATE_METRIC_SHEETS.length} sheet metrics objects in the candidate schema, found ${rewritten}`);
  const drift = candidateMetricDrift(JSON.parse(out));
  if (drift.length > 0) throw new Error(`schema names: the rewritten candidate schema still differs: ${drift.join('; ')}`);
  return out;
}
