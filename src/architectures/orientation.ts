/**
 * Orientation capability of 3-DOF platforms at one point P: the ranges of φ in which the platform
 * can be placed (scan with a step, boundaries refined by bisection or by regula falsi on a margin), and the check of a study
 * requirement φ_0 ± Δφ.
 */
import { PoseStatus, type ArchitectureModelBase, type ArchitecturePose, type PlanarArchitecture } from './types.js';

/** Decides whether a solved pose counts as reachable (default: assembled and not singular). */
export type PoseAcceptance = (pose: ArchitecturePose, status: PoseStatus) => boolean;

/**
 * A signed margin of a solved pose, ≥ 0 exactly where it counts as reachable, continuous in φ wherever
 * every leg reaches (for example the usability margin of src/mechanics/usability.ts).
 */
export type PoseMargin = (pose: ArchitecturePose, status: PoseStatus) => number;

export const ASSEMBLED_AND_REGULAR: PoseAcceptance = (pose, status) => status === PoseStatus.Assembled && pose.inverseCondition > 0;

export interface OrientationScanOptions {
  /** Scan step, rad (default 2°). Ranges narrower than the step may be missed. */
  readonly step?: number;
  /** Bisection stops when a boundary is bracketed this tightly, rad (default 1e-9). */
  readonly tolerance?: number;
  /** Which poses count (default ASSEMBLED_AND_REGULAR; e.g. the pipeline's usable margin ≥ 0). */
  readonly accept?: PoseAcceptance;
  /**
   * Instead of `accept`: poses count where this margin is ≥ 0, and each boundary is placed by a
   * safeguarded regula falsi on the margin (boundaryRoot) instead of bisection: a few solves instead
   * of about twenty, to the same bracket `tolerance`.
   */
  readonly margin?: PoseMargin;
}

/** The scan lattice and settings of an orientation scan: tolerance, acceptance, samples per turn and their spacing h (rad). */
function scanSettings(options: OrientationScanOptions): { tolerance: number; value: PoseMargin; continuous: boolean; samples: number; h: number } {
  const step = options.step ?? (2 * Math.PI) / 180;
  const samples = Math.max(3, Math.ceil((2 * Math.PI) / step));
  const accept = options.accept ?? ASSEMBLED_AND_REGULAR;
  // Without a margin, the acceptance as ±1: only its sign is used (plain bisection).
  const value: PoseMargin = options.margin ?? ((pose, status) => (accept(pose, status) ? 1 : -1));
  return { tolerance: options.tolerance ?? 1e-9, value, continuous: !!options.margin, samples, h: (2 * Math.PI) / samples };
}



/**
 * One point's scan of φ: solves the pose at an angle and gives the scan value there (the margin, or
 * ±1 from the acceptance), and places a boundary between an outside and an inside angle.
 */
class PhiScan<M extends ArchitectureModelBase> {
  readonly tolerance: number;
  readonly samples: number;
  readonly h: number;
  private readonly value: PoseMargin;
  private readonly continuous: boolean;
  /** Whether the margin is continuous at the angle last solved (a margin is given and every leg reached). */
  reached = false;

  constructor(
    private readonly architecture: PlanarArchitecture<M>,
    private readonly model: M,
    private readonly pose: ArchitecturePose,
    private readonly x: number,
    private readonly y: number,
    options: OrientationScanOptions,
  ) {
    const settings = scanSettings(options);
    this.tolerance = settings.tolerance;
    this.samples = settings.samples;
    this.h = settings.h;
    this.value = settings.value;
    this.continuous = settings.continuous;
  }

  /** The scan value at φ (≥ 0: counts); sets `reached`. */
  at(phi: number): number {
    const status = this.architecture.solvePose(this.model, this.pose, this.x, this.y, phi);
    this.reached = this.continuous && status !== PoseStatus.Unreachable;
    return this.value(this.pose, status);
  }

  /** The value at lattice index k (any integer: angle −π + (k mod samples)·h, as the full scan solves it). */
  lattice(k: number): number {
    const m = ((k % this.samples) + this.samples) % this.samples;
    return this.at(m === 0 ? -Math.PI : -Math.PI + m * ((2 * Math.PI) / this.samples));
  }

  /**
   * The inside end of a bracket [outside, inside] of the boundary, narrowed to `tolerance`, from the
   * values at both ends (fOut < 0 ≤ fIn; cOut, cIn: whether each is continuous). Without a margin:
   * bisection. With one: regula falsi with the Illinois modification (Dowell & Jarratt 1971, BIT
   * 11(2), from memory) where both ends are continuous, each trial point kept at least tolerance/2
   * inside the bracket so that the bracket closes, and a bisection step whenever two steps in a row
   * did not halve it (or an end is not continuous).
   */
  boundary(outside: number, fOut: number, cOut: boolean, inside: number, fIn: number, cIn: boolean): number {
    const tolerance = this.tolerance;
    let a = outside;
    let b = inside;
    let fa = fOut;
    let fb = fIn;
    let ca = cOut;
    let cb = cIn;
    let lastMoved = 0;
    let reference = Math.abs(b - a);
    let slow = 0;
    while (Math.abs(b - a) > tolerance) {
      const d = b - a;
      let t = 0.5;
      if (ca && cb && slow < 2) {
        t = fa / (fa - fb);
        const keep = (0.5 * tolerance) / Math.abs(d);
        if (!(t >= keep)) t = t === t ? keep : 0.5;
        if (t > 1 - keep) t = 1 - keep;
      }
      if (slow >= 2) slow = 0;
      // (Bisection as 0.5 (a + b): the same numbers as before margins were used.)
      const mid = t === 0.5 ? 0.5 * (a + b) : a + t * d;
      const f = this.at(mid);
      if (f >= 0) {
        b = mid;
        fb = f;
        cb = this.reached;
        // Illinois: the value of the end kept twice in a row is halved.
        if (lastMoved === 1) fa *= 0.5;
        lastMoved = 1;
      } else {
        a = mid;
        fa = f;
        ca = this.reached;
        if (lastMoved === -1) fb *= 0.5;
        lastMoved = -1;
      }
      const width = Math.abs(b - a);
      if (width <= 0.5 * reference) {
        reference = width;
        slow = 0;
      } else slow++;
    }
    return b;
  }
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
  const scan = new PhiScan(architecture, model, pose, x, y, options);
  const { samples, h } = scan;
  const capacity = Math.floor(out.length / 2);
  let count = 0;
  const firstValue = scan.at(-Math.PI);
  const firstReached = scan.reached;
  const firstIn = firstValue >= 0;
  let previousValue = firstValue;
  let previousReached = firstReached;
  let start = firstIn ? -Math.PI : Number.NaN;
  for (let k = 1; k <= samples; k++) {
    const phi = -Math.PI + k * h;
    const value = k === samples ? firstValue : scan.at(phi);
    const reached = k === samples ? firstReached : scan.reached;
    const inside = value >= 0;
    const previousIn = previousValue >= 0;
    if (inside && !previousIn) {
      start = scan.boundary(phi - h, previousValue, previousReached, phi, value, reached);
    } else if (!inside && previousIn) {
      const end = scan.boundary(phi, value, reached, phi - h, previousValue, previousReached);
      if (count < capacity) {
        out[2 * count] = start;
        out[2 * count + 1] = end;
      }
      count++;
    }
    previousValue = value;
    previousReached = reached;
  }
  if (previousValue >= 0) {
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
 * lattice −π + k·h, the same boundary searches from the same values, the same ±π join), found by
 * walking the lattice both ways from the two lattice angles around φ_0 instead of scanning the whole
 * turn: written as (lo, hi) into out[0], out[1] (−π, π for a full turn). Returns false, out
 * untouched, when either lattice angle around φ_0 is not reachable or φ_0 does not lie in the range
 * found: the caller then scans the whole turn. (The full scan keeps at most out.length / 2 ranges;
 * with more ranges than that at one point the two could differ.) Derived here.
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
  const scan = new PhiScan(architecture, model, pose, x, y, options);
  const { samples, h } = scan;
  const wrapped = phi0 - 2 * Math.PI * Math.floor((phi0 + Math.PI) / (2 * Math.PI));
  let k0 = Math.floor((wrapped + Math.PI) / h);
  if (-Math.PI + k0 * h > wrapped) k0--;
  // The walk keeps, at each end, the value at the last index inside and at the first outside.
  const f0 = scan.lattice(k0);
  const c0 = scan.reached;
  if (!(f0 >= 0)) return false;
  let inUp = scan.lattice(k0 + 1);
  let cInUp = scan.reached;
  if (!(inUp >= 0)) return false;
  let up = k0 + 2;
  let outUp = Number.NaN;
  let cOutUp = false;
  for (; up < k0 + samples; up++) {
    const f = scan.lattice(up);
    if (!(f >= 0)) {
      outUp = f;
      cOutUp = scan.reached;
      break;
    }
    inUp = f;
    cInUp = scan.reached;
  }
  if (up >= k0 + samples) {
    out[0] = -Math.PI;
    out[1] = Math.PI;
    return true;
  }
  let down = k0 - 1;
  let inDown = f0;
  let cInDown = c0;
  let outDown = scan.lattice(down);
  let cOutDown = scan.reached;
  while (outDown >= 0) {
    inDown = outDown;
    cInDown = cOutDown;
    down--;
    outDown = scan.lattice(down);
    cOutDown = scan.reached;
  }
  // The scan meets the start at index kS ∈ [1, samples] and the end at kE ∈ [1, samples].
  const kS = (((down % samples) + samples) % samples) + 1;
  const kE = ((((up - 1) % samples) + samples) % samples) + 1;
  const phiS = -Math.PI + kS * h;
  const phiE = -Math.PI + kE * h;
  const lo = scan.boundary(phiS - h, outDown, cOutDown, phiS, inDown, cInDown);
  let hi = scan.boundary(phiE, outUp, cOutUp, phiE - h, inUp, cInUp);
  // A range through index 0 is the scan's first range joined with its last one across ±π.
  if (Math.floor((up - 1) / samples) !== Math.floor(down / samples)) hi += 2 * Math.PI;
  const shifted = phi0 + 2 * Math.PI * Math.round((0.5 * (lo + hi) - phi0) / (2 * Math.PI));
  if (!(shifted >= lo && shifted <= hi)) return false;
  out[0] = lo;
  out[1] = hi;
  return true;
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
