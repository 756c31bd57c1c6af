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

/** Area of the intersection of two discs of radii r1, r2 whose centres are d apart (m²; the lens formula). */
export function discIntersectionArea(r1: number, r2: number, d: number): number {
  if (r1 <= 0 || r2 <= 0) return 0;
  if (d >= r1 + r2) return 0;
  if (d <= Math.abs(r1 - r2)) return Math.PI * Math.min(r1, r2) ** 2;
  const a1 = Math.acos(Math.min(Math.max((d * d + r1 * r1 - r2 * r2) / (2 * d * r1), -1), 1));
  const a2 = Math.acos(Math.min(Math.max((d * d + r2 * r2 - r1 * r1) / (2 * d * r2), -1), 1));
  const kite = 0.5 * Math.sqrt(Math.max((-d + r1 + r2) * (d + r1 - r2) * (d - r1 + r2) * (d + r1 + r2), 0));
  return r1 * r1 * a1 + r2 * r2 * a2 - kite;
}

/**
 * Reachable area of a five-bar: the intersection of the annuli |p_i − d_i| ≤ |P − A_i| ≤ p_i + d_i,
 * by inclusion–exclusion over the four disc pairs (derived here: annulus = outer disc minus inner
 * disc, inner ⊂ outer). It lies inside the reachable box, so it is the area in the evaluation box
 * unless a window cuts that box (then null: sampled).
 */
export function fiveBarReachableArea(model: LeggedModel, windowed: boolean): number | null {
  if (windowed) return null;
  const d = Math.hypot(model.baseX[1]! - model.baseX[0]!, model.baseY[1]! - model.baseY[0]!);
  const outer1 = model.crank[0]! + model.rod[0]!;
  const inner1 = Math.abs(model.crank[0]! - model.rod[0]!);
  const outer2 = model.crank[1]! + model.rod[1]!;
  const inner2 = Math.abs(model.crank[1]! - model.rod[1]!);
  return discIntersectionArea(outer1, outer2, d) - discIntersectionArea(outer1, inner2, d) - discIntersectionArea(inner1, outer2, d) + discIntersectionArea(inner1, inner2, d);
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
  exactReachableArea: (model, _box, _phi, windowed) => fiveBarReachableArea(model, windowed),
  footprint: leggedFootprint,
  movingMass: (model) => model.movingMass,
  cutOpenChain: leggedCutOpenChain,
  bodyTree: leggedBodyTree,
  bodyTreeJoints: leggedTreeJoints,
};
