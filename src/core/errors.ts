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
