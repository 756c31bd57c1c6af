/**
 * Monte Carlo check of the first-order accuracy (docs/accuracy.md): N perturbed arms, each closed
 * exactly by Newton's method on the leg circles (leggedForwardKinematics), at one task pose.
 *
 * One sample: every crank and rod length gets a normal error with σ = t/3 cut at ±t; every base pivot
 * (rail origin) and platform pin a normal displacement with σ = t/3 per axis cut at radius t; every
 * pin joint of a leg an offset uniform over the disc of its radial clearance (the pin sits anywhere in
 * its bore; leg-side and platform-side offsets move the leg's circle centre or pin alike); every drive
 * a joint offset uniform over ± half its backlash plus ± half an encoder count. The actuated joints
 * keep the nominal inverse-kinematics values: the error is where the built arm puts P when it is
 * commanded with the ideal model's joint values.
 */
import { leggedForwardKinematics, type LeggedModel } from '../architectures/legged.js';
import type { ArchitecturePose, DriveAtJoint, PlanarArchitecture } from '../architectures/types.js';
import { PoseStatus } from '../core/pose.js';
import { SeededRandom } from '../optimizer/random.js';
import { pinsOfLeg } from './firstOrder.js';
import type { ToleranceSpec } from './spec.js';

export interface MonteCarloOptions {
  readonly samples: number;
  readonly seed: number;
}

export interface MonteCarloResult {
  /** Nominal pose (m, m, rad). */
  readonly pose: readonly [number, number, number];
  readonly samples: number;
  /** Samples whose perturbed loop could not be closed (left out of the statistics). */
  readonly failed: number;
  /** δx, δy, δφ per closed sample, m and rad (3 per sample). */
  readonly errors: Float64Array;
  readonly mean: readonly [number, number, number];
  /** Covariance of (δx, δy), m². */
  readonly covariance: readonly [number, number, number];
  /** Coverage factor × the standard deviation along the worst direction, m (compare position_error_rss). */
  readonly positionAtCoverage: number;
  /** Largest |δP| over the samples, m (compare position_error_worst). */
  readonly positionMax: number;
  /** 95th percentile of |δP|, m. */
  readonly positionP95: number;
  /** Coverage factor × σ(δφ) and the largest |δφ|, rad (3-DOF; NaN for 2-DOF). */
  readonly orientationAtCoverage: number;
  readonly orientationMax: number;
}

/** Normal deviate with standard deviation σ, resampled outside ±3σ. */
function truncatedNormal(random: SeededRandom, sigma: number): number {
  if (sigma === 0) return 0;
  for (;;) {
    const u = 1 - random.next();
    const v = random.next();
    const z = Math.sqrt(-2 * Math.log(u)) * Math.cos(2 * Math.PI * v);
    if (Math.abs(z) <= 3) return sigma * z;
  }
}

/** Displacement with σ = t/3 per axis, resampled outside the circle of radius t. */
function positionError(random: SeededRandom, t: number, out: Float64Array): void {
  if (t === 0) { out[0] = 0; out[1] = 0; return; }
  for (;;) {
    const x = truncatedNormal(random, t / 3);
    const y = truncatedNormal(random, t / 3);
    if (x * x + y * y <= t * t) { out[0] = x; out[1] = y; return; }
  }
}

/** Uniform over the disc of radius c. */
function discOffset(random: SeededRandom, c: number, out: Float64Array): void {
  const r = c * Math.sqrt(random.next());
  const a = 2 * Math.PI * random.next();
  out[0] = r * Math.cos(a);
  out[1] = r * Math.sin(a);
}

/** One perturbed copy of the model's geometry (written in place per sample) and its joint values. */
function perturb(model: LeggedModel, view: MutableGeometry, tol: ToleranceSpec, steps: Float64Array, q: Float64Array, qOut: Float64Array, random: SeededRandom): void {
  const d = new Float64Array(2);
  for (let i = 0; i < model.dof; i++) {
    const leg = model.legs[i]!;
    view.crank[i] = model.crank[i]! > 0 ? model.crank[i]! + truncatedNormal(random, tol.linkLength / 3) : 0;
    const strut = leg.name === 'strut';
    view.rod[i] = strut ? model.rod[i]! : model.rod[i]! + truncatedNormal(random, tol.linkLength / 3);
    positionError(random, tol.pivotPosition, d);
    let bx = model.baseX[i]! + d[0]!;
    let by = model.baseY[i]! + d[1]!;
    for (let k = 0; k < pinsOfLeg(leg.name); k++) {
      discOffset(random, tol.jointClearance, d);
      bx += d[0]!;
      by += d[1]!;
    }
    view.baseX[i] = bx;
    view.baseY[i] = by;
    if (model.dof === 3) positionError(random, tol.pivotPosition, d);
    else { d[0] = 0; d[1] = 0; }
    view.platformX[i] = model.platformX[i]! + d[0]!;
    view.platformY[i] = model.platformY[i]! + d[1]!;
    const play = tol.backlash[i]!;
    qOut[i] = q[i]! + (random.next() - 0.5) * play + (random.next() - 0.5) * steps[i]! + (strut ? truncatedNormal(random, tol.linkLength / 3) : 0);
  }
}

interface MutableGeometry {
  crank: number[];
  rod: number[];
  baseX: number[];
  baseY: number[];
  platformX: number[];
  platformY: number[];
}

/**
 * Monte Carlo at one pose of a leg-based design. Throws when the nominal pose is not assembled.
 * `coverage` is the factor k of the statistical figures (the study's tolerances.coverage).
 */
export function monteCarloAtPose(
  architecture: PlanarArchitecture<LeggedModel>,
  model: LeggedModel,
  tol: ToleranceSpec,
  drives: readonly DriveAtJoint[] | null,
  at: readonly [number, number, number],
  options: MonteCarloOptions,
): MonteCarloResult {
  const n = model.dof;
  const pose: ArchitecturePose = architecture.createPose();
  const status = architecture.solvePose(model, pose, at[0], at[1], at[2]);
  if (status !== PoseStatus.Assembled) throw new Error(`Monte Carlo: the pose (${at.join(', ')}) is not assembled in the design's working and assembly mode`);
  const geometry: MutableGeometry = {
    crank: [...model.crank], rod: [...model.rod], baseX: [...model.baseX], baseY: [...model.baseY],
    platformX: [...model.platformX], platformY: [...model.platformY],
  };
  const view: LeggedModel = { ...model, ...geometry };
  const steps = new Float64Array(n);
  for (let i = 0; i < n; i++) steps[i] = tol.encoder && drives ? drives[i]!.encoderStep : 0;
  const random = new SeededRandom(options.seed);
  const q = Float64Array.from(pose.q);
  const qs = new Float64Array(n);
  const x = new Float64Array(3);
  const errors = new Float64Array(3 * options.samples);
  let closed = 0;
  for (let s = 0; s < options.samples; s++) {
    perturb(model, geometry, tol, steps, q, qs, random);
    x[0] = at[0]; x[1] = at[1]; x[2] = n === 3 ? at[2] : 0;
    if (!leggedForwardKinematics(view, qs, x)) continue;
    errors[3 * closed] = x[0]! - at[0];
    errors[3 * closed + 1] = x[1]! - at[1];
    errors[3 * closed + 2] = n === 3 ? x[2]! - at[2] : 0;
    closed++;
  }
  return summarise(errors.slice(0, 3 * closed), options.samples, tol.coverage, at, n);
}

/** Mean, covariance, coverage figure, maxima and the 95th percentile of the closed samples. */
export function summarise(errors: Float64Array, samples: number, k: number, at: readonly [number, number, number], dof: number): MonteCarloResult {
  const m = errors.length / 3;
  const mean = [0, 0, 0];
  for (let s = 0; s < m; s++) for (let c = 0; c < 3; c++) mean[c]! += errors[3 * s + c]! / m;
  let cxx = 0, cxy = 0, cyy = 0, cpp = 0, maxP = 0, maxO = 0;
  const norms = new Float64Array(m);
  for (let s = 0; s < m; s++) {
    const dx = errors[3 * s]! - mean[0]!;
    const dy = errors[3 * s + 1]! - mean[1]!;
    const dp = errors[3 * s + 2]! - mean[2]!;
    cxx += dx * dx; cxy += dx * dy; cyy += dy * dy; cpp += dp * dp;
    norms[s] = Math.hypot(errors[3 * s]!, errors[3 * s + 1]!);
    maxP = Math.max(maxP, norms[s]!);
    maxO = Math.max(maxO, Math.abs(errors[3 * s + 2]!));
  }
  const d = Math.max(m - 1, 1);
  cxx /= d; cxy /= d; cyy /= d; cpp /= d;
  const half = (cxx + cyy) / 2;
  const lambda = half + Math.sqrt(((cxx - cyy) / 2) ** 2 + cxy * cxy);
  norms.sort();
  return {
    pose: at, samples, failed: samples - m, errors,
    mean: [mean[0]!, mean[1]!, mean[2]!],
    covariance: [cxx, cxy, cyy],
    positionAtCoverage: k * Math.sqrt(lambda),
    positionMax: maxP,
    positionP95: m > 0 ? norms[Math.min(m - 1, Math.floor(0.95 * m))]! : Number.NaN,
    orientationAtCoverage: dof === 3 ? k * Math.sqrt(cpp) : Number.NaN,
    orientationMax: dof === 3 ? maxO : Number.NaN,
  };
}
