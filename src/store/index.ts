export {
  Store,
  StoreError,
  canonicalJson,
  sha256Hex,
  quoteIdentifier,
  COLUMN_NAME_PATTERN,
  VARIABLE_PREFIX,
  METRIC_PREFIX,
  CONSTRAINT_PREFIX,
  EVALUATION_BASE_COLUMNS,
  currentOwner,
  ownerAlive,
  runState,
  runBusyMessage,
  processStartToken,
  REMOTE_OWNER_STALE_MS,
} from './store.js';
export type {
  ColumnSet,
  NewEvaluation,
  StoredEvaluation,
  MemberEvaluation,
  GenerationStats,
  GenerationWrite,
  GenerationStatsRow,
  RunRow,
  RunKind,
  RunStatus,
  StudyRow,
  StoreOptions,
  VariableType,
  RunOwner,
  RunState,
} from './store.js';
export { migrate, readSchemaSql, SCHEMA_VERSION, MIGRATIONS, SchemaVersionError } from './migrations.js';
export type { Migration, MigrateOptions, MigrateResult } from './migrations.js';
export { queryEvaluations, QueryError, checkWhereExpression, assertReadOnlyStatement, parseOrderBy } from './query.js';
export type { QueryOptions, QueryResult } from './query.js';
export { formatTable, toCsv, csvField, formatValue } from './format.js';
