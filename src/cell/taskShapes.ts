/**
 * Task shapes of the cell section: sample points with area weights (for coverage and clearance) and
 * outlines (for maps) of rectangles (turned or not), circles and polygons.
 */
import { taskSamples } from '../mechanics/taskSamples.js';
import { pointInPolygon, rectanglePolygon } from './geometry.js';
import type { CellShape } from './types.js';

export interface ShapeSamples {
  readonly x: Float64Array;
  readonly y: Float64Array;
  /** Area weights, summing to 1. */
  readonly weight: Float64Array;
}

/** The shape's outline as a closed list of vertices (x, y interleaved; a circle as a 72-gon), m. */
export function shapeOutline(shape: CellShape): Float64Array {
  if (shape.shape === 'polygon') return Float64Array.from(shape.vertices);
  if (shape.shape === 'rectangle') return rectanglePolygon(shape.centreX, shape.centreY, shape.width, shape.height, shape.angle);
  const out = new Float64Array(144);
  for (let k = 0; k < 72; k++) {
    out[2 * k] = shape.centreX + shape.radius * Math.cos((k * Math.PI) / 36);
    out[2 * k + 1] = shape.centreY + shape.radius * Math.sin((k * Math.PI) / 36);
  }
  return out;
}

/**
 * Sample points of a shape with `intervals` steps across its longer side. Rectangles (turned by their
 * angle) and circles as the task region (trapezoid and ring weights); a polygon: the lattice points
 * inside it (weight 1 each) plus its corners and edge midpoints (weight ½), so that its edges are checked.
 */
export function shapeSamples(shape: CellShape, intervals: number): ShapeSamples {
  if (shape.shape === 'circle') return taskSamples({ shape: 'circle', centreX: shape.centreX, centreY: shape.centreY, radius: shape.radius }, intervals);
  if (shape.shape === 'rectangle') {
    const local = taskSamples({ shape: 'rectangle', centreX: 0, centreY: 0, width: shape.width, height: shape.height }, intervals);
    const c = Math.cos(shape.angle);
    const s = Math.sin(shape.angle);
    const x = local.x.map((u, k) => shape.centreX + c * u - s * local.y[k]!);
    const y = local.y.map((v, k) => shape.centreY + s * local.x[k]! + c * v);
    return { x, y, weight: local.weight };
  }
  const poly = Float64Array.from(shape.vertices);
  let xmin = Infinity, xmax = -Infinity, ymin = Infinity, ymax = -Infinity;
  for (let k = 0; k < poly.length; k += 2) {
    xmin = Math.min(xmin, poly[k]!); xmax = Math.max(xmax, poly[k]!);
    ymin = Math.min(ymin, poly[k + 1]!); ymax = Math.max(ymax, poly[k + 1]!);
  }
  const step = Math.max(xmax - xmin, ymax - ymin) / Math.max(intervals, 2);
  const xs: number[] = [];
  const ys: number[] = [];
  const ws: number[] = [];
  for (let y = ymin + step / 2; y < ymax; y += step) {
    for (let x = xmin + step / 2; x < xmax; x += step) {
      if (pointInPolygon(x, y, poly)) { xs.push(x); ys.push(y); ws.push(1); }
    }
  }
  const n = poly.length >> 1;
  for (let k = 0; k < n; k++) {
    const j = (k + 1) % n;
    xs.push(poly[2 * k]!, 0.5 * (poly[2 * k]! + poly[2 * j]!));
    ys.push(poly[2 * k + 1]!, 0.5 * (poly[2 * k + 1]! + poly[2 * j + 1]!));
    ws.push(0.5, 0.5);
  }
  const total = ws.reduce((a, b) => a + b, 0);
  return { x: Float64Array.from(xs), y: Float64Array.from(ys), weight: Float64Array.from(ws, (w) => w / total) };
}
