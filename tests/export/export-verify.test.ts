/**
 * `loopsmith export --format mjcf --verify` end to end: a small optimization of the export fixture
 * (invented five-bar sorter, no duty cycle: the check runs the standard motion), one front design
 * exported and checked in MuJoCo; the check sheet carries the end-point error and loop gap within the
 * bounds of the issue (0.05 mm, 0.01 mm) and the model's own settings; --verify with another format
 * is a user error.
 */
import { afterAll, beforeAll, expect, it } from 'vitest';
import { existsSync, mkdtempSync, readFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { main } from '../../src/cli/main.js';
import type { MjcfCheckSheet } from '../../src/export/export.js';
import { runFront } from '../../src/run/front.js';
import { runOptimization } from '../../src/run/optimize.js';
import { loadStudyFile } from '../../src/study/parse.js';

const REPO_ROOT = fileURLToPath(new URL('../../', import.meta.url));
let directory: string;
let dbPath: string;

beforeAll(async () => {
  if (!existsSync(join(REPO_ROOT, 'dist', 'pool', 'worker.js'))) throw new Error('dist/pool/worker.js is missing: run "npm run build" before these tests');
  directory = mkdtempSync(join(tmpdir(), 'loopsmith-verify-'));
  dbPath = join(directory, 'export-sorter.db');
  await runOptimization(loadStudyFile(join(REPO_ROOT, 'tests', 'export', 'fixtures', 'export-sorter.yaml')), { dbPath, workers: 1 });
}, 120_000);

afterAll(() => {
  if (directory) rmSync(directory, { recursive: true, force: true });
});

it('writes the model and its check sheet; the model follows loopsmith\'s simulation within the bounds', async () => {
  const id = runFront(dbPath).designs[0]!.id;
  const out = join(directory, 'models');
  let stdout = '';
  const write = process.stdout.write.bind(process.stdout);
  process.stdout.write = ((chunk: string | Uint8Array) => ((stdout += String(chunk)), true)) as typeof process.stdout.write;
  let code: number;
  try {
    code = await main(['export', dbPath, '--ids', String(id), '--format', 'mjcf', '--verify', '--out', out], { pipeGuard: false });
  } finally {
    process.stdout.write = write;
  }
  console.info(stdout.trim());
  expect(code).toBe(0);
  expect(existsSync(join(out, `candidate-${id}.xml`))).toBe(true);
  const sheet = JSON.parse(readFileSync(join(out, `candidate-${id}.check.json`), 'utf8')) as MjcfCheckSheet;
  expect(sheet.format).toBe('loopsmith-mjcf-check/1');
  expect(sheet.id).toBe(id);
  expect(sheet.model).toBe(`candidate-${id}.xml`);
  expect(sheet.motion).toBe('standard-motion');
  expect(sheet.settings).toEqual({ integrator: 'RK4', timestep: 0.0001, loopClosureSolref: '0.0002 1', loopClosureSolimp: '0.9999 0.9999 0.001 0.5 2' });
  expect(sheet.runs.map((r) => r.name)).toEqual(['recorded-efforts', 'zero-effort']);
  expect(sheet.endPointError).toBeLessThanOrEqual(5e-5);
  expect(sheet.loopGap).toBeLessThanOrEqual(1e-5);
  expect(sheet.endPointError).toBe(Math.max(...sheet.runs.map((r) => r.endPointError)));
  expect(sheet.passed).toBe(true);
  expect(sheet.simulatedTimePerWallSecond).toBeGreaterThan(0);
  expect(sheet.safetyNote).toMatch(/not a safety analysis/);
  expect(stdout).toMatch(/MuJoCo check in motion/);
}, 120_000);

it('refuses --verify with a format other than mjcf', async () => {
  let stderr = '';
  const write = process.stderr.write.bind(process.stderr);
  process.stderr.write = ((chunk: string | Uint8Array) => ((stderr += String(chunk)), true)) as typeof process.stderr.write;
  try {
    expect(await main(['export', dbPath, '--front', '--format', 'json', '--verify', '--out', join(directory, 'json')], { pipeGuard: false })).toBe(1);
  } finally {
    process.stderr.write = write;
  }
  expect(stderr).toMatch(/--verify checks MJCF models/);
});
