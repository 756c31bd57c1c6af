/**
 * Workspace at the default tolerance (evaluation.tolerance 0.005, adaptive sampling in
 * src/mechanics/adaptive.ts) against fixed 1000-cell grids: 60 random asymmetric five-bar designs
 * and 30 of each other architecture (the demo studies made asymmetric; invented scenarios). The
 * reference values are stored in tests/fixtures/area-reference.json, written by
 * scripts/area-reference.mjs (derived here: the same margin field sampled on a grid of 1000 cells
 * across the box, sub-cell areas on two triangles per cell, the margin continued outside the reach as
 * in the adaptive sampler; the inscribed radius maximised continuously against the boundary points
 * interpolated along its cell edges). Not timed.
 */
import { describe, expect, it } from 'vitest';
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { Evaluator } from '../../src/mechanics/evaluate.js';
import { errorsRecord } from '../../src/api/design.js';
import { metricIndex } from '../../src/mechanics/metrics.js';
import { parseStudyText } from '../../src/study/parse.js';
import { REPO_ROOT } from '../fixtures/harness.js';
// The script that wrote the references also holds the study edits (plain JavaScript, shared on purpose).
// @ts-expect-error a JavaScript module without declarations
import { ACCURACY_CASES, caseText } from '../../scripts/area-reference.mjs';

interface ReferenceDesign {
  readonly design: number[];
  readonly reachable_area: number;
  readonly workspace_area: number;
  readonly inscribed_radius: number;
}
interface AccuracyCase {
  readonly name: string;
  readonly file: string;
  readonly designs: number;
}

const reference = JSON.parse(readFileSync(join(REPO_ROOT, 'tests', 'fixtures', 'area-reference.json'), 'utf8')) as {
  cases: { name: string; designs: ReferenceDesign[] }[];
};
const BOUND = 0.005;
/**
 * Designs whose usable region has parts the adaptive sampler still misses: workspace_area comes out
 * low; each is pinned at its present error (plus a quarter) so that it cannot get worse unnoticed.
 * Arms thinner than a coarse cell are measured on a dense lattice since src/mechanics/thinParts.ts
 * (3-RRR 4, 3-PRR 2, 4, 6 and 3-RPR 2 left this list then, from 0.7–3.6 % to ≤ 0.45 %); 3-PRR 1 and 7
 * left it with the kink test for tips and the lattice passages (0.71 % and 0.97 % low before, 0.06 %
 * and 0.20 % after). The reference set was then grown from 20 + 4 × 10 to 60 + 4 × 30 designs (the
 * same seed, so the first ones are the same); of the new ones, three are tips that run out between
 * coarse nodes with no listed cell near (3-PRR 11 and 15, 3-RPR 15; 3-PRR 15 was 1.3 % high before
 * a passage of the thin-part flood had to hold a usable fine-lattice point, its tip joined to another
 * region through a pinch). See docs/evaluation.md.
 */
const KNOWN_SHORT: Readonly<Record<string, Readonly<Record<number, number>>>> = {
  '3-prr': { 11: 0.0085, 15: 0.0065 },
  '3-rpr': { 15: 0.0089 },
};
/**
 * Designs whose whole usable region is smaller than a coarse cell (under 0.2 % of the reachable area,
 * inscribed radius about 5 mm): no coarse node lies in it and the sampler reports no workspace. The
 * test checks that the reference region is that small and that the result is either 0 or right.
 */
const TOO_SMALL: Readonly<Record<string, readonly number[]>> = { '3-prr': [10, 22] };

function relative(value: number, expected: number): number {
  return Math.abs(value / expected - 1);
}

function evaluatorFor(c: AccuracyCase, gridLine: string): Evaluator {
  const text = caseText(readFileSync(join(REPO_ROOT, c.file), 'utf8'), c, gridLine) as string;
  return new Evaluator(parseStudyText(text, c.name).study);
}

describe('workspace at the default tolerance against 1000-cell grids', () => {
  for (const c of ACCURACY_CASES as AccuracyCase[]) {
    const designs = reference.cases.find((x) => x.name === c.name)!.designs;
    it(`${c.name}: ${designs.length} random asymmetric designs, workspace_area and inscribed_radius within 0.5 % (designs in KNOWN_SHORT pinned at their present error, TOO_SMALL ones checked to be so)`, () => {
      expect(designs.length).toBe(c.designs);
      const evaluator = evaluatorFor(c, '');
      expect(evaluator.study.evaluation.tolerance).toBe(0.005);
      const worst = { workspace: 0, inscribed: 0 };
      designs.forEach((d, k) => {
        const result = evaluator.evaluate(d.design);
        const workspace = relative(result.metrics[metricIndex('workspace_area')]!, d.workspace_area);
        const inscribed = relative(result.metrics[metricIndex('inscribed_radius')]!, d.inscribed_radius);
        if (TOO_SMALL[c.name]?.includes(k)) {
          expect(d.workspace_area / d.reachable_area, `${c.name} design ${k} is pinned as too small`).toBeLessThan(0.002);
          if (result.metrics[metricIndex('workspace_area')] !== 0) expect(workspace, `${c.name} design ${k} workspace_area`).toBeLessThanOrEqual(BOUND);
          return;
        }
        const known = KNOWN_SHORT[c.name]?.[k];
        if (known === undefined) {
          worst.workspace = Math.max(worst.workspace, workspace);
          expect(workspace, `${c.name} design ${k} workspace_area`).toBeLessThanOrEqual(BOUND);
        } else {
          expect(workspace, `${c.name} design ${k} workspace_area (known short)`).toBeLessThanOrEqual(1.25 * known);
        }
        worst.inscribed = Math.max(worst.inscribed, inscribed);
        expect(inscribed, `${c.name} design ${k} inscribed_radius`).toBeLessThanOrEqual(BOUND);
        // The reported error estimate (result.errors, METRICS order) is a positive number of m².
        expect(result.errors?.[metricIndex('workspace_area')]).toBeGreaterThanOrEqual(0);
      });
      console.log(`${c.name}: worst workspace_area ${(100 * worst.workspace).toFixed(3)} %, inscribed_radius ${(100 * worst.inscribed).toFixed(3)} % (${designs.length} designs)`);
    });
  }

  it('negative control: a fixed 30-cell grid misses the 0.5 % bound on the five-bar designs', () => {
    const c = (ACCURACY_CASES as AccuracyCase[]).find((x) => x.name === 'five-bar')!;
    const evaluator = evaluatorFor(c, 'grid_cells: 30');
    expect(evaluator.study.evaluation.tolerance).toBeUndefined();
    const designs = reference.cases.find((x) => x.name === 'five-bar')!.designs;
    const worst = Math.max(...designs.map((d) => relative(evaluator.evaluate(d.design).metrics[metricIndex('workspace_area')]!, d.workspace_area)));
    expect(worst).toBeGreaterThan(BOUND);
  });

  it('a fixed grid (grid_cells without a tolerance) reports no error estimate; area_tolerance is the same setting', () => {
    const c = (ACCURACY_CASES as AccuracyCase[]).find((x) => x.name === 'five-bar')!;
    const fixed = evaluatorFor(c, 'grid_cells: 120');
    const d = reference.cases.find((x) => x.name === 'five-bar')!.designs[0]!;
    // NaN = not estimated (region averages and extremes still carry theirs: regionMetrics.ts).
    expect(fixed.evaluate(d.design).errors?.[metricIndex('workspace_area')]).toBeNaN();
    expect(fixed.evaluate(d.design).errors?.[metricIndex('reachable_area')]).toBeNaN();
    // evaluate --json: one errors object (errorsRecord). On the fixed grid it holds the region
    // average's estimate but no area estimate; at a tolerance it holds both (derived here: the
    // areas carry an estimate only when they are computed to the tolerance, docs/evaluation.md).
    const atTolerance = evaluatorFor(c, 'tolerance: 0.005');
    const fixedErrors = errorsRecord(fixed.evaluate(d.design).errors);
    const adaptiveErrors = errorsRecord(atTolerance.evaluate(d.design).errors);
    expect(Object.keys(fixedErrors)).toContain('gci');
    expect(Object.keys(fixedErrors)).not.toContain('workspace_area');
    for (const name of ['gci', 'reachable_area', 'workspace_area']) expect(adaptiveErrors[name], name).toBeGreaterThanOrEqual(0);
    const alias = evaluatorFor(c, 'area_tolerance: 0.002');
    const named = evaluatorFor(c, 'tolerance: 0.002');
    expect(alias.study.evaluation.tolerance).toBe(0.002);
    expect(Array.from(alias.evaluate(d.design).metrics)).toEqual(Array.from(named.evaluate(d.design).metrics));
  });
});
