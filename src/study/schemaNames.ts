/**
 * One registry of names: the name lists in src/study/study.schema.json that come from a catalogue in
 * code are written from that catalogue (scripts/schema-names.mjs, `npm run schema:names`), never by
 * hand. The parser also puts the catalogue's list into the schema it validates with
 * (studySchemaForRegistry), so validation follows the catalogue even before the file is rewritten;
 * the shipped file serves editors (yaml-language-server completion) and readers.
 *
 * Today one list is generated: definitions.metric.enum ← the metric catalogue (src/core/metrics.ts)
 * plus former metric names that are still read. Architecture names are not written into the file at
 * all (the parser adds them, see tests/architectures/one-engine-layout.test.ts).
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
