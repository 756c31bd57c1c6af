-- loopsmith result store: full schema of version 4 (version 4 renamed two metric columns, see migrations.ts).
--
-- This file creates a fresh database in one transaction (see migrations.ts).
-- Databases written by older code are brought up to date by the numbered
-- migrations in migrations.ts, never by editing this file in place: when the
-- schema changes, bump the user_version below, add a migration from the
-- previous version, and keep both in step.
--
-- Connection settings (WAL journal, foreign keys, busy timeout) are not part
-- of the file format except for WAL, and are set by Store.open, because
-- PRAGMA journal_mode cannot change inside a transaction.
--
-- The evaluations table only holds the fixed columns here. Per-study columns
-- are added by Store.ensureColumns with ALTER TABLE ADD COLUMN:
--   v_<name>  design variable  (REAL, or TEXT for a categorical variable)
--   m_<name>  metric           (REAL)
--   c_<name>  constraint value (REAL)

-- One row per distinct study file (deduplicated on the sha256 of its text).
CREATE TABLE studies (
  id            INTEGER PRIMARY KEY,
  name          TEXT NOT NULL,
  architecture  TEXT NOT NULL,
  file_text     TEXT NOT NULL,
  file_hash     TEXT NOT NULL UNIQUE,   -- sha256 hex of file_text
  settings_hash TEXT NOT NULL,          -- hash of the evaluation-relevant settings, made by the caller
  created_at    TEXT NOT NULL           -- ISO 8601 UTC
);

-- One row per command execution that produced or re-scored designs.
CREATE TABLE runs (
  id               INTEGER PRIMARY KEY,
  study_id         INTEGER NOT NULL REFERENCES studies(id),
  kind             TEXT NOT NULL CHECK (kind IN ('optimize', 'sweep', 'rescore', 'evaluate')),
  parent_run_id    INTEGER NULL REFERENCES runs(id),
  seed             INTEGER NOT NULL,
  settings_json    TEXT NOT NULL,       -- canonical JSON (object keys sorted)
  status           TEXT NOT NULL CHECK (status IN ('running', 'stopped', 'finished', 'failed')),
  workers          INTEGER NOT NULL,
  started_at       TEXT NOT NULL,       -- ISO 8601 UTC, first start
  finished_at      TEXT NULL,           -- ISO 8601 UTC, set when stopped/finished/failed, cleared on resume
  elapsed_seconds  REAL NOT NULL DEFAULT 0, -- active time summed over all sessions of the run [s]
  active_since     TEXT NULL,           -- ISO 8601 UTC start of the current session's unaccounted time; NULL when not running
  generations_done INTEGER NOT NULL DEFAULT 0,
  optimizer_state  TEXT NULL,           -- opaque JSON snapshot written with each generation, for resume
  message          TEXT NULL,
  end_reason       TEXT NULL CHECK (end_reason IN ('converged', 'budget')), -- why a finished run ended; NULL otherwise
  termination_json TEXT NULL,           -- canonical JSON of the termination the run used (see docs/optimizer.md)
  -- version 3: run-ownership lock (see Store.claimRun) and the command that resumes the run
  owner_pid        INTEGER NULL,        -- process writing the run; NULL when none owns it
  owner_host       TEXT NULL,           -- host name of that process
  owner_since      TEXT NULL,           -- ISO 8601 UTC, when that process took the run
  owner_token      TEXT NULL,           -- start time of that process as the OS reports it (tells a reused pid apart)
  heartbeat_at     TEXT NULL,           -- ISO 8601 UTC, the owner's last sign of life
  command          TEXT NULL            -- the command line that writes the run: the one that resumes it
);
CREATE INDEX runs_resume_lookup ON runs (study_id, kind, seed, status);
CREATE INDEX runs_by_parent ON runs (parent_run_id);

-- Which variable/metric/constraint names an evaluation row carries, so a row
-- reads back with exactly the keys it was written with (a NULL metric of this
-- study is kept apart from a column that belongs to another study).
-- Each column holds a JSON array of names, sorted.
CREATE TABLE column_sets (
  id          INTEGER PRIMARY KEY,
  variables   TEXT NOT NULL,
  metrics     TEXT NOT NULL,
  constraints TEXT NOT NULL,
  UNIQUE (variables, metrics, constraints)
);

-- One row per distinct (settings, design vector): the evaluation cache.
CREATE TABLE evaluations (
  id            INTEGER PRIMARY KEY,
  eval_key      TEXT NOT NULL UNIQUE,   -- caller-made hash of settings hash + exact design vector
  settings_hash TEXT NOT NULL,
  first_run_id  INTEGER NOT NULL REFERENCES runs(id),
  column_set_id INTEGER NOT NULL REFERENCES column_sets(id),
  violation     REAL NOT NULL,          -- total constraint violation, 0 when feasible
  feasible      INTEGER NOT NULL CHECK (feasible IN (0, 1)),
  error         TEXT NULL,              -- reason of a failed evaluation
  eval_seconds  REAL NULL               -- time the evaluation took [s]
);
CREATE INDEX evaluations_by_first_run ON evaluations (first_run_id);
CREATE INDEX evaluations_by_settings ON evaluations (settings_hash);

-- Population of every generation, in population order.
CREATE TABLE generation_members (
  run_id        INTEGER NOT NULL REFERENCES runs(id),
  generation    INTEGER NOT NULL,
  position      INTEGER NOT NULL,
  evaluation_id INTEGER NOT NULL REFERENCES evaluations(id),
  rank          INTEGER NOT NULL,       -- non-domination rank as given by the caller
  crowding      REAL NOT NULL,          -- crowding value as given by the caller (may be +Infinity)
  PRIMARY KEY (run_id, generation, position)
) WITHOUT ROWID;
CREATE INDEX generation_members_by_evaluation ON generation_members (evaluation_id);

-- Per-generation counters.
CREATE TABLE generation_stats (
  run_id                 INTEGER NOT NULL REFERENCES runs(id),
  generation             INTEGER NOT NULL,
  evaluations            INTEGER NOT NULL, -- designs in this generation
  new_evaluations        INTEGER NOT NULL, -- designs not served from the cache
  failed                 INTEGER NOT NULL,
  feasible_count         INTEGER NOT NULL,
  hypervolume            REAL NULL,
  elapsed_seconds        REAL NOT NULL,    -- [s]
  evaluations_per_second REAL NOT NULL,    -- [1/s]
  archive_size           INTEGER NULL,     -- designs in the optimizer's archive (best front found so far)
  hv_improvement         REAL NULL,        -- relative archive hypervolume gain over the convergence window
  PRIMARY KEY (run_id, generation)
) WITHOUT ROWID;

-- Friendly view of evaluations. Store.ensureColumns recreates it whenever
-- columns are added, exposing v_/m_/c_ columns without their prefix where
-- that does not clash (see docs/store.md). This is the fixed-column version.
CREATE VIEW results AS
SELECT id, eval_key, settings_hash, first_run_id, violation, feasible, error, eval_seconds
FROM evaluations;

PRAGMA user_version = 4;
