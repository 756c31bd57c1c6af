/**
 * The closed-form reachable area of slider + rod legs (src/architectures/legged.ts sliderStripsArea,
 * used by the 2-PRR and the 3-PRR at the stated accuracy): the evaluation box cut by one strip per leg.
 * Checked against shapes whose areas are derived here, and against a count of reachable points.
 */
import { describe, expect, it } from 'vitest';
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { sliderStripsArea, type LeggedModel } from '../../src/architectures/legged.js';
import { crankRod } from '../../src/architectures/legs/crankRod.js';
import { sliderRod } from '../../src/architectures/legs/sliderRod.js';
import { ArchitectureEvaluator } from '../../src/mechanics/evaluateArchitecture.js';
import { designFromValues } from '../../src/mechanics/designSpace.js';
import { evaluationBox } from '../../src/mechanics/workspace.js';
import { metricIndex } from '../../src/core/metrics.js';
import { parseStudyText } from '../../src/study/parse.js';
import { REPO_ROOT } from '../fixtures/harness.js';
import { reachableCount } from '../helpers/reachableCount.js';

/** Only the fields sliderStripsArea reads: rails through (baseX, baseY) along angles, pins, rods. */
function sliders(angles: number[], rod: number, pins: [number, number][] = angles.map(() => [0, 0]), origins: [number, number][] = angles.map(() => [0, 0])): LeggedModel {
  return {
    dof: angles.length,
    legs: angles.map(() => sliderRod),
    railX: angles.map(Math.cos),
    railY: angles.map(Math.sin),
    baseX: origins.map((o) => o[0]),
    baseY: origins.map((o) => o[1]),
    platformX: pins.map((p) => p[0]),
    platformY: pins.map((p) => p[1]),
    rod: angles.map(() => rod),
  } as unknown as LeggedModel;
}

const BIG = { xmin: -10, xmax: 10, ymin: -10, ymax: 10 };

describe('sliderStripsArea', () => {
  it('three strips of half-width d through one point, 60° apart: the regular hexagon of apothem d, 2√3 d²', () => {
    const d = 0.1;
    expect(sliderStripsArea(sliders([0, Math.PI / 3, (2 * Math.PI) / 3], d), BIG)).toBeCloseTo(2 * Math.sqrt(3) * d * d, 14);
  });

  it('two parallel strips offset by s: a band of height 2d − s across the box; cut by the box', () => {
    // Rails y = 0 and y = 0.05, d = 0.2: the band 0.05 − 0.2 ≤ y ≤ 0.2, height 0.35, across a box 1 m wide.
    const model = sliders([0, 0], 0.2, undefined, [[0, 0], [0, 0.05]]);
    const box = { xmin: -0.5, xmax: 0.5, ymin: -1, ymax: 0.1 };
    expect(sliderStripsArea(model, BIG)).toBeCloseTo(20 * 0.35, 12);
    expect(sliderStripsArea(model, box)).toBeCloseTo(1 * (0.1 - (0.05 - 0.2)), 12);
  });

  it('platform pins move each strip by −R(φ) b_i', () => {
    // One horizontal rail y = 0, d = 0.1, pin b = (0, 0.3): at φ = 0 the strip is |y + 0.3| ≤ 0.1; at
    // φ = 90° the pin points along −x, R b = (−0.3, 0), and the strip |y| ≤ 0.1 again.
    const model = sliders([0], 0.1, [[0, 0.3]]);
    const box = { xmin: 0, xmax: 1, ymin: -0.35, ymax: 0.05 };
    expect(sliderStripsArea(model, box, 0)).toBeCloseTo(1 * (-0.2 - -0.35), 12);
    expect(sliderStripsArea(model, box, Math.PI / 2)).toBeCloseTo(1 * (0.05 - -0.1), 12);
  });

  it('strips that miss each other leave nothing; a leg of another kind gives null', () => {
    expect(sliderStripsArea(sliders([0, 0], 0.1, undefined, [[0, 0], [0, 0.5]]), BIG)).toBe(0);
    const mixed = { ...sliders([0, 0], 0.1), legs: [sliderRod, crankRod] } as unknown as LeggedModel;
    expect(sliderStripsArea(mixed, BIG)).toBeNull();
  });

  it('the 3-PRR demo at the stated accuracy reports it exactly, and a count of reachable points agrees', () => {
    const text = readFileSync(join(REPO_ROOT, 'studies', 'platform-3prr.yaml'), 'utf8').replace(/^\s*grid_cells:.*$/m, '');
    const study = parseStudyText(text, 'platform-3prr').study;
    const evaluator = new ArchitectureEvaluator(study);
    const design = designFromValues(evaluator.variables, study.baseline);
    const result = evaluator.evaluate(design);
    const model = evaluator.model(design) as LeggedModel;
    const phi = study.orientation?.phi0 ?? 0;
    const box = evaluationBox(study, evaluator.architecture, model, phi)!;
    const exact = sliderStripsArea(model, box, phi)!;
    expect(result.metrics[metricIndex('reachable_area')]).toBe(exact);
    expect(result.errors![metricIndex('reachable_area')]).toBe(0);
    // Midpoint count over the box, 800 × 800 points (derived here: the error is about the boundary's
    // length times a cell, under 0.5 % for this polygon).
    const counted = reachableCount(evaluator.architecture, model, box, phi, 800);
    expect(Math.abs(counted / exact - 1)).toBeLessThan(0.005);
  });
});
