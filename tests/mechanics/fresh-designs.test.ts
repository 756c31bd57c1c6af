/**
 * Random asymmetric designs outside the stored reference set (tests/fixtures/area-reference.json),
 * drawn with other seeds (99, 7) by the method of scripts/area-reference.mjs, on which the default
 * tolerance missed its 0.5 % (invented scenarios: the demo studies made asymmetric, as in
 * tests/mechanics/adaptive-accuracy.test.ts). References: a fixed grid of 1000 cells, the inscribed
 * radius maximised continuously against the boundary points interpolated along its cell edges (the
 * script's method; derived here).
 *
 * - Five-bar 3 and 53: the inscribed circle rested on points of parabolas fitted in cells where two
 *   boundaries meet, which lay inside the region (−0.52 % and −0.84 % before the circle was checked
 *   against the field: AdaptiveArea.repairCircle).
 * - Five-bar 35 (seed 99): an arm of the region runs on between coarse nodes that are all outside,
 *   beyond the cells next to the region's nodes (−1.57 % before the refinement followed it into the
 *   cells it reaches: AdaptiveArea.findEscapes).
 * - Five-bar 55 (seed 7): a long crescent, whose inscribed circle crept along its axis from one false
 *   maximum to the next: parabola points inside the region, in cells where the boundary has a kink
 *   (−2.04 %, then −0.96 % with the circle's check alone, before such cells wrote only the points they
 *   solved: crossings.ts, PARABOLA_FIT).
 * - 3-RRR 17 (seed 99): the region's edge runs along a coarse side that ends at a node of another
 *   region; following the region into the cell beyond counted that region's points (+1.71 % while
 *   the refinement followed it there).
 * - 3-PRR 8: the task centre is usable, but no corner of its coarse cell lies in a region (the
 *   region's coarse nodes are a cell away): workspace_area, inscribed_radius and task_coverage were
 *   0 before the region was found by a finer flood fill from the centre (workspace.ts,
 *   regionThroughFlood).
 */
import { describe, expect, it } from 'vitest';
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { Evaluator } from '../../src/mechanics/evaluate.js';
import { metricIndex } from '../../src/mechanics/metrics.js';
import { parseStudyText } from '../../src/study/parse.js';
import { REPO_ROOT } from '../fixtures/harness.js';
// @ts-expect-error a JavaScript module without declarations
import { ACCURACY_CASES, caseText } from '../../scripts/area-reference.mjs';

function evaluator(name: string, gridLine = ''): Evaluator {
  const c = (ACCURACY_CASES as { name: string; file: string }[]).find((x) => x.name === name)!;
  return new Evaluator(parseStudyText(caseText(readFileSync(join(REPO_ROOT, c.file), 'utf8'), c, gridLine) as string, name).study);
}
const relative = (value: number, expected: number): number => Math.abs(value / expected - 1);

describe('designs outside the stored references', () => {
  it('five-bar 3 and 53: inscribed_radius within 0.5 % of the 1000-cell reference', () => {
    const ev = evaluator('five-bar');
    const cases: [number[], number][] = [
      [[0.3580235147476196, 0.11498843193054198, 0.24249901771545412, 0.5120405197143555, 0.38438744544982917, 0.37065868377685546], 0.18620181373523803],
      [[0.2691654062271118, 0.03882525444030763, 0.20735596418380736, 0.4746761918067932, 0.18550701141357423, 0.6490265011787415], 0.13966358591571162],
    ];
    for (const [design, reference] of cases) {
      const radius = ev.evaluate(Float64Array.from(design)).metrics[metricIndex('inscribed_radius')]!;
      expect(relative(radius, reference), `design ${design.join(', ')}`).toBeLessThanOrEqual(0.005);
    }
  });

  it('five-bar 35 (an arm between coarse nodes), five-bar 55 (a crescent), 3-RRR 17 (a side shared with another region): within 0.5 %', () => {
    const arm = Float64Array.from([0.3566009998321533, -0.028649539947509767, 0.282109808921814, 0.32901391983032224, 0.37497805058956146, 0.4046186923980713]);
    expect(relative(evaluator('five-bar').evaluate(arm).metrics[metricIndex('workspace_area')]!, 0.20359862774815127)).toBeLessThanOrEqual(0.005);
    const crescent = Float64Array.from([0.04129441261291504, -0.11221726734191179, 0.3199513614177704, 0.2940215110778809, 0.28678515851497655, 0.2646931171417236]);
    expect(relative(evaluator('five-bar').evaluate(crescent).metrics[metricIndex('inscribed_radius')]!, 0.19045747352260187)).toBeLessThanOrEqual(0.005);
    const shared = Float64Array.from([0.27531411647796633, 0.06649993747472763, 0.16402612924575805, 0.20103551745414733, 0.2971163272857666, 0.29825406074523925, 0.31552872657775877, 0.2139946460723877]);
    expect(relative(evaluator('3-rrr').evaluate(shared).metrics[metricIndex('workspace_area')]!, 0.05879018713153742)).toBeLessThanOrEqual(0.005);
  });

  it('3-PRR 8: the region holding the task centre is found though its coarse cell has no node of it', () => {
    const design = Float64Array.from([0.0660034704208374, 0.34228869080543517, 0.2948901891708374, 0.350954133272171]);
    const fine = evaluator('3-prr', 'grid_cells: 1000').evaluate(design).metrics;
    const adaptive = evaluator('3-prr').evaluate(design).metrics;
    // The 1000-cell grid's own values (its workspace_area 0.003145 m², inscribed radius 0.0233 m at its nodes).
    expect(fine[metricIndex('workspace_area')]!).toBeGreaterThan(0.003);
    expect(relative(adaptive[metricIndex('workspace_area')]!, fine[metricIndex('workspace_area')]!)).toBeLessThanOrEqual(0.005);
    expect(relative(adaptive[metricIndex('inscribed_radius')]!, 0.023345881557414832)).toBeLessThanOrEqual(0.005);
    expect(adaptive[metricIndex('task_coverage')]!).toBeCloseTo(fine[metricIndex('task_coverage')]!, 6);
    expect(adaptive[metricIndex('task_coverage')]!).toBeGreaterThan(0.1);
  });
});
