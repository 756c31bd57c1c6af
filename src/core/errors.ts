/**
 * Base class of every error a user can cause (a bad study file, design value, unit, store, query,
 * export or command-line value). Its message is for the user as it stands; the CLI prints it and
 * exits 1. Any other error is a bug.
 */
export class LoopsmithUserError extends Error {
  constructor(message: string) {
    super(message);
    this.name = new.target.name;
  }
}

/** Errors of other libraries whose message is meant for the user (SQLite refusing a file or a query). */
const FOREIGN_USER_ERROR_NAMES = new Set(['SqliteError', 'ReportError']);

/** Errors a user can cause: every LoopsmithUserError, plus SQLite's own. */
export function isUserError(error: unknown): error is Error {
  return error instanceof LoopsmithUserError || (error instanceof Error && FOREIGN_USER_ERROR_NAMES.has(error.name));
}
