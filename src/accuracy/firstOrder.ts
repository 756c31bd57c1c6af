/**
 * First-order accuracy of the end point under the study tolerances (docs/accuracy.md), for every
 * leg-based architecture through the leg layer (LegKind.circle and the pose's A, B, u_i).
 *
 * Loop equations. Every leg keeps its distal joint B_i on a circle (centre c_i, radius r_i) fixed by
 * its joint position q_i and its geometry (LegKind.circle). With u_i the unit rod direction, the
 * implicit function theorem on |B_i − c_i| = r_i gives, at fixed q,
 *   u_i · δB_i = δr_i + u_i · δc_i,   δB_i = δP + δφ E R(φ) b_i (+ the pin's own displacement),
 * so A δx = ε with one scalar "leg error" ε_i per leg, and δx = A⁻¹ ε. Each source of leg i enters ε_i
 * with a coefficient:
 * - link lengths (crank p_i, rod d_i): ∂r/∂g + u·∂c/∂g, taken by a difference of LegKind.circle
 *   (exact: the circle is linear in each length); a strut's length error acts as its joint offset (1);
 * - base pivot (or rail origin) and platform pin positions, displacement δ in any direction: u·δ;
 * - radial clearance c of every pin joint of the leg: u·δr with |δr| ≤ c;
 * - backlash and encoder quantisation δq_i: B_ii (so δx = J δq, as the velocity relation says).
 * Worst case: ε_i within ±W_i with W_i = Σ |coefficient| × limit, independent per leg, so the error
 * set is the zonotope Σ_i [−1, 1] W_i col_i(A⁻¹); its largest translational norm is found over the
 * 2^n vertex sign patterns (exact). Statistics: dimensional tolerances are 3σ limits of a normal
 * (σ = t/3; a position zone of radius t has σ = t/3 per axis), clearances uniform over the disc of
 * radius c (c²/4 per axis, mechanics.md §9), backlash and encoder counts uniform over ± half their
 * play (σ² = b²/12). Cov(δx) = A⁻¹ diag(V) A⁻ᵀ; the RSS figure is k σ along the worst direction.
 */
import { invert } from '../architectures/dense.js';
import type { LeggedModel } from '../architectures/legged.js';
import type { ArchitecturePose, DriveAtJoint } from '../architectures/types.js';
import type { ToleranceSpec } from './spec.js';

/** Pin joints of a leg in its load path (each has a radial clearance and a bearing). */
export function pinsOfLeg(name: string): number {
  return name === 'crank-rod' ? 3 : 2;
}

/** Result of one pose, SI (m, rad). */
export interface PoseAccuracy {
  positionWorst: number;
  positionRss: number;
  /** Minor semi-axis of the error ellipse at the coverage factor, m. */
  positionRssMinor: number;
  /** Angle of the major axis from the x axis, rad. */
  ellipseAngle: number;
  orientationWorst: number;
  orientationRss: number;
}

/** Per-design first-order accuracy: prepare once per design, then `atPose` per solved pose (no allocation). */
export class FirstOrderAccuracy {
  private readonly n: number;
  private readonly ainv: Float64Array;
  private readonly worst: Float64Array;
  private readonly variance: Float64Array;
  private readonly c0 = new Float64Array(3);
  private readonly c1 = new Float64Array(3);
  private crankView: LeggedModel | null = null;
  private rodView: LeggedModel | null = null;
  private steps = new Float64Array(3);
  private tol: ToleranceSpec | null = null;
  readonly result: PoseAccuracy = { positionWorst: 0, positionRss: 0, positionRssMinor: 0, ellipseAngle: 0, orientationWorst: 0, orientationRss: 0 };

  constructor(dof: number) {
    this.n = dof;
    this.ainv = new Float64Array(dof * dof);
    this.worst = new Float64Array(dof);
    this.variance = new Float64Array(dof);
  }

  /** Length step of the circle differences, m (the circle is linear in each length: any small step is exact up to rounding). */
  static readonly STEP = 1e-6;

  prepare(model: LeggedModel, tolerances: ToleranceSpec, drives: readonly DriveAtJoint[] | null): void {
    const h = FirstOrderAccuracy.STEP;
    this.tol = tolerances;
    this.crankView = { ...model, crank: model.crank.map((p) => p + h) };
    this.rodView = { ...model, rod: model.rod.map((d) => d + h) };
    for (let i = 0; i < this.n; i++) this.steps[i] = tolerances.encoder && drives ? drives[i]!.encoderStep : 0;
  }

  /** A⁻¹ at the pose last passed to `atPose` or `inverseOnly` (row-major n×n). */
  get inverse(): Float64Array {
    return this.ainv;
  }

  /** Only A⁻¹ at the pose (for the load checks when the study gives no tolerances); false where A is singular. */
  inverseOnly(pose: ArchitecturePose): boolean {
    return invert(this.n, pose.A, this.ainv) !== 0;
  }

  /** Fills `result` at the pose last solved (assembled); returns false where A is singular (errors unbounded). */
  atPose(model: LeggedModel, pose: ArchitecturePose): boolean {
    const tol = this.tol!;
    const n = this.n;
    const h = FirstOrderAccuracy.STEP;
    const { c0, c1 } = this;
    const dimensional = tol.linkLength / 3;
    const position = tol.pivotPosition / 3;
    for (let i = 0; i < n; i++) {
      const leg = model.legs[i]!;
      const q = pose.q[i]!;
      const ux = pose.rodDirection[2 * i]!;
      const uy = pose.rodDirection[2 * i + 1]!;
      leg.circle(model, i, q, c0);
      leg.circle(this.crankView!, i, q, c1);
      const aCrank = (c1[2]! - c0[2]! + ux * (c1[0]! - c0[0]!) + uy * (c1[1]! - c0[1]!)) / h;
      leg.circle(this.rodView!, i, q, c1);
      const aRod = leg.name === 'strut' ? 1 : (c1[2]! - c0[2]! + ux * (c1[0]! - c0[0]!) + uy * (c1[1]! - c0[1]!)) / h;
      const pivots = n === 3 ? 2 : 1;
      const pins = pinsOfLeg(leg.name);
      const b = Math.abs(pose.B[i * n + i]!);
      const play = tol.backlash[i]!;
      const step = this.steps[i]!;
      this.worst[i] = (Math.abs(aCrank) + Math.abs(aRod)) * tol.linkLength + pivots * tol.pivotPosition + pins * tol.jointClearance + b * (play + step) / 2;
      this.variance[i] =
        (aCrank * aCrank + aRod * aRod) * dimensional * dimensional +
        pivots * position * position +
        (pins * tol.jointClearance * tol.jointClearance) / 4 +
        (b * b * (play * play + step * step)) / 12;
    }
    if (invert(n, pose.A, this.ainv) === 0) return false;
    this.combine(tol.coverage);
    return Number.isFinite(this.result.positionWorst);
  }

  /** Zonotope vertices for the worst case; covariance for the statistical figures. */
  private combine(k: number): void {
    const n = this.n;
    const g = this.ainv;
    const r = this.result;
    let best = 0;
    for (let mask = 0; mask < 1 << (n - 1); mask++) {
      let ex = 0;
      let ey = 0;
      for (let i = 0; i < n; i++) {
        const s = i > 0 && mask & (1 << (i - 1)) ? -this.worst[i]! : this.worst[i]!;
        ex += s * g[i]!;
        ey += s * g[n + i]!;
      }
      const e = ex * ex + ey * ey;
      if (e > best) best = e;
    }
    r.positionWorst = Math.sqrt(best);
    let cxx = 0;
    let cxy = 0;
    let cyy = 0;
    let cpp = 0;
    let wp = 0;
    for (let i = 0; i < n; i++) {
      const v = this.variance[i]!;
      const gx = g[i]!;
      const gy = g[n + i]!;
      cxx += v * gx * gx;
      cxy += v * gx * gy;
      cyy += v * gy * gy;
      if (n === 3) {
        const gp = g[2 * n + i]!;
        cpp += v * gp * gp;
        wp += this.worst[i]! * Math.abs(gp);
      }
    }
    const half = (cxx + cyy) / 2;
    const root = Math.sqrt(((cxx - cyy) / 2) ** 2 + cxy * cxy);
    r.positionRss = k * Math.sqrt(half + root);
    r.positionRssMinor = k * Math.sqrt(Math.max(half - root, 0));
    r.ellipseAngle = 0.5 * Math.atan2(2 * cxy, cxx - cyy);
    r.orientationWorst = n === 3 ? wp : Number.NaN;
    r.orientationRss = n === 3 ? k * Math.sqrt(cpp) : Number.NaN;
  }
}
