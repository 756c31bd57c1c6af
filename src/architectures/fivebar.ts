/**
 * Five-bar (5R): two crank + rod legs (src/architectures/legs/crankRod.ts) meeting at the end point
 * P; task (x, y). Pivots A_1 = (−base_span/2, 0) and A_2 = (base_span/2, base_rise). The parameter
 * names are those studies and stores have always used, so stored columns keep their meaning.
 * Velocity A Ṗ = B θ̇ with A = [u_1ᵀ; u_2ᵀ], B = diag(p_1 s_1, p_2 s_2); leg singularity s_i = 0,
 * mechanism singularity det A = cross(u_1, u_2) = 0. The assembly sign is the sign of det A.
 */
import {
  buildLeggedModel,
  leggedCutOpenChain,
  leggedFootprint,
  leggedPoseDynamics,
  leggedBodyTree,
  leggedReachableBox,
  leggedTreeJoints,
  solveLeggedPose,
  twoLegForwardKinematics,
  type LeggedModel,
  leggedRingsArea,
} from './legged.js';
import { allWorkingModes, ArchitecturePose, parameterValue, signsOfMode, type ModelInput, type PlanarArchitecture } from './types.js';

export const FIVE_BAR_ARCHITECTURE_PARAMETERS = [
  { name: 'base_span', kind: 'length', description: 'horizontal distance between the two actuated pivots', mayBeZero: true },
  { name: 'base_rise', kind: 'length', description: 'height of pivot 2 above pivot 1', signed: true, mayBeZero: true },
  { name: 'crank_1', kind: 'length', description: 'crank length of leg 1' },
  { name: 'rod_1', kind: 'length', description: 'rod length of leg 1' },
  { name: 'crank_2', kind: 'length', description: 'crank length of leg 2' },
  { name: 'rod_2', kind: 'length', description: 'rod length of leg 2' },
] as const;

/** The five-bar's model: a leg model with two crank + rod legs. */
export type FiveBarArchitectureModel = LeggedModel;

export function buildFiveBarArchitectureModel(input: ModelInput): LeggedModel {
  const span = parameterValue(input, 'base_span');
  const rise = parameterValue(input, 'base_rise');
  return buildLeggedModel(
    'five-bar',
    2,
    [
      { actuator: 'revolute', base: [-span / 2, 0], crank: parameterValue(input, 'crank_1'), rod: parameterValue(input, 'rod_1') },
      { actuator: 'revolute', base: [span / 2, rise], crank: parameterValue(input, 'crank_2'), rod: parameterValue(input, 'rod_2') },
    ],
    signsOfMode(input.workingMode, 2),
    input,
  );
}

export const fiveBar: PlanarArchitecture<LeggedModel> = {
  name: 'five-bar',
  variablePrefix: 'fivebar',
  dof: 2,
  actuators: ['revolute', 'revolute'],
  parameters: FIVE_BAR_ARCHITECTURE_PARAMETERS,
  workingModes: allWorkingModes(2),
  buildModel: buildFiveBarArchitectureModel,
  createPose: () => new ArchitecturePose(2),
  solvePose: (model, pose, x, y) => solveLeggedPose(model, pose, x, y),
  poseDynamics: leggedPoseDynamics,
  forwardKinematics: (model, q, out) => twoLegForwardKinematics(model, q, out.length >= 2 ? out : new Float64Array(2)),
  reachableBox: (model) => leggedReachableBox(model),
  // The intersection of the two annuli (legs' rings); without a window it lies in the box.
  exactReachableArea: (model, _box, _phi, windowed) => (windowed ? null : leggedRingsArea(model)),
  footprint: leggedFootprint,
  movingMass: (model) => model.movingMass,
  cutOpenChain: leggedCutOpenChain,
  bodyTree: leggedBodyTree,
  bodyTreeJoints: leggedTreeJoints,
};
