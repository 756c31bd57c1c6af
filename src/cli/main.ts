/**
 * The `loopsmith` command line: thin glue over the programmatic API in src/api. Each command is
 * registered by its own function (studyCommands.ts, storeCommands.ts, …), in the order `--help` lists them.
 * Errors a user can cause end with one message and exit code 1; a bad command line exits with 2.
 */
import { isUserError } from '../core/errors.js';
import yargs, { type Argv } from 'yargs';
import { loopsmithVersion } from '../core/version.js';
import { registerStudyCommands } from './studyCommands.js';
import { registerStoreCommands } from './storeCommands.js';
import { registerReportCommands } from './reportCommands.js';
import { registerExportCommands } from './exportCommands.js';
import { registerSimulateCommands } from './simulateCommands.js';
import { joinNegativeValues, UsageError, UserError } from './argChecks.js';
import { programName, setInvocationArguments } from './invocation.js';
import { registerScaleCommands } from './scaleCommands.js';
import { registerAccuracyCommands } from './accuracyCommands.js';

export { UserError, UsageError, isUserError };

export function buildCli(argv: readonly string[]): Argv {
  let cli = yargs([...argv])
    .scriptName('loopsmith')
    .usage('$0 <command> [options]\n\nChooses link lengths of planar parallel robots. Results are early-design estimates, not a safety analysis.');
  cli = registerStudyCommands(cli);
  cli = registerStoreCommands(cli);
  cli = registerReportCommands(cli);
  cli = registerExportCommands(cli);
  cli = registerSimulateCommands(cli);
  cli = registerScaleCommands(cli);
  cli = registerAccuracyCommands(cli);
  return cli
    .demandCommand(1, 'give a command; see loopsmith --help')
    .strict()
    .help()
    .version(loopsmithVersion()) // loopsmith's own package.json, not the one in the working directory
    .fail((message, error) => {
      // Errors thrown by option checks (coerce) come as YError: they are command-line mistakes.
      if (error instanceof UsageError) throw error;
      if (error && error.name !== 'YError') throw error;
      throw new UsageError(message ?? error?.message ?? 'bad command line');
    });
}

/** File-system failures a user can cause (a folder that does not exist or is not writable, a full disk). */
const FILE_ERROR_TEXT: Readonly<Record<string, string>> = {
  EACCES: 'permission denied',
  EPERM: 'operation not permitted',
  EROFS: 'the file system is read-only',
  ENOENT: 'no such file or folder',
  ENOTDIR: 'a part of the path is not a folder',
  EISDIR: 'it is a folder, not a file',
  ENOSPC: 'no space left on the device',
  EEXIST: 'it exists already',
  ENAMETOOLONG: 'the name is too long',
};

/** One line for a file-system error, or undefined when it is not one. */
export function fileErrorMessage(error: unknown): string | undefined {
  const e = error as NodeJS.ErrnoException;
  if (!(error instanceof Error) || typeof e.code !== 'string' || !(e.code in FILE_ERROR_TEXT)) return undefined;
  const path = e.path ?? (e as { dest?: string }).dest;
  const verb = e.syscall === 'open' || e.syscall === 'mkdir' || e.syscall === 'rename' || e.syscall === 'write' ? 'cannot write' : 'cannot use';
  return `${path ? `${verb} ${path}` : 'file error'}: ${FILE_ERROR_TEXT[e.code]} (${e.code}); choose another path or fix its permissions`;
}

let pipeGuardInstalled = false;

/** A reader that stops early (`| head`) closes the pipe: end quietly, as command-line tools do. */
function installPipeGuard(): void {
  if (pipeGuardInstalled) return;
  pipeGuardInstalled = true;
  const quietOnBrokenPipe = (error: NodeJS.ErrnoException): void => {
    if (error.code === 'EPIPE' || error.code === 'ERR_STREAM_DESTROYED') process.exit(process.exitCode === undefined ? 0 : Number(process.exitCode));
    throw error;
  };
  process.stdout.on('error', quietOnBrokenPipe);
}

export interface MainOptions {
  /** Exit quietly when stdout is closed early (the command line does; tests that run main in-process do not). */
  readonly pipeGuard?: boolean;
}

export async function main(argv: readonly string[], options: MainOptions = {}): Promise<number> {
  if (options.pipeGuard !== false) installPipeGuard();
  const before = process.exitCode;
  try {
    process.exitCode = undefined;
    setInvocationArguments(argv);
    await buildCli(joinNegativeValues(argv)).parseAsync();
    return process.exitCode === undefined ? 0 : Number(process.exitCode);
  } catch (error) {
    if (error instanceof UsageError) {
      process.stderr.write(`loopsmith: ${error.message}\nsee: ${programName()} --help\n`);
      return 2;
    }
    if (isUserError(error)) {
      process.stderr.write(`loopsmith: ${error.message}\n`);
      return 1;
    }
    const fileMessage = fileErrorMessage(error);
    if (fileMessage !== undefined) {
      process.stderr.write(`loopsmith: ${fileMessage}\n`);
      return 1;
    }
    throw error;
  } finally {
    if (options.pipeGuard === false) process.exitCode = before;
  }
}
