import { afterEach, describe, expect, it } from 'vitest';
import Database from 'better-sqlite3';
import { existsSync, mkdirSync, mkdtempSync, readFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { dirname, join } from 'node:path';
import {
  MIGRATIONS,
  SCHEMA_VERSION,
  SchemaVersionError,
  Store,
  StoreError,
  canonicalJson,
  migrate,
  queryEvaluations,
  readSchemaSql,
  sha256Hex,
} from '../../src/store/index.js';
import type { ColumnSet, GenerationWrite, NewEvaluation } from '../../src/store/index.js';

const temporaryDirectories: string[] = [];
const openStores: Store[] = [];
const openConnections: Database.Database[] = [];

/** schema.sql of version 1, as released (the migration test starts from it). */
const SCHEMA_V1 = readFileSync(new URL('../fixtures/schema-v1.sql', import.meta.url), 'utf8');

function tempDbPath(): string {
  const directory = mkdtempSync(join(tmpdir(), 'loopsmith-store-'));
  temporaryDirectories.push(directory);
  return join(directory, 'nested', 'folder', 'study.db');
}

/** A path in an existing folder, for raw connections that create the file themselves. */
function flatDbPath(): string {
  const directory = mkdtempSync(join(tmpdir(), 'loopsmith-store-'));
  temporaryDirectories.push(directory);
  return join(directory, 'study.db');
}

function openStore(path: string, clock?: () => Date): Store {
  const store = Store.open(path, clock === undefined ? {} : { clock });
  openStores.push(store);
  return store;
}

function rawConnection(path: string, options: Database.Options = {}): Database.Database {
  const db = new Database(path, options);
  openConnections.push(db);
  return db;
}

afterEach(() => {
  for (const store of openStores.splice(0)) store.close();
  for (const db of openConnections.splice(0)) if (db.open) db.close();
  for (const directory of temporaryDirectories.splice(0)) rmSync(directory, { recursive: true, force: true });
});

const COLUMNS: ColumnSet = {
  variables: [
    { name: 'l1', type: 'real' },
    { name: 'l2', type: 'real' },
    { name: 'actuator', type: 'text' },
  ],
  metrics: ['workspace_area', 'max_torque'],
  constraints: ['min_transmission'],
};

function evaluation(index: number, settingsHash = 'settings-a'): NewEvaluation {
  const failed = index % 5 === 4;
  return {
    key: `key-${index}`,
    settingsHash,
    variables: { l1: 0.1 + index * 0.01, l2: 0.3 - index * 0.007, actuator: index % 2 === 0 ? 'belt' : 'screw' },
    metrics: { workspace_area: failed ? null : 0.01 * index + 0.001, max_torque: failed ? null : 3 + index / 7 },
    constraints: { min_transmission: failed ? null : 0.2 - index * 0.05 },
    violation: failed ? 1 : Math.max(0, index * 0.05 - 0.2),
    feasible: !failed && index * 0.05 - 0.2 <= 0,
    error: failed ? 'singular configuration' : null,
    evalSeconds: failed ? null : 0.5 + index,
  };
}

function stats(evaluations: number, newEvaluations: number): GenerationWrite['stats'] {
  return {
    evaluations,
    newEvaluations,
    failed: 0,
    feasibleCount: evaluations,
    hypervolume: 0.25,
    elapsedSeconds: 2,
    evaluationsPerSecond: evaluations / 2,
  };
}

/** Store with one study and one optimize run, columns ensured. */
function storeWithRun(path: string, clock?: () => Date): { store: Store; studyId: number; runId: number } {
  const store = openStore(path, clock);
  const studyId = store.upsertStudy({ name: 'sorter', architecture: '5R', fileText: 'name: sorter\n', settingsHash: 'settings-a' });
  store.ensureColumns(COLUMNS);
  const runId = store.createRun({ studyId, kind: 'optimize', seed: 7, settings: { population: 4 }, workers: 2 });
  return { store, studyId, runId };
}

function countRows(path: string, table: string): number {
  const db = rawConnection(path, { readonly: true });
  const row = db.prepare(`SELECT COUNT(*) AS n FROM ${table}`).get() as { n: number };
  db.close();
  return row.n;
}

describe('schema creation and version', () => {
  it('creates parent folders, the file, all tables and the view, at user_version SCHEMA_VERSION', () => {
    const path = tempDbPath();
    openStore(path);
    expect(existsSync(path)).toBe(true);
    const db = rawConnection(path, { readonly: true });
    expect(db.pragma('user_version', { simple: true })).toBe(SCHEMA_VERSION);
    expect(SCHEMA_VERSION).toBe(4);
    const names = (db.prepare("SELECT name, type FROM sqlite_schema WHERE name NOT LIKE 'sqlite_%' ORDER BY name").all() as {
      name: string;
      type: string;
    }[])
      .filter((row) => row.type === 'table' || row.type === 'view')
      .map((row) => `${row.type}:${row.name}`);
    expect(names).toEqual([
      'table:column_sets',
      'table:evaluations',
      'table:generation_members',
      'table:generation_stats',
      'view:results',
      'table:runs',
      'table:studies',
    ]);
  });

  it('schema.sql sets the same user_version as the code expects', () => {
    const match = /PRAGMA\s+user_version\s*=\s*(\d+)/i.exec(readSchemaSql());
    expect(match?.[1]).toBe(String(SCHEMA_VERSION));
  });

  it('turns on WAL journal mode (persistent in the file) and foreign keys', () => {
    const path = tempDbPath();
    const store = openStore(path);
    const db = rawConnection(path, { readonly: true });
    expect(db.pragma('journal_mode', { simple: true })).toBe('wal');
    // foreign_keys is per connection: show it through the store refusing a dangling study id.
    expect(() => store.createRun({ studyId: 999, kind: 'optimize', seed: 1, settings: {}, workers: 1 })).toThrow(/FOREIGN KEY/);
  });

  it('reopens an existing store without touching its data', () => {
    const path = tempDbPath();
    const { store, runId } = storeWithRun(path);
    store.writeGeneration({
      runId,
      generation: 0,
      newEvaluations: [evaluation(0)],
      members: [{ key: 'key-0', rank: 0, crowding: Infinity }],
      stats: stats(1, 1),
      optimizerState: '{"g":0}',
    });
    store.close();
    const again = openStore(path);
    expect(again.findEvaluations(['key-0']).get('key-0')?.variables).toEqual(evaluation(0).variables);
    expect(again.getRun(runId)?.generationsDone).toBe(1);
  });

  it('refuses a database written by a newer schema version, with a clear message', () => {
    const path = tempDbPath();
    openStore(path).close();
    const db = rawConnection(path);
    db.pragma(`user_version = ${SCHEMA_VERSION + 1}`);
    db.close();
    expect(() => Store.open(path)).toThrow(SchemaVersionError);
    expect(() => Store.open(path)).toThrow(
      new RegExp(`schema version ${SCHEMA_VERSION + 1}.*only understands versions up to ${SCHEMA_VERSION}`),
    );
    const check = rawConnection(path, { readonly: true });
    expect(check.pragma('user_version', { simple: true })).toBe(SCHEMA_VERSION + 1);
  });

  it('refuses a file with foreign tables and no schema version', () => {
    const path = tempDbPath();
    openStore(path).close();
    rmSync(path);
    const db = rawConnection(path);
    db.exec('CREATE TABLE something_else (x)');
    db.close();
    expect(() => Store.open(path)).toThrow(/not a loopsmith store/);
  });

  it('applies numbered migrations in order, each in a transaction, and refuses a gap', () => {
    expect(MIGRATIONS.map((m) => m.from)).toEqual([1, 2, 3]); // 1 → 2: convergence record; 2 → 3: run-ownership lock; 3 → 4: renamed metrics
    const path = flatDbPath();
    const db = rawConnection(path);
    migrate(db, { targetVersion: 1, schemaSql: SCHEMA_V1 }); // a store written by the first schema
    db.pragma('foreign_keys = ON');
    expect(db.pragma('user_version', { simple: true })).toBe(1);

    // A failing step rolls back and leaves the version alone.
    const failing = [
      {
        from: 1,
        description: 'add a column, then fail',
        apply: (d: Database.Database): void => {
          d.exec('ALTER TABLE runs ADD COLUMN note TEXT');
          throw new Error('migration failed on purpose');
        },
      },
    ];
    expect(() => migrate(db, { targetVersion: 2, migrations: failing })).toThrow(/on purpose/);
    expect(db.pragma('user_version', { simple: true })).toBe(1);
    expect((db.prepare("SELECT COUNT(*) AS n FROM pragma_table_info('runs') WHERE name = 'note'").get() as { n: number }).n).toBe(0);

    const working = [
      { from: 1, description: 'add runs.note', apply: (d: Database.Database): void => void d.exec('ALTER TABLE runs ADD COLUMN note TEXT') },
    ];
    expect(migrate(db, { targetVersion: 2, migrations: working })).toEqual({ fromVersion: 1, toVersion: 2 });
    expect(db.pragma('user_version', { simple: true })).toBe(2);
    expect((db.prepare("SELECT COUNT(*) AS n FROM pragma_table_info('runs') WHERE name = 'note'").get() as { n: number }).n).toBe(1);

    expect(() => migrate(db, { targetVersion: 3, migrations: working })).toThrow(/no migration from it/);
    expect(() => migrate(db, { targetVersion: 1 })).toThrow(SchemaVersionError); // version 3 is newer than that
  });

  it('migrates a version 1 store to exactly the columns schema.sql creates, keeping its rows (runs.end_reason, generation_stats.hv_improvement, ...)', () => {
    const oldPath = flatDbPath();
    const old = rawConnection(oldPath);
    migrate(old, { targetVersion: 1, schemaSql: SCHEMA_V1 });
    old.exec(`INSERT INTO studies (name, architecture, file_text, file_hash, settings_hash, created_at) VALUES ('s', 'five-bar', 'x', 'h', 'sh', '2026-01-01T00:00:00Z');
      INSERT INTO runs (study_id, kind, seed, settings_json, status, workers, started_at) VALUES (1, 'optimize', 1, '{}', 'finished', 1, '2026-01-01T00:00:00Z');
      INSERT INTO generation_stats VALUES (1, 0, 10, 10, 0, 3, 0.5, 1.0, 10.0);`);
    old.close();
    const upgraded = openStore(oldPath);
    expect(upgraded.getRun(1)).toMatchObject({ status: 'finished', endReason: null, terminationJson: null, ownerPid: null, command: null });
    expect(upgraded.generationStats(1)[0]).toMatchObject({ hypervolume: 0.5, archiveSize: null, hvImprovement: null });
    upgraded.setRunEnd(1, 'converged', { maxEvaluations: 100 });
    expect(upgraded.getRun(1)).toMatchObject({ endReason: 'converged', terminationJson: '{"maxEvaluations":100}' });
    expect(() => upgraded.setRunEnd(1, 'bored' as 'budget')).toThrow(/not one of/);
    upgraded.close();
    const freshPath = tempDbPath();
    openStore(freshPath).close();
    const columns = (path: string, table: string): unknown[] => {
      const db = rawConnection(path, { readonly: true });
      try {
        return db.prepare(`SELECT name, type, "notnull", dflt_value, pk FROM pragma_table_info('${table}') ORDER BY cid`).all();
      } finally {
        db.close();
      }
    };
    for (const table of ['studies', 'runs', 'column_sets', 'evaluations', 'generation_members', 'generation_stats']) {
      expect(columns(oldPath, table)).toEqual(columns(freshPath, table));
    }
  });
});

describe('studies and columns', () => {
  it('deduplicates studies on the sha256 of the file text', () => {
    // sha256("abc"): NIST FIPS 180-2, Appendix B.1 (from memory).
    expect(sha256Hex('abc')).toBe('ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad');
    const store = openStore(tempDbPath());
    const first = store.upsertStudy({ name: 'a', architecture: '5R', fileText: 'text one', settingsHash: 'h1' });
    const same = store.upsertStudy({ name: 'a renamed', architecture: '5R', fileText: 'text one', settingsHash: 'h1' });
    const other = store.upsertStudy({ name: 'b', architecture: '3RRR', fileText: 'text two', settingsHash: 'h2' });
    expect(same).toBe(first);
    expect(other).not.toBe(first);
    expect(store.getStudy(first)).toMatchObject({ name: 'a', fileHash: sha256Hex('text one'), settingsHash: 'h1' });
  });

  it('adds prefixed columns with the right types, idempotently, and refuses bad names or type changes', () => {
    const path = tempDbPath();
    const store = openStore(path);
    expect(store.evaluationColumns()).toEqual({ variables: [], metrics: [], constraints: [] });
    store.ensureColumns(COLUMNS);
    store.ensureColumns(COLUMNS);
    expect(store.evaluationColumns()).toEqual({
      variables: ['l1', 'l2', 'actuator'],
      metrics: ['workspace_area', 'max_torque'],
      constraints: ['min_transmission'],
    });
    const db = rawConnection(path, { readonly: true });
    const types = Object.fromEntries(
      (db.prepare("SELECT name, type FROM pragma_table_info('evaluations')").all() as { name: string; type: string }[]).map((r) => [r.name, r.type]),
    );
    expect(types).toMatchObject({ v_l1: 'REAL', v_actuator: 'TEXT', m_workspace_area: 'REAL', c_min_transmission: 'REAL' });

    // A second study brings one more metric: only that column is added.
    store.ensureColumns({ variables: [{ name: 'l1', type: 'real' }], metrics: ['stiffness'], constraints: [] });
    expect(store.evaluationColumns().metrics).toEqual(['workspace_area', 'max_torque', 'stiffness']);

    for (const bad of ['Bad', '1x', 'a-b', 'x;drop', '', 'é']) {
      expect(() => store.ensureColumns({ variables: [], metrics: [bad], constraints: [] })).toThrow(StoreError);
    }
    expect(() => store.ensureColumns({ variables: [{ name: 'l1', type: 'text' }], metrics: [], constraints: [] })).toThrow(
      /already exists with type REAL/,
    );
    expect(store.evaluationColumns().metrics).toEqual(['workspace_area', 'max_torque', 'stiffness']);
  });

  it('names view columns without prefixes where that does not clash', () => {
    const path = tempDbPath();
    const store = openStore(path);
    store.ensureColumns({
      variables: [
        { name: 'mass', type: 'real' },
        { name: 'id', type: 'real' },
      ],
      metrics: ['mass', 'area'],
      constraints: [],
    });
    const db = rawConnection(path, { readonly: true });
    const viewColumns = (db.prepare("SELECT name FROM pragma_table_info('results') ORDER BY cid").all() as { name: string }[]).map(
      (r) => r.name,
    );
    expect(viewColumns).toEqual([
      'id',
      'eval_key',
      'settings_hash',
      'first_run_id',
      'violation',
      'feasible',
      'error',
      'eval_seconds',
      'mass', // v_mass came first
      'v_id', // "id" is a real column
      'm_mass', // "mass" already taken
      'area',
    ]);
  });
});

describe('runs', () => {
  it('creates, finds for resume, marks and times runs with an injected clock', () => {
    let nowMs = Date.parse('2030-01-01T00:00:00.000Z');
    const clock = (): Date => new Date(nowMs);
    const { store, studyId, runId } = storeWithRun(tempDbPath(), clock);

    const run = store.getRun(runId);
    expect(run).toMatchObject({
      studyId,
      kind: 'optimize',
      parentRunId: null,
      seed: 7,
      settingsJson: '{"population":4}',
      status: 'running',
      workers: 2,
      startedAt: '2030-01-01T00:00:00.000Z',
      finishedAt: null,
      elapsedSeconds: 0,
      generationsDone: 0,
      optimizerState: null,
    });

    nowMs += 5_000;
    store.writeGeneration({
      runId,
      generation: 0,
      newEvaluations: [evaluation(0)],
      members: [{ key: 'key-0', rank: 0, crowding: 1 }],
      stats: stats(1, 1),
      optimizerState: 'state-0',
    });
    expect(store.getRun(runId)?.elapsedSeconds).toBe(5);

    nowMs += 2_000;
    store.markRun(runId, 'stopped', 'interrupted');
    expect(store.getRun(runId)).toMatchObject({ status: 'stopped', finishedAt: '2030-01-01T00:00:07.000Z', elapsedSeconds: 7, message: 'interrupted' });

    const settingsOtherOrder = JSON.stringify({ population: 4 });
    expect(store.findUnfinishedRun(studyId, 'optimize', 7, settingsOtherOrder)?.id).toBe(runId);
    expect(store.findUnfinishedRun(studyId, 'optimize', 8, settingsOtherOrder)).toBeUndefined();
    expect(store.findUnfinishedRun(studyId, 'optimize', 7, '{"population":5}')).toBeUndefined();
    expect(store.findUnfinishedRun(studyId, 'sweep', 7, settingsOtherOrder)).toBeUndefined();

    nowMs += 100_000; // downtime between sessions is not counted
    store.markRun(runId, 'running');
    expect(store.getRun(runId)).toMatchObject({ status: 'running', finishedAt: null, elapsedSeconds: 7, message: 'interrupted' });
    nowMs += 3_000;
    store.markRun(runId, 'finished', 'done');
    expect(store.getRun(runId)).toMatchObject({ status: 'finished', elapsedSeconds: 10, message: 'done' });
    expect(store.findUnfinishedRun(studyId, 'optimize', 7, settingsOtherOrder)).toBeUndefined();

    const child = store.createRun({ studyId, kind: 'rescore', parentRunId: runId, seed: 7, settings: { b: 1, a: { d: 2, c: 3 } }, workers: 1 });
    expect(store.getRun(child)?.parentRunId).toBe(runId);
    expect(store.getRun(child)?.settingsJson).toBe('{"a":{"c":3,"d":2},"b":1}');
    expect(store.findUnfinishedRun(studyId, 'rescore', 7, '{"b":1,"a":{"c":3,"d":2}}')?.id).toBe(child);
    expect(store.listRuns().map((r) => r.id)).toEqual([runId, child]);
    expect(store.latestRun()?.id).toBe(child);
    expect(store.latestRun('optimize')?.id).toBe(runId);
    expect(store.latestRun('sweep')).toBeUndefined();
    expect(() => store.markRun(12345, 'finished')).toThrow(/does not exist/);
  });

  it('canonicalJson sorts keys at every level and keeps arrays in order', () => {
    expect(canonicalJson({ z: [3, { y: 1, x: 2 }], a: null })).toBe('{"a":null,"z":[3,{"x":2,"y":1}]}');
    expect(canonicalJson(undefined)).toBe('null');
  });
});

describe('writeGeneration', () => {
  it('stores evaluations, members, stats and run progress; reuses stored keys', () => {
    const { store, runId } = storeWithRun(tempDbPath());
    store.writeGeneration({
      runId,
      generation: 0,
      newEvaluations: [0, 1, 2, 3].map((i) => evaluation(i)),
      members: [
        { key: 'key-2', rank: 0, crowding: Infinity },
        { key: 'key-0', rank: 0, crowding: 0.5 },
        { key: 'key-3', rank: 1, crowding: Infinity },
        { key: 'key-1', rank: 2, crowding: 0 },
      ],
      stats: stats(4, 4),
      optimizerState: '{"generation":0}',
    });
    // Generation 1 brings key-4 and repeats key-1 in newEvaluations (already stored: reused, not duplicated).
    store.writeGeneration({
      runId,
      generation: 1,
      newEvaluations: [evaluation(4), evaluation(1)],
      members: [
        { key: 'key-4', rank: 0, crowding: Infinity },
        { key: 'key-2', rank: 0, crowding: Infinity },
        { key: 'key-1', rank: 1, crowding: 0.25 },
        { key: 'key-0', rank: 1, crowding: 0.125 },
      ],
      stats: { ...stats(4, 1), hypervolume: null },
      optimizerState: '{"generation":1}',
    });

    const members0 = store.generationMembers(runId, 0);
    expect(members0.map((m) => [m.key, m.id, m.position, m.rank, m.crowding])).toEqual([
      ['key-2', 3, 0, 0, Infinity],
      ['key-0', 1, 1, 0, 0.5],
      ['key-3', 4, 2, 1, Infinity],
      ['key-1', 2, 3, 2, 0],
    ]);
    const members1 = store.generationMembers(runId, 1);
    expect(members1.map((m) => [m.key, m.id])).toEqual([
      ['key-4', 5],
      ['key-2', 3],
      ['key-1', 2],
      ['key-0', 1],
    ]);
    const { id: _id, firstRunId, position: _p, rank: _r, crowding: _c, ...written } = members1[0]!;
    expect(written).toEqual(evaluation(4));
    expect(firstRunId).toBe(runId);

    expect(store.lastGeneration(runId)).toBe(1);
    expect(store.lastGeneration(runId + 1)).toBeUndefined();
    expect(store.generationStats(runId).map((s) => [s.generation, s.evaluations, s.newEvaluations, s.hypervolume])).toEqual([
      [0, 4, 4, 0.25],
      [1, 4, 1, null],
    ]);
    expect(store.getRun(runId)).toMatchObject({ generationsDone: 2, optimizerState: '{"generation":1}' });
    expect(store.generationMembers(runId, 2)).toEqual([]);

    // A generation out of sequence is refused.
    expect(() =>
      store.writeGeneration({ runId, generation: 5, newEvaluations: [], members: [], stats: stats(0, 0), optimizerState: null }),
    ).toThrow(/next one to write is 2/);
    expect(() =>
      store.writeGeneration({ runId, generation: 1, newEvaluations: [], members: [], stats: stats(0, 0), optimizerState: null }),
    ).toThrow(/next one to write is 2/);
  });

  it('lists per generation the metrics of the feasible, error-free members of rank 0, in population order', () => {
    const { store, runId } = storeWithRun(tempDbPath());
    const members = (list: [string, number][]): GenerationWrite['members'] => list.map(([key, rank]) => ({ key, rank, crowding: 1 }));
    // evaluation(i) above: 0–3 feasible, 4 failed (error), 5 infeasible (violation 0.05).
    const writes: [NewEvaluation[], [string, number][]][] = [
      [[0, 1, 2, 3].map((i) => evaluation(i)), [['key-2', 0], ['key-0', 0], ['key-3', 1], ['key-1', 0]]],
      [[evaluation(4)], [['key-4', 0], ['key-2', 0], ['key-1', 1], ['key-0', 1]]],
      [[evaluation(5)], [['key-5', 0], ['key-3', 1], ['key-1', 1], ['key-0', 0]]],
    ];
    writes.forEach(([newEvaluations, list], generation) =>
      store.writeGeneration({ runId, generation, newEvaluations, members: members(list), stats: stats(4, newEvaluations.length), optimizerState: null }),
    );
    const metricsOf = (i: number): number[] => [evaluation(i).metrics['max_torque']!, evaluation(i).metrics['workspace_area']!];
    expect(store.rankZeroFeasibleMetrics(runId, ['max_torque', 'workspace_area'])).toEqual([
      [metricsOf(2), metricsOf(0), metricsOf(1)],
      [metricsOf(2)],
      [metricsOf(0)],
    ]);
    // The same as filtering the decoded members (the general read path).
    const decoded = [0, 1, 2].map((g) =>
      store.generationMembers(runId, g).filter((m) => m.rank === 0 && m.feasible && m.error === null).map((m) => [m.metrics['max_torque'], m.metrics['workspace_area']]),
    );
    expect(store.rankZeroFeasibleMetrics(runId, ['max_torque', 'workspace_area'])).toEqual(decoded);
    expect(store.rankZeroFeasibleMetrics(runId + 1, ['max_torque'])).toEqual([]);
    expect(() => store.rankZeroFeasibleMetrics(runId, ['no_such_metric'])).toThrow(/no_such_metric has no column/);
  });

  it('rolls the whole generation back when a member key is unknown', () => {
    const path = tempDbPath();
    const { store, runId } = storeWithRun(path);
    store.writeGeneration({
      runId,
      generation: 0,
      newEvaluations: [evaluation(0), evaluation(1)],
      members: [
        { key: 'key-0', rank: 0, crowding: 1 },
        { key: 'key-1', rank: 0, crowding: 1 },
      ],
      stats: stats(2, 2),
      optimizerState: 'after-0',
    });
    // One new evaluation carries a column set not seen before (no constraint), so a column_sets row
    // is inserted inside the failing transaction too.
    const unusualLayout: NewEvaluation = { ...evaluation(3), constraints: {} };
    const bad: GenerationWrite = {
      runId,
      generation: 1,
      newEvaluations: [evaluation(2), unusualLayout],
      members: [
        { key: 'key-2', rank: 0, crowding: 1 },
        { key: 'key-3', rank: 0, crowding: 1 },
        { key: 'no-such-key', rank: 1, crowding: 1 },
      ],
      stats: stats(3, 2),
      optimizerState: 'after-1',
    };
    const before = {
      evaluations: countRows(path, 'evaluations'),
      members: countRows(path, 'generation_members'),
      stats: countRows(path, 'generation_stats'),
      columnSets: countRows(path, 'column_sets'),
    };
    expect(() => store.writeGeneration(bad)).toThrow(/no-such-key.*neither in newEvaluations nor stored/);
    expect({
      evaluations: countRows(path, 'evaluations'),
      members: countRows(path, 'generation_members'),
      stats: countRows(path, 'generation_stats'),
      columnSets: countRows(path, 'column_sets'),
    }).toEqual(before);
    expect(before).toEqual({ evaluations: 2, members: 2, stats: 1, columnSets: 1 });
    expect(store.findEvaluations(['key-2', 'key-3']).size).toBe(0);
    expect(store.generationMembers(runId, 1)).toEqual([]);
    expect(store.getRun(runId)).toMatchObject({ generationsDone: 1, optimizerState: 'after-0' });
    expect(store.lastGeneration(runId)).toBe(0);

    // The corrected write succeeds, with the ids it would have had without the failure.
    store.writeGeneration({ ...bad, members: bad.members.slice(0, 2), stats: stats(2, 2) });
    const found = store.findEvaluations(['key-2', 'key-3']);
    expect(found.get('key-2')?.id).toBe(3);
    expect(found.get('key-3')?.id).toBe(4);
    expect(found.get('key-3')?.constraints).toEqual({});
    expect(countRows(path, 'column_sets')).toBe(2);
  });

  it('refuses evaluations with names that have no column, writing nothing', () => {
    const path = tempDbPath();
    const { store, runId } = storeWithRun(path);
    const stray: NewEvaluation = { ...evaluation(0), metrics: { ...evaluation(0).metrics, not_a_column: 1 } };
    expect(() =>
      store.writeGeneration({ runId, generation: 0, newEvaluations: [stray], members: [], stats: stats(1, 1), optimizerState: null }),
    ).toThrow(/not_a_column has no column; call ensureColumns first/);
    const wrongType: NewEvaluation = { ...evaluation(0), variables: { ...evaluation(0).variables, actuator: 3 } };
    expect(() =>
      store.writeGeneration({ runId, generation: 0, newEvaluations: [wrongType], members: [], stats: stats(1, 1), optimizerState: null }),
    ).toThrow(/actuator must be a string/);
    expect(countRows(path, 'evaluations')).toBe(0);
    expect(store.getRun(runId)?.generationsDone).toBe(0);
  });
});

describe('cache lookup', () => {
  it('finds stored evaluations by key across chunked IN queries, ignoring unknown keys', () => {
    const { store, runId } = storeWithRun(tempDbPath());
    const count = 1200; // more than two lookup chunks
    const written = Array.from({ length: count }, (_, i) => evaluation(i));
    store.writeGeneration({
      runId,
      generation: 0,
      newEvaluations: written,
      members: written.map((e) => ({ key: e.key, rank: 0, crowding: 0 })),
      stats: stats(count, count),
      optimizerState: null,
    });
    const unknown = Array.from({ length: 100 }, (_, i) => `missing-${i}`);
    const keys = [...unknown.slice(0, 50), ...written.map((e) => e.key).reverse(), ...unknown.slice(50), 'key-7'];
    const found = store.findEvaluations(keys);
    expect(found.size).toBe(count);
    for (const [index, expected] of written.entries()) {
      const stored = found.get(expected.key);
      expect(stored?.id).toBe(index + 1);
      const { id: _id, firstRunId: _f, ...rest } = stored!;
      expect(rest).toEqual(expected);
    }
    expect(store.findEvaluations([]).size).toBe(0);
    expect(store.findEvaluations(['missing-1']).size).toBe(0);
  });

  it('reads rows that carry columns another connection added after this one opened', () => {
    const path = tempDbPath();
    const { store: first, studyId } = storeWithRun(path);
    const second = openStore(path);
    second.ensureColumns({ variables: [{ name: 'l1', type: 'real' }], metrics: ['payload'], constraints: [] });
    const runId = second.createRun({ studyId, kind: 'evaluate', seed: 0, settings: {}, workers: 1 });
    const extra: NewEvaluation = {
      key: 'extra',
      settingsHash: 'settings-b',
      variables: { l1: 0.5 },
      metrics: { payload: 2.5 },
      constraints: {},
      violation: 0,
      feasible: true,
      error: null,
      evalSeconds: 0.1,
    };
    second.writeGeneration({ runId, generation: 0, newEvaluations: [extra], members: [{ key: 'extra', rank: 0, crowding: 0 }], stats: stats(1, 1), optimizerState: null });
    const { id: _id, firstRunId: _f, ...rest } = first.findEvaluations(['extra']).get('extra')!;
    expect(rest).toEqual(extra);
    expect(first.generationMembers(runId, 0)[0]?.metrics).toEqual({ payload: 2.5 });
    expect(first.evaluationColumns().metrics).toContain('payload');
  });

  it('keeps older rows readable after columns are added by the same store', () => {
    const { store, runId } = storeWithRun(tempDbPath());
    store.writeGeneration({ runId, generation: 0, newEvaluations: [evaluation(0)], members: [], stats: stats(1, 1), optimizerState: null });
    store.ensureColumns({ variables: [], metrics: ['stiffness'], constraints: [] });
    const withStiffness: NewEvaluation = { ...evaluation(1), metrics: { ...evaluation(1).metrics, stiffness: 1.5e6 } };
    store.writeGeneration({ runId, generation: 1, newEvaluations: [withStiffness], members: [], stats: stats(1, 1), optimizerState: null });
    const found = store.findEvaluations(['key-0', 'key-1']);
    expect(found.get('key-0')?.metrics).toEqual(evaluation(0).metrics);
    expect(found.get('key-1')?.metrics).toEqual(withStiffness.metrics);
  });
});

describe('numbers', () => {
  const exactValues = [
    0.1 + 0.2,
    1e-300,
    Number.MIN_VALUE,
    -Number.MIN_VALUE,
    Number.MAX_VALUE,
    1 / 3,
    Math.PI,
    -1.2345678901234567e-200,
    2 ** 53 + 2,
    123456789,
    Infinity,
    -Infinity,
  ];

  it('round-trips doubles bit-exactly, including ±Infinity, through the store and the query path', () => {
    const path = tempDbPath();
    const store = openStore(path);
    const studyId = store.upsertStudy({ name: 'n', architecture: 'x', fileText: 'n', settingsHash: 's' });
    store.ensureColumns({ variables: [{ name: 'x', type: 'real' }], metrics: ['value'], constraints: ['margin'] });
    const runId = store.createRun({ studyId, kind: 'evaluate', seed: 0, settings: {}, workers: 1 });
    const written: NewEvaluation[] = exactValues.map((value, i) => ({
      key: `n${i}`,
      settingsHash: 's',
      variables: { x: value },
      metrics: { value },
      constraints: { margin: -value },
      violation: Math.abs(value),
      feasible: true,
      error: null,
      evalSeconds: value,
    }));
    store.writeGeneration({
      runId,
      generation: 0,
      newEvaluations: written,
      members: written.map((e, i) => ({ key: e.key, rank: i, crowding: exactValues[i]! })),
      stats: { ...stats(written.length, written.length), hypervolume: Number.MIN_VALUE, elapsedSeconds: 0.1 + 0.2 },
      optimizerState: null,
    });

    const found = store.findEvaluations(written.map((e) => e.key));
    const members = store.generationMembers(runId, 0);
    const queried = queryEvaluations(path, { orderBy: 'id' }).rows;
    exactValues.forEach((value, i) => {
      const stored = found.get(`n${i}`)!;
      expect(Object.is(stored.variables['x'], value)).toBe(true);
      expect(Object.is(stored.metrics['value'], value)).toBe(true);
      expect(Object.is(stored.constraints['margin'], -value)).toBe(true);
      expect(Object.is(stored.evalSeconds, value)).toBe(true);
      expect(Object.is(members[i]!.crowding, value)).toBe(true);
      expect(Object.is(queried[i]!['m_value'], value)).toBe(true);
    });
    const statsRow = store.generationStats(runId)[0]!;
    expect(Object.is(statsRow.hypervolume, Number.MIN_VALUE)).toBe(true);
    expect(statsRow.elapsedSeconds).toBe(0.30000000000000004);

    // Stored as REAL, not as text.
    const db = rawConnection(path, { readonly: true });
    const storageTypes = db.prepare('SELECT DISTINCT typeof(m_value) AS t FROM evaluations').all() as { t: string }[];
    expect(storageTypes).toEqual([{ t: 'real' }]);
  });

  it('stores NaN metrics as NULL and reads -0 back as 0 (documented SQLite behaviour)', () => {
    const { store, runId } = storeWithRun(tempDbPath());
    const odd: NewEvaluation = { ...evaluation(0), metrics: { workspace_area: NaN, max_torque: -0 } };
    store.writeGeneration({ runId, generation: 0, newEvaluations: [odd], members: [], stats: stats(1, 1), optimizerState: null });
    const stored = store.findEvaluations(['key-0']).get('key-0')!;
    expect(stored.metrics['workspace_area']).toBeNull();
    expect(Object.is(stored.metrics['max_torque'], 0)).toBe(true);
    expect(() =>
      store.writeGeneration({
        runId,
        generation: 1,
        newEvaluations: [{ ...evaluation(1), violation: NaN }],
        members: [],
        stats: stats(1, 1),
        optimizerState: null,
      }),
    ).toThrow(/violation must be a number/);
  });
});

describe('determinism', () => {
  function writeSequence(path: string): void {
    const store = openStore(path, () => new Date('2030-01-01T00:00:00Z'));
    const studyId = store.upsertStudy({ name: 's', architecture: '5R', fileText: 'study', settingsHash: 'settings-a' });
    store.ensureColumns(COLUMNS);
    const first = store.createRun({ studyId, kind: 'optimize', seed: 1, settings: { p: 3 }, workers: 2 });
    store.writeGeneration({
      runId: first,
      generation: 0,
      newEvaluations: [evaluation(5), evaluation(2), evaluation(9)],
      members: ['key-9', 'key-5', 'key-2'].map((key, i) => ({ key, rank: i, crowding: i === 0 ? Infinity : 0.5 })),
      stats: stats(3, 3),
      optimizerState: 's0',
    });
    store.writeGeneration({
      runId: first,
      generation: 1,
      newEvaluations: [evaluation(1), evaluation(9), evaluation(3)],
      members: ['key-3', 'key-9', 'key-1'].map((key, i) => ({ key, rank: 0, crowding: i })),
      stats: stats(3, 2),
      optimizerState: 's1',
    });
    const second = store.createRun({ studyId, kind: 'sweep', seed: 1, settings: {}, workers: 1 });
    store.writeGeneration({
      runId: second,
      generation: 0,
      newEvaluations: [evaluation(3), evaluation(7)],
      members: ['key-7', 'key-3', 'key-5'].map((key) => ({ key, rank: 0, crowding: 0 })),
      stats: stats(3, 1),
      optimizerState: null,
    });
    store.close();
  }

  function dump(path: string): { evaluations: unknown[]; members: unknown[] } {
    const db = rawConnection(path, { readonly: true });
    return {
      evaluations: db.prepare('SELECT * FROM evaluations ORDER BY id').all(),
      members: db.prepare('SELECT * FROM generation_members ORDER BY run_id, generation, position').all(),
    };
  }

  it('gives identical evaluation ids and members for the same write sequence in two fresh databases', () => {
    const pathA = tempDbPath();
    const pathB = tempDbPath();
    writeSequence(pathA);
    writeSequence(pathB);
    const a = dump(pathA);
    const b = dump(pathB);
    expect(a.evaluations).toHaveLength(6);
    expect(a.members).toHaveLength(9);
    expect(b).toEqual(a);
    expect((a.evaluations as { id: number; eval_key: string }[]).map((e) => [e.id, e.eval_key])).toEqual([
      [1, 'key-5'],
      [2, 'key-2'],
      [3, 'key-9'],
      [4, 'key-1'],
      [5, 'key-3'],
      [6, 'key-7'],
    ]);
  });
});

describe('WAL readers', () => {
  it('lets a read-only connection read committed data while a writer transaction is open', () => {
    const path = tempDbPath();
    const { store, runId } = storeWithRun(path);
    store.writeGeneration({ runId, generation: 0, newEvaluations: [evaluation(0), evaluation(1)], members: [], stats: stats(2, 2), optimizerState: null });

    // (This part would also hold with a rollback journal, whose RESERVED lock lets readers in;
    // the next test is the one only WAL passes.)
    const writer = rawConnection(path);
    writer.exec('BEGIN IMMEDIATE');
    writer.prepare('UPDATE evaluations SET error = ? WHERE id = 1').run('changed, not committed');
    writer.prepare('DELETE FROM evaluations WHERE id = 2').run();
    const during = queryEvaluations(path, {});
    expect(during.rows.map((r) => [r['id'], r['error']])).toEqual([
      [1, null],
      [2, null],
    ]);
    writer.exec('COMMIT');
    const after = queryEvaluations(path, {});
    expect(after.rows.map((r) => [r['id'], r['error']])).toEqual([[1, 'changed, not committed']]);
  });

  it('lets the store commit a generation while a reader holds an open read transaction (snapshot stays stable)', () => {
    const path = tempDbPath();
    const { store, runId } = storeWithRun(path);
    store.writeGeneration({ runId, generation: 0, newEvaluations: [evaluation(0)], members: [], stats: stats(1, 1), optimizerState: null });

    const reader = rawConnection(path, { readonly: true, fileMustExist: true });
    const countStatement = reader.prepare('SELECT COUNT(*) AS n FROM evaluations');
    reader.exec('BEGIN');
    expect((countStatement.get() as { n: number }).n).toBe(1);
    // With a rollback journal this commit would wait for the reader's shared lock and fail with SQLITE_BUSY.
    store.writeGeneration({ runId, generation: 1, newEvaluations: [evaluation(1), evaluation(2)], members: [], stats: stats(2, 2), optimizerState: null });
    expect((countStatement.get() as { n: number }).n).toBe(1);
    reader.exec('COMMIT');
    expect((countStatement.get() as { n: number }).n).toBe(3);
  });
});
