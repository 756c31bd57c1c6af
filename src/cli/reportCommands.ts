/** Commands that draw: map (workspace of one design) and report (HTML study report). */
import type { Argv } from 'yargs';

export function registerReportCommands(cli: Argv): Argv {
  return cli;
}
