/** Commands that run studies and read the store (run, sweep, runs, front, query). */
import type { Argv } from 'yargs';

export function registerStoreCommands(cli: Argv): Argv {
  return cli;
}
