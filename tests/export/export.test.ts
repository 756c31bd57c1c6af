/**
 * `loopsmith export` end to end on a small database made by a real optimization run (the invented
 * fixture tests/export/fixtures/export-sorter.yaml; the worker pool runs dist/, so `npm run build`
 * first): selection by front and by ids, JSON sheets against candidate.schema.json (ajv), the CSV
 * table, MJCF models of front designs in MuJoCo, and the command's messages.
 */
import { afterAll, beforeAll, describe, expect, it, vi } from 'vitest';
import { existsSync, mkdtempSync, readdirSync, readFileSync, rmSync } from 'node:fs';
import { createHash } from 'node:crypto';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { Ajv } from 'ajv';
import { runOptimization } from '../../src/run/optimize.js';
import { runFront } from '../../src/run/front.js';
import { loadStudyFile, type LoadedStudy } from '../../src/study/parse.js';
import { queryEvaluations } from '../../src/store/query.js';
import { main } from '../../src/cli/main.js';
import { ExportError, type CandidateSheet } from '../../src/export/candidate.js';
import { flattenSheet } from '../../src/export/csv.js';
import { candidateSheets, exportCandidates } from '../../src/export/export.js';
import candidateSchema from '../../src/export/candidate.schema.json' with { type: 'json' };
import { checkExportedModel, describeMeasurement, type ModelMeasurement } from './mjcfChecks.js';

const REPO_ROOT = fileURLToPath(new URL('../../', import.meta.url));
const FIXTURE = join(REPO_ROOT, 'tests', 'export', 'fixtures', 'export-sorter.yaml');
const PACKAGE_VERSION = (JSON.parse(readFileSync(join(REPO_ROOT, 'package.json'), 'utf8')) as { version: string }).version;

let directory: string;
let dbPath: string;
let loaded: LoadedStudy;
let runId: number;

beforeAll(async () => {
  if (!existsSync(join(REPO_ROOT, 'dist', 'pool', 'worker.js'))) throw new Error('dist/pool/worker.js is missing: run "npm run build" before these tests');
  directory = mkdtempSync(join(tmpdir(), 'loopsmith-export-'));
  dbPath = join(directory, 'export-sorter.db');
  loaded = loadStudyFile(FIXTURE);
  const summary = await runOptimization(loaded, { dbPath, workers: 1 });
  runId = summary.runId;
});

afterAll(() => {
  if (directory) rmSync(directory, { recursive: true, force: true });
});

/** Minimal RFC 4180 reader (quoted fields with "" escapes), enough for the files written here. */
function parseCsv(text: string): string[][] {
  const rows: string[][] = [];
  let row: string[] = [];
  let field = '';
  let quoted = false;
  for (let i = 0; i < text.length; i++) {
    const ch = text[i]!;
    if (quoted) {
      if (ch === '"' && text[i + 1] === '"') { field += '"'; i++; }
      else if (ch === '"') quoted = false;
      else field += ch;
    } else if (ch === '"') quoted = true;
    else if (ch === ',') { row.push(field); field = ''; }
    else if (ch === '\n') { row.push(field); rows.push(row); row = []; field = ''; }
    else field += ch;
  }
  if (field !== '' || row.length > 0) { row.push(field); rows.push(row); }
  return rows;
}

function schemaValidator() {
  return new Ajv({ allErrors: true, strict: true }).compile(candidateSchema);
}

describe('export of the front as JSON sheets', () => {
  let sheets: CandidateSheet[];
  let files: readonly string[];

  beforeAll(() => {
    const out = join(directory, 'json');
    const result = exportCandidates(dbPath, { front: true, format: 'json', outDir: out });
    sheets = [...result.sheets];
    files = result.files;
  });

  it('writes one candidate-<id>.json per front design', () => {
    const front = runFront(dbPath);
    expect(front.designs.length).toBeGreaterThan(0);
    expect(sheets.map((s) => s.id)).toEqual(front.designs.map((d) => d.id));
    expect(files.map((f) => f.split('/').at(-1))).toEqual(front.designs.map((d) => `candidate-${d.id}.json`));
  });

  it('every JSON file validates against src/export/candidate.schema.json (ajv, draft-07)', () => {
    const validate = schemaValidator();
    for (const file of files) {
      const parsed: unknown = JSON.parse(readFileSync(file, 'utf8'));
      const ok = validate(parsed);
      expect(validate.errors ?? [], file).toEqual([]);
      expect(ok).toBe(true);
    }
  });

  it('the schema refuses a sheet with a missing field, a wrong type or an open loop', () => {
    const validate = schemaValidator();
    const original = JSON.parse(readFileSync(files[0]!, 'utf8')) as Record<string, unknown>;
    const missing = structuredClone(original);
    delete missing['provenance'];
    expect(validate(missing)).toBe(false);
    const wrongType = structuredClone(original) as { geometry: Record<string, unknown> };
    wrongType.geometry['crank_1'] = '300 mm';
    expect(validate(wrongType)).toBe(false);
    const open = structuredClone(original) as { homePose: Record<string, unknown> };
    open.homePose['loopClosureError'] = 1e-3;
    expect(validate(open)).toBe(false);
  });

  it('home pose: loop closed (rod tips coincide within 1e-12 m), angles consistent, inside the joint limits', () => {
    for (const sheet of sheets) {
      const h = sheet.homePose;
      // The task region's centre (fixture: (0, −450 mm)); front designs cover it.
      expect(h.source).toBe('task-region-centre');
      expect(h.endPoint).toEqual({ x: 0, y: -0.45 });
      // Rod tips recomputed here from the sheet's joint angles and lengths (derived: forward along each arm).
      const g = sheet.geometry;
      const tip = (pivot: { x: number; y: number }, theta: number, elbow: number, crank: number, rod: number) => [
        pivot.x + crank * Math.cos(theta) + rod * Math.cos(theta + elbow),
        pivot.y + crank * Math.sin(theta) + rod * Math.sin(theta + elbow),
      ];
      const t1 = tip(sheet.pivot_1!, h.theta_1, h.elbow_1, g.crank_1, g.rod_1);
      const t2 = tip(sheet.pivot_2!, h.theta_2, h.elbow_2, g.crank_2, g.rod_2);
      expect(Math.hypot(t1[0]! - t2[0]!, t1[1]! - t2[1]!)).toBeLessThan(1e-12);
      expect(Math.hypot(t1[0]! - h.endPoint.x, t1[1]! - h.endPoint.y)).toBeLessThan(1e-12);
      expect(h.loopClosureError).toBeLessThan(1e-12);
      // End joint: β_2 − β_1 up to a full turn (derived).
      const endJoint = h.theta_2 + h.elbow_2 - (h.theta_1 + h.elbow_1);
      expect(Math.abs(Math.sin(endJoint - h.endJoint))).toBeLessThan(1e-12);
      expect(Math.cos(endJoint - h.endJoint)).toBeGreaterThan(0);
      for (const [angle, range] of [[h.theta_1, sheet.jointLimits.theta_1], [h.theta_2, sheet.jointLimits.theta_2]] as const) {
        expect(angle).toBeGreaterThanOrEqual(range!.min);
        expect(angle).toBeLessThanOrEqual(range!.max);
      }
      // The home pose is one of the task samples, so its holding torque cannot exceed the stored peak.
      const peak = sheet.metrics['peak_gravity_torque'] as number;
      expect(Math.max(Math.abs(h.gravityTorque_1), Math.abs(h.gravityTorque_2))).toBeLessThanOrEqual(peak * (1 + 1e-12));
    }
  });

  it('bodies follow the engine body model; drives, metrics and provenance are the stored ones', () => {
    const front = runFront(dbPath);
    const study = loaded.study;
    const fileHash = createHash('sha256').update(readFileSync(FIXTURE, 'utf8')).digest('hex');
    sheets.forEach((sheet, k) => {
      const stored = front.designs[k]!;
      const p = sheet.geometry.crank_1;
      const crank = sheet.bodies.crank_1;
      const barMass = study.links.cranks[0].massPerLength * p;
      // Uniform bar plus hub point mass at the end: mass, first moment and inertia about the pivot
      // (derived: m L/2 + m_h L and m L²/3 + m_h L², parallel-axis theorem).
      expect(crank.mass).toBeCloseTo(barMass + study.elbowHubMass, 14);
      expect(crank.mass * crank.centreOfMass).toBeCloseTo((barMass * p) / 2 + study.elbowHubMass * p, 14);
      expect(crank.inertiaAboutCom + crank.mass * crank.centreOfMass ** 2).toBeCloseTo((barMass * p * p) / 3 + study.elbowHubMass * p * p, 14);
      const rod = sheet.bodies.rod_2;
      const rodMass = study.links.rods[1].massPerLength * sheet.geometry.rod_2;
      expect(rod.mass).toBeCloseTo(rodMass, 14);
      expect(rod.centreOfMass).toBeCloseTo(sheet.geometry.rod_2 / 2, 14);
      expect(rod.inertiaAboutCom).toBeCloseTo((rodMass * sheet.geometry.rod_2 ** 2) / 12, 14);
      expect(sheet.bodies.endMass.mass).toBeCloseTo(study.endHubMass + study.payloadMass, 14);
      // Moving mass: every body but the payload.
      const bodies = Object.values(sheet.bodies).reduce((sum, b) => sum + b.mass, 0);
      expect(bodies - sheet.payloadMass).toBeCloseTo(sheet.movingMass, 12);
      expect(sheet.movingMass).toBeCloseTo(stored.metrics['moving_mass']!, 12);
      // Drive: reflected inertia 10² · 3.4e-5 + 2e-5 and peak joint torque 0.85 · 10 · 3.8 (fixture values, derived).
      expect(sheet.drives!.actuator_1.reflectedInertia).toBeCloseTo(3.42e-3, 15);
      expect(sheet.drives!.actuator_2.peakJointTorque).toBeCloseTo(32.3, 12);
      expect(sheet.metrics).toEqual(Object.fromEntries(Object.keys(sheet.metrics).map((name) => [name, stored.metrics[name] ?? null])));
      expect(sheet.constraints).toEqual(stored.constraints);
      expect(sheet.designVariables).toEqual(stored.variables);
      expect(sheet.feasible).toBe(true);
      expect(sheet.provenance).toEqual({
        database: dbPath,
        evaluationId: stored.id,
        runId,
        runKind: 'optimize',
        seed: 7,
        studyName: 'export-sorter',
        studyFileHash: fileHash,
        settingsHash: loaded.settingsHash,
        loopsmithVersion: PACKAGE_VERSION,
      });
    });
  });
});

describe('export as CSV', () => {
  it('one row per candidate, dotted column names, the same values as the JSON sheets', () => {
    const out = join(directory, 'csv');
    const result = exportCandidates(dbPath, { front: true, format: 'csv', outDir: out });
    expect(result.files).toEqual([join(out, 'candidates.csv')]);
    const rows = parseCsv(readFileSync(result.files[0]!, 'utf8'));
    const [header, ...data] = rows;
    expect(data.length).toBe(result.sheets.length);
    for (const name of ['id', 'geometry.crank_1', 'homePose.theta_1', 'homePose.elbow_2', 'homePose.endJoint', 'bodies.rod_1.inertiaAboutCom', 'drives.actuator_1.reflectedInertia', 'metrics.gci', 'provenance.studyFileHash']) {
      expect(header).toContain(name);
    }
    result.sheets.forEach((sheet, r) => {
      const flat = flattenSheet(sheet);
      expect(header!.length).toBe(flat.size);
      header!.forEach((column, c) => {
        const value = flat.get(column);
        const text = data[r]![c]!;
        if (value === null || value === undefined) expect(text).toBe('');
        else if (typeof value === 'number') expect(Number(text)).toBe(value); // full precision round trip
        else expect(text).toBe(String(value));
      });
    });
  });
});

describe('export as MJCF', () => {
  const measured: ModelMeasurement[] = [];
  afterAll(() => measured.forEach((m) => console.info(describeMeasurement(m))));

  it('writes candidate-<id>.xml per design; every front design holds under τ_g and stays closed for 1 s in MuJoCo', async () => {
    const out = join(directory, 'mjcf');
    const result = exportCandidates(dbPath, { front: true, format: 'mjcf', outDir: out });
    expect(readdirSync(out).sort()).toEqual(result.sheets.map((s) => `candidate-${s.id}.xml`).sort());
    for (const sheet of result.sheets) {
      const xml = readFileSync(join(out, `candidate-${sheet.id}.xml`), 'utf8');
      expect(xml).toContain('<connect name="loop_closure" site1="tip_1" site2="tip_2"');
      measured.push(await checkExportedModel(loaded.study, sheet));
    }
    expect(measured.length).toBeGreaterThan(0);
  });
});

describe('selection by ids and errors', () => {
  it('exports the named evaluations, feasible or not, in the order given', () => {
    const all = queryEvaluations(dbPath, { columns: ['id', 'feasible'] }).rows;
    const infeasible = all.find((r) => r['feasible'] === 0);
    const feasible = all.find((r) => r['feasible'] === 1)!;
    const ids = [feasible['id'] as number, ...(infeasible ? [infeasible['id'] as number] : [])].reverse();
    const sheets = candidateSheets(dbPath, { ids });
    expect(sheets.map((s) => s.id)).toEqual(ids);
    expect(sheets.every((s) => s.provenance.runId === runId)).toBe(true);
  });

  it('refuses unknown ids, an empty list, and no selection with one clear message', () => {
    expect(() => candidateSheets(dbPath, { ids: [1, 99999] })).toThrow(ExportError);
    expect(() => candidateSheets(dbPath, { ids: [1, 99999] })).toThrow(/no evaluation with id 99999/);
    expect(() => candidateSheets(dbPath, { ids: [] })).toThrow(/nothing to export/);
    expect(() => candidateSheets(dbPath, {})).toThrow(/give --front or --ids/);
    expect(() => candidateSheets(dbPath, { front: true, runId: 999 })).toThrow(/no run 999/);
    expect(() => candidateSheets(join(directory, 'missing.db'), { front: true })).toThrow(/no such database/);
  });

  it('the command writes files and exits 0; a bad id exits 1 with one message', async () => {
    const stdout = vi.spyOn(process.stdout, 'write').mockImplementation(() => true);
    const stderr = vi.spyOn(process.stderr, 'write').mockImplementation(() => true);
    try {
      const out = join(directory, 'cli');
      const id = runFront(dbPath).designs[0]!.id;
      expect(await main(['export', dbPath, '--ids', String(id), '--format', 'mjcf', '--out', out])).toBe(0);
      expect(existsSync(join(out, `candidate-${id}.xml`))).toBe(true);
      expect(await main(['export', dbPath, '--front', '--run', String(runId), '--format', 'json', '--out', out])).toBe(0);
      expect(existsSync(join(out, `candidate-${id}.json`))).toBe(true);
      stderr.mockClear();
      expect(await main(['export', dbPath, '--ids', '99999', '--format', 'json', '--out', out])).toBe(1);
      expect(stderr.mock.calls.map((c) => String(c[0])).join('')).toMatch(/^loopsmith: .*no evaluation with id 99999.*\n$/);
      stderr.mockClear();
      expect(await main(['export', dbPath, '--ids', '3,x', '--format', 'json', '--out', out])).toBe(1);
      expect(stderr.mock.calls.map((c) => String(c[0])).join('')).toMatch(/"x" is not an evaluation id/);
      expect(await main(['export', dbPath, '--format', 'json', '--out', out])).toBe(1);
      expect(await main(['export', dbPath, '--front', '--format', 'yaml', '--out', out])).toBe(2);
    } finally {
      stdout.mockRestore();
      stderr.mockRestore();
    }
  });
});
