/**
 * Geometry kernel of the cell checks (src/cell/geometry.ts) and the regular-workspace search
 * (src/cell/regularWorkspace.ts) against closed forms, each derived beside its check.
 */
import { describe, expect, it } from 'vitest';
import {
  largestRectangleInCircle,
  largestRectangleInRectangle,
  pointInPolygon,
  pointSegmentDistance,
  polygonContainsPolygon,
  convexPolygonClearance,
  polygonSelfIntersects,
  polygonSignedArea,
  rectanglePolygon,
  segmentPolygonClearance,
  segmentSegmentDistance,
  signedPointPolygonDistance,
  signedSegmentDistance,
} from '../../src/cell/geometry.js';
import { RegularWorkspaceFinder } from '../../src/cell/regularWorkspace.js';
import { MarginGrid } from '../../src/mechanics/grid.js';

const poly = (...xy: number[]): Float64Array => Float64Array.from(xy);

describe('segment distances', () => {
  it('parallel segments: the offset between their lines', () => {
    // Derived here: (0,0)-(1,0) and (0.2,0.3)-(0.8,0.3) overlap in x, so the distance is the line offset 0.3.
    expect(segmentSegmentDistance(0, 0, 1, 0, 0.2, 0.3, 0.8, 0.3)).toBeCloseTo(0.3, 15);
  });
  it('skew segments apart: end point to the other segment', () => {
    // Derived here: (0,0)-(1,0) and (2,1)-(3,5): the nearest points are (1,0) and (2,1), distance √2.
    expect(segmentSegmentDistance(0, 0, 1, 0, 2, 1, 3, 5)).toBeCloseTo(Math.SQRT2, 15);
  });
  it('T configuration: end point to the interior', () => {
    // Derived here: (0,0)-(2,0) and (1,0.5)-(1,3): the end (1,0.5) lies 0.5 above the first segment's interior.
    expect(segmentSegmentDistance(0, 0, 2, 0, 1, 0.5, 1, 3)).toBeCloseTo(0.5, 15);
  });
  it('crossing segments: distance 0, signed distance minus the nearest end to the other segment', () => {
    // Derived here: diagonals (0,0)-(1,1) and (0,1)-(1,0) of the unit square cross at (½,½); each end lies
    // √2/2 from the other diagonal, so the signed distance is −√2/2.
    expect(segmentSegmentDistance(0, 0, 1, 1, 0, 1, 1, 0)).toBe(0);
    expect(signedSegmentDistance(0, 0, 1, 1, 0, 1, 1, 0)).toBeCloseTo(-Math.SQRT1_2, 15);
    // An X whose arm (0.45,−0.1)-(0.45,0.1) just pokes 0.1 through (0,0)-(1,0): −0.1.
    expect(signedSegmentDistance(0, 0, 1, 0, 0.45, -0.1, 0.45, 0.3)).toBeCloseTo(-0.1, 15);
  });
  it('point to segment: the perpendicular foot, or the nearer end', () => {
    expect(pointSegmentDistance(0.5, 2, 0, 0, 1, 0)).toBeCloseTo(2, 15);
    // Derived here: (4, 4) beyond B = (1, 0): |(3, 4)| = 5.
    expect(pointSegmentDistance(4, 4, 0, 0, 1, 0)).toBeCloseTo(5, 15);
  });
});

describe('polygons', () => {
  // An L shape (non-convex): the unit square [0,2]×[0,2] minus its top-right quarter [1,2]×[1,2].
  const ell = poly(0, 0, 2, 0, 2, 1, 1, 1, 1, 2, 0, 2);
  it('point containment, including the notch of a non-convex polygon', () => {
    expect(pointInPolygon(0.5, 0.5, ell)).toBe(true);
    expect(pointInPolygon(1.5, 0.5, ell)).toBe(true);
    expect(pointInPolygon(1.5, 1.5, ell)).toBe(false); // in the notch
    expect(pointInPolygon(3, 0.5, ell)).toBe(false);
    // Negative control: the same point with the polygon reversed gives the same answer.
    expect(pointInPolygon(1.5, 1.5, poly(0, 2, 1, 2, 1, 1, 2, 1, 2, 0, 0, 0))).toBe(false);
  });
  it('signed distance: depth inside, distance outside', () => {
    // Derived here: (0.5, 0.25) is 0.25 above the bottom edge and ≥ 0.5 from the others.
    expect(signedPointPolygonDistance(0.5, 0.25, ell)).toBeCloseTo(-0.25, 15);
    // (1.5, 1.5) in the notch: 0.5 from the edges (2,1)-(1,1) and (1,1)-(1,2).
    expect(signedPointPolygonDistance(1.5, 1.5, ell)).toBeCloseTo(0.5, 15);
  });
  it('area (shoelace) and simplicity', () => {
    // Derived here: 2×2 square minus a 1×1 quarter = 3 m²; counter-clockwise = positive.
    expect(polygonSignedArea(ell)).toBeCloseTo(3, 15);
    expect(polygonSelfIntersects(ell)).toBe(false);
    expect(polygonSelfIntersects(poly(0, 0, 1, 1, 1, 0, 0, 1))).toBe(true); // a bow tie
  });
  it('polygon containment: a square in the L, not one bridging the notch', () => {
    expect(polygonContainsPolygon(ell, rectanglePolygon(0.5, 0.5, 0.8, 0.8))).toBe(true);
    expect(polygonContainsPolygon(ell, rectanglePolygon(1, 1.5, 1.2, 0.2))).toBe(false);
    // Derived here: the triangle (0.2,0.2), (1.8,0.2), (0.2,1.7) has its long edge at y = 0.95 where x = 1, below the notch.
    expect(polygonContainsPolygon(ell, poly(0.2, 0.2, 1.8, 0.2, 0.2, 1.7))).toBe(true);
    // Negative control: every vertex of (0.5,0.5), (1.8,0.5), (0.5,1.8) lies in the L, but the long edge's
    // midpoint (1.15, 1.15) lies in the notch: vertices alone would wrongly say contained.
    const cut = poly(0.5, 0.5, 1.8, 0.5, 0.5, 1.8);
    for (let k = 0; k < 3; k++) expect(pointInPolygon(cut[2 * k]!, cut[2 * k + 1]!, ell)).toBe(true);
    expect(polygonContainsPolygon(ell, cut)).toBe(false);
  });
  it('segment against polygon: distance when apart, minus the deepest chord point when through', () => {
    const square = rectanglePolygon(0, 0, 2, 2); // [−1, 1]²
    // Derived here: the segment y = 1.5 lies 0.5 above the top edge.
    expect(segmentPolygonClearance(-3, 1.5, 3, 1.5, square)).toBeCloseTo(0.5, 15);
    // Through the centre along y = 0.2: the chord midpoint (0, 0.2) is 0.8 deep (nearest edge y = 1).
    expect(segmentPolygonClearance(-3, 0.2, 3, 0.2, square)).toBeCloseTo(-0.8, 15);
    // An end point inside at (0.9, 0): 0.1 deep.
    expect(segmentPolygonClearance(0.9, 0, 3, 0, square)).toBeCloseTo(-0.1, 15);
  });
  it('convex polygon against convex polygon: gap, and penetration depth when overlapping', () => {
    // Derived here: unit squares centred 1.5 apart leave a 0.5 gap; centred 0.8 apart they overlap by a
    // 0.2-wide strip, so the shortest parting translation is 0.2.
    expect(convexPolygonClearance(rectanglePolygon(0, 0, 1, 1), rectanglePolygon(1.5, 0, 1, 1))).toBeCloseTo(0.5, 15);
    expect(convexPolygonClearance(rectanglePolygon(0, 0, 1, 1), rectanglePolygon(0.8, 0, 1, 1))).toBeCloseTo(-0.2, 15);
    // Derived here: a unit square turned 45° centred at (1.2, 0) pokes its corner to x = 1.2 − √2/2, i.e.
    // 0.5 − (1.2 − √2/2) ≈ 0.0071 into [−½, ½]²; along its own normals the overlap is 0.7071 − 0.3485 (larger).
    expect(convexPolygonClearance(rectanglePolygon(0, 0, 1, 1), rectanglePolygon(1.2, 0, 1, 1, Math.PI / 4))).toBeCloseTo(-(0.5 - (1.2 - Math.SQRT1_2)), 14);
  });
});

describe('largest rectangles: closed forms', () => {
  it('square in a circle has side r√2; aspect a has diagonal 2r', () => {
    const [w, h] = largestRectangleInCircle(0.3);
    expect(w).toBeCloseTo(0.3 * Math.SQRT2, 15);
    expect(h).toBeCloseTo(0.3 * Math.SQRT2, 15);
    const [w2, h2] = largestRectangleInCircle(0.3, 2);
    expect(Math.hypot(w2, h2)).toBeCloseTo(0.6, 15);
    expect(w2 / h2).toBeCloseTo(2, 15);
  });
  it('square in a rectangle: min(W, H) aligned, min(W, H)/√2 at 45°', () => {
    expect(largestRectangleInRectangle(0.5, 0.3)[0]).toBeCloseTo(0.3, 15);
    expect(largestRectangleInRectangle(0.5, 0.3, 1, Math.PI / 4)[0]).toBeCloseTo(0.3 / Math.SQRT2, 15);
    // A 2:1 rectangle in a 0.5 × 0.3 one: width bound 0.5 → h 0.25 but height bound 0.3: h = 0.25.
    expect(largestRectangleInRectangle(0.5, 0.3, 2)[1]).toBeCloseTo(0.25, 15);
  });
});

/** A grid whose margin field is `margin(x, y)` over [−L, L]², labelled; returns the grid and its region. */
function gridOf(margin: (x: number, y: number) => number, half: number, cells: number): { grid: MarginGrid; region: number } {
  const grid = new MarginGrid(cells + 4);
  grid.layout(-half, half, -half, half, cells);
  for (let j = 0; j < grid.ny; j++) for (let i = 0; i < grid.nx; i++) grid.values[j * grid.nx + i] = margin(grid.x0 + i * grid.h, grid.y0 + j * grid.h);
  grid.labelRegions();
  return { grid, region: grid.largestRegion() };
}

describe('regular workspace search on a sampled region', () => {
  const finder = new RegularWorkspaceFinder();
  const r = 0.3;
  const circle = gridOf((x, y) => r - Math.hypot(x, y), 0.35, 200);
  const h = circle.grid.h;
  it('finds the square of side r√2 in a sampled circle, within two grid spacings, at any angle', () => {
    for (const angle of [0, 0.3, Math.PI / 4]) {
      const found = finder.find(circle.grid, circle.region, 1, angle)!;
      expect(Math.abs(found.width - r * Math.SQRT2)).toBeLessThan(2 * h);
      expect(found.width).toBeCloseTo(found.height, 12);
      expect(Math.hypot(found.centreX, found.centreY)).toBeLessThan(2 * h);
    }
  });
  it('a 2:1 rectangle in the circle has diagonal 2r', () => {
    const found = finder.find(circle.grid, circle.region, 2, 0)!;
    const [w] = largestRectangleInCircle(r, 2);
    expect(Math.abs(found.width - w)).toBeLessThan(3 * h);
    expect(found.width / found.height).toBeCloseTo(2, 12);
  });
  it('in a sampled 0.5 × 0.3 rectangle: side 0.3 aligned, 0.3/√2 at 45°', () => {
    const rect = gridOf((x, y) => Math.min(0.25 - Math.abs(x), 0.15 - Math.abs(y)), 0.3, 240);
    const g = rect.grid.h;
    expect(Math.abs(finder.find(rect.grid, rect.region, 1, 0)!.width - 0.3)).toBeLessThan(2 * g);
    expect(Math.abs(finder.find(rect.grid, rect.region, 1, Math.PI / 4)!.width - 0.3 / Math.SQRT2)).toBeLessThan(2 * g);
  });
  it('negative control: a keep-out hole in the middle of the circle shrinks the square', () => {
    const holed = gridOf((x, y) => Math.min(r - Math.hypot(x, y), Math.max(Math.abs(x), Math.abs(y)) - 0.05), 0.35, 200);
    const found = finder.find(holed.grid, holed.region, 1, 0)!;
    expect(found.width).toBeLessThan(r * Math.SQRT2 - 0.1);
  });
});
