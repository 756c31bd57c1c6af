/**
 * Leg kind: revolute-actuated crank + rod (five-bar and 3-RRR legs). Pivot A_i, crank p_i at angle
 * θ_i = q_i to the elbow C_i = A_i + p_i e(θ_i), rod d_i from C_i to B_i.
 * Inverse kinematics with working-mode sign σ_i (law of cosines, ρ = |B_i − A_i|):
 * θ_i = atan2(B_i − A_i) + σ_i acos((p² + ρ² − d²)/(2pρ)). Velocity row: u_i·Ḃ_i = p_i s_i θ̇_i with
 * u_i = (B_i − C_i)/d_i and s_i = cross(e(θ_i), u_i). Reach: the annulus |p − d| ≤ ρ ≤ p + d.
 * Compliance along u_i: s² (p²/k + p³/(3EI)) + (1 − s²) p/(EA)_crank + d/(EA)_rod.
 */
import { angleInRange, jointRangeMargin, wrapAngle } from '../../core/pose.js';
import type { ArchitecturePose } from '../types.js';
import { addProximalRod, rodBodyCentre } from './bodies.js';
import type { LegBody, LegGeometry, LegInput, LegKind, LegLumped, LegModelView } from './types.js';

/** The joint margin (rad) written when the angle is skipped (ArchitecturePose.marginOnly): a lower bound. */
export const JOINT_FAR = 1;

export const crankRod: LegKind = {
  name: 'crank-rod',
  actuator: 'revolute',
  // Crank and rod in line at both edges of the reach annulus.
  singularAtReach: true,

  lump(leg: LegGeometry, input: LegInput): LegLumped {
    const p = leg.crank ?? 0;
    const section = input.crankSection;
    const rodSection = input.rodSection;
    const stiffness = input.drive ? input.drive.jointStiffness : Infinity;
    const hub = input.elbowHubMass;
    const mCrank = section.massPerLength * p;
    const mRod = rodSection.massPerLength * leg.rod;
    return {
      crank: p,
      rod: leg.rod,
      // Uniform bar about one end (m p²/3, first moment m p/2) plus the elbow hub at distance p.
      proximalInertia: (mCrank * p * p) / 3 + hub * p * p,
      proximalFirstMoment: (mCrank * p) / 2 + hub * p,
      rodMass: mRod,
      rodComDistance: leg.rod / 2,
      rodInertiaAboutCom: (mRod * leg.rod * leg.rod) / 12,
      complianceTransverse: (p * p) / stiffness + (p * p * p) / (3 * section.youngsModulus * section.secondMoment),
      complianceProximalAxial: p / (section.youngsModulus * section.area),
      complianceRodAxial: leg.rod / (rodSection.youngsModulus * rodSection.area),
      proximalMass: mCrank + hub,
    };
  },

  solve(model: LegModelView, i: number, pose: ArchitecturePose): boolean {
    const bx = pose.distalJoint[2 * i]!;
    const by = pose.distalJoint[2 * i + 1]!;
    const n = model.dof;
    const p = model.crank[i]!;
    const d = model.rod[i]!;
    const wx = bx - model.baseX[i]!;
    const wy = by - model.baseY[i]!;
    const rho = Math.sqrt(wx * wx + wy * wy);
    const margin = Math.min(rho - Math.abs(p - d), p + d - rho);
    pose.legReach[i] = margin;
    if (margin < 0 || rho === 0) return false;
    let cosAlpha = (p * p + rho * rho - d * d) / (2 * p * rho);
    cosAlpha = cosAlpha > 1 ? 1 : cosAlpha < -1 ? -1 : cosAlpha;
    const sinAlpha = model.sigma[i]! * Math.sqrt(1 - cosAlpha * cosAlpha);
    const nx = wx / rho;
    const ny = wy / rho;
    const dirX = nx * cosAlpha - ny * sinAlpha;
    const dirY = ny * cosAlpha + nx * sinAlpha;
    // Joint more than 1 rad inside its range (the crank direction within half span − 1 rad of the
    // range's middle: a dot product against a cosine): a caller reading only margins needs no angle.
    const far = pose.marginOnly && dirX * pose.jointTest[3 * i]! + dirY * pose.jointTest[3 * i + 1]! > pose.jointTest[3 * i + 2]!;
    const theta = far ? Number.NaN : Math.atan2(dirY, dirX);
    pose.q[i] = theta;
    const proxX = model.baseX[i]! + p * dirX;
    const proxY = model.baseY[i]! + p * dirY;
    pose.actuatorDirection[2 * i] = dirX;
    pose.actuatorDirection[2 * i + 1] = dirY;
    pose.proximalJoint[2 * i] = proxX;
    pose.proximalJoint[2 * i + 1] = proxY;
    const ux = (bx - proxX) / d;
    const uy = (by - proxY) / d;
    pose.rodDirection[2 * i] = ux;
    pose.rodDirection[2 * i + 1] = uy;
    const legSine = dirX * uy - dirY * ux;
    pose.legSine[i] = legSine;
    pose.B[i * n + i] = p * legSine;
    pose.A[i * n] = ux;
    pose.A[i * n + 1] = uy;
    pose.legJoint[i] = far ? JOINT_FAR : jointRangeMargin(theta, model.jointLimits[i] ?? null);
    return true;
  },

  /**
   * The unit direction of the middle of the joint's range and cos(half span − JOINT_FAR); −2 (always
   * skip) when unlimited; nothing (never skip) for a span of 2π or more or a half span within
   * JOINT_FAR. Derived here: inside a range of span < 2π the joint margin is half the span less the
   * angle to the middle, so it exceeds JOINT_FAR exactly when the crank's direction has a dot product
   * with the middle's direction above that cosine (the test in `solve`).
   */
  farJointTest(model: LegModelView, i: number, out: Float64Array): boolean {
    const range = model.jointLimits[i] ?? null;
    if (!range) {
      // Unlimited: the margin is +∞, always more than JOINT_FAR (the dot product 0 exceeds −2).
      out[3 * i + 2] = -2;
      return true;
    }
    const half = (range.max - range.min) / 2;
    if (!(half > JOINT_FAR) || !(2 * half < 2 * Math.PI)) return false;
    const mid = range.min + half;
    out[3 * i] = Math.cos(mid);
    out[3 * i + 1] = Math.sin(mid);
    out[3 * i + 2] = Math.cos(half - JOINT_FAR);
    return true;
  },

  addBodies(model: LegModelView, i: number, pose: ArchitecturePose, gx: number, gy: number): void {
    const n = model.dof;
    const ex = pose.actuatorDirection[2 * i]!;
    const ey = pose.actuatorDirection[2 * i + 1]!;
    const p = model.crank[i]!;
    // Crank (with elbow hub) about its pivot; the elbow moves at p e⊥(θ_i) per unit θ̇_i.
    pose.D[i * n + i] = pose.D[i * n + i]! + model.proximalInertia[i]! + model.reflectedInertia[i]!;
    pose.tauG[i] = pose.tauG[i]! - model.proximalFirstMoment[i]! * (-ey * gx + ex * gy);
    addProximalRod(model, i, pose, -p * ey, p * ex, gx, gy);
  },

  compliance(model: LegModelView, i: number, s: number): number {
    const s2 = s * s;
    return s2 * model.complianceTransverse[i]! + (1 - s2) * model.complianceProximalAxial[i]! + model.complianceRodAxial[i]!;
  },

  circle(model: LegModelView, i: number, q: number, out: Float64Array): void {
    out[0] = model.baseX[i]! + model.crank[i]! * Math.cos(q);
    out[1] = model.baseY[i]! + model.crank[i]! * Math.sin(q);
    out[2] = model.rod[i]!;
  },

  reachBox(model: LegModelView, i: number, ox: number, oy: number, out: Float64Array): void {
    const reach = model.crank[i]! + model.rod[i]!;
    out[0] = ox - reach; out[1] = ox + reach; out[2] = oy - reach; out[3] = oy + reach;
  },

  // The annulus |p − d| ≤ |B − A| ≤ p + d.
  reachRing(model: LegModelView, i: number, out: Float64Array): boolean {
    out[0] = Math.abs(model.crank[i]! - model.rod[i]!);
    out[1] = model.crank[i]! + model.rod[i]!;
    return true;
  },

  basePoints: (model, i) => [[model.baseX[i]!, model.baseY[i]!]],
  reach: (model, i) => model.crank[i]! + model.rod[i]!,

  bodies(model: LegModelView, i: number, pose: ArchitecturePose): LegBody[] {
    const base: [number, number] = [model.baseX[i]!, model.baseY[i]!];
    const elbow: [number, number] = [pose.proximalJoint[2 * i]!, pose.proximalJoint[2 * i + 1]!];
    const mass = model.proximalMass[i]!;
    // Crank with elbow hub: centre of mass from its first moment, inertia about it by the parallel-axis theorem.
    const c = mass > 0 ? model.proximalFirstMoment[i]! / mass : 0;
    const ex = pose.actuatorDirection[2 * i]!;
    const ey = pose.actuatorDirection[2 * i + 1]!;
    return [
      { name: `crank_${i + 1}`, joint: 'hinge', jointPosition: base, axis: [0, 0], mass, centreOfMass: [base[0] + c * ex, base[1] + c * ey], inertia: model.proximalInertia[i]! - mass * c * c },
      { name: `rod_${i + 1}`, joint: 'hinge', jointPosition: elbow, axis: [0, 0], mass: model.rodMass[i]!, centreOfMass: rodBodyCentre(model, i, pose), inertia: model.rodInertiaAboutCom[i]! },
    ];
  },

  treeBodies(model: LegModelView, i: number) {
    const leg = i + 1;
    const p = model.crank[i]!;
    const d = model.rod[i]!;
    const mass = model.proximalMass[i]!;
    const c = mass > 0 ? model.proximalFirstMoment[i]! / mass : 0;
    return {
      bodies: [
        {
          name: `crank_${leg}`, parent: null, origin: [model.baseX[i]!, model.baseY[i]!],
          joint: { name: `theta_${leg}`, kind: 'revolute', axis: [0, 0], actuator: i, range: model.jointLimits[i] ?? null, armature: model.reflectedInertia[i]! },
          shape: 'bar', length: p, mass, centreOfMass: [c, 0], inertiaAboutCom: Math.max(model.proximalInertia[i]! - mass * c * c, 0),
          sites: [], parts: 'uniform bar plus elbow hub at the crank end',
        },
        {
          name: `rod_${leg}`, parent: `crank_${leg}`, origin: [p, 0],
          joint: { name: `elbow_${leg}`, kind: 'revolute', axis: [0, 0], actuator: null, range: null, armature: 0 },
          shape: 'bar', length: d, mass: model.rodMass[i]!, centreOfMass: [model.rodComDistance[i]!, 0], inertiaAboutCom: model.rodInertiaAboutCom[i]!,
          sites: [{ name: `tip_${leg}`, at: [d, 0] }], parts: 'uniform bar',
        },
      ],
      tip: [d, 0],
    } as const;
  },

  treeJoints(model: LegModelView, i: number, pose: ArchitecturePose, out: Float64Array, k: number): number {
    const theta = angleInRange(pose.q[i]!, model.jointLimits[i] ?? null);
    out[k] = theta;
    out[k + 1] = wrapAngle(Math.atan2(pose.rodDirection[2 * i + 1]!, pose.rodDirection[2 * i]!) - theta);
    return k + 2;
  },
};
