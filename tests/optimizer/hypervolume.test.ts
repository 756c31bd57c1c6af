import { describe, expect, it } from 'vitest';
import { hypervolume, normalizeObjectives, toMinimization } from '../../src/optimizer/hypervolume.js';
import { SeededRandom } from '../../src/optimizer/random.js';

/**
 * Brute force by inclusion-exclusion: HV = sum over non-empty subsets S of
 * (-1)^(|S|+1) * volume of the box between the component-wise maximum of S and the
 * reference (derived: the dominated region is the union of the points' boxes, and the
 * intersection of boxes is the box of the component-wise maximum).
 */
function inclusionExclusion(points: number[][], reference: number[]): number {
  const inside = points.filter((point) => point.every((value, k) => value < reference[k]!));
  const count = inside.length;
  let total = 0;
  for (let mask = 1; mask < 1 << count; mask++) {
    const corner = reference.map(() => Number.NEGATIVE_INFINITY);
    let size = 0;
    for (let i = 0; i < count; i++) {
      if ((mask & (1 << i)) === 0) continue;
      size++;
      inside[i]!.forEach((value, k) => {
        if (value > corner[k]!) corner[k] = value;
      });
    }
    const volume = corner.reduce((product, value, k) => product * (reference[k]! - value), 1);
    total += size % 2 === 1 ? volume : -volume;
  }
  return total;
}

describe('hypervolume: hand cases', () => {
  it('1-D is the distance from the best point to the reference', () => {
    expect(hypervolume([[0.3], [0.6], [2]], [1])).toBeCloseTo(0.7, 15); // derived: 1 - 0.3
  });

  it('2-D staircase', () => {
    expect(hypervolume([[0, 0]], [1, 1])).toBe(1); // derived: unit square
    expect(hypervolume([[0, 0.5], [0.5, 0]], [1, 1])).toBeCloseTo(0.75, 15); // derived: 1 - 0.5 * 0.5
    expect(hypervolume([[0, 0.5], [0.5, 0], [0.6, 0.6], [0, 0.5]], [1, 1])).toBeCloseTo(0.75, 15); // dominated and repeated points add nothing
  });

  it('ignores points that do not strictly dominate the reference', () => {
    expect(hypervolume([[1, 0], [0, 1], [2, -1]], [1, 1])).toBe(0); // derived: each has a coordinate >= reference
    expect(hypervolume([], [1, 1, 1])).toBe(0);
    expect(hypervolume([[0.5, 0.5, 1]], [1, 1, 1])).toBe(0);
  });

  it('3-D and 4-D boxes', () => {
    expect(hypervolume([[0, 0, 0]], [2, 3, 4])).toBe(24); // derived: 2 * 3 * 4
    // derived: two unit-cube corners at (0,0,.5) and (.5,.5,0) w.r.t. (1,1,1): 0.5 + 0.25 - 0.125
    expect(hypervolume([[0, 0, 0.5], [0.5, 0.5, 0]], [1, 1, 1])).toBeCloseTo(0.625, 15);
    expect(hypervolume([[0, 0, 0, 0], [0.5, 0.5, 0.5, 0.5]], [1, 1, 1, 1])).toBe(1); // derived: second point dominated
  });

  it('analytic ZDT1 front: dense sampling approaches 2/3 w.r.t. (1,1) and 0.876667 w.r.t. (1.1,1.1)', () => {
    // Derived: the front is f2 = 1 - sqrt(f1), so HV(1,1) = integral of sqrt(f1) over [0,1] = 2/3,
    // and HV(1.1,1.1) = 2/3 + 1.1^2 - 1 = 0.876667. A staircase of n points misses O(1/n).
    const points: number[][] = [];
    const samples = 20_000;
    for (let i = 0; i <= samples; i++) points.push([i / samples, 1 - Math.sqrt(i / samples)]);
    expect(Math.abs(hypervolume(points, [1, 1]) - 2 / 3)).toBeLessThan(1e-4);
    expect(Math.abs(hypervolume(points, [1.1, 1.1]) - (2 / 3 + 0.21))).toBeLessThan(1e-4);
  });
});

describe('hypervolume: exact against inclusion-exclusion', () => {
  for (const dimension of [2, 3, 4, 5]) {
    it(`agrees on random sets in ${dimension} objectives`, () => {
      const random = new SeededRandom(1000 + dimension);
      for (let trial = 0; trial < 60; trial++) {
        const count = 1 + random.int(10);
        // Half the trials on a coarse grid, so that ties and repeated coordinates occur.
        const grid = trial % 2 === 0;
        const points = Array.from({ length: count }, () =>
          Array.from({ length: dimension }, () => (grid ? random.int(5) / 4 : random.next() * 1.2)),
        );
        const reference = Array.from({ length: dimension }, () => 1);
        const expected = inclusionExclusion(points, reference);
        expect(hypervolume(points, reference)).toBeCloseTo(expected, 12);
      }
    });
  }

  it('agrees on mutually non-dominated points on a simplex (the hard case for slicing)', () => {
    const random = new SeededRandom(77);
    for (const dimension of [3, 4, 5]) {
      const points = Array.from({ length: 10 }, () => {
        const raw = Array.from({ length: dimension }, () => random.next());
        const sum = raw.reduce((a, b) => a + b, 0);
        return raw.map((value) => value / sum);
      });
      const reference = Array.from({ length: dimension }, () => 1.1);
      expect(hypervolume(points, reference)).toBeCloseTo(inclusionExclusion(points, reference), 12);
    }
  });
});

/**
 * Independent exact method for larger 3-D sets: slice along the third objective; between
 * consecutive distinct third-objective values the cross-section is the 2-D union of the
 * boxes of the points already passed (derived; area of a 2-D union by a grid of distinct
 * coordinates, O(n^3) per slice, fine for tests).
 */
function slicing3d(points: number[][], reference: number[]): number {
  const inside = points.filter((point) => point.every((value, k) => value < reference[k]!));
  const levels = [...new Set(inside.map((point) => point[2]!)), reference[2]!].sort((a, b) => a - b);
  let volume = 0;
  for (let l = 0; l + 1 < levels.length; l++) {
    const active = inside.filter((point) => point[2]! <= levels[l]!);
    const xs = [...new Set(active.map((point) => point[0]!)), reference[0]!].sort((a, b) => a - b);
    const ys = [...new Set(active.map((point) => point[1]!)), reference[1]!].sort((a, b) => a - b);
    let area = 0;
    for (let i = 0; i + 1 < xs.length; i++) {
      for (let j = 0; j + 1 < ys.length; j++) {
        if (active.some((point) => point[0]! <= xs[i]! && point[1]! <= ys[j]!)) area += (xs[i + 1]! - xs[i]!) * (ys[j + 1]! - ys[j]!);
      }
    }
    volume += area * (levels[l + 1]! - levels[l]!);
  }
  return volume;
}

describe('hypervolume: larger 3-D sets against grid slicing', () => {
  it('agrees on 60 points near a sphere and on 60 random points', () => {
    const random = new SeededRandom(5);
    const sphere = Array.from({ length: 60 }, () => {
      const raw = [random.next(), random.next(), random.next()];
      const norm = Math.hypot(...raw);
      return raw.map((value) => value / norm + 0.01 * random.next());
    });
    const scattered = Array.from({ length: 60 }, () => [random.next(), random.next(), random.next()]);
    for (const points of [sphere, scattered]) {
      expect(hypervolume(points, [1, 1, 1])).toBeCloseTo(slicing3d(points, [1, 1, 1]), 12);
    }
  });
});

describe('normalizeObjectives and toMinimization', () => {
  it('maps ideal to 0 and nadir to 1 in each objective', () => {
    expect(normalizeObjectives([[1, 10], [3, 30], [2, 20]], [1, 10], [3, 30])).toEqual([
      [0, 0],
      [1, 1],
      [0.5, 0.5],
    ]);
    expect(() => normalizeObjectives([[1, 1]], [0, 1], [1, 1])).toThrow();
  });

  it('negates maximised objectives only', () => {
    expect(toMinimization([2, 3, -4], ['min', 'max', 'max'])).toEqual([2, -3, 4]);
  });
});
