/**
 * loopsmith's own package root, files and version, found from this module's location — never from the
 * working directory, so an installed package reads its own files. This file sits one folder below the
 * package root both as source (src/core) and compiled (dist/core). The version is shared by the CLI,
 * the evaluation settings hash, plans and export provenance.
 */
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';

const PACKAGE_ROOT = fileURLToPath(new URL('../../', import.meta.url));

/** Absolute path of a file or folder inside the installed loopsmith package, e.g. `packageFile('studies')`. */
export function packageFile(relativePath: string): string {
  return join(PACKAGE_ROOT, relativePath);
}

let cachedVersion: string | undefined;

/** The version of this loopsmith, from its own package.json. */
export function loopsmithVersion(): string {
  if (cachedVersion === undefined) {
    const parsed = JSON.parse(readFileSync(packageFile('package.json'), 'utf8')) as { name?: unknown; version?: unknown };
    if (parsed.name !== 'loopsmith' || typeof parsed.version !== 'string') {
      throw new Error(`${packageFile('package.json')} is not loopsmith's package.json (name ${String(parsed.name)})`);
    }
    cachedVersion = parsed.version;
  }
  return cachedVersion;
}

/** The program version that enters the evaluation settings hash and plans (the same as `loopsmithVersion`). */
export const programVersion = loopsmithVersion;
