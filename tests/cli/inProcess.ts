/**
 * Runs the command line in this process (`main` from dist/, as bin/loopsmith.js does) with stdout and
 * stderr captured: dozens of invocations cost milliseconds instead of a Node start-up each.
 */
import { main } from '../../dist/cli/main.js';

export interface InProcessResult {
  readonly code: number;
  readonly stdout: string;
  readonly stderr: string;
}

let queue: Promise<unknown> = Promise.resolve();

/** One invocation; invocations never overlap (they share process.stdout and process.stderr). */
export function runInProcess(args: readonly string[]): Promise<InProcessResult> {
  const next = queue.then(() => invoke(args));
  queue = next.catch(() => undefined);
  return next;
}

async function invoke(args: readonly string[]): Promise<InProcessResult> {
  let stdout = '';
  let stderr = '';
  const writeOut = process.stdout.write.bind(process.stdout);
  const writeErr = process.stderr.write.bind(process.stderr);
  process.stdout.write = ((chunk: string | Uint8Array) => ((stdout += String(chunk)), true)) as typeof process.stdout.write;
  process.stderr.write = ((chunk: string | Uint8Array) => ((stderr += String(chunk)), true)) as typeof process.stderr.write;
  const log = console.log;
  const error = console.error;
  console.log = (...items: unknown[]) => void (stdout += items.map(String).join(' ') + '\n');
  console.error = (...items: unknown[]) => void (stderr += items.map(String).join(' ') + '\n');
  let code: number;
  try {
    code = await main(args, { pipeGuard: false });
  } catch (failure) {
    // What bin/loopsmith.js reports as an internal error (exit 70).
    stderr += `loopsmith: internal error: ${failure instanceof Error ? (failure.stack ?? failure.message) : String(failure)}\n`;
    code = 70;
  } finally {
    process.stdout.write = writeOut;
    process.stderr.write = writeErr;
    console.log = log;
    console.error = error;
  }
  return { code, stdout, stderr };
}
