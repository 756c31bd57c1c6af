/**
 * Candidate sheet: everything needed to take one stored design onward (CAD, simulation, drive
 * sizing) in one plain object — geometry, modes, a home pose with every joint angle, each body's
 * mass properties, the drives, every stored metric and where the numbers came from.
 *
 * The body model is the engine's (src/mechanics/designSpace.ts, buildFiveBarModel): cranks are
 * uniform bars plus the elbow hub as a point mass at the crank end, rods are uniform bars, the end
 * hub and the payload are one point mass at the end point P. SI units throughout (m, kg, rad, N·m).
 */
import { LoopsmithUserError } from '../core/errors.js';
import {
  FiveBarPose,
  PoseStatus,
  poseDynamics,
  reachableBox,
  solvePose,
  type FiveBarModel,
  type JointRange,
} from '../mechanics/fivebar.js';
import {
  buildFiveBarModel,
  designFromValues,
  designVariables,
  movingMass,
  resolveDesign,
  type ResolvedDesign,
} from '../mechanics/designSpace.js';
import { usableMargin } from '../mechanics/evaluate.js';
import { MarginGrid } from '../mechanics/grid.js';
import { METRICS } from '../mechanics/metrics.js';
import { FIVE_BAR_PARAMETERS, type DriveSpec, type FiveBarParameter, type Study } from '../study/types.js';

/** A problem with an export request that the user can fix (unknown ids, empty selection, ...). */
export class ExportError extends LoopsmithUserError {
  override readonly name = 'ExportError';
}

/** Version string of the candidate sheet layout (bumped when fields change meaning). */
export const CANDIDATE_FORMAT = 'loopsmith-candidate/1';

export const SAFETY_NOTE =
  'Early-design estimate from simplified models (rigid bodies, frictionless pins, static and standstill analyses); ' +
  'not a safety analysis. Follow the machinery safety standards that apply, do your own risk assessment and have ' +
  'the design reviewed by a licensed engineer before anything is built or run.';

/** A point of the plane of motion, m. */
export interface PlanePoint {
  readonly x: number;
  readonly y: number;
}

/** Mass properties of one rigid body of the chain, planar. */
export interface BodySheet {
  /** Joint that carries the body ("theta_1", "elbow_1", ...) or the body it is fixed to. */
  readonly attachedTo: string;
  /** Length of the link from its joint to its far pin, m (0 for the end mass). */
  readonly length: number;
  /** Mass, kg. */
  readonly mass: number;
  /** Centre of mass along the link from the body's own joint, m (in the link frame: x along the link). */
  readonly centreOfMass: number;
  /** Moment of inertia about the centre of mass, about the normal of the plane, kg·m². */
  readonly inertiaAboutCom: number;
  /** Centre of mass in the plane at the home pose, m. */
  readonly centreOfMassAtHome: PlanePoint;
  /** What the body is made of, in words. */
  readonly parts: string;
}

export interface DriveSheet {
  readonly label: string;
  readonly gearRatio: number;
  readonly efficiency: number;
  /** Motor rotor inertia, motor side, kg·m². */
  readonly rotorInertia: number;
  /** Gearbox inertia at the joint, kg·m². */
  readonly gearInertia: number;
  /** N² J_rotor + J_gear: drive inertia seen at the joint, kg·m². */
  readonly reflectedInertia: number;
  /** Motor rated and peak torque, motor side, N·m. */
  readonly ratedTorque: number;
  readonly peakTorque: number;
  /** η N τ_rated and η N τ_peak: torques available at the joint, N·m. */
  readonly ratedJointTorque: number;
  readonly peakJointTorque: number;
  /** Motor maximum speed, motor side, rad/s; ω_max / N at the joint. */
  readonly maxSpeed: number;
  readonly maxJointSpeed: number;
  /** Torsional stiffness at the joint, N·m/rad (Infinity: rigid). */
  readonly jointStiffness: number;
  /** Encoder counts per motor revolution. */
  readonly encoderCounts: number;
}

export interface HomePoseSheet {
  /** Where the end point was placed: the task region's centre, or the centre of the usable workspace. */
  readonly source: 'task-region-centre' | 'usable-workspace-centre';
  readonly endPoint: PlanePoint;
  /** Actuated crank angles θ_i from the +x axis, counter-clockwise, rad, inside the study's joint limits. */
  readonly theta_1: number;
  readonly theta_2: number;
  /** Passive elbow joints: rod angle relative to the crank, β_i − θ_i, rad in (−π, π]. */
  readonly elbow_1: number;
  readonly elbow_2: number;
  /** Passive end-point joint: rod 2 relative to rod 1, β_2 − β_1, rad in (−π, π]. */
  readonly endJoint: number;
  /** Absolute rod angles β_i, rad. */
  readonly beta_1: number;
  readonly beta_2: number;
  readonly elbowPoint_1: PlanePoint;
  readonly elbowPoint_2: PlanePoint;
  /** Distance between the two rod tips computed from the joint angles, m (the loop is closed when ≈ 0). */
  readonly loopClosureError: number;
  /** Static holding torques at the actuated joints, N·m (engine τ_g). */
  readonly gravityTorque_1: number;
  readonly gravityTorque_2: number;
  /** 1/κ(J) and det A at the home pose. */
  readonly inverseCondition: number;
  readonly detA: number;
}

export interface ProvenanceSheet {
  readonly database: string;
  readonly evaluationId: number;
  readonly runId: number;
  readonly runKind: string;
  readonly seed: number;
  readonly studyName: string;
  /** SHA-256 of the study file text stored with the run. */
  readonly studyFileHash: string;
  /** Hash of the study's evaluation settings (the settings the metrics were computed with). */
  readonly settingsHash: string;
  readonly loopsmithVersion: string;
}

export interface CandidateSheet {
  readonly format: typeof CANDIDATE_FORMAT;
  readonly safetyNote: string;
  readonly id: number;
  readonly architecture: 'five-bar';
  /** Every geometry parameter, m. */
  readonly geometry: Readonly<Record<FiveBarParameter, number>>;
  readonly pivot_1: PlanePoint;
  readonly pivot_2: PlanePoint;
  /** The design variables as stored (m; working mode by name). */
  readonly designVariables: Readonly<Record<string, number | string>>;
  readonly workingMode: string;
  readonly assemblyMode: string;
  /** Actuated joint ranges, rad, or null when unlimited. */
  readonly jointLimits: { readonly theta_1: JointRange | null; readonly theta_2: JointRange | null };
  /** Gravity in the plane of motion, m/s². */
  readonly gravity: PlanePoint;
  readonly homePose: HomePoseSheet;
  readonly bodies: {
    readonly crank_1: BodySheet;
    readonly rod_1: BodySheet;
    readonly crank_2: BodySheet;
    readonly rod_2: BodySheet;
    readonly endMass: BodySheet;
  };
  /** Mass of cranks, rods and hubs, payload excluded, kg. */
  readonly movingMass: number;
  readonly payloadMass: number;
  readonly drives: { readonly actuator_1: DriveSheet; readonly actuator_2: DriveSheet } | null;
  /** Every metric as stored (SI); null where the study does not give what the metric needs. */
  readonly metrics: Readonly<Record<string, number | null>>;
  /** Signed normalised constraint margins as stored (≥ 0 holds). */
  readonly constraints: Readonly<Record<string, number | null>>;
  readonly feasible: boolean;
  readonly violation: number;
  readonly provenance: ProvenanceSheet;
  /** Only in a comparison study: its architectures and the member this design chose ('five-bar'). */
  readonly comparison?: { readonly architectures: readonly string[]; readonly chosen: string };
}

/** One stored design and the study it belongs to, ready to be described. */
export interface CandidateDesign {
  readonly study: Study;
  readonly resolved: ResolvedDesign;
  readonly model: FiveBarModel;
}

/** The geometry, modes, drives and immutable model of a design given by its stored variable values. */
export function candidateDesign(study: Study, values: Readonly<Record<string, number | string>>): CandidateDesign {
  const variables = designVariables(study);
  const design = designFromValues(variables, values, true);
  const resolved = resolveDesign(study, variables, design);
  return { study, resolved, model: buildFiveBarModel(study, resolved) };
}

const TWO_PI = 2 * Math.PI;

/** Angle wrapped to (−π, π], rad. */
export function wrapAngle(angle: number): number {
  let a = angle % TWO_PI;
  if (a <= -Math.PI) a += TWO_PI;
  else if (a > Math.PI) a -= TWO_PI;
  return a;
}

/** Actuated angle written inside its joint range [min, min + 2π) when there is one, else in (−π, π]. */
export function actuatedAngle(angle: number, range: JointRange | null): number {
  if (range === null) return wrapAngle(angle);
  let t = (angle - range.min) % TWO_PI;
  if (t < 0) t += TWO_PI;
  return range.min + t;
}

/**
 * Joint coordinates of an assembled pose in the order of the exported chain:
 * θ_1, β_1 − θ_1, θ_2, β_2 − θ_2 (rad). Actuated angles lie inside the joint limits.
 */
export function chainJointAngles(model: FiveBarModel, pose: FiveBarPose): [number, number, number, number] {
  const theta1 = actuatedAngle(pose.theta1, model.jointLimits[0]);
  const theta2 = actuatedAngle(pose.theta2, model.jointLimits[1]);
  const beta1 = Math.atan2(pose.u1y, pose.u1x);
  const beta2 = Math.atan2(pose.u2y, pose.u2x);
  return [theta1, wrapAngle(beta1 - theta1), theta2, wrapAngle(beta2 - theta2)];
}

/**
 * End point of the home pose: the task region's centre when the study gives one and the design can
 * be assembled there; otherwise the node of the study's grid deepest inside the largest usable region
 * (the region the engine takes when there is no task region).
 */
export function homeEndPoint(design: CandidateDesign): { point: PlanePoint; source: HomePoseSheet['source'] } {
  const { study, model } = design;
  const pose = new FiveBarPose();
  const region = study.task.region;
  if (region && solvePose(model, pose, region.centreX, region.centreY) === PoseStatus.Assembled) {
    return { point: { x: region.centreX, y: region.centreY }, source: 'task-region-centre' };
  }
  const cells = study.evaluation.gridCells;
  const grid = new MarginGrid(cells + 4);
  const box = reachableBox(model);
  if (!box) throw new ExportError('the two legs have no common reach: no pose to export');
  grid.layout(box.xmin, box.xmax, box.ymin, box.ymax, cells);
  const { nx, ny, x0, y0, h, values, labels } = grid;
  for (let j = 0; j < ny; j++) {
    for (let i = 0; i < nx; i++) {
      const status = solvePose(model, pose, x0 + i * h, y0 + j * h);
      values[j * nx + i] = usableMargin(pose, status, study);
    }
  }
  grid.labelRegions();
  const largest = grid.largestRegion();
  if (largest < 0) throw new ExportError('the design has no usable workspace: no pose to export');
  // Depth of every region node: 4-connected steps to the nearest node outside the region (breadth-first
  // from all outside nodes). The home pose is the deepest node — the middle of the region, away from
  // its singular and limit boundaries — with ties broken by the distance to the region's centroid.
  const total = nx * ny;
  const depth = new Int32Array(total).fill(-1);
  const queue = new Int32Array(total);
  let head = 0;
  let tail = 0;
  let sumX = 0;
  let sumY = 0;
  let count = 0;
  for (let k = 0; k < total; k++) {
    if (labels[k] !== largest) {
      depth[k] = 0;
      queue[tail++] = k;
    } else {
      sumX += x0 + (k % nx) * h;
      sumY += y0 + Math.floor(k / nx) * h;
      count++;
    }
  }
  while (head < tail) {
    const k = queue[head++]!;
    const i = k % nx;
    const j = (k - i) / nx;
    const next = depth[k]! + 1;
    if (i > 0 && depth[k - 1] === -1) { depth[k - 1] = next; queue[tail++] = k - 1; }
    if (i + 1 < nx && depth[k + 1] === -1) { depth[k + 1] = next; queue[tail++] = k + 1; }
    if (j > 0 && depth[k - nx] === -1) { depth[k - nx] = next; queue[tail++] = k - nx; }
    if (j + 1 < ny && depth[k + nx] === -1) { depth[k + nx] = next; queue[tail++] = k + nx; }
  }
  const cx = sumX / count;
  const cy = sumY / count;
  let best = { x: cx, y: cy };
  let bestDepth = 0;
  let bestDistance = Infinity;
  for (let k = 0; k < total; k++) {
    if (labels[k] !== largest) continue;
    const x = x0 + (k % nx) * h;
    const y = y0 + Math.floor(k / nx) * h;
    const distance = (x - cx) ** 2 + (y - cy) ** 2;
    if (depth[k]! > bestDepth || (depth[k] === bestDepth && distance < bestDistance)) {
      bestDepth = depth[k]!;
      bestDistance = distance;
      best = { x, y };
    }
  }
  return { point: best, source: 'usable-workspace-centre' };
}

/** Home pose at end point (x, y): every joint angle, elbows, closure check and holding torques. */
export function homePose(design: CandidateDesign, point: PlanePoint, source: HomePoseSheet['source']): HomePoseSheet {
  const { model } = design;
  const pose = new FiveBarPose();
  const status = solvePose(model, pose, point.x, point.y);
  if (status !== PoseStatus.Assembled) {
    throw new ExportError(`the design cannot be assembled in its working and assembly mode at (${point.x}, ${point.y}) m`);
  }
  poseDynamics(model, pose);
  const [theta1, elbow1, theta2, elbow2] = chainJointAngles(model, pose);
  const beta1 = theta1 + elbow1;
  const beta2 = theta2 + elbow2;
  // Rod tips from the joint angles alone (forward along each serial arm): the loop is closed when they meet.
  const tip1x = model.pivotX[0] + model.crank[0] * Math.cos(theta1) + model.rod[0] * Math.cos(beta1);
  const tip1y = model.pivotY[0] + model.crank[0] * Math.sin(theta1) + model.rod[0] * Math.sin(beta1);
  const tip2x = model.pivotX[1] + model.crank[1] * Math.cos(theta2) + model.rod[1] * Math.cos(beta2);
  const tip2y = model.pivotY[1] + model.crank[1] * Math.sin(theta2) + model.rod[1] * Math.sin(beta2);
  return {
    source,
    endPoint: { x: point.x, y: point.y },
    theta_1: theta1,
    theta_2: theta2,
    elbow_1: elbow1,
    elbow_2: elbow2,
    endJoint: wrapAngle(beta2 - beta1),
    beta_1: wrapAngle(beta1),
    beta_2: wrapAngle(beta2),
    elbowPoint_1: { x: pose.c1x, y: pose.c1y },
    elbowPoint_2: { x: pose.c2x, y: pose.c2y },
    loopClosureError: Math.hypot(tip1x - tip2x, tip1y - tip2y),
    // "+ 0" turns a −0 (no gravity in the plane) into 0.
    gravityTorque_1: pose.tauG1 + 0,
    gravityTorque_2: pose.tauG2 + 0,
    inverseCondition: pose.inverseCondition,
    detA: pose.detA,
  };
}

/** Mass properties of the five bodies, the engine's body model (see the file comment). */
function bodySheets(design: CandidateDesign, home: HomePoseSheet): CandidateSheet['bodies'] {
  const { study, model } = design;
  const hub = study.elbowHubMass;
  const crank = (i: 0 | 1): BodySheet => {
    const length = model.crank[i];
    const barMass = study.links.cranks[i].massPerLength * length;
    const mass = barMass + hub;
    // Bar (COM at L/2, m L²/12) plus hub point mass at L, combined by the parallel-axis theorem (derived).
    const com = mass > 0 ? (barMass * length / 2 + hub * length) / mass : length / 2;
    const inertia = (barMass * length * length) / 12 + barMass * (length / 2 - com) ** 2 + hub * (length - com) ** 2;
    const theta = i === 0 ? home.theta_1 : home.theta_2;
    return {
      attachedTo: `theta_${i + 1}`,
      length,
      mass,
      centreOfMass: com,
      inertiaAboutCom: inertia,
      centreOfMassAtHome: { x: model.pivotX[i] + com * Math.cos(theta), y: model.pivotY[i] + com * Math.sin(theta) },
      parts: `uniform bar ${barMass} kg (${study.links.cranks[i].label}) plus elbow hub ${hub} kg at the crank end`,
    };
  };
  const rod = (i: 0 | 1): BodySheet => {
    const length = model.rod[i];
    const mass = model.rodMass[i];
    const com = model.rodComDistance[i];
    const beta = i === 0 ? home.beta_1 : home.beta_2;
    const elbow = i === 0 ? home.elbowPoint_1 : home.elbowPoint_2;
    return {
      attachedTo: `elbow_${i + 1}`,
      length,
      mass,
      centreOfMass: com,
      inertiaAboutCom: model.rodInertiaAboutCom[i],
      centreOfMassAtHome: { x: elbow.x + com * Math.cos(beta), y: elbow.y + com * Math.sin(beta) },
      parts: `uniform bar (${study.links.rods[i].label})`,
    };
  };
  return {
    crank_1: crank(0),
    rod_1: rod(0),
    crank_2: crank(1),
    rod_2: rod(1),
    endMass: {
      attachedTo: 'rod_1',
      length: 0,
      mass: model.endMass,
      centreOfMass: 0,
      inertiaAboutCom: 0,
      centreOfMassAtHome: home.endPoint,
      parts: `point mass at the end point: end hub ${study.endHubMass} kg plus payload ${study.payloadMass} kg (carried on the tip of rod 1)`,
    },
  };
}

function driveSheet(drive: DriveSpec): DriveSheet {
  return {
    label: drive.label,
    gearRatio: drive.gearRatio,
    efficiency: drive.efficiency,
    rotorInertia: drive.rotorInertia,
    gearInertia: drive.gearInertia,
    reflectedInertia: drive.gearRatio ** 2 * drive.rotorInertia + drive.gearInertia,
    ratedTorque: drive.ratedTorque,
    peakTorque: drive.peakTorque,
    ratedJointTorque: drive.efficiency * drive.gearRatio * drive.ratedTorque,
    peakJointTorque: drive.efficiency * drive.gearRatio * drive.peakTorque,
    maxSpeed: drive.maxSpeed,
    maxJointSpeed: drive.maxSpeed / drive.gearRatio,
    jointStiffness: drive.jointStiffness,
    encoderCounts: drive.encoderCounts,
  };
}

/** The stored row a sheet describes (a subset of the store's StoredEvaluation). */
export interface CandidateRecord {
  readonly id: number;
  readonly variables: Readonly<Record<string, number | string>>;
  readonly metrics: Readonly<Record<string, number | null>>;
  readonly constraints: Readonly<Record<string, number | null>>;
  readonly feasible: boolean;
  readonly violation: number;
}

/** Builds the candidate sheet of one stored design. */
export function candidateSheet(study: Study, record: CandidateRecord, provenance: ProvenanceSheet): CandidateSheet {
  const design = candidateDesign(study, record.variables);
  const { point, source } = homeEndPoint(design);
  const home = homePose(design, point, source);
  const { model, resolved } = design;
  // Drives come from the resolved design (they may differ per design), never from the study directly.
  const drives = resolved.drives;
  const metrics: Record<string, number | null> = {};
  for (const m of METRICS) metrics[m.name] = record.metrics[m.name] ?? null;
  const geometry = {} as Record<FiveBarParameter, number>;
  for (const name of FIVE_BAR_PARAMETERS) geometry[name] = resolved.geometry[name];
  return {
    format: CANDIDATE_FORMAT,
    safetyNote: SAFETY_NOTE,
    id: record.id,
    architecture: 'five-bar',
    geometry,
    pivot_1: { x: model.pivotX[0], y: model.pivotY[0] },
    pivot_2: { x: model.pivotX[1], y: model.pivotY[1] },
    designVariables: { ...record.variables },
    workingMode: resolved.workingMode,
    assemblyMode: study.assemblyMode,
    jointLimits: { theta_1: model.jointLimits[0], theta_2: model.jointLimits[1] },
    gravity: { x: model.gravity[0], y: model.gravity[1] },
    homePose: home,
    bodies: bodySheets(design, home),
    movingMass: movingMass(study, resolved.geometry),
    payloadMass: study.payloadMass,
    drives: drives ? { actuator_1: driveSheet(drives[0]), actuator_2: driveSheet(drives[1]) } : null,
    metrics,
    constraints: { ...record.constraints },
    feasible: record.feasible,
    violation: record.violation,
    provenance,
  };
}

/** The loopsmith version, from the package's own package.json. */
export { loopsmithVersion } from '../core/version.js';

/** JSON text of a sheet: infinite numbers written as the strings "Infinity" / "-Infinity". */
export function sheetToJson(sheet: CandidateSheet | object): string {
  return JSON.stringify(
    sheet,
    (_key, value: unknown) => (typeof value === 'number' && !Number.isFinite(value) && !Number.isNaN(value) ? (value > 0 ? 'Infinity' : '-Infinity') : value),
    2,
  ) + '\n';
}
