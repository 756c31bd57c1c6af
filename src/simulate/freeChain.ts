/**
 * The five-bar cut open at the end point: two serial 2R arms with coordinates q = (θ_1, β_1, θ_2, β_2)
 * (crank angles θ_i, absolute rod angles β_i, rad), the end-point mass carried by arm 1's tip, and the
 * loop closure Φ(q) = T_1(q) − T_2(q) = 0 (T_i the tip of arm i, m) enforced by Lagrange multipliers.
 *
 * The five-bar's own formulation, kept as an independent cross-check of the general cut-open chain
 * (legChain.ts), through which `simulate` integrates every architecture, the five-bar included.
 * The body data are the model's (FiveBarBodies): crank inertia about its pivot (elbow hub included) plus
 * the reflected drive inertia, crank first moment, rod mass, centre-of-mass distance and inertia about
 * the centre of mass, end mass, gravity. Per arm, with φ = β − θ (derived from the kinetic energy
 * T = ½ a θ̇² + ½ b β̇² + k cos φ θ̇ β̇ of a 2R arm whose bodies sit along crank and rod):
 *
 *   a = I_pivot + J_refl + m_rod p² (+ m_end p²)         b = m_rod c² + I_rod (+ m_end d²)
 *   k = m_rod p c (+ m_end p d)                          (c the rod's centre-of-mass distance)
 *   M = [a, k cos φ; k cos φ, b]                         h = (−k sin φ β̇², k sin φ θ̇²)
 *   V = −γ·(first moments): G = ∂V/∂q = (−(μ_crank + m_rod p (+ m_end p)) γ·e⊥(θ), −(m_rod c (+ m_end d)) γ·e⊥(β))
 *
 * Equations of motion (index-1 form with Baumgarte stabilisation of the closure, derived):
 *
 *   M q̈ = Q − h − G + Φ_qᵀ λ,      Φ_q q̈ = −(Φ_q q̇)_q q̇ − 2 α Φ̇ − α² Φ
 *
 * solved through the 2×2 Schur complement S = Φ_q M⁻¹ Φ_qᵀ (M is block diagonal, one 2×2 block per arm).
 * Q = (τ_1 − f_1, 0, τ_2 − f_2, 0) holds the drive and friction torques. Everything is allocation-free.
 */
import { fiveBar } from '../architectures/fivebar.js';
import { PoseStatus, type ArchitectureModelBase, type PlanarArchitecture } from '../architectures/types.js';
import { CycleDynamics } from '../mechanics/dutyCycle.js';
import { fiveBarLegModel, type FiveBarBodies } from './fiveBarBodies.js';
export { DEFAULT_STABILISATION_RATE } from './shared.js';

/** Constant coefficients of the free (cut-open) chain, built once per model. */
export interface FreeChain {
  readonly pivotX: readonly [number, number];
  readonly pivotY: readonly [number, number];
  /** Crank lengths p_i and rod lengths d_i, m. */
  readonly crank: readonly [number, number];
  readonly rod: readonly [number, number];
  /** Inertia of arm i about its pivot for crank rotation with the rod translating, kg·m² (a above). */
  readonly crankInertia: readonly [number, number];
  /** Inertia of the rod (and carried end mass) for rod rotation about the elbow, kg·m² (b above). */
  readonly rodInertia: readonly [number, number];
  /** Crank–rod coupling k, kg·m². */
  readonly coupling: readonly [number, number];
  /** First moments along the crank (about the pivot) and along the rod (about the elbow) of everything each carries, kg·m. */
  readonly crankMoment: readonly [number, number];
  readonly rodMoment: readonly [number, number];
  /** Gravity in the plane, m/s². */
  readonly gravity: readonly [number, number];
}

/** Free-chain coefficients of a five-bar model; the end mass rides on arm 1's tip. */
export function freeChain(model: FiveBarBodies): FreeChain {
  const p = model.crank;
  const d = model.rod;
  const m = model.rodMass;
  const c = model.rodComDistance;
  const end = model.endMass;
  const arm = (i: 0 | 1): { a: number; b: number; k: number; mc: number; mr: number } => {
    const carried = i === 0 ? end : 0;
    return {
      a: model.crankInertiaAboutPivot[i] + model.reflectedInertia[i] + (m[i] + carried) * p[i] * p[i],
      b: m[i] * c[i] * c[i] + model.rodInertiaAboutCom[i] + carried * d[i] * d[i],
      k: m[i] * p[i] * c[i] + carried * p[i] * d[i],
      mc: model.crankFirstMoment[i] + (m[i] + carried) * p[i],
      mr: m[i] * c[i] + carried * d[i],
    };
  };
  const a1 = arm(0);
  const a2 = arm(1);
  return {
    pivotX: model.pivotX,
    pivotY: model.pivotY,
    crank: p,
    rod: d,
    crankInertia: [a1.a, a2.a],
    rodInertia: [a1.b, a2.b],
    coupling: [a1.k, a2.k],
    crankMoment: [a1.mc, a2.mc],
    rodMoment: [a1.mr, a2.mr],
    gravity: model.gravity,
  };
}

/** Output of `freeAccelerations` (reusable; every field is overwritten). */
export class FreeChainAcceleration {
  /** q̈ = (θ̈_1, β̈_1, θ̈_2, β̈_2), rad/s². */
  readonly qdd = new Float64Array(4);
  /** Lagrange multipliers: the force arm 2 exerts on arm 1's tip, N (x, y). */
  lambdaX = 0;
  lambdaY = 0;
  /** Loop-closure error Φ = T_1 − T_2, m, and its rate Φ̇, m/s. */
  closureX = 0;
  closureY = 0;
  closureRateX = 0;
  closureRateY = 0;
  /** Scratch: M⁻¹ F and M⁻¹ Φ_qᵀ columns. */
  readonly scratch = new Float64Array(12);
}

/**
 * Accelerations of the free chain under the loop closure at state (q, q̇) with drive-side generalised
 * torques Q_1, Q_2 on θ_1, θ_2 (N·m, friction already subtracted). `q` and `qd` are read from
 * offsets 0..3 and 4..7 of `state`. Returns the Schur complement's determinant (0 = degenerate).
 */
export function freeAccelerations(
  chain: FreeChain, state: ArrayLike<number>, torque1: number, torque2: number, stabilisationRate: number, out: FreeChainAcceleration,
): number {
  const t1 = state[0]!, b1 = state[1]!, t2 = state[2]!, b2 = state[3]!;
  const dt1 = state[4]!, db1 = state[5]!, dt2 = state[6]!, db2 = state[7]!;
  const p1 = chain.crank[0], p2 = chain.crank[1], d1 = chain.rod[0], d2 = chain.rod[1];
  const gx = chain.gravity[0], gy = chain.gravity[1];
  const ct1 = Math.cos(t1), st1 = Math.sin(t1), cb1 = Math.cos(b1), sb1 = Math.sin(b1);
  const ct2 = Math.cos(t2), st2 = Math.sin(t2), cb2 = Math.cos(b2), sb2 = Math.sin(b2);

  // Arm blocks: M_i = [a, k cos φ; k cos φ, b], φ = β − θ.
  const c1 = cb1 * ct1 + sb1 * st1; // cos(β1 − θ1)
  const s1 = sb1 * ct1 - cb1 * st1; // sin(β1 − θ1)
  const c2 = cb2 * ct2 + sb2 * st2;
  const s2 = sb2 * ct2 - cb2 * st2;
  const a1 = chain.crankInertia[0], bb1 = chain.rodInertia[0], k1 = chain.coupling[0];
  const a2 = chain.crankInertia[1], bb2 = chain.rodInertia[1], k2 = chain.coupling[1];
  const m12 = k1 * c1;
  const n12 = k2 * c2;
  const det1 = a1 * bb1 - m12 * m12;
  const det2 = a2 * bb2 - n12 * n12;

  // F = Q − h − G. e⊥(θ) = (−sin θ, cos θ), γ·e⊥(θ) = −g_x sin θ + g_y cos θ.
  const f0 = torque1 + k1 * s1 * db1 * db1 + chain.crankMoment[0] * (-gx * st1 + gy * ct1);
  const f1 = -k1 * s1 * dt1 * dt1 + chain.rodMoment[0] * (-gx * sb1 + gy * cb1);
  const f2 = torque2 + k2 * s2 * db2 * db2 + chain.crankMoment[1] * (-gx * st2 + gy * ct2);
  const f3 = -k2 * s2 * dt2 * dt2 + chain.rodMoment[1] * (-gx * sb2 + gy * cb2);

  // Unconstrained accelerations M⁻¹F.
  const u0 = (bb1 * f0 - m12 * f1) / det1;
  const u1 = (a1 * f1 - m12 * f0) / det1;
  const u2 = (bb2 * f2 - n12 * f3) / det2;
  const u3 = (a2 * f3 - n12 * f2) / det2;

  // Φ_q columns: ∂Φ/∂θ1 = p1 e⊥(θ1), ∂Φ/∂β1 = d1 e⊥(β1), ∂Φ/∂θ2 = −p2 e⊥(θ2), ∂Φ/∂β2 = −d2 e⊥(β2).
  const jx0 = -p1 * st1, jy0 = p1 * ct1;
  const jx1 = -d1 * sb1, jy1 = d1 * cb1;
  const jx2 = p2 * st2, jy2 = -p2 * ct2;
  const jx3 = d2 * sb2, jy3 = -d2 * cb2;

  // W = M⁻¹ Φ_qᵀ (4×2): column x from the row (jx0..jx3), column y from (jy0..jy3).
  const wx0 = (bb1 * jx0 - m12 * jx1) / det1;
  const wx1 = (a1 * jx1 - m12 * jx0) / det1;
  const wx2 = (bb2 * jx2 - n12 * jx3) / det2;
  const wx3 = (a2 * jx3 - n12 * jx2) / det2;
  const wy0 = (bb1 * jy0 - m12 * jy1) / det1;
  const wy1 = (a1 * jy1 - m12 * jy0) / det1;
  const wy2 = (bb2 * jy2 - n12 * jy3) / det2;
  const wy3 = (a2 * jy3 - n12 * jy2) / det2;

  const sxx = jx0 * wx0 + jx1 * wx1 + jx2 * wx2 + jx3 * wx3;
  const sxy = jx0 * wy0 + jx1 * wy1 + jx2 * wy2 + jx3 * wy3;
  const syy = jy0 * wy0 + jy1 * wy1 + jy2 * wy2 + jy3 * wy3;

  // Closure and its rate.
  const phiX = chain.pivotX[0] + p1 * ct1 + d1 * cb1 - chain.pivotX[1] - p2 * ct2 - d2 * cb2;
  const phiY = chain.pivotY[0] + p1 * st1 + d1 * sb1 - chain.pivotY[1] - p2 * st2 - d2 * sb2;
  const rateX = jx0 * dt1 + jx1 * db1 + jx2 * dt2 + jx3 * db2;
  const rateY = jy0 * dt1 + jy1 * db1 + jy2 * dt2 + jy3 * db2;

  // Right side of Φ_q q̈ = γ_c: −(Φ_q q̇)_q q̇ = p1 e(θ1) θ̇1² + d1 e(β1) β̇1² − p2 e(θ2) θ̇2² − d2 e(β2) β̇2².
  const alpha = stabilisationRate;
  const gammaX = p1 * ct1 * dt1 * dt1 + d1 * cb1 * db1 * db1 - p2 * ct2 * dt2 * dt2 - d2 * cb2 * db2 * db2 - 2 * alpha * rateX - alpha * alpha * phiX;
  const gammaY = p1 * st1 * dt1 * dt1 + d1 * sb1 * db1 * db1 - p2 * st2 * dt2 * dt2 - d2 * sb2 * db2 * db2 - 2 * alpha * rateY - alpha * alpha * phiY;

  // S λ = γ_c − Φ_q M⁻¹ F.
  const rx = gammaX - (jx0 * u0 + jx1 * u1 + jx2 * u2 + jx3 * u3);
  const ry = gammaY - (jy0 * u0 + jy1 * u1 + jy2 * u2 + jy3 * u3);
  const detS = sxx * syy - sxy * sxy;
  const lx = (syy * rx - sxy * ry) / detS;
  const ly = (sxx * ry - sxy * rx) / detS;

  const qdd = out.qdd;
  qdd[0] = u0 + wx0 * lx + wy0 * ly;
  qdd[1] = u1 + wx1 * lx + wy1 * ly;
  qdd[2] = u2 + wx2 * lx + wy2 * ly;
  qdd[3] = u3 + wx3 * lx + wy3 * ly;
  out.lambdaX = lx;
  out.lambdaY = ly;
  out.closureX = phiX;
  out.closureY = phiY;
  out.closureRateX = rateX;
  out.closureRateY = rateY;
  return detS;
}

/** Kinetic energy ½ q̇ᵀ M(q) q̇ of the free chain, J (state = q then q̇). */
export function kineticEnergy(chain: FreeChain, state: ArrayLike<number>): number {
  const t1 = state[0]!, b1 = state[1]!, t2 = state[2]!, b2 = state[3]!;
  const dt1 = state[4]!, db1 = state[5]!, dt2 = state[6]!, db2 = state[7]!;
  const arm1 = 0.5 * chain.crankInertia[0] * dt1 * dt1 + 0.5 * chain.rodInertia[0] * db1 * db1 + chain.coupling[0] * Math.cos(b1 - t1) * dt1 * db1;
  const arm2 = 0.5 * chain.crankInertia[1] * dt2 * dt2 + 0.5 * chain.rodInertia[1] * db2 * db2 + chain.coupling[1] * Math.cos(b2 - t2) * dt2 * db2;
  return arm1 + arm2;
}

/** Potential energy of gravity, J, zero with every first moment at the pivots: V = −γ·Σ m r. */
export function potentialEnergy(chain: FreeChain, state: ArrayLike<number>): number {
  const gx = chain.gravity[0], gy = chain.gravity[1];
  let v = 0;
  for (let i = 0; i < 2; i++) {
    const t = state[2 * i]!;
    const b = state[2 * i + 1]!;
    v -= chain.crankMoment[i]! * (gx * Math.cos(t) + gy * Math.sin(t));
    v -= chain.rodMoment[i]! * (gx * Math.cos(b) + gy * Math.sin(b));
  }
  return v;
}

/** |Φ(q)| = |T_1 − T_2|, m. */
export function closureError(chain: FreeChain, state: ArrayLike<number>): number {
  const t1 = state[0]!, b1 = state[1]!, t2 = state[2]!, b2 = state[3]!;
  const x = chain.pivotX[0] + chain.crank[0] * Math.cos(t1) + chain.rod[0] * Math.cos(b1) - chain.pivotX[1] - chain.crank[1] * Math.cos(t2) - chain.rod[1] * Math.cos(b2);
  const y = chain.pivotY[0] + chain.crank[0] * Math.sin(t1) + chain.rod[0] * Math.sin(b1) - chain.pivotY[1] - chain.crank[1] * Math.sin(t2) - chain.rod[1] * Math.sin(b2);
  return Math.sqrt(x * x + y * y);
}

/** End point of arm 1's tip T_1(q), m, written into out[0..1]. */
export function tipPosition(chain: FreeChain, state: ArrayLike<number>, out: Float64Array): void {
  out[0] = chain.pivotX[0] + chain.crank[0] * Math.cos(state[0]!) + chain.rod[0] * Math.cos(state[1]!);
  out[1] = chain.pivotY[0] + chain.crank[0] * Math.sin(state[0]!) + chain.rod[0] * Math.sin(state[1]!);
}

/**
 * A state (q, q̇) on the constraint manifold for actuated angles θ and rates θ̇ (rad, rad/s): the
 * pose by forward kinematics in the model's assembly mode, β_i from the rod directions, β̇_i from the
 * rod-rate rows (through the five-bar's leg model). Writes 8 values into `out`; returns false when
 * the chain cannot close there.
 */
export function consistentState(model: FiveBarBodies, theta1: number, theta2: number, dtheta1: number, dtheta2: number, out: Float64Array): boolean {
  const dynamics = new CycleDynamics(fiveBar as unknown as PlanarArchitecture<ArchitectureModelBase>);
  const status = dynamics.solveAtJoints(fiveBarLegModel(model), [theta1, theta2], [0, 0]);
  const pose = dynamics.pose;
  if (status === PoseStatus.Unreachable || pose.detA === 0) return false;
  dynamics.fromJointMotion([dtheta1, dtheta2], [0, 0]);
  out[0] = theta1;
  out[1] = Math.atan2(pose.rodDirection[1]!, pose.rodDirection[0]!);
  out[2] = theta2;
  out[3] = Math.atan2(pose.rodDirection[3]!, pose.rodDirection[2]!);
  out[4] = dtheta1;
  out[5] = dynamics.rodRate[0]!;
  out[6] = dtheta2;
  out[7] = dynamics.rodRate[1]!;
  return true;
}
