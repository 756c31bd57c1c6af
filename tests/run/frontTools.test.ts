/**
 * Front tools (src/run/frontTools.ts) on constructed fronts whose knee and redundancy are known by
 * construction ("derived" beside each check).
 */
import { describe, expect, it } from 'vitest';
import { analysePoints, chooseRepresentatives, extremePoints, kneePoints, normaliseFront, redundantObjectives } from '../../src/run/frontTools.js';

/** Two straight pieces (0,1) -> (0.2,0.2) -> (1,0), 41 points: the knee is the corner (0.2, 0.2). */
function cornerFront(): number[][] {
  const points: number[][] = [];
  for (let i = 0; i <= 20; i++) {
    const t = i / 20;
    points.push([0.2 * t, 1 - 0.8 * t]);
  }
  for (let i = 1; i <= 20; i++) {
    const t = i / 20;
    points.push([0.2 + 0.8 * t, 0.2 - 0.2 * t]);
  }
  // Scaled objectives (units must not matter): objective 1 in mm, objective 2 in N·m.
  return points.map(([a, b]) => [1000 * a!, 3 * b!]);
}

describe('knee, extremes, representatives on a constructed front', () => {
  it('finds the corner as the knee (derived: largest distance from the line through the extremes, x + y = 1)', () => {
    const { points } = normaliseFront(cornerFront());
    const extremes = extremePoints(points);
    expect(extremes).toEqual([0, 40]);
    const { knees, distances, plane } = kneePoints(points, extremes);
    expect(plane).toBe('extremes');
    expect(knees).toEqual([20]);
    // Derived: distance of (0.2, 0.2) from x + y = 1 is (1 - 0.4) / sqrt(2).
    expect(distances[20]).toBeCloseTo(0.6 / Math.SQRT2, 12);
  });

  it('keeps extremes and the knee, is deterministic and independent of input order', () => {
    const front = cornerFront();
    const names = ['f1', 'f2'];
    const first = analysePoints(front, 5, names);
    const again = analysePoints(front, 5, names);
    expect(again).toEqual(first);
    const chosen = first.representatives.map((r) => front[r.index]!.join(','));
    expect(chosen).toHaveLength(5);
    expect(new Set(chosen).size).toBe(5);
    for (const must of [front[0]!, front[40]!, front[20]!]) expect(chosen).toContain(must.join(','));
    expect(first.representatives.find((r) => r.index === 20)!.reasons).toContain('knee');
    expect(first.representatives.find((r) => r.index === 0)!.reasons).toContain('best f1');
    // Reversed input: the same designs (by objective values) are chosen.
    const reversed = [...front].reverse();
    const other = analysePoints(reversed, 5, names).representatives.map((r) => reversed[r.index]!.join(','));
    expect(new Set(other)).toEqual(new Set(chosen));
    // Every design belongs to one representative.
    expect(first.representatives.reduce((s, r) => s + r.clusterSize, 0)).toBe(front.length);
  });

  it('spreads the others: farthest-point choice covers the front more tightly as K grows', () => {
    const { points } = normaliseFront(cornerFront());
    const extremes = extremePoints(points);
    const knees = kneePoints(points, extremes).knees;
    const radii = [3, 5, 9].map((k) => chooseRepresentatives(points, k, extremes, knees, ['a', 'b']).coverRadius);
    expect(radii[1]!).toBeLessThan(radii[0]!);
    expect(radii[2]!).toBeLessThan(radii[1]!);
  });

  it('finds the knee of a 3-objective front bulging at the centre (derived: Das 1999 distance of 0.4·(1,1,1)/3 from sum f = 1)', () => {
    const points: number[][] = [];
    const p = 10;
    for (let i = 0; i <= p; i++) {
      for (let j = 0; j <= p - i; j++) {
        const w = [i / p, j / p, (p - i - j) / p];
        const r2 = w.reduce((s, v) => s + (v - 1 / 3) ** 2, 0);
        const scale = 1 - 0.6 * Math.exp(-r2 / 0.02);
        points.push(w.map((v) => v * scale));
      }
    }
    // The centre (1/3, 1/3, 1/3) is not a grid point for p = 10; add it.
    points.push([0.4 / 3, 0.4 / 3, 0.4 / 3]);
    const result = analysePoints(points, 6, ['a', 'b', 'c']);
    expect(result.knees[0]!.index).toBe(points.length - 1);
    // The extremes tie along whole edges (f_a = 0 on an edge); the tie-break picks mid-edge points
    // whose bulge factor is 1 - 2e-4, so the plane is sum f = 1 to about 1e-4.
    expect(result.knees[0]!.distance).toBeCloseTo((1 - 0.4) / Math.sqrt(3), 3);
    expect(result.representatives.map((r) => r.index)).toContain(points.length - 1);
  });
});

describe('redundant objectives (after Deb & Saxena 2006)', () => {
  it('reports an objective that follows another on the front, with its correlation; keeps conflicting ones', () => {
    const points: number[][] = [];
    for (let i = 0; i <= 30; i++) {
      const t = i / 30;
      const f1 = t;
      const f2 = 1 - Math.sqrt(t);
      // Derived: f3 = 2 f1 + a small wiggle, so corr(f1, f3) is close to 1 and f3 adds no conflict.
      const f3 = 2 * f1 + 0.01 * Math.sin(7 * i);
      points.push([f1, f2, f3]);
    }
    const report = redundantObjectives(points);
    expect(report.essential).toContain(1);
    expect(report.redundant.map((r) => r.objective)).toEqual([report.essential.includes(0) ? 2 : 0]);
    expect(report.redundant[0]!.correlation).toBeGreaterThan(0.99);
    expect(report.agreeingPairs).toEqual([{ a: 0, b: 2, correlation: report.correlation[0]![2]! }]);
    expect(report.components[0]!.share).toBeGreaterThan(0.9);
  });

  it('finds nothing redundant when every pair conflicts', () => {
    const points: number[][] = [];
    for (let i = 0; i <= 20; i++) points.push([i / 20, 1 - i / 20]);
    expect(redundantObjectives(points).redundant).toEqual([]);
  });
});
