/**
 * 3-PRR: as the 3-RRR, with a slider on a straight rail as each leg's actuated joint; task pose
 * (x, y, φ).
 *
 * Rail i passes through O_i = base_radius · e(γ_i), γ_i = 90° + 120° (i − 1), with direction
 * e_r,i = e(γ_i + rail_angle) (rail_angle = 0: radial rails, 90°: tangential). Slider joint
 * S_i = O_i + q_i e_r,i with q_i the actuated coordinate (m). Platform pins B_i = P + R(φ) b_i,
 * b_i = platform_radius · e(γ_i + platform_twist). Inverse kinematics with w = B_i − O_i:
 * q_i = w · e_r,i + σ_i √(d_i² − cross(e_r,i, w)²). Velocity A (ẋ, ẏ, φ̇) = B q̇ with A rows
 * [u_iᵀ, cross(R(φ) b_i, u_i)], B = diag(u_i · e_r,i). Leg singularity u_i · e_r,i = 0 (rod ⟂ rail);
 * mechanism singularity det A = 0. Drives are linear (N, N/m, kg).
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
  sliderStripsArea,
} from './legged.js';
import { legAngle } from './rrr3.js';
import { allWorkingModes, ArchitecturePose, parameterValue, signsOfMode, type ModelInput, type PlanarArchitecture } from './types.js';

export const PRR3_PARAMETERS = [
  { name: 'base_radius', kind: 'length', description: 'radius of the circle through the three rail origins' },
  { name: 'rail_angle', kind: 'angle', description: 'rail direction relative to the radial direction at its origin' },
  { name: 'platform_radius', kind: 'length', description: 'radius of the circle through the three platform pins' },
  { name: 'platform_twist', kind: 'angle', description: 'angle of the platform pin pattern relative to the rail origins at φ = 0' },
  { name: 'rod_1', kind: 'length', description: 'rod length of leg 1' },
  { name: 'rod_2', kind: 'length', description: 'rod length of leg 2' },
  { name: 'rod_3', kind: 'length', description: 'rod length of leg 3' },
] as const;

export const prr3: PlanarArchitecture<LeggedModel> = {
  name: '3-prr',
  variablePrefix: 'prr3',
  dof: 3,
  actuators: ['prismatic', 'prismatic', 'prismatic'],
  parameters: PRR3_PARAMETERS,
  workingModes: allWorkingModes(3),
  buildModel(input: ModelInput): LeggedModel {
    const baseRadius = parameterValue(input, 'base_radius');
    const railAngle = parameterValue(input, 'rail_angle');
    const platformRadius = parameterValue(input, 'platform_radius');
    const twist = parameterValue(input, 'platform_twist');
    const legs: LegGeometry[] = [0, 1, 2].map((i) => ({
      actuator: 'prismatic',
      base: [baseRadius * Math.cos(legAngle(i)), baseRadius * Math.sin(legAngle(i))],
      railAngle: legAngle(i) + railAngle,
      rod: parameterValue(input, `rod_${i + 1}`),
      platformPin: [platformRadius * Math.cos(legAngle(i) + twist), platformRadius * Math.sin(legAngle(i) + twist)],
    }));
    return buildLeggedModel('3-prr', 3, legs, signsOfMode(input.workingMode, 3), input);
  },
  createPose: () => new ArchitecturePose(3),
  solvePose: (model, pose, x, y, phi = 0) => solveLeggedPose(model, pose, x, y, phi),
  poseDynamics: leggedPoseDynamics,
  forwardKinematics: leggedForwardKinematics,
  reachableBox: leggedReachableBox,
  exactReachableArea: (model, box, phi) => sliderStripsArea(model, box, phi),
  footprint: leggedFootprint,
  movingMass: (model) => model.movingMass,
  cutOpenChain: leggedCutOpenChain,
  bodyTree: leggedBodyTree,
  bodyTreeJoints: leggedTreeJoints,
};
