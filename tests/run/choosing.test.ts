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
import { evaluateDesign } from '../../src/api/design.js';
import { snapToStep } from '../../src/run/roundDesigns.js';
import { nonDominated } from '../../src/run/front.js';
import { parseVariation, scaleAssumption, sensitivity } from '../../src/run/sensitivity.js';
import { Store } from '../../src/store/store.js';
import { existsSync } from 'node:fs';
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

describe('export --round: buildable numbers', () => {
  it('snaps to the nearest multiple inside the bounds (derived)', () => {
    expect(snapToStep(0.28694, 0.0005, 0.15, 0.45)).toBe(0.287);
    expect(snapToStep(0.1502, 0.0005, 0.1502, 0.45)).toBe(0.1505); // 0.150 is below the bound
    expect(snapToStep(0.3, 0.0005, 0.15, 0.45)).toBe(0.3);
  });

  it('rounds the front, re-evaluates, stores the rounded designs and exports them', async () => {
    const outDir = join(dir, 'rounded');
    const front = runFront(dbPath);
    const result = await runCli(['export', dbPath, '--front', '--round', '0.5mm', '--format', 'json', '--out', outDir, '--workers', '1']);
    expect(result.code, result.stderr).toBe(0);
    expect(result.stdout).toMatch(/rounded lengths to 0\.5 mm: \d+ designs of run 1/);
    const store = Store.open(dbPath);
    try {
      const run = store.listRuns().at(-1)!;
      expect(run.kind).toBe('evaluate');
      expect(run.parentRunId).toBe(1);
      const members = store.generationMembers(run.id, 0);
      expect(members.length).toBeGreaterThan(0);
      const { study } = loadStudyFile(FIVE);
      for (const m of members) {
        for (const name of ['base_span', 'crank_1', 'rod_1']) {
          const value = m.variables[name] as number;
          expect(Math.abs(value / 0.0005 - Math.round(value / 0.0005))).toBeLessThan(1e-6);
        }
        // Re-evaluated: the stored metrics are those of a fresh evaluation of the rounded design.
        const fresh = evaluateDesign(study, ['base_span', 'crank_1', 'rod_1'].map((n) => `${n}=${m.variables[n]}m`)).report;
        for (const o of study.objectives) expect(m.metrics[o.metric]).toBeCloseTo(fresh.metrics[o.metric]!, 9);
        expect(existsSync(join(outDir, `candidate-${m.id}.json`))).toBe(true);
      }
      // Every front design has its rounded counterpart line in the report.
      for (const d of front.designs) expect(result.stdout).toContain(`design ${d.id} → `);
    } finally {
      store.close();
    }
  });
});

describe('sensitivity: representatives under changed assumptions', () => {
  it('changes one number of the study and keeps its unit', () => {
    const text = 'study: x\nmass:\n  payload: 0.5 kg\n';
    expect(scaleAssumption(text, 'mass.payload', 1.2)).toMatchObject({ from: '0.5 kg', to: '0.6 kg' });
    expect(parseVariation('payload=20%')).toEqual({ name: 'payload', path: 'mass.payload', fraction: 0.2 });
    expect(() => parseVariation('payload=twenty')).toThrow(/NAME=±PERCENT/);
    expect(() => scaleAssumption(text, 'mass.cranks', 1.1)).toThrow(/no number or quantity/);
  });

  it('rescores the front under payload ±30 % and reports which representatives stay non-dominated', async () => {
    const before = runFront(dbPath, 1);
    const result = await sensitivity({ dbPath, runId: 1, variations: [parseVariation('payload=30%')], workers: 1 });
    expect(result.cases.map((c) => c.change)).toEqual([-0.3, 0.3]);
    expect(result.cases.map((c) => c.to)).toEqual(['0.35 kg', '0.65 kg']);
    const { study } = loadStudyFile(FIVE);
    const minimised = (metrics: Record<string, number | null>) => study.objectives.map((o) => (o.sense === 'max' ? -1 : 1) * (metrics[o.metric] ?? Number.NaN));
    const store = Store.open(dbPath);
    try {
      for (const c of result.cases) {
        const members = store.generationMembers(c.rescoreRunId, 0);
        // Only the front designs are rescored.
        expect(members.length).toBeLessThanOrEqual(before.designs.length);
        const feasible = members.filter((m) => m.feasible && m.error === null);
        const front = new Set(nonDominated(feasible, (m) => minimised(m.metrics)).map((m) => JSON.stringify(m.variables)));
        for (const r of c.representatives) {
          const original = before.designs.find((d) => d.id === r.id)!;
          const now = members.find((m) => JSON.stringify(m.variables) === JSON.stringify(original.variables))!;
          const expected = front.has(JSON.stringify(now.variables)) ? 'non-dominated' : now.feasible ? 'dominated' : 'infeasible';
          expect(r.status).toBe(expected);
          // Derived: a heavier payload needs more holding torque, a lighter one less.
          const torque = now.metrics['peak_gravity_torque']!;
          if (c.change > 0) expect(torque).toBeGreaterThan(original.metrics['peak_gravity_torque']!);
          else expect(torque).toBeLessThan(original.metrics['peak_gravity_torque']!);
        }
      }
    } finally {
      store.close();
    }
    expect(result.robust.every((id) => result.representatives.some((r) => r.id === id))).toBe(true);
  });
});
