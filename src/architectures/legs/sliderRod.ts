/**
 * Leg kind: prismatic-actuated slider + rod (2-PRR and 3-PRR legs). A rail through O_i with unit
 * direction e_r,i carries the slider joint S_i = O_i + q_i e_r,i; a rod d_i joins S_i to B_i.
 * Inverse kinematics with w = B_i − O_i and working-mode sign σ_i:
 * q_i = w·e_r + σ_i √(d_i² − cross(e_r, w)²). Velocity row: u_i·Ḃ_i = s_i q̇_i with s_i = u_i·e_r,i.
 * Reach: |cross(e_r, w)| ≤ d_i (a band about the rail). Compliance along u_i: s² /k + d/(EA)_rod.
 */
import { strokeMargin, wrapAngle } from '../../core/pose.js';
import type { ArchitecturePose } from '../types.js';
import { addProximalRod, rodBodyCentre } from './bodies.js';
import type { LegBody, LegGeometry, LegInput, LegKind, LegLumped, LegModelView } from './types.js';

export const sliderRod: LegKind = {
  name: 'slider-rod',
  actuator: 'prismatic',
  // The rod perpendicular to the rail where its reach ends (the slider's motion then moves B_i not at all along the rod).
  singularAtReach: true,

  lump(leg: LegGeometry, input: LegInput): LegLumped {
    const rodSection = input.rodSection;
    const stiffness = input.drive ? input.drive.jointStiffness : Infinity;
    const mRod = rodSection.massPerLength * leg.rod;
    const slider = input.sliderMass;
    return {
      crank: 0,
      rod: leg.rod,
      proximalInertia: slider,
      proximalFirstMoment: slider,
      rodMass: mRod,
      rodComDistance: leg.rod / 2,
      rodInertiaAboutCom: (mRod * leg.rod * leg.rod) / 12,
      complianceTransverse: 1 / stiffness,
      complianceProximalAxial: 0,
      complianceRodAxial: leg.rod / (rodSection.youngsModulus * rodSection.area),
      proximalMass: slider,
    };
  },

  solve(model: LegModelView, i: number, pose: ArchitecturePose): boolean {
    const bx = pose.distalJoint[2 * i]!;
    const by = pose.distalJoint[2 * i + 1]!;
    const n = model.dof;
    const d = model.rod[i]!;
    const dirX = model.railX[i]!;
    const dirY = model.railY[i]!;
    const wx = bx - model.baseX[i]!;
    const wy = by - model.baseY[i]!;
    const offset = dirX * wy - dirY * wx; // cross(e_r, w): distance of B_i from the rail line
    const margin = d - Math.abs(offset);
    pose.legReach[i] = margin;
    if (margin < 0) return false;
    const q = wx * dirX + wy * dirY + model.sigma[i]! * Math.sqrt(Math.max(d * d - offset * offset, 0));
    pose.q[i] = q;
    const proxX = model.baseX[i]! + q * dirX;
    const proxY = model.baseY[i]! + q * dirY;
    pose.actuatorDirection[2 * i] = dirX;
    pose.actuatorDirection[2 * i + 1] = dirY;
    pose.proximalJoint[2 * i] = proxX;
    pose.proximalJoint[2 * i + 1] = proxY;
    const ux = (bx - proxX) / d;
    const uy = (by - proxY) / d;
    pose.rodDirection[2 * i] = ux;
    pose.rodDirection[2 * i + 1] = uy;
    const legSine = ux * dirX + uy * dirY;
    pose.legSine[i] = legSine;
    pose.B[i * n + i] = legSine;
    pose.A[i * n] = ux;
    pose.A[i * n + 1] = uy;
    pose.legJoint[i] = strokeMargin(q, model.jointLimits[i] ?? null);
    return true;
  },

  addBodies(model: LegModelView, i: number, pose: ArchitecturePose, gx: number, gy: number): void {
    const n = model.dof;
    const ex = pose.actuatorDirection[2 * i]!;
    const ey = pose.actuatorDirection[2 * i + 1]!;
    // Slider carriage translating along the rail.
    pose.D[i * n + i] = pose.D[i * n + i]! + model.proximalInertia[i]! + model.reflectedInertia[i]!;
    pose.tauG[i] = pose.tauG[i]! - model.proximalFirstMoment[i]! * (ex * gx + ey * gy);
    addProximalRod(model, i, pose, ex, ey, gx, gy);
  },

  compliance(model: LegModelView, i: number, s: number): number {
    const s2 = s * s;
    return s2 * model.complianceTransverse[i]! + (1 - s2) * model.complianceProximalAxial[i]! + model.complianceRodAxial[i]!;
  },

  circle(model: LegModelView, i: number, q: number, out: Float64Array): void {
    out[0] = model.baseX[i]! + q * model.railX[i]!;
    out[1] = model.baseY[i]! + q * model.railY[i]!;
    out[2] = model.rod[i]!;
  },

  // B reaches the rail while |cross(e_r, B − O)| ≤ d (the stroke is a joint limit, not a limit of reach).
  reachStrip: (model, i) => model.rod[i]!,

  reachBox(model: LegModelView, i: number, ox: number, oy: number, out: Float64Array): void {
    const d = model.rod[i]!;
    const ex = model.railX[i]!;
    const ey = model.railY[i]!;
    const range = model.jointLimits[i] ?? null;
    const qa = range ? range.min : -Infinity;
    const qb = range ? range.max : Infinity;
    // Ends of the stroke segment (an infinite coordinate only along a rail component ≠ 0).
    const end = (qv: number, e: number, o: number): number => (e === 0 ? o : o + qv * e);
    const xa = end(qa, ex, ox);
    const xb = end(qb, ex, ox);
    const ya = end(qa, ey, oy);
    const yb = end(qb, ey, oy);
    out[0] = Math.min(xa, xb) - d; out[1] = Math.max(xa, xb) + d;
    out[2] = Math.min(ya, yb) - d; out[3] = Math.max(ya, yb) + d;
  },

  basePoints(model: LegModelView, i: number): [number, number][] {
    const range = model.jointLimits[i] ?? null;
    if (!range) return [[model.baseX[i]!, model.baseY[i]!]];
    return [range.min, range.max].map((qv) => [model.baseX[i]! + qv * model.railX[i]!, model.baseY[i]! + qv * model.railY[i]!]);
  },
  reach: (model, i) => model.crank[i]! + model.rod[i]!,

  bodies(model: LegModelView, i: number, pose: ArchitecturePose): LegBody[] {
    const slider: [number, number] = [pose.proximalJoint[2 * i]!, pose.proximalJoint[2 * i + 1]!];
    return [
      { name: `slider_${i + 1}`, joint: 'slide', jointPosition: slider, axis: [model.railX[i]!, model.railY[i]!], mass: model.proximalMass[i]!, centreOfMass: slider, inertia: 0 },
      { name: `rod_${i + 1}`, joint: 'hinge', jointPosition: slider, axis: [0, 0], mass: model.rodMass[i]!, centreOfMass: rodBodyCentre(model, i, pose), inertia: model.rodInertiaAboutCom[i]! },
    ];
  },

  treeBodies(model: LegModelView, i: number) {
    const leg = i + 1;
    const d = model.rod[i]!;
    const mass = model.proximalMass[i]!;
    return {
      bodies: [
        {
          name: `slider_${leg}`, parent: null, origin: [model.baseX[i]!, model.baseY[i]!],
          joint: { name: `slide_${leg}`, kind: 'prismatic', axis: [model.railX[i]!, model.railY[i]!], actuator: i, range: model.jointLimits[i] ?? null, armature: model.reflectedInertia[i]! },
          shape: 'carriage', length: 0, mass, centreOfMass: [0, 0], inertiaAboutCom: 0,
          sites: [], parts: `slider carriage ${mass} kg, translating along rail ${leg} (it does not turn)`,
        },
        {
          name: `rod_${leg}`, parent: `slider_${leg}`, origin: [0, 0],
          joint: { name: `beta_${leg}`, kind: 'revolute', axis: [0, 0], actuator: null, range: null, armature: 0 },
          shape: 'bar', length: d, mass: model.rodMass[i]!, centreOfMass: [model.rodComDistance[i]!, 0], inertiaAboutCom: model.rodInertiaAboutCom[i]!,
          sites: [{ name: `tip_${leg}`, at: [d, 0] }], parts: 'uniform bar',
        },
      ],
      tip: [d, 0],
    } as const;
  },

  treeJoints(_model: LegModelView, i: number, pose: ArchitecturePose, out: Float64Array, k: number): number {
    out[k] = pose.q[i]!;
    out[k + 1] = wrapAngle(Math.atan2(pose.rodDirection[2 * i + 1]!, pose.rodDirection[2 * i]!));
    return k + 2;
  },
};
