/**
 * Candidate sheets built straight from the demo studies (no database): the horizontal-plane marking
 * table (several working modes, circle task region), a study without a task region (home pose from
 * the usable workspace), schema validation, CSV quoting, and angle conventions.
 */
import { describe, expect, it } from 'vitest';
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { Ajv } from 'ajv';
import { FiveBarPose, PoseStatus, solvePose, usableMargin } from '../helpers/fiveBarClosedForm.js';
import { loadStudyFile, parseStudyText } from '../../src/study/parse.js';
import { sheetToJson } from '../../src/export/candidate.js';
import { angleInRange as actuatedAngle, wrapAngle } from '../../src/core/pose.js';
import { candidatesCsv } from '../../src/export/csv.js';
import candidateSchema from '../../src/export/candidate.schema.json' with { type: 'json' };
import { checkExportedModel, describeMeasurement } from './mjcfChecks.js';
import { fiveBarModelOf, sheetFromStudy } from './sheetsFromStudy.js';

const REPO_ROOT = fileURLToPath(new URL('../../', import.meta.url));
const validate = new Ajv({ allErrors: true, strict: true }).compile(candidateSchema);

function expectValid(json: string): void {
  const ok = validate(JSON.parse(json));
  expect(validate.errors ?? []).toEqual([]);
  expect(ok).toBe(true);
}

describe('marking-table demo (horizontal plane, working mode chosen by the optimizer)', () => {
  const loaded = loadStudyFile(join(REPO_ROOT, 'studies', 'marking-table.yaml'));

  it('baseline sheet validates, closes its loop and carries the chosen working mode', () => {
    const sheet = sheetFromStudy(loaded, 4, { ...loaded.study.baseline });
    expectValid(sheetToJson(sheet));
    expect(sheet.workingMode).toBe(loaded.study.baseline['working_mode']);
    expect(sheet.gravity).toEqual({ x: 0, y: 0 });
    expect(sheet.homePose.source).toBe('task-region-centre');
    expect(sheet.homePose.loopClosureError).toBeLessThan(1e-12);
    // No gravity in the plane: no holding torque (derived).
    expect(sheet.homePose.gravityTorque_1).toBe(0);
    expect(sheet.homePose.gravityTorque_2).toBe(0);
  });

  it('its MJCF loads in MuJoCo, stays at rest with zero gravity and keeps the loop closed for 1 s', async () => {
    const sheet = sheetFromStudy(loaded, 4, { ...loaded.study.baseline });
    const m = await checkExportedModel(loaded.study, sheet, { gravityLoadsDrives: false });
    console.info(describeMeasurement(m));
  });
});

describe('study without a task region', () => {
  const demoText = readFileSync(join(REPO_ROOT, 'studies', 'parcel-sorter.yaml'), 'utf8');
  // The demo with its task region (and the task-coverage constraint that needs it) taken out.
  const text = demoText
    .replace(/^ {2}region: .*\n/m, '')
    .replace(/^ {2}- \{ metric: task_coverage.*\n/m, '');
  const loaded = parseStudyText(text, 'parcel-sorter without task region');

  it('places the home pose inside the usable workspace, away from its boundary', () => {
    expect(loaded.study.task.region).toBeNull();
    const values = { ...loaded.study.baseline };
    const sheet = sheetFromStudy(loaded, 9, values);
    expectValid(sheetToJson(sheet));
    expect(sheet.homePose.source).toBe('usable-workspace-centre');
    const model = fiveBarModelOf(loaded.study, values);
    const pose = new FiveBarPose();
    const status = solvePose(model, pose, sheet.homePose.endPoint.x, sheet.homePose.endPoint.y);
    expect(status).toBe(PoseStatus.Assembled);
    expect(usableMargin(pose, status, loaded.study)).toBeGreaterThanOrEqual(0);
    // Deepest node of the region: every grid neighbour within two cells is usable too.
    // Grid cell size, m (derived): the reach box's longer side is its height 2 (p + d) = 1.5 m, over grid_cells cells.
    const h = (2 * (0.3 + 0.45)) / loaded.study.evaluation.gridCells;
    for (const [dx, dy] of [[2, 0], [-2, 0], [0, 2], [0, -2], [1, 1], [-1, -1]] as const) {
      const s = solvePose(model, pose, sheet.homePose.endPoint.x + dx * h, sheet.homePose.endPoint.y + dy * h);
      expect(usableMargin(pose, s, loaded.study)).toBeGreaterThanOrEqual(0);
    }
  });
});

describe('conventions and CSV', () => {
  it('wraps angles: elbows to (−π, π], actuated angles into their joint range', () => {
    expect(wrapAngle(3 * Math.PI / 2)).toBeCloseTo(-Math.PI / 2, 15);
    expect(wrapAngle(-Math.PI)).toBeCloseTo(Math.PI, 15);
    const range = { min: (-200 * Math.PI) / 180, max: (100 * Math.PI) / 180 };
    // 170° is −190° inside [−200°, 100°] (derived: 170° − 360°).
    expect(actuatedAngle((170 * Math.PI) / 180, range)).toBeCloseTo((-190 * Math.PI) / 180, 14);
    expect(actuatedAngle(0.5, null)).toBe(0.5);
  });

  it('quotes text with commas or quotes and keeps one row per sheet', () => {
    const loaded = loadStudyFile(join(REPO_ROOT, 'studies', 'parcel-sorter.yaml'));
    const a = sheetFromStudy(loaded, 1, { base_span: 0.2, crank_1: 0.3, rod_1: 0.45 });
    const b = sheetFromStudy(loaded, 2, { base_span: 0.12, crank_1: 0.26, rod_1: 0.5 });
    const lines = candidatesCsv([a, b]).trimEnd().split('\n');
    expect(lines.length).toBe(3);
    // The crank label "rectangular tube 40×20×2 mm, aluminium-6061" holds a comma: the cell is quoted.
    expect(lines[1]).toContain('"uniform bar ');
    expect(lines[0]!.split(',')[0]).toBe('format');
  });
});
