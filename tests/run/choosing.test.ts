/**
 * Choosing a design from the front, end to end on a small invented five-objective study
 * (tests/fixtures/five-objective-sorter.yaml, optimizer.algorithm: nsga3): an NSGA-III run that is
 * stopped and resumed ends exactly like an uninterrupted one; `front --representatives/--knees/
 * --redundancy` on its store. Spawns the real command line (run `npm run build` first).
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { join } from 'node:path';
import { runFront } from '../../src/run/front.js';
import { runOptimization } from '../../src/run/optimize.js';
import { loadStudyFile } from '../../src/study/parse.js';
import { assertBuilt, makeTemporaryDirectory, readDatabase, removeTemporaryDirectories, runCli, REPO_ROOT } from '../fixtures/harness.js';

const FIVE = join(REPO_ROOT, 'tests', 'fixtures', 'five-objective-sorter.yaml');
let dir = '';
let dbPath = '';

beforeAll(async () => {
  assertBuilt();
  dir = makeTemporaryDirectory('loopsmith-choosing-');
  dbPath = join(dir, 'five.db');
  await runOptimization(loadStudyFile(FIVE), { dbPath, generations: 5, workers: 1 });
});
afterAll(() => removeTemporaryDirectories());

describe('NSGA-III in a study', () => {
  it('records the algorithm with its settings, and a stopped run resumes to the same front', async () => {
    const settings = readDatabase(dbPath, (db) => db.prepare<[], { settings_json: string }>('SELECT settings_json FROM runs').get()!.settings_json);
    expect(JSON.parse(settings)).toMatchObject({ algorithm: 'nsga3', crossoverProbability: 1, crossoverEta: 30 });
    const stoppedDb = join(dir, 'stopped.db');
    let generations = 0;
    const first = await runOptimization(loadStudyFile(FIVE), { dbPath: stoppedDb, generations: 5, workers: 1, shouldStop: () => ++generations >= 2 });
    expect(first.status).toBe('stopped');
    const second = await runOptimization(loadStudyFile(FIVE), { dbPath: stoppedDb, generations: 5, workers: 1 });
    expect(second.resumedFromGeneration).toBe(2);
    const brief = (path: string) => runFront(path).designs.map((d) => JSON.stringify([d.variables, d.metrics]));
    expect(brief(stoppedDb)).toEqual(brief(dbPath));
  });
});

describe('front --representatives, --knees, --redundancy', () => {
  it('lists K representatives with their reasons, the extremes among them', async () => {
    const first = await runCli(['front', dbPath, '--representatives', '4', '--knees', '--redundancy', '--format', 'json']);
    expect(first.code).toBe(0);
    const parsed = JSON.parse(first.stdout) as {
      designs: { id: number }[];
      analysis: { extremes: { metric: string; id: number }[]; representatives: { id: number; reasons: string[] }[]; redundancy: { essential: string[] } };
    };
    const ids = parsed.designs.map((d) => d.id);
    expect(ids).toEqual(parsed.analysis.representatives.map((r) => r.id));
    for (const extreme of parsed.analysis.extremes) expect(ids).toContain(extreme.id);
    expect(ids.length).toBeGreaterThanOrEqual(4);
    expect(parsed.analysis.redundancy.essential.length).toBeGreaterThan(0);
    const table = await runCli(['front', dbPath, '--representatives', '4', '--knees', '--redundancy']);
    expect(table.code).toBe(0);
    expect(table.stdout).toContain('chosen as');
    expect(table.stdout).toMatch(/knees|knee/);
    expect(table.stdout).toContain('principal components');
  });
});
