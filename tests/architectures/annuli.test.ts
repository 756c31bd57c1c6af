/**
 * The closed-form area of an intersection of rings (src/architectures/annuli.ts, Green's theorem over
 * arcs), which gives the reachable area of crank + rod and strut legs at the stated accuracy (3-RRR,
 * 3-RPR: legged.ts leggedRingsArea). Checked against areas derived here by other means: discs and
 * rings, the lens formula and inclusion–exclusion over disc pairs (a ring is its outer disc less its inner one), and counts of
 * reachable points.
 */
import { describe, expect, it } from 'vitest';
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { annuliIntersectionArea } from '../../src/architectures/annuli.js';
import { discIntersectionArea } from '../helpers/discLens.js';
import { leggedRingsArea, type LeggedModel } from '../../src/architectures/legged.js';
import { ArchitectureEvaluator } from '../../src/mechanics/evaluateArchitecture.js';
import { designFromValues } from '../../src/mechanics/designSpace.js';
import { evaluationBox } from '../../src/mechanics/workspace.js';
import { metricIndex } from '../../src/core/metrics.js';
import { parseStudyText } from '../../src/study/parse.js';
import { REPO_ROOT } from '../fixtures/harness.js';
import { reachableCount } from '../helpers/reachableCount.js';

describe('annuliIntersectionArea', () => {
  it('one disc, one ring, concentric rings, repeated rings, rings that miss', () => {
    expect(annuliIntersectionArea([0.3], [-0.2], [0], [0.5])).toBeCloseTo(Math.PI * 0.25, 14);
    expect(annuliIntersectionArea([0], [0], [0.2], [0.5])).toBeCloseTo(Math.PI * (0.25 - 0.04), 14);
    // [1, 3] ∩ [2, 4] about one centre: 2 ≤ ρ ≤ 3.
    expect(annuliIntersectionArea([1, 1], [1, 1], [1, 2], [3, 4])).toBeCloseTo(Math.PI * (9 - 4), 12);
    // The same ring three times is that ring (its arcs are counted once).
    expect(annuliIntersectionArea([0.1, 0.1, 0.1], [0, 0, 0], [0.1, 0.1, 0.1], [0.4, 0.4, 0.4])).toBeCloseTo(Math.PI * (0.16 - 0.01), 14);
    expect(annuliIntersectionArea([0, 1], [0, 0], [0, 0], [0.4, 0.4])).toBe(0);
    // A ring with nothing between its radii is empty.
    expect(annuliIntersectionArea([0, 0.1], [0, 0], [0, 0.3], [0.5, 0.3])).toBe(0);
  });

  it('two discs: the lens formula; two rings: inclusion–exclusion over the four disc pairs', () => {
    let seed = 11;
    const rand = (): number => (seed = (seed * 1103515245 + 12345) % 2147483648) / 2147483648;
    for (let k = 0; k < 200; k++) {
      const d = 0.8 * rand();
      const [r1, r2] = [0.05 + 0.5 * rand(), 0.05 + 0.5 * rand()];
      expect(annuliIntersectionArea([0, d], [0, 0], [0, 0], [r1, r2])).toBeCloseTo(discIntersectionArea(r1, r2, d), 12);
      const [i1, i2] = [r1 * rand(), r2 * rand()];
      const expected = discIntersectionArea(r1, r2, d) - discIntersectionArea(r1, i2, d) - discIntersectionArea(i1, r2, d) + discIntersectionArea(i1, i2, d);
      const angle = 2 * Math.PI * rand();
      expect(annuliIntersectionArea([0.2, 0.2 + d * Math.cos(angle)], [-0.1, -0.1 + d * Math.sin(angle)], [i1, i2], [r1, r2])).toBeCloseTo(expected, 12);
    }
  });

  it('three rings: a count of the points in all three agrees to its resolution', () => {
    const cx = [0, 0.35, 0.1];
    const cy = [0, 0.05, 0.3];
    const inner = [0.1, 0.05, 0.15];
    const outer = [0.45, 0.4, 0.5];
    const exact = annuliIntersectionArea(cx, cy, inner, outer);
    const n = 1200;
    let hit = 0;
    for (let j = 0; j < n; j++) {
      for (let i = 0; i < n; i++) {
        const x = -0.5 + (i + 0.5) / n;
        const y = -0.5 + (j + 0.5) / n;
        let ok = true;
        for (let k = 0; k < 3 && ok; k++) {
          const rho = Math.hypot(x - cx[k]!, y - cy[k]!);
          ok = rho >= inner[k]! && rho <= outer[k]!;
        }
        if (ok) hit++;
      }
    }
    expect(exact).toBeGreaterThan(0.05);
    expect(Math.abs(hit / (n * n) / exact - 1)).toBeLessThan(2e-3);
  });
});

describe('reachable areas of the 3-RRR and 3-RPR demos at the stated accuracy', () => {
  for (const file of ['platform-3rrr.yaml', 'platform-3rpr.yaml']) {
    it(`${file}: the rings' area with no error, and a count of reachable points agrees`, () => {
      const text = readFileSync(join(REPO_ROOT, 'studies', file), 'utf8').replace(/^\s*grid_cells:.*$/m, '');
      const study = parseStudyText(text, file).study;
      const evaluator = new ArchitectureEvaluator(study);
      const design = designFromValues(evaluator.variables, study.baseline);
      const result = evaluator.evaluate(design);
      const model = evaluator.model(design) as LeggedModel;
      const phi = study.orientation?.phi0 ?? 0;
      const exact = leggedRingsArea(model, phi)!;
      expect(result.metrics[metricIndex('reachable_area')]).toBe(exact);
      expect(result.errors![metricIndex('reachable_area')]).toBe(0);
      const box = evaluationBox(study, evaluator.architecture, model, phi)!;
      const counted = reachableCount(evaluator.architecture, model, box, phi, 800);
      expect(Math.abs(counted / exact - 1)).toBeLessThan(0.005);
    });
  }
});

describe('a 3-RPR design whose reachable area sampling missed', () => {
  it('random design 57 (seed 99) of the demo ranges: sampled to the tolerance it was 2.1 % low; the rings agree with a count', () => {
    const text = readFileSync(join(REPO_ROOT, 'studies', 'platform-3rpr.yaml'), 'utf8').replace(/^\s*grid_cells:.*$/m, '');
    const study = parseStudyText(text, 'platform-3rpr').study;
    const evaluator = new ArchitectureEvaluator(study);
    let seed = 99;
    const rand = (): number => (seed = (seed * 1103515245 + 12345) % 2147483648) / 2147483648;
    let design = new Float64Array(0);
    for (let k = 0; k <= 57; k++) design = Float64Array.from(evaluator.variables, (v) => (v.kind === 'real' ? v.min + rand() * (v.max - v.min) : v.min));
    const area = evaluator.evaluate(design).metrics[metricIndex('reachable_area')]!;
    const model = evaluator.model(design) as LeggedModel;
    const phi = study.orientation?.phi0 ?? 0;
    const box = evaluationBox(study, evaluator.architecture, model, phi)!;
    const counted = reachableCount(evaluator.architecture, model, box, phi, 1000);
    expect(Math.abs(area / counted - 1)).toBeLessThan(1e-3);
  });
});
