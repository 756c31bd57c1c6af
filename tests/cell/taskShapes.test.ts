/**
 * Task shapes of the cell section: sample points and area weights of turned rectangles and polygons
 * (src/mechanics/cellMetrics.ts), outlines (src/cell/taskShapes.ts).
 */
import { describe, expect, it } from 'vitest';
import { pointInPolygon, polygonSignedArea, rectanglePolygon, signedPointPolygonDistance } from '../../src/cell/geometry.js';
import { shapeOutline } from '../../src/cell/taskShapes.js';
import { shapeSamples } from '../../src/mechanics/cellMetrics.js';

const sum = (a: Float64Array): number => a.reduce((s, v) => s + v, 0);

describe('task shapes', () => {
  it('a turned rectangle: every sample inside (or on) it, weights summing to 1, centroid at its centre', () => {
    const shape = { shape: 'rectangle' as const, centreX: -0.15, centreY: -0.49, width: 0.16, height: 0.06, angle: (10 * Math.PI) / 180 };
    const s = shapeSamples(shape, 12);
    const outline = rectanglePolygon(shape.centreX, shape.centreY, shape.width, shape.height, shape.angle);
    for (let k = 0; k < s.x.length; k++) expect(signedPointPolygonDistance(s.x[k]!, s.y[k]!, outline)).toBeLessThan(1e-12);
    expect(sum(s.weight)).toBeCloseTo(1, 14);
    // Derived here: trapezoid weights of a symmetric lattice put the weighted centroid at the centre.
    let cx = 0, cy = 0;
    for (let k = 0; k < s.x.length; k++) { cx += s.weight[k]! * s.x[k]!; cy += s.weight[k]! * s.y[k]!; }
    expect(cx).toBeCloseTo(shape.centreX, 12);
    expect(cy).toBeCloseTo(shape.centreY, 12);
  });
  it('a polygon: the weight on a part approximates its share of the area', () => {
    // The L of the geometry tests (area 3 m²): its left column x < 1 holds 2 m², i.e. 2/3 of the area.
    const vertices = [0, 0, 2, 0, 2, 1, 1, 1, 1, 2, 0, 2];
    const s = shapeSamples({ shape: 'polygon', vertices }, 40);
    const poly = Float64Array.from(vertices);
    let left = 0;
    for (let k = 0; k < s.x.length; k++) {
      expect(pointInPolygon(s.x[k]!, s.y[k]!, poly) || Math.abs(signedPointPolygonDistance(s.x[k]!, s.y[k]!, poly)) < 1e-12).toBe(true);
      if (s.x[k]! < 1) left += s.weight[k]!;
    }
    // About 1300 weights of ~1e-3 each: their float sum is 1 to ~1e-13.
    expect(sum(s.weight)).toBeCloseTo(1, 12);
    // Lattice step 2/40 = 0.05: the share is within a few per cent of 2/3.
    expect(Math.abs(left - 2 / 3)).toBeLessThan(0.03);
  });
  it('outlines: a circle as a 72-gon of nearly its area, a polygon as given', () => {
    const circle = shapeOutline({ shape: 'circle', centreX: 0, centreY: 0, radius: 0.1 });
    // Derived here: a regular n-gon inscribed in radius r has area (n/2) r² sin(2π/n).
    expect(polygonSignedArea(circle)).toBeCloseTo(36 * 0.01 * Math.sin((2 * Math.PI) / 72), 14);
    expect(Array.from(shapeOutline({ shape: 'polygon', vertices: [0, 0, 1, 0, 0, 1] }))).toEqual([0, 0, 1, 0, 0, 1]);
  });
});
