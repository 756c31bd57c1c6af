/**
 * Task shapes of the cell section: outlines (for maps and checks) of rectangles (turned or not),
 * circles and polygons. Their sample points live with the evaluator (src/mechanics/cellMetrics.ts).
 */
import { rectanglePolygon } from './geometry.js';
import type { CellShape } from './types.js';

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
