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
} from './legged.js';
import { allWorkingModes, ArchitecturePose, parameterValue, signsOfMode, type ModelInput, type PlanarArchitecture, type PlaneBox } from './types.js';

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
  exactReachableArea: (model, box) => prr2ReachableArea(model, box),
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

/**
 * Reachable area of a 2-PRR inside the evaluation box (derived): leg i reaches P iff the circle of
 * radius d_i about P meets its rail line, |cross(e_i, P − O_i)| ≤ d_i (a stroke is a joint limit,
 * not a limit of reach), so the reachable part of the box is the box cut by both legs' strips. A
 * convex polygon: clipped half-plane by half-plane (Sutherland–Hodgman), measured by the shoelace
 * formula (common practice, no source).
 */
export function prr2ReachableArea(model: LeggedModel, box: PlaneBox): number {
  let polygon = [box.xmin, box.ymin, box.xmax, box.ymin, box.xmax, box.ymax, box.xmin, box.ymax];
  for (let i = 0; i < 2; i++) {
    const ex = model.railX[i]!;
    const ey = model.railY[i]!;
    const ox = model.baseX[i]!;
    const oy = model.baseY[i]!;
    const d = model.rod[i]!;
    for (const side of [1, -1]) polygon = clipHalfPlane(polygon, (x, y) => d - side * (ex * (y - oy) - ey * (x - ox)));
  }
  let twice = 0;
  for (let k = 0; k < polygon.length; k += 2) {
    const next = (k + 2) % polygon.length;
    twice += polygon[k]! * polygon[next + 1]! - polygon[next]! * polygon[k + 1]!;
  }
  return Math.abs(twice) / 2;
}

/** The part of a convex polygon (x, y interleaved) where inside(x, y) ≥ 0 (inside linear in x, y). */
function clipHalfPlane(polygon: readonly number[], inside: (x: number, y: number) => number): number[] {
  const out: number[] = [];
  const n = polygon.length / 2;
  for (let k = 0; k < n; k++) {
    const ax = polygon[2 * k]!;
    const ay = polygon[2 * k + 1]!;
    const bx = polygon[(2 * k + 2) % polygon.length]!;
    const by = polygon[(2 * k + 3) % polygon.length]!;
    const fa = inside(ax, ay);
    const fb = inside(bx, by);
    if (fa >= 0) out.push(ax, ay);
    if ((fa >= 0) !== (fb >= 0)) {
      const t = fa / (fa - fb);
      out.push(ax + t * (bx - ax), ay + t * (by - ay));
    }
  }
  return out;
}
