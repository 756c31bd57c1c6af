/**
 * The cut-open chain of any architecture that describes its bodies (PlanarArchitecture.cutOpenChain):
 * every leg cut at its distal pin is a serial chain with coordinates (q_i, β_i) — the actuated joint
 * (crank angle θ_i, rad, or slider position s_i along its rail, m) and the absolute rod angle β_i —
 * and the body at P is free with coordinates (x, y) (2-DOF) or (x, y, φ) (3-DOF). The loop closures
 *
 *   Φ_i(z) = T_i(q_i, β_i) − P − R(φ) b_i = 0,   T_i the rod tip (A_i + p_i e(θ_i) + d_i e(β_i) or O_i + s_i e_r,i + d_i e(β_i))
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
 * - body at P: ½ m (ẋ² + ẏ²) + ½ I φ̇².
 * Potential V = −γ·Σ m r_com (G = ∂V/∂z). Q holds the drive efforts minus friction on the q_i.
 * Allocation-free after construction.
 */
import type { CutOpenChain } from '../architectures/types.js';

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
  private readonly a: Float64Array;
  private readonly b: Float64Array;
  private readonly k: Float64Array;
  private readonly kkt: Float64Array;
  private readonly rhs: Float64Array;

  constructor(chain: CutOpenChain) {
    this.chain = chain;
    const n = chain.legs.length;
    this.legs = n;
    this.platformCoordinates = n === 3 ? 3 : 2;
    this.size = 2 * n + this.platformCoordinates;
    this.constraints = 2 * n;
    this.zdd = new Float64Array(this.size);
    this.closure = new Float64Array(2 * n);
    this.a = Float64Array.from(chain.legs, (l) => (l.actuator === 'revolute' ? l.proximalInertia + l.reflectedInertia + l.rodMass * l.crank * l.crank : l.proximalInertia + l.reflectedInertia + l.rodMass));
    this.b = Float64Array.from(chain.legs, (l) => l.rodMass * l.rodComDistance * l.rodComDistance + l.rodInertia);
    this.k = Float64Array.from(chain.legs, (l) => (l.actuator === 'revolute' ? l.rodMass * l.crank * l.rodComDistance : l.rodMass * l.rodComDistance));
    const dim = this.size + this.constraints;
    this.kkt = new Float64Array(dim * dim);
    this.rhs = new Float64Array(dim);
  }

  /** Index of the first platform coordinate (x) in z. */
  get platformIndex(): number {
    return 2 * this.legs;
  }

  /**
   * z̈ at (z, ż) (state: z in 0..N−1, ż in N..2N−1) under efforts Q on the actuated coordinates
   * (friction already subtracted). Returns false when the system is singular.
   */
  accelerations(state: ArrayLike<number>, efforts: ArrayLike<number>, stabilisationRate: number): boolean {
    const N = this.size;
    const m = this.constraints;
    const dim = N + m;
    const K = this.kkt;
    const r = this.rhs;
    K.fill(0);
    r.fill(0);
    const [gx, gy] = this.chain.gravity;
    const P = this.platformIndex;
    const phi = this.platformCoordinates === 3 ? state[P + 2]! : 0;
    const phiRate = this.platformCoordinates === 3 ? state[N + P + 2]! : 0;
    const cphi = Math.cos(phi), sphi = Math.sin(phi);
    const alpha = stabilisationRate;
    for (let i = 0; i < this.legs; i++) {
      const leg = this.chain.legs[i]!;
      const qi = 2 * i, bi = 2 * i + 1;
      const q = state[qi]!, beta = state[bi]!, qd = state[N + qi]!, bd = state[N + bi]!;
      const cb = Math.cos(beta), sb = Math.sin(beta);
      const a = this.a[i]!, b = this.b[i]!, k = this.k[i]!;
      let m12: number, hq: number, hb: number, gq: number, tipX: number, tipY: number, dqx: number, dqy: number, biasX: number, biasY: number;
      if (leg.actuator === 'revolute') {
        const ct = Math.cos(q), st = Math.sin(q);
        const c = cb * ct + sb * st, s = sb * ct - cb * st; // cos, sin of β − θ
        m12 = k * c;
        hq = -k * s * bd * bd;
        hb = k * s * qd * qd;
        gq = -(leg.proximalFirstMoment + leg.rodMass * leg.crank) * (-gx * st + gy * ct);
        tipX = leg.baseX + leg.crank * ct + leg.rod * cb;
        tipY = leg.baseY + leg.crank * st + leg.rod * sb;
        dqx = -leg.crank * st; dqy = leg.crank * ct;
        biasX = -leg.crank * ct * qd * qd; biasY = -leg.crank * st * qd * qd;
      } else {
        const g = -leg.railX * sb + leg.railY * cb;
        const gPrime = -(leg.railX * cb + leg.railY * sb);
        m12 = k * g;
        hq = k * gPrime * bd * bd;
        hb = 0;
        gq = -(leg.proximalFirstMoment + leg.rodMass) * (gx * leg.railX + gy * leg.railY);
        tipX = leg.baseX + q * leg.railX + leg.rod * cb;
        tipY = leg.baseY + q * leg.railY + leg.rod * sb;
        dqx = leg.railX; dqy = leg.railY;
        biasX = 0; biasY = 0;
      }
      const gb = -leg.rodMass * leg.rodComDistance * (-gx * sb + gy * cb);
      K[qi * dim + qi] = a; K[qi * dim + bi] = m12; K[bi * dim + qi] = m12; K[bi * dim + bi] = b;
      r[qi] = efforts[i]! - hq - gq;
      r[bi] = -hb - gb;
      // Constraint rows 2i, 2i+1: T_i − P − R(φ) b_i.
      const rx = cphi * leg.pinX - sphi * leg.pinY;
      const ry = sphi * leg.pinX + cphi * leg.pinY;
      const px = state[P]!, py = state[P + 1]!;
      const cx = tipX - px - rx, cy = tipY - py - ry;
      this.closure[2 * i] = cx; this.closure[2 * i + 1] = cy;
      const rowX = N + 2 * i, rowY = rowX + 1;
      const setJ = (col: number, vx: number, vy: number): void => {
        K[rowX * dim + col] = vx; K[rowY * dim + col] = vy;
        K[col * dim + rowX] = vx; K[col * dim + rowY] = vy;
      };
      setJ(qi, dqx, dqy);
      setJ(bi, -leg.rod * sb, leg.rod * cb);
      setJ(P, -1, 0);
      setJ(P + 1, 0, -1);
      // ∂(−R(φ) b)/∂φ = −E R(φ) b = (r_y, −r_x); its velocity product −(−r φ̇²) = r φ̇².
      if (this.platformCoordinates === 3) setJ(P + 2, ry, -rx);
      let rateX = dqx * qd - leg.rod * sb * bd - state[N + P]!;
      let rateY = dqy * qd + leg.rod * cb * bd - state[N + P + 1]!;
      if (this.platformCoordinates === 3) {
        rateX += ry * phiRate;
        rateY += -rx * phiRate;
      }
      // Velocity products of Φ_z ż: tip −p e(θ) θ̇² − d e(β) β̇², platform + R b φ̇².
      const vpX = biasX - leg.rod * cb * bd * bd + rx * phiRate * phiRate;
      const vpY = biasY - leg.rod * sb * bd * bd + ry * phiRate * phiRate;
      r[rowX] = -vpX - 2 * alpha * rateX - alpha * alpha * cx;
      r[rowY] = -vpY - 2 * alpha * rateY - alpha * alpha * cy;
    }
    const c = this.chain;
    K[P * dim + P] = c.platformMass;
    K[(P + 1) * dim + P + 1] = c.platformMass;
    r[P] = c.platformMass * gx;
    r[P + 1] = c.platformMass * gy;
    if (this.platformCoordinates === 3) K[(P + 2) * dim + P + 2] = c.platformInertia;
    if (!solveDense(dim, K, r)) return false;
    for (let j = 0; j < N; j++) this.zdd[j] = r[j]!;
    return true;
  }

  /** Kinetic energy ½ żᵀ M ż, J. */
  kineticEnergy(state: ArrayLike<number>): number {
    const N = this.size;
    let e = 0;
    for (let i = 0; i < this.legs; i++) {
      const leg = this.chain.legs[i]!;
      const q = state[2 * i]!, beta = state[2 * i + 1]!, qd = state[N + 2 * i]!, bd = state[N + 2 * i + 1]!;
      const coupling = leg.actuator === 'revolute' ? Math.cos(beta - q) : -leg.railX * Math.sin(beta) + leg.railY * Math.cos(beta);
      e += 0.5 * this.a[i]! * qd * qd + 0.5 * this.b[i]! * bd * bd + this.k[i]! * coupling * qd * bd;
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
      const rodX = leg.rodComDistance * Math.cos(beta), rodY = leg.rodComDistance * Math.sin(beta);
      if (leg.actuator === 'revolute') {
        const ex = Math.cos(q), ey = Math.sin(q);
        v -= leg.proximalFirstMoment * (gx * ex + gy * ey);
        v -= leg.rodMass * (gx * (leg.baseX + leg.crank * ex + rodX) + gy * (leg.baseY + leg.crank * ey + rodY));
      } else {
        const sx = leg.baseX + q * leg.railX, sy = leg.baseY + q * leg.railY;
        v -= leg.proximalFirstMoment * (gx * sx + gy * sy);
        v -= leg.rodMass * (gx * (sx + rodX) + gy * (sy + rodY));
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
      const q = state[2 * i]!, beta = state[2 * i + 1]!;
      const baseX = leg.actuator === 'revolute' ? leg.baseX + leg.crank * Math.cos(q) : leg.baseX + q * leg.railX;
      const baseY = leg.actuator === 'revolute' ? leg.baseY + leg.crank * Math.sin(q) : leg.baseY + q * leg.railY;
      const x = baseX + leg.rod * Math.cos(beta) - state[P]! - (c * leg.pinX - s * leg.pinY);
      const y = baseY + leg.rod * Math.sin(beta) - state[P + 1]! - (s * leg.pinX + c * leg.pinY);
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
