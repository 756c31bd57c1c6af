/**
 * Schema creation and upgrade for the loopsmith SQLite store.
 *
 * The schema version is SQLite's `PRAGMA user_version`:
 *   0              a new, empty file: schema.sql is applied as a whole;
 *   1..current-1   written by older code: the numbered migrations below run in order;
 *   current        nothing to do;
 *   > current      written by newer code: refused with SchemaVersionError.
 * Every step runs in its own IMMEDIATE transaction, and the version is read again
 * inside that transaction, so two processes opening the same new file do not both
 * create the schema.
 */
import { LoopsmithUserError } from '../core/errors.js';
import { METRIC_ALIASES } from '../core/metrics.js';
import { readFileSync } from 'node:fs';
import type Database from 'better-sqlite3';

/** Schema version this code reads and writes; equals the `PRAGMA user_version` set by schema.sql. */
export const SCHEMA_VERSION = 4;

/** Raised when a database cannot be used at this schema version. */
export class SchemaVersionError extends LoopsmithUserError {
  override readonly name = 'SchemaVersionError';
}

/** One step from schema version `from` to `from + 1`. */
export interface Migration {
  readonly from: number;
  readonly description: string;
  /** Runs inside the step's transaction; must not change `user_version` itself. */
  apply(db: Database.Database): void;
}

/** Columns of the run-ownership lock (version 3); schema.sql has the same definitions. */
export const RUN_OWNER_COLUMNS: readonly string[] = [
  'owner_pid INTEGER NULL',   // process writing the run; NULL when no process owns it
  'owner_host TEXT NULL',     // host name of that process
  'owner_since TEXT NULL',    // ISO 8601 UTC: when that process took the run
  'owner_token TEXT NULL',    // start time of that process as the OS reports it (tells a reused pid apart)
  'heartbeat_at TEXT NULL',   // ISO 8601 UTC: the owner's last sign of life (claim or generation write)
  'command TEXT NULL',        // the command line that writes the run: the one that resumes it
];

/**
 * Convergence record of optimization runs: why a run ended (`runs.end_reason`), the termination it
 * used (`runs.termination_json`), and per generation the archive size and the relative archive
 * hypervolume improvement over the convergence window (`generation_stats.archive_size`,
 * `generation_stats.hv_improvement`). Additive: older runs keep NULL in the new columns.
 */
export const MIGRATION_RUN_END_REASON_AND_CONVERGENCE: Migration = {
  from: 1,
  description: 'runs.end_reason and runs.termination_json; generation_stats.archive_size and generation_stats.hv_improvement',
  apply(db) {
    db.exec(`
      ALTER TABLE runs ADD COLUMN end_reason TEXT NULL CHECK (end_reason IN ('converged', 'budget'));
      ALTER TABLE runs ADD COLUMN termination_json TEXT NULL;
      ALTER TABLE generation_stats ADD COLUMN archive_size INTEGER NULL;
      ALTER TABLE generation_stats ADD COLUMN hv_improvement REAL NULL;
    `);
  },
};

/** Run-ownership lock of a run (owner process, host, start, heartbeat) and the command that resumes it. */
export const MIGRATION_RUN_OWNER: Migration = {
  from: 2,
  description: 'runs: ownership lock (owner process, host, start, heartbeat) and the command that resumes the run',
  apply(db) {
    for (const column of RUN_OWNER_COLUMNS) db.exec(`ALTER TABLE runs ADD COLUMN ${column}`);
  },
};

/**
 * Renamed metrics (src/core/metrics.ts METRIC_ALIASES: bandwidth → first_mode_in_plane, resolution →
 * encoder_resolution): the metric columns `m_<old>` are renamed to `m_<new>` (their values keep their
 * meaning), the names in `column_sets.metrics` follow, and the `results` view is rebuilt. A store that
 * already has both columns keeps the new one and fills its empty cells from the old one, which is then
 * dropped. Constraint columns (`c_…`) keep the names the study gave its constraints.
 */
export const MIGRATION_RENAMED_METRICS: Migration = {
  from: 3,
  description: 'renamed metrics: m_bandwidth → m_first_mode_in_plane, m_resolution → m_encoder_resolution (columns, column sets, results view)',
  apply(db) {
    const columns = (): Set<string> => new Set((db.prepare("SELECT name FROM pragma_table_info('evaluations')").all() as { name: string }[]).map((r) => r.name));
    db.exec('DROP VIEW IF EXISTS results');
    for (const [old, now] of Object.entries(METRIC_ALIASES)) {
      const have = columns();
      if (!have.has(`m_${old}`)) continue;
      if (!have.has(`m_${now}`)) {
        db.exec(`ALTER TABLE evaluations RENAME COLUMN "m_${old}" TO "m_${now}"`);
      } else {
        db.exec(`UPDATE evaluations SET "m_${now}" = "m_${old}" WHERE "m_${now}" IS NULL`);
        db.exec(`ALTER TABLE evaluations DROP COLUMN "m_${old}"`);
      }
    }
    renameColumnSetMetrics(db);
    rebuildResultsView(db);
  },
};

/** column_sets.metrics with the current metric names (sorted again); a set that becomes equal to an existing one is merged into it. */
function renameColumnSetMetrics(db: Database.Database): void {
  const rows = db.prepare('SELECT id, variables, metrics, constraints FROM column_sets').all() as { id: number; variables: string; metrics: string; constraints: string }[];
  for (const row of rows) {
    const names = JSON.parse(row.metrics) as string[];
    if (!names.some((n) => n in METRIC_ALIASES)) continue;
    const renamed = JSON.stringify([...new Set(names.map((n) => METRIC_ALIASES[n] ?? n))].sort());
    const same = db.prepare('SELECT id FROM column_sets WHERE variables = ? AND metrics = ? AND constraints = ?').get(row.variables, renamed, row.constraints) as { id: number } | undefined;
    if (same) {
      db.prepare('UPDATE evaluations SET column_set_id = ? WHERE column_set_id = ?').run(same.id, row.id);
      db.prepare('DELETE FROM column_sets WHERE id = ?').run(row.id);
    } else {
      db.prepare('UPDATE column_sets SET metrics = ? WHERE id = ?').run(renamed, row.id);
    }
  }
}

/**
 * The `results` view over every evaluations column, v_/m_/c_ columns named without their prefix
 * unless that clashes (the rule of Store.ensureColumns, docs/store.md).
 */
export function rebuildResultsView(db: Database.Database): void {
  const info = db.prepare("SELECT name FROM pragma_table_info('evaluations') ORDER BY cid").all() as { name: string }[];
  const real = new Set(info.map((r) => r.name));
  const used = new Set<string>();
  const items: string[] = [];
  const quote = (name: string): string => `"${name.replace(/"/g, '""')}"`;
  for (const { name } of info) {
    if (name === 'column_set_id') continue;
    let friendly = name;
    const prefix = ['v_', 'm_', 'c_'].find((p) => name.startsWith(p));
    if (prefix !== undefined) {
      const stripped = name.slice(prefix.length);
      if (!real.has(stripped) && !used.has(stripped)) friendly = stripped;
    }
    used.add(friendly);
    items.push(friendly === name ? quote(name) : `${quote(name)} AS ${quote(friendly)}`);
  }
  db.exec('DROP VIEW IF EXISTS results');
  db.exec(`CREATE VIEW results AS SELECT ${items.join(', ')} FROM evaluations`);
}

/**
 * Steps from older schema versions, in order. A new version N adds `{ from: N - 1, ... }` here and
 * sets `PRAGMA user_version = N` in schema.sql.
 */
export const MIGRATIONS: readonly Migration[] = [MIGRATION_RUN_END_REASON_AND_CONVERGENCE, MIGRATION_RUN_OWNER, MIGRATION_RENAMED_METRICS];

/** Full text of schema.sql, read next to this module (src/store in tests, dist/store when built). */
export function readSchemaSql(): string {
  return readFileSync(new URL('./schema.sql', import.meta.url), 'utf8');
}

export interface MigrateOptions {
  /** Version to reach; defaults to SCHEMA_VERSION (other values are for tests of the mechanism). */
  readonly targetVersion?: number;
  /** Upgrade steps; defaults to MIGRATIONS. */
  readonly migrations?: readonly Migration[];
  /** Text that creates a fresh database at targetVersion; defaults to schema.sql. */
  readonly schemaSql?: string;
  /** Shown in error messages. */
  readonly label?: string;
}

export interface MigrateResult {
  readonly fromVersion: number;
  readonly toVersion: number;
}

function userVersion(db: Database.Database): number {
  const value: unknown = db.pragma('user_version', { simple: true });
  if (typeof value !== 'number') throw new SchemaVersionError(`unexpected PRAGMA user_version result: ${String(value)}`);
  return value;
}

function userTableCount(db: Database.Database): number {
  const row = db
    .prepare("SELECT COUNT(*) AS n FROM sqlite_schema WHERE name NOT LIKE 'sqlite\\_%' ESCAPE '\\'")
    .get() as { n: number };
  return row.n;
}

function tooNewMessage(label: string, found: number, target: number): string {
  return (
    `database ${label} has schema version ${found}, but this loopsmith only understands versions up to ${target}; ` +
    `it was written by a newer loopsmith. Upgrade loopsmith, or use a different database file.`
  );
}

/**
 * Brings the schema of `db` to the target version. Call it with foreign keys in
 * their normal (ON) state; a future migration that rebuilds a table must turn
 * them off itself outside its step, as SQLite ignores that pragma inside a transaction.
 */
export function migrate(db: Database.Database, options: MigrateOptions = {}): MigrateResult {
  const targetVersion = options.targetVersion ?? SCHEMA_VERSION;
  const migrations = options.migrations ?? MIGRATIONS;
  const label = options.label ?? db.name;
  const fromVersion = userVersion(db);

  if (fromVersion > targetVersion) throw new SchemaVersionError(tooNewMessage(label, fromVersion, targetVersion));
  if (fromVersion === targetVersion) return { fromVersion, toVersion: targetVersion };

  if (fromVersion === 0) {
    const schemaSql = options.schemaSql ?? readSchemaSql();
    db.transaction(() => {
      const current = userVersion(db);
      if (current !== 0) return; // another process created it meanwhile; handled below
      if (userTableCount(db) > 0) {
        throw new SchemaVersionError(
          `database ${label} has tables but no loopsmith schema version (user_version 0); it is not a loopsmith store`,
        );
      }
      db.exec(schemaSql);
      const created = userVersion(db);
      if (created !== targetVersion) {
        throw new SchemaVersionError(
          `schema.sql sets user_version ${created}, but the code expects ${targetVersion}; the two must be changed together`,
        );
      }
    }).immediate();
    const after = userVersion(db);
    if (after === targetVersion) return { fromVersion, toVersion: targetVersion };
    return { fromVersion, toVersion: migrate(db, { ...options, label }).toVersion };
  }

  let version = fromVersion;
  while (version < targetVersion) {
    const step = migrations.find((m) => m.from === version);
    if (step === undefined) {
      throw new SchemaVersionError(
        `database ${label} has schema version ${version}, and there is no migration from it towards ${targetVersion}`,
      );
    }
    db.transaction(() => {
      const current = userVersion(db);
      if (current !== step.from) return; // upgraded by another process meanwhile
      step.apply(db);
      db.pragma(`user_version = ${step.from + 1}`);
    }).immediate();
    version = userVersion(db);
    if (version > targetVersion) throw new SchemaVersionError(tooNewMessage(label, version, targetVersion));
  }
  return { fromVersion, toVersion: version };
}
