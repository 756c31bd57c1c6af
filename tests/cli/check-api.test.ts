/**
 * `loopsmith check` prints what the API's `checkStudy` gives (src/api/studySummary.ts): the command
 * holds no logic of its own. Source: derived here — the command is `out(checkStudy(loaded).text)`, so
 * its output is the API's text plus the newline the command line ends every output with.
 */
import { describe, expect, it } from 'vitest';
import { join } from 'node:path';
import { ApiArgumentError, checkStudy, loadStudyFile, studySummary } from '../../src/index.js';
import { REPO_ROOT, assertBuilt } from '../fixtures/harness.js';
import { runInProcess } from './inProcess.js';

const STUDIES = ['parcel-sorter.yaml', 'compare-fivebar-2prr.yaml', 'platform-3rpr.yaml', 'rail-sorter-2prr-cycle.yaml'];

describe('check through the API', () => {
  it.each(STUDIES)('%s: the command prints checkStudy\'s text, and --json its data', async (name) => {
    assertBuilt();
    const path = join('studies', name);
    const check = checkStudy(loadStudyFile(join(REPO_ROOT, path)), path);
    expect(check.text.startsWith(`${path}: valid\n\n`)).toBe(true);
    expect(check.text).toContain(studySummary(check.data.study));
    expect(check.text.endsWith(check.baseline.text)).toBe(true);
    const cwd = process.cwd();
    process.chdir(REPO_ROOT);
    try {
      const text = await runInProcess(['check', path]);
      expect(text.code).toBe(0);
      expect(text.stdout).toBe(`${check.text}\n`);
      const json = await runInProcess(['check', path, '--json']);
      expect(JSON.parse(json.stdout)).toEqual(JSON.parse(JSON.stringify(check.data, (_k, v: unknown) => (typeof v === 'number' && !Number.isFinite(v) && !Number.isNaN(v) ? (v > 0 ? 'Infinity' : '-Infinity') : v))));
    } finally {
      process.chdir(cwd);
    }
  });

  it('checkStudy needs the loaded study, not its .study (negative control)', () => {
    const loaded = loadStudyFile(join(REPO_ROOT, 'studies', 'parcel-sorter.yaml'));
    expect(() => checkStudy(loaded.study as never)).toThrow(ApiArgumentError);
  });
});
