/** How the user started loopsmith, so hints and stored resume commands can be pasted back as they are. */
import { basename, isAbsolute, relative } from 'node:path';

let givenArguments: readonly string[] = [];

/** Remembers the arguments of this invocation (main does it). */
export function setInvocationArguments(argv: readonly string[]): void {
  givenArguments = [...argv];
}

/**
 * The command that reaches loopsmith the way this process was started: `loopsmith` from a global
 * install or `npm link`, `npx loopsmith` from a project's node_modules, `node bin/loopsmith.js` from a
 * checkout.
 */
export function programName(): string {
  const script = process.argv[1] ?? '';
  if (basename(script) === 'loopsmith') return /node_modules[\\/]\.bin[\\/]loopsmith$/.test(script) ? 'npx loopsmith' : 'loopsmith';
  if (basename(script) === 'loopsmith.js') {
    const fromHere = relative(process.cwd(), script);
    return `node ${fromHere.startsWith('..') || isAbsolute(fromHere) ? shellQuote(script) : shellQuote(fromHere)}`;
  }
  return 'loopsmith';
}

/** One shell word (POSIX quoting where needed). */
export function shellQuote(word: string): string {
  return /^[\w@%+=:,./-]+$/.test(word) ? word : `'${word.replaceAll("'", `'\\''`)}'`;
}

/** A command line to show: the program name and shell-quoted arguments. */
export function commandLine(args: readonly string[]): string {
  return [programName(), ...args.map(shellQuote)].join(' ');
}

/** This invocation as a command that can be pasted from any folder (`cd FOLDER && ...`). */
export function resumableCommand(): string {
  return `cd ${shellQuote(process.cwd())} && ${commandLine(givenArguments)}`;
}
