/**
 * Orientation capability of 3-DOF platforms at one point P: the ranges of φ in which the platform
 * can be placed (scan with a step, boundaries refined by bisection), and the check of a study
 * requirement φ_0 ± Δφ.
 */
import { PoseStatus, type ArchitectureModelBase, type ArchitecturePose, type PlanarArchitecture } from './types.js';

/** Decides whether a solved pose counts as reachable (default: assembled and not singular). */
export type PoseAcceptance = (pose: ArchitecturePose, status: PoseStatus) => boolean;

export const ASSEMBLED_AND_REGULAR: PoseAcceptance = (pose, status) => status === PoseStatus.Assembled && pose.inverseCondition > 0;

export interface OrientationScanOptions {
  /** Scan step, rad (default 2°). Ranges narrower than the step may be missed. */
  readonly step?: number;
  /** Bisection stops when a boundary is bracketed this tightly, rad (default 1e-9). */
  readonly tolerance?: number;
  /** Which poses count (default ASSEMBLED_AND_REGULAR; e.g. the pipeline's usable margin ≥ 0). */
  readonly accept?: PoseAcceptance;
}

/** The scan lattice and settings of an orientation scan: tolerance, acceptance, samples per turn and their spacing h (rad). */
function scanSettings(options: OrientationScanOptions): { tolerance: number; accept: NonNullable<OrientationScanOptions['accept']>; samples: number; h: number } {
  const step = options.step ?? (2 * Math.PI) / 180;
  const samples = Math.max(3, Math.ceil((2 * Math.PI) / step));
  return { tolerance: options.tolerance ?? 1e-9, accept: options.accept ?? ASSEMBLED_AND_REGULAR, samples, h: (2 * Math.PI) / samples };
}

/**
 * Ranges of φ (rad) reachable at (x, y), over one turn [−π, π). Written as pairs (lo, hi) into
 * `out`; returns the number of ranges (at most out.length / 2; extra ones are dropped). A range that
 * crosses ±π is reported once, with lo < π ≤ hi (hi may exceed π); a full turn is (−π, π) with
 * the return value 1 and `hi − lo = 2π`.
 */
export function orientationRanges<M extends ArchitectureModelBase>(
  architecture: PlanarArchitecture<M>,
  model: M,
  pose: ArchitecturePose,
  x: number,
  y: number,
  out: Float64Array,
  options: OrientationScanOptions = {},
): number {
  const { tolerance, accept, samples, h } = scanSettings(options);
  const test = (phi: number): boolean => accept(pose, architecture.solvePose(model, pose, x, y, phi));
  const capacity = Math.floor(out.length / 2);
  let count = 0;
  const firstIn = test(-Math.PI);
  let previousIn = firstIn;
  let start = firstIn ? -Math.PI : Number.NaN;
  const refine = (outside: number, inside: number): number => bisectBoundary(architecture, model, pose, x, y, accept, tolerance, outside, inside);
  for (let k = 1; k <= samples; k++) {
    const phi = -Math.PI + k * h;
    const inside = k === samples ? firstIn : test(phi);
    if (inside && !previousIn) {
      start = refine(phi - h, phi);
    } else if (!inside && previousIn) {
      const end = refine(phi, phi - h);
      if (count < capacity) {
        out[2 * count] = start;
        out[2 * count + 1] = end;
      }
      count++;
    }
    previousIn = inside;
  }
  if (previousIn) {
    // The scan ends inside a range that began at −π (firstIn) or later.
    if (firstIn && count > 0 && out[0] === -Math.PI) {
      // Join the last open range with the first one across ±π.
      out[0] = start;
      out[1] = out[1]! + 2 * Math.PI;
    } else if (firstIn && count === 0) {
      out[0] = -Math.PI;
      out[1] = Math.PI;
      count = 1;
    } else if (count < capacity) {
      out[2 * count] = start;
      out[2 * count + 1] = Math.PI;
      count++;
    }
  }
  return Math.min(count, capacity);
}

/**
 * The range of φ that holds φ_0 at (x, y), exactly as `orientationRanges` reports it (same scan
 * lattice −π + k·h, same bisections, the same ±π join), found by walking the lattice both ways from
 * the two lattice angles around φ_0 instead of scanning the whole turn: written as (lo, hi) into
 * out[0], out[1] (−π, π for a full turn). Returns false, out untouched, when either lattice angle
 * around φ_0 is not reachable or φ_0 does not lie in the range found: the caller then scans the
 * whole turn. (The full scan keeps at most out.length / 2 ranges; with more ranges than that at one
 * point the two could differ.) Derived here.
 */
export function orientationRangeAt<M extends ArchitectureModelBase>(
  architecture: PlanarArchitecture<M>,
  model: M,
  pose: ArchitecturePose,
  x: number,
  y: number,
  phi0: number,
  out: Float64Array,
  options: OrientationScanOptions = {},
): boolean {
  const { tolerance, accept, samples, h } = scanSettings(options);
  const wrapped = phi0 - 2 * Math.PI * Math.floor((phi0 + Math.PI) / (2 * Math.PI));
  let k0 = Math.floor((wrapped + Math.PI) / h);
  if (-Math.PI + k0 * h > wrapped) k0--;
  if (!latticeInside(architecture, model, pose, x, y, accept, samples, k0) || !latticeInside(architecture, model, pose, x, y, accept, samples, k0 + 1)) return false;
  let up = k0 + 2;
  while (up < k0 + samples && latticeInside(architecture, model, pose, x, y, accept, samples, up)) up++;
  if (up >= k0 + samples) {
    out[0] = -Math.PI;
    out[1] = Math.PI;
    return true;
  }
  let down = k0 - 1;
  while (latticeInside(architecture, model, pose, x, y, accept, samples, down)) down--;
  // The scan meets the start at index kS ∈ [1, samples] and the end at kE ∈ [1, samples].
  const kS = (((down % samples) + samples) % samples) + 1;
  const kE = ((((up - 1) % samples) + samples) % samples) + 1;
  const phiS = -Math.PI + kS * h;
  const phiE = -Math.PI + kE * h;
  const lo = bisectBoundary(architecture, model, pose, x, y, accept, tolerance, phiS - h, phiS);
  let hi = bisectBoundary(architecture, model, pose, x, y, accept, tolerance, phiE, phiE - h);
  // A range through index 0 is the scan's first range joined with its last one across ±π.
  if (Math.floor((up - 1) / samples) !== Math.floor(down / samples)) hi += 2 * Math.PI;
  const shifted = phi0 + 2 * Math.PI * Math.round((0.5 * (lo + hi) - phi0) / (2 * Math.PI));
  if (!(shifted >= lo && shifted <= hi)) return false;
  out[0] = lo;
  out[1] = hi;
  return true;
}

/** Whether lattice index k (any integer: angle −π + (k mod samples)·h, as the scan tests it) is accepted. */
function latticeInside<M extends ArchitectureModelBase>(
  architecture: PlanarArchitecture<M>,
  model: M,
  pose: ArchitecturePose,
  x: number,
  y: number,
  accept: PoseAcceptance,
  samples: number,
  k: number,
): boolean {
  const m = ((k % samples) + samples) % samples;
  return accept(pose, architecture.solvePose(model, pose, x, y, m === 0 ? -Math.PI : -Math.PI + m * ((2 * Math.PI) / samples)));
}

/** The bisection of `orientationRanges` between an outside and an inside angle: the inside end when bracketed to `tolerance`. */
function bisectBoundary<M extends ArchitectureModelBase>(
  architecture: PlanarArchitecture<M>,
  model: M,
  pose: ArchitecturePose,
  x: number,
  y: number,
  accept: PoseAcceptance,
  tolerance: number,
  outside: number,
  inside: number,
): number {
  let a = outside;
  let b = inside;
  while (Math.abs(b - a) > tolerance) {
    const mid = 0.5 * (a + b);
    if (accept(pose, architecture.solvePose(model, pose, x, y, mid))) b = mid;
    else a = mid;
  }
  return b;
}

/**
 * Signed margin (rad) of the requirement "every φ in [φ_0 − Δφ, φ_0 + Δφ] is reachable without
 * leaving one range": the largest over ranges of min(φ_0 − Δφ − lo, hi − φ_0 − Δφ), with φ_0 shifted by
 * whole turns into each range. ≥ 0 when the requirement holds; −Infinity when no range is given.
 */
export function orientationRequirementMargin(ranges: Float64Array, count: number, phi0: number, deltaPhi: number): number {
  let best = -Infinity;
  for (let k = 0; k < count; k++) {
    const lo = ranges[2 * k]!;
    const hi = ranges[2 * k + 1]!;
    if (hi - lo >= 2 * Math.PI - 1e-12) return Infinity; // full turn
    const centre = 0.5 * (lo + hi);
    const shifted = phi0 + 2 * Math.PI * Math.round((centre - phi0) / (2 * Math.PI));
    const margin = Math.min(shifted - deltaPhi - lo, hi - shifted - deltaPhi);
    if (margin > best) best = margin;
  }
  return best;
}
