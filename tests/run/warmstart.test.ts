/**
 * Warm start: an optimization whose first generation starts from the final population of an earlier
 * run (`runOptimization(loaded, { warmStart })`, `loopsmith run STUDY --from DB[:RUN]`).
 *
 * The worker pool and the command line run the compiled dist/ (run `npm run build` first). The study
 * and catalogue are INVENTED TEST DATA (tests/fixtures/catalogue/).
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { existsSync } from 'node:fs';
import { join } from 'node:path';
import { designVariables } from '../../src/mechanics/designSpace.js';
import { runOptimization, WarmStartError } from '../../src/run/optimize.js';
import type { MemberEvaluation } from '../../src/store/store.js';
import { loadStudyFile, type LoadedStudy } from '../../src/study/parse.js';
import {
  assertBuilt,
  designIdentity,
  generationMembers,
  makeTemporaryDirectory,
  queryRows,
  removeTemporaryDirectories,
  replaceOnce,
  runCli,
  withStore,
  writeDriveStudyVariant,
  type Row,
} from '../fixtures/catalogue/helpers.js';

let directory = '';
let sourceDb = '';
let sourceRunId = 0;
let base: LoadedStudy;
/** The fixture study with narrower crank and rod bounds (same design variables). */
let narrow: LoadedStudy;
let narrowPath = '';
let sharedPath = '';
/** Final population of the source run. */
let finalPopulation: MemberEvaluation[] = [];
/** The final population clamped to the narrow study's bounds, as design identities. */
let clampedFinal: string[] = [];

const sorted = (values: readonly string[]): string[] => [...values].sort();

beforeAll(async () => {
  assertBuilt();
  directory = makeTemporaryDirectory('warmstart');
  base = loadStudyFile(writeDriveStudyVariant(join(directory, 'base')));
  narrowPath = writeDriveStudyVariant(join(directory, 'narrow'), {
    study: (t) => replaceOnce(replaceOnce(t, 'crank_1: { min: 150 mm, max: 450 mm }', 'crank_1: { min: 150 mm, max: 300 mm }'), 'rod_1: { min: 250 mm, max: 650 mm }', 'rod_1: { min: 400 mm, max: 650 mm }'),
  });
  narrow = loadStudyFile(narrowPath);
  sharedPath = writeDriveStudyVariant(join(directory, 'shared'), {
    study: (t) => replaceOnce(replaceOnce(t, 'choose: per-actuator', 'choose: shared'), '  drive_1: TX-300-G16\n  drive_2: TX-150-G8\n', '  drive: TX-300-G16\n'),
  });
  sourceDb = join(directory, 'source.db');
  const summary = await runOptimization(base, { dbPath: sourceDb, workers: 1, population: 16, generations: 4 });
  sourceRunId = summary.runId;
  finalPopulation = generationMembers(sourceDb, sourceRunId, 3);
  const bounds = new Map<string, { min: number; max: number }>();
  for (const v of designVariables(narrow.study)) if (v.kind === 'real') bounds.set(v.name, v);
  clampedFinal = finalPopulation.map((m) =>
    designIdentity(
      Object.fromEntries(
        Object.entries(m.variables).map(([name, value]) => {
          const b = bounds.get(name);
          return [name, b && typeof value === 'number' ? Math.min(Math.max(value, b.min), b.max) : value];
        }),
      ),
    ),
  );
});

afterAll(removeTemporaryDirectories);

/** Identities of the designs of one generation of a run, in population order. */
function generationDesigns(dbPath: string, runId: number, generation: number): string[] {
  return generationMembers(dbPath, runId, generation).map((m) => designIdentity(m.variables));
}

/** Run rows without wall-clock columns, generation members, stats and evaluations without timings: what must repeat exactly. */
function reproducibleContent(dbPath: string): Record<string, Row[]> {
  const drop = (rows: Row[], columns: readonly string[]): Row[] => rows.map((r) => Object.fromEntries(Object.entries(r).filter(([c]) => !columns.includes(c))));
  return {
    runs: queryRows(dbPath, 'SELECT kind, parent_run_id, seed, settings_json, status, generations_done FROM runs ORDER BY id'),
    members: queryRows(dbPath, 'SELECT g.run_id, g.generation, g.position, g.rank, g.crowding, e.eval_key FROM generation_members g JOIN evaluations e ON e.id = g.evaluation_id ORDER BY g.run_id, g.generation, g.position'),
    stats: drop(queryRows(dbPath, 'SELECT * FROM generation_stats ORDER BY run_id, generation'), ['elapsed_seconds', 'evaluations_per_second']),
    evaluations: drop(queryRows(dbPath, 'SELECT * FROM evaluations ORDER BY id'), ['eval_seconds']),
  };
}

describe('runOptimization with a warm start', () => {
  it('the source run ends with a full population, some of it outside the narrower bounds', () => {
    expect(finalPopulation.length).toBe(16);
    // Otherwise the clamping below would not be tested.
    expect(clampedFinal.filter((identity, k) => identity !== designIdentity(finalPopulation[k]!.variables)).length).toBeGreaterThan(0);
  });

  it('with the same study, generation 0 is the earlier final population, served from the cache', async () => {
    const summary = await runOptimization(base, { dbPath: sourceDb, workers: 1, population: 16, generations: 1, warmStart: { dbPath: sourceDb, runId: sourceRunId } });
    expect(summary.runId).not.toBe(sourceRunId);
    expect(summary.newEvaluations).toBe(0);
    expect(sorted(generationMembers(sourceDb, summary.runId, 0).map((m) => String(m.id)))).toStrictEqual(sorted(finalPopulation.map((m) => String(m.id))));
  });

  it('clamps the earlier designs to the new bounds; generation 0 is exactly those designs; the run records its source', async () => {
    const dbPath = join(directory, 'warm-a.db');
    const summary = await runOptimization(narrow, { dbPath, workers: 1, population: 16, generations: 2, warmStart: { dbPath: sourceDb, runId: sourceRunId } });
    expect(summary.status).toBe('finished');
    expect(summary.generationsDone).toBe(2);
    expect(sorted(generationDesigns(dbPath, summary.runId, 0))).toStrictEqual(sorted(clampedFinal));
    const settings = JSON.parse(String(queryRows(dbPath, 'SELECT settings_json FROM runs WHERE id = ?', summary.runId)[0]!['settings_json'])) as Record<string, unknown>;
    expect(settings['warmStart']).toStrictEqual({ database: sourceDb, run: sourceRunId });
  });

  it('fills a larger population with its own space-filling designs after the earlier ones', async () => {
    const dbPath = join(directory, 'warm-larger.db');
    const summary = await runOptimization(narrow, { dbPath, workers: 1, population: 20, generations: 1, warmStart: { dbPath: sourceDb, runId: sourceRunId } });
    const members = generationDesigns(dbPath, summary.runId, 0);
    expect(members.length).toBe(20);
    const remaining = [...members];
    for (const identity of clampedFinal) {
      const at = remaining.indexOf(identity);
      expect(at, `earlier design ${identity} in generation 0`).toBeGreaterThanOrEqual(0);
      remaining.splice(at, 1);
    }
    expect(remaining.length).toBe(4);
  });

  it('is deterministic: the same warm start into a fresh database gives the same rows', async () => {
    const first = join(directory, 'warm-b.db');
    const second = join(directory, 'warm-c.db');
    for (const dbPath of [first, second]) {
      await runOptimization(narrow, { dbPath, workers: 1, population: 16, generations: 3, warmStart: { dbPath: sourceDb, runId: sourceRunId } });
    }
    const a = reproducibleContent(first);
    expect(a['members']!.length).toBe(48);
    expect(reproducibleContent(second)).toStrictEqual(a);
  });

  it('without a run id takes the latest optimization run of the database', async () => {
    const source = join(directory, 'two-runs.db');
    const older = await runOptimization(base, { dbPath: source, workers: 1, population: 16, generations: 1, seed: 3 });
    const newer = await runOptimization(base, { dbPath: source, workers: 1, population: 16, generations: 1, seed: 4 });
    const dbPath = join(directory, 'warm-latest.db');
    const summary = await runOptimization(base, { dbPath, workers: 1, population: 16, generations: 1, warmStart: { dbPath: source } });
    const newest = generationDesigns(source, newer.runId, 0);
    expect(sorted(generationDesigns(dbPath, summary.runId, 0))).toStrictEqual(sorted(newest));
    expect(sorted(newest)).not.toStrictEqual(sorted(generationDesigns(source, older.runId, 0)));
  });

  it('refuses a missing database, a missing run and other design variables, before creating anything', async () => {
    const target = join(directory, 'never-made.db');
    const missingDb = join(directory, 'no-such-source.db');
    await expect(runOptimization(narrow, { dbPath: target, workers: 1, warmStart: { dbPath: missingDb } })).rejects.toThrow(
      new WarmStartError(`--from ${missingDb}: no such database`),
    );
    await expect(runOptimization(narrow, { dbPath: target, workers: 1, warmStart: { dbPath: sourceDb, runId: 99 } })).rejects.toThrow(
      `--from ${sourceDb}:99: no such optimization run`,
    );
    const shared = loadStudyFile(sharedPath);
    await expect(runOptimization(shared, { dbPath: target, workers: 1, warmStart: { dbPath: sourceDb, runId: sourceRunId } })).rejects.toThrow(
      `--from: run ${sourceRunId} has no variable "drive"; warm starts need the same design variables`,
    );
    expect(existsSync(target)).toBe(false);
    expect(existsSync(missingDb)).toBe(false);
  });
});

describe('loopsmith run --from', () => {
  it('DB:RUN warm-starts the run exactly like the programmatic warm start; DB alone takes the latest optimization run', async () => {
    const apiDb = join(directory, 'cli-reference.db');
    const reference = await runOptimization(narrow, { dbPath: apiDb, workers: 1, population: 16, generations: 2, warmStart: { dbPath: sourceDb, runId: sourceRunId } });

    const cliDb = join(directory, 'cli-warm.db');
    const withRun = await runCli(['run', narrowPath, '--db', cliDb, '--from', `${sourceDb}:${sourceRunId}`, '--workers', '1', '--generations', '2', '--population', '16', '--quiet']);
    expect(withRun.code, withRun.stderr).toBe(0);
    const cliRunId = withStore(cliDb, (store) => store.listRuns().at(-1)!.id);
    for (const generation of [0, 1]) {
      expect(generationDesigns(cliDb, cliRunId, generation), `generation ${generation}`).toStrictEqual(generationDesigns(apiDb, reference.runId, generation));
    }

    // The source database's latest optimization run is now the cache-served warm run of the test above
    // or the source run itself; either way its final population is what "--from DB" must start from.
    const latestDb = join(directory, 'cli-latest.db');
    const latest = await runCli(['run', narrowPath, '--db', latestDb, '--from', sourceDb, '--workers', '1', '--generations', '1', '--population', '16', '--quiet']);
    expect(latest.code, latest.stderr).toBe(0);
    const latestSource = withStore(sourceDb, (store) => store.listRuns().filter((r) => r.kind === 'optimize').at(-1)!);
    const settings = JSON.parse(String(queryRows(latestDb, 'SELECT settings_json FROM runs ORDER BY id DESC LIMIT 1')[0]!['settings_json'])) as Record<string, unknown>;
    expect(settings['warmStart']).toStrictEqual({ database: sourceDb, run: latestSource.id });
  });

  it('a missing database or run ends with exit code 1 and one clear message, and creates no database', async () => {
    const target = join(directory, 'cli-never-made.db');
    const missingDb = join(directory, 'cli-no-such-source.db');
    const noDb = await runCli(['run', narrowPath, '--db', target, '--from', `${missingDb}:1`, '--workers', '1', '--quiet']);
    expect(noDb.code).toBe(1);
    expect(noDb.stderr).toContain(`--from ${missingDb}: no such database`);
    expect(noDb.stderr).not.toContain('internal error');
    const noRun = await runCli(['run', narrowPath, '--db', target, '--from', `${sourceDb}:99`, '--workers', '1', '--quiet']);
    expect(noRun.code).toBe(1);
    expect(noRun.stderr).toContain(`--from ${sourceDb}:99: no such optimization run`);
    expect(noRun.stderr).not.toContain('internal error');
    expect(existsSync(target)).toBe(false);
    expect(existsSync(missingDb)).toBe(false);
  });
});
