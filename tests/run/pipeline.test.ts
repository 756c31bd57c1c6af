/**
 * End-to-end through the real command line (`node bin/loopsmith.js`, i.e. dist/; run `npm run build`
 * first): runs are reproducible whatever the number of worker threads, a finished study run again is
 * served from the evaluation cache, and sweeps store the designs they promise.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { join } from 'node:path';
import { designVariables } from '../../src/mechanics/designSpace.js';
import { loadStudyFile } from '../../src/study/parse.js';
import {
  assertBuilt,
  dumpDatabase,
  makeTemporaryDirectory,
  readDatabase,
  removeTemporaryDirectories,
  runArgs,
  runCli,
  SMALL_STUDY,
  type Row,
} from '../fixtures/harness.js';

/** Population of small-sorter.yaml. */
const POPULATION = 16;

beforeAll(assertBuilt);
afterAll(removeTemporaryDirectories);

interface FrontJson {
  run: number;
  objectives: { metric: string; sense: 'min' | 'max' }[];
  designs: { id: number; variables: Record<string, number>; metrics: Record<string, number | null>; constraints: Record<string, number | null> }[];
}

async function frontJson(dbPath: string, runId?: number): Promise<FrontJson> {
  const result = await runCli(['front', dbPath, '--format', 'json', ...(runId !== undefined ? ['--run', String(runId)] : [])]);
  expect(result.code, result.stderr).toBe(0);
  return JSON.parse(result.stdout) as FrontJson;
}

function selectAll(dbPath: string, sql: string, ...parameters: unknown[]): Row[] {
  return readDatabase(dbPath, (db) => db.prepare<unknown[], Row>(sql).all(...parameters));
}

describe('determinism across worker counts', () => {
  it('gives identical database contents with --workers 1 and --workers 2, timing columns aside', async () => {
    const directory = makeTemporaryDirectory('workers');
    const oneWorker = join(directory, 'one.db');
    const twoWorkers = join(directory, 'two.db');
    const settings = { generations: 8 };
    const [one, two] = await Promise.all([
      runCli(runArgs(SMALL_STUDY, oneWorker, { ...settings, workers: 1 })),
      runCli(runArgs(SMALL_STUDY, twoWorkers, { ...settings, workers: 2 })),
    ]);
    expect(one.code, one.stderr).toBe(0);
    expect(two.code, two.stderr).toBe(0);
    // The runs really used different pools.
    expect(selectAll(oneWorker, 'SELECT workers FROM runs')).toEqual([{ workers: 1 }]);
    expect(selectAll(twoWorkers, 'SELECT workers FROM runs')).toEqual([{ workers: 2 }]);

    // The built-in engine never ends a worker thread: no evaluation may be stored as a crash.
    for (const dbPath of [oneWorker, twoWorkers]) {
      expect(selectAll(dbPath, "SELECT id, error FROM evaluations WHERE error LIKE 'worker thread crashed%'"), dbPath).toEqual([]);
    }
    const dumpOne = dumpDatabase(oneWorker);
    expect(dumpOne['evaluations']!.length).toBeGreaterThan(POPULATION);
    expect(dumpOne['generation_members']).toHaveLength(8 * POPULATION);
    expect(dumpDatabase(twoWorkers)).toEqual(dumpOne);
  });
});

describe('evaluation cache', () => {
  it('runs a finished study again as a new run served wholly from the cache, with the same front', async () => {
    const dbPath = join(makeTemporaryDirectory('cache'), 'cache.db');
    const generations = 6;
    const args = runArgs(SMALL_STUDY, dbPath, { generations, workers: 1 });
    const first = await runCli(args);
    expect(first.code, first.stderr).toBe(0);
    const evaluationsAfterFirst = selectAll(dbPath, 'SELECT * FROM evaluations ORDER BY id');
    const second = await runCli(args);
    expect(second.code, second.stderr).toBe(0);

    expect(selectAll(dbPath, 'SELECT id, kind, status, generations_done FROM runs ORDER BY id')).toEqual([
      { id: 1, kind: 'optimize', status: 'finished', generations_done: generations },
      { id: 2, kind: 'optimize', status: 'finished', generations_done: generations },
    ]);
    // Not a single new evaluation: the table is untouched and every generation of run 2 reports 0 new.
    expect(selectAll(dbPath, 'SELECT * FROM evaluations ORDER BY id')).toEqual(evaluationsAfterFirst);
    const statsColumns = 'generation, evaluations, new_evaluations, failed, feasible_count, hypervolume';
    const secondStats = selectAll(dbPath, `SELECT ${statsColumns} FROM generation_stats WHERE run_id = 2 ORDER BY generation`);
    expect(secondStats).toHaveLength(generations);
    for (const row of secondStats) expect(row).toMatchObject({ evaluations: POPULATION, new_evaluations: 0 });
    const firstStats = selectAll(dbPath, `SELECT ${statsColumns} FROM generation_stats WHERE run_id = 1 ORDER BY generation`);
    expect(firstStats.reduce((sum, row) => sum + (row['new_evaluations'] as number), 0)).toBe(evaluationsAfterFirst.length);
    // Same populations give the same feasible counts and hypervolumes; new_evaluations and failed count
    // only designs not served from the cache (BatchResult in src/run/batch.ts), so they differ.
    const comparable = ({ new_evaluations: _new, failed: _failed, ...rest }: Row): Row => rest;
    expect(secondStats.map(comparable)).toEqual(firstStats.map(comparable));
    for (const row of secondStats) expect(row['failed']).toBe(0);
    // The same populations, member for member.
    const members = (runId: number): Row[] =>
      selectAll(dbPath, 'SELECT generation, position, evaluation_id, rank, crowding FROM generation_members WHERE run_id = ? ORDER BY generation, position', runId);
    expect(members(2)).toEqual(members(1));

    const latestFront = await frontJson(dbPath);
    const firstFront = await frontJson(dbPath, 1);
    expect(latestFront.run).toBe(2);
    expect(latestFront.designs.length).toBeGreaterThan(0);
    expect(latestFront.designs).toEqual(firstFront.designs);
  });
});

describe('loopsmith sweep', () => {
  const { study } = loadStudyFile(SMALL_STUDY);
  const variables = designVariables(study).map((v) => {
    if (v.kind !== 'real') throw new Error('small-sorter.yaml has real design variables only');
    return v;
  });
  let dbPath = '';

  beforeAll(async () => {
    dbPath = join(makeTemporaryDirectory('sweep'), 'sweep.db');
    for (const method of ['lhs', 'grid']) {
      const result = await runCli(['sweep', SMALL_STUDY, '--samples', '30', '--method', method, '--db', dbPath, '--workers', '1', '--quiet']);
      expect(result.code, result.stderr).toBe(0);
    }
  });

  function sweepDesigns(runId: number): Row[] {
    return selectAll(
      dbPath,
      `SELECT e.* FROM generation_members g JOIN evaluations e ON e.id = g.evaluation_id WHERE g.run_id = ? ORDER BY g.generation, g.position`,
      runId,
    );
  }

  it('records both sweeps as finished sweep runs with their settings', () => {
    const runs = selectAll(dbPath, 'SELECT id, kind, status, settings_json FROM runs ORDER BY id');
    expect(runs.map((r) => [r['id'], r['kind'], r['status']])).toEqual([
      [1, 'sweep', 'finished'],
      [2, 'sweep', 'finished'],
    ]);
    expect(JSON.parse(runs[0]!['settings_json'] as string)).toEqual({ designs: 30, method: 'lhs', samples: 30 });
    // Grid: 3 levels per real variable, as 3³ = 27 ≤ 30 < 4³ (derived from "about `samples` points").
    expect(JSON.parse(runs[1]!['settings_json'] as string)).toEqual({ designs: 27, method: 'grid', samples: 30 });
    // The built-in engine never ends a worker thread: no design may be stored as a crash.
    expect(selectAll(dbPath, "SELECT id, error FROM evaluations WHERE error LIKE 'worker thread crashed%'")).toEqual([]);
  });

  it('--method lhs stores 30 distinct designs, one in each of 30 equal strata of every variable', () => {
    const designs = sweepDesigns(1);
    expect(designs).toHaveLength(30);
    expect(new Set(designs.map((d) => d['id'])).size).toBe(30);
    expect(selectAll(dbPath, 'SELECT rank FROM generation_members WHERE run_id = 1 AND rank <> -1')).toEqual([]);
    // Latin hypercube: each variable's range cut into n equal strata holds exactly one sample per stratum
    // (McKay, Beckman and Conover, "A comparison of three methods for selecting values of input variables
    // in the analysis of output from a computer code", Technometrics 1979, section 2; from memory).
    for (const v of variables) {
      const strata = designs
        .map((d) => Math.min(29, Math.floor(((d[`v_${v.name}`] as number) - v.min) / (v.max - v.min) * 30)))
        .sort((a, b) => a - b);
      expect(strata, v.name).toEqual(Array.from({ length: 30 }, (_, k) => k));
    }
  });

  it('--method grid stores the 27 points of a 3-level full-factorial grid including the bounds', () => {
    const designs = sweepDesigns(2);
    expect(designs).toHaveLength(27);
    const levelKeys = new Set<string>();
    for (const d of designs) {
      const levels = variables.map((v) => {
        const level = (((d[`v_${v.name}`] as number) - v.min) / (v.max - v.min)) * 2; // 0, 1 or 2
        expect(Math.abs(level - Math.round(level)), `${v.name} of design ${String(d['id'])}`).toBeLessThan(1e-9);
        return Math.round(level);
      });
      levelKeys.add(levels.join(','));
    }
    expect(levelKeys.size).toBe(27);
    // Every design of both sweeps is stored once: 30 + 27 rows.
    expect(selectAll(dbPath, 'SELECT COUNT(*) AS n FROM evaluations')).toEqual([{ n: 57 }]);
  });

  it('front of a sweep run is exactly the feasible non-dominated subset of its designs', async () => {
    for (const runId of [1, 2]) {
      const front = await frontJson(dbPath, runId);
      expect(front.run).toBe(runId);
      // Independent check: minimisation form of the study's objectives, non-domination by definition.
      const minimised = (metrics: Row): number[] =>
        study.objectives.map((o) => (o.sense === 'max' ? -1 : 1) * (metrics[`m_${o.metric}`] as number));
      const feasible = sweepDesigns(runId).filter((d) => d['feasible'] === 1);
      const dominates = (a: number[], b: number[]): boolean => a.every((x, k) => x <= b[k]!) && a.some((x, k) => x < b[k]!);
      const expectedIds = feasible
        .filter((d) => !feasible.some((other) => other !== d && dominates(minimised(other), minimised(d))))
        .map((d) => d['id'] as number)
        .sort((a, b) => a - b);
      expect(expectedIds.length, `run ${runId} has feasible designs`).toBeGreaterThan(0);
      expect(front.designs.map((d) => d.id)).toEqual(expectedIds);
      for (const d of front.designs) {
        const row = feasible.find((f) => f['id'] === d.id)!;
        for (const v of variables) expect(d.variables[v.name]).toBe(row[`v_${v.name}`]);
        for (const o of study.objectives) expect(d.metrics[o.metric]).toBe(row[`m_${o.metric}`]);
      }
    }
    // Without --run: the latest run (the grid sweep).
    expect((await frontJson(dbPath)).run).toBe(2);
  });
});
