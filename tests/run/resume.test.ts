/**
 * End-to-end: an optimization run interrupted by SIGKILL or by Ctrl-C (SIGINT) keeps every committed
 * generation and, started again, resumes and ends exactly where an uninterrupted run with the same
 * seed ends. Spawns the real command line (`node bin/loopsmith.js`, i.e. dist/; run `npm run build` first).
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { join } from 'node:path';
import { runFront } from '../../src/run/front.js';
import {
  assertBuilt,
  dumpDatabase,
  latestGenerationsDone,
  makeTemporaryDirectory,
  membersBelow,
  readDatabase,
  removeTemporaryDirectories,
  runArgs,
  runCli,
  SMALL_STUDY,
  startCli,
  waitUntil,
  type CliResult,
  type DatabaseDump,
  type Row,
} from '../fixtures/harness.js';

/** Enough generations that a run lasts a few seconds, so it can be interrupted in the middle. */
const GENERATIONS = 24;
const RUN_SETTINGS = { generations: GENERATIONS, workers: 1 } as const;
/** Population of small-sorter.yaml. */
const POPULATION = 16;

let referenceDb = '';
let reference: DatabaseDump = {};

interface RunRow {
  id: number;
  kind: string;
  status: string;
  generations_done: number;
  finished_at: string | null;
  message: string | null;
}

function runRows(dbPath: string): RunRow[] {
  return readDatabase(dbPath, (db) => db.prepare<[], RunRow>('SELECT * FROM runs ORDER BY id').all());
}

function statsGenerations(dbPath: string, runId: number): number[] {
  return readDatabase(dbPath, (db) =>
    db.prepare<[number], { generation: number }>('SELECT generation FROM generation_stats WHERE run_id = ? ORDER BY generation').all(runId).map((r) => r.generation),
  );
}

function memberCountsByGeneration(dbPath: string, runId: number): number[] {
  return readDatabase(dbPath, (db) =>
    db
      .prepare<[number], { n: number }>('SELECT COUNT(*) AS n FROM generation_members WHERE run_id = ? GROUP BY generation ORDER BY generation')
      .all(runId)
      .map((r) => r.n),
  );
}

/** The feasible front of the newest run, without the evaluation times. */
function frontWithoutTimes(dbPath: string): unknown {
  // The stored run row carries times and its owner's process and command line: compared without them.
  const { run: _run, ...front } = runFront(dbPath);
  return { ...front, designs: front.designs.map(({ evalSeconds: _seconds, ...design }) => design) };
}

function allEvaluations(dbPath: string): Row[] {
  return readDatabase(dbPath, (db) => db.prepare<[], Row>('SELECT * FROM evaluations ORDER BY id').all());
}

/** Starts `run`, waits until at least `generations` are committed, then sends `signal`. */
async function interruptAfter(dbPath: string, generations: number, signal: NodeJS.Signals): Promise<CliResult> {
  const running = startCli(runArgs(SMALL_STUDY, dbPath, RUN_SETTINGS));
  let endedEarly: string | undefined;
  void running.done.then((result) => {
    endedEarly = `the run ended before it could be interrupted (code ${String(result.code)}): ${result.stderr}`;
  });
  try {
    await waitUntil(() => (latestGenerationsDone(dbPath) ?? 0) >= generations, `${generations} committed generations in ${dbPath}`, {
      timeoutMs: 60_000,
      abort: () => endedEarly,
    });
  } catch (error) {
    running.child.kill('SIGKILL'); // leave no run behind a failed test
    throw error;
  }
  running.child.kill(signal);
  return running.done;
}

beforeAll(async () => {
  assertBuilt();
  referenceDb = join(makeTemporaryDirectory('reference'), 'reference.db');
  const result = await runCli(runArgs(SMALL_STUDY, referenceDb, RUN_SETTINGS));
  expect(result.code, result.stderr).toBe(0);
  reference = dumpDatabase(referenceDb);
});

afterAll(removeTemporaryDirectories);

describe('loopsmith run, interrupted and resumed', () => {
  it('the uninterrupted reference run is complete and has a non-empty feasible front', () => {
    const runs = runRows(referenceDb);
    expect(runs.map((r) => [r.kind, r.status, r.generations_done])).toEqual([['optimize', 'finished', GENERATIONS]]);
    expect(memberCountsByGeneration(referenceDb, runs[0]!.id)).toEqual(new Array<number>(GENERATIONS).fill(POPULATION));
    expect(runFront(referenceDb).designs.length).toBeGreaterThan(0);
    // The built-in engine never ends a worker thread: no evaluation may be stored as a crash.
    expect(reference['evaluations']!.filter((row) => String(row['error']).startsWith('worker thread crashed'))).toEqual([]);
  });

  it('after SIGKILL keeps the committed generations, then resumes the same run to the same end as an uninterrupted run', async () => {
    const dbPath = join(makeTemporaryDirectory('sigkill'), 'run.db');
    const killed = await interruptAfter(dbPath, 2, 'SIGKILL');
    expect(killed.signal).toBe('SIGKILL');

    // Left as the kill found it: still 'running', with k whole generations committed.
    const [run] = runRows(dbPath);
    expect(runRows(dbPath)).toHaveLength(1);
    expect(run!.kind).toBe('optimize');
    expect(run!.status).toBe('running');
    const committed = run!.generations_done;
    expect(committed).toBeGreaterThanOrEqual(2);
    expect(committed).toBeLessThan(GENERATIONS);
    expect(statsGenerations(dbPath, run!.id)).toEqual(Array.from({ length: committed }, (_, g) => g));
    expect(memberCountsByGeneration(dbPath, run!.id)).toEqual(new Array<number>(committed).fill(POPULATION));
    const committedMembers = membersBelow(dbPath, run!.id, committed);
    const committedEvaluations = allEvaluations(dbPath);
    // What was committed is what the uninterrupted run has for the same generations.
    expect(committedMembers).toEqual(membersBelow(referenceDb, 1, committed));

    const resumed = await runCli(runArgs(SMALL_STUDY, dbPath, RUN_SETTINGS));
    expect(resumed.code, resumed.stderr).toBe(0);

    // The same run was resumed (no second run row) and finished.
    const runsAfter = runRows(dbPath);
    expect(runsAfter.map((r) => [r.id, r.kind, r.status, r.generations_done])).toEqual([[run!.id, 'optimize', 'finished', GENERATIONS]]);
    // Nothing committed before the kill changed: members, and every column of the stored evaluations.
    expect(membersBelow(dbPath, run!.id, committed)).toEqual(committedMembers);
    expect(allEvaluations(dbPath).slice(0, committedEvaluations.length)).toEqual(committedEvaluations);
    // The whole database equals the uninterrupted run's, timing columns aside: same evaluations with the
    // same ids, same members of every generation (the final one included), same stats and optimizer state.
    expect(dumpDatabase(dbPath)).toEqual(reference);
    // Hence the same front; compared directly as well, ids, design vectors and metrics exactly.
    expect(runFront(dbPath).designs.length).toBeGreaterThan(0);
    expect(frontWithoutTimes(dbPath)).toEqual(frontWithoutTimes(referenceDb));
  });

  it('on Ctrl-C stops after the current generation with exit code 130, and a second start resumes and finishes', async () => {
    const dbPath = join(makeTemporaryDirectory('sigint'), 'run.db');
    const stopped = await interruptAfter(dbPath, 2, 'SIGINT');
    expect(stopped.signal, stopped.stderr).toBeNull();
    expect(stopped.code, stopped.stderr).toBe(130);

    const runs = runRows(dbPath);
    expect(runs).toHaveLength(1);
    const run = runs[0]!;
    expect(run.status).toBe('stopped');
    expect(run.finished_at).not.toBeNull();
    const committed = run.generations_done;
    expect(committed).toBeGreaterThanOrEqual(2);
    expect(committed).toBeLessThan(GENERATIONS);
    expect(run.message).toContain(`generation ${committed - 1}`);
    // Every committed generation is whole and equals the uninterrupted run's.
    expect(statsGenerations(dbPath, run.id)).toEqual(Array.from({ length: committed }, (_, g) => g));
    expect(memberCountsByGeneration(dbPath, run.id)).toEqual(new Array<number>(committed).fill(POPULATION));
    expect(membersBelow(dbPath, run.id, committed)).toEqual(membersBelow(referenceDb, 1, committed));
    const stoppedDump = dumpDatabase(dbPath);
    // The hypervolume of an unfinished run is provisional (each generation's is recomputed in one
    // frame when the run finishes), so it is left out here; the full dumps are compared after resuming.
    const withoutHypervolume = (rows: readonly Record<string, unknown>[]): Record<string, unknown>[] =>
      rows.map(({ hypervolume: _hypervolume, ...rest }) => rest);
    expect(withoutHypervolume(stoppedDump['generation_stats']!)).toEqual(withoutHypervolume(reference['generation_stats']!.slice(0, committed)));

    // Not quiet this time, to see the command say that it resumed.
    const resumed = await runCli(runArgs(SMALL_STUDY, dbPath, { ...RUN_SETTINGS, quiet: false }));
    expect(resumed.code, resumed.stderr).toBe(0);
    expect(resumed.stdout).toContain(`finished run ${run.id} (resumed at generation ${committed})`);
    expect(runRows(dbPath).map((r) => [r.id, r.status, r.generations_done])).toEqual([[run.id, 'finished', GENERATIONS]]);
    // runs.message is left out: the resumed run keeps the "stopped by the user" note (see the report).
    const omitMessage = { runs: ['message'] };
    expect(dumpDatabase(dbPath, omitMessage)).toEqual(dumpDatabase(referenceDb, omitMessage));
    expect(frontWithoutTimes(dbPath)).toEqual(frontWithoutTimes(referenceDb));
  });
});
