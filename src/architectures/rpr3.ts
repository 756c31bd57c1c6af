/**
 * 3-RPR: three legs, each a base pivot, an actuated telescoping strut (legs/strut.ts) and a platform
 * pivot, carrying a rigid platform; task pose (x, y, φ).
 *
 * Base pivots A_i = base_radius · e(γ_i), γ_i = 90° + 120° (i − 1) (as the 3-RRR and 3-PRR); platform
 * pivots in the platform frame b_i = platform_radius · e(γ_i + platform_twist); B_i = P + R(φ) b_i.
 * Inverse kinematics: q_i = |B_i − A_i|. Velocity A (ẋ, ẏ, φ̇) = q̇ with A rows
 * [u_iᵀ, cross(R(φ) b_i, u_i)] and B = I. Singularities: a strut at a stroke end (the workspace
 * boundary), and det A = 0 when the three strut lines meet in one point or are parallel (Gosselin &
 * Angeles, "Singularity analysis of closed-loop kinematic chains", IEEE Trans. Robotics and
 * Automation 6(3), 1990). The strokes are the joint limits (m); the working mode has no effect
 * (one inverse-kinematics solution per leg); the assembly sign is sign det A.
 */
import {
  buildLeggedModel,
  leggedCutOpenChain,
  leggedFootprint,
  leggedForwardKinematics,
  leggedPoseDynamics,
  leggedBodyTree,
  leggedReachableBox,
  leggedTreeJoints,
  solveLeggedPose,
  type LegGeometry,
  type LeggedModel,
  leggedRingsArea,
} from './legged.js';
import { strut } from './legs/strut.js';
import { legAngle } from './rrr3.js';
import { allWorkingModes, ArchitecturePose, parameterValue, signsOfMode, type ModelInput, type PlanarArchitecture } from './types.js';

export const RPR3_PARAMETERS = [
  { name: 'base_radius', kind: 'length', description: 'radius of the circle through the three base pivots' },
  { name: 'platform_radius', kind: 'length', description: 'radius of the circle through the three platform pivots' },
  { name: 'platform_twist', kind: 'angle', description: 'angle of the platform pivot pattern relative to the base pivots at φ = 0' },
] as const;

export const rpr3: PlanarArchitecture<LeggedModel> = {
  name: '3-rpr',
  variablePrefix: 'rpr3',
  dof: 3,
  actuators: ['prismatic', 'prismatic', 'prismatic'],
  parameters: RPR3_PARAMETERS,
  workingModes: allWorkingModes(3),
  buildModel(input: ModelInput): LeggedModel {
    const baseRadius = parameterValue(input, 'base_radius');
    const platformRadius = parameterValue(input, 'platform_radius');
    const twist = parameterValue(input, 'platform_twist');
    const legs: LegGeometry[] = [0, 1, 2].map((i) => ({
      actuator: 'prismatic',
      leg: strut,
      base: [baseRadius * Math.cos(legAngle(i)), baseRadius * Math.sin(legAngle(i))],
      rod: 0,
      platformPin: [platformRadius * Math.cos(legAngle(i) + twist), platformRadius * Math.sin(legAngle(i) + twist)],
    }));
    return buildLeggedModel('3-rpr', 3, legs, signsOfMode(input.workingMode, 3), input);
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
