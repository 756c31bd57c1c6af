/**
 * The ridge test of src/mechanics/thinParts.ts on margins with known answers (derived here): across
 * a strip [x_l, x_r] of slope s the margin min(s (x − x_l), s (x_r − x)) is two lines meeting at
 * s (x_r − x_l)/2 ≥ 0 at the strip's middle; sampled at four nodes 0, 1, 2, 3 with the strip between
 * nodes 1 and 2 and both of them outside, the test must see the strip; without a strip (the two lines
 * meeting below zero), or with a smooth bump whose lines cross below zero, it must not.
 */
import { describe, expect, it } from 'vitest';
import { ridgeCrosses, ridgeWidth } from '../../src/mechanics/thinParts.js';
import { adaptiveArea, type Field } from '../helpers/adaptiveField.js';

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

describe('width of the strip on the crossed edge', () => {
  it('is the strip width x_r − x_l in node spacings (derived here: both lines are exact), and −1 without a strip', () => {
    for (const [xl, xr, slope] of [[1.05, 1.15, 3], [1.4, 1.45, 0.2], [1.01, 1.99, 7], [1.2, 1.23, 1]]) {
      expect(ridgeWidth(...nodes(strip(xl!, xr!, slope!))), `${xl}–${xr}`).toBeCloseTo(xr! - xl!, 12);
    }
    expect(ridgeWidth(...nodes((x) => Math.min(3 * (x - 1.6), 3 * (1.4 - x))))).toBe(-1);
    expect(ridgeWidth(...nodes(strip(0.9, 1.3, 3)))).toBe(-1);
  });
});

/**
 * Regions that are intersections of a few terms (the margin the smallest of them, as on the
 * platforms), with closed-form areas (derived here), through the whole adaptive area with the thin
 * parts on (the default), 24 coarse cells across [−1, 1]² (h = 1/12):
 * - a neck: in coordinates (s, t) along and across a slanted axis, |t| ≤ W(s)/2 for 0 ≤ s ≤ S with
 *   W(s) = w₀ + A (s − s_N)², area w₀ S + A ((S − s_N)³ + s_N³)/3. At s_N the width w₀ = h/40 is below
 *   the lattice step h/16 over about a coarse cell; the part beyond (1.9 % of the area) has no coarse
 *   node. Before the lattice passages and diagonal steps (the commit before them) it came out 2.1 % low.
 * - thin wedges: two half-planes through an apex at an angle α, cut at a distance L along the
 *   bisector, area L² tan(α/2); the tip runs out inside cells whose children have no corner inside.
 *   Before the kink test (the same commit) the 6° and 8° ones came out up to 0.58 % low, with error
 *   estimates below the true error.
 * The bound of the neck is the default tolerance (0.5 %); the wedges' 0.2 % is below what the
 * commit before reached on four of them. The reported error estimate must cover the true error.
 */
describe('thin parts of regions bounded by a few terms', () => {
  it('a neck narrower than the lattice: the part beyond it counts (within 0.5 %), the estimate covers the error', () => {
    const ang = 0.5;
    const u = [Math.cos(ang), Math.sin(ang)] as const;
    const [w0, sN, S, A] = [1 / 12 / 40, 0.6, 0.75, 0.4 / 0.36];
    const width = (s: number) => w0 + A * (s - sN) ** 2;
    const field: Field = (x, y) => {
      const s = u[0] * (x + 0.55) + u[1] * (y + 0.31);
      const t = -u[1] * (x + 0.55) + u[0] * (y + 0.31);
      return Math.min(width(s) / 2 - t, width(s) / 2 + t, s, S - s);
    };
    const exact = w0 * S + (A / 3) * ((S - sN) ** 3 + sN ** 3);
    const result = adaptiveArea(field);
    expect(Math.abs(result.area / exact - 1)).toBeLessThan(0.005);
    expect(result.error).toBeGreaterThanOrEqual(Math.abs(result.area - exact));
  });

  for (const degrees of [6, 8]) {
    for (const axis of [0.3, 1, 2.2, 4]) {
      it(`a ${degrees}° wedge along ${axis} rad: within 0.2 %, the estimate covers the error`, () => {
        const half = (degrees / 2) * (Math.PI / 180);
        const length = 0.9;
        const apex = [-0.8 * Math.cos(axis) + 0.013, -0.8 * Math.sin(axis) - 0.021] as const;
        const field: Field = (x, y) => {
          const [px, py] = [x - apex[0], y - apex[1]];
          const side1 = Math.sin(axis + half) * px - Math.cos(axis + half) * py;
          const side2 = -Math.sin(axis - half) * px + Math.cos(axis - half) * py;
          return Math.min(side1, side2, length - (Math.cos(axis) * px + Math.sin(axis) * py));
        };
        const exact = length * length * Math.tan(half);
        const result = adaptiveArea(field);
        expect(Math.abs(result.area / exact - 1)).toBeLessThan(0.002);
        expect(result.error).toBeGreaterThanOrEqual(Math.abs(result.area - exact));
      });
    }
  }
});
