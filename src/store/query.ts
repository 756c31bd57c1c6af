/**
 * User queries over stored evaluations, on a separate read-only connection.
 *
 * Defence in depth, so nothing a user types can change or delete data:
 *  1. the connection is opened read-only (and `PRAGMA query_only` is set on it);
 *  2. the where expression is scanned before SQLite sees it: no `;`, no comment
 *     markers `--` or `/*` (anywhere, even inside quotes), no statement keywords
 *     (ATTACH, DETACH, PRAGMA, DROP, ...) outside quotes, and parentheses that
 *     balance without ever closing more than they opened, so the text cannot
 *     leave the `WHERE ( ... )` it is placed in;
 *  3. the prepared statement must be a single statement that is both `reader`
 *     and `readonly` according to SQLite;
 *  4. orderBy and the column list are checked against the real columns and
 *     are never pasted in as free SQL.
 */
import { LoopsmithUserError } from '../core/errors.js';
import { METRIC_ALIASES } from '../core/metrics.js';
import Database from 'better-sqlite3';
import { existsSync } from 'node:fs';
import { quoteIdentifier, readOnlyNames } from './store.js';

export interface QueryOptions {
  /** SQL expression over the evaluation columns, e.g. `m_workspace_area > 0.05 AND feasible = 1`. */
  where?: string;
  /** A column name, optionally followed by " asc" or " desc". Default: id. */
  orderBy?: string;
  /** Most rows to return; default: all. */
  limit?: number;
  /** Only evaluations that were members of this run's generations. */
  runId?: number;
  /** Columns to return (default: all evaluation columns except the internal column_set_id). */
  columns?: readonly string[];
}

export interface QueryResult {
  columns: string[];
  rows: Record<string, unknown>[];
  /** Notes for the user, e.g. a renamed metric's old column name read as the new one. */
  notes?: string[];
}

/**
 * A renamed metric's old column (m_bandwidth, m_resolution; METRIC_ALIASES) in a where or order-by text is
 * read as the new column when the store has only the new one (stores of schema 4 and later), with a note.
 */
function renameOldColumns(text: string, tableColumns: readonly string[], notes: string[]): string {
  let out = text;
  for (const [old, now] of Object.entries(METRIC_ALIASES)) {
    const oldColumn = `m_${old}`;
    const newColumn = `m_${now}`;
    const pattern = new RegExp(`\\b${oldColumn}\\b`, 'g');
    if (!pattern.test(out) || tableColumns.includes(oldColumn) || !tableColumns.includes(newColumn)) continue;
    out = out.replace(pattern, newColumn);
    const note = `${oldColumn} is now ${newColumn} (metric ${old} was renamed ${now}; same values); read as ${newColumn}`;
    if (!notes.includes(note)) notes.push(note);
  }
  return out;
}

/** A refused or failed user query; the message says why. */
export class QueryError extends LoopsmithUserError {
  override readonly name = 'QueryError';
}

/**
 * Words that start or change statements; never part of a read-only expression.
 * (END is left out: it closes CASE expressions.)
 */
const FORBIDDEN_KEYWORDS: ReadonlySet<string> = new Set([
  'alter',
  'analyze',
  'attach',
  'begin',
  'commit',
  'create',
  'delete',
  'detach',
  'drop',
  'insert',
  'pragma',
  'reindex',
  'release',
  'rollback',
  'savepoint',
  'update',
  'vacuum',
]);

/** Columns of evaluations that are internal bookkeeping and not shown by default. */
const HIDDEN_COLUMNS: ReadonlySet<string> = new Set(['column_set_id']);

/** Busy timeout of the read connection [ms]; WAL readers rarely wait at all. */
const READ_BUSY_TIMEOUT_MS = 10_000;

/** Index just past the closing quote of a literal or quoted identifier that opens at `start`. */
function skipQuoted(expression: string, start: number, close: string, doubledEscapes: boolean): number {
  let index = start + 1;
  while (index < expression.length) {
    if (expression[index] === close) {
      if (doubledEscapes && expression[index + 1] === close) {
        index += 2;
        continue;
      }
      return index + 1;
    }
    index += 1;
  }
  throw new QueryError(`where expression has an unterminated ${close} quote starting at character ${start + 1}`);
}

/**
 * Lexical checks of a where expression (see the module comment). Throws QueryError.
 * Exported for tests and for callers that want to check before opening a database.
 */
export function checkWhereExpression(expression: string): void {
  if (expression.includes('\0')) throw new QueryError('where expression contains a NUL character');
  if (expression.includes('--') || expression.includes('/*')) {
    throw new QueryError('where expression contains a comment marker ("--" or "/*"); comments are not allowed');
  }
  let depth = 0;
  let index = 0;
  while (index < expression.length) {
    const ch = expression[index] as string;
    if (ch === "'") {
      index = skipQuoted(expression, index, "'", true);
    } else if (ch === '"' || ch === '`') {
      index = skipQuoted(expression, index, ch, true);
    } else if (ch === '[') {
      index = skipQuoted(expression, index, ']', false);
    } else if (ch === ';') {
      throw new QueryError('where expression contains ";": only a single expression is allowed, not several statements');
    } else if (ch === '(') {
      depth += 1;
      index += 1;
    } else if (ch === ')') {
      depth -= 1;
      if (depth < 0) throw new QueryError(`where expression closes a parenthesis it did not open (character ${index + 1})`);
      index += 1;
    } else if (/[A-Za-z_]/.test(ch)) {
      let end = index + 1;
      while (end < expression.length && /[A-Za-z0-9_$]/.test(expression[end] as string)) end += 1;
      const word = expression.slice(index, end).toLowerCase();
      if (FORBIDDEN_KEYWORDS.has(word)) {
        throw new QueryError(`where expression contains the keyword ${word.toUpperCase()}; only read-only expressions are allowed`);
      }
      index = end;
    } else {
      index += 1;
    }
  }
  if (depth !== 0) throw new QueryError(`where expression leaves ${depth} parenthesis/parentheses open`);
}

/** Refuses any prepared statement that SQLite does not report as a read-only query. */
export function assertReadOnlyStatement(statement: { reader: boolean; readonly: boolean; source: string }): void {
  if (!statement.reader || !statement.readonly) {
    throw new QueryError(
      `query refused: it is not a read-only query (reader=${statement.reader}, readonly=${statement.readonly})`,
    );
  }
}

/** Parses "column", "column asc" or "column desc" against the known columns. */
export function parseOrderBy(
  orderBy: string,
  columns: readonly string[],
): { column: string; direction: 'ASC' | 'DESC' } {
  const match = /^\s*([A-Za-z_][A-Za-z0-9_]*)(?:\s+(asc|desc))?\s*$/i.exec(orderBy);
  if (match === null) {
    throw new QueryError(`orderBy ${JSON.stringify(orderBy)} must be a column name, optionally followed by "asc" or "desc"`);
  }
  const column = match[1] as string;
  if (!columns.includes(column)) {
    throw new QueryError(`orderBy column ${column} does not exist; columns are: ${columns.join(', ')}`);
  }
  const direction = (match[2] ?? 'asc').toUpperCase() === 'DESC' ? 'DESC' : 'ASC';
  return { column, direction };
}

function openReadOnly(dbPath: string): Database.Database {
  // The plain read-only connection first; in a folder where SQLite cannot create the shared-memory
  // file of a WAL store, the same file opened immutable.
  let lastError: unknown;
  for (const name of readOnlyNames(dbPath)) {
    let db: Database.Database | undefined;
    try {
      db = new Database(name, { readonly: true, fileMustExist: true, timeout: READ_BUSY_TIMEOUT_MS });
      db.pragma('query_only = ON');
      db.prepare('SELECT COUNT(*) FROM sqlite_schema').get();
      return db;
    } catch (error) {
      db?.close();
      lastError = error;
      if (!existsSync(dbPath)) break;
    }
  }
  throw new QueryError(`cannot open database ${dbPath}: ${(lastError as Error).message}`);
}

/**
 * Runs `SELECT <columns> FROM evaluations WHERE (<where>) [AND member of run]
 * ORDER BY <column> <direction>, id LIMIT ?` on a read-only connection.
 */
export function queryEvaluations(dbPath: string, opts: QueryOptions): QueryResult {
  let where = opts.where?.trim() ?? '';
  if (where !== '') checkWhereExpression(where);
  if (opts.limit !== undefined && (!Number.isSafeInteger(opts.limit) || opts.limit < 0)) {
    throw new QueryError(`limit must be a whole number >= 0, got ${opts.limit}`);
  }
  if (opts.runId !== undefined && !Number.isSafeInteger(opts.runId)) {
    throw new QueryError(`runId must be an integer, got ${opts.runId}`);
  }

  const db = openReadOnly(dbPath);
  try {
    let tableColumns: string[];
    try {
      tableColumns = db
        .prepare<unknown[], { name: string }>("SELECT name FROM pragma_table_info('evaluations') ORDER BY cid")
        .all()
        .map((row) => row.name);
    } catch (error) {
      throw new QueryError(`cannot read the columns of ${dbPath}: ${(error as Error).message}`);
    }
    if (tableColumns.length === 0) throw new QueryError(`${dbPath} has no evaluations table; is it a loopsmith store?`);

    let selected: string[];
    if (opts.columns === undefined || opts.columns.length === 0) {
      selected = tableColumns.filter((name) => !HIDDEN_COLUMNS.has(name));
    } else {
      for (const name of opts.columns) {
        if (!tableColumns.includes(name)) {
          throw new QueryError(`column ${JSON.stringify(name)} does not exist; columns are: ${tableColumns.join(', ')}`);
        }
      }
      selected = [...opts.columns];
    }
    const notes: string[] = [];
    where = renameOldColumns(where, tableColumns, notes);
    const order = parseOrderBy(renameOldColumns(opts.orderBy ?? 'id', tableColumns, notes), tableColumns);

    const conditions: string[] = [];
    const parameters: unknown[] = [];
    if (where !== '') conditions.push(`(${where})`);
    if (opts.runId !== undefined) {
      conditions.push('id IN (SELECT evaluation_id FROM generation_members WHERE run_id = ?)');
      parameters.push(opts.runId);
    }
    const orderClause =
      order.column === 'id' ? `id ${order.direction}` : `${quoteIdentifier(order.column)} ${order.direction}, id ASC`;
    const sql =
      `SELECT ${selected.map(quoteIdentifier).join(', ')} FROM evaluations` +
      (conditions.length > 0 ? ` WHERE ${conditions.join(' AND ')}` : '') +
      ` ORDER BY ${orderClause} LIMIT ?`;
    parameters.push(opts.limit ?? -1);

    let statement: Database.Statement<unknown[], Record<string, unknown>>;
    try {
      statement = db.prepare<unknown[], Record<string, unknown>>(sql);
    } catch (error) {
      throw new QueryError(`invalid where expression: ${(error as Error).message}`);
    }
    assertReadOnlyStatement(statement);
    try {
      const rows = statement.all(...parameters);
      return { columns: statement.columns().map((c) => c.name), rows, ...(notes.length > 0 ? { notes } : {}) };
    } catch (error) {
      throw new QueryError(`query failed: ${(error as Error).message}`);
    }
  } finally {
    db.close();
  }
}
