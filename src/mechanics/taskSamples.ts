/**
 * Sample points of a study's task region, and the lattice of its area integrals: a parameter square
 * (u, v) ∈ [0, 1]² mapped onto the region. Rectangle: x = x_0 + u W, y = y_0 + v H (Jacobian W H);
 * its lattice nodes are the samples. Circle (polar): x = c_x + v R cos 2πu, y = c_y + v R sin 2πu
 * (Jacobian 2π R² v); its samples are rings (6k points on ring k, with area weights) and the lattice
 * nodes (6 × rings angles, rings + 1 radii) are solved on their own.
 */
import type { TaskRegion } from '../study/types.js';

export interface TaskLattice {
  readonly region: TaskRegion;
  /** Nodes along u and v (intervals + 1). */
  readonly nu: number;
  readonly nv: number;
  /** Per lattice node (row-major, index = j nu + i): the sample it is, or −1 (circle: solved on its own). */
  readonly sampleOf: Int32Array;
  /** Samples: position (m) and area weight (summing to 1). */
  readonly x: Float64Array;
  readonly y: Float64Array;
  readonly weight: Float64Array;
  /** Region area, m². */
  readonly area: number;
  /** Sample spacing, m (for local searches). */
  readonly spacing: number;
}

/** Point of the region at parameters (u, v), written into out[0..1]; returns the Jacobian (m²). */
export function taskPoint(region: TaskRegion, u: number, v: number, out: Float64Array): number {
  if (region.shape === 'rectangle') {
    out[0] = region.centreX + (u - 0.5) * region.width;
    out[1] = region.centreY + (v - 0.5) * region.height;
    return region.width * region.height;
  }
  const angle = 2 * Math.PI * u;
  out[0] = region.centreX + v * region.radius * Math.cos(angle);
  out[1] = region.centreY + v * region.radius * Math.sin(angle);
  return 2 * Math.PI * region.radius * region.radius * v;
}

/** Moves (x, y) onto the region (clamp, or radial projection onto the disc), into out[0..1]. */
export function projectOntoTask(region: TaskRegion, x: number, y: number, out: Float64Array): void {
  if (region.shape === 'rectangle') {
    out[0] = Math.min(Math.max(x, region.centreX - region.width / 2), region.centreX + region.width / 2);
    out[1] = Math.min(Math.max(y, region.centreY - region.height / 2), region.centreY + region.height / 2);
    return;
  }
  const dx = x - region.centreX;
  const dy = y - region.centreY;
  const r = Math.hypot(dx, dy);
  const s = r > region.radius ? region.radius / r : 1;
  out[0] = region.centreX + dx * s;
  out[1] = region.centreY + dy * s;
}

/** The lattice of a task region with `intervals` across its longer side (rectangle) or 2 intervals per ring (circle). */
export function taskLattice(region: TaskRegion, intervals: number): TaskLattice {
  let nuIntervals: number;
  let nvIntervals: number;
  let spacing: number;
  if (region.shape === 'rectangle') {
    const long = Math.max(region.width, region.height);
    nuIntervals = Math.max(2, Math.round((intervals * region.width) / long));
    nvIntervals = Math.max(2, Math.round((intervals * region.height) / long));
    spacing = Math.max(region.width / nuIntervals, region.height / nvIntervals);
  } else {
    nvIntervals = Math.max(2, Math.round(intervals / 2));
    nuIntervals = 6 * nvIntervals;
    spacing = region.radius / nvIntervals;
  }
  const nu = nuIntervals + 1;
  const nv = nvIntervals + 1;
  const area = region.shape === 'rectangle' ? region.width * region.height : Math.PI * region.radius * region.radius;
  const sampleOf = new Int32Array(nu * nv);
  if (region.shape === 'rectangle') {
    for (let k = 0; k < nu * nv; k++) sampleOf[k] = k;
  } else {
    sampleOf.fill(-1);
  }
  const samples = region.shape === 'rectangle' ? rectangleSamples(region, nuIntervals, nvIntervals) : circleSamples(region, intervals);
  return { region, nu, nv, sampleOf, ...samples, area, spacing };
}

type Samples = { x: Float64Array; y: Float64Array; weight: Float64Array };

/** Lattice nodes with trapezoid weights (summing to 1), row by row. */
function rectangleSamples(region: TaskRegion & { shape: 'rectangle' }, nxIntervals: number, nyIntervals: number): Samples {
  const xs: number[] = [];
  const ys: number[] = [];
  const ws: number[] = [];
  for (let j = 0; j <= nyIntervals; j++) {
    for (let i = 0; i <= nxIntervals; i++) {
      xs.push(region.centreX - region.width / 2 + (region.width * i) / nxIntervals);
      ys.push(region.centreY - region.height / 2 + (region.height * j) / nyIntervals);
      ws.push((i === 0 || i === nxIntervals ? 0.5 : 1) * (j === 0 || j === nyIntervals ? 0.5 : 1));
    }
  }
  const total = ws.reduce((a, b) => a + b, 0);
  return { x: Float64Array.from(xs), y: Float64Array.from(ys), weight: Float64Array.from(ws, (w) => w / total) };
}

/** The centre and rings of 6k points (k = 1 … rings), with the area weight of each point's ring segment. */
function circleSamples(region: TaskRegion & { shape: 'circle' }, intervals: number): Samples {
  const xs: number[] = [];
  const ys: number[] = [];
  const ws: number[] = [];
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
  const total = ws.reduce((a, b) => a + b, 0);
  return { x: Float64Array.from(xs), y: Float64Array.from(ys), weight: Float64Array.from(ws, (w) => w / total) };
}

/** Task-region sample points with area weights (summing to 1): the distinct nodes of `taskLattice`. */
export function taskSamples(region: TaskRegion, intervals: number): { x: Float64Array; y: Float64Array; weight: Float64Array } {
  const lattice = taskLattice(region, intervals);
  return { x: lattice.x, y: lattice.y, weight: lattice.weight };
}
