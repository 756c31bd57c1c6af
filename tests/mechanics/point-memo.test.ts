/**
 * PointMemo (src/mechanics/extremeSearch.ts): the values of the points the local searches of one pass
 * have solved, found again by their exact coordinates. The searches' results do not depend on it
 * (it only spares solving a point twice); these tests check the table itself.
 */
import { describe, expect, it } from 'vitest';
import { PointMemo } from '../../src/mechanics/extremeSearch.js';

describe('PointMemo', () => {
  it('finds every point it was given, by exact coordinates, and no other', () => {
    const memo = new PointMemo(3, 500);
    const xs: number[] = [];
    const ys: number[] = [];
    let seed = 7;
    const rand = () => ((seed = (seed * 1103515245 + 12345) % 2147483648) / 2147483648);
    for (let k = 0; k < 500; k++) {
      // Points on a lattice of steps that halve, as a compass search polls them, and some at random.
      const x = k % 2 === 0 ? 0.1 + (k % 17) * 2 ** -(k % 9) : rand();
      const y = k % 2 === 0 ? -0.45 + (k % 13) * 2 ** -(k % 7) : rand();
      if (memo.find(x, y) >= 0) continue;
      const entry = memo.add(x, y);
      expect(entry).toBe(xs.length);
      memo.values[3 * entry] = x + y;
      xs.push(x);
      ys.push(y);
    }
    expect(xs.length).toBeGreaterThan(300);
    xs.forEach((x, k) => {
      const entry = memo.find(x, ys[k]!);
      expect(entry).toBe(k);
      expect(memo.values[3 * entry]).toBe(x + ys[k]!);
    });
    // A coordinate one rounding step away is another point.
    expect(memo.find(xs[3]! * (1 + Number.EPSILON), ys[3]!)).toBe(-1);
    expect(memo.find(ys[3]!, xs[3]!)).toBe(-1);
  });

  it('forgets everything on clear, and refuses new points when full', () => {
    const memo = new PointMemo(1, 8);
    for (let k = 0; k < 8; k++) expect(memo.add(k, -k)).toBe(k);
    expect(memo.add(8, -8)).toBe(-1);
    expect(memo.find(5, -5)).toBe(5);
    memo.clear();
    for (let k = 0; k < 8; k++) expect(memo.find(k, -k)).toBe(-1);
    expect(memo.add(1, 2)).toBe(0);
    expect(memo.find(1, 2)).toBe(0);
    expect(memo.flags[0]).toBe(0);
  });
});
