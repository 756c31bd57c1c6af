/**
 * Rescore: the designs of an earlier run under a changed study, written as a new run linked to the
 * old one. From the project's issue: "A rescore with a weaker motor makes designs infeasible exactly
 * where the new limits bind, and with an unchanged study it reproduces the old front exactly".
 *
 * The worker pool and the command line run the compiled dist/ (run `npm run build` first). The study
 * and catalogue are INVENTED TEST DATA (tests/fixtures/catalogue/).
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { join } from 'node:path';
import { designFromValues } from '../../src/mechanics/designSpace.js';
import { Evaluator } from '../../src/mechanics/evaluate.js';
import { METRICS } from '../../src/mechanics/metrics.js';
import { runFront } from '../../src/run/front.js';
import { runOptimization } from '../../src/run/optimize.js';
import { RescoreError, rescoreRun, type RescoreResult } from '../../src/run/rescore.js';
import type { StoredEvaluation } from '../../src/store/store.js';
import { loadStudyFile, type LoadedStudy } from '../../src/study/parse.js';
import type { DriveSpec } from '../../src/study/types.js';
import {
  assertBuilt,
  copyDatabase,
  designIdentity,
  executeOnDatabase,
  makeTemporaryDirectory,
  queryRows,
  removeTemporaryDirectories,
  replaceOnce,
  runCli,
  runMembers,
  withStore,
  writeDriveStudyVariant,
} from '../fixtures/catalogue/helpers.js';

/** Rated torque of the invented option "TX-300-G10, quiet": 0.95 N·m, 0.45 N·m in the weaker catalogue. */
const WEAKER_RATED_TORQUE = (catalogue: string): string => replaceOnce(catalogue, '"0.95 N*m"', '"0.45 N*m"');

let directory = '';
let dbPath = '';
/** Copy of the database right after the first run, before any rescore; tampered with in one test. */
let tamperedDbPath = '';
let base: LoadedStudy;
let weaker: LoadedStudy;
let narrower: LoadedStudy;
let shared: LoadedStudy;
let saferPath = '';
let sharedPath = '';
let baseRunId = 0;
/** Every distinct design that was a member of the first run. */
let oldMembers: StoredEvaluation[] = [];

beforeAll(async () => {
  assertBuilt();
  directory = makeTemporaryDirectory('rescore');
  base = loadStudyFile(writeDriveStudyVariant(join(directory, 'base')));
  weaker = loadStudyFile(writeDriveStudyVariant(join(directory, 'weaker'), { catalogue: WEAKER_RATED_TORQUE }));
  narrower = loadStudyFile(
    writeDriveStudyVariant(join(directory, 'narrower'), { study: (t) => replaceOnce(t, 'min_transmission_angle: 30 deg', 'min_transmission_angle: 35 deg') }),
  );
  sharedPath = writeDriveStudyVariant(join(directory, 'shared'), {
    study: (t) =>
      replaceOnce(replaceOnce(t, 'choose: per-actuator', 'choose: shared'), '  drive_1: TX-300-G16\n  drive_2: TX-150-G8\n', '  drive: TX-300-G16\n'),
  });
  shared = loadStudyFile(sharedPath);
  saferPath = writeDriveStudyVariant(join(directory, 'safer'), { study: (t) => replaceOnce(t, 'torque_safety_factor: 1.5', 'torque_safety_factor: 2') });
  dbPath = join(directory, 'runs.db');
  const summary = await runOptimization(base, { dbPath, workers: 1, population: 16, generations: 4 });
  expect(summary.status).toBe('finished');
  baseRunId = summary.runId;
  oldMembers = runMembers(dbPath, baseRunId);
  tamperedDbPath = join(directory, 'tampered.db');
  copyDatabase(dbPath, tamperedDbPath);
});

afterAll(removeTemporaryDirectories);

/** Stored metric value as the evaluator gives it (NULL in the store is NaN). */
const asNumber = (value: number | null | undefined): number => (value === null || value === undefined ? Number.NaN : value);

/** The rescore run's designs by design identity. */
function rescoredByDesign(result: RescoreResult): Map<string, StoredEvaluation> {
  return new Map(runMembers(dbPath, result.runId).map((e) => [designIdentity(e.variables), e]));
}

/** Static-torque bound of a drive (README "Drive limits": η N τ_rated / torque_safety_factor), N·m. */
function torqueBound(study: LoadedStudy, label: string): number {
  const drive: DriveSpec | undefined = study.study.driveCatalogue!.options.find((o) => o.label === label);
  if (!drive) throw new Error(`no option ${label}`);
  return (drive.efficiency * drive.gearRatio * drive.ratedTorque) / study.study.torqueSafetyFactor;
}

/** Every stored metric and constraint margin of `stored` is exactly what a fresh full evaluation under `study` gives. */
function expectSameAsFullEvaluation(study: LoadedStudy, stored: StoredEvaluation): void {
  const evaluator = new Evaluator(study.study);
  const evaluation = evaluator.evaluate(designFromValues(evaluator.variables, stored.variables, true));
  const label = `design ${designIdentity(stored.variables)}`;
  METRICS.forEach((m, i) => {
    expect(Object.is(asNumber(stored.metrics[m.name]), evaluation.metrics[i]!), `${label}: ${m.name} ${stored.metrics[m.name]} vs ${evaluation.metrics[i]}`).toBe(true);
  });
  evaluator.constraints.forEach((c, k) => {
    expect(Object.is(asNumber(stored.constraints[c.name]), evaluation.margins[k]!), `${label}: margin ${c.name}`).toBe(true);
  });
  expect(stored.feasible, label).toBe(evaluation.feasible);
}

describe('rescore with the unchanged study', () => {
  it('writes a cached rescore run linked to the old one that reproduces the old front exactly', async () => {
    const evaluationsBefore = queryRows(dbPath, 'SELECT COUNT(*) AS n FROM evaluations')[0]!['n'];
    const result = await rescoreRun(base, { dbPath, runId: baseRunId, workers: 1 });
    expect(result.mode).toBe('cached');
    expect(result.evaluated).toBe(0);
    expect(result.parentRunId).toBe(baseRunId);
    expect(result.designs).toBe(oldMembers.length);
    expect(queryRows(dbPath, 'SELECT COUNT(*) AS n FROM evaluations')[0]!['n']).toBe(evaluationsBefore);

    const run = withStore(dbPath, (store) => store.getRun(result.runId))!;
    expect(run.kind).toBe('rescore');
    expect(run.parentRunId).toBe(baseRunId);
    expect(run.status).toBe('finished');
    expect(queryRows(dbPath, 'SELECT parent_run_id FROM runs WHERE id = ?', result.runId)[0]!['parent_run_id']).toBe(baseRunId);

    // The same stored evaluations are the members of the new run.
    expect(runMembers(dbPath, result.runId).map((e) => e.id)).toStrictEqual(oldMembers.map((e) => e.id));

    const oldFront = runFront(dbPath, baseRunId).designs;
    expect(oldFront.length).toBeGreaterThan(0);
    const brief = (e: StoredEvaluation) => ({ variables: e.variables, metrics: e.metrics });
    expect(result.front.map(brief)).toStrictEqual(oldFront.map(brief));
    expect(runFront(dbPath, result.runId).designs.map(brief)).toStrictEqual(oldFront.map(brief));
    expect(result.left).toStrictEqual([]);
    expect(result.joined).toStrictEqual([]);
    expect(result.constraints.every((c) => c.violatedByOldFront === 0)).toBe(true);
  });
});

describe('rescore with a weaker rated torque (nothing else changed)', () => {
  let result: RescoreResult;
  let rescored: Map<string, StoredEvaluation>;

  beforeAll(async () => {
    expect(weaker.settingsHash).not.toBe(base.settingsHash);
    result = await rescoreRun(weaker, { dbPath, runId: baseRunId, workers: 1 });
    rescored = rescoredByDesign(result);
  });

  it('recomputes only the per-pose metrics (workspace reused), every design once', () => {
    expect(result.mode).toBe('per-pose');
    expect(result.parentRunId).toBe(baseRunId);
    expect(result.designs).toBe(oldMembers.length);
    expect(result.evaluated).toBe(oldMembers.length);
    expect(rescored.size).toBe(oldMembers.length);
  });

  it('makes a design infeasible exactly where the new torque limit binds', () => {
    let becameInfeasible = 0;
    let stayedFeasible = 0;
    let infeasibleForOtherReasons = 0;
    for (const old of oldMembers) {
      const now = rescored.get(designIdentity(old.variables));
      expect(now, `design ${old.id} rescored`).toBeDefined();
      const label = `design ${old.id} (${String(old.variables['drive_1'])} / ${String(old.variables['drive_2'])})`;
      const feasibleApartFromTorque =
        old.error === null && Object.entries(old.constraints).every(([name, margin]) => name.startsWith('drive_torque_') || (margin !== null && margin >= 0));
      const torque1 = asNumber(old.metrics['peak_gravity_torque_1']);
      const torque2 = asNumber(old.metrics['peak_gravity_torque_2']);
      const withinNewLimits =
        torque1 <= torqueBound(weaker, String(old.variables['drive_1'])) && torque2 <= torqueBound(weaker, String(old.variables['drive_2']));
      expect(now!.feasible, label).toBe(feasibleApartFromTorque && withinNewLimits);
      // Constraints other than the torque limits keep their margins exactly.
      for (const [name, margin] of Object.entries(old.constraints)) {
        if (!name.startsWith('drive_torque_')) expect(now!.constraints[name], `${label}: ${name}`).toBe(margin);
      }
      if (old.feasible && !now!.feasible) becameInfeasible++;
      if (old.feasible && now!.feasible) stayedFeasible++;
      if (!feasibleApartFromTorque) infeasibleForOtherReasons++;
    }
    // The weaker limit binds for some designs and not for others (otherwise this test would prove little).
    expect(becameInfeasible).toBeGreaterThan(0);
    expect(stayedFeasible).toBeGreaterThan(0);
    expect(infeasibleForOtherReasons).toBeGreaterThan(0);
  });

  it('a design whose drives are not the weakened option keeps its torque margins exactly', () => {
    const untouched = oldMembers.filter((e) => e.variables['drive_1'] !== 'TX-300-G10, quiet' && e.variables['drive_2'] !== 'TX-300-G10, quiet');
    expect(untouched.length).toBeGreaterThan(0);
    for (const old of untouched) {
      const now = rescored.get(designIdentity(old.variables))!;
      expect(now.constraints, `design ${old.id}`).toStrictEqual(old.constraints);
      expect(now.feasible).toBe(old.feasible);
    }
  });

  it('leaves every metric bit-identical (no metric depends on the rated torque)', () => {
    for (const old of oldMembers) {
      expect(rescored.get(designIdentity(old.variables))!.metrics, `design ${old.id}`).toStrictEqual(old.metrics);
    }
  });

  it('gives exactly the numbers of a full evaluation of the new study', () => {
    for (const now of rescored.values()) if (now.error === null) expectSameAsFullEvaluation(weaker, now);
  });

  it('reports the old-front designs that now violate a torque limit as having left the front', () => {
    const oldFront = runFront(dbPath, baseRunId).designs;
    const nowInfeasible = oldFront.filter((e) => !rescored.get(designIdentity(e.variables))!.feasible);
    expect(nowInfeasible.length).toBeGreaterThan(0);
    const left = new Set(result.left.map((e) => designIdentity(e.variables)));
    for (const e of nowInfeasible) expect(left.has(designIdentity(e.variables)), `design ${e.id} left`).toBe(true);
    for (const name of ['drive_torque_1', 'drive_torque_2']) {
      const counted = oldFront.filter((e) => (rescored.get(designIdentity(e.variables))!.constraints[name] ?? 0) < 0).length;
      expect(result.constraints.find((c) => c.name === name)!.violatedByOldFront, name).toBe(counted);
    }
    expect(result.front.every((e) => e.feasible)).toBe(true);
  });
});

describe('rescore where the geometry-shaping settings changed', () => {
  it('evaluates fully (min_transmission_angle changed) and gives exactly the numbers of a full evaluation', async () => {
    const result = await rescoreRun(narrower, { dbPath, runId: baseRunId, workers: 1 });
    expect(result.mode).toBe('full');
    expect(result.evaluated).toBe(oldMembers.length);
    const rescored = rescoredByDesign(result);
    let workspaceChanged = 0;
    for (const old of oldMembers) {
      const now = rescored.get(designIdentity(old.variables))!;
      if (now.error === null) expectSameAsFullEvaluation(narrower, now);
      if (now.metrics['workspace_area'] !== old.metrics['workspace_area']) workspaceChanged++;
    }
    expect(workspaceChanged).toBeGreaterThan(0);
  });

  it('per-pose takes the workspace metrics from the stored evaluation; full recomputes them (shown on a tampered copy)', async () => {
    const victim = oldMembers.find((e) => e.error === null && typeof e.metrics['workspace_area'] === 'number' && e.metrics['workspace_area'] > 0)!;
    expect(victim).toBeDefined();
    const planted = 0.123456789; // m², not a value the evaluator gives this design
    executeOnDatabase(tamperedDbPath, 'UPDATE evaluations SET m_workspace_area = ? WHERE id = ?', planted, victim.id);

    const perPose = await rescoreRun(weaker, { dbPath: tamperedDbPath, runId: baseRunId, workers: 1 });
    expect(perPose.mode).toBe('per-pose');
    const full = await rescoreRun(narrower, { dbPath: tamperedDbPath, runId: baseRunId, workers: 1 });
    expect(full.mode).toBe('full');
    const find = (runId: number): StoredEvaluation =>
      runMembers(tamperedDbPath, runId).find((e) => designIdentity(e.variables) === designIdentity(victim.variables))!;
    expect(find(perPose.runId).metrics['workspace_area']).toBe(planted);
    expect(find(full.runId).metrics['workspace_area']).not.toBe(planted);
    expect(find(full.runId).metrics['workspace_area']).toBeGreaterThan(0);
  });
});

describe('rescore refusals', () => {
  it('refuses a study with other design variables, with a clear message and no new run', async () => {
    const runsBefore = queryRows(dbPath, 'SELECT COUNT(*) AS n FROM runs')[0]!['n'];
    const attempt = rescoreRun(shared, { dbPath, runId: baseRunId, workers: 1 });
    await expect(attempt).rejects.toBeInstanceOf(RescoreError);
    await expect(attempt).rejects.toThrow(
      `rescore needs the same design variables: run ${baseRunId} has [base_span,crank_1,rod_1,drive_1,drive_2], the study has [base_span,crank_1,rod_1,drive]; use "loopsmith run" for a new design space`,
    );
    expect(queryRows(dbPath, 'SELECT COUNT(*) AS n FROM runs')[0]!['n']).toBe(runsBefore);
  });

  it('refuses a run that does not exist', async () => {
    await expect(rescoreRun(base, { dbPath, runId: 999, workers: 1 })).rejects.toThrow(`${dbPath}: no run 999`);
  });
});

describe('loopsmith rescore on the command line', () => {
  it('prints the front summary and exits 0; --json has the documented keys', async () => {
    const text = await runCli(['rescore', dbPath, '--study', saferPath, '--run', String(baseRunId), '--workers', '1']);
    expect(text.code, text.stderr).toBe(0);
    const head = /^rescore run (\d+) of run (\d+): (\d+) designs, (\d+) evaluated \(per-pose metrics recomputed, workspace reused\), (\d+) feasible$/m.exec(text.stdout);
    expect(head, text.stdout).not.toBeNull();
    const [, textRun, from, designs, evaluated] = head!.map(Number);
    expect(from).toBe(baseRunId);
    expect(designs).toBe(oldMembers.length);
    expect(evaluated).toBe(oldMembers.length);
    const frontLine = /^front: (\d+) designs; (\d+) left the front, (\d+) joined$/m.exec(text.stdout);
    expect(frontLine, text.stdout).not.toBeNull();
    expect(Number(frontLine![1])).toBe(runFront(dbPath, textRun).designs.length);
    expect(text.stdout).toContain(`loopsmith front ${dbPath} --run ${textRun}`);

    const json = await runCli(['rescore', dbPath, '--study', saferPath, '--run', String(baseRunId), '--workers', '1', '--json']);
    expect(json.code, json.stderr).toBe(0);
    const parsed = JSON.parse(json.stdout) as Record<string, unknown>;
    for (const key of ['run', 'from', 'mode', 'front', 'left', 'joined', 'constraints']) expect(parsed, key).toHaveProperty(key);
    expect(parsed['from']).toBe(baseRunId);
    expect(parsed['mode']).toBe('cached'); // the first command stored every evaluation under this study
    expect(parsed['run']).toBe(textRun! + 1);
    const front = parsed['front'] as { id: number; variables: Record<string, unknown>; metrics: Record<string, unknown> }[];
    expect(front.map((e) => e.id)).toStrictEqual(runFront(dbPath, textRun).designs.map((e) => e.id));
    expect(Array.isArray(parsed['constraints'])).toBe(true);
    expect((parsed['constraints'] as { name: string }[]).map((c) => c.name)).toContain('drive_torque_1');
  });

  it('refuses other design variables and a missing database with exit code 1 and one message', async () => {
    const refused = await runCli(['rescore', dbPath, '--study', sharedPath, '--run', String(baseRunId), '--workers', '1']);
    expect(refused.code).toBe(1);
    expect(refused.stderr).toContain('rescore needs the same design variables');
    expect(refused.stderr).not.toContain('internal error');
    const missing = await runCli(['rescore', join(directory, 'nothing-here.db'), '--study', saferPath]);
    expect(missing.code).toBe(1);
    expect(missing.stderr).toContain('no such database');
  });
});
