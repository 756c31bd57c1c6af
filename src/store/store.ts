/**
 * SQLite store of loopsmith studies, runs and evaluations.
 *
 * The store keeps rows; it evaluates nothing and knows nothing of the optimizer
 * beyond the opaque `optimizer_state` text it is handed with each generation.
 * See docs/store.md for the schema and the rules on numbers (doubles round-trip
 * exactly, ±Infinity round-trips, NaN is stored as NULL, -0 reads back as 0).
 */
import { LoopsmithUserError } from '../core/errors.js';
import Database from 'better-sqlite3';
import { createHash } from 'node:crypto';
import { accessSync, constants, existsSync, mkdirSync, readFileSync } from 'node:fs';
import { hostname } from 'node:os';
import { dirname, resolve } from 'node:path';
import { migrate, SCHEMA_VERSION, SchemaVersionError } from './migrations.js';

// A store in a folder nobody may write is opened as an immutable URI (file:...?immutable=1); SQLite
// reads this setting when better-sqlite3 loads its addon, on the first connection of the process.
process.env['SQLITE_USE_URI'] ??= '1';

export type RunKind = 'optimize' | 'sweep' | 'rescore' | 'evaluate';
export type RunStatus = 'running' | 'stopped' | 'finished' | 'failed';
export type VariableType = 'real' | 'text';

const RUN_KINDS: readonly RunKind[] = ['optimize', 'sweep', 'rescore', 'evaluate'];
const RUN_STATUSES: readonly RunStatus[] = ['running', 'stopped', 'finished', 'failed'];

/** Names of variables, metrics and constraints; also the part after the column prefix. */
export const COLUMN_NAME_PATTERN = /^[a-z][a-z0-9_]*$/;
export const VARIABLE_PREFIX = 'v_';
export const METRIC_PREFIX = 'm_';
export const CONSTRAINT_PREFIX = 'c_';

/** Fixed columns of `evaluations`, in table order. */
export const EVALUATION_BASE_COLUMNS: readonly string[] = [
  'id',
  'eval_key',
  'settings_hash',
  'first_run_id',
  'column_set_id',
  'violation',
  'feasible',
  'error',
  'eval_seconds',
];

/** Keys per IN (...) query in findEvaluations; well under SQLite's bound-parameter limit. */
const KEY_LOOKUP_CHUNK = 500;

/** Busy timeout for lock waits between processes [ms]. */
const BUSY_TIMEOUT_MS = 10_000;

/** SQLITE_BUSY in any of its forms (a lock another connection holds). */
function isBusyError(error: unknown): boolean {
  const code = (error as { code?: unknown }).code;
  return error instanceof Error && ((typeof code === 'string' && code.startsWith('SQLITE_BUSY')) || /database is locked/.test(error.message));
}

export interface ColumnSet {
  variables: readonly { name: string; type: VariableType }[];
  metrics: readonly string[];
  constraints: readonly string[];
}

export interface NewEvaluation {
  key: string;
  settingsHash: string;
  variables: Record<string, number | string>;
  metrics: Record<string, number | null>;
  constraints: Record<string, number | null>;
  violation: number;
  feasible: boolean;
  error: string | null;
  /** Time the evaluation took [s]. */
  evalSeconds: number | null;
}

export interface StoredEvaluation extends NewEvaluation {
  id: number;
  firstRunId: number;
}

/** A stored evaluation as a member of one generation's population. */
export interface MemberEvaluation extends StoredEvaluation {
  position: number;
  rank: number;
  crowding: number;
}

export interface GenerationStats {
  /** Designs in this generation. */
  evaluations: number;
  /** Designs not served from the cache. */
  newEvaluations: number;
  failed: number;
  feasibleCount: number;
  hypervolume: number | null;
  /** Wall time of the generation [s]. */
  elapsedSeconds: number;
  /** [1/s] */
  evaluationsPerSecond: number;
  /** Designs in the optimizer's archive after this generation (absent/null: not recorded). */
  archiveSize?: number | null;
  /** Relative archive hypervolume improvement over the convergence window (absent/null: not yet known). */
  hvImprovement?: number | null;
}

export interface GenerationWrite {
  runId: number;
  generation: number;
  newEvaluations: readonly NewEvaluation[];
  /** In population order; each key is either in newEvaluations or already stored. */
  members: readonly { key: string; rank: number; crowding: number }[];
  stats: GenerationStats;
  optimizerState: string | null;
}

export interface GenerationStatsRow extends GenerationStats {
  runId: number;
  generation: number;
}

export interface RunRow {
  id: number;
  studyId: number;
  kind: RunKind;
  parentRunId: number | null;
  seed: number;
  /** Canonical JSON of the run settings (object keys sorted). */
  settingsJson: string;
  status: RunStatus;
  workers: number;
  /** ISO 8601 UTC. */
  startedAt: string;
  /** ISO 8601 UTC; set when stopped, finished or failed, cleared when running again. */
  finishedAt: string | null;
  /** Active time summed over the sessions of the run [s]. */
  elapsedSeconds: number;
  generationsDone: number;
  optimizerState: string | null;
  message: string | null;
  /** Why a finished optimization run ended ('converged' or 'budget'); null otherwise. */
  endReason: RunEndReason | null;
  /** Canonical JSON of the termination the run used; null when not recorded. */
  terminationJson: string | null;
  /** Owner of a running run (null when none, or in a store older than schema version 3). */
  ownerPid: number | null;
  ownerHost: string | null;
  ownerSince: string | null;
  ownerToken: string | null;
  heartbeatAt: string | null;
  /** The command line that writes the run (and resumes it), when known. */
  command: string | null;
}

export type RunEndReason = 'converged' | 'budget';

export interface StudyRow {
  id: number;
  name: string;
  architecture: string;
  fileText: string;
  fileHash: string;
  settingsHash: string;
  createdAt: string;
}

export interface StoreOptions {
  /** Source of "now" for timestamps and elapsed time; defaults to the system clock. */
  readonly clock?: () => Date;
  /**
   * 'write': the store must be writable (created when missing); a read-only file or folder is refused
   * with a clear message. 'read': never writes (no migration, no WAL switch); the file must exist.
   * 'auto' (default): writes when it can, reads only when the file or its folder is not writable.
   */
  readonly access?: 'write' | 'read' | 'auto';
}

/** The process that owns (writes) a run. */
export interface RunOwner {
  readonly pid: number;
  readonly host: string;
  /** ISO 8601 UTC. */
  readonly since: string;
  /** The process's start time as the OS reports it (Linux: /proc/PID/stat), or null. */
  readonly token: string | null;
}

/** A run's status as a user sees it: 'running' of a process that is gone reads 'interrupted'. */
export type RunState = RunStatus | 'interrupted';

/** A run owned by a process on another host counts as alive for this long after its last sign of life. */
export const REMOTE_OWNER_STALE_MS = 30 * 60 * 1000;

/** Start time of a process as Linux reports it (field 22 of /proc/PID/stat), or null elsewhere. */
export function processStartToken(pid: number): string | null {
  try {
    const stat = readFileSync(`/proc/${pid}/stat`, 'utf8');
    const fields = stat.slice(stat.lastIndexOf(')') + 2).split(' ');
    return fields[19] ?? null;
  } catch {
    return null;
  }
}

/** This process as a run owner. */
export function currentOwner(now: Date = new Date()): RunOwner {
  return { pid: process.pid, host: hostname(), since: now.toISOString(), token: processStartToken(process.pid) };
}

/**
 * Whether the process that owns a run still lives: on this host by asking the OS (a reused pid is told
 * apart by its start time); on another host by its last sign of life (REMOTE_OWNER_STALE_MS).
 */
export function ownerAlive(run: Pick<RunRow, 'ownerPid' | 'ownerHost' | 'ownerToken' | 'heartbeatAt'>, now: Date = new Date()): boolean {
  if (run.ownerPid === null || run.ownerPid === undefined) return false;
  if (run.ownerHost !== hostname()) {
    const last = run.heartbeatAt ? Date.parse(run.heartbeatAt) : Number.NaN;
    return Number.isFinite(last) && now.getTime() - last < REMOTE_OWNER_STALE_MS;
  }
  try {
    process.kill(run.ownerPid, 0);
  } catch (error) {
    if ((error as NodeJS.ErrnoException).code === 'ESRCH') return false;
  }
  const token = processStartToken(run.ownerPid);
  return !(run.ownerToken && token !== null && token !== run.ownerToken);
}

/** The state to show for a run: a 'running' run whose owner is gone was interrupted (killed, crashed, power lost). */
export function runState(run: RunRow, now: Date = new Date()): RunState {
  if (run.status !== 'running') return run.status;
  return ownerAlive(run, now) ? 'running' : 'interrupted';
}

/** Why a run cannot be taken: the living process that writes it. */
export function runBusyMessage(path: string, run: RunRow): string {
  const where = run.ownerHost === hostname() ? `process ${run.ownerPid} on this host (${run.ownerHost})` : `process ${run.ownerPid} on host ${run.ownerHost}`;
  return (
    `${path}: run ${run.id} is being written by ${where} since ${run.ownerSince ?? run.startedAt}` +
    `${run.heartbeatAt ? `, last generation stored ${run.heartbeatAt}` : ''}; ` +
    `wait for it to finish (loopsmith runs ${path}), stop it (Ctrl-C in its terminal, or kill ${run.ownerPid}), or write to another --db`
  );
}

/** Whether this process owns the run. */
function ownedByMe(run: Pick<RunRow, 'ownerPid' | 'ownerHost'>): boolean {
  return run.ownerPid === process.pid && run.ownerHost === hostname();
}

/** Raised for calls the store refuses (bad names, unknown columns, out-of-order generations...). */
export class StoreError extends LoopsmithUserError {
  override readonly name = 'StoreError';
}

/**
 * JSON with object keys sorted at every level, otherwise as JSON.stringify
 * (so undefined members are dropped and non-finite numbers become null).
 * `undefined` as a whole becomes "null".
 */
export function canonicalJson(value: unknown): string {
  const text = JSON.stringify(value, (_key, member: unknown) => {
    if (member === null || typeof member !== 'object' || Array.isArray(member)) return member;
    const sorted: Record<string, unknown> = {};
    for (const name of Object.keys(member).sort()) sorted[name] = (member as Record<string, unknown>)[name];
    return sorted;
  }) as string | undefined;
  return text ?? 'null';
}

/** sha256 of UTF-8 text, lowercase hex. */
export function sha256Hex(text: string): string {
  return createHash('sha256').update(text, 'utf8').digest('hex');
}

/** Double-quoted SQL identifier. */
export function quoteIdentifier(name: string): string {
  return `"${name.replaceAll('"', '""')}"`;
}

/** Names of the per-study columns currently in `evaluations`, without prefixes, in table order. */
interface EvaluationColumnLayout {
  variables: { name: string; type: VariableType }[];
  metrics: string[];
  constraints: string[];
}

/** The names one evaluation row carries (sorted), and their column names. */
interface ColumnSetNames {
  variables: string[];
  metrics: string[];
  constraints: string[];
}

/** Values of the insert statement after key, settings hash, run and column set: violation, feasible, error, eval_seconds. */
const FIXED_INSERT_VALUES = 4;

/** Where each per-study column's value goes among the insert statement's values (after the fixed ones). */
interface InsertSlots {
  readonly count: number;
  readonly variables: ReadonlyMap<string, { readonly index: number; readonly type: VariableType }>;
  readonly metrics: ReadonlyMap<string, number>;
  readonly constraints: ReadonlyMap<string, number>;
}

/** A new evaluation checked and laid out for the insert statement. */
interface PreparedEvaluation {
  readonly key: string;
  readonly settingsHash: string;
  readonly names: ColumnSetNames;
  readonly signature: string;
  readonly values: unknown[];
}

function sameStrings(a: readonly string[], b: readonly string[]): boolean {
  if (a.length !== b.length) return false;
  for (let k = 0; k < a.length; k++) if (a[k] !== b[k]) return false;
  return true;
}

interface TableInfoRow {
  cid: number;
  name: string;
  type: string;
}

interface RunDbRow {
  id: number;
  study_id: number;
  kind: RunKind;
  parent_run_id: number | null;
  seed: number;
  settings_json: string;
  status: RunStatus;
  workers: number;
  started_at: string;
  finished_at: string | null;
  elapsed_seconds: number;
  active_since: string | null;
  generations_done: number;
  optimizer_state: string | null;
  message: string | null;
  end_reason: RunEndReason | null;
  termination_json: string | null;
  owner_pid?: number | null;
  owner_host?: string | null;
  owner_since?: string | null;
  owner_token?: string | null;
  heartbeat_at?: string | null;
  command?: string | null;
}

interface StatsDbRow {
  run_id: number;
  generation: number;
  evaluations: number;
  new_evaluations: number;
  failed: number;
  feasible_count: number;
  hypervolume: number | null;
  elapsed_seconds: number;
  evaluations_per_second: number;
  archive_size: number | null;
  hv_improvement: number | null;
}

interface StudyDbRow {
  id: number;
  name: string;
  architecture: string;
  file_text: string;
  file_hash: string;
  settings_hash: string;
  created_at: string;
}

interface ColumnSetDbRow {
  id: number;
  variables: string;
  metrics: string;
  constraints: string;
}

type EvaluationDbRow = Record<string, unknown>;

/** A column set's names are not all in this connection's cached column list (another process added columns). */
class StaleColumnsError extends Error {}

function toRunRow(row: RunDbRow): RunRow {
  return {
    id: row.id,
    studyId: row.study_id,
    kind: row.kind,
    parentRunId: row.parent_run_id,
    seed: row.seed,
    settingsJson: row.settings_json,
    status: row.status,
    workers: row.workers,
    startedAt: row.started_at,
    finishedAt: row.finished_at,
    elapsedSeconds: row.elapsed_seconds,
    generationsDone: row.generations_done,
    optimizerState: row.optimizer_state,
    message: row.message,
    endReason: row.end_reason ?? null,
    terminationJson: row.termination_json ?? null,
    ownerPid: row.owner_pid ?? null,
    ownerHost: row.owner_host ?? null,
    ownerSince: row.owner_since ?? null,
    ownerToken: row.owner_token ?? null,
    heartbeatAt: row.heartbeat_at ?? null,
    command: row.command ?? null,
  };
}

function toStatsRow(row: StatsDbRow): GenerationStatsRow {
  return {
    runId: row.run_id,
    generation: row.generation,
    evaluations: row.evaluations,
    newEvaluations: row.new_evaluations,
    failed: row.failed,
    feasibleCount: row.feasible_count,
    hypervolume: row.hypervolume,
    elapsedSeconds: row.elapsed_seconds,
    evaluationsPerSecond: row.evaluations_per_second,
    archiveSize: row.archive_size ?? null,
    hvImprovement: row.hv_improvement ?? null,
  };
}

function checkName(kind: string, name: string): void {
  if (!COLUMN_NAME_PATTERN.test(name)) {
    throw new StoreError(`${kind} name ${JSON.stringify(name)} is not allowed: names must match ${COLUMN_NAME_PATTERN.source}`);
  }
}

function checkInteger(what: string, value: number): void {
  if (!Number.isSafeInteger(value)) throw new StoreError(`${what} must be an integer, got ${value}`);
}

function checkNumber(what: string, value: number): void {
  if (typeof value !== 'number' || Number.isNaN(value)) throw new StoreError(`${what} must be a number, got ${String(value)}`);
}

function columnSetSignature(names: ColumnSetNames): string {
  return JSON.stringify([names.variables, names.metrics, names.constraints]);
}

/** Whether loopsmith may write the store at `location`: the file (if any) and its nearest existing folder. */
function writableLocation(location: string): boolean {
  try {
    if (existsSync(location)) accessSync(location, constants.W_OK);
    let folder = dirname(location);
    while (!existsSync(folder) && dirname(folder) !== folder) folder = dirname(folder);
    accessSync(folder, constants.W_OK);
    return true;
  } catch {
    return false;
  }
}

/**
 * Names to open a database read-only by: the path itself, then the immutable URI that SQLite reads
 * without its shared-memory file (for a folder where that file cannot be created).
 */
export function readOnlyNames(location: string): string[] {
  const absolute = resolve(location);
  return [absolute, `file:${encodeURI(absolute).replace(/\?/g, '%3F').replace(/#/g, '%23')}?immutable=1`];
}

/** Non-finite-safe number for a nullable REAL column: NaN is stored as NULL. */
function nullableReal(value: number | null): number | null {
  return value === null || Number.isNaN(value) ? null : value;
}

export class Store {
  private readonly db: Database.Database;
  private readonly clock: () => Date;
  private layout: EvaluationColumnLayout = { variables: [], metrics: [], constraints: [] };
  /** Column names in `evaluations` known to this connection (all of them, with prefixes). */
  private knownColumns = new Set<string>();
  private readonly columnSetIdBySignature = new Map<string, number>();
  private readonly columnSetById = new Map<number, ColumnSetNames>();
  /** Parameter positions of the per-study columns in the insert statement (set with the statement). */
  private insertSlots: InsertSlots = { count: 0, variables: new Map(), metrics: new Map(), constraints: new Map() };
  /** The column set of the last evaluation written, with the names as it listed them (see columnSetOf). */
  private lastColumnSet: { raw: readonly (readonly string[])[]; names: ColumnSetNames; signature: string } | null = null;

  // Statements over fixed columns, prepared once.
  private readonly insertStudyStatement: Database.Statement<unknown[]>;
  private readonly selectStudyIdByHashStatement: Database.Statement<unknown[], { id: number }>;
  private readonly selectStudyStatement: Database.Statement<unknown[], StudyDbRow>;
  private readonly insertRunStatement: Database.Statement<unknown[]>;
  private readonly selectRunStatement: Database.Statement<unknown[], RunDbRow>;
  private readonly listRunsStatement: Database.Statement<unknown[], RunDbRow>;
  private readonly latestRunStatement: Database.Statement<unknown[], RunDbRow>;
  private readonly latestRunOfKindStatement: Database.Statement<unknown[], RunDbRow>;
  private readonly findUnfinishedRunStatement: Database.Statement<unknown[], RunDbRow>;
  private readonly markRunStatement: Database.Statement<unknown[]>;
  private readonly updateRunAfterGenerationStatement: Database.Statement<unknown[]>;
  private readonly selectEvaluationIdByKeyStatement: Database.Statement<unknown[], { id: number }>;
  private readonly insertColumnSetStatement: Database.Statement<unknown[]>;
  private readonly selectColumnSetIdStatement: Database.Statement<unknown[], { id: number }>;
  private readonly selectColumnSetStatement: Database.Statement<unknown[], ColumnSetDbRow>;
  private readonly insertMemberStatement: Database.Statement<unknown[]>;
  private readonly insertStatsStatement: Database.Statement<unknown[]>;
  private readonly selectStatsStatement: Database.Statement<unknown[], StatsDbRow>;
  private readonly lastGenerationStatement: Database.Statement<unknown[], { generation: number | null }>;
  private readonly tableInfoStatement: Database.Statement<unknown[], TableInfoRow>;

  // Statements over the per-study columns, prepared again when the columns change.
  private insertEvaluationStatement!: Database.Statement<unknown[]>;
  private selectMembersStatement!: Database.Statement<unknown[], EvaluationDbRow>;
  private readonly selectEvaluationsByKeysStatements = new Map<number, Database.Statement<unknown[], EvaluationDbRow>>();

  /** True when opened without write access (a read-only file or folder, or access 'read'). */
  readonly readOnly: boolean;
  private readonly lazyStatements = new Map<string, Database.Statement<unknown[]>>();

  private constructor(db: Database.Database, clock: () => Date, readOnly = false) {
    this.db = db;
    this.clock = clock;
    this.readOnly = readOnly;

    this.insertStudyStatement = db.prepare(
      `INSERT INTO studies (name, architecture, file_text, file_hash, settings_hash, created_at)
       VALUES (?, ?, ?, ?, ?, ?) ON CONFLICT (file_hash) DO NOTHING`,
    );
    this.selectStudyIdByHashStatement = db.prepare('SELECT id FROM studies WHERE file_hash = ?');
    this.selectStudyStatement = db.prepare('SELECT * FROM studies WHERE id = ?');
    this.insertRunStatement = db.prepare(
      `INSERT INTO runs (study_id, kind, parent_run_id, seed, settings_json, status, workers, started_at, active_since)
       VALUES (?, ?, ?, ?, ?, 'running', ?, ?, ?)`,
    );
    this.selectRunStatement = db.prepare('SELECT * FROM runs WHERE id = ?');
    this.listRunsStatement = db.prepare('SELECT * FROM runs ORDER BY id');
    this.latestRunStatement = db.prepare('SELECT * FROM runs ORDER BY id DESC LIMIT 1');
    this.latestRunOfKindStatement = db.prepare('SELECT * FROM runs WHERE kind = ? ORDER BY id DESC LIMIT 1');
    this.findUnfinishedRunStatement = db.prepare(
      `SELECT * FROM runs
       WHERE study_id = ? AND kind = ? AND seed = ? AND settings_json = ? AND status IN ('running', 'stopped')
       ORDER BY id DESC LIMIT 1`,
    );
    this.markRunStatement = db.prepare(
      `UPDATE runs SET status = ?, finished_at = ?, elapsed_seconds = ?, active_since = ?, message = ? WHERE id = ?`,
    );
    this.updateRunAfterGenerationStatement = db.prepare(
      `UPDATE runs SET generations_done = ?, optimizer_state = ?, elapsed_seconds = ?, active_since = ? WHERE id = ?`,
    );
    this.selectEvaluationIdByKeyStatement = db.prepare('SELECT id FROM evaluations WHERE eval_key = ?');
    this.insertColumnSetStatement = db.prepare(
      'INSERT INTO column_sets (variables, metrics, constraints) VALUES (?, ?, ?) ON CONFLICT DO NOTHING',
    );
    this.selectColumnSetIdStatement = db.prepare(
      'SELECT id FROM column_sets WHERE variables = ? AND metrics = ? AND constraints = ?',
    );
    this.selectColumnSetStatement = db.prepare('SELECT * FROM column_sets WHERE id = ?');
    this.insertMemberStatement = db.prepare(
      `INSERT INTO generation_members (run_id, generation, position, evaluation_id, rank, crowding) VALUES (?, ?, ?, ?, ?, ?)`,
    );
    this.insertStatsStatement = db.prepare(
      `INSERT INTO generation_stats (run_id, generation, evaluations, new_evaluations, failed, feasible_count,
         hypervolume, elapsed_seconds, evaluations_per_second, archive_size, hv_improvement) VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?)`,
    );
    this.selectStatsStatement = db.prepare('SELECT * FROM generation_stats WHERE run_id = ? ORDER BY generation');
    this.lastGenerationStatement = db.prepare(
      'SELECT MAX(generation) AS generation FROM generation_stats WHERE run_id = ?',
    );
    this.tableInfoStatement = db.prepare("SELECT cid, name, type FROM pragma_table_info('evaluations') ORDER BY cid");

    this.reloadColumns();
  }

  /**
   * Opens (creating parent folders and the file if needed) the store at `path`,
   * creates or upgrades the schema, and sets WAL journal, foreign keys, busy timeout.
   * Throws SchemaVersionError for a database written by newer code.
   */
  static open(path: string, options: StoreOptions = {}): Store {
    const inMemory = path === ':memory:';
    const location = inMemory ? path : resolve(path);
    const access = options.access ?? 'auto';
    const clock = options.clock ?? (() => new Date());
    if (!inMemory) {
      const writable = writableLocation(location);
      if (access === 'read' || (access === 'auto' && existsSync(location) && !writable)) return Store.openReadOnly(location, clock);
      if (!writable) {
        throw new StoreError(`${location}: cannot write the store here: the file or its folder is read-only; give a writable path (--db elsewhere) or fix the permissions`);
      }
      mkdirSync(dirname(location), { recursive: true });
    }
    // Two processes creating or migrating one new store at once: SQLite answers SQLITE_BUSY at once
    // (without waiting) when the journal-mode switch or the migration's lock upgrade collides, so the
    // whole opening is tried again for up to BUSY_TIMEOUT_MS.
    const deadline = Date.now() + BUSY_TIMEOUT_MS;
    for (;;) {
      try {
        return Store.openWritable(location, clock, inMemory);
      } catch (error) {
        if (!isBusyError(error) || Date.now() >= deadline) {
          if (error instanceof Error && error.name === 'SqliteError') throw new StoreError(`${location}: ${error.message}`);
          throw error;
        }
        Atomics.wait(new Int32Array(new SharedArrayBuffer(4)), 0, 0, 20 + Math.floor(Math.random() * 60));
      }
    }
  }

  private static openWritable(location: string, clock: () => Date, inMemory: boolean): Store {
    let db: Database.Database;
    try {
      db = new Database(location, { timeout: BUSY_TIMEOUT_MS });
    } catch (error) {
      throw new StoreError(`${location}: cannot open the store: ${(error as Error).message}`);
    }
    try {
      db.pragma(`busy_timeout = ${BUSY_TIMEOUT_MS}`);
      db.pragma('foreign_keys = ON');
      if (!inMemory) {
        const mode: unknown = db.pragma('journal_mode = WAL', { simple: true });
        if (mode !== 'wal') throw new StoreError(`could not switch ${location} to WAL journal mode (got ${String(mode)})`);
      }
      // Safe with WAL: a power loss may drop the last commits but never corrupts the file.
      db.pragma('synchronous = NORMAL');
      migrate(db, { label: location });
      return new Store(db, clock);
    } catch (error) {
      db.close();
      throw error;
    }
  }

  /**
   * A store opened without writing anything: read-only, or (in a folder where SQLite cannot create
   * its shared-memory file) immutable. A store of an older schema version is read as it is.
   */
  private static openReadOnly(location: string, clock: () => Date): Store {
    if (!existsSync(location)) throw new StoreError(`${location}: no such database (run a study first: loopsmith run STUDY)`);
    let lastError: unknown;
    for (const name of readOnlyNames(location)) {
      let db: Database.Database | undefined;
      try {
        db = new Database(name, { readonly: true, fileMustExist: true, timeout: BUSY_TIMEOUT_MS });
        const version: unknown = db.pragma('user_version', { simple: true });
        if (typeof version !== 'number' || version === 0) throw new StoreError(`${location} is not a loopsmith store (no schema version)`);
        if (version > SCHEMA_VERSION) {
          throw new SchemaVersionError(`database ${location} has schema version ${version}, but this loopsmith only understands versions up to ${SCHEMA_VERSION}; it was written by a newer loopsmith. Upgrade loopsmith, or use a different database file.`);
        }
        return new Store(db, clock, true);
      } catch (error) {
        db?.close();
        if (error instanceof StoreError || error instanceof SchemaVersionError) throw error;
        lastError = error;
      }
    }
    throw new StoreError(`${location}: cannot read the store: ${(lastError as Error).message}`);
  }

  close(): void {
    if (this.db.open) this.db.close();
  }

  /** Absolute path of the database file (or ":memory:"). */
  get path(): string {
    return this.db.name;
  }

  // ---------------------------------------------------------------- studies

  /** Stores a study file once (deduplicated on the sha256 of its text) and returns its id. An existing row is left as it is. */
  upsertStudy(s: { name: string; architecture: string; fileText: string; settingsHash: string }): number {
    const fileHash = sha256Hex(s.fileText);
    return this.db.transaction(() => {
      this.insertStudyStatement.run(s.name, s.architecture, s.fileText, fileHash, s.settingsHash, this.nowIso());
      const row = this.selectStudyIdByHashStatement.get(fileHash);
      if (row === undefined) throw new StoreError(`study with file hash ${fileHash} was not stored`);
      return row.id;
    }).immediate();
  }

  getStudy(id: number): StudyRow | undefined {
    const row = this.selectStudyStatement.get(id);
    if (row === undefined) return undefined;
    return {
      id: row.id,
      name: row.name,
      architecture: row.architecture,
      fileText: row.file_text,
      fileHash: row.file_hash,
      settingsHash: row.settings_hash,
      createdAt: row.created_at,
    };
  }

  // ---------------------------------------------------------------- columns

  /**
   * Adds the `v_`/`m_`/`c_` columns this column set needs and recreates the
   * `results` view. Existing columns are kept; a variable whose column exists
   * with the other type is refused.
   */
  ensureColumns(c: ColumnSet): void {
    const wanted: { column: string; sqlType: 'REAL' | 'TEXT' }[] = [];
    const wantedTypes = new Map<string, 'REAL' | 'TEXT'>();
    const want = (kind: string, name: string, prefix: string, sqlType: 'REAL' | 'TEXT'): void => {
      checkName(kind, name);
      const column = prefix + name;
      const earlier = wantedTypes.get(column);
      if (earlier !== undefined) {
        if (earlier !== sqlType) throw new StoreError(`${kind} ${name} is listed twice with different types`);
        return;
      }
      wantedTypes.set(column, sqlType);
      wanted.push({ column, sqlType });
    };
    for (const variable of c.variables) {
      if (variable.type !== 'real' && variable.type !== 'text') {
        throw new StoreError(`variable ${variable.name} has type ${String(variable.type)}; expected 'real' or 'text'`);
      }
      want('variable', variable.name, VARIABLE_PREFIX, variable.type === 'real' ? 'REAL' : 'TEXT');
    }
    for (const metric of c.metrics) want('metric', metric, METRIC_PREFIX, 'REAL');
    for (const constraint of c.constraints) want('constraint', constraint, CONSTRAINT_PREFIX, 'REAL');

    const missingHere = wanted.some((w) => !this.knownColumns.has(w.column));
    // Type check against what this connection knows, even when nothing is missing.
    if (!missingHere) {
      this.checkColumnTypes(wanted, this.readTableInfo());
      return;
    }

    this.db.transaction(() => {
      const existing = this.readTableInfo();
      this.checkColumnTypes(wanted, existing);
      const existingNames = new Set(existing.map((row) => row.name));
      let added = false;
      for (const w of wanted) {
        if (existingNames.has(w.column)) continue;
        this.db.exec(`ALTER TABLE evaluations ADD COLUMN ${quoteIdentifier(w.column)} ${w.sqlType}`);
        added = true;
      }
      if (added) this.recreateResultsView();
    }).immediate();
    this.reloadColumns();
  }

  /** Per-study column names in `evaluations`, without prefixes, in table order. */
  evaluationColumns(): { variables: string[]; metrics: string[]; constraints: string[] } {
    this.reloadColumnsIfChanged();
    return {
      variables: this.layout.variables.map((v) => v.name),
      metrics: [...this.layout.metrics],
      constraints: [...this.layout.constraints],
    };
  }

  /** Like evaluationColumns, with the type of each variable column. */
  evaluationColumnSet(): ColumnSet {
    this.reloadColumnsIfChanged();
    return {
      variables: this.layout.variables.map((v) => ({ ...v })),
      metrics: [...this.layout.metrics],
      constraints: [...this.layout.constraints],
    };
  }

  // ---------------------------------------------------------------- runs

  /** Starts a run in status 'running'; settings are stored as canonical JSON (see canonicalJson). */
  createRun(r: {
    studyId: number;
    kind: RunKind;
    parentRunId?: number | null;
    seed: number;
    settings: unknown;
    workers: number;
    /** The command line that writes the run. */
    command?: string | null;
  }): number {
    if (!RUN_KINDS.includes(r.kind)) throw new StoreError(`run kind ${String(r.kind)} is not one of ${RUN_KINDS.join(', ')}`);
    checkInteger('seed', r.seed);
    checkInteger('workers', r.workers);
    const now = this.nowIso();
    return this.db.transaction(() => {
      const result = this.insertRunStatement.run(
        r.studyId,
        r.kind,
        r.parentRunId ?? null,
        r.seed,
        canonicalJson(r.settings),
        r.workers,
        now,
        now,
      );
      const runId = Number(result.lastInsertRowid);
      this.setOwner(runId, currentOwner(this.clock()), r.command ?? null);
      return runId;
    }).immediate();
  }

  /**
   * Takes the run that a command resumes, or creates it, in one transaction: the newest 'running' or
   * 'stopped' run of this study, kind, seed and settings becomes this process's (status 'running');
   * when there is none, a new run is created. A run that a living process still writes is refused
   * with a StoreError naming that process (pid, host, since when); one whose process is gone
   * (interrupted) is taken over.
   */
  claimRun(r: { studyId: number; kind: RunKind; seed: number; settings: unknown; workers: number; command?: string | null; runId?: number }): { run: RunRow; resumed: boolean } {
    return this.db.transaction(() => {
      // `runId`: a given run to take (a finished run that `run --more` continues).
      const existing = r.runId !== undefined ? this.getRun(r.runId) : this.findUnfinishedRun(r.studyId, r.kind, r.seed, canonicalJson(r.settings));
      if (existing === undefined) {
        const runId = this.createRun(r);
        return { run: this.getRun(runId)!, resumed: false };
      }
      const now = this.clock();
      if (existing.status === 'running' && !ownedByMe(existing) && ownerAlive(existing, now)) {
        throw new StoreError(runBusyMessage(this.path, existing));
      }
      this.markRunStatement.run('running', null, existing.elapsedSeconds, now.toISOString(), null, existing.id);
      this.setOwner(existing.id, currentOwner(now), r.command ?? existing.command);
      return { run: this.getRun(existing.id)!, resumed: true };
    }).immediate();
  }

  private setOwner(runId: number, owner: RunOwner | null, command: string | null): void {
    this.lazy('UPDATE runs SET owner_pid = ?, owner_host = ?, owner_since = ?, owner_token = ?, heartbeat_at = ?, command = ? WHERE id = ?').run(
      owner?.pid ?? null,
      owner?.host ?? null,
      owner?.since ?? null,
      owner?.token ?? null,
      owner?.since ?? null,
      command,
      runId,
    );
  }

  /** A statement prepared on first use (statements over columns an older read-only store may lack). */
  private lazy(sql: string): Database.Statement<unknown[]> {
    let statement = this.lazyStatements.get(sql);
    if (statement === undefined) {
      statement = this.db.prepare(sql);
      this.lazyStatements.set(sql, statement);
    }
    return statement;
  }

  /**
   * The newest run of this study, kind, seed and settings that is 'running' or
   * 'stopped': the run to resume. `settingsJson` may be any JSON text of the
   * settings; it is compared in canonical form.
   */
  findUnfinishedRun(studyId: number, kind: string, seed: number, settingsJson: string): RunRow | undefined {
    let canonical = settingsJson;
    try {
      canonical = canonicalJson(JSON.parse(settingsJson) as unknown);
    } catch {
      // Not JSON: compare as given (it then matches nothing createRun wrote).
    }
    const row = this.findUnfinishedRunStatement.get(studyId, kind, seed, canonical);
    return row === undefined ? undefined : toRunRow(row);
  }

  getRun(id: number): RunRow | undefined {
    const row = this.selectRunStatement.get(id);
    return row === undefined ? undefined : toRunRow(row);
  }

  listRuns(): RunRow[] {
    return this.listRunsStatement.all().map(toRunRow);
  }

  latestRun(kind?: string): RunRow | undefined {
    const row = kind === undefined ? this.latestRunStatement.get() : this.latestRunOfKindStatement.get(kind);
    return row === undefined ? undefined : toRunRow(row);
  }

  /**
   * Sets a run's status. 'running' (resume) clears finished_at and starts a new
   * session; 'stopped', 'finished' and 'failed' add the session's time since
   * the last generation write to elapsed_seconds and set finished_at.
   * The message is replaced only when given.
   */
  /** Set a run's status; `message` replaces the note (null clears it, undefined keeps it). */
  markRun(runId: number, status: RunStatus, message?: string | null): void {
    if (!RUN_STATUSES.includes(status)) throw new StoreError(`run status ${String(status)} is not one of ${RUN_STATUSES.join(', ')}`);
    this.db.transaction(() => {
      const run = this.selectRunStatement.get(runId);
      if (run === undefined) throw new StoreError(`run ${runId} does not exist`);
      const now = this.clock();
      const nowIso = now.toISOString();
      const newMessage = message === undefined ? run.message : message;
      if (status === 'running') {
        // Time of an earlier session that ended without markRun (a crash) after its last generation is not counted.
        this.markRunStatement.run(status, null, run.elapsed_seconds, nowIso, newMessage, runId);
      } else {
        const elapsed = run.elapsed_seconds + this.secondsSince(run.active_since, now);
        this.markRunStatement.run(status, nowIso, elapsed, null, newMessage, runId);
        // The run is no longer written: release the ownership lock (the command stays for reference).
        this.lazy('UPDATE runs SET owner_pid = NULL, owner_token = NULL WHERE id = ?').run(runId);
      }
    }).immediate();
  }

  /**
   * Records how an optimization run ended (null while it is running or was stopped) and the
   * termination it used (canonical JSON; null leaves the recorded one).
   */
  setRunEnd(runId: number, endReason: RunEndReason | null, termination?: unknown): void {
    if (endReason !== null && endReason !== 'converged' && endReason !== 'budget') throw new StoreError(`run end reason ${String(endReason)} is not one of converged, budget`);
    const result = this.db
      .prepare('UPDATE runs SET end_reason = ?, termination_json = COALESCE(?, termination_json) WHERE id = ?')
      .run(endReason, termination === undefined ? null : canonicalJson(termination), runId);
    if (result.changes !== 1) throw new StoreError(`run ${runId} does not exist`);
  }

  // ---------------------------------------------------------------- evaluations

  /** Cache lookup: the stored evaluations among `keys` (missing keys are absent from the map). */
  findEvaluations(keys: readonly string[]): Map<string, StoredEvaluation> {
    return this.withFreshColumns(() => {
      const found = new Map<string, StoredEvaluation>();
      const distinct = [...new Set(keys)];
      for (let start = 0; start < distinct.length; start += KEY_LOOKUP_CHUNK) {
        const chunk = distinct.slice(start, start + KEY_LOOKUP_CHUNK);
        for (const row of this.selectEvaluationsByKeys(chunk.length).all(...chunk)) {
          const evaluation = this.decodeEvaluation(row);
          found.set(evaluation.key, evaluation);
        }
      }
      return found;
    });
  }

  /**
   * Writes one generation in ONE transaction: the new evaluations (in the given
   * order, so ids are deterministic; a key already stored is reused), the
   * members, the stats, and the run's generations_done (= generation + 1) and
   * optimizer_state. Any error rolls the whole generation back.
   * `generation` must equal the run's generations_done.
   */
  writeGeneration(w: GenerationWrite): void {
    checkInteger('generation', w.generation);
    const prepared = w.newEvaluations.map((evaluation, index) => this.prepareEvaluation(evaluation, index));
    w.members.forEach((member, position) => {
      checkInteger(`rank of member ${position}`, member.rank);
      checkNumber(`crowding of member ${position}`, member.crowding);
    });
    const s = w.stats;
    checkInteger('stats.evaluations', s.evaluations);
    checkInteger('stats.newEvaluations', s.newEvaluations);
    checkInteger('stats.failed', s.failed);
    checkInteger('stats.feasibleCount', s.feasibleCount);
    checkNumber('stats.elapsedSeconds', s.elapsedSeconds);
    checkNumber('stats.evaluationsPerSecond', s.evaluationsPerSecond);

    const newColumnSets = new Map<string, { id: number; names: ColumnSetNames }>();
    this.db.transaction(() => {
      const run = this.selectRunStatement.get(w.runId);
      if (run === undefined) throw new StoreError(`run ${w.runId} does not exist`);
      if (w.generation !== run.generations_done) {
        throw new StoreError(
          `run ${w.runId} has ${run.generations_done} generation(s) stored; the next one to write is ${run.generations_done}, not ${w.generation}`,
        );
      }

      const idByKey = new Map<string, number>();
      for (const p of prepared) {
        const signature = p.signature;
        let columnSetId = this.columnSetIdBySignature.get(signature) ?? newColumnSets.get(signature)?.id;
        if (columnSetId === undefined) {
          columnSetId = this.storeColumnSet(p.names);
          newColumnSets.set(signature, { id: columnSetId, names: p.names });
        }
        const result = this.insertEvaluationStatement.run(p.key, p.settingsHash, w.runId, columnSetId, ...p.values);
        const id = result.changes === 1 ? Number(result.lastInsertRowid) : this.selectEvaluationIdByKeyStatement.get(p.key)?.id;
        if (id === undefined) throw new StoreError(`evaluation ${p.key} was neither inserted nor found`);
        idByKey.set(p.key, id);
      }

      w.members.forEach((member, position) => {
        const id = idByKey.get(member.key) ?? this.selectEvaluationIdByKeyStatement.get(member.key)?.id;
        if (id === undefined) {
          throw new StoreError(
            `member ${position} of generation ${w.generation} (run ${w.runId}) has key ${member.key}, which is neither in newEvaluations nor stored`,
          );
        }
        this.insertMemberStatement.run(w.runId, w.generation, position, id, member.rank, member.crowding);
      });

      this.insertStatsStatement.run(
        w.runId,
        w.generation,
        s.evaluations,
        s.newEvaluations,
        s.failed,
        s.feasibleCount,
        nullableReal(s.hypervolume),
        s.elapsedSeconds,
        s.evaluationsPerSecond,
        s.archiveSize ?? null,
        s.hvImprovement === undefined || s.hvImprovement === null || Number.isNaN(s.hvImprovement) ? null : s.hvImprovement,
      );

      const now = this.clock();
      const elapsed = run.elapsed_seconds + this.secondsSince(run.active_since, now);
      const activeSince = run.active_since === null ? null : now.toISOString();
      this.updateRunAfterGenerationStatement.run(w.generation + 1, w.optimizerState, elapsed, activeSince, w.runId);
      this.lazy('UPDATE runs SET heartbeat_at = ? WHERE id = ?').run(now.toISOString(), w.runId);
    }).immediate();

    // Only after commit: a rolled-back column set must not stay cached.
    for (const [signature, entry] of newColumnSets) {
      this.columnSetIdBySignature.set(signature, entry.id);
      this.columnSetById.set(entry.id, entry.names);
    }
  }

  /** The population of one generation, in population order, with rank and crowding. */
  generationMembers(runId: number, generation: number): MemberEvaluation[] {
    return this.withFreshColumns(() =>
      this.selectMembersStatement.all(runId, generation).map((row) => ({
        ...this.decodeEvaluation(row),
        position: row['member_position'] as number,
        rank: row['member_rank'] as number,
        crowding: row['member_crowding'] as number,
      })),
    );
  }

  /**
   * Per generation of a run (0 … last), the given metrics of its feasible, error-free members of rank
   * 0, in population order: what a run's final hypervolume record reads, without decoding whole rows.
   */
  rankZeroFeasibleMetrics(runId: number, metrics: readonly string[]): (number | null)[][][] {
    const last = this.lastGeneration(runId);
    if (last === undefined) return [];
    const unknown = (): string | undefined => metrics.find((name) => !this.knownColumns.has(METRIC_PREFIX + name));
    if (unknown() !== undefined) this.reloadColumns(); // another connection may have added it
    const missing = unknown();
    if (missing !== undefined) throw new StoreError(`metric ${missing} has no column in this store`);
    const columns = metrics.map((name) => `e.${quoteIdentifier(METRIC_PREFIX + name)}`);
    const rows = this.db
      .prepare(
        `SELECT g.generation${columns.map((c) => `, ${c}`).join('')} FROM generation_members g JOIN evaluations e ON e.id = g.evaluation_id
         WHERE g.run_id = ? AND g.rank = 0 AND e.feasible = 1 AND e.error IS NULL ORDER BY g.generation, g.position`,
      )
      .raw()
      .all(runId) as (number | null)[][];
    const fronts: (number | null)[][][] = Array.from({ length: last + 1 }, () => []);
    for (const row of rows) fronts[row[0]!]?.push(row.slice(1));
    return fronts;
  }

  /** Highest generation number with stats stored for the run, or undefined when none. */
  lastGeneration(runId: number): number | undefined {
    const row = this.lastGenerationStatement.get(runId);
    return row === undefined || row.generation === null ? undefined : row.generation;
  }

  generationStats(runId: number): GenerationStatsRow[] {
    return this.selectStatsStatement.all(runId).map(toStatsRow);
  }

  /** Replace the recorded hypervolume of generations of a run (one transaction). */
  setHypervolumes(runId: number, values: ReadonlyMap<number, number | null>): void {
    const update = this.db.prepare('UPDATE generation_stats SET hypervolume = ? WHERE run_id = ? AND generation = ?');
    this.db.transaction(() => {
      for (const [generation, value] of values) update.run(value === null || Number.isNaN(value) ? null : value, runId, generation);
    })();
  }

  // ---------------------------------------------------------------- internals

  private nowIso(): string {
    return this.clock().toISOString();
  }

  /** Seconds from an ISO time to `now`, 0 for null or a clock that went back. */
  private secondsSince(iso: string | null, now: Date): number {
    if (iso === null) return 0;
    const seconds = (now.getTime() - Date.parse(iso)) / 1000;
    return Number.isFinite(seconds) && seconds > 0 ? seconds : 0;
  }

  private readTableInfo(): TableInfoRow[] {
    return this.tableInfoStatement.all();
  }

  private checkColumnTypes(wanted: readonly { column: string; sqlType: string }[], existing: readonly TableInfoRow[]): void {
    const typeByName = new Map(existing.map((row) => [row.name, row.type.toUpperCase()]));
    for (const w of wanted) {
      const type = typeByName.get(w.column);
      if (type !== undefined && type !== w.sqlType) {
        throw new StoreError(`column ${w.column} already exists with type ${type}; this study needs ${w.sqlType}`);
      }
    }
  }

  /** Reads the per-study columns and prepares the statements that list them. */
  private reloadColumns(): void {
    const info = this.readTableInfo();
    const layout: EvaluationColumnLayout = { variables: [], metrics: [], constraints: [] };
    for (const row of info) {
      if (row.name.startsWith(VARIABLE_PREFIX)) {
        layout.variables.push({ name: row.name.slice(VARIABLE_PREFIX.length), type: row.type.toUpperCase() === 'TEXT' ? 'text' : 'real' });
      } else if (row.name.startsWith(METRIC_PREFIX)) {
        layout.metrics.push(row.name.slice(METRIC_PREFIX.length));
      } else if (row.name.startsWith(CONSTRAINT_PREFIX)) {
        layout.constraints.push(row.name.slice(CONSTRAINT_PREFIX.length));
      }
    }
    this.layout = layout;
    this.knownColumns = new Set(info.map((row) => row.name));

    const dynamicColumns = this.dynamicColumnNames();
    const insertColumns = ['eval_key', 'settings_hash', 'first_run_id', 'column_set_id', 'violation', 'feasible', 'error', 'eval_seconds', ...dynamicColumns];
    let slot = FIXED_INSERT_VALUES;
    this.insertSlots = {
      count: dynamicColumns.length,
      variables: new Map(layout.variables.map((v) => [v.name, { index: slot++, type: v.type }])),
      metrics: new Map(layout.metrics.map((name) => [name, slot++])),
      constraints: new Map(layout.constraints.map((name) => [name, slot++])),
    };
    this.insertEvaluationStatement = this.db.prepare(
      `INSERT INTO evaluations (${insertColumns.map(quoteIdentifier).join(', ')})
       VALUES (${insertColumns.map(() => '?').join(', ')}) ON CONFLICT (eval_key) DO NOTHING`,
    );
    const selectList = [...EVALUATION_BASE_COLUMNS, ...dynamicColumns].map((name) => `e.${quoteIdentifier(name)}`).join(', ');
    this.selectMembersStatement = this.db.prepare(
      `SELECT ${selectList}, g.position AS member_position, g.rank AS member_rank, g.crowding AS member_crowding
       FROM generation_members g JOIN evaluations e ON e.id = g.evaluation_id
       WHERE g.run_id = ? AND g.generation = ? ORDER BY g.position`,
    );
    this.selectEvaluationsByKeysStatements.clear();
  }

  private reloadColumnsIfChanged(): void {
    const info = this.readTableInfo();
    if (info.length !== this.knownColumns.size || info.some((row) => !this.knownColumns.has(row.name))) this.reloadColumns();
  }

  /** Runs a read; if it met columns another process added since, reloads the column list and runs it again. */
  private withFreshColumns<T>(read: () => T): T {
    try {
      return read();
    } catch (error) {
      if (!(error instanceof StaleColumnsError)) throw error;
      this.reloadColumns();
      return read();
    }
  }

  private dynamicColumnNames(): string[] {
    return [
      ...this.layout.variables.map((v) => VARIABLE_PREFIX + v.name),
      ...this.layout.metrics.map((m) => METRIC_PREFIX + m),
      ...this.layout.constraints.map((c) => CONSTRAINT_PREFIX + c),
    ];
  }

  private selectEvaluationsByKeys(count: number): Database.Statement<unknown[], EvaluationDbRow> {
    let statement = this.selectEvaluationsByKeysStatements.get(count);
    if (statement === undefined) {
      const selectList = [...EVALUATION_BASE_COLUMNS, ...this.dynamicColumnNames()].map(quoteIdentifier).join(', ');
      statement = this.db.prepare(
        `SELECT ${selectList} FROM evaluations WHERE eval_key IN (${new Array<string>(count).fill('?').join(', ')})`,
      );
      this.selectEvaluationsByKeysStatements.set(count, statement);
    }
    return statement;
  }

  /** Checks one new evaluation against the known columns and lays out its values for the insert statement. */
  private prepareEvaluation(evaluation: NewEvaluation, index: number): PreparedEvaluation {
    const where = (): string => `newEvaluations[${index}] (key ${evaluation.key})`;
    if (typeof evaluation.key !== 'string' || evaluation.key.length === 0) throw new StoreError(`${where()}: key must be a non-empty string`);
    if (typeof evaluation.settingsHash !== 'string') throw new StoreError(`${where()}: settingsHash must be a string`);
    checkNumber(`${where()}: violation`, evaluation.violation);

    const slots = this.insertSlots;
    // Fixed columns first (as in the insert statement), then one slot per per-study column.
    const values: unknown[] = new Array<unknown>(FIXED_INSERT_VALUES + slots.count).fill(null);
    values[0] = evaluation.violation;
    values[1] = evaluation.feasible ? 1 : 0;
    values[2] = evaluation.error;
    values[3] = evaluation.evalSeconds === null ? null : nullableReal(evaluation.evalSeconds);
    for (const name in evaluation.variables) {
      const value = evaluation.variables[name]!;
      const slot = slots.variables.get(name);
      if (slot === undefined) throw new StoreError(`${where()}: variable ${name} has no column; call ensureColumns first`);
      if (slot.type === 'real' && (typeof value !== 'number' || Number.isNaN(value))) {
        throw new StoreError(`${where()}: variable ${name} must be a number, got ${String(value)}`);
      }
      if (slot.type === 'text' && typeof value !== 'string') throw new StoreError(`${where()}: variable ${name} must be a string, got ${String(value)}`);
      values[slot.index] = value;
    }
    const addReals = (kind: string, bySlot: ReadonlyMap<string, number>, record: Record<string, number | null>): void => {
      for (const name in record) {
        const value = record[name]!;
        const slot = bySlot.get(name);
        if (slot === undefined) throw new StoreError(`${where()}: ${kind} ${name} has no column; call ensureColumns first`);
        if (value !== null && typeof value !== 'number') throw new StoreError(`${where()}: ${kind} ${name} must be a number or null, got ${String(value)}`);
        values[slot] = nullableReal(value);
      }
    };
    addReals('metric', slots.metrics, evaluation.metrics);
    addReals('constraint', slots.constraints, evaluation.constraints);
    const { names, signature } = this.columnSetOf(evaluation);
    return { key: evaluation.key, settingsHash: evaluation.settingsHash, names, signature, values };
  }

  /**
   * The names an evaluation carries, sorted, with their signature. Evaluations of one study carry the
   * same names in the same order, so the last answer is reused when the names match it one for one.
   */
  private columnSetOf(evaluation: NewEvaluation): { names: ColumnSetNames; signature: string } {
    const raw = [Object.keys(evaluation.variables), Object.keys(evaluation.metrics), Object.keys(evaluation.constraints)] as const;
    const last = this.lastColumnSet;
    if (last && raw.every((list, k) => sameStrings(list, last.raw[k]!))) return last;
    const names: ColumnSetNames = { variables: [...raw[0]].sort(), metrics: [...raw[1]].sort(), constraints: [...raw[2]].sort() };
    this.lastColumnSet = { raw, names, signature: columnSetSignature(names) };
    return this.lastColumnSet;
  }

  /** Inserts (or finds) a column set inside the caller's transaction and returns its id. */
  private storeColumnSet(names: ColumnSetNames): number {
    const variables = JSON.stringify(names.variables);
    const metrics = JSON.stringify(names.metrics);
    const constraints = JSON.stringify(names.constraints);
    this.insertColumnSetStatement.run(variables, metrics, constraints);
    const row = this.selectColumnSetIdStatement.get(variables, metrics, constraints);
    if (row === undefined) throw new StoreError('column set was neither inserted nor found');
    return row.id;
  }

  private columnSetNames(id: number): ColumnSetNames {
    let names = this.columnSetById.get(id);
    if (names === undefined) {
      const row = this.selectColumnSetStatement.get(id);
      if (row === undefined) throw new StoreError(`column set ${id} does not exist`);
      names = {
        variables: JSON.parse(row.variables) as string[],
        metrics: JSON.parse(row.metrics) as string[],
        constraints: JSON.parse(row.constraints) as string[],
      };
      this.columnSetById.set(id, names);
      this.columnSetIdBySignature.set(columnSetSignature(names), id);
    }
    return names;
  }

  private decodeEvaluation(row: EvaluationDbRow): StoredEvaluation {
    const names = this.columnSetNames(row['column_set_id'] as number);
    const read = (column: string): unknown => {
      if (!(column in row)) throw new StaleColumnsError(`column ${column} is not in this connection's column list of evaluations`);
      return row[column];
    };
    const variables: Record<string, number | string> = {};
    for (const name of names.variables) {
      const value = read(VARIABLE_PREFIX + name);
      if (typeof value !== 'number' && typeof value !== 'string') {
        throw new StoreError(`evaluation ${String(row['id'])}: variable ${name} is missing`);
      }
      variables[name] = value;
    }
    const metrics: Record<string, number | null> = {};
    for (const name of names.metrics) metrics[name] = read(METRIC_PREFIX + name) as number | null;
    const constraints: Record<string, number | null> = {};
    for (const name of names.constraints) constraints[name] = read(CONSTRAINT_PREFIX + name) as number | null;
    return {
      id: row['id'] as number,
      key: row['eval_key'] as string,
      settingsHash: row['settings_hash'] as string,
      firstRunId: row['first_run_id'] as number,
      variables,
      metrics,
      constraints,
      violation: row['violation'] as number,
      feasible: row['feasible'] === 1,
      error: row['error'] as string | null,
      evalSeconds: row['eval_seconds'] as number | null,
    };
  }

  /**
   * Recreates the `results` view: every evaluations column, with v_/m_/c_
   * columns named without their prefix unless that name is a real column of
   * evaluations or already used by an earlier column (table order), in which
   * case the prefixed name is kept.
   */
  private recreateResultsView(): void {
    const info = this.readTableInfo();
    const realNames = new Set(info.map((row) => row.name));
    const used = new Set<string>();
    const selectItems: string[] = [];
    for (const row of info) {
      if (row.name === 'column_set_id') continue;
      let friendly = row.name;
      const prefix = [VARIABLE_PREFIX, METRIC_PREFIX, CONSTRAINT_PREFIX].find((p) => row.name.startsWith(p));
      if (prefix !== undefined) {
        const stripped = row.name.slice(prefix.length);
        if (!realNames.has(stripped) && !used.has(stripped)) friendly = stripped;
      }
      used.add(friendly);
      selectItems.push(friendly === row.name ? quoteIdentifier(row.name) : `${quoteIdentifier(row.name)} AS ${quoteIdentifier(friendly)}`);
    }
    this.db.exec('DROP VIEW IF EXISTS results');
    this.db.exec(`CREATE VIEW results AS SELECT ${selectItems.join(', ')} FROM evaluations`);
  }
}
