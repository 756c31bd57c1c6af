/**
 * End-to-end through the real command line (`node bin/loopsmith.js`, i.e. dist/; run `npm run build`
 * first): the read-only `query` command refuses anything that could change the database, and the
 * basic commands new, check, evaluate and probe behave as documented.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { existsSync, readFileSync, statSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { probeDesign, evaluateDesign } from '../../src/api/design.js';
import { toJson } from '../../src/cli/format.js';
import { designVariables } from '../../src/mechanics/designSpace.js';
import { constraintDefinitions } from '../../src/mechanics/evaluate.js';
import { METRIC_NAMES } from '../../src/mechanics/metrics.js';
import { loadStudyFile } from '../../src/study/parse.js';
import {
  assertBuilt,
  DEMO_STUDY,
  fileSha256,
  makeTemporaryDirectory,
  readDatabase,
  removeTemporaryDirectories,
  rowCounts,
  runArgs,
  runCli,
  SMALL_STUDY,
  type Row,
} from '../fixtures/harness.js';

beforeAll(assertBuilt);
afterAll(removeTemporaryDirectories);

describe('loopsmith query: read-only whatever the user types', () => {
  let directory = '';
  let dbPath = '';

  /**
   * Hash of the database file, whether its write-ahead log holds anything, and the row counts of every
   * table. (A read-only connection may leave an empty -wal and a -shm behind; neither holds data.)
   */
  function databaseState(): { hash: string; pendingLogBytes: number; counts: Record<string, number> } {
    const log = dbPath + '-wal';
    return { hash: fileSha256(dbPath), pendingLogBytes: existsSync(log) ? statSync(log).size : 0, counts: rowCounts(dbPath) };
  }

  beforeAll(async () => {
    directory = makeTemporaryDirectory('query');
    dbPath = join(directory, 'query.db');
    const result = await runCli(runArgs(SMALL_STUDY, dbPath, { generations: 3, workers: 1 }));
    expect(result.code, result.stderr).toBe(0);
  });

  it('refuses statements smuggled into --where or --order-by with exit code 1, a clear message, and no change', async () => {
    const attachedFile = join(directory, 'attached.db');
    const attempts: { args: string[]; message: RegExp }[] = [
      { args: ['--where', '1; DROP TABLE evaluations'], message: /where expression contains ";"/ },
      { args: ['--where', 'feasible = 1) OR (1=1'], message: /closes a parenthesis it did not open/ },
      { args: ['--where', 'id IN (UPDATE evaluations SET feasible = 0 RETURNING id)'], message: /keyword UPDATE/ },
      { args: ['--where', `ATTACH DATABASE '${attachedFile}' AS other`], message: /keyword ATTACH/ },
      { args: ['--order-by', 'id; DROP TABLE evaluations'], message: /orderBy .* must be a column name/ },
    ];
    const before = databaseState();
    expect(before.counts['evaluations']).toBeGreaterThan(0);
    for (const attempt of attempts) {
      const result = await runCli(['query', dbPath, ...attempt.args]);
      const label = attempt.args.join(' ');
      expect(result.code, `${label}: ${result.stderr}`).toBe(1);
      expect(result.stdout, label).toBe('');
      expect(result.stderr, label).toMatch(/^loopsmith: /);
      expect(result.stderr, label).toMatch(attempt.message);
      expect(result.stderr, label).not.toMatch(/internal error/);
      expect(databaseState(), label).toEqual(before);
    }
    expect(existsSync(attachedFile)).toBe(false);
  });

  it('answers a good query in json and in csv with the rows SQLite selects, leaving the file unchanged', async () => {
    const before = databaseState();
    const where = 'feasible = 1 AND m_gci > 0.5';
    const expected = readDatabase(dbPath, (db) => db.prepare<[], Row>(`SELECT * FROM evaluations WHERE ${where} ORDER BY m_gci DESC, id`).all());
    expect(expected.length).toBeGreaterThan(2);

    const json = await runCli(['query', dbPath, '--where', where, '--order-by', 'm_gci desc', '--format', 'json']);
    expect(json.code, json.stderr).toBe(0);
    const rows = JSON.parse(json.stdout) as Row[];
    // Every column but the internal column_set_id, values as stored (no infinities among these rows).
    expect(rows).toEqual(expected.map(({ column_set_id: _internal, ...rest }) => rest));

    const limit = 2;
    const csv = await runCli(['query', dbPath, '--where', where, '--order-by', 'm_gci desc', '--limit', String(limit), '--format', 'csv']);
    expect(csv.code, csv.stderr).toBe(0);
    // RFC 4180 records end with CRLF; no field of these rows needs quoting (error is NULL, i.e. empty).
    const lines = csv.stdout.split('\r\n').filter((line) => line !== '' && line !== '\n');
    // Headers carry the SI unit in brackets after the stored column name (m_bandwidth [Hz]).
    const header = lines[0]!.split(',').map((h) => h.replace(/ \[[^\]]+\]$/, ''));
    expect(header).toEqual(Object.keys(rows[0]!));
    expect(lines[0]).toContain('m_peak_gravity_torque [N*m]');
    expect(lines).toHaveLength(1 + limit);
    lines.slice(1).forEach((line, k) => {
      const fields = line.split(',');
      expect(fields).toHaveLength(header.length);
      // Numbers are written in round-trip form: they parse back to the stored doubles.
      expect(Number(fields[header.indexOf('id')])).toBe(expected[k]!['id']);
      expect(Number(fields[header.indexOf('m_gci')])).toBe(expected[k]!['m_gci']);
      expect(fields[header.indexOf('error')]).toBe('');
    });
    expect(databaseState()).toEqual(before);
  });

  it('writes nothing into a file that is not a loopsmith store (an empty file stays empty)', async () => {
    const emptyFile = join(directory, 'empty.db');
    writeFileSync(emptyFile, '');
    const result = await runCli(['query', emptyFile]);
    expect(result.code, result.stdout).toBe(1);
    expect(result.stderr).toMatch(/^loopsmith: /);
    expect(statSync(emptyFile).size).toBe(0);
  });
});

describe('loopsmith basic commands', () => {
  it('new writes a template that check accepts; new refuses to overwrite without --force', async () => {
    const file = join(makeTemporaryDirectory('new'), 'my-study.yaml');
    const created = await runCli(['new', file]);
    expect(created.code, created.stderr).toBe(0);
    expect(existsSync(file)).toBe(true);
    const checked = await runCli(['check', file]);
    expect(checked.code, checked.stderr).toBe(0);
    expect(checked.stdout).toContain(`${file}: valid`);
    const again = await runCli(['new', file]);
    expect(again.code).toBe(1);
    expect(again.stderr).toMatch(/exists; use --force/);
  });

  it('check fails with exit code 1 naming a misspelt field', async () => {
    const file = join(makeTemporaryDirectory('typo'), 'typo.yaml');
    const text = readFileSync(SMALL_STUDY, 'utf8');
    expect(text).toContain('grid_cells: 40');
    writeFileSync(file, text.replace('grid_cells: 40', 'grid_cels: 40'));
    const result = await runCli(['check', file]);
    expect(result.code).toBe(1);
    expect(result.stdout).toBe('');
    expect(result.stderr).toMatch(/^loopsmith: /);
    expect(result.stderr).toContain('grid_cels');
  });

  it('evaluate --json has the documented keys, every metric, and the values of the engine', async () => {
    const result = await runCli(['evaluate', SMALL_STUDY, '--json']);
    expect(result.code, result.stderr).toBe(0);
    const report = JSON.parse(result.stdout) as Record<string, unknown>;
    for (const key of ['design', 'metrics', 'constraints', 'violation', 'feasible']) expect(report).toHaveProperty(key);
    const { study } = loadStudyFile(SMALL_STUDY);
    expect(Object.keys(report['design'] as object)).toEqual(designVariables(study).map((v) => v.name));
    expect(Object.keys(report['metrics'] as object)).toEqual(METRIC_NAMES);
    const constraints = report['constraints'] as Record<string, unknown>[];
    expect(constraints.map((c) => c['name'])).toEqual(constraintDefinitions(study).map((c) => c.name));
    for (const c of constraints) expect(Object.keys(c).sort()).toEqual(['margin', 'max', 'metric', 'min', 'name', 'origin', 'satisfied', 'value']);
    expect(report['feasible']).toBe(constraints.every((c) => c['satisfied'] === true));
    // The same numbers as the programmatic API gives (baseline design of the study).
    // Added by the command line: how many task points the design cannot assemble (none here).
    const { taskPoints, ...engineReport } = report;
    expect(taskPoints).toEqual({ checked: expect.any(Number), failed: 0, points: [] });
    expect(engineReport).toEqual(JSON.parse(toJson(evaluateDesign(study).report)));
  });

  it('probe --at 0,-450mm --json on the demo study gives an assembled pose whose jacobian matches finite differences', async () => {
    const result = await runCli(['probe', DEMO_STUDY, '--at', '0,-450mm', '--json']);
    expect(result.code, result.stderr).toBe(0);
    const report = JSON.parse(result.stdout) as {
      status: string;
      point: { x: number; y: number };
      jointAngles: [number, number];
      elbows: [[number, number], [number, number]];
      jacobian: [[number, number], [number, number]];
      inverseCondition: number;
      design: Record<string, number>;
    };
    expect(report.status).toBe('assembled');
    expect(report.point).toEqual({ x: 0, y: -0.45 });
    for (const key of ['jointAngles', 'elbows', 'jacobian', 'inverseCondition', 'transmissionAngles', 'gravityTorque', 'inertia', 'cartesianStiffness', 'naturalFrequencies']) {
      expect(report).toHaveProperty(key);
    }
    expect(report.jacobian.flat().every(Number.isFinite)).toBe(true);
    expect(report.inverseCondition).toBeGreaterThan(0);
    expect(report.inverseCondition).toBeLessThanOrEqual(1);
    // Each rod joins its elbow to the end point (derived: rod_2 is tied to rod_1 in the demo study).
    for (const elbow of report.elbows) {
      expect(Math.hypot(report.point.x - elbow[0], report.point.y - elbow[1])).toBeCloseTo(report.design['rod_1']!, 12);
    }
    const { study } = loadStudyFile(DEMO_STUDY);
    expect(report).toEqual(JSON.parse(toJson(probeDesign(study, 0, -0.45).report)));
    // J maps joint rates to end-point velocity (m/rad), so J · ∂θ/∂x = e_x and J · ∂θ/∂y = e_y
    // (derived: differentiate p(θ(p)) = p); ∂θ by central differences of the engine's inverse kinematics.
    const step = 1e-6; // m
    const angles = (x: number, y: number): [number, number] => {
      const pose = probeDesign(study, x, y).report;
      if (!pose.jointAngles) throw new Error(`no pose at (${x}, ${y})`);
      return pose.jointAngles;
    };
    const columns = [
      [angles(step, -0.45), angles(-step, -0.45)],
      [angles(0, -0.45 + step), angles(0, -0.45 - step)],
    ].map(([plus, minus]) => [(plus![0] - minus![0]) / (2 * step), (plus![1] - minus![1]) / (2 * step)]);
    const J = report.jacobian;
    columns.forEach((dTheta, axis) => {
      const velocity = [J[0][0] * dTheta[0]! + J[0][1] * dTheta[1]!, J[1][0] * dTheta[0]! + J[1][1] * dTheta[1]!];
      expect(velocity[0]).toBeCloseTo(axis === 0 ? 1 : 0, 6);
      expect(velocity[1]).toBeCloseTo(axis === 1 ? 1 : 0, 6);
    });
  });

  it('exits with code 2 on an unknown command', async () => {
    const result = await runCli(['frobnicate']);
    expect(result.code).toBe(2);
    expect(result.stderr).toMatch(/frobnicate/);
    expect(result.stderr).toMatch(/(loopsmith|bin\/loopsmith\.js) --help/);
  });

  it('exits with code 2 and a one-line message on a bad option value (--workers 0)', async () => {
    const result = await runCli(['run', SMALL_STUDY, '--workers', '0', '--db', join(makeTemporaryDirectory('bad-option'), 'never.db')]);
    expect(result.stderr).toMatch(/--workers 0: expected a whole number of at least 1/);
    expect(result.stderr).not.toMatch(/internal error/);
    expect(result.code).toBe(2);
  });
});
