/**
 * The program version is part of the evaluation settings hash: results of another loopsmith version
 * are never served from the cache nor merged. Stores written before the version entered the hash
 * (their settings_hash is the bare study settings hash) still open, export and rescore.
 */
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { exportCandidates } from '../../src/export/export.js';
import { rescoreRun } from '../../src/run/rescore.js';
import { runSweep } from '../../src/run/sweep.js';
import { evaluationSettingsHash, loadStudyFile, studySettingsHash } from '../../src/study/parse.js';
import { programVersion } from '../../src/core/version.js';
import { assertBuilt, makeTemporaryDirectory, readDatabase, removeTemporaryDirectories, SMALL_STUDY } from '../fixtures/harness.js';

beforeAll(assertBuilt);
afterAll(removeTemporaryDirectories);

describe('program version in the evaluation settings hash', () => {
  const loaded = loadStudyFile(SMALL_STUDY);

  it('changes with the version and nothing else', () => {
    expect(loaded.settingsHash).toBe(evaluationSettingsHash(loaded.study, programVersion()));
    expect(evaluationSettingsHash(loaded.study, '0.1.0')).not.toBe(evaluationSettingsHash(loaded.study, '0.1.1'));
    expect(evaluationSettingsHash(loaded.study, '0.1.0')).toBe(evaluationSettingsHash(loadStudyFile(SMALL_STUDY).study, '0.1.0'));
    expect(loaded.settingsHash).not.toBe(studySettingsHash(loaded.study));
  });

  it('a store from before the version entered the hash opens, exports and rescores; its results are not reused', async () => {
    const dir = makeTemporaryDirectory('version');
    const db = join(dir, 'old.db');
    // What an earlier loopsmith wrote: the bare study settings hash in every evaluation.
    const legacy = { ...loaded, settingsHash: studySettingsHash(loaded.study) };
    await runSweep(legacy, { dbPath: db, samples: 6, method: 'lhs', workers: 1 });
    const again = await runSweep(loaded, { dbPath: db, samples: 6, method: 'lhs', workers: 1 });
    const rows = readDatabase(db, (d) => d.prepare<[], { settings_hash: string; n: number }>('SELECT settings_hash, COUNT(*) AS n FROM evaluations GROUP BY settings_hash ORDER BY MIN(id)').all());
    expect(rows).toEqual([{ settings_hash: legacy.settingsHash, n: 6 }, { settings_hash: loaded.settingsHash, n: 6 }]);
    const stats = readDatabase(db, (d) => d.prepare<[number], { new_evaluations: number }>('SELECT new_evaluations FROM generation_stats WHERE run_id = ?').get(again.runId));
    expect(stats!.new_evaluations).toBe(6); // nothing taken from the older version's rows

    // Rows of the older version exported with the provenance of the newer run of the same study.
    const exported = exportCandidates(db, { ids: [1, 2], runId: again.runId, format: 'json', outDir: join(dir, 'export') });
    expect(exported.sheets.length).toBe(2);
    const rescored = await rescoreRun(loaded, { dbPath: db, runId: 1, workers: 1 });
    expect(rescored.designs).toBe(6);
  }, 120_000);
});
