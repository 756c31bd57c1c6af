/**
 * Migration 3 → 4 (src/store/migrations.ts): the metric columns of the renamed metrics
 * (bandwidth → first_mode_in_plane, resolution → encoder_resolution) keep their values under the new
 * names, the column sets follow, the results view is rebuilt, constraint columns keep their names.
 */
import { afterEach, describe, expect, it } from 'vitest';
import Database from 'better-sqlite3';
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { Store, type NewEvaluation } from '../../src/store/index.js';

const directories: string[] = [];
afterEach(() => {
  for (const d of directories.splice(0)) rmSync(d, { recursive: true, force: true });
});

function row(key: string, metrics: Record<string, number | null>): NewEvaluation {
  return {
    key, settingsHash: 's', variables: { crank_1: 0.3 }, metrics, constraints: { bandwidth: 0.5 },
    violation: 0, feasible: true, error: null, evalSeconds: 0.1,
  };
}

/** A store as version 3 wrote it: metric columns under the old names, user_version 3. */
function versionThreeStore(extraNewColumn: boolean): string {
  const directory = mkdtempSync(join(tmpdir(), 'loopsmith-rename-'));
  directories.push(directory);
  const path = join(directory, 'old.db');
  const store = Store.open(path);
  const studyId = store.upsertStudy({ name: 'sorter', architecture: 'five-bar', fileText: 'objectives: [{metric: bandwidth}]\n', settingsHash: 's' });
  const metrics = ['bandwidth', 'gci', 'resolution', ...(extraNewColumn ? ['first_mode_in_plane'] : [])];
  store.ensureColumns({ variables: [{ name: 'crank_1', type: 'real' }], metrics, constraints: ['bandwidth'] });
  const runId = store.createRun({ studyId, kind: 'optimize', seed: 0, settings: {}, workers: 1 });
  const rows = [row('a', { bandwidth: 42.5, gci: 0.8, resolution: 1.5e-6 })];
  if (extraNewColumn) rows.push(row('b', { first_mode_in_plane: 50, gci: 0.7 }));
  store.writeGeneration({
    runId, generation: 0, newEvaluations: rows, members: rows.map((r) => ({ key: r.key, rank: 0, crowding: Infinity })),
    stats: { evaluations: rows.length, newEvaluations: rows.length, failed: 0, feasibleCount: rows.length, hypervolume: null, elapsedSeconds: 1, evaluationsPerSecond: 1 },
    optimizerState: null,
  });
  store.close();
  const raw = new Database(path);
  raw.pragma('user_version = 3');
  raw.close();
  return path;
}

function columnNames(path: string): string[] {
  const db = new Database(path, { readonly: true });
  try {
    return (db.prepare("SELECT name FROM pragma_table_info('evaluations')").all() as { name: string }[]).map((r) => r.name);
  } finally {
    db.close();
  }
}

describe('store migration 3 → 4: renamed metrics', () => {
  it('renames m_bandwidth and m_resolution, keeps the values and the constraint column, follows in column sets and the view', () => {
    const path = versionThreeStore(false);
    expect(columnNames(path)).toContain('m_bandwidth');
    const store = Store.open(path);
    const found = store.findEvaluations(['a']).get('a')!;
    expect(found.metrics).toEqual({ first_mode_in_plane: 42.5, gci: 0.8, encoder_resolution: 1.5e-6 });
    expect(found.constraints).toEqual({ bandwidth: 0.5 }); // constraint names are the study's own
    store.close();
    const names = columnNames(path);
    expect(names).toEqual(expect.arrayContaining(['m_first_mode_in_plane', 'm_encoder_resolution', 'c_bandwidth']));
    expect(names).not.toContain('m_bandwidth');
    expect(names).not.toContain('m_resolution');
    const db = new Database(path, { readonly: true });
    expect(db.pragma('user_version', { simple: true })).toBe(4);
    expect(db.prepare('SELECT first_mode_in_plane FROM results').get()).toEqual({ first_mode_in_plane: 42.5 });
    expect((db.prepare('SELECT metrics FROM column_sets').get() as { metrics: string }).metrics).toBe('["encoder_resolution","first_mode_in_plane","gci"]');
    db.close();
  });

  it('with both columns present, fills the new one from the old and drops the old (nothing lost)', () => {
    const path = versionThreeStore(true);
    const store = Store.open(path);
    expect(store.findEvaluations(['a']).get('a')!.metrics['first_mode_in_plane']).toBe(42.5);
    expect(store.findEvaluations(['b']).get('b')!.metrics['first_mode_in_plane']).toBe(50);
    store.close();
    expect(columnNames(path)).not.toContain('m_bandwidth');
  });

  it('negative control: a version 4 store is left as it is (the step runs once)', () => {
    const path = versionThreeStore(false);
    Store.open(path).close();
    const before = columnNames(path);
    Store.open(path).close();
    expect(columnNames(path)).toEqual(before);
  });
});

describe('query with an old metric column name', () => {
  it('reads m_bandwidth as m_first_mode_in_plane on a migrated store, with a note; a store that still has the old column keeps it', async () => {
    const { queryEvaluations } = await import('../../src/store/query.js');
    const path = versionThreeStore(false);
    Store.open(path).close(); // migrates to the current schema
    const result = queryEvaluations(path, { where: 'm_bandwidth > 40', orderBy: 'm_bandwidth desc' });
    expect(result.rows.map((r) => r['m_first_mode_in_plane'])).toEqual([42.5]);
    expect(result.notes?.[0]).toMatch(/m_bandwidth is now m_first_mode_in_plane/);
    const none = queryEvaluations(path, { where: 'm_first_mode_in_plane > 40' });
    expect(none.notes).toBeUndefined();
    // Negative control: an unmigrated (read-only, version 3) store still has m_bandwidth, which is used as is.
    const old = versionThreeStore(false);
    const raw = queryEvaluations(old, { where: 'm_bandwidth > 40' });
    expect(raw.rows.length).toBe(1);
    expect(raw.notes).toBeUndefined();
  });
});
