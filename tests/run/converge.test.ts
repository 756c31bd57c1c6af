/**
 * `loopsmith run --more`: a finished run continued for N more generations ends with the same store
 * contents (timings aside) as one longer run with the same seed; the run summary and `runs` say how
 * the run ended. Spawns the real command line (dist/; run `npm run build` first).
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { existsSync, readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { parseStudyText } from '../../src/study/parse.js';
import {
  assertBuilt,
  dumpDatabase,
  makeTemporaryDirectory,
  readDatabase,
  removeTemporaryDirectories,
  runArgs,
  runCli,
  SMALL_STUDY,
} from '../fixtures/harness.js';

beforeAll(() => assertBuilt());
afterAll(() => removeTemporaryDirectories());

describe('run --more', () => {
  it('continues a finished run to the same store contents as one longer run with the same seed', async () => {
    const dir = makeTemporaryDirectory('more');
    const continued = join(dir, 'continued.db');
    const longer = join(dir, 'longer.db');
    const first = await runCli(runArgs(SMALL_STUDY, continued, { generations: 3, workers: 1, quiet: false }));
    expect(first.code, first.stderr).toBe(0);
    expect(first.stdout).toMatch(/ended: budget — reached its generation count \(3 in all\) after 48 evaluations/);
    expect(first.stdout).toMatch(/--more converge --run 1/);
    const more = await runCli(['run', SMALL_STUDY, '--db', continued, '--more', '2', '--workers', '1', '--quiet']);
    expect(more.code, more.stderr).toBe(0);
    const whole = await runCli(runArgs(SMALL_STUDY, longer, { generations: 5, workers: 1 }));
    expect(whole.code, whole.stderr).toBe(0);

    const a = dumpDatabase(continued);
    const b = dumpDatabase(longer);
    expect(a['runs']).toHaveLength(1);
    expect(a['runs']![0]).toMatchObject({ status: 'finished', end_reason: 'budget', generations_done: 5, termination_json: '{"generations":4}' });
    expect(a).toEqual(b);

    const runs = await runCli(['runs', continued]);
    expect(runs.stdout).toMatch(/finished\s+budget/);
  }, 300_000);

  it('refuses --more without an earlier run, and --more with --generations, with clear messages', async () => {
    const dir = makeTemporaryDirectory('more-refused');
    const none = await runCli(['run', SMALL_STUDY, '--db', join(dir, 'empty.db'), '--more', '2', '--workers', '1', '--quiet']);
    expect(none.code).toBe(1);
    expect(none.stderr).toMatch(/--more: .*empty\.db: no such database/);
    expect(existsSync(join(dir, 'empty.db'))).toBe(false);
    const both = await runCli(['run', SMALL_STUDY, '--more', '2', '--generations', '4']);
    expect(both.code).toBe(2);
    expect(both.stderr).toMatch(/--more and --generations do not go together/);
    const bad = await runCli(['run', SMALL_STUDY, '--more', 'lots']);
    expect(bad.code).toBe(2);
    expect(bad.stderr).toMatch(/--more lots: give a number of generations/);
  }, 120_000);

  it('a run without a generation count stops on convergence or its evaluation cap and records why', async () => {
    const dir = makeTemporaryDirectory('converge');
    const db = join(dir, 'converge.db');
    const text = readFileSync(SMALL_STUDY, 'utf8').replace(/^\s*generations:.*$/m, '  convergence: { window: 3, tolerance: 0.01, max_evaluations: 400 }');
    const studyPath = join(dir, 'small-converge.yaml');
    writeFileSync(studyPath, text);
    const result = await runCli(['run', studyPath, '--db', db, '--workers', '1']);
    expect(result.code, result.stderr).toBe(0);
    expect(result.stdout).toMatch(/ended: (converged|budget)/);
    const run = readDatabase(db, (d) => d.prepare<[], { end_reason: string; termination_json: string }>('SELECT end_reason, termination_json FROM runs').get()!);
    expect(['converged', 'budget']).toContain(run.end_reason);
    expect(JSON.parse(run.termination_json)).toMatchObject({ maxEvaluations: 400, convergence: { window: 3, tolerance: 0.01 } });
    const stats = readDatabase(db, (d) => d.prepare<[], { archive_size: number | null; hv_improvement: number | null; evaluations: number }>('SELECT archive_size, hv_improvement, evaluations FROM generation_stats ORDER BY generation').all());
    expect(stats.reduce((sum, s) => sum + s.evaluations, 0)).toBeLessThanOrEqual(400);
    expect(stats[0]!.evaluations).toBe(64); // 4 × the population of 16: the feasibility-seeking start
    expect(stats.at(-1)!.hv_improvement).not.toBeNull();
  }, 300_000);
});

describe('runs that stop on convergence (NSGA-II-DE search, differential refinement)', () => {
  it('1 and 2 workers write the same store; the run goes through search and refinement within its cap', async () => {
    // derived here: the search draws only from the run's seeded source and evaluations do not depend
    // on which worker made them, so the worker count cannot change any stored value.
    const dir = makeTemporaryDirectory('converge-workers');
    const text = readFileSync(SMALL_STUDY, 'utf8').replace(/^\s*generations:.*$/m, '  convergence: { window: 3, tolerance: 0, max_evaluations: 400 }');
    const studyPath = join(dir, 'small-converge.yaml');
    writeFileSync(studyPath, text);
    const dumps: ReturnType<typeof dumpDatabase>[] = [];
    for (const workers of ['1', '2']) {
      const db = join(dir, `w${workers}.db`);
      const result = await runCli(['run', studyPath, '--db', db, '--workers', workers, '--quiet']);
      expect(result.code, result.stderr).toBe(0);
      dumps.push(dumpDatabase(db, { runs: ['workers', 'command'] }));
    }
    expect(dumps[0]).toEqual(dumps[1]);
    const run = readDatabase(join(dir, 'w1.db'), (d) => d.prepare<[], { termination_json: string; settings_json: string; end_reason: string }>('SELECT termination_json, settings_json, end_reason FROM runs').get()!);
    // 30 % of the cap of 400 for the refinement with population 16: round(0.3 · 400 / 16) = 8 generations.
    expect(JSON.parse(run.termination_json)).toMatchObject({ maxEvaluations: 400, refinementGenerations: 8 });
    expect(JSON.parse(run.settings_json)).toMatchObject({ search: { variation: 'de', refinementMove: 'differential' } });
    expect(run.end_reason).toBe('budget'); // tolerance 0: never converges
    const stats = readDatabase(join(dir, 'w1.db'), (d) => d.prepare<[], { evaluations: number }>('SELECT evaluations FROM generation_stats ORDER BY generation').all());
    expect(stats.reduce((sum, s) => sum + s.evaluations, 0)).toBe(64 + 21 * 16); // 4 × 16 at the start, then 21 generations fit in 400
  }, 300_000);
});

describe('study termination settings', () => {
  const base = (optimizer: string): string =>
    readFileSync(SMALL_STUDY, 'utf8').replace(/optimizer:[\s\S]*$/, `optimizer:\n${optimizer}\n`);

  it('no generation count: convergence with the defaults; a count: fixed; both: refused', () => {
    expect(parseStudyText(base('  population: 16'), 'a').study.optimizer.termination).toEqual({ kind: 'convergence', window: 20, tolerance: 0.001, maxEvaluations: 10000 });
    expect(parseStudyText(base('  generations: 7'), 'b').study.optimizer.termination).toEqual({ kind: 'generations', generations: 7 });
    expect(parseStudyText(base('  convergence: { window: 5, max_evaluations: 2000 }'), 'c').study.optimizer.termination).toEqual({ kind: 'convergence', window: 5, tolerance: 0.001, maxEvaluations: 2000 });
    expect(() => parseStudyText(base('  generations: 7\n  convergence: { window: 5 }'), 'd')).toThrow(/either generations .* or convergence/);
    expect(() => parseStudyText(base('  convergence: { tolerance: 2 }'), 'e')).toThrow(/tolerance/);
    expect(() => parseStudyText(base('  population: 100\n  convergence: { max_evaluations: 150 }'), 'f')).toThrow(/max_evaluations.*at least 200/);
  });
});
