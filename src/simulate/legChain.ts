/**
 * The cut-open chain of any architecture that describes its bodies (PlanarArchitecture.cutOpenChain):
 * every leg cut at its distal pin is a serial chain with coordinates (q_i, β_i) — the actuated joint
 * (crank angle θ_i, rad, slider position s_i along its rail, m, or strut length, m) and the absolute
 * rod (strut) angle β_i —
 * and the body at P is free with coordinates (x, y) (2-DOF) or (x, y, φ) (3-DOF). The loop closures
 *
 *   Φ_i(z) = T_i(q_i, β_i) − P − R(φ) b_i = 0,   T_i the rod tip (A_i + p_i e(θ_i) + d_i e(β_i), O_i + s_i e_r,i + d_i e(β_i),
 *                                                or A_i + q_i e(β_i) for a strut)
 *
 * are held with Lagrange multipliers and Baumgarte stabilisation (derived, as for freeChain.ts):
 *
 *   [M  Φ_zᵀ; Φ_z  0] [z̈; −λ] = [Q − h − G; −(Φ_z ż)_z ż − 2α Φ̇ − α² Φ]
 *
 * solved as one dense system (so a massless body at P is allowed). Kinetic energy per leg (derived):
 * - revolute: T = ½ a θ̇² + ½ b β̇² + k cos(β − θ) θ̇ β̇, a = I_pivot + J_refl + m_r p², b = m_r c² + I_r, k = m_r p c;
 *   h = (−k sin(β − θ) β̇², k sin(β − θ) θ̇²);
 * - prismatic: T = ½ a ṡ² + ½ b β̇² + k g(β) ṡ β̇, a = m_s + J_refl + m_r, k = m_r c, g(β) = e_r·e⊥(β);
 *   h = (k g′(β) β̇², 0), g′(β) = −e_r·e(β);
 * - strut (q = strut length, β its angle; housing about A, tube centre of mass at s = q − c from A):
 *   T = ½ a q̇² + ½ b(q) β̇², a = m_t + J_refl, b(q) = I_A + I_t + m_t s²; h = (−m_t s β̇², 2 m_t s q̇ β̇);
 *   tip T_i = A_i + q e(β), tip velocity products 2 q̇ β̇ e⊥(β) − q β̇² e(β);
 * - body at P: ½ m (ẋ² + ẏ²) + ½ I φ̇².
 * Potential V = −γ·Σ m r_com (G = ∂V/∂z). Q holds the drive efforts minus friction on the q_i.
 * Allocation-free after construction.
 */
import type { CutOpenChain, CutOpenLeg } from '../architectures/types.js';

const CRANK = 0, SLIDER = 1, STRUT = 2;
function kindOf(leg: CutOpenLeg): number {
  if (leg.leg === 'strut') return STRUT;
  return leg.actuator === 'revolute' ? CRANK : SLIDER;
}

/**
 * Indices of the per-leg terms `legTerms` writes: mass block (M11, M12, M22), velocity terms (HQ, HB),
 * gravity gradient (GQ, GB), tip (TIPX, TIPY), tip Jacobian columns (JQX, JQY, JBX, JBY) and the tip's
 * velocity products (VPX, VPY).
 */
export const LEG_TERM = { M11: 0, M12: 1, M22: 2, HQ: 3, HB: 4, GQ: 5, GB: 6, TIPX: 7, TIPY: 8, JQX: 9, JQY: 10, JBX: 11, JBY: 12, VPX: 13, VPY: 14, SIZE: 15 } as const;
const T = LEG_TERM;

export class LegChain {
  readonly chain: CutOpenChain;
  /** Legs (= actuators), platform coordinates (2 or 3), free coordinates N = 2n + p, constraints 2n. */
  readonly legs: number;
  readonly platformCoordinates: number;
  readonly size: number;
  readonly constraints: number;
  /** Accelerations z̈ of the last `accelerations` call. */
  readonly zdd: Float64Array;
  /** Φ of the last call, m (2 per leg). */
  readonly closure: Float64Array;
  private readonly kind: Int8Array;
  private readonly a: Float64Array;
  private readonly b: Float64Array;
  private readonly k: Float64Array;
  private readonly kkt: Float64Array;
  private readonly rhs: Float64Array;
  private readonly terms = new Float64Array(LEG_TERM.SIZE);

  constructor(chain: CutOpenChain) {
    this.chain = chain;
    const n = chain.legs.length;
    this.legs = n;
    this.platformCoordinates = n === 3 ? 3 : 2;
    this.size = 2 * n + this.platformCoordinates;
    this.constraints = 2 * n;
    this.zdd = new Float64Array(this.size);
    this.closure = new Float64Array(2 * n);
    this.kind = Int8Array.from(chain.legs, kindOf);
    // a: actuated-joint inertia; b: rod inertia (strut: the part independent of q); k: coupling (strut: tube mass).
    this.a = Float64Array.from(chain.legs, (l, i) =>
      this.kind[i] === CRANK ? l.proximalInertia + l.reflectedInertia + l.rodMass * l.crank * l.crank
        : this.kind[i] === SLIDER ? l.proximalInertia + l.reflectedInertia + l.rodMass : l.rodMass + l.reflectedInertia);
    this.b = Float64Array.from(chain.legs, (l, i) => (this.kind[i] === STRUT ? l.proximalInertia + l.rodInertia : l.rodMass * l.rodComDistance * l.rodComDistance + l.rodInertia));
    this.k = Float64Array.from(chain.legs, (l, i) => (this.kind[i] === CRANK ? l.rodMass * l.crank * l.rodComDistance : this.kind[i] === SLIDER ? l.rodMass * l.rodComDistance : l.rodMass));
    const dim = this.size + this.constraints;
    this.kkt = new Float64Array(dim * dim);
    this.rhs = new Float64Array(dim);
  }

  /** Index of the first platform coordinate (x) in z. */
  get platformIndex(): number {
    return 2 * this.legs;
  }

  /**
   * Terms of leg i at joint position q, rod angle β and rates q̇, β̇ into `this.terms`: its mass block,
   * velocity terms h, gravity gradient G (= ∂V/∂(q, β)), tip, tip Jacobian columns and the tip's
   * velocity products (derived, see the file comment).
   */
  protected legTerms(i: number, q: number, beta: number, qd: number, bd: number): Float64Array {
    const leg = this.chain.legs[i]!;
    const out = this.terms;
    const [gx, gy] = this.chain.gravity;
    const cb = Math.cos(beta), sb = Math.sin(beta);
    const a = this.a[i]!, b = this.b[i]!, k = this.k[i]!;
    // Rod (tube) centre of mass along e(β): its first moment's gravity term on β.
    const perpendicularGravity = -gx * sb + gy * cb;
    if (this.kind[i] === CRANK) {
      const ct = Math.cos(q), st = Math.sin(q);
      const c = cb * ct + sb * st, s = sb * ct - cb * st; // cos, sin of β − θ
      out[T.M11] = a; out[T.M12] = k * c; out[T.M22] = b;
      out[T.HQ] = -k * s * bd * bd; out[T.HB] = k * s * qd * qd;
      out[T.GQ] = -(leg.proximalFirstMoment + leg.rodMass * leg.crank) * (-gx * st + gy * ct);
      out[T.GB] = -leg.rodMass * leg.rodComDistance * perpendicularGravity;
      out[T.TIPX] = leg.baseX + leg.crank * ct + leg.rod * cb; out[T.TIPY] = leg.baseY + leg.crank * st + leg.rod * sb;
      out[T.JQX] = -leg.crank * st; out[T.JQY] = leg.crank * ct;
      out[T.JBX] = -leg.rod * sb; out[T.JBY] = leg.rod * cb;
      out[T.VPX] = -leg.crank * ct * qd * qd - leg.rod * cb * bd * bd;
      out[T.VPY] = -leg.crank * st * qd * qd - leg.rod * sb * bd * bd;
    } else if (this.kind[i] === SLIDER) {
      const g = -leg.railX * sb + leg.railY * cb;
      const gPrime = -(leg.railX * cb + leg.railY * sb);
      out[T.M11] = a; out[T.M12] = k * g; out[T.M22] = b;
      out[T.HQ] = k * gPrime * bd * bd; out[T.HB] = 0;
      out[T.GQ] = -(leg.proximalFirstMoment + leg.rodMass) * (gx * leg.railX + gy * leg.railY);
      out[T.GB] = -leg.rodMass * leg.rodComDistance * perpendicularGravity;
      out[T.TIPX] = leg.baseX + q * leg.railX + leg.rod * cb; out[T.TIPY] = leg.baseY + q * leg.railY + leg.rod * sb;
      out[T.JQX] = leg.railX; out[T.JQY] = leg.railY;
      out[T.JBX] = -leg.rod * sb; out[T.JBY] = leg.rod * cb;
      out[T.VPX] = -leg.rod * cb * bd * bd; out[T.VPY] = -leg.rod * sb * bd * bd;
    } else {
      const s = q - leg.rodComDistance;
      out[T.M11] = a; out[T.M12] = 0; out[T.M22] = b + k * s * s;
      out[T.HQ] = -k * s * bd * bd; out[T.HB] = 2 * k * s * qd * bd;
      out[T.GQ] = -k * (gx * cb + gy * sb);
      out[T.GB] = -(leg.proximalFirstMoment + k * s) * perpendicularGravity;
      out[T.TIPX] = leg.baseX + q * cb; out[T.TIPY] = leg.baseY + q * sb;
      out[T.JQX] = cb; out[T.JQY] = sb;
      out[T.JBX] = -q * sb; out[T.JBY] = q * cb;
      out[T.VPX] = -2 * qd * bd * sb - q * bd * bd * cb;
      out[T.VPY] = 2 * qd * bd * cb - q * bd * bd * sb;
    }
    return out;
  }

  /**
   * z̈ at (z, ż) (state: z in 0..N−1, ż in N..2N−1) under efforts Q on the actuated coordinates
   * (friction already subtracted). Returns false when the system is singular.
   */
  accelerations(state: ArrayLike<number>, efforts: ArrayLike<number>, stabilisationRate: number): boolean {
    const N = this.size;
    const dim = N + this.constraints;
    const K = this.kkt;
    const r = this.rhs;
    K.fill(0);
    r.fill(0);
    const [gx, gy] = this.chain.gravity;
    const P = this.platformIndex;
    const turning = this.platformCoordinates === 3;
    const phi = turning ? state[P + 2]! : 0;
    const phiRate = turning ? state[N + P + 2]! : 0;
    const cphi = Math.cos(phi), sphi = Math.sin(phi);
    const alpha = stabilisationRate;
    for (let i = 0; i < this.legs; i++) {
      const leg = this.chain.legs[i]!;
      const qi = 2 * i, bi = 2 * i + 1;
      const qd = state[N + qi]!, bd = state[N + bi]!;
      const t = this.legTerms(i, state[qi]!, state[bi]!, qd, bd);
      K[qi * dim + qi] = t[T.M11]!; K[qi * dim + bi] = t[T.M12]!; K[bi * dim + qi] = t[T.M12]!; K[bi * dim + bi] = t[T.M22]!;
      r[qi] = efforts[i]! - t[T.HQ]! - t[T.GQ]!;
      r[bi] = -t[T.HB]! - t[T.GB]!;
      // Constraint rows 2i, 2i+1: T_i − P − R(φ) b_i.
      const rx = cphi * leg.pinX - sphi * leg.pinY;
      const ry = sphi * leg.pinX + cphi * leg.pinY;
      const cx = t[T.TIPX]! - state[P]! - rx, cy = t[T.TIPY]! - state[P + 1]! - ry;
      this.closure[2 * i] = cx; this.closure[2 * i + 1] = cy;
      const rowX = N + 2 * i, rowY = rowX + 1;
      const setJ = (col: number, vx: number, vy: number): void => {
        K[rowX * dim + col] = vx; K[rowY * dim + col] = vy;
        K[col * dim + rowX] = vx; K[col * dim + rowY] = vy;
      };
      setJ(qi, t[T.JQX]!, t[T.JQY]!);
      setJ(bi, t[T.JBX]!, t[T.JBY]!);
      setJ(P, -1, 0);
      setJ(P + 1, 0, -1);
      // ∂(−R(φ) b)/∂φ = −E R(φ) b = (r_y, −r_x); its velocity product −(−r φ̇²) = r φ̇².
      if (turning) setJ(P + 2, ry, -rx);
      let rateX = t[T.JQX]! * qd + t[T.JBX]! * bd - state[N + P]!;
      let rateY = t[T.JQY]! * qd + t[T.JBY]! * bd - state[N + P + 1]!;
      if (turning) {
        rateX += ry * phiRate;
        rateY += -rx * phiRate;
      }
      const vpX = t[T.VPX]! + rx * phiRate * phiRate;
      const vpY = t[T.VPY]! + ry * phiRate * phiRate;
      r[rowX] = -vpX - 2 * alpha * rateX - alpha * alpha * cx;
      r[rowY] = -vpY - 2 * alpha * rateY - alpha * alpha * cy;
    }
    const c = this.chain;
    K[P * dim + P] = c.platformMass;
    K[(P + 1) * dim + P + 1] = c.platformMass;
    r[P] = c.platformMass * gx;
    r[P + 1] = c.platformMass * gy;
    if (turning) K[(P + 2) * dim + P + 2] = c.platformInertia;
    if (!solveDense(dim, K, r)) return false;
    for (let j = 0; j < N; j++) this.zdd[j] = r[j]!;
    return true;
  }

  /** Kinetic energy ½ żᵀ M ż, J. */
  kineticEnergy(state: ArrayLike<number>): number {
    const N = this.size;
    let e = 0;
    for (let i = 0; i < this.legs; i++) {
      const qd = state[N + 2 * i]!, bd = state[N + 2 * i + 1]!;
      const t = this.legTerms(i, state[2 * i]!, state[2 * i + 1]!, 0, 0);
      e += 0.5 * t[T.M11]! * qd * qd + 0.5 * t[T.M22]! * bd * bd + t[T.M12]! * qd * bd;
    }
    const P = this.platformIndex;
    e += 0.5 * this.chain.platformMass * (state[N + P]! ** 2 + state[N + P + 1]! ** 2);
    if (this.platformCoordinates === 3) e += 0.5 * this.chain.platformInertia * state[N + P + 2]! ** 2;
    return e;
  }

  /** Potential energy of gravity, J: V = −γ·Σ m r_com. */
  potentialEnergy(state: ArrayLike<number>): number {
    const [gx, gy] = this.chain.gravity;
    let v = 0;
    for (let i = 0; i < this.legs; i++) {
      const leg = this.chain.legs[i]!;
      const q = state[2 * i]!, beta = state[2 * i + 1]!;
      const ex = Math.cos(beta), ey = Math.sin(beta);
      if (this.kind[i] === CRANK) {
        const cx = Math.cos(q), cy = Math.sin(q);
        v -= leg.proximalFirstMoment * (gx * cx + gy * cy);
        v -= leg.rodMass * (gx * (leg.baseX + leg.crank * cx + leg.rodComDistance * ex) + gy * (leg.baseY + leg.crank * cy + leg.rodComDistance * ey));
      } else if (this.kind[i] === SLIDER) {
        const sx = leg.baseX + q * leg.railX, sy = leg.baseY + q * leg.railY;
        v -= leg.proximalFirstMoment * (gx * sx + gy * sy);
        v -= leg.rodMass * (gx * (sx + leg.rodComDistance * ex) + gy * (sy + leg.rodComDistance * ey));
      } else {
        // Housing: first moment about the pivot along e(β) (its mass times the pivot height is a constant, left out); tube at s = q − c.
        const s = q - leg.rodComDistance;
        v -= leg.proximalFirstMoment * (gx * ex + gy * ey);
        v -= leg.rodMass * (gx * (leg.baseX + s * ex) + gy * (leg.baseY + s * ey));
      }
    }
    const P = this.platformIndex;
    v -= this.chain.platformMass * (gx * state[P]! + gy * state[P + 1]!);
    return v;
  }

  /** Largest |Φ_i| over the legs, m. */
  closureError(state: ArrayLike<number>): number {
    const P = this.platformIndex;
    const phi = this.platformCoordinates === 3 ? state[P + 2]! : 0;
    const c = Math.cos(phi), s = Math.sin(phi);
    let worst = 0;
    for (let i = 0; i < this.legs; i++) {
      const leg = this.chain.legs[i]!;
      const t = this.legTerms(i, state[2 * i]!, state[2 * i + 1]!, 0, 0);
      const x = t[T.TIPX]! - state[P]! - (c * leg.pinX - s * leg.pinY);
      const y = t[T.TIPY]! - state[P + 1]! - (s * leg.pinX + c * leg.pinY);
      worst = Math.max(worst, Math.hypot(x, y));
    }
    return worst;
  }
}

/** Solves A x = r in place (r ← x) by Gaussian elimination with partial pivoting; false when singular. */
function solveDense(n: number, A: Float64Array, r: Float64Array): boolean {
  for (let col = 0; col < n; col++) {
    let pivot = col;
    let best = Math.abs(A[col * n + col]!);
    for (let row = col + 1; row < n; row++) {
      const v = Math.abs(A[row * n + col]!);
      if (v > best) { best = v; pivot = row; }
    }
    if (best === 0) return false;
    if (pivot !== col) {
      for (let k = 0; k < n; k++) {
        const t = A[col * n + k]!; A[col * n + k] = A[pivot * n + k]!; A[pivot * n + k] = t;
      }
      const t = r[col]!; r[col] = r[pivot]!; r[pivot] = t;
    }
    const d = A[col * n + col]!;
    for (let row = col + 1; row < n; row++) {
      const f = A[row * n + col]! / d;
      if (f === 0) continue;
      for (let k = col; k < n; k++) A[row * n + k] = A[row * n + k]! - f * A[col * n + k]!;
      r[row] = r[row]! - f * r[col]!;
    }
  }
  for (let row = n - 1; row >= 0; row--) {
    let s = r[row]!;
    for (let k = row + 1; k < n; k++) s -= A[row * n + k]! * r[k]!;
    r[row] = s / A[row * n + row]!;
  }
  return true;
}
