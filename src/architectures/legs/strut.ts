/**
 * Leg kind: actuated telescoping strut between two pivots (3-RPR legs). A housing hinged at the base
 * pivot A_i and a tube that slides in it and is pinned to B_i; the actuated joint is the strut length
 * q_i = |B_i − A_i| (m). Inverse kinematics: q_i = ρ = |B_i − A_i|, u_i = (B_i − A_i)/q_i (one solution:
 * the working-mode sign has no effect). Velocity row: q̇_i = u_i·Ḃ_i, so A row u_iᵀ (plus
 * cross(r_i, u_i) for a platform) and B_ii = 1; the leg sine is 1 (no leg singularity inside the
 * stroke: the leg's singularity is the stroke end, where B_i cannot move outward along u_i).
 * Reach: the stroke [q_min, q_max] of the joint limits (the annulus about A_i); unlimited: ρ > 0.
 * Bodies: housing, uniform bar of length h = q_min (the retracted length; 0 without a stroke) and
 * the study's slider mass, turning with the strut angle β_i about A_i; tube, uniform bar of length h
 * with the rod section, its far end at B_i. Rates: β̇_i = cross(u_i, Ḃ_i)/q_i; a point at distance s
 * from A_i moves at ṡ u_i + s β̇_i u_i⊥. Compliance along u_i: 1/k of the drive + h/(EA) of the tube.
 */
import { strokeMargin, wrapAngle } from '../../core/pose.js';
import type { ArchitecturePose } from '../types.js';
import { addBody, VBX, VBY, VX, VY, W } from './bodies.js';
import type { LegBody, LegGeometry, LegInput, LegKind, LegLumped, LegModelView } from './types.js';

export const strut: LegKind = {
  name: 'strut',
  actuator: 'prismatic',
  // Its reach ends at the stroke's limits, where 1/κ need not vanish.
  singularAtReach: false,

  lump(_leg: LegGeometry, input: LegInput): LegLumped {
    const h = input.jointLimit ? input.jointLimit.min : 0;
    const tube = input.rodSection;
    const stiffness = input.drive ? input.drive.jointStiffness : Infinity;
    const housing = input.sliderMass;
    const mTube = tube.massPerLength * h;
    return {
      crank: 0,
      rod: h,
      proximalInertia: (housing * h * h) / 3,
      proximalFirstMoment: (housing * h) / 2,
      rodMass: mTube,
      rodComDistance: h / 2,
      rodInertiaAboutCom: (mTube * h * h) / 12,
      complianceTransverse: 1 / stiffness,
      complianceProximalAxial: 0,
      complianceRodAxial: h > 0 ? h / (tube.youngsModulus * tube.area) : 0,
      proximalMass: housing,
    };
  },

  solve(model: LegModelView, i: number, pose: ArchitecturePose): boolean {
    const bx = pose.distalJoint[2 * i]!;
    const by = pose.distalJoint[2 * i + 1]!;
    const n = model.dof;
    const wx = bx - model.baseX[i]!;
    const wy = by - model.baseY[i]!;
    const rho = Math.sqrt(wx * wx + wy * wy);
    const range = model.jointLimits[i] ?? null;
    const stroke = strokeMargin(rho, range);
    const margin = range ? stroke : rho;
    pose.legReach[i] = margin;
    if (margin < 0 || rho === 0) return false;
    pose.q[i] = rho;
    const ux = wx / rho;
    const uy = wy / rho;
    pose.actuatorDirection[2 * i] = ux;
    pose.actuatorDirection[2 * i + 1] = uy;
    pose.proximalJoint[2 * i] = model.baseX[i]!;
    pose.proximalJoint[2 * i + 1] = model.baseY[i]!;
    pose.rodDirection[2 * i] = ux;
    pose.rodDirection[2 * i + 1] = uy;
    pose.legSine[i] = 1;
    pose.B[i * n + i] = 1;
    pose.A[i * n] = ux;
    pose.A[i * n + 1] = uy;
    pose.legJoint[i] = stroke;
    return true;
  },

  addBodies(model: LegModelView, i: number, pose: ArchitecturePose, gx: number, gy: number): void {
    const n = model.dof;
    const v = pose.work2;
    const ux = pose.rodDirection[2 * i]!;
    const uy = pose.rodDirection[2 * i + 1]!;
    const q = pose.q[i]!;
    // Strut angle rate per unit joint rate: β̇ = cross(u, V_B)/q.
    for (let k = 0; k < n; k++) pose.rodRate[i * n + k] = (ux * v[VBY + k]! - uy * v[VBX + k]!) / q;
    // Drive inertia along the strut.
    pose.D[i * n + i] = pose.D[i * n + i]! + model.reflectedInertia[i]!;
    // Housing: turns about A_i (inertia about A_i, first moment along u_i).
    const inertiaA = model.proximalInertia[i]!;
    const firstMoment = model.proximalFirstMoment[i]!;
    const perpendicularGravity = -uy * gx + ux * gy;
    for (let a = 0; a < n; a++) {
      const wa = pose.rodRate[i * n + a]!;
      for (let b = a; b < n; b++) pose.D[a * n + b] = pose.D[a * n + b]! + inertiaA * wa * pose.rodRate[i * n + b]!;
      pose.tauG[a] = pose.tauG[a]! - firstMoment * perpendicularGravity * wa;
    }
    // Tube: centre of mass at s = q − c from A_i; velocity δ_ik u + s w_k u⊥.
    const s = q - model.rodComDistance[i]!;
    for (let k = 0; k < n; k++) {
      const w = pose.rodRate[i * n + k]!;
      v[VX + k] = (k === i ? ux : 0) - s * uy * w;
      v[VY + k] = (k === i ? uy : 0) + s * ux * w;
      v[W + k] = w;
    }
    addBody(n, pose, model.rodMass[i]!, model.rodInertiaAboutCom[i]!, gx, gy);
  },

  compliance(model: LegModelView, i: number, s: number): number {
    const s2 = s * s;
    return s2 * model.complianceTransverse[i]! + (1 - s2) * model.complianceProximalAxial[i]! + model.complianceRodAxial[i]!;
  },

  circle(model: LegModelView, i: number, q: number, out: Float64Array): void {
    out[0] = model.baseX[i]!;
    out[1] = model.baseY[i]!;
    out[2] = q;
  },

  reachBox(model: LegModelView, i: number, ox: number, oy: number, out: Float64Array): void {
    const reach = model.jointLimits[i]?.max ?? Infinity;
    out[0] = ox - reach; out[1] = ox + reach; out[2] = oy - reach; out[3] = oy + reach;
  },

  // The stroke [min, max] of the strut length |B − A| (no ring without a stroke).
  reachRing(model: LegModelView, i: number, out: Float64Array): boolean {
    const stroke = model.jointLimits[i] ?? null;
    if (!stroke) return false;
    out[0] = Math.max(stroke.min, 0);
    out[1] = stroke.max;
    return true;
  },

  basePoints: (model, i) => [[model.baseX[i]!, model.baseY[i]!]],
  reach: (model, i) => model.jointLimits[i]?.max ?? Infinity,

  bodies(model: LegModelView, i: number, pose: ArchitecturePose): LegBody[] {
    const a: [number, number] = [model.baseX[i]!, model.baseY[i]!];
    const u: [number, number] = [pose.rodDirection[2 * i]!, pose.rodDirection[2 * i + 1]!];
    const h = model.rod[i]!;
    const mass = model.proximalMass[i]!;
    const s = pose.q[i]! - model.rodComDistance[i]!;
    return [
      { name: `housing_${i + 1}`, joint: 'hinge', jointPosition: a, axis: [0, 0], mass, centreOfMass: [a[0] + (h / 2) * u[0], a[1] + (h / 2) * u[1]], inertia: (mass * h * h) / 12 },
      { name: `tube_${i + 1}`, joint: 'slide', jointPosition: a, axis: u, mass: model.rodMass[i]!, centreOfMass: [a[0] + s * u[0], a[1] + s * u[1]], inertia: model.rodInertiaAboutCom[i]! },
    ];
  },

  /**
   * Tree: the housing swings about A_i (passive hinge swing_i, absolute strut angle), the tube slides
   * in it (actuated slide strut_i = q_i, the strut length): the tube's frame sits at its far pin B_i,
   * q_i along the housing's x axis from A_i, and the tube runs back from there (a reversed bar).
   */
  treeBodies(model: LegModelView, i: number) {
    const leg = i + 1;
    const h = model.rod[i]!;
    const mass = model.proximalMass[i]!;
    return {
      bodies: [
        {
          name: `housing_${leg}`, parent: null, origin: [model.baseX[i]!, model.baseY[i]!],
          joint: { name: `swing_${leg}`, kind: 'revolute', axis: [0, 0], actuator: null, range: null, armature: 0 },
          shape: 'bar', length: h, mass, centreOfMass: [h / 2, 0], inertiaAboutCom: (mass * h * h) / 12,
          sites: [], parts: 'strut housing, uniform bar hinged at the base pivot',
        },
        {
          name: `tube_${leg}`, parent: `housing_${leg}`, origin: [0, 0],
          joint: { name: `strut_${leg}`, kind: 'prismatic', axis: [1, 0], actuator: i, range: model.jointLimits[i] ?? null, armature: model.reflectedInertia[i]! },
          shape: 'bar', reversed: true, length: h, mass: model.rodMass[i]!, centreOfMass: [-model.rodComDistance[i]!, 0], inertiaAboutCom: model.rodInertiaAboutCom[i]!,
          sites: [{ name: `tip_${leg}`, at: [0, 0] }], parts: 'strut tube, uniform bar pinned to the platform at its far end',
        },
      ],
      tip: [0, 0],
    } as const;
  },

  treeJoints(_model: LegModelView, i: number, pose: ArchitecturePose, out: Float64Array, k: number): number {
    out[k] = wrapAngle(Math.atan2(pose.rodDirection[2 * i + 1]!, pose.rodDirection[2 * i]!));
    out[k + 1] = pose.q[i]!;
    return k + 2;
  },
};
