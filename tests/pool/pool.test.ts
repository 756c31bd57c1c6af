/**
 * The evaluation pool: a batch lies in shared memory and every thread takes designs from it until none
 * are left (self-scheduling, one design at a time unless told otherwise); outcomes come back in design
 * order and equal to evaluating each design directly, whatever the number of threads and the claim
 * size; a design that throws or that ends its thread fails alone (fault-injecting evaluators in
 * tests/fixtures, invented test code). The small study is an invented scenario
 * (tests/fixtures/small-sorter.yaml). Needs `npm run build` (the compiled worker).
 */
import { beforeAll, describe, expect, it } from 'vitest';
import { join } from 'node:path';
import { pathToFileURL } from 'node:url';
import { designVariables } from '../../src/mechanics/designSpace.js';
import { Evaluator } from '../../src/mechanics/evaluate.js';
import { EvaluationPool } from '../../src/pool/pool.js';
import { studyProblem } from '../../src/run/problem.js';
import { loadStudyFile } from '../../src/study/parse.js';
import { assertBuilt, REPO_ROOT, SMALL_STUDY } from '../fixtures/harness.js';

beforeAll(assertBuilt);

describe('EvaluationPool', () => {
  const { study } = loadStudyFile(SMALL_STUDY);
  const sp = studyProblem(study);
  const variables = designVariables(study);

  /** Reproducible designs across the study's ranges (a small linear congruential generator, invented). */
  function designs(count: number): Float64Array[] {
    let seed = 2024;
    const next = (): number => ((seed = (seed * 1103515245 + 12345) % 2147483648) / 2147483648);
    return Array.from({ length: count }, () => Float64Array.from(variables, (v) => (v.kind === 'real' ? v.min + next() * (v.max - v.min) : 0)));
  }

  /** Direct evaluation in this thread: the reference the pool must match. */
  function direct(batch: readonly Float64Array[]): { metrics: number[]; margins: number[]; violation: number }[] {
    const reference = new Evaluator(study);
    return batch.map((d) => {
      const r = reference.evaluate(d);
      return { metrics: Array.from(r.metrics), margins: Array.from(r.margins), violation: r.violation };
    });
  }

  const plain = (o: { metrics: Float64Array; margins: Float64Array; violation: number }) => ({ metrics: Array.from(o.metrics), margins: Array.from(o.margins), violation: o.violation });

  it('returns outcomes in design order, equal to evaluating each design directly, on 1, 2 and 3 threads and claims of 1 and 4 designs', async () => {
    const batch = designs(23);
    const expected = direct(batch);
    for (const [workers, batchSize] of [[1, undefined], [2, undefined], [3, undefined], [2, 4]] as const) {
      const pool = new EvaluationPool(study, sp.variables.length, sp.constraints.length, { workers, ...(batchSize ? { batchSize } : {}) });
      try {
        const outcomes = await pool.evaluate(batch);
        expect(outcomes.map((o) => o.error)).toEqual(batch.map(() => null));
        expect(outcomes.map(plain)).toEqual(expected);
        // A second batch on the same threads, smaller than the pool.
        expect((await pool.evaluate(batch.slice(0, 1))).map(plain)).toEqual(expected.slice(0, 1));
      } finally {
        await pool.close();
      }
    }
  });

  const fixture = (name: string): string => pathToFileURL(join(REPO_ROOT, 'tests', 'fixtures', name)).href;
  const crankIndex = variables.findIndex((v) => v.name === 'crank_1');

  it.each([
    ['throws', 'evaluator-throws.mjs'],
    ['ends its thread', 'evaluator-crashes-thread.mjs'],
  ])('fails only a design whose evaluation %s and evaluates the rest of the batch normally, on 2 threads', async (_, name) => {
    const module = (await import(fixture(name))) as { CRANK_THRESHOLD_M: number; FAILURE_MESSAGE?: string };
    const failure = module.FAILURE_MESSAGE !== undefined ? `RangeError: ${module.FAILURE_MESSAGE}` : /^worker thread crashed: /;
    const batch = designs(23);
    const bad = batch.map((d) => d[crankIndex]! > module.CRANK_THRESHOLD_M);
    expect(bad.filter(Boolean).length).toBeGreaterThan(0);
    expect(bad.filter((b) => !b).length).toBeGreaterThan(0);
    const expected = direct(batch);
    const pool = new EvaluationPool(study, sp.variables.length, sp.constraints.length, { workers: 2, evaluatorModule: fixture(name) });
    try {
      const outcomes = await pool.evaluate(batch);
      outcomes.forEach((o, k) => {
        if (bad[k]) expect(o.error).toMatch(failure);
        else expect({ error: o.error, ...plain(o) }).toEqual({ error: null, ...expected[k] });
      });
    } finally {
      await pool.close();
    }
  });
});
