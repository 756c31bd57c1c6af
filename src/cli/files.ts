/** Files the command line writes: whole or not at all. */
import { renameSync, rmSync, writeFileSync } from 'node:fs';
import { basename, dirname, join } from 'node:path';

/** Writes to a temporary file beside the target and renames it into place, so no reader sees half a file. */
export function writeFileAtomically(path: string, data: string | Uint8Array): void {
  const temporary = join(dirname(path), `.${basename(path)}.${process.pid}.partial`);
  try {
    writeFileSync(temporary, data);
    renameSync(temporary, path);
  } catch (error) {
    rmSync(temporary, { force: true });
    throw error;
  }
}
