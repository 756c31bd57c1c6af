/**
 * The command line as separate processes meet it: a reader that closes the pipe early, two runs on
 * one store, a run killed with SIGKILL and resumed, a store in a folder its reader may not write.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { spawnSync } from 'node:child_process';
import { chmodSync, copyFileSync, existsSync, mkdirSync, readdirSync } from 'node:fs';
import { join } from 'node:path';
import {
  assertBuilt,
  CLI_ENTRY,
  latestGenerationsDone,
  makeTemporaryDirectory,
  readDatabase,
  removeTemporaryDirectories,
  REPO_ROOT,
  runArgs,
  runCli,
  SMALL_STUDY,
  startCli,
  waitUntil,
} from '../fixtures/harness.js';

beforeAll(assertBuilt);
afterAll(removeTemporaryDirectories);

let directory = '';
let dbPath = '';

beforeAll(async () => {
  directory = makeTemporaryDirectory('processes');
  dbPath = join(directory, 'small.db');
  const result = await runCli(runArgs(SMALL_STUDY, dbPath, { generations: 3, workers: 1, population: 8 }));
  expect(result.code, result.stderr).toBe(0);
});

describe('stdout closed early', () => {
  it.each([
    ['query', '--format', 'csv'],
    ['front', '--format', 'json'],
    ['runs'],
  ])('%s ends quietly when the reader has gone', async (command, ...options) => {
    const running = startCli([command, dbPath, ...options]);
    running.child.stdout!.destroy(); // the reader closes its end before anything is written
    const result = await running.done;
    expect(result.stderr).toBe('');
    expect(result.code).toBe(0);
  });

  it('query ... | head -1 in a shell gives the header and no error', () => {
    const shell = spawnSync('bash', ['-c', `set -o pipefail; node ${CLI_ENTRY} query ${dbPath} --format csv | head -1`], { cwd: REPO_ROOT, encoding: 'utf8' });
    expect(shell.stderr).toBe('');
    expect(shell.status).toBe(0);
    expect(shell.stdout).toMatch(/^id,eval_key,/);
  });
});

describe('two writers on one store', () => {
  it('the second run of the same command is refused, naming the owner; the first finishes', async () => {
    const db = join(directory, 'race.db');
    const args = runArgs(SMALL_STUDY, db, { generations: 6, workers: 1, population: 8 });
    const first = startCli(args);
    let firstEnded = false;
    void first.done.then(() => (firstEnded = true));
    await waitUntil(() => (latestGenerationsDone(db) ?? 0) >= 1, 'the first run to store a generation', { timeoutMs: 90_000, abort: () => (firstEnded ? 'the first run ended' : undefined) });
    // Hold the first run (alive, owning run 1) while the second starts, so the two surely overlap.
    first.child.kill('SIGSTOP');
    let second;
    try {
      second = await runCli(args);
    } finally {
      first.child.kill('SIGCONT');
    }
    expect(second.code, second.stderr).toBe(1);
    expect(second.stderr).toMatch(new RegExp(`run 1 is being written by process ${first.child.pid} on this host \\(.+\\) since \\d{4}-\\d\\d-\\d\\dT`));
    expect(second.stderr).not.toMatch(/\n\s+at |internal error|generation\(s\) stored/);
    const done = await first.done;
    expect(done.code, done.stderr).toBe(0);
    const runs = readDatabase(db, (d) => d.prepare('SELECT id, status, generations_done, owner_pid FROM runs').all());
    expect(runs).toEqual([{ id: 1, status: 'finished', generations_done: 6, owner_pid: null }]);
  });

  it('runs with different seeds share the store and both finish', async () => {
    const db = join(directory, 'shared.db');
    const base = runArgs(SMALL_STUDY, db, { generations: 3, workers: 1, population: 8 });
    const [a, b] = await Promise.all([runCli([...base, '--seed', '1']), runCli([...base, '--seed', '2'])]);
    expect(a.code, a.stderr).toBe(0);
    expect(b.code, b.stderr).toBe(0);
    const runs = readDatabase(db, (d) => d.prepare('SELECT seed, status, generations_done FROM runs ORDER BY seed').all());
    expect(runs).toEqual([
      { seed: 1, status: 'finished', generations_done: 3 },
      { seed: 2, status: 'finished', generations_done: 3 },
    ]);
  });
});

describe('a killed run', () => {
  it('shows as interrupted with the command that resumes it, and that command reaches the identical front', async () => {
    const killedDb = join(directory, 'killed.db');
    const referenceDb = join(directory, 'reference.db');
    const options = { generations: 7, workers: 1, population: 10 };
    const reference = await runCli(runArgs(SMALL_STUDY, referenceDb, options));
    expect(reference.code, reference.stderr).toBe(0);

    const args = runArgs(SMALL_STUDY, killedDb, options);
    const victim = startCli(args);
    await waitUntil(() => (latestGenerationsDone(killedDb) ?? 0) >= 2, 'two stored generations', { timeoutMs: 90_000 });
    victim.child.kill('SIGKILL');
    expect((await victim.done).signal).toBe('SIGKILL');

    const runs = await runCli(['runs', killedDb]);
    expect(runs.code, runs.stderr).toBe(0);
    expect(runs.stdout).toMatch(/^\s*1\s+small-sorter\s+optimize\s+interrupted\s/m);
    const resume = /resume it with: (.+)$/m.exec(runs.stdout)?.[1];
    expect(resume, runs.stdout).toBeDefined();
    expect(resume).toContain(`run ${SMALL_STUDY} --db ${killedDb} --generations 7 --workers 1 --population 10 --quiet`);
    const json = JSON.parse((await runCli(['runs', killedDb, '--json'])).stdout);
    expect(json[0].state).toBe('interrupted');

    // The printed command, as a user would paste it.
    const resumed = spawnSync('bash', ['-c', resume!], { encoding: 'utf8' });
    expect(resumed.status, resumed.stderr).toBe(0);
    const front = (db: string): unknown => JSON.parse((spawnSync(process.execPath, [CLI_ENTRY, 'front', db, '--format', 'json'], { encoding: 'utf8' }).stdout)).designs;
    expect(front(killedDb)).toEqual(front(referenceDb));
    const after = await runCli(['runs', killedDb]);
    expect(after.stdout).toMatch(/^\s*1\s+small-sorter\s+optimize\s+finished\s/m);
  });

  it('front without --run shows the latest finished run, not one that has just started', async () => {
    const db = join(directory, 'choice.db');
    copyFileSync(dbPath, db);
    const { default: Database } = await import('better-sqlite3');
    const raw = new Database(db);
    raw.prepare("INSERT INTO runs (study_id, kind, seed, settings_json, status, workers, started_at) VALUES (1, 'optimize', 99, '{}', 'running', 1, '2026-01-01T00:00:00.000Z')").run();
    raw.close();
    const result = await runCli(['front', db]);
    expect(result.code, result.stderr).toBe(0);
    expect(result.stdout).toMatch(/^run 1 \(optimize, finished, 3 generations; the latest finished run \(1 newer run\(s\) not finished\)/);
    expect(result.stdout).not.toMatch(/^0 designs/m);
  });
});

describe('a store in a read-only folder', () => {
  it('is read by an unprivileged user with front, query, runs and report', { timeout: 900_000 }, async (context) => {
    const probe = spawnSync('runuser', ['-u', 'nobody', '--', process.execPath, '--version'], { encoding: 'utf8' });
    if (process.getuid?.() !== 0 || probe.status !== 0) {
      console.log(`skipped: needs root and runuser to act as user nobody (${probe.error?.message ?? probe.stderr ?? 'not root'})`);
      context.skip();
    }
    // The checkout itself must be readable by nobody (a clone inside a private 0700 temporary folder is not).
    const reach = spawnSync('runuser', ['-u', 'nobody', '--', process.execPath, CLI_ENTRY, '--version'], { cwd: '/', encoding: 'utf8' });
    if (reach.status !== 0) {
      console.log(`skipped: user nobody cannot run ${CLI_ENTRY} (a folder above the checkout is private): ${reach.stderr.split('\n').find((l) => l.startsWith('Error')) ?? reach.stderr.trim()}`);
      context.skip();
    }
    const folder = join(directory, 'readonly');
    mkdirSync(folder);
    const db = join(folder, 'small.db');
    copyFileSync(dbPath, db);
    const out = join(directory, 'report-out');
    mkdirSync(out);
    chmodSync(directory, 0o755);
    chmodSync(out, 0o777);
    chmodSync(db, 0o444);
    chmodSync(folder, 0o555);
    const asNobody = (args: string[]) => spawnSync('runuser', ['-u', 'nobody', '--', process.execPath, CLI_ENTRY, ...args], { cwd: '/', encoding: 'utf8' });
    for (const args of [['front', db], ['query', db, '--limit', '2'], ['runs', db], ['front', db, '--format', 'csv'], ['report', db, '--out', join(out, 'r')]]) {
      const result = asNobody(args);
      expect(result.status, `${args.join(' ')}: ${result.stderr}`).toBe(0);
      expect(result.stderr, args.join(' ')).not.toMatch(/readonly database|internal error/);
    }
    expect(readdirSync(folder)).toEqual(['small.db']);
    const write = asNobody(['run', SMALL_STUDY, '--db', db, '--generations', '4', '--quiet']);
    expect(write.status).toBe(1);
    expect(write.stderr).toMatch(/cannot write the store here: the file or its folder is read-only/);
    chmodSync(folder, 0o755);
    expect(existsSync(join(out, 'r', 'index.html'))).toBe(true);
  });
});
