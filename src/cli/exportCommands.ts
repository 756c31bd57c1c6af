/** Commands that carry designs onward: export (JSON, CSV, MJCF) and rescore. */
import type { Argv } from 'yargs';

export function registerExportCommands(cli: Argv): Argv {
  return cli;
}
