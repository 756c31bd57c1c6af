/**
 * The generic margin grid (src/mechanics/grid.ts) on fields whose answers are known in closed form:
 * discs, rings, rectangles and half-planes. No mechanism involved.
 */
import { describe, expect, it } from 'vitest';
import { MarginGrid, trianglePositiveFraction } from '../../src/mechanics/grid.js';
import { seededRandom } from '../helpers/fivebarModels.js';

/** Sample `field` at every node of the grid's current layout into `target` (default: grid.values). */
function fillField(grid: MarginGrid, field: (x: number, y: number) => number, target: Float64Array = grid.values): void {
  for (let j = 0; j < grid.ny; j++) {
    for (let i = 0; i < grid.nx; i++) target[j * grid.nx + i] = field(grid.x0 + i * grid.h, grid.y0 + j * grid.h);
  }
}

/** Margin of a disc: R − |x − c| (≥ 0 inside). */
function discMargin(cx: number, cy: number, radius: number): (x: number, y: number) => number {
  return (x, y) => radius - Math.hypot(x - cx, y - cy);
}

/** Area of a simple polygon (shoelace formula), m². */
function polygonArea(xs: readonly number[], ys: readonly number[]): number {
  let twice = 0;
  for (let k = 0; k < xs.length; k++) {
    const next = (k + 1) % xs.length;
    twice += xs[k]! * ys[next]! - xs[next]! * ys[k]!;
  }
  return Math.abs(twice) / 2;
}

/**
 * Part of a convex polygon where the linear function f(x, y) = a x + b y + c is ≥ 0, by clipping
 * against the half-plane (Sutherland & Hodgman 1974, "Reentrant polygon clipping", CACM 17(1);
 * from memory). Returns its area.
 */
function clippedArea(xs: readonly number[], ys: readonly number[], a: number, b: number, c: number): number {
  const outX: number[] = [];
  const outY: number[] = [];
  for (let k = 0; k < xs.length; k++) {
    const next = (k + 1) % xs.length;
    const fk = a * xs[k]! + b * ys[k]! + c;
    const fn = a * xs[next]! + b * ys[next]! + c;
    if (fk >= 0) { outX.push(xs[k]!); outY.push(ys[k]!); }
    if ((fk >= 0) !== (fn >= 0)) {
      const t = fk / (fk - fn);
      outX.push(xs[k]! + t * (xs[next]! - xs[k]!));
      outY.push(ys[k]! + t * (ys[next]! - ys[k]!));
    }
  }
  return outX.length < 3 ? 0 : polygonArea(outX, outY);
}

describe('trianglePositiveFraction', () => {
  it('hand cases: lone vertex share t² by similar triangles (derived)', () => {
    // Derived: with one vertex of value a > 0 and two of value −b, the zero line cuts both edges at
    // t = a/(a + b) from it, leaving a similar triangle of area ratio t².
    expect(trianglePositiveFraction(1, -1, -1)).toBeCloseTo(1 / 4, 15);
    expect(trianglePositiveFraction(3, -1, -1)).toBeCloseTo(9 / 16, 15);
    expect(trianglePositiveFraction(-1, 1, 1)).toBeCloseTo(3 / 4, 15);
    expect(trianglePositiveFraction(-1, 3, -1)).toBeCloseTo(9 / 16, 15);
    expect(trianglePositiveFraction(-1, -1, 3)).toBeCloseTo(9 / 16, 15);
    expect(trianglePositiveFraction(1, 2, 3)).toBe(1);
    expect(trianglePositiveFraction(-1, -2, -3)).toBe(0);
    // The convention is "inside where ≥ 0": zeros count as inside.
    expect(trianglePositiveFraction(0, 0, 0)).toBe(1);
    expect(trianglePositiveFraction(0, -1, -1)).toBe(0);
  });

  it('equals exact clipping of the linear interpolant on random vertex values (derived)', () => {
    const random = seededRandom(2024);
    // Reference triangle (0,0), (1,0), (0,1); f = a + (b − a) x + (c − a) y interpolates the vertex values.
    const tx = [0, 1, 0];
    const ty = [0, 0, 1];
    for (let k = 0; k < 2000; k++) {
      const a = random() * 2 - 1;
      const b = random() * 2 - 1;
      const c = random() * 2 - 1;
      const exact = clippedArea(tx, ty, b - a, c - a, a) / 0.5;
      expect(Math.abs(trianglePositiveFraction(a, b, c) - exact)).toBeLessThan(1e-12);
      // Derived: the fraction does not depend on the vertex order, and f and −f share the triangle.
      expect(Math.abs(trianglePositiveFraction(b, c, a) - exact)).toBeLessThan(1e-12);
      expect(Math.abs(trianglePositiveFraction(-a, -b, -c) - (1 - exact))).toBeLessThan(1e-12);
    }
  });
});

describe('MarginGrid', () => {
  it('layout pads the box by at least one cell on every side and refuses to exceed capacity', () => {
    const grid = new MarginGrid(60);
    grid.layout(-1, 2, 0.5, 1.5, 30);
    expect(grid.h).toBeCloseTo(0.1, 15); // longer side 3 m over 30 cells
    expect(grid.x0).toBeCloseTo(-1.1, 12);
    expect(grid.y0).toBeCloseTo(0.4, 12);
    expect(grid.x0 + (grid.nx - 1) * grid.h).toBeGreaterThanOrEqual(2 + grid.h - 1e-12);
    expect(grid.y0 + (grid.ny - 1) * grid.h).toBeGreaterThanOrEqual(1.5 + grid.h - 1e-12);
    expect(() => grid.layout(0, 1, 0, 1, 100)).toThrow(/capacity/);
  });

  it('positiveArea is exact for linear fields (half-planes), since the interpolant is exact (derived)', () => {
    const grid = new MarginGrid(40);
    grid.layout(-0.3, 0.5, -0.2, 0.4, 30);
    const right = grid.x0 + (grid.nx - 1) * grid.h;
    const top = grid.y0 + (grid.ny - 1) * grid.h;
    const boxX = [grid.x0, right, right, grid.x0];
    const boxY = [grid.y0, grid.y0, top, top];
    const random = seededRandom(7);
    for (let k = 0; k < 200; k++) {
      const angle = random() * 2 * Math.PI;
      const a = Math.cos(angle);
      const b = Math.sin(angle);
      const c = (random() - 0.5) * 0.8;
      fillField(grid, (x, y) => a * x + b * y + c);
      const exact = clippedArea(boxX, boxY, a, b, c);
      expect(Math.abs(grid.positiveArea(grid.values) - exact)).toBeLessThan(1e-12);
    }
  });

  it('disc R − |x − c|: area → π R², one region, inscribed radius → R', () => {
    const grid = new MarginGrid(210);
    const radius = 0.37;
    const [cx, cy] = [0.013, -0.021];
    grid.layout(cx - radius, cx + radius, cy - radius, cy + radius, 100);
    fillField(grid, discMargin(cx, cy, radius));
    const area = grid.positiveArea(grid.values);
    // Area of a disc π R² (elementary geometry, no source); linear interpolation cuts chords, so the estimate is
    // slightly low, O(h²) (derived).
    expect(Math.abs(area / (Math.PI * radius ** 2) - 1)).toBeLessThan(1e-3);
    expect(grid.labelRegions()).toBe(1);
    const region = grid.regionAt(cx, cy);
    expect(region).toBe(0);
    expect(grid.largestRegion()).toBe(0);
    expect(grid.regionArea(region)).toBeCloseTo(area, 15);
    // Derived: the best node centre is within h/√2 of c, so the inscribed radius is within that of R
    // (boundary points on cell edges sit within O(h²/R) of the circle).
    const inscribed = grid.inscribedRadius(region);
    expect(inscribed).toBeLessThanOrEqual(radius + 1e-4);
    expect(inscribed).toBeGreaterThan(radius - grid.h / Math.SQRT2 - 1e-4);
    // Derived: the number of nodes in the region is the number of nodes inside the disc.
    let inside = 0;
    for (let k = 0; k < grid.nx * grid.ny; k++) if (grid.values[k]! >= 0) inside++;
    expect(grid.regionSizes[region]).toBe(inside);
  });

  it('disc centred on a node: inscribed radius within 1e-4 R', () => {
    const grid = new MarginGrid(110);
    const radius = 1;
    grid.layout(-1, 1, -1, 1, 80); // node at (0, 0): x0 = −1 − h, a whole number of cells away
    fillField(grid, discMargin(0, 0, radius));
    grid.labelRegions();
    const inscribed = grid.inscribedRadius(grid.regionAt(0, 0));
    // Derived: boundary points lie on the circle up to the linear-interpolation error of R − |x| along an edge.
    expect(Math.abs(inscribed - radius)).toBeLessThan(1e-4 * radius);
  });

  it('disc area converges at second order as h falls (derived: chord error of the interpolant ~ h²)', () => {
    const radius = 0.5;
    const centres = [[0.0123, 0.0456], [-0.031, 0.007], [0.021, -0.017], [0, 0]];
    const cellsList = [20, 40, 80, 160];
    const grid = new MarginGrid(170);
    const meanErrors = cellsList.map((cells) => {
      let sum = 0;
      for (const [cx, cy] of centres) {
        grid.layout(-0.6, 0.6, -0.6, 0.6, cells);
        fillField(grid, discMargin(cx!, cy!, radius));
        sum += Math.abs(grid.positiveArea(grid.values) - Math.PI * radius ** 2);
      }
      return sum / centres.length;
    });
    for (let k = 0; k + 1 < meanErrors.length; k++) {
      const order = Math.log2(meanErrors[k]! / meanErrors[k + 1]!);
      expect(order, `errors ${meanErrors.join(', ')}`).toBeGreaterThan(1.8);
      expect(order, `errors ${meanErrors.join(', ')}`).toBeLessThan(2.2);
    }
  });

  it('two separate discs: two regions, each region area and inscribed radius, regionAt and largestRegion', () => {
    const grid = new MarginGrid(130);
    const big = { cx: -0.45, cy: 0.02, r: 0.3 };
    const small = { cx: 0.5, cy: 0.1, r: 0.2 };
    grid.layout(-0.8, 0.75, -0.35, 0.35, 120);
    const bigMargin = discMargin(big.cx, big.cy, big.r);
    const smallMargin = discMargin(small.cx, small.cy, small.r);
    fillField(grid, (x, y) => Math.max(bigMargin(x, y), smallMargin(x, y)));
    expect(grid.labelRegions()).toBe(2);
    const bigLabel = grid.regionAt(big.cx, big.cy);
    const smallLabel = grid.regionAt(small.cx, small.cy);
    expect(bigLabel).toBeGreaterThanOrEqual(0);
    expect(smallLabel).toBeGreaterThanOrEqual(0);
    expect(bigLabel).not.toBe(smallLabel);
    expect(grid.largestRegion()).toBe(bigLabel);
    // Area of each disc π R² (elementary geometry, no source), to the grid's O(h²) accuracy.
    expect(Math.abs(grid.regionArea(bigLabel) / (Math.PI * big.r ** 2) - 1)).toBeLessThan(5e-3);
    expect(Math.abs(grid.regionArea(smallLabel) / (Math.PI * small.r ** 2) - 1)).toBeLessThan(5e-3);
    expect(grid.regionArea(bigLabel) + grid.regionArea(smallLabel)).toBeCloseTo(grid.positiveArea(grid.values), 12);
    expect(Math.abs(grid.inscribedRadius(bigLabel) - big.r)).toBeLessThan(grid.h);
    expect(Math.abs(grid.inscribedRadius(smallLabel) - small.r)).toBeLessThan(grid.h);
    // Between the discs, and outside the grid, no region.
    expect(grid.regionAt(0.02, -0.3)).toBe(-1);
    expect(grid.regionAt(5, 5)).toBe(-1);
    // A point just outside the small disc still maps to it through its cell's nearest inside corner.
    expect(grid.regionAt(small.cx + small.r + 0.2 * grid.h, small.cy)).toBe(smallLabel);
    expect(grid.regionArea(-1)).toBe(0);
    expect(grid.inscribedRadius(-1)).toBe(0);
  });

  it('regions are 4-connected: diagonal neighbours are separate, edge neighbours joined', () => {
    const grid = new MarginGrid(10);
    grid.layout(0, 1, 0, 1, 5);
    const at = (i: number, j: number): number => j * grid.nx + i;
    grid.values.fill(-1, 0, grid.nx * grid.ny);
    grid.values[at(2, 2)] = 1;
    grid.values[at(3, 3)] = 1;
    expect(grid.labelRegions()).toBe(2);
    grid.values[at(3, 2)] = 0; // zero counts as inside and bridges them
    expect(grid.labelRegions()).toBe(1);
    expect(grid.regionSizes[0]).toBe(3);
  });

  it('ring r ≤ |x| ≤ R: one region of area π (R² − r²), inscribed radius (R − r)/2', () => {
    const grid = new MarginGrid(170);
    const [inner, outer] = [0.4, 0.8];
    grid.layout(-outer, outer, -outer, outer, 160);
    fillField(grid, (x, y) => {
      const rho = Math.hypot(x, y);
      return Math.min(outer - rho, rho - inner);
    });
    expect(grid.labelRegions()).toBe(1);
    const region = grid.largestRegion();
    // Area of an annulus π (R² − r²) (elementary geometry, no source).
    expect(Math.abs(grid.regionArea(region) / (Math.PI * (outer ** 2 - inner ** 2)) - 1)).toBeLessThan(2e-3);
    // Derived: the widest circle in the band has diameter R − r.
    expect(Math.abs(grid.inscribedRadius(region) - (outer - inner) / 2)).toBeLessThan(grid.h);
    // The hole is not in the region.
    expect(grid.regionAt(0, 0)).toBe(-1);
  });

  it('rectangle |x| ≤ a, |y| ≤ b: area 4 a b exactly and inscribed radius min(a, b)', () => {
    const grid = new MarginGrid(110);
    const [a, b] = [0.6, 0.24];
    grid.layout(-a, a, -b, b, 100); // h = 0.012: the corners (±a, ±b) and the centre fall on nodes
    fillField(grid, (x, y) => Math.min(a - Math.abs(x), b - Math.abs(y)));
    grid.labelRegions();
    const region = grid.regionAt(0, 0);
    // Derived: with the corners on nodes, the field is linear (b − |y| or a − |x|) on every triangle
    // the boundary crosses, so the area is exact.
    expect(grid.regionArea(region)).toBeCloseTo(4 * a * b, 10);
    expect(Math.abs(grid.inscribedRadius(region) - Math.min(a, b))).toBeLessThan(1e-9);
  });
});
