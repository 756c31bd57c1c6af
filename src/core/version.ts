/** The loopsmith program version (package.json), shared by the evaluation settings hash, plans and provenance. */
import { readFileSync } from 'node:fs';

let cached: string | undefined;

/** The `version` of loopsmith's package.json (two folders up from src/core and dist/core). */
export function programVersion(): string {
  if (cached === undefined) {
    const parsed = JSON.parse(readFileSync(new URL('../../package.json', import.meta.url), 'utf8')) as { version?: unknown };
    cached = typeof parsed.version === 'string' ? parsed.version : 'unknown';
  }
  return cached;
}
