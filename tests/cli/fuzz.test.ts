/**
 * Generated mistakes: mutations of the demo studies (types, units, signs, missing and duplicate keys,
 * encodings, sizes) and malformed command lines. Every one must end with exit code 1 or 2, a short
 * message that starts with "loopsmith:", no stack trace, and nothing left behind in the folder.
 * The command line runs in-process (tests/cli/inProcess.ts), so a hundred cases take seconds.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { readdirSync, readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { assertBuilt, DEMO_STUDY, makeTemporaryDirectory, removeTemporaryDirectories, REPO_ROOT, runArgs, runCli, SMALL_STUDY } from '../fixtures/harness.js';
import { runInProcess } from './inProcess.js';

beforeAll(assertBuilt);
afterAll(removeTemporaryDirectories);

const DEMOS = ['parcel-sorter.yaml', 'rail-sorter-2prr.yaml'].map((name) => join(REPO_ROOT, 'studies', name));

interface StudyMutation {
  readonly name: string;
  /** The mutated file content; null when the mutation does not apply to this demo. */
  readonly mutate: (text: string) => string | Buffer | null;
}

/** Replace the first match, or say the mutation does not apply. */
const sub = (pattern: RegExp, replacement: string) => (text: string): string | null => (pattern.test(text) ? text.replace(pattern, replacement) : null);

const STUDY_MUTATIONS: readonly StudyMutation[] = [
  // types
  { name: 'payload as a list', mutate: sub(/payload: [^\n]+/, 'payload: [1, 2]') },
  { name: 'payload as text', mutate: sub(/payload: [^\n]+/, 'payload: heavy') },
  { name: 'grid cells as text', mutate: sub(/grid_cells: \d+/, 'grid_cells: many') },
  { name: 'objectives as a mapping', mutate: sub(/objectives:\n/, 'objectives: { metric: gci }\nold_objectives:\n') },
  { name: 'architecture unknown', mutate: sub(/architecture: [\w-]+/, 'architecture: seven-bar') },
  { name: 'population as a fraction', mutate: sub(/population: \d+/, 'population: 10.5') },
  { name: 'study name as a number', mutate: sub(/^study: .+$/m, 'study: 42') },
  // units
  { name: 'payload in metres', mutate: sub(/payload: [\d.]+ kg/, 'payload: 0.5 m') },
  { name: 'unknown unit', mutate: sub(/min: (\d+) mm/, 'min: $1 furlongs') },
  { name: 'length in kilograms', mutate: sub(/min: (\d+) mm/, 'min: $1 kg') },
  { name: 'speed as an acceleration', mutate: sub(/speed: ([\d.]+) m\/s\b(?!\^)/, 'speed: $1 m/s^2') },
  { name: 'torque as a force', mutate: sub(/rated_torque: ([\d.]+) N\*m/, 'rated_torque: $1 N') },
  { name: 'angle limit in mm', mutate: sub(/(-?\d+) deg/, '$1 mm') },
  // signs and ranges
  { name: 'negative payload', mutate: sub(/payload: ([\d.]+)/, 'payload: -$1') },
  { name: 'negative grid cells', mutate: sub(/grid_cells: \d+/, 'grid_cells: -5') },
  { name: 'zero population', mutate: sub(/population: \d+/, 'population: 0') },
  { name: 'efficiency above one', mutate: sub(/efficiency: [\d.]+/, 'efficiency: 1.5') },
  { name: 'bounds reversed', mutate: sub(/\{ min: (\d+) mm, max: (\d+) mm \}/, '{ min: $2 mm, max: $1 mm }') },
  { name: 'negative crank bound', mutate: sub(/crank_1: \{ min: (\d+) mm/, 'crank_1: { min: -$1 mm') },
  { name: 'baseline outside the bounds', mutate: sub(/(baseline:\n(?:  .*\n)*?  crank_1: )[^\n]+/, '$1 5000 mm') },
  { name: 'task region out of reach', mutate: sub(/centre: \[0 mm, -450 mm\]/, 'centre: [0 mm, -4500 mm]') },
  // missing keys
  { name: 'no geometry', mutate: sub(/\ngeometry:\n(  .*\n)+/, '\n') },
  { name: 'no architecture', mutate: sub(/\narchitecture: [^\n]+/, '') },
  { name: 'no objectives', mutate: sub(/\nobjectives:\n(  .*\n)+/, '\n') },
  { name: 'no study name', mutate: sub(/^study: [^\n]+\n/m, '') },
  // duplicate and unknown keys
  { name: 'duplicate study key', mutate: (t) => t.replace(/^(study: [^\n]+)$/m, '$1\n$1') },
  { name: 'duplicate top-level block', mutate: (t) => (/\nevaluation:\n/.test(t) ? t + '\nevaluation:\n  grid_cells: 10\n' : null) },
  { name: 'unknown top-level key', mutate: (t) => t + '\ncolour: blue\n' },
  { name: 'misspelt key', mutate: sub(/objectives:/, 'objectivs:') },
  // encodings
  { name: 'UTF-16 with a byte-order mark', mutate: (t) => Buffer.concat([Buffer.from([0xff, 0xfe]), Buffer.from(t, 'utf16le')]) },
  { name: 'Latin-1 bytes in a unit', mutate: (t) => Buffer.from(t.replace(/min: (\d+) mm/, 'min: $1 \u00b5x'), 'latin1') },
  { name: 'NUL bytes', mutate: (t) => t.replace('\n', '\n\u0000\u0000\n') },
  { name: 'binary garbage', mutate: () => Buffer.from(Array.from({ length: 4096 }, (_, i) => (i * 7919) % 256)) },
  { name: 'tab indentation', mutate: sub(/\n {2}(\w)/, '\n\t$1') },
  // sizes and shapes
  { name: 'empty file', mutate: () => '' },
  { name: 'only a comment', mutate: () => '# nothing here\n' },
  { name: 'a list at the top', mutate: (t) => `- ${t.split('\n').join('\n  ')}` },
  { name: 'a scalar at the top', mutate: () => 'just text\n' },
  { name: 'a second document', mutate: (t) => t + '\n---\nstudy: other\n' },
  { name: 'five megabytes of comment and a broken key', mutate: (t) => `${'#'.repeat(5_000_000)}\n${t}\ngeometry: [\n` },
  { name: 'deep nesting', mutate: (t) => t + `\nextra: ${'['.repeat(2000)}${']'.repeat(2000)}\n` },
  { name: 'alias bomb', mutate: (t) => `${t}\nx0: &x0 [a, a, a, a, a, a, a, a, a, a]\n${Array.from({ length: 8 }, (_, i) => `x${i + 1}: &x${i + 1} [${Array(10).fill(`*x${i}`).join(', ')}]`).join('\n')}\n` },
  { name: 'unterminated quote', mutate: sub(/^study: ([^\n]+)$/m, 'study: "$1') },
];

interface Case {
  readonly label: string;
  readonly args: (dir: string, db: string) => string[];
}

/** Study mutations × demos × commands, plus malformed command lines. */
function studyCases(): Case[] {
  const cases: Case[] = [];
  for (const demo of DEMOS) {
    const text = readFileSync(demo, 'utf8');
    const short = demo.split('/').at(-1)!;
    for (const mutation of STUDY_MUTATIONS) {
      const content = mutation.mutate(text);
      if (content === null || content === text) continue;
      // Alternate the commands so every one meets every kind of mutation across the demos.
      const command = ['check', 'evaluate', 'run'][(cases.length + DEMOS.indexOf(demo)) % 3]!;
      cases.push({
        label: `${short}: ${mutation.name} (${command})`,
        args: (dir, db) => {
          const file = join(dir, 'study.yaml');
          writeFileSync(file, content);
          return command === 'run' ? ['run', file, '--db', db, '--quiet'] : [command, file];
        },
      });
    }
  }
  return cases;
}

const S = SMALL_STUDY;
const COMMAND_LINES: readonly [string, (db: string, dir: string) => string[]][] = [
  ['no command', () => []],
  ['unknown command', () => ['optimise', S]],
  ['unknown option', (db) => ['run', S, '--db', db, '--frobnicate']],
  ['population 1', (db) => ['run', S, '--db', db, '--population', '1']],
  ['population abc', (db) => ['run', S, '--db', db, '--population', 'abc']],
  ['seed abc', (db) => ['run', S, '--db', db, '--seed', 'abc']],
  ['seed 1.5', (db) => ['run', S, '--db', db, '--seed', '1.5']],
  ['workers 0', (db) => ['run', S, '--db', db, '--workers', '0']],
  ['generations -3', (db) => ['run', S, '--db', db, '--generations', '-3']],
  ['missing study file', (db, dir) => ['run', join(dir, 'nope.yaml'), '--db', db]],
  ['study is a folder', (db, dir) => ['check', dir]],
  ['warm start from nothing', (db, dir) => ['run', S, '--db', db, '--from', join(dir, 'none.db')]],
  ['db in a file, not a folder', (_db, dir) => { writeFileSync(join(dir, 'blocker'), 'x'); return ['run', S, '--db', join(dir, 'blocker', 'x.db'), '--quiet']; }],
  ['set without =', () => ['evaluate', S, '--set', 'crank_1']],
  ['set unknown name', () => ['evaluate', S, '--set', 'nosuch=3mm']],
  ['set 300 bare', () => ['evaluate', S, '--set', 'crank_1=300']],
  ['set negative', () => ['evaluate', S, '--set', 'crank_1=-300mm']],
  ['set unknown unit', () => ['evaluate', S, '--set', 'crank_1=3 furlongs']],
  ['set a mass for a length', () => ['evaluate', S, '--set', 'crank_1=3kg']],
  ['set tied parameter', () => ['evaluate', S, '--set', 'crank_2=300mm']],
  ['set working mode unknown', () => ['evaluate', S, '--set', 'working_mode=xx']],
  ['probe without --at', () => ['probe', S]],
  ['probe four coordinates', () => ['probe', S, '--at', '1,2,3,4']],
  ['probe text', () => ['probe', S, '--at', 'abc']],
  ['probe bare 100 m', () => ['probe', S, '--at', '100,-450mm']],
  ['probe phi on a five-bar', () => ['probe', S, '--at', '0mm,-450mm,10deg']],
  ['map jpg', () => ['map', S, '--out', 'm.jpg']],
  ['map cells 2', (_db, dir) => ['map', S, '--out', join(dir, 'm.svg'), '--cells', '2']],
  ['sweep samples 0', (db) => ['sweep', S, '--samples', '0', '--db', db]],
  ['sweep method unknown', (db) => ['sweep', S, '--samples', '5', '--method', 'random', '--db', db]],
  ['query missing db', (db) => ['query', db]],
  ['front missing db', (db) => ['front', db]],
  ['runs missing db', (db) => ['runs', db]],
  ['report missing db', (db, dir) => ['report', db, '--out', join(dir, 'r')]],
  ['export nothing selected', (db, dir) => ['export', db, '--format', 'csv', '--out', join(dir, 'e')]],
  ['export bad ids', (db, dir) => ['export', db, '--ids', 'a,b', '--format', 'csv', '--out', join(dir, 'e')]],
  ['new over an existing file', (_db, dir) => { writeFileSync(join(dir, 'exists.yaml'), 'x'); return ['new', join(dir, 'exists.yaml')]; }],
  ['simulate negative duration', () => ['simulate', join(REPO_ROOT, 'studies', 'parcel-sorter-cycle.yaml'), '--duration', '-2s']],
];

/** Commands against a real store, each malformed. */
const STORE_COMMAND_LINES: readonly [string, (db: string) => string[]][] = [
  ['front unknown run', (db) => ['front', db, '--run', '99']],
  ['front run abc', (db) => ['front', db, '--run', 'abc']],
  ['front sort unknown', (db) => ['front', db, '--sort', 'nosuch']],
  ['front sort malformed', (db) => ['front', db, '--sort', 'gci:sideways']],
  ['front limit 0', (db) => ['front', db, '--limit', '0']],
  ['front columns unknown', (db) => ['front', db, '--columns', 'id,nosuch']],
  ['front format xml', (db) => ['front', db, '--format', 'xml']],
  ['query statement', (db) => ['query', db, '--where', '1; DROP TABLE runs']],
  ['query unknown column', (db) => ['query', db, '--where', 'nosuch > 1']],
  ['query order-by unknown', (db) => ['query', db, '--order-by', 'nosuch desc']],
  ['query columns unknown', (db) => ['query', db, '--columns', 'nosuch']],
  ['query sort unknown', (db) => ['query', db, '--sort', 'nosuch']],
  ['query limit -1', (db) => ['query', db, '--limit', '-1']],
  ['rescore unknown run', (db) => ['rescore', db, '--study', SMALL_STUDY, '--run', '42']],
  ['export unknown id', (db) => ['export', db, '--ids', '99999', '--format', 'json', '--out', `${db}.export`]],
];

let storeDir = '';
let storeDb = '';

beforeAll(async () => {
  storeDir = makeTemporaryDirectory('fuzz-store');
  storeDb = join(storeDir, 'small.db');
  const result = await runCli(runArgs(SMALL_STUDY, storeDb, { generations: 2, workers: 1, population: 6 }));
  expect(result.code, result.stderr).toBe(0);
});

/** Exit 1 or 2, a short message, no stack trace. */
function refusalProblem(label: string, result: { code: number; stdout: string; stderr: string }): string | undefined {
  if (result.code !== 1 && result.code !== 2) return `${label}: exit ${result.code}: ${result.stderr.slice(0, 300)}`;
  if (!/^loopsmith: /.test(result.stderr)) return `${label}: message does not start with "loopsmith:": ${result.stderr.slice(0, 200)}`;
  if (/internal error|\n\s+at \S+ \(|\n\s+at file:/.test(result.stderr)) return `${label}: stack trace: ${result.stderr.slice(0, 300)}`;
  if (result.stderr.length >= 2500) return `${label}: message of ${result.stderr.length} characters`;
  return undefined;
}

/** Exit 1 or 2, a short message, no stack trace. */
function expectRefusal(label: string, result: { code: number; stdout: string; stderr: string }): void {
  expect(refusalProblem(label, result)).toBeUndefined();
}

describe('generated bad study files and command lines', () => {
  const cases = studyCases();

  it(`has at least 60 generated cases (${cases.length} study mutations, ${COMMAND_LINES.length + STORE_COMMAND_LINES.length} command lines)`, () => {
    expect(cases.length + COMMAND_LINES.length + STORE_COMMAND_LINES.length).toBeGreaterThanOrEqual(60);
  });

  // Long only on a loaded machine (in-process, a case takes milliseconds to a second); no wall-time assertion.
  it('every mutated study is refused with one message and leaves nothing behind', { timeout: 900_000 }, async () => {
    const problems: string[] = [];
    for (const c of cases) {
      const dir = makeTemporaryDirectory('fuzz');
      const db = join(dir, 'out.db');
      const result = await runInProcess(c.args(dir, db));
      const problem = refusalProblem(c.label, result);
      if (problem) problems.push(problem);
      const left = readdirSync(dir).sort();
      if (left.join() !== 'study.yaml') problems.push(`${c.label}: left ${left.join(', ')}`);
    }
    expect(problems).toEqual([]);
  });

  it('every malformed command line is refused with one message and leaves nothing behind', { timeout: 900_000 }, async () => {
    const problems: string[] = [];
    for (const [label, make] of COMMAND_LINES) {
      const dir = makeTemporaryDirectory('fuzz-cli');
      const db = join(dir, 'out.db');
      const args = make(db, dir);
      const before = readdirSync(dir).sort();
      const result = await runInProcess(args);
      const problem = refusalProblem(label, result);
      if (problem) problems.push(problem);
      if (readdirSync(dir).sort().join() !== before.join()) problems.push(`${label}: left ${readdirSync(dir).join(', ')}`);
    }
    expect(problems).toEqual([]);
  });

  it('every malformed command against a real store is refused and changes nothing', async () => {
    const before = readFileSync(storeDb);
    for (const [label, make] of STORE_COMMAND_LINES) {
      const result = await runInProcess(make(storeDb));
      expectRefusal(label, result);
      expect(readdirSync(storeDir).filter((f) => !/-(wal|shm)$/.test(f)), label).toEqual(['small.db']);
    }
    expect(readFileSync(storeDb).equals(before)).toBe(true);
  });

  it('the demo itself passes check (the mutations, not the harness, cause the refusals)', async () => {
    const result = await runInProcess(['check', DEMO_STUDY]);
    expect(result.code, result.stderr).toBe(0);
  });
});
