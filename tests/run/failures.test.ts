/**
 * End-to-end: designs whose evaluation throws, yields NaN in an objective, or ends its worker thread are
 * stored as failed with the reason, and the run still finishes every generation. Faults are injected
 * with the pool's `evaluatorModule` option (fixtures in tests/fixtures/*.mjs wrap the compiled engine;
 * run `npm run build` first). Every other design must be stored exactly as the engine evaluates it.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { join } from 'node:path';
import { pathToFileURL } from 'node:url';
import { Evaluator } from '../../src/mechanics/evaluate.js';
import { METRICS } from '../../src/mechanics/metrics.js';
import { runOptimization, type RunSummary } from '../../src/run/optimize.js';
import { loadStudyFile } from '../../src/study/parse.js';
import { assertBuilt, makeTemporaryDirectory, readDatabase, removeTemporaryDirectories, REPO_ROOT, SMALL_STUDY, type Row } from '../fixtures/harness.js';

beforeAll(assertBuilt);
afterAll(removeTemporaryDirectories);

const loaded = loadStudyFile(SMALL_STUDY);
const referenceEvaluator = new Evaluator(loaded.study);

function fixtureUrl(name: string): string {
  return pathToFileURL(join(REPO_ROOT, 'tests', 'fixtures', name)).href;
}

async function fixtureConstant(name: string, constant: string): Promise<number | string> {
  const module = (await import(fixtureUrl(name))) as Record<string, unknown>;
  const value = module[constant];
  if (typeof value !== 'number' && typeof value !== 'string') throw new Error(`${name} does not export ${constant}`);
  return value;
}

interface FaultRun {
  readonly summary: RunSummary;
  readonly dbPath: string;
  readonly generations: number;
  readonly sabotaged: Row[];
  readonly clean: Row[];
}

/** Runs the small study with a fault-injecting evaluator and splits the stored designs by `isSabotaged`. */
async function runWithFault(
  fixture: string,
  options: { generations: number; population: number; workers: number },
  isSabotaged: (row: Row) => boolean,
): Promise<FaultRun> {
  const dbPath = join(makeTemporaryDirectory('faults'), 'faults.db');
  const summary = await runOptimization(loaded, { dbPath, ...options, evaluatorModule: fixtureUrl(fixture) });
  const rows = readDatabase(dbPath, (db) => db.prepare<[], Row>('SELECT * FROM evaluations ORDER BY id').all());
  return {
    summary,
    dbPath,
    generations: options.generations,
    sabotaged: rows.filter(isSabotaged),
    clean: rows.filter((row) => !isSabotaged(row)),
  };
}

/** The run finished every generation, its counters add up, and some designs on each side of the fault. */
function expectFinishedRun(run: FaultRun): void {
  expect(run.summary.status).toBe('finished');
  expect(run.summary.generationsDone).toBe(run.generations);
  expect(run.summary.newEvaluations).toBe(run.sabotaged.length + run.clean.length);
  readDatabase(run.dbPath, (db) => {
    expect(db.prepare('SELECT status, generations_done FROM runs').all()).toEqual([{ status: 'finished', generations_done: run.generations }]);
    const stats = db.prepare<[], { failed: number }>('SELECT failed FROM generation_stats ORDER BY generation').all();
    expect(stats).toHaveLength(run.generations);
    expect(stats.reduce((sum, row) => sum + row.failed, 0)).toBe(run.sabotaged.length);
  });
  // Otherwise the test would prove nothing.
  expect(run.sabotaged.length, 'designs that met the fault condition').toBeGreaterThan(0);
  expect(run.clean.length, 'designs that did not').toBeGreaterThan(0);
}

function expectStoredAsFailed(row: Row, reason: string | RegExp): void {
  const where = `evaluation ${String(row['id'])}`;
  if (typeof reason === 'string') expect(row['error'], where).toBe(reason);
  else expect(row['error'], where).toMatch(reason);
  expect(row['feasible'], where).toBe(0);
  expect(row['violation'], where).toBe(Infinity);
}

/** A design the fault did not touch is stored exactly as the built-in engine evaluates it. */
function expectEvaluatedNormally(row: Row): void {
  const where = `evaluation ${String(row['id'])}`;
  const design = Float64Array.from(referenceEvaluator.variables, (v) => row[`v_${v.name}`] as number);
  const expected = referenceEvaluator.evaluate(design);
  expect(row['error'], where).toBeNull();
  const metrics = Object.fromEntries(METRICS.map((m, i) => [m.name, Number.isNaN(expected.metrics[i]!) ? null : expected.metrics[i]!]));
  expect(Object.fromEntries(METRICS.map((m) => [m.name, row[`m_${m.name}`]])), where).toEqual(metrics);
  expect(row['violation'], where).toBe(expected.violation);
  expect(row['feasible'], where).toBe(expected.feasible ? 1 : 0);
}

describe('failed evaluations', () => {
  it('stores a design whose evaluation throws as failed with the error text, and finishes the run', async () => {
    const threshold = (await fixtureConstant('evaluator-throws.mjs', 'CRANK_THRESHOLD_M')) as number;
    const message = (await fixtureConstant('evaluator-throws.mjs', 'FAILURE_MESSAGE')) as string;
    const run = await runWithFault('evaluator-throws.mjs', { generations: 4, population: 16, workers: 1 }, (row) => (row['v_crank_1'] as number) > threshold);
    expectFinishedRun(run);
    // The worker reports "<error name>: <message>"; the fixture throws a RangeError.
    for (const row of run.sabotaged) expectStoredAsFailed(row, `RangeError: ${message}`);
    for (const row of run.clean) expectEvaluatedNormally(row);
  });

  it('stores a design with NaN in an objective metric as failed, the metric as NULL, and finishes the run', async () => {
    const threshold = (await fixtureConstant('evaluator-nan-objective.mjs', 'ROD_THRESHOLD_M')) as number;
    const run = await runWithFault('evaluator-nan-objective.mjs', { generations: 4, population: 16, workers: 1 }, (row) => (row['v_rod_1'] as number) > threshold);
    expectFinishedRun(run);
    for (const row of run.sabotaged) {
      expectStoredAsFailed(row, 'objective gci is not a number (NaN)');
      expect(row['m_gci']).toBeNull();
    }
    for (const row of run.clean) expectEvaluatedNormally(row);
  });

  it('stores a design that ends its worker thread as failed, evaluates the rest of its batch normally, and finishes the run', async () => {
    const threshold = (await fixtureConstant('evaluator-crashes-thread.mjs', 'CRANK_THRESHOLD_M')) as number;
    // Population 12 on one thread: batches of 3 designs, so a crash takes two designs down with it
    // unless the pool isolates the culprit. Few crashes on purpose: every one restarts a thread.
    const run = await runWithFault('evaluator-crashes-thread.mjs', { generations: 3, population: 12, workers: 1 }, (row) => (row['v_crank_1'] as number) > threshold);
    expectFinishedRun(run);
    for (const row of run.sabotaged) expectStoredAsFailed(row, /^worker thread crashed: /);
    for (const row of run.clean) expectEvaluatedNormally(row);
  });
});
