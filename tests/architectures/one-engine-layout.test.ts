/**
 * The house rules of the one engine: one registry is the only list of architecture names (the study
 * schema and the comparison prefixes come from it), and no two folders of src/ import each other.
 */
import { describe, expect, it } from 'vitest';
import { readdirSync, readFileSync, statSync } from 'node:fs';
import { dirname, join, relative, resolve, sep } from 'node:path';
import { ARCHITECTURES, ARCHITECTURE_NAMES } from '../../src/architectures/index.js';
import { studySchemaForRegistry } from '../../src/study/parse.js';
import { ARCHITECTURE_PREFIX } from '../../src/study/types.js';
import { REPO_ROOT } from '../fixtures/harness.js';

const SRC = join(REPO_ROOT, 'src');

function sourceFiles(dir: string): string[] {
  return readdirSync(dir).flatMap((name) => {
    const path = join(dir, name);
    return statSync(path).isDirectory() ? sourceFiles(path) : path.endsWith('.ts') ? [path] : [];
  });
}

/** Top-level folder of a file under src/ ('.' for files directly in src/). */
function folderOf(path: string): string {
  const parts = relative(SRC, path).split(sep);
  return parts.length > 1 ? parts[0]! : '.';
}

describe('one registry of architecture names', () => {
  it('the study schema validates architecture names against the registry, and the schema file lists none of its own', () => {
    const schema = studySchemaForRegistry() as { properties: { architecture: { oneOf: [{ enum: string[] }, { items: { enum: string[] } }] } } };
    expect(schema.properties.architecture.oneOf[0].enum).toEqual(ARCHITECTURE_NAMES);
    expect(schema.properties.architecture.oneOf[1].items.enum).toEqual(ARCHITECTURE_NAMES);
    const file = JSON.parse(readFileSync(join(SRC, 'study', 'study.schema.json'), 'utf8')) as { properties: { architecture: unknown } };
    expect(JSON.stringify(file.properties.architecture)).not.toContain('"enum"');
  });

  it('every architecture has its registry name, a unique comparison prefix of letters and digits, and parameter names of [a-z0-9_]', () => {
    const prefixes = new Set<string>();
    for (const name of ARCHITECTURE_NAMES) {
      const a = ARCHITECTURES[name];
      expect(a.name).toBe(name);
      expect(a.variablePrefix).toMatch(/^[a-z][a-z0-9]*$/);
      expect(ARCHITECTURE_PREFIX[name]).toBe(a.variablePrefix);
      prefixes.add(a.variablePrefix);
      for (const p of a.parameters) expect(p.name).toMatch(/^[a-z][a-z0-9_]*$/);
    }
    expect(prefixes.size).toBe(ARCHITECTURE_NAMES.length);
  });
});

describe('no import cycles between the folders of src/', () => {
  it('for every relative import from src/A/… into src/B/… (A ≠ B), B never imports A', () => {
    const edges = new Map<string, Set<string>>();
    const examples = new Map<string, string>();
    for (const file of sourceFiles(SRC)) {
      const text = readFileSync(file, 'utf8');
      for (const match of text.matchAll(/(?:import|export)[^'"]*?from\s+'(\.[^']+)'|import\(\s*'(\.[^']+)'\s*\)/g)) {
        const target = resolve(dirname(file), (match[1] ?? match[2])!);
        const a = folderOf(file);
        const b = folderOf(target);
        if (a === b || a === '.' || b === '.') continue;
        if (!edges.has(a)) edges.set(a, new Set());
        edges.get(a)!.add(b);
        examples.set(`${a}→${b}`, relative(SRC, file));
      }
    }
    const cycles: string[] = [];
    for (const [a, targets] of edges) {
      for (const b of targets) if (a < b && edges.get(b)?.has(a)) cycles.push(`${a} ↔ ${b} (${examples.get(`${a}→${b}`)}, ${examples.get(`${b}→${a}`)})`);
    }
    expect(cycles).toEqual([]);
  });
});
