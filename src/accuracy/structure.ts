/**
 * Out-of-plane mode and link loads at one pose (docs/accuracy.md). SI units.
 *
 * Out-of-plane model ("links stacked in layers"): the links of a leg lie in parallel layers joined
 * by pins whose axes are normal to the plane; such a pin turns freely in the plane but carries the
 * out-of-plane bending moments, so out of the plane a leg is a grillage of beams clamped at its base
 * (the drive output or the rail carriage, taken as rigid) and loaded at its distal pin. A force F
 * normal to the plane at the distal pin B bends a member (from P0, axis e, length L) by the moment
 * (B − X)·e F and twists it by the torque cross(e, B − P0) F (Castigliano), so the tip compliance is
 *   δ/F = Σ_members [((a)³ − (a − L)³)/(3 E I_out) + L h²/(G J)],  a = (B − P0)·e, h = |cross(e, B − P0)|
 * (cantilever tip deflection F L³/(3 E I) and twist T L/(G J): Roark's Formulas for Stress and Strain,
 * 7th ed., Table 8.1 case 1a and Table 10.1, from memory). The legs act in parallel at P (2-DOF) or
 * as three springs under a rigid platform in heave and two tilts (3-DOF; platform tilt inertias
 * I_x = I_y = I_z/2, a thin plate by the perpendicular-axis theorem). Link masses are lumped at their
 * pins (the elbow carries the crank's first moment / p and half the rod), weighted by the square of
 * the static deflection ratio (Rayleigh's method). The lowest eigenvalue gives `first_mode_out_of_plane`.
 *
 * Loads: with the rods two-force members (tension f_i > 0 along u_i), equilibrium of the end body
 * gives Aᵀ f = w, so f = A⁻ᵀ w for the payload and end-body weight w (a force at P; 3-DOF: no moment,
 * the centre of mass is P), plus a study load of size F in the worst in-plane direction:
 * |f_i| ≤ |f_g,i| + F |(A⁻¹)_{xy, i}|. A crank carries the rod force at its end: axial f (e·u),
 * root bending moment p f |s_i|. Links are not two-force members under their own weight: a rod or
 * strut tube bends between its pins as a simply supported beam under the weight component across it
 * (w L²/8), a crank as a cantilever (w p²/2 plus the elbow hub's weight at p); the pins of a rod then
 * also carry w L/2 across it. Stresses N/A + M c/I; Euler load π² E I_min / L² of a compressed rod or
 * strut (pinned–pinned).
 */
import { generalizedEigenvalues } from '../architectures/dense.js';
import type { LeggedModel } from '../architectures/legged.js';
import type { ArchitecturePose } from '../architectures/types.js';
import { cantilever, eulerLoad, simplySupportedUniform, type SectionProperties } from './sections.js';

/** Section, modulus and shear modulus of one link (null section: not known, checks give NaN). */
export interface LinkMaterial {
  readonly section: SectionProperties | null;
  readonly youngsModulus: number;
  readonly shearModulus: number;
}

/** Out-of-plane tip compliance (m/N) of one straight member under a unit force at (bx, by); accumulates the deflection at the member's far end too. */
function memberCompliance(x0: number, y0: number, x1: number, y1: number, bx: number, by: number, link: LinkMaterial, out: Float64Array): void {
  const s = link.section!;
  const length = Math.hypot(x1 - x0, y1 - y0);
  if (length === 0) return;
  const ex = (x1 - x0) / length;
  const ey = (y1 - y0) / length;
  const a = (bx - x0) * ex + (by - y0) * ey;
  const h = ex * (by - y0) - ey * (bx - x0);
  const ei = link.youngsModulus * s.outOfPlaneSecondMoment;
  const gj = link.shearModulus * s.torsionConstant;
  out[0] = out[0]! + (a ** 3 - (a - length) ** 3) / (3 * ei) + (length * h * h) / gj;
  // Deflection of the member's far end under the unit tip force: ∫ (a − s)(L − s)/EI ds (no twist term: the far end lies on the axis).
  out[1] = out[1]! + (a * length * length) / 2 / ei - length ** 3 / 6 / ei;
}

/** Per-pose structural results. */
export interface PoseStructure {
  /** Lowest out-of-plane natural frequency, Hz (NaN when a section is not known). */
  outOfPlaneMode: number;
  /** Per leg: peak axial force (N), largest bending moment (N·m), pin force (N), largest stress (Pa), Euler ratio (∞ when not compressed). */
  readonly axial: Float64Array;
  readonly pinForce: Float64Array;
  readonly bending: Float64Array;
  readonly stress: Float64Array;
  readonly euler: Float64Array;
}

export class StructureAtPose {
  private readonly n: number;
  private readonly tmp = new Float64Array(2);
  private readonly K = new Float64Array(9);
  private readonly M = new Float64Array(9);
  private readonly work = new Float64Array(64);
  private readonly eig = new Float64Array(3);
  private readonly lever = new Float64Array(3);
  readonly result: PoseStructure;

  constructor(dof: number) {
    this.n = dof;
    this.result = { outOfPlaneMode: Number.NaN, axial: new Float64Array(dof), pinForce: new Float64Array(dof), bending: new Float64Array(dof), stress: new Float64Array(dof), euler: new Float64Array(dof) };
  }

  /** Out-of-plane compliance of leg i at its distal pin (m/N) and the ratio of the elbow's deflection to it; NaN when a section is missing. */
  legCompliance(model: LeggedModel, pose: ArchitecturePose, i: number, cranks: readonly LinkMaterial[], rods: readonly LinkMaterial[]): number {
    const bx = pose.distalJoint[2 * i]!;
    const by = pose.distalJoint[2 * i + 1]!;
    const px = pose.proximalJoint[2 * i]!;
    const py = pose.proximalJoint[2 * i + 1]!;
    const t = this.tmp;
    t[0] = 0; t[1] = 0;
    const leg = model.legs[i]!.name;
    if (!rods[i]!.section || (leg === 'crank-rod' && !cranks[i]!.section)) return Number.NaN;
    if (leg === 'crank-rod') {
      memberCompliance(model.baseX[i]!, model.baseY[i]!, px, py, bx, by, cranks[i]!, t);
      const elbow = t[1]!;
      memberCompliance(px, py, bx, by, bx, by, rods[i]!, t);
      t[1] = elbow / t[0]!;
    } else {
      // Slider: the carriage on its rail is the clamp; strut: housing and tube as one member from the base pivot.
      memberCompliance(px, py, bx, by, bx, by, rods[i]!, t);
      t[1] = 0;
    }
    return t[0]!;
  }

  /** Lowest out-of-plane frequency at the pose (Hz). */
  outOfPlane(model: LeggedModel, pose: ArchitecturePose, cranks: readonly LinkMaterial[], rods: readonly LinkMaterial[]): number {
    const n = this.n;
    const K = this.K;
    const M = this.M;
    K.fill(0);
    M.fill(0);
    const end = model.platformMass + model.payloadMass;
    let k2 = 0;
    let m2 = end;
    for (let i = 0; i < n; i++) {
      const c = this.legCompliance(model, pose, i, cranks, rods);
      if (!(c > 0)) return Number.NaN;
      const ratio = this.tmp[1]!;
      const p = model.crank[i]!;
      const elbowMass = p > 0 ? model.proximalFirstMoment[i]! / p + model.rodMass[i]! / 2 : 0;
      const strutHousing = model.legs[i]!.name === 'strut' ? model.proximalMass[i]! / 2 : 0;
      const mass = model.rodMass[i]! / 2 + strutHousing + elbowMass * ratio * ratio;
      if (n === 2) {
        k2 += 1 / c;
        m2 += mass;
        continue;
      }
      const rx = pose.distalJoint[2 * i]! - pose.x;
      const ry = pose.distalJoint[2 * i + 1]! - pose.y;
      // Deflection at B_i for heave w and tilts (θx, θy): w + θx r_y − θy r_x.
      const v = this.lever;
      v[0] = 1; v[1] = ry; v[2] = -rx;
      for (let a = 0; a < 3; a++) for (let b = 0; b < 3; b++) {
        K[a * 3 + b] = K[a * 3 + b]! + (v[a]! * v[b]!) / c;
        M[a * 3 + b] = M[a * 3 + b]! + mass * v[a]! * v[b]!;
      }
    }
    if (n === 2) return m2 > 0 ? Math.sqrt(k2 / m2) / (2 * Math.PI) : Number.NaN;
    M[0] = M[0]! + end;
    M[4] = M[4]! + model.platformInertia / 2;
    M[8] = M[8]! + model.platformInertia / 2;
    if (!generalizedEigenvalues(3, K, M, this.work, this.eig)) return Number.NaN;
    return Math.sqrt(Math.max(this.eig[0]!, 0)) / (2 * Math.PI);
  }

  /**
   * Leg forces and link stresses at the pose, from A⁻¹ (row-major n×n, already computed). `endLoad` N
   * in the worst in-plane direction; gravity (m/s²) acts on the end body and payload, and along a duty
   * cycle their inertia at the end point's acceleration (ax, ay; m/s²) and the platform's (aphi, rad/s²).
   */
  loads(
    model: LeggedModel, pose: ArchitecturePose, ainv: Float64Array, endLoad: number, cranks: readonly LinkMaterial[], rods: readonly LinkMaterial[],
    ax = 0, ay = 0, aphi = 0,
  ): void {
    const n = this.n;
    const r = this.result;
    const end = model.platformMass + model.payloadMass;
    // d'Alembert: the end body (and payload) at acceleration a loads the rods like a weight m (g − a); a
    // platform's angular acceleration adds the moment −I φ̈ (3-DOF; its centre of mass is P).
    const wx = end * (model.gravity[0] - ax);
    const wy = end * (model.gravity[1] - ay);
    const wm = n === 3 ? -model.platformInertia * aphi : 0;
    for (let i = 0; i < n; i++) {
      const gx = ainv[i]!;
      const gy = ainv[n + i]!;
      const fg = gx * wx + gy * wy + (n === 3 ? ainv[2 * n + i]! * wm : 0);
      const spread = endLoad * Math.hypot(gx, gy);
      const peak = Math.abs(fg) + spread;
      const compression = Math.max(0, spread - fg);
      const leg = model.legs[i]!.name;
      const p = model.crank[i]!;
      const ex = pose.actuatorDirection[2 * i]!;
      const ey = pose.actuatorDirection[2 * i + 1]!;
      const ux = pose.rodDirection[2 * i]!;
      const uy = pose.rodDirection[2 * i + 1]!;
      const g = Math.hypot(model.gravity[0], model.gravity[1]);
      // Weight per length across the rod (N/m) and across the crank; the crank's hub weight acts at its end.
      const rodLength = leg === 'strut' ? pose.q[i]! : model.rod[i]!;
      const rodAcross = model.rodMass[i]! > 0 && rodLength > 0 ? (model.rodMass[i]! / Math.max(model.rod[i]!, 1e-12)) * Math.abs(ux * model.gravity[1] - uy * model.gravity[0]) : 0;
      const rodMoment = simplySupportedUniform(rodAcross, rodLength, 1).maxMoment;
      // Crank with hub: first moment m_c p/2 + m_h p and mass m_c + m_h give the hub 2 S/p − m and the bar the rest.
      const hub = leg === 'crank-rod' && p > 0 ? (2 * model.proximalFirstMoment[i]!) / p - model.proximalMass[i]! : 0;
      const crankMass = leg === 'crank-rod' ? model.proximalMass[i]! - hub : 0;
      const crankAcross = leg === 'crank-rod' && p > 0 ? Math.abs(ex * model.gravity[1] - ey * model.gravity[0]) / Math.max(g, 1e-300) : 0;
      const moment = leg === 'crank-rod' ? cantilever(peak * Math.abs(pose.legSine[i]!) + hub * g * crankAcross, (crankMass / p) * g * crankAcross, p, 1).rootMoment : 0;
      r.axial[i] = peak;
      r.bending[i] = Math.max(moment, rodMoment);
      r.pinForce[i] = peak + (rodAcross * rodLength) / 2;
      const rod = rods[i]!.section;
      let stress = rod ? peak / rod.area + (rodMoment * rod.inPlaneHalfDepth) / rod.inPlaneSecondMoment : Number.NaN;
      if (leg === 'crank-rod') {
        const crank = cranks[i]!.section;
        const crankStress = crank ? (peak * Math.abs(ex * ux + ey * uy)) / crank.area + (moment * crank.inPlaneHalfDepth) / crank.inPlaneSecondMoment : Number.NaN;
        stress = Math.max(stress, crankStress);
        if (Number.isNaN(crankStress)) stress = Number.NaN;
      }
      r.stress[i] = stress;
      const length = rodLength;
      const inertia = rod ? Math.min(rod.inPlaneSecondMoment, rod.outOfPlaneSecondMoment) : Number.NaN;
      r.euler[i] = compression > 0 ? eulerLoad(rods[i]!.youngsModulus, inertia, length) / compression : Infinity;
    }
  }
}
