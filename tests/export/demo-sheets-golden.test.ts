/**
 * Regression: the candidate sheet and MJCF of the baseline design of every demo study. The golden
 * numbers (fixtures/demo-sheets-golden.json) were written by the earlier twin builders (the five-bar
 * sheet and the 2-PRR/3-RRR/3-PRR sheet) before they were replaced by the one sheet built through the
 * architecture interface; at the switch the one sheet matched them on every number to ≤ 5.6e-14
 * relative (on a 1e-3 floor: coordinates near 0 compared on a mm scale), and the two MJCF writers gave
 * the same MuJoCo masses, armature, home accelerations and 0.1 s trajectories (largest difference
 * 5.6e-17). Every path of the earlier sheets is still present (five-bar names included). Demo
 * studies added later (the 3-RPR) have no golden numbers; they are checked for schema and MuJoCo.
 * Re-baselined on purpose since: region averages and extremes refined to the tolerance (gci, the
 * per-pose extremes and the margins built on them), and, for platform-3prr and platform-3rrr, five
 * numbers that moved by at most 2.2e-7 relative when 1/κ of 3×3 matrices went from Jacobi sweeps to
 * the closed-form symmetric eigenvalues (home 1/κ, the auto characteristic length and what follows it).
 * Later, on purpose: the parcel-sorter baselines' gci (8.0e-4 relative) when a task region assembled
 * everywhere went to tensor Gauss–Legendre rules (see tests/architectures/one-engine-equality.test.ts).
 * Later, on purpose: platform-3prr and platform-3rrr orientation_margin and orientation_range (by at
 * most 1.6e-7 rad, 1.1e-7 relative) when the orientation scans placed their boundaries by regula
 * falsi on the usability margin instead of bisection, to the same 1e-7 rad bracket.
 * Later, on purpose: platform-3rrr's gci (0.74913 → 0.75012, 1.3e-3 relative) when a task disc
 * assembled everywhere went to the trapezoidal rule along its angle (regionMetrics.ts smoothTaskMean);
 * a 512-angle × 48-radius rule gives 0.7501163 for that design.
 * Later, on purpose: the extremes over task discs (platform-3rrr, marking-table: min_inv_condition,
 * min_transmission_angle, min_stiffness, first_mode_in_plane, accel_capability, peak joint speeds,
 * encoder_resolution, orientation_margin/range and the drive margins built on them; at most 2.4e-4
 * relative) when the local searches on a disc went to polar coordinates (regionMetrics.ts
 * refineExtremes, docs/regions.md "Extremes"): they now stop by the tolerance rule instead of
 * running out of points while crawling along the rim.
 */
import { describe, expect, it } from 'vitest';
import { readdirSync, readFileSync } from 'node:fs';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { chooseDesign } from '../../src/api/design.js';
import { designToValues } from '../../src/mechanics/designSpace.js';
import { Evaluator, constraintDefinitions } from '../../src/mechanics/evaluate.js';
import { METRICS } from '../../src/mechanics/metrics.js';
import { loadStudyFile } from '../../src/study/parse.js';
import { candidateExport, sheetToJson } from '../../src/export/candidate.js';
import { candidateSchemaErrors } from '../../src/export/export.js';
import { flattenSheet } from '../../src/export/csv.js';
import { SimulatedModel } from './mujocoSim.js';

const ROOT = fileURLToPath(new URL('../../', import.meta.url));
const GOLDEN = JSON.parse(readFileSync(join(ROOT, 'tests/export/fixtures/demo-sheets-golden.json'), 'utf8')) as Record<string, Record<string, number>>;
const studies = readdirSync(join(ROOT, 'studies')).filter((f) => f.endsWith('.yaml'));

/** Relative difference on a floor of 1e-3 (SI values; a coordinate near 0 is compared on a mm scale). */
const rel = (a: number, b: number) => (a === b ? 0 : Math.abs(a - b) / Math.max(Math.abs(a), Math.abs(b), 1e-3));

describe.each(studies)('%s', (name) => {
  it('baseline sheet matches the golden numbers, validates, and its MJCF holds still in MuJoCo', async () => {
    const l = loadStudyFile(join(ROOT, 'studies', name));
    // The golden areas are those of the fixed grid (grid_cells, 120 by default). A study without
    // grid_cells follows evaluation.tolerance for its areas (adaptive sampling, other numbers), so it
    // is evaluated here on that fixed grid, as in tests/architectures/one-engine-equality.test.ts.
    // Region averages and extremes are refined to the default tolerance either way (regionMetrics.ts).
    const { tolerance: _adaptive, ...fixedGrid } = l.study.evaluation;
    const study = { ...l.study, evaluation: fixedGrid };
    const choice = chooseDesign(study, []);
    const ev = new Evaluator(choice.study).evaluate(choice.design);
    const metrics: Record<string, number | null> = {};
    METRICS.forEach((m, k) => (metrics[m.name] = Number.isNaN(ev.metrics[k]!) ? null : ev.metrics[k]!));
    const constraints: Record<string, number | null> = {};
    constraintDefinitions(study).forEach((c, k) => (constraints[c.name] = ev.margins[k]!));
    const variables = designToValues(new Evaluator(study).variables, choice.design);
    const record = { id: 7, variables, metrics, constraints, feasible: ev.feasible, violation: ev.violation };
    const provenance = { database: 'none', evaluationId: 7, runId: 1, runKind: 'evaluate', seed: 1, studyName: study.name, studyFileHash: l.fileHash, settingsHash: l.settingsHash, loopsmithVersion: '0.1.0' };
    const exported = candidateExport(study, record, provenance);
    expect(candidateSchemaErrors(JSON.parse(sheetToJson(exported.sheet)))).toEqual([]);
    const golden = GOLDEN[name];
    if (golden) {
      const flat = flattenSheet(exported.sheet);
      expect(Object.keys(golden).length).toBeGreaterThan(100);
      let worst = 0;
      let worstPath = '';
      for (const [path, value] of Object.entries(golden)) {
        const now = flat.get(path);
        expect(typeof now, path).toBe('number');
        const r = rel(value, now as number);
        if (r > worst) { worst = r; worstPath = path; }
      }
      console.info(`${name}: ${Object.keys(golden).length} golden numbers, worst relative difference ${worst.toExponential(2)} (${worstPath || 'all equal'})`);
      expect(worst).toBeLessThan(1e-12);
    }
    const sim = await SimulatedModel.load(exported.mjcf(), `${name}.xml`);
    try {
      sim.resetToKeyframe('home');
      sim.step(1);
      // Held by τ_g: the soft loop closure leaves ~1e-4 of the unheld acceleration (docs/export.md).
      expect(Math.max(...Array.from(sim.jointAccelerations(), Math.abs))).toBeLessThan(5e-2);
    } finally {
      sim.dispose();
    }
  }, 60_000);
});
