/**
 * The adaptive area (src/mechanics/adaptive.ts with the boundary cells of crossings.ts) on margin
 * fields whose positive sets have closed-form areas (derived here): a disc πr², an ellipse πab, a
 * rectangle (corners where two boundaries meet: the kinked case), a disc with a hole (inclusion of
 * two circles, πr₁² − πr₂²), each placed off the grid's symmetry, and the inscribed radius
 * (emptyCircle.ts with the hops of AdaptiveArea.climb) of each. Not timed. The bound 1e-4 is a
 * fiftieth of the default tolerance; the reported error estimate must cover the true error.
 */
import { describe, expect, it } from 'vitest';
import { adaptiveArea, type Field } from '../helpers/adaptiveField.js';

// Inscribed radii (derived here): a disc its radius; a rectangle half its shorter side; an ellipse
// its minor semi-axis (the nearest boundary points to the centre are the minor vertices, and the
// radius of curvature there, a²/b, exceeds b); a disc R with an off-centre hole r at distance e from
// the centre, half the widest gap along the line of the centres, (R − r + e)/2.
const cases: { name: string; field: Field; exact: number; inscribed: number }[] = [
  { name: 'disc r = 0.7 (distance field)', field: (x, y) => 0.7 - Math.hypot(x - 0.031, y + 0.012), exact: Math.PI * 0.49, inscribed: 0.7 },
  { name: 'disc r = 0.7 (quadratic field)', field: (x, y) => 0.49 - (x - 0.031) ** 2 - (y + 0.012) ** 2, exact: Math.PI * 0.49, inscribed: 0.7 },
  { name: 'ellipse 0.8 × 0.3', field: (x, y) => 1 - ((x - 0.017) / 0.8) ** 2 - ((y + 0.021) / 0.3) ** 2, exact: Math.PI * 0.8 * 0.3, inscribed: 0.3 },
  { name: 'rectangle 1.2 × 0.8', field: (x, y) => Math.min(0.6 - Math.abs(x - 0.013), 0.4 - Math.abs(y + 0.021)), exact: 1.2 * 0.8, inscribed: 0.4 },
  {
    name: 'disc r = 0.7 with a hole r = 0.3',
    field: (x, y) => Math.min(0.7 - Math.hypot(x, y), Math.hypot(x - 0.1, y + 0.05) - 0.3),
    exact: Math.PI * (0.49 - 0.09),
    inscribed: (0.7 - 0.3 + Math.hypot(0.1, 0.05)) / 2,
  },
];

describe('adaptive area on closed-form shapes', () => {
  for (const c of cases) {
    it(`${c.name}: within 1e-4 relative, and the error estimate covers the true error`, () => {
      const result = adaptiveArea(c.field);
      const error = Math.abs(result.area - c.exact);
      expect(error / c.exact).toBeLessThan(1e-4);
      expect(result.error).toBeGreaterThanOrEqual(error);
    });
  }

  for (const c of cases) {
    it(`${c.name}: inscribed radius ${c.inscribed.toFixed(4)} within 0.1 %`, () => {
      expect(Math.abs(adaptiveArea(c.field).inscribed / c.inscribed - 1)).toBeLessThan(1e-3);
    });
  }

  it('a smooth boundary costs far fewer samples than refining every boundary cell to the sixteenth', () => {
    // 24 cells across a disc of radius 0.7 in a box of 2: about 60 boundary cells. Four levels of
    // splitting would take at least 5 · 60 · (1 + 2 + 4 + 8) samples; the boundary cells take ~10 each.
    const result = adaptiveArea(cases[0]!.field);
    expect(result.samples).toBeLessThan(1500);
  });
});
