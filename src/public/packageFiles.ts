/**
 * Files that ship with loopsmith (its package.json, demo studies, schemas), found from this module's
 * own location — never from the working directory, so an installed package reads its own files.
 * This file sits one folder below the package root both as source (src/public) and compiled
 * (dist/public).
 */
import { readFileSync, readdirSync } from 'node:fs';
import { fileURLToPath } from 'node:url';
import { extname, join } from 'node:path';
import { checkArguments, is } from './arguments.js';

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

/** Names of the demo studies shipped in the package's studies/ folder (all invented scenarios). */
export function demoStudyNames(): string[] {
  return readdirSync(packageFile('studies'))
    .filter((file) => extname(file) === '.yaml')
    .map((file) => file.slice(0, -'.yaml'.length))
    .sort();
}

/** Absolute path of a shipped demo study, e.g. `demoStudyPath('parcel-sorter')`; its catalogues sit beside it. */
export function demoStudyPath(name: string): string {
  const names = demoStudyNames();
  checkArguments('demoStudyPath', { name: [name, is.oneOf(names)] });
  return packageFile(join('studies', `${name}.yaml`));
}
