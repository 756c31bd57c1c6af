/**
 * 3-RRR: three legs, each a revolute-actuated crank and a rod (like one five-bar leg), pinned to a
 * rigid platform; task pose (x, y, φ).
 *
 * Base pivots A_i = base_radius · e(γ_i), γ_i = 90° + 120° (i − 1); platform pins in the platform frame
 * b_i = platform_radius · e(γ_i + platform_twist); platform pins in the base frame B_i = P + R(φ) b_i.
 * Each leg's inverse kinematics is the five-bar leg's with target B_i and working-mode sign σ_i.
 * Velocity A (ẋ, ẏ, φ̇) = B θ̇ with A rows [u_iᵀ, cross(R(φ) b_i, u_i)], B = diag(p_i s_i),
 * s_i = cross(e(θ_i), u_i). Leg singularity s_i = 0 (crank and rod aligned); mechanism singularity
 * det A = 0 (the three rod lines meet in one point or are parallel). The assembly sign is
 * sign det A (a necessary condition that separates the forward-kinematics branches met in a study;
 * up to six branches exist).
 */
import {
  buildLeggedModel,
  leggedCutOpenChain,
  leggedFootprint,
  leggedForwardKinematics,
  leggedPoseDynamics,
  leggedReachableBox,
  solveLeggedPose,
  type LegGeometry,
  type LeggedModel,
  leggedBodyTree,
  leggedTreeJoints,
  leggedRingsArea,
} from './legged.js';
import { allWorkingModes, ArchitecturePose, parameterValue, signsOfMode, type ModelInput, type PlanarArchitecture } from './types.js';

export const RRR3_PARAMETERS = [
  { name: 'base_radius', kind: 'length', description: 'radius of the circle through the three actuated pivots' },
  { name: 'platform_radius', kind: 'length', description: 'radius of the circle through the three platform pins' },
  { name: 'platform_twist', kind: 'angle', description: 'angle of the platform pin pattern relative to the pivot pattern at φ = 0' },
  { name: 'crank_1', kind: 'length', description: 'crank length of leg 1' },
  { name: 'rod_1', kind: 'length', description: 'rod length of leg 1' },
  { name: 'crank_2', kind: 'length', description: 'crank length of leg 2' },
  { name: 'rod_2', kind: 'length', description: 'rod length of leg 2' },
  { name: 'crank_3', kind: 'length', description: 'crank length of leg 3' },
  { name: 'rod_3', kind: 'length', description: 'rod length of leg 3' },
] as const;

/** Angle of leg i's pivot on the base circle, rad. */
export function legAngle(i: number): number {
  return Math.PI / 2 + (2 * Math.PI * i) / 3;
}

export const rrr3: PlanarArchitecture<LeggedModel> = {
  name: '3-rrr',
  variablePrefix: 'rrr3',
  dof: 3,
  actuators: ['revolute', 'revolute', 'revolute'],
  parameters: RRR3_PARAMETERS,
  workingModes: allWorkingModes(3),
  buildModel(input: ModelInput): LeggedModel {
    const baseRadius = parameterValue(input, 'base_radius');
    const platformRadius = parameterValue(input, 'platform_radius');
    const twist = parameterValue(input, 'platform_twist');
    const legs: LegGeometry[] = [0, 1, 2].map((i) => ({
      actuator: 'revolute',
      base: [baseRadius * Math.cos(legAngle(i)), baseRadius * Math.sin(legAngle(i))],
      crank: parameterValue(input, `crank_${i + 1}`),
      rod: parameterValue(input, `rod_${i + 1}`),
      platformPin: [platformRadius * Math.cos(legAngle(i) + twist), platformRadius * Math.sin(legAngle(i) + twist)],
    }));
    return buildLeggedModel('3-rrr', 3, legs, signsOfMode(input.workingMode, 3), input);
  },
  createPose: () => new ArchitecturePose(3),
  solvePose: (model, pose, x, y, phi = 0) => solveLeggedPose(model, pose, x, y, phi),
  poseDynamics: leggedPoseDynamics,
  forwardKinematics: leggedForwardKinematics,
  reachableBox: leggedReachableBox,
  exactReachableArea: (model, _box, phi, windowed) => (windowed ? null : leggedRingsArea(model, phi)),
  footprint: leggedFootprint,
  movingMass: (model) => model.movingMass,
  cutOpenChain: leggedCutOpenChain,
  bodyTree: leggedBodyTree,
  bodyTreeJoints: leggedTreeJoints,
};
