/**
 * The singularly perturbed way to hold the loops together (docs/drives.md, "simulate"): the loop
 * closures Φ(z) = 0 of the cut-open chain (legChain.ts) are not enforced as algebraic equations but
 * replaced by fast artificial dynamics of the constraint error with a small time constant ε (s).
 * The closing forces are the explicit law (derived here)
 *
 *   λ = −W⁻¹ (Φ + 2ε Φ̇) / ε²,     W = Φ_z M⁻¹ Φ_zᵀ,     M z̈ = f + Φ_zᵀ λ,
 *
 * so that Φ̈ = Φ_z z̈ + (Φ_z)_z ż ż = Φ̈_free − (Φ + 2εΦ̇)/ε², that is
 *
 *   ε² Φ̈ + 2ε Φ̇ + Φ = ε² Φ̈_free         (Φ̈_free: the closure acceleration of the unconstrained chain).
 *
 * On the fast time scale t/ε the error decays as a critically damped pair of poles at −1/ε; on the
 * slow scale it stays O(ε² Φ̈_free), and the motion tends to the constrained one as ε → 0 (a
 * Tikhonov-type singular perturbation; the stabilised formulation enforces Φ̈ + 2αΦ̇ + α²Φ = 0 exactly
 * instead). The chain's mass matrix must be invertible (mass at P). The assembly repeats
 * legChain.ts's kinetic and potential energy terms (same derivation, same coordinates).
 */
import type { CutOpenChain } from '../architectures/types.js';
import { LEG_TERM as T, LegChain } from './legChain.js';

export class PerturbedLegChain extends LegChain {
  private readonly M: Float64Array;
  private readonly Mfact: Float64Array;
  private readonly f: Float64Array;
  private readonly G: Float64Array;
  private readonly phiDot: Float64Array;
  private readonly MinvGt: Float64Array;
  private readonly W: Float64Array;
  private readonly lam: Float64Array;

  /** `epsilon`: time constant of the constraint-error dynamics, s. */
  constructor(chain: CutOpenChain, readonly epsilon: number) {
    super(chain);
    if (!(epsilon > 0)) throw new RangeError('epsilon must be positive');
    const N = this.size;
    const m = this.constraints;
    this.M = new Float64Array(N * N);
    this.Mfact = new Float64Array(N * N);
    this.f = new Float64Array(N);
    this.G = new Float64Array(m * N);
    this.phiDot = new Float64Array(m);
    this.MinvGt = new Float64Array(N * m);
    this.W = new Float64Array(m * m);
    this.lam = new Float64Array(m);
  }

  /** z̈ under the perturbed closure law (the stabilisation rate is not used). False when M or W is singular. */
  override accelerations(state: ArrayLike<number>, efforts: ArrayLike<number>, _stabilisationRate: number): boolean {
    const N = this.size;
    const m = this.constraints;
    this.assemble(state, efforts);
    const eps = this.epsilon;
    // M⁻¹ Φ_zᵀ (columns) and M⁻¹ f through one factorisation of M.
    this.Mfact.set(this.M);
    const rhs = this.MinvGt;
    for (let c = 0; c < m; c++) for (let j = 0; j < N; j++) rhs[j * m + c] = this.G[c * N + j]!;
    if (!solveMulti(N, this.Mfact, rhs, m, this.f)) return false;
    const zddFree = this.f; // now M⁻¹ f
    for (let a = 0; a < m; a++) {
      for (let b = 0; b < m; b++) {
        let s = 0;
        for (let j = 0; j < N; j++) s += this.G[a * N + j]! * rhs[j * m + b]!;
        this.W[a * m + b] = s;
      }
      this.lam[a] = -(this.closure[a]! + 2 * eps * this.phiDot[a]!) / (eps * eps);
    }
    if (!solveSmall(m, this.W, this.lam)) return false;
    for (let j = 0; j < N; j++) {
      let s = zddFree[j]!;
      for (let c = 0; c < m; c++) s += rhs[j * m + c]! * this.lam[c]!;
      this.zdd[j] = s;
    }
    return true;
  }

  /** M, f = Q − h − G_grav, Φ_z, Φ, Φ̇ at the state (legChain.ts's terms). */
  private assemble(state: ArrayLike<number>, efforts: ArrayLike<number>): void {
    const N = this.size;
    const M = this.M, f = this.f, G = this.G;
    M.fill(0); f.fill(0); G.fill(0);
    const [gx, gy] = this.chain.gravity;
    const P = this.platformIndex;
    const three = this.platformCoordinates === 3;
    const phi = three ? state[P + 2]! : 0;
    const phiRate = three ? state[N + P + 2]! : 0;
    const cphi = Math.cos(phi), sphi = Math.sin(phi);
    for (let i = 0; i < this.legs; i++) {
      const leg = this.chain.legs[i]!;
      const qi = 2 * i, bi = 2 * i + 1;
      const qd = state[N + qi]!, bd = state[N + bi]!;
      // legChain.ts's terms of this leg (every leg kind: crank + rod, slider + rod, strut).
      const t = this.legTerms(i, state[qi]!, state[bi]!, qd, bd);
      M[qi * N + qi] = t[T.M11]!; M[qi * N + bi] = t[T.M12]!; M[bi * N + qi] = t[T.M12]!; M[bi * N + bi] = t[T.M22]!;
      f[qi] = efforts[i]! - t[T.HQ]! - t[T.GQ]!;
      f[bi] = -t[T.HB]! - t[T.GB]!;
      const rx = cphi * leg.pinX - sphi * leg.pinY, ry = sphi * leg.pinX + cphi * leg.pinY;
      this.closure[2 * i] = t[T.TIPX]! - state[P]! - rx;
      this.closure[2 * i + 1] = t[T.TIPY]! - state[P + 1]! - ry;
      const rowX = (2 * i) * N, rowY = (2 * i + 1) * N;
      G[rowX + qi] = t[T.JQX]!; G[rowY + qi] = t[T.JQY]!;
      G[rowX + bi] = t[T.JBX]!; G[rowY + bi] = t[T.JBY]!;
      G[rowX + P] = -1; G[rowY + P + 1] = -1;
      if (three) { G[rowX + P + 2] = ry; G[rowY + P + 2] = -rx; }
      let rateX = t[T.JQX]! * qd + t[T.JBX]! * bd - state[N + P]!;
      let rateY = t[T.JQY]! * qd + t[T.JBY]! * bd - state[N + P + 1]!;
      if (three) { rateX += ry * phiRate; rateY += -rx * phiRate; }
      this.phiDot[2 * i] = rateX; this.phiDot[2 * i + 1] = rateY;
    }
    const c = this.chain;
    M[P * N + P] = c.platformMass; M[(P + 1) * N + P + 1] = c.platformMass;
    f[P] = c.platformMass * gx; f[P + 1] = c.platformMass * gy;
    if (three) M[(P + 2) * N + P + 2] = c.platformInertia;
  }
}

/** Solves A X = B (B: n×k, row-major, in place) and A y = r (in place) by Gaussian elimination with pivoting. */
function solveMulti(n: number, A: Float64Array, B: Float64Array, k: number, r: Float64Array): boolean {
  for (let col = 0; col < n; col++) {
    let pivot = col;
    let best = Math.abs(A[col * n + col]!);
    for (let row = col + 1; row < n; row++) {
      const v = Math.abs(A[row * n + col]!);
      if (v > best) { best = v; pivot = row; }
    }
    if (best === 0) return false;
    if (pivot !== col) {
      for (let j = 0; j < n; j++) { const t = A[col * n + j]!; A[col * n + j] = A[pivot * n + j]!; A[pivot * n + j] = t; }
      for (let j = 0; j < k; j++) { const t = B[col * k + j]!; B[col * k + j] = B[pivot * k + j]!; B[pivot * k + j] = t; }
      const t = r[col]!; r[col] = r[pivot]!; r[pivot] = t;
    }
    const d = A[col * n + col]!;
    for (let row = col + 1; row < n; row++) {
      const fct = A[row * n + col]! / d;
      if (fct === 0) continue;
      for (let j = col; j < n; j++) A[row * n + j] = A[row * n + j]! - fct * A[col * n + j]!;
      for (let j = 0; j < k; j++) B[row * k + j] = B[row * k + j]! - fct * B[col * k + j]!;
      r[row] = r[row]! - fct * r[col]!;
    }
  }
  for (let row = n - 1; row >= 0; row--) {
    const d = A[row * n + row]!;
    for (let j = 0; j < k; j++) {
      let s = B[row * k + j]!;
      for (let c = row + 1; c < n; c++) s -= A[row * n + c]! * B[c * k + j]!;
      B[row * k + j] = s / d;
    }
    let s = r[row]!;
    for (let c = row + 1; c < n; c++) s -= A[row * n + c]! * r[c]!;
    r[row] = s / d;
  }
  return true;
}

const NONE = new Float64Array(0);

function solveSmall(n: number, A: Float64Array, r: Float64Array): boolean {
  return solveMulti(n, A, NONE, 0, r);
}
