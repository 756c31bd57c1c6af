/**
 * The evaluation pool: how a batch is cut into tasks (guided self-scheduling, Polychronopoulos & Kuck
 * 1987, "Guided self-scheduling: a practical scheduling scheme for parallel supercomputers", IEEE
 * Trans. Computers 36(12), from memory: each task a share of the designs still left, so tasks shrink
 * towards the end; here the share is 1/(2·workers)), and that outcomes come back in design order and
 * equal to evaluating each design directly, whatever the number of threads. The small study is an
 * invented scenario (tests/fixtures/small-sorter.yaml). Needs `npm run build` (the compiled worker).
 */
import { beforeAll, describe, expect, it } from 'vitest';
import { designVariables } from '../../src/mechanics/designSpace.js';
import { Evaluator } from '../../src/mechanics/evaluate.js';
import { EvaluationPool, taskSizes } from '../../src/pool/pool.js';
import { studyProblem } from '../../src/run/problem.js';
import { loadStudyFile } from '../../src/study/parse.js';
import { assertBuilt, SMALL_STUDY } from '../fixtures/harness.js';

beforeAll(assertBuilt);

describe('taskSizes', () => {
  it('covers every design once, in tasks that never grow, of at most 256 designs', () => {
    for (const workers of [1, 2, 3, 8]) {
      for (const designs of [0, 1, 2, 5, 17, 100, 400, 1000, 5000]) {
        const sizes = taskSizes(designs, workers);
        expect(sizes.reduce((a, b) => a + b, 0)).toBe(designs);
        sizes.forEach((size, k) => {
          expect(size).toBeGreaterThanOrEqual(1);
          expect(size).toBeLessThanOrEqual(256);
          if (k > 0) expect(size).toBeLessThanOrEqual(sizes[k - 1]!);
        });
      }
    }
  });

  it('gives one worker the batch in one task, and several workers a share of what is left each time', () => {
    expect(taskSizes(100, 1)).toEqual([100]);
    expect(taskSizes(600, 1)).toEqual([256, 256, 88]);
    // 2 workers: ceil(left / 4) each time (worked by hand: 100 → 25, 75 → 19, 56 → 14, ...).
    expect(taskSizes(100, 2)).toEqual([25, 19, 14, 11, 8, 6, 5, 3, 3, 2, 1, 1, 1, 1]);
    // The last tasks hold single designs, so the threads finish within about one design of each other.
    expect(taskSizes(1000, 4).slice(-4)).toEqual([1, 1, 1, 1]);
  });
});

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

  it('returns outcomes in design order, equal to evaluating each design directly, on 1 and 2 threads', async () => {
    const batch = designs(23);
    const reference = new Evaluator(study);
    const expected = batch.map((d) => {
      const r = reference.evaluate(d);
      return { metrics: Array.from(r.metrics), margins: Array.from(r.margins), violation: r.violation };
    });
    for (const workers of [1, 2]) {
      const pool = new EvaluationPool(study, sp.variables.length, sp.constraints.length, { workers });
      try {
        const outcomes = await pool.evaluate(batch);
        expect(outcomes.map((o) => o.error)).toEqual(batch.map(() => null));
        expect(outcomes.map((o) => ({ metrics: Array.from(o.metrics), margins: Array.from(o.margins), violation: o.violation }))).toEqual(expected);
      } finally {
        await pool.close();
      }
    }
  });
});
