/** The `simulate` command: forward simulation of one design along the study's duty cycle. */
import type { Argv } from 'yargs';

export function registerSimulateCommands(cli: Argv): Argv {
  return cli;
}
