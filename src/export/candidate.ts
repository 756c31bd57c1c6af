/**
 * The candidate sheet of a stored design of any architecture, built through the architecture
 * interface alone (`Evaluator.architectureDesign`: the model the evaluation uses; a comparison design
 * is described with its member's study). Geometry, modes, a home pose with every joint of the body
 * tree, each body's mass properties (walked from `architecture.bodyTree`), the drives, every stored
 * metric and where the numbers came from. SI units; per actuator, efforts are N·m (revolute) or N
 * (prismatic), positions rad or m.
 *
 * Five-bar sheets also carry the field names of the earlier five-bar layout (pivot_i, theta_i,
 * elbow_i, beta_i, endJoint, elbowPoint_i, gravityTorque_i, detA, jointLimits.theta_i and the drives'
 * ratedJointTorque/peakJointTorque), so that scripts written against it keep working
 * (docs/export.md); they are the same numbers under their old names.
 */
import { ExportError } from './request.js';
import {
  actuatorUnits,
  PoseStatus,
  type ActuatorKind,
  type ActuatorUnits,
  type ArchitectureModelBase,
  type ArchitecturePose,
  type BodyTree,
  type DriveAtJoint,
  type JointRange,
  type PlanarArchitecture,
} from '../architectures/types.js';
import { wrapAngle } from '../core/pose.js';
import { designFromValues, type ResolvedDesign } from '../mechanics/designSpace.js';
import { Evaluator } from '../mechanics/evaluate.js';
import { METRICS } from '../mechanics/metrics.js';
import { deepestUsableNode, sampleArchitectureMapFields } from '../report/architectureMap.js';
import { studyGridBox, studyPhi0 } from '../report/designMap.js';
import type { DriveSpec, Study } from '../study/types.js';
import { bodyFrames, loopClosureGap, pointInFrame } from './bodyTree.js';
import { architectureMjcf } from './mjcf.js';

export { ExportError };

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

/** One actuator of the design: its joint in the body tree, kind and units. */
export interface ActuatorSheet {
  readonly joint: string;
  readonly kind: ActuatorKind;
  readonly units: ActuatorUnits;
}

/** Mass properties of one rigid body, planar. */
export interface BodySheet {
  /** The body's joint, or the body it is fixed to. */
  readonly attachedTo: string;
  /** Bar length from its joint to its far pin, m (0 for carriages, plates and point masses). */
  readonly length: number;
  readonly mass: number;
  /** Centre of mass along the bar from its joint, m (0 for the other shapes). */
  readonly centreOfMass: number;
  /** About the centre of mass, about the plane normal, kg·m². */
  readonly inertiaAboutCom: number;
  readonly centreOfMassAtHome: PlanePoint;
  readonly parts: string;
}

/** A drive referred to its joint, with the study data it came from. Units per `units`. */
export interface DriveSheet {
  readonly label: string;
  readonly kind: ActuatorKind;
  /** gearbox (revolute), screw (prismatic through a screw or belt of lead `lead`), linear (figures at the slider). */
  readonly transmission: 'gearbox' | 'screw' | 'linear';
  readonly units: ActuatorUnits;
  readonly gearRatio: number | null;
  readonly efficiency: number | null;
  readonly rotorInertia: number | null;
  readonly gearInertia: number | null;
  readonly ratedTorque: number | null;
  readonly peakTorque: number | null;
  readonly maxSpeed: number | null;
  readonly encoderCounts: number | null;
  readonly lead: number | null;
  readonly reflectedInertia: number;
  readonly ratedEffort: number;
  readonly peakEffort: number;
  readonly maxJointSpeed: number;
  readonly jointStiffness: number;
  readonly encoderStep: number;
  /** Five-bar sheets: the earlier names of ratedEffort and peakEffort, N·m. */
  readonly ratedJointTorque?: number;
  readonly peakJointTorque?: number;
}

export interface HomePoseSheet {
  readonly source: 'task-region-centre' | 'usable-workspace-centre';
  readonly endPoint: PlanePoint;
  /** Platform orientation φ, rad (null for 2-DOF). */
  readonly phi: number | null;
  /** Every joint of the body tree (MJCF names, qpos order): rad for hinges, m for slides. */
  readonly joints: Readonly<Record<string, number>>;
  /** Actuated joint positions by actuator (rad or m). */
  readonly actuated: Readonly<Record<string, number>>;
  /** Absolute rod angles β_i, rad in (−π, π]. */
  readonly rodAngles: Readonly<Record<string, number>>;
  readonly proximalJoints: Readonly<Record<string, PlanePoint>>;
  readonly distalJoints: Readonly<Record<string, PlanePoint>>;
  /** Largest gap of the loop closures recomputed forward along the tree from `joints`, m. */
  readonly loopClosureError: number;
  /** Static holding efforts τ_g by actuator (N·m or N). */
  readonly holdingEfforts: Readonly<Record<string, number>>;
  readonly inverseCondition: number;
  readonly mechanismSine: number;
  // Five-bar sheets only: the earlier names (see the file comment).
  readonly theta_1?: number;
  readonly theta_2?: number;
  readonly elbow_1?: number;
  readonly elbow_2?: number;
  readonly endJoint?: number;
  readonly beta_1?: number;
  readonly beta_2?: number;
  readonly elbowPoint_1?: PlanePoint;
  readonly elbowPoint_2?: PlanePoint;
  readonly gravityTorque_1?: number;
  readonly gravityTorque_2?: number;
  readonly detA?: number;
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
  readonly architecture: string;
  readonly comparison: { readonly architectures: readonly string[]; readonly chosen: string } | null;
  readonly dof: 2 | 3;
  readonly actuators: Readonly<Record<string, ActuatorSheet>>;
  readonly geometry: Readonly<Record<string, number>>;
  readonly geometryUnits: Readonly<Record<string, 'm' | 'rad'>>;
  /** Per ground body (leg): its base point and, for a slide on the ground, the rail direction. */
  readonly bases: Readonly<Record<string, { readonly point: PlanePoint; readonly railDirection: PlanePoint | null }>>;
  /** 3-DOF: the platform pins B_i in the platform frame (origin P, x axis at φ), m; null for 2-DOF. */
  readonly platformPins: Readonly<Record<string, PlanePoint>> | null;
  readonly designVariables: Readonly<Record<string, number | string>>;
  readonly workingMode: string;
  readonly assemblyMode: string;
  readonly orientation: { readonly phi0: number; readonly range: number; readonly step: number; readonly characteristicLength: number; readonly characteristicLengthSetting: string } | null;
  /** Actuated joint ranges by actuator (rad or m), null = unlimited (five-bar: also by theta_i). */
  readonly jointLimits: Readonly<Record<string, JointRange | null>>;
  readonly gravity: PlanePoint;
  readonly homePose: HomePoseSheet;
  readonly bodies: Readonly<Record<string, BodySheet>>;
  readonly movingMass: number;
  readonly payloadMass: number;
  readonly drives: Readonly<Record<string, DriveSheet>> | null;
  readonly metrics: Readonly<Record<string, number | null>>;
  readonly constraints: Readonly<Record<string, number | null>>;
  readonly feasible: boolean;
  readonly violation: number;
  readonly provenance: ProvenanceSheet;
  /** Five-bar sheets only: the pivots A_1, A_2 (= bases.leg_i.point). */
  readonly pivot_1?: PlanePoint;
  readonly pivot_2?: PlanePoint;
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

/** A stored design ready to be written: its sheet and its MJCF model. */
export interface CandidateExport {
  readonly sheet: CandidateSheet;
  mjcf(): string;
  /** What the sheet and the model were built from, and the home pose of the model's keyframe (for the MJCF check). */
  readonly built?: BuiltDesign;
  readonly home?: { readonly x: number; readonly y: number; readonly phi: number };
}

/** What a sheet is built from: the member study, architecture, model and resolved design. */
export interface BuiltDesign {
  readonly study: Study;
  readonly architecture: PlanarArchitecture<ArchitectureModelBase>;
  readonly model: ArchitectureModelBase;
  readonly resolved: ResolvedDesign;
}

/**
 * Home point of a design: the task region's centre at φ_0 when assembled there, else the node deepest
 * inside the largest usable region of the study's grid (usable thresholds of the study).
 */
export function architectureHomePoint(
  architecture: PlanarArchitecture<ArchitectureModelBase>,
  model: ArchitectureModelBase,
  study: Study,
): { point: PlanePoint; phi: number; source: HomePoseSheet['source'] } {
  const phi = studyPhi0(study, model.dof);
  const pose = architecture.createPose();
  const region = study.task.region;
  if (region && architecture.solvePose(model, pose, region.centreX, region.centreY, phi) === PoseStatus.Assembled) {
    return { point: { x: region.centreX, y: region.centreY }, phi, source: 'task-region-centre' };
  }
  const window = studyGridBox(architecture, model, study, phi);
  const fields = sampleArchitectureMapFields(architecture, model, {
    usable: { minInverseCondition: study.evaluation.minInverseCondition, minTransmissionAngle: study.evaluation.minTransmissionAngle },
    taskRegion: null,
    phi0: phi,
    cells: study.evaluation.gridCells,
    ...(window ? { window } : {}),
  });
  const node = fields ? deepestUsableNode(fields) : null;
  if (!node || architecture.solvePose(model, pose, node[0], node[1], phi) !== PoseStatus.Assembled) {
    throw new ExportError('the design has no usable workspace: no pose to export');
  }
  return { point: { x: node[0], y: node[1] }, phi, source: 'usable-workspace-centre' };
}

function driveSheet(drive: DriveSpec, kind: ActuatorKind, atJoint: DriveAtJoint): DriveSheet {
  const linear = drive.linear !== undefined;
  return {
    label: drive.label,
    kind,
    transmission: linear ? 'linear' : kind === 'revolute' ? 'gearbox' : 'screw',
    units: actuatorUnits(kind),
    gearRatio: linear ? null : drive.gearRatio,
    efficiency: linear ? null : drive.efficiency,
    rotorInertia: linear ? null : drive.rotorInertia,
    gearInertia: linear ? null : drive.gearInertia,
    ratedTorque: linear ? null : drive.ratedTorque,
    peakTorque: linear ? null : drive.peakTorque,
    maxSpeed: linear ? null : drive.maxSpeed,
    encoderCounts: linear ? null : drive.encoderCounts,
    lead: drive.lead ?? null,
    reflectedInertia: atJoint.reflectedInertia,
    ratedEffort: atJoint.ratedEffort,
    peakEffort: atJoint.peakEffort,
    maxJointSpeed: atJoint.maxSpeed,
    jointStiffness: atJoint.jointStiffness,
    encoderStep: atJoint.encoderStep,
  };
}

/** What a body is made of in the study's words: its link section's label (crank_i, rod_i) and the hub and payload masses. */
function partsText(name: string, parts: string, study: Study): string {
  const link = /^(crank|rod)_(\d+)$/.exec(name);
  if (link) {
    const section = (link[1] === 'crank' ? study.links.cranks : study.links.rods)[Number(link[2]) - 1];
    const label = section ? ` (${section.label})` : '';
    return link[1] === 'crank' ? `uniform bar${label} plus elbow hub ${study.elbowHubMass} kg at the crank end` : `uniform bar${label}`;
  }
  if (name === 'end_mass') return `point mass at the end point: end hub ${study.endHubMass} kg plus payload ${study.payloadMass} kg (carried on the tip of rod 1)`;
  return parts;
}

/** Body sheets walked from the body tree at joint coordinates `joints`. */
function bodySheets(tree: BodyTree, joints: ArrayLike<number>, study: Study): Record<string, BodySheet> {
  const frames = bodyFrames(tree, joints);
  const out: Record<string, BodySheet> = {};
  for (const body of tree.bodies) {
    const [cx, cy] = pointInFrame(frames.get(body.name)!, body.centreOfMass);
    // The sheet's earlier name of the five-bar's and 2-DOF end body.
    const key = body.name === 'end_mass' ? 'endMass' : body.name;
    out[key] = {
      attachedTo: body.joint ? body.joint.name : (body.parent ?? 'ground'),
      length: body.length,
      mass: body.mass,
      centreOfMass: body.shape === 'bar' ? Math.abs(body.centreOfMass[0]) : 0,
      inertiaAboutCom: body.inertiaAboutCom,
      centreOfMassAtHome: { x: cx, y: cy },
      parts: partsText(body.name, body.parts, study),
    };
  }
  return out;
}

/** Home-pose joints by actuator and leg, from the tree's joint coordinates and the solved pose. */
function homePoseSheet(
  tree: BodyTree,
  joints: Float64Array,
  pose: ArchitecturePose,
  home: { point: PlanePoint; phi: number; source: HomePoseSheet['source'] },
): HomePoseSheet {
  const n = pose.dof;
  const named: Record<string, number> = {};
  const actuated: Record<string, number> = {};
  let k = 0;
  for (const body of tree.bodies) {
    if (!body.joint) continue;
    named[body.joint.name] = joints[k]!;
    if (body.joint.actuator !== null) actuated[`actuator_${body.joint.actuator + 1}`] = joints[k]!;
    k++;
  }
  const perLeg = (f: (i: number) => [string, unknown]) => Object.fromEntries(Array.from({ length: n }, (_, i) => f(i)));
  return {
    source: home.source,
    endPoint: home.point,
    phi: n === 3 ? home.phi : null,
    joints: named,
    actuated: Object.fromEntries(Object.entries(actuated).sort(([a], [b]) => a.localeCompare(b))),
    rodAngles: perLeg((i) => [`beta_${i + 1}`, wrapAngle(Math.atan2(pose.rodDirection[2 * i + 1]!, pose.rodDirection[2 * i]!))]) as Record<string, number>,
    proximalJoints: perLeg((i) => [`leg_${i + 1}`, { x: pose.proximalJoint[2 * i]!, y: pose.proximalJoint[2 * i + 1]! }]) as Record<string, PlanePoint>,
    distalJoints: perLeg((i) => [`leg_${i + 1}`, { x: pose.distalJoint[2 * i]!, y: pose.distalJoint[2 * i + 1]! }]) as Record<string, PlanePoint>,
    loopClosureError: loopClosureGap(tree, joints),
    holdingEfforts: perLeg((i) => [`actuator_${i + 1}`, pose.tauG[i]! + 0]) as Record<string, number>,
    inverseCondition: pose.inverseCondition,
    mechanismSine: pose.mechanismSine,
  };
}

/** The five-bar's names of the earlier layout, added to a five-bar sheet (the same numbers). */
function withFiveBarNames(sheet: CandidateSheet, detA: number): CandidateSheet {
  const h = sheet.homePose;
  const j = h.joints;
  const theta1 = j['theta_1']!;
  const theta2 = j['theta_2']!;
  const beta1 = theta1 + j['elbow_1']!;
  const beta2 = theta2 + j['elbow_2']!;
  const drives = sheet.drives
    ? Object.fromEntries(Object.entries(sheet.drives).map(([k, d]) => [k, { ...d, ratedJointTorque: d.ratedEffort, peakJointTorque: d.peakEffort }]))
    : null;
  return {
    ...sheet,
    pivot_1: sheet.bases['leg_1']!.point,
    pivot_2: sheet.bases['leg_2']!.point,
    jointLimits: { theta_1: sheet.jointLimits['actuator_1'] ?? null, theta_2: sheet.jointLimits['actuator_2'] ?? null, ...sheet.jointLimits },
    homePose: {
      ...h,
      theta_1: theta1,
      theta_2: theta2,
      elbow_1: j['elbow_1']!,
      elbow_2: j['elbow_2']!,
      endJoint: wrapAngle(beta2 - beta1),
      beta_1: wrapAngle(beta1),
      beta_2: wrapAngle(beta2),
      elbowPoint_1: h.proximalJoints['leg_1']!,
      elbowPoint_2: h.proximalJoints['leg_2']!,
      gravityTorque_1: h.holdingEfforts['actuator_1']!,
      gravityTorque_2: h.holdingEfforts['actuator_2']!,
      detA,
    },
    drives,
  };
}

/** The ground bodies' base points (and rail directions of ground slides), by leg. */
function basesOf(tree: BodyTree): CandidateSheet['bases'] {
  const roots = tree.bodies.filter((b) => b.parent === null);
  return Object.fromEntries(roots.map((b, k) => [
    `leg_${k + 1}`,
    { point: { x: b.origin[0], y: b.origin[1] }, railDirection: b.joint?.kind === 'prismatic' ? { x: b.joint.axis[0], y: b.joint.axis[1] } : null },
  ]));
}

/** 3-DOF: platform pins in the platform frame (origin P, x at φ), from the plate body's sites relative to its centre. */
function platformPinsOf(tree: BodyTree): CandidateSheet['platformPins'] {
  const plate = tree.bodies.find((b) => b.shape === 'plate');
  const centre = plate?.sites.find((s) => s.name === 'centre');
  if (!plate || !centre) return null;
  return Object.fromEntries(plate.sites.filter((s) => s !== centre).map((s) => [s.name, { x: s.at[0] - centre.at[0], y: s.at[1] - centre.at[1] }]));
}

/** The sheet of one design (any architecture) and its home pose. */
export function designSheet(
  study: Study,
  record: CandidateRecord,
  provenance: ProvenanceSheet,
  built: BuiltDesign,
): { sheet: CandidateSheet; home: { x: number; y: number; phi: number } } {
  const { architecture, model, resolved } = built;
  const member = built.study;
  const n = model.dof;
  const home = architectureHomePoint(architecture, model, member);
  const pose = architecture.createPose();
  const status = architecture.solvePose(model, pose, home.point.x, home.point.y, home.phi);
  if (status !== PoseStatus.Assembled) throw new ExportError(`the design cannot be assembled at (${home.point.x}, ${home.point.y}) m${n === 3 ? `, φ ${home.phi} rad` : ''}`);
  architecture.poseDynamics(model, pose);
  const tree = architecture.bodyTree(model);
  const joints = architecture.bodyTreeJoints(model, pose);

  const actuators: Record<string, ActuatorSheet> = {};
  for (const body of tree.bodies) {
    const j = body.joint;
    if (j && j.actuator !== null) actuators[`actuator_${j.actuator + 1}`] = { joint: j.name, kind: j.kind, units: actuatorUnits(j.kind) };
  }
  const jointLimits: Record<string, JointRange | null> = {};
  for (const body of tree.bodies) if (body.joint?.actuator != null) jointLimits[`actuator_${body.joint.actuator + 1}`] = body.joint.range;
  const geometry: Record<string, number> = {};
  const geometryUnits: Record<string, 'm' | 'rad'> = {};
  for (const p of architecture.parameters) {
    geometry[p.name] = resolved.geometry[p.name]!;
    geometryUnits[p.name] = p.kind === 'angle' ? 'rad' : 'm';
  }
  const metrics: Record<string, number | null> = {};
  for (const m of METRICS) metrics[m.name] = record.metrics[m.name] ?? null;
  let drives: Record<string, DriveSheet> | null = null;
  if (resolved.drives && model.drives) {
    drives = {};
    for (let i = 0; i < n; i++) drives[`actuator_${i + 1}`] = driveSheet(resolved.drives[i]!, model.actuators[i]!, model.drives[i]!);
  }
  const o = member.orientation;
  const sheet: CandidateSheet = {
    format: CANDIDATE_FORMAT,
    safetyNote: SAFETY_NOTE,
    id: record.id,
    architecture: architecture.name,
    comparison: study.members ? { architectures: study.members.map((s) => s.architecture), chosen: architecture.name } : null,
    dof: n,
    actuators: Object.fromEntries(Object.entries(actuators).sort(([a], [b]) => a.localeCompare(b))),
    geometry,
    geometryUnits,
    bases: basesOf(tree),
    platformPins: n === 3 ? platformPinsOf(tree) : null,
    designVariables: { ...record.variables },
    workingMode: resolved.workingMode,
    assemblyMode: member.assemblyMode,
    orientation: n === 3
      ? {
          phi0: o?.phi0 ?? 0,
          range: o?.range ?? 0,
          step: o?.step ?? 0,
          characteristicLength: model.characteristicLength,
          characteristicLengthSetting: o === null || o === undefined ? 'platform' : String(o.characteristicLength),
        }
      : null,
    jointLimits: Object.fromEntries(Object.entries(jointLimits).sort(([a], [b]) => a.localeCompare(b))),
    gravity: { x: tree.gravity[0], y: tree.gravity[1] },
    homePose: homePoseSheet(tree, joints, pose, home),
    bodies: bodySheets(tree, joints, member),
    movingMass: architecture.movingMass(model),
    payloadMass: member.payloadMass,
    drives,
    metrics,
    constraints: { ...record.constraints },
    feasible: record.feasible,
    violation: record.violation,
    provenance,
  };
  return { sheet: architecture.name === 'five-bar' ? withFiveBarNames(sheet, pose.detA) : sheet, home: { x: home.point.x, y: home.point.y, phi: home.phi } };
}

/** Sheet and MJCF writer of one stored design of any study (a comparison design by its chosen member). */
export function candidateExport(study: Study, record: CandidateRecord, provenance: ProvenanceSheet): CandidateExport {
  const evaluator = new Evaluator(study);
  const built = evaluator.architectureDesign(designFromValues(evaluator.variables, record.variables, true));
  const { sheet, home } = designSheet(study, record, provenance, built);
  return {
    sheet,
    built,
    home,
    mjcf: () =>
      architectureMjcf(built.architecture, built.model, home, {
        modelName: `loopsmith candidate ${sheet.id}`,
        description: [
          `Candidate ${sheet.id} of run ${provenance.runId} (${provenance.runKind}), study "${provenance.studyName}" (study file sha256 ${provenance.studyFileHash}), database ${provenance.database}, loopsmith ${provenance.loopsmithVersion}.`,
          `Working mode ${sheet.workingMode}, assembly mode ${sheet.assemblyMode}.`,
          ...(sheet.comparison ? [`Comparison study: member ${sheet.comparison.chosen} of ${sheet.comparison.architectures.join(', ')}.`] : []),
        ],
        safetyNote: SAFETY_NOTE,
      }),
  };
}

/** The candidate sheet of one stored design of any study. */
export function candidateSheet(study: Study, record: CandidateRecord, provenance: ProvenanceSheet): CandidateSheet {
  return candidateExport(study, record, provenance).sheet;
}

/** The loopsmith version, from the package's own package.json. */
export { loopsmithVersion } from '../core/version.js';

/** JSON text of a sheet: infinite numbers written as the strings "Infinity" / "-Infinity". */
export function sheetToJson(sheet: object): string {
  return JSON.stringify(
    sheet,
    (_key, value: unknown) => (typeof value === 'number' && !Number.isFinite(value) && !Number.isNaN(value) ? (value > 0 ? 'Infinity' : '-Infinity') : value),
    2,
  ) + '\n';
}
