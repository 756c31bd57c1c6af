/** Sample points of a study's task region, with area weights. */
import type { TaskRegion } from '../study/types.js';

/** Task-region sample points with area weights (summing to 1). Edges and corners are included. */
export function taskSamples(region: TaskRegion, intervals: number): { x: Float64Array; y: Float64Array; weight: Float64Array } {
  const xs: number[] = [];
  const ys: number[] = [];
  const ws: number[] = [];
  if (region.shape === 'rectangle') {
    const long = Math.max(region.width, region.height);
    const nxIntervals = Math.max(2, Math.round((intervals * region.width) / long));
    const nyIntervals = Math.max(2, Math.round((intervals * region.height) / long));
    for (let j = 0; j <= nyIntervals; j++) {
      for (let i = 0; i <= nxIntervals; i++) {
        xs.push(region.centreX - region.width / 2 + (region.width * i) / nxIntervals);
        ys.push(region.centreY - region.height / 2 + (region.height * j) / nyIntervals);
        // Trapezoid rule weights.
        ws.push((i === 0 || i === nxIntervals ? 0.5 : 1) * (j === 0 || j === nyIntervals ? 0.5 : 1));
      }
    }
  } else {
    const rings = Math.max(2, Math.round(intervals / 2));
    const dr = region.radius / rings;
    xs.push(region.centreX);
    ys.push(region.centreY);
    ws.push(Math.PI * (dr / 2) ** 2);
    for (let k = 1; k <= rings; k++) {
      const r = k * dr;
      const count = 6 * k;
      const dphi = (2 * Math.PI) / count;
      const radialWidth = k === rings ? dr / 2 : dr;
      const ringRadius = k === rings ? r - dr / 4 : r;
      for (let m = 0; m < count; m++) {
        xs.push(region.centreX + r * Math.cos(m * dphi));
        ys.push(region.centreY + r * Math.sin(m * dphi));
        ws.push(ringRadius * radialWidth * dphi);
      }
    }
  }
  const total = ws.reduce((a, b) => a + b, 0);
  return { x: Float64Array.from(xs), y: Float64Array.from(ys), weight: Float64Array.from(ws, (w) => w / total) };
}

