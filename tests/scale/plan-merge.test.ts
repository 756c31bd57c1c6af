/**
 * plan → shard → merge on one machine (no workload manager needed; tests/scale/slurm.test.ts runs
 * the same through Slurm): the merged store equals `loopsmith sweep`, gaps are named with the command
 * that resubmits them, leftovers of killed tasks are removed, foreign or outdated shards are refused,
 * and island runs do not depend on how islands are cut into shards.
 */
import { copyFileSync, existsSync, readFileSync, readdirSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { rescoreRun } from '../../src/run/rescore.js';
import { mergePlan } from '../../src/scale/merge.js';
import { makePlan, planStudy, readPlan, ScaleError } from '../../src/scale/plan.js';
import { runShards } from '../../src/scale/shard.js';
import { loadStudyFile } from '../../src/study/parse.js';
import { assertBuilt, dumpDatabase, makeTemporaryDirectory, readDatabase, removeTemporaryDirectories, runCli, SMALL_STUDY } from '../fixtures/harness.js';

beforeAll(assertBuilt);
afterAll(removeTemporaryDirectories);

const workersOf = (db: string): number[] => readDatabase(db, (d) => d.prepare<[], { workers: number }>('SELECT workers FROM runs ORDER BY id').all().map((r) => r.workers));

describe('plan, shard and merge on one machine', () => {
  it('a sweep merged from shards is the store of loopsmith sweep; gaps, leftovers and repeats are handled', async () => {
    const dir = makeTemporaryDirectory('scale-sweep');
    const reference = join(dir, 'sweep.db');
    const merged = join(dir, 'merged.db');
    const plan = join(dir, 'plan');
    const sweep = await runCli(['sweep', SMALL_STUDY, '--samples', '30', '--db', reference, '--workers', '1', '--quiet']);
    expect(sweep.code, sweep.stderr).toBe(0);
    const made = await runCli(['plan', SMALL_STUDY, '--sweep', '30', '--shards', '3', '--out', plan, '--db', merged]);
    expect(made.code, made.stderr).toBe(0);
    expect(made.stdout).toContain(`bash ${join(plan, 'submit.sh')}`);
    for (const index of [0, 2]) await runShards(plan, { index, scratch: dir });

    // Leftovers of a killed task: never read, removed once the merge goes ahead.
    const shards = join(plan, 'shards');
    for (const name of ['shard-0001.db.part', 'shard-0001.db-wal', 'shard-0000.db-shm', 'shard-0001.running']) writeFileSync(join(shards, name), 'leftover');
    const gap = await runCli(['merge', plan]);
    expect(gap.code).toBe(1);
    expect(gap.stderr).toContain('shards 1 missing');
    expect(gap.stderr).toContain(`bash '${join(plan, 'submit.sh')}' --only 1`);
    expect(gap.stderr).toContain(`loopsmith shard '${plan}' --index 1`);
    expect(existsSync(merged)).toBe(false);

    const again = await runCli(['shard', plan, '--index', '0']);
    expect(again.stdout).toContain('shard 0: already complete');
    await runShards(plan, { index: 1, scratch: dir });
    const done = await runCli(['merge', plan]);
    expect(done.code, done.stderr).toBe(0);
    // shard 1 itself replaced its own .part and .running; the stale -wal and -shm stay until the merge.
    expect(done.stdout).toContain('removed 2 leftover file(s)');
    expect(readdirSync(shards).sort()).toEqual(['shard-0000.db', 'shard-0001.db', 'shard-0002.db']);
    expect(dumpDatabase(merged)).toEqual(dumpDatabase(reference));
    expect(workersOf(merged)).toEqual(workersOf(reference));
    // A repeated (or requeued) merge job writes nothing twice.
    expect((await mergePlan(plan, { scratch: dir })).alreadyMerged).toBe(true);
    expect(dumpDatabase(merged)).toEqual(dumpDatabase(reference));
    expect(readdirSync(dir).filter((n) => n.startsWith('loopsmith-'))).toEqual([]); // scratch cleaned up
  }, 180_000);

  it('refuses shards of another plan, edited plans and other program versions', async () => {
    const dir = makeTemporaryDirectory('scale-refuse');
    const a = join(dir, 'a');
    const b = join(dir, 'b');
    const loaded = loadStudyFile(SMALL_STUDY);
    makePlan(loaded, { outDir: a, shards: 2, db: join(dir, 'a.db'), sweep: { samples: 4, method: 'lhs' } });
    makePlan(loaded, { outDir: b, shards: 2, db: join(dir, 'b.db'), seed: 99, sweep: { samples: 4, method: 'lhs' } });
    await runShards(a, { all: true });
    await runShards(b, { index: 0 });
    copyFileSync(join(a, 'shards', 'shard-0001.db'), join(b, 'shards', 'shard-0001.db'));
    await expect(mergePlan(b)).rejects.toThrow(/shard-0001\.db: was made with plan = ".*", the plan needs/);

    expect(() => makePlan(loaded, { outDir: a, shards: 2, db: join(dir, 'a.db'), sweep: { samples: 8, method: 'lhs' } })).toThrow(/already holds another plan/);
    const wrongIndex = await runCli(['shard', a, '--index', '5']);
    expect([wrongIndex.code, wrongIndex.stderr]).toEqual([1, 'loopsmith: --index 5: the plan has shards 0 to 1\n']);
    const saved = process.env['SLURM_ARRAY_TASK_ID'];
    delete process.env['SLURM_ARRAY_TASK_ID'];
    await expect(runShards(a)).rejects.toThrow(/SLURM_ARRAY_TASK_ID/);
    if (saved !== undefined) process.env['SLURM_ARRAY_TASK_ID'] = saved;

    const planFile = join(a, 'plan.json');
    const edited = JSON.parse(readFileSync(planFile, 'utf8')) as Record<string, unknown>;
    writeFileSync(planFile, JSON.stringify({ ...edited, seed: 8 }));
    expect(() => readPlan(a)).toThrow(/edited after it was made/);
    // A plan made by another loopsmith or Node is refused by every shard and by the merge.
    const plan = { ...edited, seed: 7 } as unknown as Parameters<typeof planStudy>[0];
    expect(() => planStudy({ ...plan, loopsmithVersion: '0.0.1' })).toThrow(ScaleError);
    expect(() => planStudy({ ...plan, loopsmithVersion: '0.0.1' })).toThrow(/made with loopsmith 0\.0\.1/);
    expect(() => planStudy({ ...plan, nodeVersion: 'v18.0.0' })).toThrow(/Node v18\.0\.0/);
  }, 180_000);

  it('an island run gives the same store however its islands are cut into shards', async () => {
    const dir = makeTemporaryDirectory('scale-islands');
    const dumps = [];
    for (const shards of ['1', '3']) {
      const plan = join(dir, `plan-${shards}`);
      const db = join(dir, `islands-${shards}.db`);
      const made = await runCli(['plan', SMALL_STUDY, '--islands', '3', '--epochs', '2', '--population', '6', '--generations', '4', '--migrants', '2', '--shards', shards, '--out', plan, '--db', db]);
      expect(made.code, made.stderr).toBe(0);
      await runShards(plan, { all: true, workers: 1 });
      await mergePlan(plan);
      dumps.push(dumpDatabase(db));
    }
    expect(dumps[1]).toEqual(dumps[0]);
    const d = dumps[0]!;
    expect(d['runs']!.map((r) => r['kind'])).toEqual(['optimize']);
    expect(d['runs']![0]!['generations_done']).toBe(4);
    // Every generation holds the three islands' populations side by side.
    for (let g = 0; g < 4; g++) expect(d['generation_members']!.filter((m) => m['generation'] === g).length).toBe(18);
    const front = await runCli(['front', join(dir, 'islands-1.db'), '--format', 'json']);
    expect(front.code, front.stderr).toBe(0);
  }, 300_000);

  it('a rescore merged from shards ranks the designs as loopsmith rescore does', async () => {
    const dir = makeTemporaryDirectory('scale-rescore');
    const source = join(dir, 'source.db');
    const single = join(dir, 'single.db');
    await runShards((await makeSweepPlan(dir, source)).dir, { all: true, workers: 1 });
    await mergePlan(join(dir, 'sweep-plan'));
    copyFileSync(source, single);
    const loaded = loadStudyFile(SMALL_STUDY);
    const { dir: plan } = makePlan(loaded, { outDir: join(dir, 'rescore-plan'), shards: 2, db: source, rescore: { database: source } });
    await runShards(plan, { all: true, workers: 1 });
    const merged = await mergePlan(plan);
    await rescoreRun(loaded, { dbPath: single, runId: 1, workers: 1 });
    const ranks = (db: string): unknown[] => readDatabase(db, (d) => d.prepare('SELECT e.eval_key, g.rank, g.position FROM generation_members g JOIN evaluations e ON e.id = g.evaluation_id WHERE g.run_id = 2 ORDER BY g.position').all());
    expect(merged.runId).toBe(2);
    expect(ranks(source)).toEqual(ranks(single));
    expect(readDatabase(source, (d) => d.prepare('SELECT parent_run_id FROM runs WHERE id = 2').get())).toEqual({ parent_run_id: 1 });
  }, 180_000);
});

function makeSweepPlan(dir: string, db: string): ReturnType<typeof makePlan> {
  return makePlan(loadStudyFile(SMALL_STUDY), { outDir: join(dir, 'sweep-plan'), shards: 2, db, sweep: { samples: 12, method: 'lhs' } });
}
