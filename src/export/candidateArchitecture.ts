/**
 * Candidate sheet of a stored design of any architecture (2-PRR, 3-RRR, 3-PRR, and any member of a
 * comparison study). The five-bar keeps its own sheet (candidate.ts, unchanged); a comparison
 * design whose chosen member is the five-bar gets that sheet with the member's study.
 *
 * The model is the one the evaluation uses (`Evaluator.architectureDesign`): the leg engine's
 * bodies (rods as uniform bars, cranks with their elbow hub lumped, slider carriages as translating
 * masses, the platform with its inertia about P, the payload as a point mass at P). The home pose is
 * the task region's centre at φ_0 when the design is assembled there, else the node deepest inside the
 * largest usable region on the study's own grid (the region the engine takes without a task region).
 * SI units; per actuator, efforts are N·m (cranks) or N (sliders), positions rad or m.
 */
import type { LeggedModel } from '../architectures/legged.js';
import {
  actuatorUnits,
  PoseStatus,
  type ActuatorKind,
  type ActuatorUnits,
  type ArchitectureModelBase,
  type ArchitecturePose,
  type JointRange,
  type PlanarArchitecture,
} from '../architectures/types.js';
import { designFromValues, designToValues, designVariables, memberDesign, type ResolvedDesign } from '../mechanics/designSpace.js';
import { Evaluator } from '../mechanics/evaluate.js';
import { METRICS } from '../mechanics/metrics.js';
import { deepestUsableNode, sampleArchitectureMapFields } from '../report/architectureMap.js';
import { studyGridBox, studyPhi0 } from '../report/designMap.js';
import type { DriveSpec, Study } from '../study/types.js';
import {
  CANDIDATE_FORMAT,
  candidateSheet,
  ExportError,
  SAFETY_NOTE,
  type CandidateRecord,
  type CandidateSheet,
  type PlanePoint,
  type ProvenanceSheet,
} from './candidate.js';
import {
  architectureJointPositions,
  architectureMjcf,
  architectureMjcfJoints,
  crankMassProperties,
  isLeggedModel,
} from './mjcfArchitecture.js';
import { toMjcf } from './mjcf.js';

/** One actuator of the design: its joint in the exported chain, kind and units. */
export interface ActuatorSheet {
  /** MJCF joint name: `theta_i` (crank) or `slide_i` (slider). */
  readonly joint: string;
  readonly kind: ActuatorKind;
  readonly units: ActuatorUnits;
}

/** Mass properties of one rigid body (planar; see candidate.ts BodySheet). */
export interface ArchitectureBodySheet {
  readonly attachedTo: string;
  /** Link length from its joint to its far pin, m (0 for carriages, the platform and point masses). */
  readonly length: number;
  readonly mass: number;
  /** Centre of mass along the link from the body's joint, m (0 for carriages and point masses; the platform: at P). */
  readonly centreOfMass: number;
  /** About the centre of mass, about the plane normal, kg·m² (a carriage does not turn: 0). */
  readonly inertiaAboutCom: number;
  readonly centreOfMassAtHome: PlanePoint;
  readonly parts: string;
}

/** A drive referred to its joint, with the study data it came from. Units per `units`. */
export interface ArchitectureDriveSheet {
  readonly label: string;
  readonly kind: ActuatorKind;
  /** gearbox (crank), screw (slider through a screw or belt of lead `lead`), linear (figures at the slider). */
  readonly transmission: 'gearbox' | 'screw' | 'linear';
  readonly units: ActuatorUnits;
  /** Motor-side study data (null for a linear drive): ratio, η, kg·m², N·m, rad/s, counts per motor turn; lead m per turn. */
  readonly gearRatio: number | null;
  readonly efficiency: number | null;
  readonly rotorInertia: number | null;
  readonly gearInertia: number | null;
  readonly ratedTorque: number | null;
  readonly peakTorque: number | null;
  readonly maxSpeed: number | null;
  readonly encoderCounts: number | null;
  readonly lead: number | null;
  /** At the joint: reflected inertia (kg·m² or kg), rated and peak effort (N·m or N), speed (rad/s or m/s), stiffness (N·m/rad or N/m), encoder step (rad or m). */
  readonly reflectedInertia: number;
  readonly ratedEffort: number;
  readonly peakEffort: number;
  readonly maxJointSpeed: number;
  readonly jointStiffness: number;
  readonly encoderStep: number;
}

export interface ArchitectureHomePoseSheet {
  readonly source: 'task-region-centre' | 'usable-workspace-centre';
  /** P, m, and the platform orientation φ, rad (null for 2-DOF). */
  readonly endPoint: PlanePoint;
  readonly phi: number | null;
  /** Every joint of the exported chain (MJCF names, qpos order): rad for hinges, m for slides. */
  readonly joints: Readonly<Record<string, number>>;
  /** Actuated joint positions q_i (rad or m) by actuator. */
  readonly actuated: Readonly<Record<string, number>>;
  /** Absolute rod angles β_i, rad in (−π, π]. */
  readonly rodAngles: Readonly<Record<string, number>>;
  /** Proximal joints (elbow C_i or slider joint S_i) and distal joints (P or platform pin B_i), m. */
  readonly proximalJoints: Readonly<Record<string, PlanePoint>>;
  readonly distalJoints: Readonly<Record<string, PlanePoint>>;
  /** Largest gap of the loop closures recomputed forward from the joint coordinates, m. */
  readonly loopClosureError: number;
  /** Static holding efforts τ_g per actuator (N·m or N). */
  readonly holdingEfforts: Readonly<Record<string, number>>;
  readonly inverseCondition: number;
  /** det A_h / Π‖rows‖ ∈ [−1, 1]. */
  readonly mechanismSine: number;
}

export interface ArchitectureCandidateSheet {
  readonly format: typeof CANDIDATE_FORMAT;
  readonly safetyNote: string;
  readonly id: number;
  readonly architecture: '2-prr' | '3-rrr' | '3-prr';
  /** For a comparison study: its architectures and the one this design chose; null otherwise. */
  readonly comparison: { readonly architectures: readonly string[]; readonly chosen: string } | null;
  readonly dof: 2 | 3;
  readonly actuators: Readonly<Record<string, ActuatorSheet>>;
  /** Every geometry parameter (ties resolved): m for lengths, rad for angles (see `geometryUnits`). */
  readonly geometry: Readonly<Record<string, number>>;
  readonly geometryUnits: Readonly<Record<string, 'm' | 'rad'>>;
  /** Per leg: the base point (crank pivot A_i or rail origin O_i), m; for sliders the rail direction too. */
  readonly bases: Readonly<Record<string, { readonly point: PlanePoint; readonly railDirection: PlanePoint | null }>>;
  /** 3-DOF: the platform pins B_i in the platform frame (origin P, x axis at φ), m; null for 2-DOF. */
  readonly platformPins: Readonly<Record<string, PlanePoint>> | null;
  readonly designVariables: Readonly<Record<string, number | string>>;
  readonly workingMode: string;
  readonly assemblyMode: string;
  /** 3-DOF orientation settings (rad; characteristic length m, the one the model uses); null for 2-DOF. */
  readonly orientation: { readonly phi0: number; readonly range: number; readonly step: number; readonly characteristicLength: number; readonly characteristicLengthSetting: string } | null;
  /** Actuated joint ranges by actuator (rad or m), null = unlimited. */
  readonly jointLimits: Readonly<Record<string, JointRange | null>>;
  readonly gravity: PlanePoint;
  readonly homePose: ArchitectureHomePoseSheet;
  readonly bodies: Readonly<Record<string, ArchitectureBodySheet>>;
  readonly movingMass: number;
  readonly payloadMass: number;
  readonly drives: Readonly<Record<string, ArchitectureDriveSheet>> | null;
  readonly metrics: Readonly<Record<string, number | null>>;
  readonly constraints: Readonly<Record<string, number | null>>;
  readonly feasible: boolean;
  readonly violation: number;
  readonly provenance: ProvenanceSheet;
}

/** A sheet of either layout (`architecture` tells which). */
export type AnyCandidateSheet = CandidateSheet | ArchitectureCandidateSheet;

/** A stored design ready to be written: its sheet and its MJCF model. */
export interface CandidateExport {
  readonly sheet: AnyCandidateSheet;
  /** The MJCF text (five-bar: `toMjcf(sheet)`; others: `architectureMjcf` at the sheet's home pose). */
  mjcf(): string;
}

/** A comparison design whose member is the five-bar, described with the member's study (as a five-bar sheet). */
function fiveBarMemberSheet(study: Study, record: CandidateRecord, provenance: ProvenanceSheet): CandidateSheet {
  const variables = designVariables(study);
  const m = memberDesign(study, variables, designFromValues(variables, record.variables, true));
  const sheet = candidateSheet(m.study, { ...record, variables: designToValues(m.variables, m.design) }, provenance);
  return { ...sheet, designVariables: { ...record.variables }, comparison: { architectures: study.members!.map((s) => s.architecture), chosen: 'five-bar' } };
}

/**
 * Home point of a design: the task region's centre at φ_0 when assembled there, else the node deepest
 * inside the largest usable region of the study's grid (usable thresholds of the study).
 */
export function architectureHomePoint(
  architecture: PlanarArchitecture<ArchitectureModelBase>,
  model: ArchitectureModelBase,
  study: Study,
): { point: PlanePoint; phi: number; source: ArchitectureHomePoseSheet['source'] } {
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

function wrap(angle: number): number {
  const a = angle % (2 * Math.PI);
  return a <= -Math.PI ? a + 2 * Math.PI : a > Math.PI ? a - 2 * Math.PI : a;
}

/** Largest loop-closure gap recomputed forward along each serial arm from the joint coordinates, m. */
function loopClosureGap(model: LeggedModel, joints: Float64Array): number {
  const n = model.dof;
  const tips: [number, number][] = [];
  const rodAngles: number[] = [];
  let k = 0;
  let platformAngle = 0;
  for (let i = 0; i < n; i++) {
    let px: number;
    let py: number;
    let beta: number;
    if (model.actuators[i] === 'revolute') {
      const theta = joints[k++]!;
      beta = theta + joints[k++]!;
      px = model.baseX[i]! + model.crank[i]! * Math.cos(theta);
      py = model.baseY[i]! + model.crank[i]! * Math.sin(theta);
    } else {
      const q = joints[k++]!;
      beta = joints[k++]!;
      px = model.baseX[i]! + q * model.railX[i]!;
      py = model.baseY[i]! + q * model.railY[i]!;
    }
    if (i === 0 && n === 3) platformAngle = beta + joints[k++]!;
    rodAngles.push(beta);
    tips.push([px + model.rod[i]! * Math.cos(beta), py + model.rod[i]! * Math.sin(beta)]);
  }
  if (n === 2) return Math.hypot(tips[0]![0] - tips[1]![0], tips[0]![1] - tips[1]![1]);
  const c = Math.cos(platformAngle);
  const s = Math.sin(platformAngle);
  let gap = 0;
  for (let j = 1; j < 3; j++) {
    const dx = model.platformX[j]! - model.platformX[0]!;
    const dy = model.platformY[j]! - model.platformY[0]!;
    const pinX = tips[0]![0] + c * dx - s * dy;
    const pinY = tips[0]![1] + s * dx + c * dy;
    gap = Math.max(gap, Math.hypot(tips[j]![0] - pinX, tips[j]![1] - pinY));
  }
  return gap;
}

function driveSheet(drive: DriveSpec, kind: ActuatorKind, atJoint: NonNullable<ArchitectureModelBase['drives']>[number]): ArchitectureDriveSheet {
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

function bodySheets(model: LeggedModel, pose: ArchitecturePose, study: Study): Record<string, ArchitectureBodySheet> {
  const bodies: Record<string, ArchitectureBodySheet> = {};
  const n = model.dof;
  const P: PlanePoint = { x: pose.x, y: pose.y };
  for (let i = 0; i < n; i++) {
    const leg = i + 1;
    const proximal = { x: pose.proximalJoint[2 * i]!, y: pose.proximalJoint[2 * i + 1]! };
    if (model.actuators[i] === 'revolute') {
      const crank = crankMassProperties(model, i);
      const ex = pose.actuatorDirection[2 * i]!;
      const ey = pose.actuatorDirection[2 * i + 1]!;
      bodies[`crank_${leg}`] = {
        attachedTo: `theta_${leg}`,
        length: model.crank[i]!,
        mass: crank.mass,
        centreOfMass: crank.centreOfMass,
        inertiaAboutCom: crank.inertiaAboutCom,
        centreOfMassAtHome: { x: model.baseX[i]! + crank.centreOfMass * ex, y: model.baseY[i]! + crank.centreOfMass * ey },
        parts: `uniform bar (${study.links.cranks[i]?.label ?? 'crank'}) plus elbow hub ${study.elbowHubMass} kg at the crank end`,
      };
    } else {
      bodies[`slider_${leg}`] = {
        attachedTo: `slide_${leg}`,
        length: 0,
        mass: model.proximalInertia[i]!,
        centreOfMass: 0,
        inertiaAboutCom: 0,
        centreOfMassAtHome: proximal,
        parts: `slider carriage ${model.proximalInertia[i]!} kg, translating along rail ${leg} (it does not turn)`,
      };
    }
    const ux = pose.rodDirection[2 * i]!;
    const uy = pose.rodDirection[2 * i + 1]!;
    const com = model.rodComDistance[i]!;
    bodies[`rod_${leg}`] = {
      attachedTo: model.actuators[i] === 'revolute' ? `elbow_${leg}` : `beta_${leg}`,
      length: model.rod[i]!,
      mass: model.rodMass[i]!,
      centreOfMass: com,
      inertiaAboutCom: model.rodInertiaAboutCom[i]!,
      centreOfMassAtHome: { x: proximal.x + com * ux, y: proximal.y + com * uy },
      parts: `uniform bar (${study.links.rods[i]?.label ?? 'rod'})`,
    };
  }
  if (n === 2) {
    bodies['endMass'] = {
      attachedTo: 'rod_1',
      length: 0,
      mass: model.platformMass + model.payloadMass,
      centreOfMass: 0,
      inertiaAboutCom: 0,
      centreOfMassAtHome: P,
      parts: `point mass at the end point: end hub ${model.platformMass} kg plus payload ${model.payloadMass} kg (carried on the tip of rod 1)`,
    };
  } else {
    bodies['platform'] = {
      attachedTo: 'platform_joint',
      length: 0,
      mass: model.platformMass,
      centreOfMass: 0,
      inertiaAboutCom: model.platformInertia,
      centreOfMassAtHome: P,
      parts: 'rigid platform, centre of mass at its centre P, inertia about P',
    };
    bodies['payload'] = {
      attachedTo: 'platform',
      length: 0,
      mass: model.payloadMass,
      centreOfMass: 0,
      inertiaAboutCom: 0,
      centreOfMassAtHome: P,
      parts: `payload, point mass ${model.payloadMass} kg at P`,
    };
  }
  return bodies;
}

function architectureSheet(
  study: Study,
  record: CandidateRecord,
  provenance: ProvenanceSheet,
  built: { study: Study; architecture: PlanarArchitecture<ArchitectureModelBase>; model: ArchitectureModelBase; resolved: ResolvedDesign },
): { sheet: ArchitectureCandidateSheet; home: { x: number; y: number; phi: number } } {
  const { architecture, model, resolved } = built;
  const member = built.study;
  if (!isLeggedModel(model)) throw new Error(`candidate sheet: ${model.architecture} is not a leg-engine model`);
  const n = model.dof;
  const { point, phi, source } = architectureHomePoint(architecture, model, member);
  const pose = architecture.createPose();
  const status = architecture.solvePose(model, pose, point.x, point.y, phi);
  if (status !== PoseStatus.Assembled) throw new ExportError(`the design cannot be assembled at (${point.x}, ${point.y}) m${n === 3 ? `, φ ${phi} rad` : ''}`);
  architecture.poseDynamics(model, pose);
  const jointValues = architectureJointPositions(model, pose);
  const joints: Record<string, number> = {};
  architectureMjcfJoints(model).forEach((j, k) => { joints[j.name] = jointValues[k]!; });

  const actuators: Record<string, ActuatorSheet> = {};
  const actuated: Record<string, number> = {};
  const rodAngles: Record<string, number> = {};
  const proximalJoints: Record<string, PlanePoint> = {};
  const distalJoints: Record<string, PlanePoint> = {};
  const holdingEfforts: Record<string, number> = {};
  const jointLimits: Record<string, JointRange | null> = {};
  const bases: Record<string, { point: PlanePoint; railDirection: PlanePoint | null }> = {};
  for (let i = 0; i < n; i++) {
    const a = `actuator_${i + 1}`;
    const kind = model.actuators[i]!;
    const jointName = kind === 'revolute' ? `theta_${i + 1}` : `slide_${i + 1}`;
    actuators[a] = { joint: jointName, kind, units: actuatorUnits(kind) };
    actuated[a] = joints[jointName]!;
    rodAngles[`beta_${i + 1}`] = wrap(Math.atan2(pose.rodDirection[2 * i + 1]!, pose.rodDirection[2 * i]!));
    proximalJoints[`leg_${i + 1}`] = { x: pose.proximalJoint[2 * i]!, y: pose.proximalJoint[2 * i + 1]! };
    distalJoints[`leg_${i + 1}`] = { x: pose.distalJoint[2 * i]!, y: pose.distalJoint[2 * i + 1]! };
    holdingEfforts[a] = pose.tauG[i]! + 0;
    jointLimits[a] = model.jointLimits[i] ?? null;
    bases[`leg_${i + 1}`] = { point: { x: model.baseX[i]!, y: model.baseY[i]! }, railDirection: kind === 'prismatic' ? { x: model.railX[i]!, y: model.railY[i]! } : null };
  }
  const geometry: Record<string, number> = {};
  const geometryUnits: Record<string, 'm' | 'rad'> = {};
  for (const p of architecture.parameters) {
    geometry[p.name] = resolved.geometry[p.name]!;
    geometryUnits[p.name] = p.kind === 'angle' ? 'rad' : 'm';
  }
  const metrics: Record<string, number | null> = {};
  for (const m of METRICS) metrics[m.name] = record.metrics[m.name] ?? null;
  let drives: Record<string, ArchitectureDriveSheet> | null = null;
  if (resolved.drives && model.drives) {
    drives = {};
    for (let i = 0; i < n; i++) drives[`actuator_${i + 1}`] = driveSheet(resolved.drives[i]!, model.actuators[i]!, model.drives[i]!);
  }
  const o = member.orientation;
  const sheet: ArchitectureCandidateSheet = {
    format: CANDIDATE_FORMAT,
    safetyNote: SAFETY_NOTE,
    id: record.id,
    architecture: model.architecture as ArchitectureCandidateSheet['architecture'],
    comparison: study.members ? { architectures: study.members.map((s) => s.architecture), chosen: model.architecture } : null,
    dof: n,
    actuators,
    geometry,
    geometryUnits,
    bases,
    platformPins: n === 3 ? Object.fromEntries([0, 1, 2].map((k) => [`pin_${k + 1}`, { x: model.platformX[k]!, y: model.platformY[k]! }])) : null,
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
    jointLimits,
    gravity: { x: model.gravity[0], y: model.gravity[1] },
    homePose: {
      source,
      endPoint: point,
      phi: n === 3 ? phi : null,
      joints,
      actuated,
      rodAngles,
      proximalJoints,
      distalJoints,
      loopClosureError: loopClosureGap(model, jointValues),
      holdingEfforts,
      inverseCondition: pose.inverseCondition,
      mechanismSine: pose.mechanismSine,
    },
    bodies: bodySheets(model, pose, member),
    movingMass: architecture.movingMass(model),
    payloadMass: model.payloadMass,
    drives,
    metrics,
    constraints: { ...record.constraints },
    feasible: record.feasible,
    violation: record.violation,
    provenance,
  };
  return { sheet, home: { x: point.x, y: point.y, phi } };
}

/**
 * Sheet and MJCF writer of one stored design of any study: the five-bar sheet for five-bar studies
 * (and five-bar members of a comparison), the architecture sheet otherwise.
 */
export function candidateExport(study: Study, record: CandidateRecord, provenance: ProvenanceSheet): CandidateExport {
  if (!study.members && study.architecture === 'five-bar') {
    const sheet = candidateSheet(study, record, provenance);
    return { sheet, mjcf: () => toMjcf(sheet) };
  }
  const evaluator = new Evaluator(study);
  const design = designFromValues(evaluator.variables, record.variables, true);
  const built = evaluator.architectureDesign(design);
  if (built.architecture.name === 'five-bar') {
    const sheet = fiveBarMemberSheet(study, record, provenance);
    return { sheet, mjcf: () => toMjcf(sheet) };
  }
  const { sheet, home } = architectureSheet(study, record, provenance, built);
  return {
    sheet,
    mjcf: () =>
      architectureMjcf(built.architecture, built.model, home, {
        description: [
          `Candidate ${sheet.id} of run ${provenance.runId} (${provenance.runKind}), study "${provenance.studyName}", database ${provenance.database}.`,
          ...(sheet.comparison ? [`Comparison study: member ${sheet.comparison.chosen} of ${sheet.comparison.architectures.join(', ')}.`] : []),
        ],
        safetyNote: SAFETY_NOTE,
      }),
  };
}
