/**
 * The ridge test of src/mechanics/thinParts.ts on margins with known answers (derived here): across
 * a strip [x_l, x_r] of slope s the margin min(s (x − x_l), s (x_r − x)) is two lines meeting at
 * s (x_r − x_l)/2 ≥ 0 at the strip's middle; sampled at four nodes 0, 1, 2, 3 with the strip between
 * nodes 1 and 2 and both of them outside, the test must see the strip; without a strip (the two lines
 * meeting below zero), or with a smooth bump whose lines cross below zero, it must not.
 */
import { describe, expect, it } from 'vitest';
import { ridgeCrosses } from '../../src/mechanics/thinParts.js';

const strip = (xl: number, xr: number, s: number) => (x: number) => Math.min(s * (x - xl), s * (xr - x));
const nodes = (f: (x: number) => number) => [f(0), f(1), f(2), f(3)] as const;

describe('ridge test of a thin strip between two outside nodes', () => {
  it('sees strips of any width below one cell between nodes 1 and 2', () => {
    for (const [xl, xr] of [[1.05, 1.15], [1.4, 1.45], [1.01, 1.99], [1.7, 1.9999]]) {
      const v = nodes(strip(xl!, xr!, 3));
      expect(v[1]).toBeLessThan(0);
      expect(v[2]).toBeLessThan(0);
      expect(ridgeCrosses(...v), `${xl}–${xr}`).toBe(true);
    }
  });
  it('does not see a gap (lines meeting below zero), a valley, or a strip outside the edge', () => {
    expect(ridgeCrosses(...nodes((x) => Math.min(3 * (x - 1.6), 3 * (1.4 - x))))).toBe(false);
    expect(ridgeCrosses(...nodes((x) => Math.abs(x - 1.5) - 2))).toBe(false);
    expect(ridgeCrosses(...nodes(strip(2.2, 2.4, 3)))).toBe(false);
    // A node inside: the corner refinement already sees the boundary.
    expect(ridgeCrosses(...nodes(strip(0.9, 1.3, 3)))).toBe(false);
  });
});
