/**
 * plan → job arrays → merge on a real (single-node, loopback) Slurm cluster, as `.ci/run` starts it
 * with scripts/slurm-local.sh. Without a reachable cluster these tests are skipped with the reason
 * printed; with LOOPSMITH_REQUIRE_SLURM=1 (set by .ci/run) a missing cluster fails instead.
 *
 * The cluster has one node with 2 CPUs; every array task asks for 1 CPU, so two run at a time.
 */
import { spawnSync } from 'node:child_process';
import { existsSync, readFileSync, readdirSync } from 'node:fs';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { runSweep } from '../../src/run/sweep.js';
import { mergePlan } from '../../src/scale/merge.js';
import { runShards } from '../../src/scale/shard.js';
import { loadStudyFile } from '../../src/study/parse.js';
import { assertBuilt, dumpDatabase, makeTemporaryDirectory, removeTemporaryDirectories, runCli, SMALL_STUDY, waitUntil } from '../fixtures/harness.js';

function findCluster(): { conf: string } | { reason: string } {
  const conf = process.env['SLURM_CONF'] ?? join(process.env['LOOPSMITH_SLURM_DIR'] ?? '/tmp/loopsmith-slurm', 'slurm.conf');
  if (!existsSync(conf)) return { reason: `no Slurm configuration (SLURM_CONF is not set and ${conf} does not exist; start one with: scripts/slurm-local.sh start)` };
  const info = spawnSync('sinfo', ['-h', '-o', '%T'], { env: { ...process.env, SLURM_CONF: conf }, encoding: 'utf8', timeout: 15_000 });
  if (info.error) return { reason: `sinfo could not run (${info.error.message})` };
  if (info.status !== 0) return { reason: `sinfo failed with SLURM_CONF=${conf}: ${info.stderr.trim()}` };
  if (!/\b(idle|mixed|allocated)\b/.test(info.stdout)) return { reason: `no node ready (sinfo says "${info.stdout.trim()}")` };
  return { conf };
}

const cluster = findCluster();
const available = 'conf' in cluster;
const required = process.env['LOOPSMITH_REQUIRE_SLURM'] === '1';
if (!available && !required) console.log(`skipping the Slurm tests: ${(cluster as { reason: string }).reason}`);

describe.runIf(!available && required)('Slurm cluster required (LOOPSMITH_REQUIRE_SLURM=1)', () => {
  it('finds a reachable cluster', () => {
    throw new Error(`LOOPSMITH_REQUIRE_SLURM=1 but ${(cluster as { reason: string }).reason}`);
  });
});

const TERMINAL = new Set(['COMPLETED', 'FAILED', 'CANCELLED', 'TIMEOUT', 'NODE_FAIL', 'OUT_OF_MEMORY', 'BOOT_FAIL', 'DEADLINE', 'PREEMPTED']);

function slurm(command: string, args: readonly string[]): string {
  const r = spawnSync(command, args, { encoding: 'utf8', timeout: 30_000 });
  if (r.status !== 0) throw new Error(`${command} ${args.join(' ')} failed: ${r.stderr || r.error?.message}`);
  return r.stdout;
}

/** States of a job (every task of an array), from scontrol. */
function jobStates(id: string): string[] {
  const r = spawnSync('scontrol', ['show', 'job', '-o', id], { encoding: 'utf8', timeout: 30_000 });
  if (r.status !== 0) return [];
  return [...r.stdout.matchAll(/JobState=(\S+)/g)].map((m) => m[1]!);
}

async function waitForJob(id: string, what: string, timeoutMs = 240_000): Promise<string[]> {
  let states: string[] = [];
  await waitUntil(() => (states = jobStates(id)).length > 0 && states.every((s) => TERMINAL.has(s)), what, { timeoutMs, intervalMs: 500 });
  return states;
}

/** Runs DIR/submit.sh (with arguments) and returns the array and merge job ids it printed. */
function submit(dir: string, args: readonly string[] = []): { arrays: string[]; merge: string } {
  const text = slurm('bash', [join(dir, 'submit.sh'), ...args]);
  const arrays = [...text.matchAll(/job array (\d+)/g)].map((m) => m[1]!);
  const merge = /merge: job (\d+)/.exec(text)?.[1];
  if (arrays.length === 0 || !merge) throw new Error(`submit.sh printed no job ids:\n${text}`);
  return { arrays, merge };
}

function logsOf(dir: string): string {
  const folder = join(dir, 'logs');
  return readdirSync(folder).map((name) => `--- ${name}\n${readFileSync(join(folder, name), 'utf8')}`).join('\n');
}

describe.runIf(available)('plan, job arrays and merge on Slurm', () => {
  let work = '';
  let reference = '';
  const started = Date.now();

  beforeAll(async () => {
    assertBuilt();
    process.env['SLURM_CONF'] = (cluster as { conf: string }).conf;
    work = makeTemporaryDirectory('slurm');
    // The store of the same sweep on one machine.
    reference = join(work, 'sweep.db');
    await runSweep(loadStudyFile(SMALL_STUDY), { dbPath: reference, samples: 32, method: 'lhs', workers: 1 });
  }, 120_000);

  afterAll(() => {
    console.log(`Slurm tests: ${((Date.now() - started) / 1000).toFixed(1)} s in all`);
    removeTemporaryDirectories();
  });

  it('plan → array → merge gives the store of loopsmith sweep on one machine', async () => {
    const dir = join(work, 'sweep-plan');
    const db = join(work, 'sweep-merged.db');
    const made = await runCli(['plan', SMALL_STUDY, '--sweep', '32', '--shards', '2', '--out', dir, '--db', db, '--scratch', work]);
    expect(made.code, made.stderr).toBe(0);
    const jobs = submit(dir);
    const states = await waitForJob(jobs.merge, `merge job ${jobs.merge}`);
    expect(states, logsOf(dir)).toEqual(['COMPLETED']);
    expect(jobStates(jobs.arrays[0]!)).toEqual(['COMPLETED', 'COMPLETED']);
    expect(dumpDatabase(db)).toEqual(dumpDatabase(reference));
  }, 300_000);

  it('a killed task and a node marked down: only the missing shards are resubmitted, and the store is the same', async () => {
    const dir = join(work, 'kill-plan');
    const db = join(work, 'kill-merged.db');
    const made = await runCli(['plan', SMALL_STUDY, '--sweep', '32', '--shards', '4', '--out', dir, '--db', db, '--scratch', work]);
    expect(made.code, made.stderr).toBe(0);
    const jobs = submit(dir);
    // Kill the first task seen running (its marker names its process), then take the node down.
    const shards = join(dir, 'shards');
    let marker = '';
    await waitUntil(() => (marker = existsSync(shards) ? (readdirSync(shards).find((n) => n.endsWith('.running')) ?? '') : '') !== '', 'a running shard', { timeoutMs: 120_000, intervalMs: 100 });
    const killed = Number(/shard-(\d+)\.running/.exec(marker)![1]);
    const { pid } = JSON.parse(readFileSync(join(shards, marker), 'utf8')) as { pid: number };
    process.kill(pid, 'SIGKILL');
    const killedTask = `${jobs.arrays[0]}_${killed}`;
    await waitUntil(() => jobStates(killedTask).includes('FAILED'), `task ${killedTask} recorded as failed`, { timeoutMs: 60_000, intervalMs: 100 });
    const beforeDown = jobStates(jobs.arrays[0]!);
    expect(beforeDown.some((s) => s === 'RUNNING' || s === 'PENDING'), `array states ${beforeDown.join(', ')}`).toBe(true); // mid-run
    slurm('scontrol', ['update', 'NodeName=localhost', 'State=DOWN', 'Reason=loopsmith-test']);
    await new Promise((r) => setTimeout(r, 2000));
    // With ReturnToService=2 the node may be back already; RESUME is then refused as an invalid state change.
    spawnSync('scontrol', ['update', 'NodeName=localhost', 'State=RESUME'], { encoding: 'utf8', timeout: 30_000 });
    await waitUntil(() => /\b(idle|mixed|allocated)\b/.test(slurm('sinfo', ['-h', '-n', 'localhost', '-o', '%T'])), 'the node back in service', { timeoutMs: 60_000, intervalMs: 500 });
    await waitForJob(jobs.arrays[0]!, `array ${jobs.arrays[0]} after the node came back`);
    const arrayStates = jobStates(jobs.arrays[0]!);
    console.log(`killed shard ${killed}; array states before the node went down: ${beforeDown.join(', ')}; after: ${arrayStates.join(', ')}`);
    expect(arrayStates.filter((s) => s === 'FAILED').length).toBe(1);
    expect(jobStates(jobs.merge)).toEqual(['PENDING']); // afterok can no longer be met

    const gap = await runCli(['merge', dir]);
    expect(gap.code).toBe(1);
    expect(existsSync(db)).toBe(false);
    const command = /bash '([^']+)' --only ([\d,]+)/.exec(gap.stderr);
    expect(command, gap.stderr).not.toBeNull();
    const missing = command![2]!.split(',').map(Number);
    expect(missing).toContain(killed);
    expect(missing.length).toBeLessThan(4);
    const again = submit(dir, ['--only', command![2]!]);
    expect(jobStates(jobs.merge)).toEqual(['CANCELLED']); // the stale merge job was cancelled by submit.sh
    expect(await waitForJob(again.merge, `merge job ${again.merge}`), logsOf(dir)).toEqual(['COMPLETED']);
    expect(jobStates(again.arrays[0]!).length).toBe(missing.length);
    expect(dumpDatabase(db)).toEqual(dumpDatabase(reference));
    expect(readdirSync(shards).sort()).toEqual(['shard-0000.db', 'shard-0001.db', 'shard-0002.db', 'shard-0003.db']);
  }, 480_000);

  it('islands through Slurm (one array per epoch) and with --all give identical stores', async () => {
    const islandArgs = ['--islands', '3', '--epochs', '2', '--population', '6', '--generations', '4', '--migrants', '2', '--shards', '2'];
    const slurmDir = join(work, 'islands-slurm');
    const slurmDb = join(work, 'islands-slurm.db');
    const made = await runCli(['plan', SMALL_STUDY, ...islandArgs, '--out', slurmDir, '--db', slurmDb, '--scratch', work]);
    expect(made.code, made.stderr).toBe(0);
    const jobs = submit(slurmDir);
    expect(jobs.arrays.length).toBe(2);

    // Meanwhile the same plan on this machine.
    const localDir = join(work, 'islands-local');
    const localDb = join(work, 'islands-local.db');
    expect((await runCli(['plan', SMALL_STUDY, ...islandArgs, '--out', localDir, '--db', localDb])).code).toBe(0);
    await runShards(localDir, { all: true, workers: 1, scratch: work });
    await mergePlan(localDir, { scratch: work });

    expect(await waitForJob(jobs.merge, `merge job ${jobs.merge}`), logsOf(slurmDir)).toEqual(['COMPLETED']);
    expect(dumpDatabase(slurmDb)).toEqual(dumpDatabase(localDb));
  }, 480_000);
});
