/**
 * What docs/architectures.md says a new architecture touches in src/ ("Adding an architecture:
 * exactly these files"): its architecture file, one registry entry in src/architectures/index.ts and,
 * for a new kind of leg, a leg file. Checked here on the source text: no other file of src/ names an
 * architecture other than the five-bar (whose former report shapes keep a few five-bar branches) as a
 * string of its own, and each architecture is declared in one file and registered by one entry.
 * Source: derived here (issue #10: "its leg kind, its architecture file, one registry line").
 */
import { describe, expect, it } from 'vitest';
import { readdirSync, readFileSync, statSync } from 'node:fs';
import { join, relative, sep } from 'node:path';
import { ARCHITECTURES, ARCHITECTURE_NAMES } from '../../src/architectures/index.js';
import { REPO_ROOT } from '../fixtures/harness.js';

const SRC = join(REPO_ROOT, 'src');

function sourceFiles(dir: string): string[] {
  return readdirSync(dir).flatMap((name) => {
    const path = join(dir, name);
    return statSync(path).isDirectory() ? sourceFiles(path) : path.endsWith('.ts') ? [path] : [];
  });
}

/** Whether `text` holds `word` as a whole string literal ('word', "word" or `word`). */
function namesAsLiteral(text: string, word: string): boolean {
  const escaped = word.replace(/[.*+?^${}()|[\]\\]/g, '\\$&');
  return new RegExp(`(['"\`])${escaped}\\1`).test(text);
}

const files = sourceFiles(SRC).map((path) => ({ path: relative(SRC, path).split(sep).join('/'), text: readFileSync(path, 'utf8') }));

describe('a new architecture touches its file, one registry entry and, for a new leg kind, its leg file', () => {
  it('the literal finder finds a quoted name and ignores the name inside a longer text (negative control)', () => {
    expect(namesAsLiteral("if (a === '3-rpr') {", '3-rpr')).toBe(true);
    expect(namesAsLiteral('x: "strut",', 'strut')).toBe(true);
    expect(namesAsLiteral("'a 3-rpr study'", '3-rpr')).toBe(false);
    expect(namesAsLiteral("'3-rprx'", '3-rpr')).toBe(false);
  });

  it('outside src/architectures no source file names an architecture other than the five-bar', () => {
    const found: string[] = [];
    for (const name of ARCHITECTURE_NAMES.filter((n) => n !== 'five-bar')) {
      for (const f of files) {
        if (f.path.startsWith('architectures/')) continue;
        if (namesAsLiteral(f.text, name) || namesAsLiteral(f.text, ARCHITECTURES[name].variablePrefix)) found.push(`${f.path}: ${name}`);
      }
    }
    expect(found).toEqual([]);
  });

  it('each architecture is declared in one architecture file and registered by one entry of index.ts', () => {
    const registry = files.find((f) => f.path === 'architectures/index.ts')!.text;
    for (const name of ARCHITECTURE_NAMES) {
      const declaring = files.filter((f) => f.path.startsWith('architectures/') && f.path !== 'architectures/index.ts' && new RegExp(`name: '${name}'`).test(f.text));
      expect(declaring.map((f) => f.path), name).toHaveLength(1);
      const entries = registry.split('\n').filter((line) => new RegExp(`^\\s*'${name}': \\w+,$`).test(line));
      expect(entries, name).toHaveLength(1);
    }
  });
});
