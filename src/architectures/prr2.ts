/**
 * 2-PRR: two sliders on one straight rail, each carrying a rod to the common end point P.
 *
 * The rail is the line y = rail_height (rail direction e_rail = (1, 0), origin (0, rail_height));
 * slider i sits at S_i = (x_i, rail_height) with x_i the actuated coordinate (m). Inverse kinematics
 * in working mode σ_i: x_i = P_x + σ_i √(d_i² − (P_y − rail_height)²) (σ_i = +1: slider i to the right
 * of P). Velocity A Ṗ = B ẋ with A rows u_iᵀ (u_i = (P − S_i)/d_i) and B = diag(u_i · e_rail).
 * Leg singularity: u_i · e_rail = 0 (rod perpendicular to the rail, P at the edge of its reach band);
 * mechanism singularity: det A = cross(u_1, u_2) = 0 (rods aligned). The assembly sign is
 * sign det A; in the modes "-+" it is + with P above the rail, in "+-" with P below it.
 * Drives are linear: efforts in N, stiffness in N/m, reflected inertia in kg.
 */
import {
  buildLeggedModel,
  leggedCutOpenChain,
  leggedFootprint,
  leggedPoseDynamics,
  leggedReachableBox,
  solveLeggedPose,
  twoLegForwardKinematics,
  type LeggedModel,
  leggedBodyTree,
  leggedTreeJoints,
  sliderStripsArea,
} from './legged.js';
import { allWorkingModes, ArchitecturePose, parameterValue, signsOfMode, type ModelInput, type PlanarArchitecture } from './types.js';

export const PRR2_PARAMETERS = [
  { name: 'rail_height', kind: 'length', description: 'height of the common slider rail above the base origin', signed: true, mayBeZero: true },
  { name: 'rod_1', kind: 'length', description: 'rod length of slider 1 to the end point' },
  { name: 'rod_2', kind: 'length', description: 'rod length of slider 2 to the end point' },
] as const;

export const prr2: PlanarArchitecture<LeggedModel> = {
  name: '2-prr',
  variablePrefix: 'prr2',
  dof: 2,
  actuators: ['prismatic', 'prismatic'],
  parameters: PRR2_PARAMETERS,
  workingModes: allWorkingModes(2),
  buildModel(input: ModelInput): LeggedModel {
    const railHeight = parameterValue(input, 'rail_height');
    const sigma = signsOfMode(input.workingMode, 2);
    return buildLeggedModel(
      '2-prr',
      2,
      [
        { actuator: 'prismatic', base: [0, railHeight], railAngle: 0, rod: parameterValue(input, 'rod_1') },
        { actuator: 'prismatic', base: [0, railHeight], railAngle: 0, rod: parameterValue(input, 'rod_2') },
      ],
      sigma,
      input,
    );
  },
  createPose: () => new ArchitecturePose(2),
  solvePose: (model, pose, x, y) => solveLeggedPose(model, pose, x, y, 0),
  poseDynamics: leggedPoseDynamics,
  forwardKinematics: twoLegForwardKinematics,
  reachableBox: (model) => leggedReachableBox(model, 0),
  exactReachableArea: (model, box) => sliderStripsArea(model, box, 0),
  footprint: leggedFootprint,
  movingMass: (model) => model.movingMass,
  cutOpenChain: leggedCutOpenChain,
  bodyTree: leggedBodyTree,
  bodyTreeJoints: leggedTreeJoints,
};

/**
 * Reachable set of a 2-PRR with unlimited rails (derived): leg i reaches P iff the circle of radius
 * d_i about P meets the rail line, i.e. |P_y − rail_height| ≤ d_i; both legs: the band
 * |P_y − rail_height| ≤ min(d_1, d_2), unbounded along the rail. Returns its half-height, m.
 */
export function prr2ReachBandHalfHeight(model: LeggedModel): number {
  return Math.min(model.rod[0]!, model.rod[1]!);
}
