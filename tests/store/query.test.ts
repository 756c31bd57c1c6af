import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import Database from 'better-sqlite3';
import { createHash } from 'node:crypto';
import { existsSync, mkdtempSync, readFileSync, rmSync, statSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { QueryError, Store, assertReadOnlyStatement, checkWhereExpression, queryEvaluations } from '../../src/store/index.js';
import type { NewEvaluation } from '../../src/store/index.js';

let directory = '';
let dbPath = '';
let firstRunId = 0;
let secondRunId = 0;
const written: NewEvaluation[] = [];

function designEvaluation(index: number): NewEvaluation {
  const area = index * 0.01;
  const feasible = index % 3 !== 0;
  return {
    key: `design-${index}`,
    settingsHash: 'settings',
    variables: { l1: 0.2 + index * 0.001, base: index % 2 === 0 ? 'wide' : 'narrow' },
    metrics: { workspace_area: area, max_torque: 10 - index },
    constraints: { min_transmission: feasible ? 0.1 : -0.1 },
    violation: feasible ? 0 : 0.1,
    feasible,
    error: index === 4 ? 'text with ; and -- inside' : null,
    evalSeconds: 1,
  };
}

function fileHash(path: string): string {
  return createHash('sha256').update(readFileSync(path)).digest('hex');
}

function storedCount(): number {
  const db = new Database(dbPath, { readonly: true, fileMustExist: true });
  try {
    return (db.prepare('SELECT COUNT(*) AS n FROM evaluations').get() as { n: number }).n;
  } finally {
    db.close();
  }
}

function schemaObjects(): string[] {
  const db = new Database(dbPath, { readonly: true, fileMustExist: true });
  try {
    return (db.prepare('SELECT type, name FROM sqlite_schema ORDER BY name').all() as { type: string; name: string }[]).map(
      (r) => `${r.type}:${r.name}`,
    );
  } finally {
    db.close();
  }
}

beforeAll(() => {
  directory = mkdtempSync(join(tmpdir(), 'loopsmith-query-'));
  dbPath = join(directory, 'results.db');
  const store = Store.open(dbPath);
  const studyId = store.upsertStudy({ name: 'q', architecture: '5R', fileText: 'q', settingsHash: 'settings' });
  store.ensureColumns({
    variables: [
      { name: 'l1', type: 'real' },
      { name: 'base', type: 'text' },
    ],
    metrics: ['workspace_area', 'max_torque'],
    constraints: ['min_transmission'],
  });
  for (let i = 0; i < 10; i += 1) written.push(designEvaluation(i));
  const statsFor = (n: number) => ({ evaluations: n, newEvaluations: n, failed: 0, feasibleCount: n, hypervolume: null, elapsedSeconds: 1, evaluationsPerSecond: n });
  firstRunId = store.createRun({ studyId, kind: 'optimize', seed: 1, settings: {}, workers: 1 });
  store.writeGeneration({
    runId: firstRunId,
    generation: 0,
    newEvaluations: written.slice(0, 6),
    members: written.slice(0, 6).map((e) => ({ key: e.key, rank: 0, crowding: 0 })),
    stats: statsFor(6),
    optimizerState: null,
  });
  secondRunId = store.createRun({ studyId, kind: 'sweep', seed: 1, settings: {}, workers: 1 });
  store.writeGeneration({
    runId: secondRunId,
    generation: 0,
    newEvaluations: written.slice(6),
    members: [...written.slice(6), written[1]!].map((e) => ({ key: e.key, rank: 0, crowding: 0 })),
    stats: statsFor(5),
    optimizerState: null,
  });
  store.close();
});

afterAll(() => {
  rmSync(directory, { recursive: true, force: true });
});

describe('queryEvaluations', () => {
  it('filters with a where expression and returns prefixed columns (column_set_id hidden)', () => {
    const result = queryEvaluations(dbPath, { where: 'm_workspace_area > 0.05 AND feasible = 1' });
    const expected = written.filter((e) => (e.metrics['workspace_area'] as number) > 0.05 && e.feasible).map((e) => e.key);
    expect(expected.length).toBeGreaterThan(0);
    expect(result.rows.map((r) => r['eval_key'])).toEqual(expected);
    expect(result.columns).toEqual([
      'id',
      'eval_key',
      'settings_hash',
      'first_run_id',
      'violation',
      'feasible',
      'error',
      'eval_seconds',
      'v_l1',
      'v_base',
      'm_workspace_area',
      'm_max_torque',
      'c_min_transmission',
    ]);
  });

  it('orders by a validated column, limits, selects columns, and filters by run membership', () => {
    const ordered = queryEvaluations(dbPath, { orderBy: 'm_max_torque asc', limit: 3, columns: ['eval_key', 'm_max_torque'] });
    expect(ordered.columns).toEqual(['eval_key', 'm_max_torque']);
    expect(ordered.rows).toEqual([
      { eval_key: 'design-9', m_max_torque: 1 },
      { eval_key: 'design-8', m_max_torque: 2 },
      { eval_key: 'design-7', m_max_torque: 3 },
    ]);
    const descending = queryEvaluations(dbPath, { orderBy: '  v_l1   DESC ', limit: 1 });
    expect(descending.rows[0]?.['eval_key']).toBe('design-9');
    expect(queryEvaluations(dbPath, { limit: 0 }).rows).toEqual([]);

    const ofSecondRun = queryEvaluations(dbPath, { runId: secondRunId, columns: ['eval_key'] });
    expect(ofSecondRun.rows.map((r) => r['eval_key'])).toEqual(['design-1', 'design-6', 'design-7', 'design-8', 'design-9']);
    const ofFirstRun = queryEvaluations(dbPath, { runId: firstRunId, where: "v_base = 'wide'", columns: ['eval_key'] });
    expect(ofFirstRun.rows.map((r) => r['eval_key'])).toEqual(['design-0', 'design-2', 'design-4']);
  });

  it('accepts ordinary read-only expressions: CASE ... END, functions, subqueries, quoted text with ; and --', () => {
    expect(
      queryEvaluations(dbPath, { where: "CASE WHEN v_base = 'wide' THEN 1 ELSE 0 END = 1 AND abs(m_max_torque) < 9" }).rows.map(
        (r) => r['eval_key'],
      ),
    ).toEqual(['design-2', 'design-4', 'design-6', 'design-8']);
    expect(
      queryEvaluations(dbPath, { where: 'id IN (SELECT evaluation_id FROM generation_members WHERE position = 0)' }).rows.map(
        (r) => r['eval_key'],
      ),
    ).toEqual(['design-0', 'design-6']);
    expect(queryEvaluations(dbPath, { where: "instr(error, ';') > 0" }).rows.map((r) => r['eval_key'])).toEqual(['design-4']);
    expect(queryEvaluations(dbPath, { where: "error = 'x;y'" }).rows).toEqual([]);
  });

  describe('refusals leave the database file byte-for-byte unchanged', () => {
    const refusedWhere: [string, RegExp][] = [
      ['1; DROP TABLE evaluations', /single expression/],
      ['1) ; DROP TABLE evaluations; SELECT (1', /closes a parenthesis|single expression/],
      ['feasible = 1) OR (1 = 1', /closes a parenthesis/],
      ['(feasible = 1', /open/],
      ['feasible = 1 -- AND violation = 0', /comment/],
      ['feasible = 1 /* cut here', /comment/],
      ["error = '--'", /comment/],
      ["ATTACH DATABASE 'evil.db' AS evil", /ATTACH/],
      ['DETACH DATABASE main', /DETACH/],
      ['PRAGMA user_version = 7', /PRAGMA/],
      ['(DELETE FROM evaluations)', /DELETE/],
      ['(UPDATE evaluations SET feasible = 0)', /UPDATE/],
      ['vacuum', /VACUUM/],
      ["(select 1 from evaluations) OR 'unterminated", /unterminated/],
      ['no_such_column > 1', /invalid where expression: no such column/],
      ['feasible = = 1', /invalid where expression/],
    ];

    let hashBefore = '';
    let countBefore = 0;
    let objectsBefore: string[] = [];
    beforeAll(() => {
      hashBefore = fileHash(dbPath);
      countBefore = storedCount();
      objectsBefore = schemaObjects();
      expect(countBefore).toBe(10);
    });

    function expectUntouched(): void {
      expect(fileHash(dbPath)).toBe(hashBefore);
      const walPath = `${dbPath}-wal`;
      if (existsSync(walPath)) expect(statSync(walPath).size).toBe(0);
      expect(storedCount()).toBe(countBefore);
      expect(schemaObjects()).toEqual(objectsBefore);
    }

    it.each(refusedWhere)('where %j is refused', (where, message) => {
      expect(() => queryEvaluations(dbPath, { where })).toThrow(QueryError);
      expect(() => queryEvaluations(dbPath, { where })).toThrow(message);
      expectUntouched();
    });

    const refusedOrderBy: [string, RegExp][] = [
      ['id; DROP TABLE evaluations', /must be a column name/],
      ['id desc, (SELECT 1)', /must be a column name/],
      ['random()', /must be a column name/],
      ['no_such_column', /does not exist/],
      ['id sideways', /must be a column name/],
    ];
    it.each(refusedOrderBy)('orderBy %j is refused', (orderBy, message) => {
      expect(() => queryEvaluations(dbPath, { orderBy })).toThrow(QueryError);
      expect(() => queryEvaluations(dbPath, { orderBy })).toThrow(message);
      expectUntouched();
    });

    it('refuses bad limits, run ids and column names', () => {
      expect(() => queryEvaluations(dbPath, { limit: -1 })).toThrow(QueryError);
      expect(() => queryEvaluations(dbPath, { limit: 1.5 })).toThrow(QueryError);
      expect(() => queryEvaluations(dbPath, { runId: 0.5 })).toThrow(QueryError);
      expect(() => queryEvaluations(dbPath, { columns: ['id; DROP TABLE evaluations'] })).toThrow(/does not exist/);
      expectUntouched();
    });

    it('refuses a missing database file without creating it', () => {
      const missing = join(directory, 'missing.db');
      expect(() => queryEvaluations(missing, {})).toThrow(/cannot open database/);
      expect(existsSync(missing)).toBe(false);
    });

    it('refuses any prepared statement that SQLite does not call a read-only reader', () => {
      const db = new Database(dbPath, { readonly: true, fileMustExist: true });
      try {
        // DELETE ... RETURNING returns rows (reader) but writes (not readonly).
        const deleting = db.prepare('DELETE FROM evaluations RETURNING id');
        expect(deleting.reader).toBe(true);
        expect(() => assertReadOnlyStatement(deleting)).toThrow(/not a read-only query/);
        expect(() => assertReadOnlyStatement(db.prepare('CREATE TABLE x (y)'))).toThrow(QueryError);
        expect(() => assertReadOnlyStatement(db.prepare('SELECT id FROM evaluations'))).not.toThrow();
      } finally {
        db.close();
      }
      expectUntouched();
    });

    it('checkWhereExpression accepts quoted identifiers and keywords inside literals', () => {
      expect(() => checkWhereExpression('"m_workspace_area" > 0 AND error <> \'drop table\' AND [v_l1] > 0')).not.toThrow();
      expect(() => queryEvaluations(dbPath, { where: '"m_workspace_area" > 0 AND error <> \'drop table\' AND [v_l1] > 0' })).not.toThrow();
      expectUntouched();
    });
  });

  it('reads while a store has the database open for writing', () => {
    const store = Store.open(dbPath);
    try {
      const studyId = store.upsertStudy({ name: 'q', architecture: '5R', fileText: 'q', settingsHash: 'settings' });
      const runId = store.createRun({ studyId, kind: 'evaluate', seed: 2, settings: {}, workers: 1 });
      store.writeGeneration({
        runId,
        generation: 0,
        newEvaluations: [designEvaluation(10)],
        members: [{ key: 'design-10', rank: 0, crowding: 0 }],
        stats: { evaluations: 1, newEvaluations: 1, failed: 0, feasibleCount: 1, hypervolume: null, elapsedSeconds: 1, evaluationsPerSecond: 1 },
        optimizerState: null,
      });
      expect(queryEvaluations(dbPath, { runId, columns: ['eval_key'] }).rows).toEqual([{ eval_key: 'design-10' }]);
    } finally {
      store.close();
    }
  });
});
