/**
 * A stored run of the drive-train demo (studies/parcel-sorter-drivetrains.yaml, INVENTED data),
 * rescored with a weaker motor catalogue: the same motor names with lower peak and continuous torque.
 * The designs of the old front that fail now fail on the drive constraints (the envelope, RMS,
 * acceleration or cycle-time checks) and on nothing else, and every stored figure is what a fresh
 * evaluation under the weaker catalogue gives.
 *
 * The worker pool runs the compiled dist/ (run `npm run build` first).
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { copyFileSync, mkdtempSync, readFileSync, rmSync, writeFileSync, mkdirSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { runOptimization } from '../../src/run/optimize.js';
import { rescoreRun, type RescoreResult } from '../../src/run/rescore.js';
import { runFront } from '../../src/run/front.js';
import { loadStudyFile, type LoadedStudy } from '../../src/study/parse.js';
import { Evaluator } from '../../src/mechanics/evaluate.js';
import { designFromValues } from '../../src/mechanics/designSpace.js';
import { assertBuilt } from '../fixtures/catalogue/helpers.js';

const ROOT = new URL('../../', import.meta.url).pathname;
let dir = '';
let dbPath = '';
let base: LoadedStudy;
let weaker: LoadedStudy;
let runId = 0;
let result: RescoreResult;

/** Peak and continuous torques of every motor × 0.6 (names kept): the weaker catalogue. */
function weakerMotors(text: string): string {
  return text
    .split('\n')
    .map((line) => (line.startsWith('IM-') ? line.replace(/(\d+(?:\.\d+)?) N\*m/g, (_, v: string) => `${Number((Number(v) * 0.6).toPrecision(6))} N*m`) : line))
    .join('\n');
}

beforeAll(async () => {
  assertBuilt();
  dir = mkdtempSync(join(tmpdir(), 'loopsmith-drives-rescore-'));
  for (const variant of ['base', 'weaker']) {
    mkdirSync(join(dir, variant, 'catalogues'), { recursive: true });
    copyFileSync(join(ROOT, 'studies', 'parcel-sorter-drivetrains.yaml'), join(dir, variant, 'study.yaml'));
    copyFileSync(join(ROOT, 'studies', 'catalogues', 'invented-gearboxes.csv'), join(dir, variant, 'catalogues', 'invented-gearboxes.csv'));
    const motors = readFileSync(join(ROOT, 'studies', 'catalogues', 'invented-motors.csv'), 'utf8');
    writeFileSync(join(dir, variant, 'catalogues', 'invented-motors.csv'), variant === 'weaker' ? weakerMotors(motors) : motors);
  }
  base = loadStudyFile(join(dir, 'base', 'study.yaml'));
  weaker = loadStudyFile(join(dir, 'weaker', 'study.yaml'));
  dbPath = join(dir, 'runs.db');
  const summary = await runOptimization(base, { dbPath, workers: 1, population: 32, generations: 10 });
  runId = summary.runId;
  result = await rescoreRun(weaker, { dbPath, runId, workers: 1 });
}, 300_000);

afterAll(() => rmSync(dir, { recursive: true, force: true }));

const DRIVE = /^(drive_|cycle_rate$)/;

describe('rescore of the drive-train demo with a weaker motor catalogue', () => {
  it('the weaker catalogue really is weaker (negative control on the edit)', () => {
    const strong = base.study.driveTrains!.motors.find((m) => m.name === 'IM-400')!;
    const weak = weaker.study.driveTrains!.motors.find((m) => m.name === 'IM-400')!;
    expect(weak.peak.torques[0]! / strong.peak.torques[0]!).toBeCloseTo(0.6, 12);
    expect(weak.continuous.torques[0]! / strong.continuous.torques[0]!).toBeCloseTo(0.6, 12);
    expect(weak.rotorInertia).toBe(strong.rotorInertia);
  });

  it('old-front designs that fail now fail on drive constraints only, and at least one does', () => {
    const oldFront = runFront(dbPath, runId).designs;
    expect(oldFront.length).toBeGreaterThan(0);
    expect(result.mode).toBe('per-pose');
    const evaluator = new Evaluator(weaker.study);
    let failing = 0;
    const binding = new Map<string, number>();
    for (const d of oldFront) {
      const e = evaluator.evaluate(designFromValues(evaluator.variables, d.variables, true));
      if (e.feasible) continue;
      failing++;
      evaluator.constraints.forEach((c, k) => {
        if (e.margins[k]! < 0) binding.set(c.name, (binding.get(c.name) ?? 0) + 1);
      });
    }
    expect(failing).toBeGreaterThan(0);
    for (const name of binding.keys()) expect(name, `constraint ${name} fails after a motor-only change`).toMatch(DRIVE);
    // The rescore's own report agrees: drive constraints violated by the old front, nothing else.
    const reported = result.constraints.filter((c) => c.violatedByOldFront > 0).map((c) => c.name);
    expect(reported.length).toBeGreaterThan(0);
    for (const name of reported) expect(name).toMatch(DRIVE);
    console.log(`rescore: ${failing} of ${oldFront.length} old-front designs infeasible; binding: ${[...binding].map(([n, c]) => `${n} ×${c}`).join(', ')}; reported ${JSON.stringify(result.constraints.filter((c) => c.violatedByOldFront > 0))}`);
  });
});
