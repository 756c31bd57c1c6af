/**
 * The existing five-bar engine (src/mechanics/fivebar.ts) behind the architecture interface: the
 * adapter builds a FiveBarModel from a ModelInput, runs the engine's own solvePose, poseDynamics and
 * forwardKinematics, and copies the results into the generic ArchitecturePose. It changes no number:
 * it shows that the interface fits the architecture the pipeline already runs.
 */
import {
  FiveBarPose,
  footprint as fiveBarFootprint,
  forwardKinematics as fiveBarForwardKinematics,
  poseDynamics as fiveBarPoseDynamics,
  reachableBox as fiveBarReachableBox,
  solvePose as fiveBarSolvePose,
  type FiveBarModel,
} from '../mechanics/fivebar.js';
import { leggedBodyTree, leggedTreeJoints, type LegChain } from './legged.js';
import {
  allWorkingModes,
  ArchitecturePose,
  parameterValue,
  PoseStatus,
  RIGID_MASSLESS,
  signsOfMode,
  type ArchitectureModelBase,
  type ModelInput,
  type PlanarArchitecture,
  type PlaneBox,
} from './types.js';

export const FIVE_BAR_ARCHITECTURE_PARAMETERS = [
  { name: 'base_span', kind: 'length', description: 'horizontal distance between the two actuated pivots' },
  { name: 'base_rise', kind: 'length', description: 'height of pivot 2 above pivot 1' },
  { name: 'crank_1', kind: 'length', description: 'crank length of leg 1' },
  { name: 'rod_1', kind: 'length', description: 'rod length of leg 1' },
  { name: 'crank_2', kind: 'length', description: 'crank length of leg 2' },
  { name: 'rod_2', kind: 'length', description: 'rod length of leg 2' },
] as const;

export interface FiveBarArchitectureModel extends ArchitectureModelBase {
  /** The engine's own model. */
  readonly engine: FiveBarModel;
  /** Cranks, rods and hubs, payload excluded, kg. */
  readonly movingMass: number;
}

/** The pose made by the adapter: the generic pose plus the engine's own scratch. */
export class FiveBarAdapterPose extends ArchitecturePose {
  readonly engine = new FiveBarPose();
  constructor() {
    super(2);
  }
}

function enginePose(pose: ArchitecturePose): FiveBarPose {
  if (!(pose instanceof FiveBarAdapterPose)) throw new Error('five-bar: use a pose made by fiveBar.createPose()');
  return pose.engine;
}

/** Five-bar model from a generic input (the same lumping as src/mechanics/designSpace.ts). */
export function buildFiveBarArchitectureModel(input: ModelInput): FiveBarArchitectureModel {
  const span = parameterValue(input, 'base_span');
  const rise = parameterValue(input, 'base_rise');
  const crank = [parameterValue(input, 'crank_1'), parameterValue(input, 'crank_2')] as const;
  const rod = [parameterValue(input, 'rod_1'), parameterValue(input, 'rod_2')] as const;
  const [s1, s2] = signsOfMode(input.workingMode, 2) as [number, number];
  const cranks = [input.cranks?.[0] ?? RIGID_MASSLESS, input.cranks?.[1] ?? RIGID_MASSLESS] as const;
  const rods = [input.rods[0]!, input.rods[1]!] as const;
  const hub = input.elbowHubMass ?? 0;
  const drives = input.drives;
  const crankMass = [cranks[0].massPerLength * crank[0], cranks[1].massPerLength * crank[1]] as const;
  const rodMass = [rods[0].massPerLength * rod[0], rods[1].massPerLength * rod[1]] as const;
  const stiffness = (i: 0 | 1): number => (drives ? drives[i]!.jointStiffness : Infinity);
  const bending = (i: 0 | 1): number => crank[i] ** 2 / stiffness(i) + crank[i] ** 3 / (3 * cranks[i].youngsModulus * cranks[i].secondMoment);
  const limits = input.jointLimits ?? [null, null];
  const engine: FiveBarModel = {
    pivotX: [-span / 2, span / 2],
    pivotY: [0, rise],
    crank,
    rod,
    sigma: [s1, s2],
    assembly: input.assembly,
    jointLimits: [limits[0] ?? null, limits[1] ?? null],
    crankInertiaAboutPivot: [(crankMass[0] * crank[0] ** 2) / 3 + hub * crank[0] ** 2, (crankMass[1] * crank[1] ** 2) / 3 + hub * crank[1] ** 2],
    crankFirstMoment: [(crankMass[0] * crank[0]) / 2 + hub * crank[0], (crankMass[1] * crank[1]) / 2 + hub * crank[1]],
    rodMass,
    rodComDistance: [rod[0] / 2, rod[1] / 2],
    rodInertiaAboutCom: [(rodMass[0] * rod[0] ** 2) / 12, (rodMass[1] * rod[1] ** 2) / 12],
    endMass: (input.endHubMass ?? 0) + input.payloadMass,
    reflectedInertia: [drives ? drives[0]!.reflectedInertia : 0, drives ? drives[1]!.reflectedInertia : 0],
    gravity: input.gravity,
    complianceBending: [bending(0), bending(1)],
    complianceCrankAxial: [crank[0] / (cranks[0].youngsModulus * cranks[0].area), crank[1] / (cranks[1].youngsModulus * cranks[1].area)],
    complianceRodAxial: [rod[0] / (rods[0].youngsModulus * rods[0].area), rod[1] / (rods[1].youngsModulus * rods[1].area)],
  };
  return {
    architecture: 'five-bar',
    dof: 2,
    actuators: ['revolute', 'revolute'],
    assembly: input.assembly,
    characteristicLength: 1,
    drives,
    engine,
    movingMass: crankMass[0] + crankMass[1] + rodMass[0] + rodMass[1] + 2 * hub + (input.endHubMass ?? 0),
  };
}

/** Wraps an engine model that already exists (e.g. from buildFiveBarModel of a study). */
export function wrapFiveBarModel(engine: FiveBarModel, movingMass: number, drives: ArchitectureModelBase['drives'] = null): FiveBarArchitectureModel {
  return { architecture: 'five-bar', dof: 2, actuators: ['revolute', 'revolute'], assembly: engine.assembly, characteristicLength: 1, drives, engine, movingMass };
}

/** The engine model as a leg chain (two crank legs, the end mass on rod 1), for the body tree. */
function fiveBarLegChain(model: FiveBarModel): LegChain {
  return {
    dof: 2,
    actuators: ['revolute', 'revolute'],
    baseX: model.pivotX,
    baseY: model.pivotY,
    railX: [1, 1],
    railY: [0, 0],
    crank: model.crank,
    rod: model.rod,
    platformX: [0, 0],
    platformY: [0, 0],
    jointLimits: model.jointLimits,
    proximalInertia: model.crankInertiaAboutPivot,
    proximalFirstMoment: model.crankFirstMoment,
    rodMass: model.rodMass,
    rodComDistance: model.rodComDistance,
    rodInertiaAboutCom: model.rodInertiaAboutCom,
    // The engine keeps end hub and payload as one point mass at P.
    platformMass: model.endMass,
    platformInertia: 0,
    payloadMass: 0,
    reflectedInertia: model.reflectedInertia,
    gravity: model.gravity,
  };
}

/** Reach margin of leg i at P, m (the engine's annulus rule: min(ρ − |p − d|, p + d − ρ)). */
function legReach(model: FiveBarModel, i: 0 | 1, x: number, y: number): number {
  const rho = Math.hypot(x - model.pivotX[i], y - model.pivotY[i]);
  return Math.min(rho - Math.abs(model.crank[i] - model.rod[i]), model.crank[i] + model.rod[i] - rho);
}

function copyKinematics(model: FiveBarModel, e: FiveBarPose, pose: ArchitecturePose): void {
  pose.x = e.x;
  pose.y = e.y;
  pose.legReachMargin[0] = legReach(model, 0, e.x, e.y);
  pose.legReachMargin[1] = legReach(model, 1, e.x, e.y);
  pose.phi = 0;
  pose.reachMargin = e.reachMargin;
  pose.jointMargin = e.jointMargin;
  pose.status = e.status;
  if (e.status === PoseStatus.Unreachable) return;
  pose.q[0] = e.theta1; pose.q[1] = e.theta2;
  pose.actuatorDirection[0] = e.e1x; pose.actuatorDirection[1] = e.e1y;
  pose.actuatorDirection[2] = e.e2x; pose.actuatorDirection[3] = e.e2y;
  pose.proximalJoint[0] = e.c1x; pose.proximalJoint[1] = e.c1y;
  pose.proximalJoint[2] = e.c2x; pose.proximalJoint[3] = e.c2y;
  pose.distalJoint[0] = e.x; pose.distalJoint[1] = e.y;
  pose.distalJoint[2] = e.x; pose.distalJoint[3] = e.y;
  pose.rodDirection[0] = e.u1x; pose.rodDirection[1] = e.u1y;
  pose.rodDirection[2] = e.u2x; pose.rodDirection[3] = e.u2y;
  pose.legSine[0] = e.s1; pose.legSine[1] = e.s2;
  pose.detA = e.detA;
  pose.mechanismSine = e.detA;
  pose.inverseCondition = e.inverseCondition;
  pose.A[0] = e.u1x; pose.A[1] = e.u1y; pose.A[2] = e.u2x; pose.A[3] = e.u2y;
  pose.B[0] = model.crank[0] * e.s1; pose.B[1] = 0; pose.B[2] = 0; pose.B[3] = model.crank[1] * e.s2;
  const J = [e.j11, e.j12, e.j21, e.j22];
  const G = [e.g11, e.g12, e.g21, e.g22];
  for (let k = 0; k < 4; k++) {
    pose.J[k] = J[k]!;
    pose.Jh[k] = J[k]!;
    pose.Jinv[k] = G[k]!;
    pose.Jhinv[k] = G[k]!;
  }
}

export const fiveBar: PlanarArchitecture<FiveBarArchitectureModel> = {
  name: 'five-bar',
  dof: 2,
  actuators: ['revolute', 'revolute'],
  parameters: FIVE_BAR_ARCHITECTURE_PARAMETERS,
  workingModes: allWorkingModes(2),
  buildModel: buildFiveBarArchitectureModel,
  createPose: () => new FiveBarAdapterPose(),
  solvePose(model, pose, x, y) {
    const e = enginePose(pose);
    fiveBarSolvePose(model.engine, e, x, y);
    copyKinematics(model.engine, e, pose);
    return pose.status;
  },
  poseDynamics(model, pose) {
    const e = enginePose(pose);
    fiveBarPoseDynamics(model.engine, e);
    pose.D[0] = e.d11; pose.D[1] = e.d12; pose.D[2] = e.d12; pose.D[3] = e.d22;
    pose.tauG[0] = e.tauG1; pose.tauG[1] = e.tauG2;
    pose.Mx[0] = e.mx11; pose.Mx[1] = e.mx12; pose.Mx[2] = e.mx12; pose.Mx[3] = e.mx22;
    pose.Kx[0] = e.kx11; pose.Kx[1] = e.kx12; pose.Kx[2] = e.kx12; pose.Kx[3] = e.kx22;
    pose.legCompliance[0] = e.compliance1; pose.legCompliance[1] = e.compliance2;
    pose.minStiffness = e.minStiffness;
    pose.rotationalStiffness = Number.NaN;
    pose.frequencies[0] = e.frequencyLow; pose.frequencies[1] = e.frequencyHigh;
    pose.inertiaRowNorm[0] = e.inertiaRowNorm1; pose.inertiaRowNorm[1] = e.inertiaRowNorm2;
    pose.inverseJacobianRowNorm[0] = e.inverseJacobianRowNorm1; pose.inverseJacobianRowNorm[1] = e.inverseJacobianRowNorm2;
    pose.maxSingularValue = e.maxSingularValue;
    pose.rodRate[0] = e.rodRate11; pose.rodRate[1] = e.rodRate12; pose.rodRate[2] = e.rodRate21; pose.rodRate[3] = e.rodRate22;
  },
  forwardKinematics(model, q, out) {
    const buffer = out.length >= 2 ? out : new Float64Array(2);
    return fiveBarForwardKinematics(model.engine, q[0]!, q[1]!, buffer);
  },
  reachableBox: (model): PlaneBox | null => fiveBarReachableBox(model.engine),
  footprint: (model) => fiveBarFootprint(model.engine),
  movingMass: (model) => model.movingMass,
  bodyTree: (model) => {
    const tree = leggedBodyTree(fiveBarLegChain(model.engine));
    return {
      ...tree,
      bodies: tree.bodies.map((b) => (b.name === 'end_mass' ? { ...b, parts: `point mass at the end point: end hub plus payload, ${model.engine.endMass} kg (carried on the tip of rod 1)` } : b)),
    };
  },
  bodyTreeJoints: (model, pose) => leggedTreeJoints(fiveBarLegChain(model.engine), pose),
};
