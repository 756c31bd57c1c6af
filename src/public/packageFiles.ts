/**
 * Files that ship with loopsmith (its package.json, demo studies, schemas), found from the package
 * root that src/core/version.ts locates from its own place — never from the working directory, so an
 * installed package reads its own files.
 */
import { readdirSync } from 'node:fs';
import { extname, join } from 'node:path';
import { checkArguments, is } from './arguments.js';
import { loopsmithVersion, packageFile } from '../core/version.js';

export { loopsmithVersion, packageFile };

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
