/**
 * Study files: YAML text → validated, typed Study in SI units.
 * Validation runs in two layers: the JSON Schema in schema/study.schema.json (shape, names, enums;
 * editors can use the same file), then the unit conversion and cross-field checks here.
 */
import { LoopsmithUserError } from '../core/errors.js';
import { mountBaseline, studyCell } from './cell.js';
import { createHash } from 'node:crypto';
import { readFileSync } from 'node:fs';
import { dirname, resolve } from 'node:path';
import type { ErrorObject, ValidateFunction } from 'ajv';
import { parseAllDocuments, parseDocument, stringify } from 'yaml';
import type { AssemblyMode, JointRange } from '../core/pose.js';
import { currentMetricName, metricInfo, metricKind, metricUnavailable } from '../core/metrics.js';
import { ARCHITECTURES, ARCHITECTURE_NAMES } from '../architectures/index.js';
import type { ActuatorKind, ArchitectureModelBase, ArchitectureName, DriveAtJoint, PlanarArchitecture } from '../architectures/types.js';
import { pathEnd, pathEndPhi, type CyclePath, type CycleStep, type JointFriction, type MotionLaw } from '../core/cycle.js';
import { formatQuantity, parseQuantity, UnitError, type QuantityKind } from './units.js';
import { programVersion } from '../core/version.js';
import { CatalogueError, catalogueRecords, findOption } from './catalogue.js';
import { checkAccuracyMetricNeeds, parseAccuracySections } from './accuracySection.js';
import { buildDriveTrainSetup, fixedDrives } from './driveTrains.js';
import { studyValidator } from './validator.js';
import {
  ARCHITECTURE_PREFIX,
  DEFAULT_EVALUATION_TOLERANCE,
  type ConstraintSpec,
  type DriveSpec,
  type DriveTrainSetup,
  type DutyCycleSpec,
  type EvaluationSettings,
  type LinkSpec,
  type OrientationSpec,
  type ObjectiveSpec,
  type OptimizerSettings,
  type ParameterSpec,
  type Study,
  type TaskRegion,
} from './types.js';
import studySchema from './study.schema.json' with { type: 'json' };
import { GENERATED_SCHEMA_LISTS } from './schemaNames.js';

/** A problem with a study file that the user can fix. The message names the file and the field. */
export class StudyError extends LoopsmithUserError {
  constructor(message: string) {
    super(message);
    this.name = 'StudyError';
  }
}

export const STANDARD_GRAVITY = 9.80665; // m/s², CGPM 1901 conventional value (common practice, no source)

/** Handbook values (from memory): aluminium 6061-T6 and structural steel. */
export const MATERIALS: Readonly<Record<string, { density: number; youngsModulus: number }>> = {
  'aluminium-6061': { density: 2700, youngsModulus: 68.9e9 },
  steel: { density: 7850, youngsModulus: 200e9 },
};

export const DEFAULT_EVALUATION = {
  gridCells: 120,
  taskSamples: 12,
  minInverseCondition: 0.2,
  minTransmissionAngle: (30 * Math.PI) / 180,
  /**
   * Relative accuracy of the areas, region averages and region extremes. Areas use it when no fixed
   * grid is given (see evaluationTolerance); averages and extremes always (this value when absent).
   */
  tolerance: DEFAULT_EVALUATION_TOLERANCE,
} as const;

export const DEFAULT_OPTIMIZER = { algorithm: 'nsga2', population: 100, generations: 100, seed: 1 } as const;
/** Convergence termination used when a study gives no generation count. */
export const DEFAULT_CONVERGENCE = { window: 20, tolerance: 0.001, maxEvaluations: 10000 } as const;

type Json = null | boolean | number | string | Json[] | { [key: string]: Json };
type JsonObject = { [key: string]: Json };

let validator: ValidateFunction | undefined;

/**
 * The study schema as validation uses it: the file's shape with the architecture names of the one
 * registry (src/architectures/index.ts) as the `architecture` enums. The file itself lists no names.
 */
export function studySchemaForRegistry(): Record<string, unknown> {
  const schema = structuredClone(studySchema) as unknown as { properties: { architecture: { oneOf: [Record<string, unknown>, { items: Record<string, unknown> }] } } };
  const names = [...ARCHITECTURE_NAMES];
  const [single, list] = schema.properties.architecture.oneOf;
  single['enum'] = names;
  delete single['type'];
  list.items = { enum: names };
  // Lists written from catalogues (src/study/schemaNames.ts): validate against the catalogue itself.
  for (const generated of GENERATED_SCHEMA_LISTS) {
    const parent = generated.path.slice(0, -1).reduce<Record<string | number, unknown>>((node, key) => node[key] as Record<string | number, unknown>, schema as unknown as Record<string, unknown>);
    parent[generated.path[generated.path.length - 1]!] = [...generated.names()];
  }
  return schema as unknown as Record<string, unknown>;
}
function validateShape(data: unknown): readonly ErrorObject[] {
  validator ??= studyValidator(studySchemaForRegistry());
  return validator(data) ? [] : (validator.errors ?? []);
}

function describeSchemaError(error: ErrorObject): string {
  const at = error.instancePath ? error.instancePath.slice(1).replaceAll('/', '.') : '(top level)';
  switch (error.keyword) {
    case 'additionalProperties':
      return `${at}: unknown field "${String(error.params['additionalProperty'])}"`;
    case 'required':
      return `${at}: missing field "${String(error.params['missingProperty'])}"`;
    case 'enum':
      return `${at}: must be one of ${JSON.stringify(error.params['allowedValues'])}`;
    case 'const':
      return `${at}: must be ${JSON.stringify(error.params['allowedValue'])}`;
    default:
      return `${at}: ${error.message ?? 'is not valid'}`;
  }
}

/** Keep the most specific schema errors: oneOf branches produce noise that hides the real fault. */
function summariseSchemaErrors(errors: readonly ErrorObject[]): string[] {
  const useful = errors.filter((e) => e.keyword !== 'oneOf' && e.keyword !== 'if');
  const deepest = new Map<string, ErrorObject[]>();
  for (const e of useful) {
    const list = deepest.get(e.instancePath) ?? [];
    list.push(e);
    deepest.set(e.instancePath, list);
  }
  const lines = new Set<string>();
  for (const [path, list] of deepest) {
    // Skip a parent path when a child path has errors too.
    const hasChild = [...deepest.keys()].some((p) => p !== path && p.startsWith(path + '/'));
    if (hasChild && list.every((e) => e.keyword === 'type')) continue;
    const nonType = list.filter((e) => e.keyword !== 'type');
    for (const e of nonType.length > 0 ? nonType : list.slice(0, 1)) lines.add(describeSchemaError(e));
  }
  return [...lines].slice(0, 12);
}

function isObject(v: Json | undefined): v is JsonObject {
  return typeof v === 'object' && v !== null && !Array.isArray(v);
}

/** SHA-256 hex of a text. */
export function sha256(text: string): string {
  return createHash('sha256').update(text).digest('hex');
}

export interface LoadedStudy {
  readonly study: Study;
  /** The file text exactly as read. */
  readonly text: string;
  /** SHA-256 of the text. */
  readonly fileHash: string;
  /** Hash of everything that changes an evaluation's result (not names, objectives or optimizer settings). */
  readonly settingsHash: string;
  /** Where it came from, for messages. */
  readonly source: string;
}

export function loadStudyFile(path: string): LoadedStudy {
  let text: string;
  try {
    text = readFileSync(path, 'utf8');
  } catch (error) {
    const code = (error as NodeJS.ErrnoException).code;
    throw new StudyError(`${path}: cannot read the study file (${code ?? String(error)})`);
  }
  return parseStudyText(bundleAttachments(text, path), path);
}

/** Marker of an attached file (a drive catalogue) in a study bundle. */
const ATTACHMENT_KEY = 'loopsmith_attachment';

/**
 * A study that references other files (a drive catalogue) is kept as one self-contained text: the
 * study document, then one YAML document per attached file ({loopsmith_attachment: path, content}).
 * That text is what workers receive and what the store keeps, so a stored study never depends on
 * files that may have changed since.
 */
export function bundleAttachments(text: string, studyPath: string): string {
  const doc = parseDocument(text);
  if (doc.errors.length > 0) return text; // parseStudyText reports it
  if (hasAttachments(text)) return text;
  let out = text;
  const seen = new Set<string>();
  const members = doc.getIn(['members']) as { items?: { key?: { value?: unknown } }[] } | undefined;
  const memberNames = (members?.items ?? []).map((item) => item.key?.value).filter((v): v is string => typeof v === 'string');
  const places = [['drives'], ...memberNames.map((m) => ['members', m, 'drives'])];
  for (const [place, key] of places.flatMap((p) => ['catalogue', 'motors', 'gearboxes'].map((k) => [p, k] as const))) {
    const catalogue = doc.getIn([...place, key]);
    if (typeof catalogue !== 'string' || seen.has(catalogue)) continue;
    seen.add(catalogue);
    const file = resolve(dirname(studyPath), catalogue);
    let content: string;
    try {
      content = readFileSync(file, 'utf8');
    } catch (error) {
      const code = (error as NodeJS.ErrnoException).code;
      throw new StudyError(`${studyPath}: drives.${key}: cannot read "${catalogue}" (${code ?? String(error)}; the path is relative to the study file)`);
    }
    out = `${out.endsWith('\n') ? out : out + '\n'}---\n${stringify({ [ATTACHMENT_KEY]: catalogue, content })}`;
  }
  return out;
}

function hasAttachments(text: string): boolean {
  return text.includes(ATTACHMENT_KEY);
}

/** Aliases a study may use (`*name`); far more means a file built to exhaust memory ("billion laughs"). */
const MAX_ALIAS_COUNT = 100;

/** The plain data of one YAML document; alias bombs and other resolution failures are study errors. */
function documentData(doc: { toJS(options?: { maxAliasCount?: number }): unknown }, source: string): Json {
  try {
    return doc.toJS({ maxAliasCount: MAX_ALIAS_COUNT }) as Json;
  } catch (error) {
    const text = error instanceof Error ? error.message : String(error);
    if (/alias/i.test(text)) {
      throw new StudyError(`${source}: the YAML uses aliases (*name) so many times that it would expand without bound; a study needs at most a few aliases — write the values out`);
    }
    throw new StudyError(`${source}: not valid YAML: ${text}`);
  }
}

export function parseStudyText(text: string, source = '<study>'): LoadedStudy {
  const docs = parseAllDocuments(text, { prettyErrors: true });
  const list = Array.isArray(docs) ? docs : [docs];
  const first = list[0];
  if (!first) throw new StudyError(`${source}: the study file is empty`);
  for (const d of list) {
    if (d.errors.length > 0) throw new StudyError(`${source}: not valid YAML: ${d.errors[0]!.message}`);
  }
  const attachments = new Map<string, string>();
  for (const d of list.slice(1)) {
    const a = documentData(d, source);
    if (!isObject(a) || typeof a[ATTACHMENT_KEY] !== 'string' || typeof a['content'] !== 'string') {
      throw new StudyError(`${source}: a study file holds one YAML document (found a second one after "---")`);
    }
    attachments.set(a[ATTACHMENT_KEY], a['content']);
  }
  const data = documentData(first, source);
  if (!isObject(data)) throw new StudyError(`${source}: a study file must be a YAML mapping (key: value lines)`);
  const schemaErrors = validateShape(data);
  if (schemaErrors.length > 0) {
    const lines = summariseSchemaErrors(schemaErrors);
    throw new StudyError(`${source}: the study does not match the study schema (schema/study.schema.json):\n  - ${lines.join('\n  - ')}`);
  }
  let study: Study;
  try {
    study = buildStudy(data, attachments);
  } catch (error) {
    if (error instanceof UnitError || error instanceof StudyError || error instanceof CatalogueError) {
      throw new StudyError(`${source}: ${error.message}`);
    }
    throw error;
  }
  return {
    study,
    text,
    fileHash: sha256(text),
    settingsHash: evaluationSettingsHash(study),
    source,
  };
}

/**
 * Hash of everything that changes an evaluation's result: the study settings (`studySettingsHash`)
 * and the program version, so that results of another loopsmith version are never taken from the
 * cache nor merged silently. Stores written before the version entered the hash hold the bare
 * `studySettingsHash` in `settings_hash`: they open, query, export and rescore as before, and their
 * evaluations are simply not reused by this version (a rescore evaluates them again).
 */
export function evaluationSettingsHash(study: Study, version: string = programVersion()): string {
  return sha256(`${studySettingsHash(study)}\u0000loopsmith ${version}`);
}

/** Hash of the parts of a study that change evaluation results (canonical JSON of the typed study), without the program version. */
export function studySettingsHash(study: Study): string {
  const relevant = {
    architecture: study.architecture,
    geometry: study.geometry,
    workingModes: study.workingModes,
    assemblyMode: study.assemblyMode,
    jointLimits: study.jointLimits,
    links: study.links,
    masses: [study.elbowHubMass, study.endHubMass, study.payloadMass],
    gravity: study.gravity,
    drives: study.drives,
    driveChoice: study.driveChoice,
    torqueSafetyFactor: study.torqueSafetyFactor,
    task: study.task,
    evaluation: study.evaluation,
    constraints: study.constraints,
    // Added only when present, so studies without them keep their earlier hashes.
    dutyCycle: study.dutyCycle ?? undefined,
    friction: study.friction ?? undefined,
    driveTrains: study.driveTrains ?? undefined,
    sliderMass: study.sliderMass,
    platform: study.platform ?? undefined,
    orientation: study.orientation ?? undefined,
    cell: study.cell ?? undefined,
    members: study.members ? study.members.map(studySettingsHash) : undefined,
    accuracy: study.accuracy ?? undefined,
  };
  return sha256(canonicalJson(relevant));
}

/**
 * Hash of what shapes the workspace of a design (geometry, modes, joint limits, task region,
 * evaluation settings). Two studies with the same value give the same reachable area, usable
 * workspace, task coverage and inscribed radius for the same design: a rescore then recomputes only
 * the per-pose metrics.
 */
export function workspaceSettingsHash(study: Study): string {
  return sha256(
    canonicalJson({
      architecture: study.architecture,
      geometry: study.geometry,
      workingModes: study.workingModes,
      assemblyMode: study.assemblyMode,
      jointLimits: study.jointLimits,
      region: study.task.region,
      evaluation: study.evaluation,
      // Absent for 2-DOF studies, so their hashes stay as they were.
      orientation: study.orientation ?? undefined,
      cell: study.cell ?? undefined,
      members: study.members ? study.members.map(workspaceSettingsHash) : undefined,
    }),
  );
}

/** JSON with sorted keys and Infinity spelled out, so equal values give equal text. */
export function canonicalJson(value: unknown): string {
  if (value === null || typeof value !== 'object') {
    if (typeof value === 'number' && !Number.isFinite(value)) return JSON.stringify(String(value));
    return JSON.stringify(value) ?? 'null';
  }
  if (Array.isArray(value)) return `[${value.map(canonicalJson).join(',')}]`;
  const entries = Object.entries(value as Record<string, unknown>)
    .filter(([, v]) => v !== undefined)
    .sort(([a], [b]) => (a < b ? -1 : a > b ? 1 : 0));
  return `{${entries.map(([k, v]) => `${JSON.stringify(k)}:${canonicalJson(v)}`).join(',')}}`;
}

function q(value: Json | undefined, kind: QuantityKind, where: string, fallback?: number): number {
  if (value === undefined || value === null) {
    if (fallback !== undefined) return fallback;
    throw new StudyError(`${where}: missing value`);
  }
  return parseQuantity(value, kind, where);
}

function positive(value: number, where: string, allowZero = false): number {
  if (!(allowZero ? value >= 0 : value > 0)) {
    throw new StudyError(`${where}: must be ${allowZero ? 'zero or positive' : 'positive'} (got ${value})`);
  }
  return value;
}

/** Member-study keys of a comparison study (each replaces the top-level key for that architecture). */
const MEMBER_KEYS = ['geometry', 'working_mode', 'assembly_mode', 'joint_limits', 'mass', 'drives', 'orientation', 'friction'] as const;

function buildStudy(data: JsonObject, attachments: ReadonlyMap<string, string>): Study {
  const arch = data['architecture'];
  if (Array.isArray(arch)) return buildComparisonStudy(data, arch as string[], attachments);
  if (data['members'] !== undefined) throw new StudyError('members: only a comparison study (architecture: [a, b, …]) has members');
  if (data['geometry'] === undefined) throw new StudyError('geometry: missing field (the architecture\'s parameters)');
  return buildSingleStudy(data, attachments);
}

/** A comparison study: one member study per architecture (see Study.members). */
function buildComparisonStudy(data: JsonObject, names: readonly string[], attachments: ReadonlyMap<string, string>): Study {
  const membersIn = isObject(data['members']) ? data['members'] : null;
  if (!membersIn) throw new StudyError('members: a comparison study gives one block per architecture (members: {five-bar: {geometry: …}, 2-prr: {…}})');
  if (data['geometry'] !== undefined) throw new StudyError('geometry: a comparison study gives geometry per architecture, under members.<architecture>.geometry');
  for (const key of Object.keys(membersIn)) {
    if (!names.includes(key)) throw new StudyError(`members.${key}: "${key}" is not one of the study's architectures ${JSON.stringify(names)}`);
  }
  const baselineIn = isObject(data['baseline']) ? data['baseline'] : {};
  const members: Study[] = [];
  for (const name of names) {
    const block = membersIn[name];
    if (!isObject(block)) throw new StudyError(`members.${name}: missing block for architecture "${name}"`);
    const memberData: JsonObject = { ...data, architecture: name };
    delete memberData['members'];
    for (const key of MEMBER_KEYS) if (block[key] !== undefined) memberData[key] = block[key]!;
    const prefix = `${ARCHITECTURE_PREFIX[name as ArchitectureName]}_`;
    const memberBaseline: JsonObject = {};
    for (const [key, value] of Object.entries(baselineIn)) if (key.startsWith(prefix)) memberBaseline[key.slice(prefix.length)] = value;
    memberData['baseline'] = memberBaseline;
    try {
      members.push(buildSingleStudy(memberData, attachments));
    } catch (error) {
      if (error instanceof StudyError || error instanceof UnitError) throw new StudyError(`members.${name}: ${error.message}`);
      throw error;
    }
  }
  const first = members[0]!;
  const baseline: Record<string, number | string> = {};
  for (const [key, value] of Object.entries(baselineIn)) {
    if (key === 'architecture') {
      if (typeof value !== 'string' || !names.includes(value)) throw new StudyError(`baseline.architecture: must be one of ${JSON.stringify(names)}`);
      baseline[key] = value;
      continue;
    }
    const member = members.find((m) => key.startsWith(`${ARCHITECTURE_PREFIX[m.architecture]}_`));
    if (!member) throw new StudyError(`baseline.${key}: unknown design variable (comparison variables are architecture, or <prefix>_<name> with prefix ${members.map((m) => ARCHITECTURE_PREFIX[m.architecture]).join(', ')})`);
    const inner = key.slice(ARCHITECTURE_PREFIX[member.architecture].length + 1);
    const v = member.baseline[inner];
    if (v !== undefined) baseline[key] = v;
  }
  return { ...first, members, baseline };
}

/** What every section parser needs to know about the study's architecture. */
interface SectionContext {
  readonly architectureName: ArchitectureName;
  readonly architecture: PlanarArchitecture<ArchitectureModelBase>;
  readonly isFiveBar: boolean;
  /** Number of actuators (legs). */
  readonly n: number;
  /** Kind of the first actuator (every registered architecture has one kind for all legs). */
  readonly actuatorKind: ActuatorKind;
}

function sectionContext(architectureName: ArchitectureName): SectionContext {
  const architecture = ARCHITECTURES[architectureName];
  return { architectureName, architecture, isFiveBar: architectureName === 'five-bar', n: architecture.dof, actuatorKind: architecture.actuators[0]! };
}

/** One study of one architecture: each section is read by its own function, in this order. */
function buildSingleStudy(data: JsonObject, attachments: ReadonlyMap<string, string>): Study {
  const context = sectionContext(data['architecture'] as ArchitectureName);
  const { architectureName, n, actuatorKind } = context;
  const geometry = parseGeometry(data['geometry'] as JsonObject, context);
  const workingModes = parseWorkingModes(data['working_mode'], context);
  const assemblyMode = (data['assembly_mode'] ?? '+') as AssemblyMode;
  const jointLimits = parseJointLimits(isObject(data['joint_limits']) ? data['joint_limits'] : {}, context);
  const { links, elbowHubMass, endHubMass, payloadMass, sliderMass, platform } = parseMass(isObject(data['mass']) ? data['mass'] : {}, context);
  const gravity = parseGravity(data['gravity'] ?? 'vertical');
  const drivesIn = isObject(data['drives']) ? data['drives'] : undefined;
  const { drives, torqueSafetyFactor, driveCatalogue, driveChoice, driveTrains } = parseDrives(drivesIn, attachments, context);
  const orientation = parseOrientation(data['orientation'], context);
  const task = parseTask(isObject(data['task']) ? data['task'] : {});
  const region = task.region;
  const evaluation = parseEvaluation(isObject(data['evaluation']) ? data['evaluation'] : {});
  const window = evaluation.window;
  if (actuatorKind === 'prismatic' && !window && jointLimits.some((r) => r === null)) {
    throw new StudyError(
      `joint_limits: the ${architectureName} has rails without an end: give a stroke for every slider (joint_limits.actuator_i {min, max} in m along the rail) or a grid window (evaluation.window {x: [min, max], y: [min, max]})`,
    );
  }
  if (orientation?.characteristicLength === 'auto' && !region) {
    throw new StudyError('orientation.characteristic_length: "auto" chooses L over the task points; give task.region');
  }

  const dutyCycle = isObject(data['duty_cycle']) ? buildDutyCycle(data['duty_cycle'], { architecture: architectureName, dof: n, phi0: orientation?.phi0 ?? 0 }) : null;
  const friction = isObject(data['friction']) ? buildFriction(data['friction'], n, actuatorKind) : null;
  if (dutyCycle?.requiredRate && !drivesIn) throw new StudyError('duty_cycle.required_rate: needs drives (the limits that set the shortest cycle time)');
  const massIn = isObject(data['mass']) ? data['mass'] : {};
  const cell = studyCell(data, { actuators: ARCHITECTURES[architectureName].actuators, massIn, hasDutyCycle: dutyCycle !== null });

  const objectives = parseObjectives(data['objectives'] as JsonObject[]);
  const constraints = parseConstraints((data['constraints'] as JsonObject[] | undefined) ?? [], context);
  checkMetricNeeds(objectives, constraints, { hasDutyCycle: dutyCycle !== null, hasDrives: drivesIn !== undefined }, context);
  checkAccuracyMetricNeeds([...objectives, ...constraints].map((m) => m.metric), data);

  const optimizer = parseOptimizer(isObject(data['optimizer']) ? data['optimizer'] : {});

  const partial = {
    name: data['study'] as string,
    description: (data['description'] as string | undefined) ?? '',
    architecture: architectureName,
    geometry,
    workingModes,
    assemblyMode,
    jointLimits,
    links,
    elbowHubMass,
    endHubMass,
    payloadMass,
    gravity,
    drives,
    driveChoice,
    driveCatalogue,
    ...(driveTrains ? { driveTrains } : {}),
    torqueSafetyFactor,
    task,
    evaluation,
    dutyCycle,
    friction,
    objectives,
    constraints,
    optimizer,
    ...(sliderMass !== undefined ? { sliderMass } : {}),
    ...(platform ? { platform } : {}),
    ...(orientation ? { orientation } : {}),
    ...(cell ? { cell } : {}),
    ...accuracyOf(data, context.architecture.actuators),
  };
  const baseline = buildBaseline(isObject(data['baseline']) ? data['baseline'] : {}, partial);
  return { ...partial, baseline };
}

/** `geometry:` — every parameter of the architecture fixed, variable ({min, max}) or tied ({same_as}). */
function parseGeometry(geometryIn: JsonObject, context: SectionContext): Record<string, ParameterSpec> {
  const { architecture, architectureName, isFiveBar } = context;
  const parameterNames = architecture.parameters.map((p) => p.name);
  for (const key of Object.keys(geometryIn)) {
    if (!parameterNames.includes(key)) {
      throw new StudyError(`geometry.${key}: not a parameter of the ${architectureName} (its parameters: ${parameterNames.join(', ')})`);
    }
  }
  const geometry: Record<string, ParameterSpec> = {};
  for (const info of architecture.parameters) {
    const name = info.name;
    const where = `geometry.${name}`;
    const raw = geometryIn[name];
    const kind: QuantityKind = info.kind === 'angle' ? 'angle' : 'length';
    const allowZero = info.mayBeZero === true;
    const signed = info.kind === 'angle' || info.signed === true;
    if (raw === undefined) {
      if (!isFiveBar && info.kind === 'length' && !allowZero) throw new StudyError(`${where}: missing (the ${architectureName} needs ${parameterNames.join(', ')})`);
      geometry[name] = { kind: 'fixed', value: 0 };
    } else if (isObject(raw) && 'same_as' in raw) {
      const to = raw['same_as'] as string;
      if (to === name) throw new StudyError(`${where}.same_as: a parameter cannot be tied to itself`);
      if (!parameterNames.includes(to)) throw new StudyError(`${where}.same_as: "${to}" is not a parameter of the ${architectureName} (its parameters: ${parameterNames.join(', ')})`);
      geometry[name] = { kind: 'tied', to };
    } else if (isObject(raw)) {
      const min = q(raw['min'], kind, `${where}.min`);
      const max = q(raw['max'], kind, `${where}.max`);
      if (!signed) positive(min, `${where}.min`, allowZero);
      const unit = kind === 'angle' ? 'rad' : 'm';
      if (!(max > min)) throw new StudyError(`${where}: max (${max} ${unit}) must be greater than min (${min} ${unit})`);
      geometry[name] = { kind: 'variable', min, max };
    } else {
      const value = q(raw, kind, where);
      if (!signed) positive(value, where, allowZero);
      geometry[name] = { kind: 'fixed', value };
    }
  }
  checkTies(geometry, context);
  return geometry;
}

/** A tie points at an untied parameter of the same kind. */
function checkTies(geometry: Readonly<Record<string, ParameterSpec>>, { architecture }: SectionContext): void {
  for (const { name } of architecture.parameters) {
    const spec = geometry[name]!;
    if (spec.kind === 'tied') {
      if (geometry[spec.to]!.kind === 'tied') throw new StudyError(`geometry.${name}.same_as: "${spec.to}" is itself tied; tie to the parameter it follows instead`);
      const fromKind = architecture.parameters.find((p) => p.name === name)!.kind;
      const toKind = architecture.parameters.find((p) => p.name === spec.to)!.kind;
      if (fromKind !== toKind) throw new StudyError(`geometry.${name}.same_as: "${spec.to}" is an ${toKind}, "${name}" a ${fromKind}`);
    }
  }
}

/** `working_mode:` — one mode name or a list (the optimizer chooses); the default depends on the architecture. */
function parseWorkingModes(wm: Json | undefined, { architecture, architectureName, isFiveBar, n }: SectionContext): string[] {
  const defaultMode = isFiveBar ? '+-' : n === 2 ? '-+' : '+'.repeat(n);
  const workingModes: string[] = wm === undefined ? [defaultMode] : Array.isArray(wm) ? (wm as string[]) : [wm as string];
  for (const mode of workingModes) {
    if (!architecture.workingModes.includes(mode)) {
      throw new StudyError(`working_mode: "${mode}" is not a working mode of the ${architectureName} (one sign per leg: ${architecture.workingModes.join(', ')})`);
    }
  }
  return workingModes;
}

/** `joint_limits:` — `both` and/or `actuator_i` ranges (rad for cranks, m for sliders); a full turn or more = unlimited. */
function parseJointLimits(limitsIn: JsonObject, { architecture, architectureName, n, actuatorKind }: SectionContext): (JointRange | null)[] {
  const range = (raw: Json | undefined, where: string, kind: ActuatorKind): JointRange | null => {
    if (!isObject(raw)) return null;
    const quantity: QuantityKind = kind === 'revolute' ? 'angle' : 'length';
    const min = q(raw['min'], quantity, `${where}.min`);
    const max = q(raw['max'], quantity, `${where}.max`);
    if (!(max > min)) throw new StudyError(`${where}: max must be greater than min`);
    if (kind === 'revolute' && max - min >= 2 * Math.PI) return null;
    return { min, max };
  };
  for (const key of Object.keys(limitsIn)) {
    if (key === 'actuator_3' && n < 3) throw new StudyError(`joint_limits.actuator_3: the ${architectureName} has ${n} actuators`);
  }
  const bothLimits = range(limitsIn['both'], 'joint_limits.both', actuatorKind);
  const jointLimits: (JointRange | null)[] = [];
  for (let i = 0; i < n; i++) {
    jointLimits.push(range(limitsIn[`actuator_${i + 1}`], `joint_limits.actuator_${i + 1}`, architecture.actuators[i]!) ?? bothLimits);
  }
  return jointLimits;
}

interface MassSection {
  readonly links: Study['links'];
  readonly elbowHubMass: number;
  readonly endHubMass: number;
  readonly payloadMass: number;
  readonly sliderMass: number | undefined;
  readonly platform: { mass: number; inertia: number } | undefined;
}

/** `mass:` — link sections per leg, lumped masses, slider carriages, the platform of a 3-DOF architecture. */
function parseMass(massIn: JsonObject, context: SectionContext): MassSection {
  const { architecture, n, actuatorKind } = context;
  checkMassKeys(massIn, context);
  const link = (specific: string, shared: string): LinkSpec => {
    const raw = massIn[specific] ?? massIn[shared];
    return buildLink(raw, `mass.${massIn[specific] !== undefined ? specific : shared}`);
  };
  const cranks: LinkSpec[] = [];
  const rods: LinkSpec[] = [];
  for (let i = 0; i < n; i++) {
    cranks.push(architecture.actuators[i] === 'revolute' ? link(`crank_${i + 1}`, 'cranks') : buildLink(undefined, `mass.crank_${i + 1}`));
    rods.push(link(`rod_${i + 1}`, 'rods'));
  }
  const lumped = (key: string): number => positive(q(massIn[key], 'mass', `mass.${key}`, 0), `mass.${key}`, true);
  const elbowHubMass = lumped('elbow_hubs');
  const endHubMass = lumped('end_hub');
  const payloadMass = lumped('payload');
  const sliderMass = actuatorKind === 'prismatic' ? lumped('sliders') : undefined;
  let platform: { mass: number; inertia: number } | undefined;
  if (n === 3) {
    const p = isObject(massIn['platform']) ? massIn['platform'] : {};
    platform = {
      mass: positive(q(p['mass'], 'mass', 'mass.platform.mass', 0), 'mass.platform.mass', true),
      inertia: positive(q(p['inertia'], 'inertia', 'mass.platform.inertia', 0), 'mass.platform.inertia', true),
    };
  }
  return { links: { cranks, rods }, elbowHubMass, endHubMass, payloadMass, sliderMass, platform };
}

/** Keys of `mass:` that the architecture does not have (a leg beyond its count, cranks on sliders, …). */
function checkMassKeys(massIn: JsonObject, { architectureName, n, actuatorKind }: SectionContext): void {
  for (const key of Object.keys(massIn)) {
    const leg = /_(\d)$/.exec(key);
    if (leg && Number(leg[1]) > n) throw new StudyError(`mass.${key}: the ${architectureName} has ${n} legs`);
    if ((key.startsWith('crank') || key === 'elbow_hubs') && actuatorKind === 'prismatic') throw new StudyError(`mass.${key}: the ${architectureName} has sliders, not cranks (use sliders and rods)`);
    if (key === 'sliders' && actuatorKind === 'revolute') throw new StudyError(`mass.sliders: the ${architectureName} has no sliders`);
    if (key === 'platform' && n !== 3) throw new StudyError('mass.platform: only 3-DOF architectures carry a platform (use end_hub)');
    if (key === 'end_hub' && n === 3) throw new StudyError('mass.end_hub: a 3-DOF architecture carries a platform; give mass.platform {mass, inertia}');
  }
}

/** `gravity:` — vertical (standard gravity along −y), horizontal (none in the plane) or {x, y}. */
function parseGravity(gravityIn: Json): [number, number] {
  if (gravityIn === 'vertical') return [0, -STANDARD_GRAVITY];
  if (gravityIn === 'horizontal') return [0, 0];
  const g = gravityIn as JsonObject;
  return [q(g['x'], 'acceleration', 'gravity.x'), q(g['y'], 'acceleration', 'gravity.y')];
}

interface DrivesSection {
  readonly drives: DriveSpec[] | null;
  readonly torqueSafetyFactor: number;
  readonly driveCatalogue: Study['driveCatalogue'];
  readonly driveChoice: Study['driveChoice'];
  readonly driveTrains: DriveTrainSetup | null;
}

/** `drives:` — fixed drives (`both` / `actuator_i`, inline or by catalogue name), or `choose` among catalogue options. */
function parseDrives(drivesIn: JsonObject | undefined, attachments: ReadonlyMap<string, string>, context: SectionContext): DrivesSection {
  const { architectureName, n } = context;
  if (!drivesIn) return { drives: null, torqueSafetyFactor: 1.5, driveCatalogue: null, driveChoice: { kind: 'fixed' }, driveTrains: null };
  if (drivesIn['actuator_3'] !== undefined && n < 3) throw new StudyError(`drives.actuator_3: the ${architectureName} has ${n} actuators`);
  const driveCatalogue = typeof drivesIn['catalogue'] === 'string' ? parseDriveCatalogue(drivesIn['catalogue'], attachments, context) : null;
  let drives: DriveSpec[] | null = null;
  let driveChoice: Study['driveChoice'] = { kind: 'fixed' };
  const driveTrains: DriveTrainSetup | null = buildDriveTrainSetup(drivesIn, attachments, context.architecture.actuators);
  const choose = drivesIn['choose'] as 'shared' | 'per-actuator' | undefined;
  if (driveTrains) {
    drives = fixedDrives(driveTrains, context.architecture.actuators);
  } else if (choose) {
    if (!driveCatalogue) throw new StudyError('drives.choose: needs drives.catalogue (the options to choose from)');
    const choices = drivesIn['choices'] as string[] | undefined;
    const options = choices ? choices.map((name) => findOption(driveCatalogue.options, name, 'drives.choices')) : driveCatalogue.options;
    if (options.length < 2) throw new StudyError('drives.choose: needs at least two options to choose from');
    driveChoice = { kind: choose, options };
  } else {
    drives = [];
    for (let i = 0; i < n; i++) drives.push(pickDrive(drivesIn, `actuator_${i + 1}`, driveCatalogue, context));
  }
  const torqueSafetyFactor = typeof drivesIn['torque_safety_factor'] === 'number' ? drivesIn['torque_safety_factor'] : 1.5;
  return { drives, torqueSafetyFactor, driveCatalogue, driveChoice, driveTrains };
}

/** `drives.catalogue:` — the attached catalogue file's options, each a drive with a unique name. */
function parseDriveCatalogue(path: string, attachments: ReadonlyMap<string, string>, { actuatorKind }: SectionContext): NonNullable<Study['driveCatalogue']> {
  const content = attachments.get(path);
  if (content === undefined) throw new StudyError(`drives.catalogue: "${path}" is not attached (load the study with loadStudyFile so the file is read)`);
  const options = catalogueRecords(content, path).map((record, i) => {
    if (typeof record['name'] !== 'string' || record['name'] === '') throw new StudyError(`drives.catalogue ${path}: option ${i + 1} has no name`);
    return buildDrive(record as JsonObject, `drives.catalogue ${path}: option "${record['name']}"`, actuatorKind);
  });
  const names = new Set<string>();
  for (const o of options) {
    if (names.has(o.label)) throw new StudyError(`drives.catalogue ${path}: option "${o.label}" appears twice`);
    names.add(o.label);
  }
  return { path, options };
}

/** The fixed drive of one actuator: its own entry or `both`, inline or a catalogue option's name. */
function pickDrive(drivesIn: JsonObject, name: string, driveCatalogue: Study['driveCatalogue'], { isFiveBar, n, actuatorKind }: SectionContext): DriveSpec {
  const raw = drivesIn[name] ?? drivesIn['both'];
  const where = `drives.${drivesIn[name] !== undefined ? name : 'both'}`;
  if (typeof raw === 'string') {
    if (!driveCatalogue) throw new StudyError(`${where}: "${raw}" names a catalogue option, but drives.catalogue is not given`);
    return findOption(driveCatalogue.options, raw, where);
  }
  if (!isObject(raw)) {
    const list = Array.from({ length: n }, (_, i) => `"actuator_${i + 1}"`).join(', ');
    throw new StudyError(`drives: give "both" or ${isFiveBar ? '"actuator_1" and "actuator_2"' : list} (missing a drive for ${name}), or "choose" with a catalogue`);
  }
  return buildDrive(raw, where, actuatorKind);
}

/** `orientation:` — 3-DOF only: nominal angle, required range, characteristic length and step. */
function parseOrientation(orientationIn: Json | undefined, { architectureName, n }: SectionContext): OrientationSpec | undefined {
  if (n !== 3) {
    if (orientationIn !== undefined) {
      throw new StudyError(`orientation: only 3-DOF architectures (${ARCHITECTURE_NAMES.filter((a) => ARCHITECTURES[a].dof === 3).join(', ')}) have an orientation; the ${architectureName} is 2-DOF`);
    }
    return undefined;
  }
  const o = isObject(orientationIn) ? orientationIn : {};
  const lengthIn = o['characteristic_length'];
  const characteristicLength: OrientationSpec['characteristicLength'] =
    lengthIn === undefined ? 'platform' : lengthIn === 'auto' ? 'auto' : positive(q(lengthIn, 'length', 'orientation.characteristic_length'), 'orientation.characteristic_length');
  const step = positive(q(o['step'], 'angle', 'orientation.step', (2 * Math.PI) / 180), 'orientation.step');
  if (step > Math.PI / 4) throw new StudyError('orientation.step: at most 45 deg (ranges narrower than the step may be missed)');
  const rangeValue = positive(q(o['range'], 'angle', 'orientation.range', 0), 'orientation.range', true);
  if (rangeValue >= Math.PI) throw new StudyError('orientation.range: Δφ must be below 180 deg');
  return {
    phi0: q(o['phi0'], 'angle', 'orientation.phi0', 0),
    range: rangeValue,
    characteristicLength,
    step,
  };
}

/** `task:` — the task region (rectangle or circle) and the required speed and acceleration. */
function parseTask(taskIn: JsonObject): Study['task'] {
  let region: TaskRegion | null = null;
  if (isObject(taskIn['region'])) {
    const r = taskIn['region'];
    const centre = r['centre'] as Json[];
    const centreX = q(centre[0], 'length', 'task.region.centre[0]');
    const centreY = q(centre[1], 'length', 'task.region.centre[1]');
    if (r['shape'] === 'rectangle') {
      region = {
        shape: 'rectangle',
        centreX,
        centreY,
        width: positive(q(r['width'], 'length', 'task.region.width'), 'task.region.width'),
        height: positive(q(r['height'], 'length', 'task.region.height'), 'task.region.height'),
      };
    } else {
      region = { shape: 'circle', centreX, centreY, radius: positive(q(r['radius'], 'length', 'task.region.radius'), 'task.region.radius') };
    }
  }
  return {
    region,
    speed: positive(q(taskIn['speed'], 'speed', 'task.speed', 0), 'task.speed', true),
    acceleration: positive(q(taskIn['acceleration'], 'acceleration', 'task.acceleration', 0), 'task.acceleration', true),
  };
}

/** `evaluation:` — grid, task samples, usability thresholds and the optional grid window. */
function parseEvaluation(evalIn: JsonObject): EvaluationSettings {
  const minTransmissionAngle = q(evalIn['min_transmission_angle'], 'angle', 'evaluation.min_transmission_angle', DEFAULT_EVALUATION.minTransmissionAngle);
  if (minTransmissionAngle < 0 || minTransmissionAngle >= Math.PI / 2) {
    throw new StudyError('evaluation.min_transmission_angle: must be between 0 and 90 deg');
  }
  let window: EvaluationSettings['window'];
  if (isObject(evalIn['window'])) {
    const w = evalIn['window'];
    const xs = w['x'] as Json[];
    const ys = w['y'] as Json[];
    window = {
      xmin: q(xs[0], 'length', 'evaluation.window.x[0]'),
      xmax: q(xs[1], 'length', 'evaluation.window.x[1]'),
      ymin: q(ys[0], 'length', 'evaluation.window.y[0]'),
      ymax: q(ys[1], 'length', 'evaluation.window.y[1]'),
    };
    if (!(window.xmax > window.xmin && window.ymax > window.ymin)) throw new StudyError('evaluation.window: each range must be [min, max] with max > min');
  }
  const tolerance = evaluationTolerance(evalIn);
  return {
    gridCells: (evalIn['grid_cells'] as number | undefined) ?? DEFAULT_EVALUATION.gridCells,
    taskSamples: (evalIn['task_samples'] as number | undefined) ?? DEFAULT_EVALUATION.taskSamples,
    minInverseCondition: (evalIn['min_inverse_condition'] as number | undefined) ?? DEFAULT_EVALUATION.minInverseCondition,
    minTransmissionAngle,
    ...(window ? { window } : {}),
    ...(tolerance !== undefined ? { tolerance } : {}),
  };
}

/** `objectives:` — known metrics, each once, with the catalogue's sense unless given. */
function parseObjectives(objectivesIn: readonly JsonObject[]): ObjectiveSpec[] {
  const objectives: ObjectiveSpec[] = objectivesIn.map((o, i) => {
    const metric = o['metric'] as string;
    const info = metricInfo(metric);
    if (!info) throw new StudyError(`objectives[${i}].metric: unknown metric "${metric}"`);
    // A renamed metric's old name (bandwidth, resolution) is read as the new one: stored columns and
    // front tables carry the current name (src/core/metrics.ts METRIC_ALIASES).
    return { metric: currentMetricName(metric), sense: (o['sense'] as 'min' | 'max' | undefined) ?? info.better };
  });
  const seenObjectives = new Set<string>();
  for (const o of objectives) {
    if (seenObjectives.has(o.metric)) throw new StudyError(`objectives: "${o.metric}" is listed twice`);
    seenObjectives.add(o.metric);
  }
  return objectives;
}

/** `constraints:` — known metrics with min and/or max in the metric's unit. */
function parseConstraints(constraintsIn: readonly JsonObject[], { architecture }: SectionContext): ConstraintSpec[] {
  return constraintsIn.map((c, i) => {
    const metric = c['metric'] as string;
    if (!metricInfo(metric)) throw new StudyError(`constraints[${i}].metric: unknown metric "${metric}"`);
    const where = `constraints[${i}]`;
    if (c['min'] === undefined && c['max'] === undefined) throw new StudyError(`${where}: give min, max or both for "${metric}"`);
    const spec: { metric: string; min?: number; max?: number } = { metric };
    const kind = metricKind(metric, architecture.actuators);
    if (c['min'] !== undefined) spec.min = q(c['min'], kind, `${where}.min`);
    if (c['max'] !== undefined) spec.max = q(c['max'], kind, `${where}.max`);
    if (spec.min !== undefined && spec.max !== undefined && spec.max < spec.min) throw new StudyError(`${where}: max is below min`);
    return spec;
  });
}

/** Metrics of objectives and constraints that need a section the study lacks, or an actuator count it lacks. */
function checkMetricNeeds(
  objectives: readonly ObjectiveSpec[],
  constraints: readonly ConstraintSpec[],
  has: { readonly hasDutyCycle: boolean; readonly hasDrives: boolean },
  { architectureName, n }: SectionContext,
): void {
  const cycleMetric = (metric: string): boolean => metric.startsWith('cycle_') || metric === 'min_cycle_time';
  const used = [
    ...objectives.map((o, i) => ({ metric: o.metric, where: `objectives[${i}].metric` })),
    ...constraints.map((c, i) => ({ metric: c.metric, where: `constraints[${i}].metric` })),
  ];
  for (const { metric, where } of used) {
    if (cycleMetric(metric) && !has.hasDutyCycle) throw new StudyError(`${where}: "${metric}" needs a duty_cycle section`);
    const unavailable = metricUnavailable(metric, n);
    if (unavailable) throw new StudyError(`${where}: "${metric}" ${unavailable} (the ${architectureName} has ${n} actuators)`);
    if (metric === 'min_cycle_time' && !has.hasDrives) throw new StudyError(`${where}: "min_cycle_time" needs drives (their limits set the shortest cycle time)`);
  }
}

/** The accuracy sections (tolerances, joints, strength, link_sections) as a partial study: empty when none is given. */
function accuracyOf(data: JsonObject, actuators: readonly ActuatorKind[]): { accuracy?: Study['accuracy'] } {
  const accuracy = parseAccuracySections(data, actuators);
  return accuracy ? { accuracy } : {};
}

/**
 * `optimizer:` — a fixed `generations` count, or (the default) the convergence test of the
 * `convergence:` block: window, tolerance, max_evaluations.
 */
function parseOptimizer(optIn: JsonObject): OptimizerSettings {
  const algorithm = (optIn['algorithm'] as 'nsga2' | 'nsga3' | undefined) ?? DEFAULT_OPTIMIZER.algorithm;
  const population = (optIn['population'] as number | undefined) ?? DEFAULT_OPTIMIZER.population;
  const fixed = optIn['generations'] as number | undefined;
  const seed = (optIn['seed'] as number | undefined) ?? DEFAULT_OPTIMIZER.seed;
  const convergenceIn = isObject(optIn['convergence']) ? optIn['convergence'] : undefined;
  if (fixed !== undefined && convergenceIn !== undefined) {
    throw new StudyError('optimizer: give either generations (a fixed count) or convergence (stop when the front stops improving), not both');
  }
  if (fixed !== undefined) return { algorithm, population, generations: fixed, seed, termination: { kind: 'generations', generations: fixed } };
  const c = convergenceIn ?? {};
  const termination = {
    kind: 'convergence' as const,
    window: (c['window'] as number | undefined) ?? DEFAULT_CONVERGENCE.window,
    tolerance: (c['tolerance'] as number | undefined) ?? DEFAULT_CONVERGENCE.tolerance,
    maxEvaluations: (c['max_evaluations'] as number | undefined) ?? DEFAULT_CONVERGENCE.maxEvaluations,
  };
  if (termination.maxEvaluations < 2 * population) {
    throw new StudyError(`optimizer.convergence.max_evaluations: ${termination.maxEvaluations} leaves no room for a second generation of ${population} designs; give at least ${2 * population}`);
  }
  return { algorithm, population, generations: DEFAULT_OPTIMIZER.generations, seed, termination };
}

function buildBaseline(raw: JsonObject, study: Omit<Study, 'baseline'>): Record<string, number | string> {
  const out: Record<string, number | string> = {};
  for (const [name, value] of Object.entries(raw)) {
    const where = `baseline.${name}`;
    if (name === 'working_mode') {
      if (typeof value !== 'string' || !study.workingModes.includes(value)) {
        throw new StudyError(`${where}: must be one of the study's working modes ${JSON.stringify(study.workingModes)}`);
      }
      out[name] = value;
      continue;
    }
    if (name === 'link_section') {
      const tubes = study.accuracy?.sectionChoice;
      if (!tubes) throw new StudyError(`${where}: "link_section" is a design variable only with a link_sections list`);
      if (typeof value !== 'string' || !tubes.options.some((o) => o.label === value)) {
        throw new StudyError(`${where}: must be one of the link_sections tubes ${JSON.stringify(tubes.options.map((o) => o.label))}`);
      }
      out[name] = value;
      continue;
    }
    if (name === 'drive' || /^drive_[123]$/.test(name)) {
      const choice = study.driveChoice;
      const count = ARCHITECTURES[study.architecture].dof;
      const expected = choice.kind === 'shared' ? ['drive'] : choice.kind === 'per-actuator' ? Array.from({ length: count }, (_, i) => `drive_${i + 1}`) : [];
      if (!expected.includes(name) || choice.kind === 'fixed') {
        throw new StudyError(`${where}: "${name}" is not a design variable in this study (drives.choose is ${choice.kind === 'fixed' ? 'not set' : choice.kind})`);
      }
      if (typeof value !== 'string' || !choice.options.some((o) => o.label === value)) {
        throw new StudyError(`${where}: must be one of the catalogue options ${JSON.stringify(choice.options.map((o) => o.label))}`);
      }
      out[name] = value;
      continue;
    }
    const mount = mountBaseline(study.cell, name, value);
    if (mount !== undefined) {
      out[name] = mount;
      continue;
    }
    if (/^(motor|gearbox|gear_ratio)(_[123])?$/.test(name)) {
      out[name] = driveTrainBaseline(name, value, study, where);
      continue;
    }
    const parameters = ARCHITECTURES[study.architecture].parameters;
    const info = parameters.find((p) => p.name === name);
    if (!info) {
      throw new StudyError(`${where}: unknown design variable (expected one of ${parameters.map((p) => p.name).join(', ')}, working_mode)`);
    }
    const spec = study.geometry[name]!;
    if (spec.kind !== 'variable') {
      throw new StudyError(`${where}: "${name}" is not a design variable in this study (it is ${spec.kind}); remove it from the baseline`);
    }
    const kind = info.kind === 'angle' ? 'angle' : 'length';
    const v = q(value, kind, where);
    const tolerance = 1e-12 * Math.max(1, Math.abs(spec.min), Math.abs(spec.max));
    if (v < spec.min - tolerance || v > spec.max + tolerance) {
      throw new StudyError(
        `${where}: ${formatQuantity(v, kind)} lies outside the bounds ${formatQuantity(spec.min, kind)} … ${formatQuantity(spec.max, kind)} of geometry.${name}; move the baseline inside them or widen the bounds`,
      );
    }
    out[name] = v;
  }
  // The tube list's first entry is the baseline's link section unless the baseline names one.
  const tubes = study.accuracy?.sectionChoice;
  if (tubes && out['link_section'] === undefined) out['link_section'] = tubes.options[0]!.label;
  return out;
}

/** A baseline value of a drive-train variable (motor, gearbox, gear_ratio; docs/drives.md). */
function driveTrainBaseline(name: string, value: Json, study: Omit<Study, 'baseline'>, where: string): string | number {
  const setup = study.driveTrains;
  const n = ARCHITECTURES[study.architecture].dof;
  const base = name.replace(/_[123]$/, '');
  const perActuator = name !== base;
  const list = base === 'motor' ? setup?.motors : base === 'gearbox' ? setup?.gearboxes : undefined;
  const active = setup && (base === 'gear_ratio' ? setup.ratio !== null : (list?.length ?? 0) > 1) && perActuator === (setup.choose === 'per-actuator') && (!perActuator || Number(name.slice(-1)) <= n);
  if (!active) throw new StudyError(`${where}: "${name}" is not a design variable in this study (see drives.motors, drives.gearboxes, drives.gear_ratio and drives.choose)`);
  if (base === 'gear_ratio') {
    const v = q(value, 'dimensionless', where);
    if (v < setup!.ratio!.min || v > setup!.ratio!.max) throw new StudyError(`${where}: ${v} lies outside drives.gear_ratio [${setup!.ratio!.min}, ${setup!.ratio!.max}]`);
    return v;
  }
  if (typeof value !== 'string' || !list!.some((o) => o.name === value)) throw new StudyError(`${where}: must be one of ${JSON.stringify(list!.map((o) => o.name))}`);
  return value;
}

function buildLink(raw: Json | undefined, where: string): LinkSpec {
  if (!isObject(raw)) {
    return { massPerLength: 0, area: Infinity, secondMoment: Infinity, youngsModulus: Infinity, label: 'massless, rigid' };
  }
  let density: number | undefined;
  let youngsModulus = Infinity;
  let materialLabel = '';
  const material = raw['material'];
  if (typeof material === 'string') {
    const m = MATERIALS[material]!;
    density = m.density;
    youngsModulus = m.youngsModulus;
    materialLabel = material;
  } else if (isObject(material)) {
    density = q(material['density'], 'density', `${where}.material.density`);
    youngsModulus = q(material['youngs_modulus'], 'modulus', `${where}.material.youngs_modulus`);
    materialLabel = 'custom material';
  }
  if (raw['youngs_modulus'] !== undefined) youngsModulus = q(raw['youngs_modulus'], 'modulus', `${where}.youngs_modulus`);

  let area = Infinity;
  let secondMoment = Infinity;
  let sectionLabel = '';
  const section = raw['section'];
  if (isObject(section)) {
    const s = `${where}.section`;
    switch (section['shape']) {
      case 'rectangle': {
        const w = positive(q(section['width'], 'length', `${s}.width`), `${s}.width`);
        const h = positive(q(section['height'], 'length', `${s}.height`), `${s}.height`);
        area = w * h;
        secondMoment = (h * w ** 3) / 12;
        sectionLabel = `rectangle ${fmtMm(w)}×${fmtMm(h)} mm`;
        break;
      }
      case 'rectangular-tube': {
        const w = positive(q(section['width'], 'length', `${s}.width`), `${s}.width`);
        const h = positive(q(section['height'], 'length', `${s}.height`), `${s}.height`);
        const t = positive(q(section['wall'], 'length', `${s}.wall`), `${s}.wall`);
        if (2 * t >= Math.min(w, h)) throw new StudyError(`${s}.wall: twice the wall must be less than width and height`);
        area = w * h - (w - 2 * t) * (h - 2 * t);
        secondMoment = (h * w ** 3 - (h - 2 * t) * (w - 2 * t) ** 3) / 12;
        sectionLabel = `rectangular tube ${fmtMm(w)}×${fmtMm(h)}×${fmtMm(t)} mm`;
        break;
      }
      case 'round': {
        const d = positive(q(section['diameter'], 'length', `${s}.diameter`), `${s}.diameter`);
        area = (Math.PI * d * d) / 4;
        secondMoment = (Math.PI * d ** 4) / 64;
        sectionLabel = `round ⌀${fmtMm(d)} mm`;
        break;
      }
      default: {
        const d = positive(q(section['diameter'], 'length', `${s}.diameter`), `${s}.diameter`);
        const t = positive(q(section['wall'], 'length', `${s}.wall`), `${s}.wall`);
        if (2 * t >= d) throw new StudyError(`${s}.wall: twice the wall must be less than the diameter`);
        const inner = d - 2 * t;
        area = (Math.PI * (d * d - inner * inner)) / 4;
        secondMoment = (Math.PI * (d ** 4 - inner ** 4)) / 64;
        sectionLabel = `round tube ⌀${fmtMm(d)}×${fmtMm(t)} mm`;
      }
    }
  }
  if (raw['area'] !== undefined) area = q(raw['area'], 'area', `${where}.area`);
  if (raw['second_moment'] !== undefined) secondMoment = q(raw['second_moment'], 'secondMomentOfArea', `${where}.second_moment`);

  let massPerLength: number;
  if (raw['mass_per_length'] !== undefined) {
    massPerLength = q(raw['mass_per_length'], 'massPerLength', `${where}.mass_per_length`);
  } else if (density !== undefined && Number.isFinite(area)) {
    massPerLength = density * area;
  } else {
    throw new StudyError(`${where}: give a section and a material, or mass_per_length`);
  }
  positive(massPerLength, `${where}.mass_per_length`, true);
  const label = [sectionLabel, materialLabel].filter((x) => x).join(', ') || `${massPerLength} kg/m`;
  return { massPerLength, area, secondMoment, youngsModulus, label };
}

function fmtMm(metres: number): string {
  return String(Math.round(metres * 1e4) / 10);
}

function buildDrive(raw: JsonObject, where: string, joint: ActuatorKind = 'revolute'): DriveSpec {
  if (raw['kind'] === 'linear') {
    if (joint !== 'prismatic') throw new StudyError(`${where}.kind: a linear drive needs sliders; this architecture has cranks`);
    const rated = positive(q(raw['rated_force'], 'force', `${where}.rated_force`), `${where}.rated_force`);
    const peak = positive(q(raw['peak_force'], 'force', `${where}.peak_force`), `${where}.peak_force`);
    if (peak < rated) throw new StudyError(`${where}: peak_force is below rated_force`);
    const linear: DriveAtJoint = {
      reflectedInertia: positive(q(raw['moving_mass'], 'mass', `${where}.moving_mass`, 0), `${where}.moving_mass`, true),
      jointStiffness: positive(q(raw['stiffness'], 'linearStiffness', `${where}.stiffness`, Infinity), `${where}.stiffness`),
      peakEffort: peak,
      ratedEffort: rated,
      maxSpeed: positive(q(raw['max_speed'], 'speed', `${where}.max_speed`), `${where}.max_speed`),
      encoderStep: positive(q(raw['encoder_step'], 'length', `${where}.encoder_step`, 0), `${where}.encoder_step`, true),
    };
    return {
      label: (raw['name'] as string | undefined) ?? 'drive',
      mass: positive(q(raw['mass'], 'mass', `${where}.mass`, 0), `${where}.mass`, true),
      gearRatio: 1, efficiency: 1, rotorInertia: 0, gearInertia: 0,
      ratedTorque: 0, peakTorque: 0, maxSpeed: 0, jointStiffness: linear.jointStiffness, encoderCounts: 0,
      linear,
    };
  }
  if (joint === 'prismatic' && raw['lead'] === undefined) {
    throw new StudyError(`${where}: a slider's drive needs lead (slider travel per turn of the gearbox output, e.g. "10 mm"), or kind: linear with forces in N`);
  }
  if (joint === 'revolute' && raw['lead'] !== undefined) throw new StudyError(`${where}.lead: only drives of sliders have a lead`);
  const gearRatio = raw['gear_ratio'];
  if (typeof gearRatio !== 'number' || !(gearRatio > 0)) throw new StudyError(`${where}.gear_ratio: must be a positive number`);
  const efficiency = raw['efficiency'] ?? 1;
  if (typeof efficiency !== 'number' || !(efficiency > 0 && efficiency <= 1)) throw new StudyError(`${where}.efficiency: must be a number in (0, 1]`);
  const encoderCounts = raw['encoder_counts'] ?? 0;
  if (typeof encoderCounts !== 'number' || !Number.isInteger(encoderCounts) || encoderCounts < 0) throw new StudyError(`${where}.encoder_counts: must be a whole number`);
  if (raw['max_speed'] === undefined) throw new StudyError(`${where}: missing max_speed`);
  const ratedTorque = positive(q(raw['rated_torque'], 'torque', `${where}.rated_torque`), `${where}.rated_torque`);
  const peakTorque = positive(q(raw['peak_torque'], 'torque', `${where}.peak_torque`), `${where}.peak_torque`);
  if (peakTorque < ratedTorque) throw new StudyError(`${where}: peak_torque is below rated_torque`);
  return {
    label: (raw['name'] as string | undefined) ?? 'drive',
    mass: positive(q(raw['mass'], 'mass', `${where}.mass`, 0), `${where}.mass`, true),
    gearRatio,
    efficiency,
    rotorInertia: positive(q(raw['rotor_inertia'], 'inertia', `${where}.rotor_inertia`, 0), `${where}.rotor_inertia`, true),
    gearInertia: positive(q(raw['gear_inertia'], 'inertia', `${where}.gear_inertia`, 0), `${where}.gear_inertia`, true),
    ratedTorque,
    peakTorque,
    maxSpeed: positive(q(raw['max_speed'], 'angularSpeed', `${where}.max_speed`), `${where}.max_speed`),
    jointStiffness: positive(
      q(raw['joint_stiffness'], joint === 'prismatic' ? 'linearStiffness' : 'rotationalStiffness', `${where}.joint_stiffness`, Infinity),
      `${where}.joint_stiffness`,
    ),
    encoderCounts,
    ...(joint === 'prismatic' ? { lead: positive(q(raw['lead'], 'length', `${where}.lead`), `${where}.lead`) } : {}),
  };
}

/** Duty cycle: waypoints by name or inline points (3-DOF: with an optional orientation), steps with motion laws and times, closed path. */
function buildDutyCycle(raw: JsonObject, context: { readonly architecture: string; readonly dof: number; readonly phi0: number }): DutyCycleSpec {
  type CyclePose = { readonly xy: [number, number]; readonly phi: number | undefined };
  const pose = (value: Json | undefined, where: string): CyclePose => {
    const items = value as Json[];
    if (items.length > 2 && context.dof < 3) {
      throw new StudyError(`${where}: the ${context.architecture} has no platform orientation; give [x, y] without an angle`);
    }
    return {
      xy: [q(items[0], 'length', `${where}[0]`), q(items[1], 'length', `${where}[1]`)],
      phi: items.length > 2 ? q(items[2], 'angle', `${where}[2]`) : undefined,
    };
  };
  const waypoints = new Map<string, CyclePose>();
  const waypointsIn = isObject(raw['waypoints']) ? raw['waypoints'] : {};
  for (const [name, value] of Object.entries(waypointsIn)) waypoints.set(name, pose(value, `duty_cycle.waypoints.${name}`));
  const point = (value: Json | undefined, where: string): CyclePose => {
    if (typeof value === 'string') {
      const hit = waypoints.get(value);
      if (!hit) throw new StudyError(`${where}: "${value}" is not a waypoint (known: ${[...waypoints.keys()].join(', ') || 'none'})`);
      return hit;
    }
    return pose(value, where);
  };
  let start: CyclePose;
  if (raw['start'] !== undefined) start = point(raw['start'], 'duty_cycle.start');
  else {
    const first = waypoints.values().next();
    if (first.done) throw new StudyError('duty_cycle.start: give a start point (or at least one waypoint)');
    start = first.value;
  }
  const stepPhi = (step: JsonObject, where: string, fromPoint: number | undefined): { phi?: number } => {
    if (step['phi'] !== undefined && context.dof < 3) throw new StudyError(`${where}.phi: the ${context.architecture} has no platform orientation`);
    const phi = step['phi'] !== undefined ? q(step['phi'], 'angle', `${where}.phi`) : fromPoint;
    return phi === undefined ? {} : { phi };
  };
  const steps: CycleStep[] = (raw['steps'] as JsonObject[]).map((step, i) => {
    const where = `duty_cycle.steps[${i}]`;
    const label = typeof step['label'] === 'string' ? { label: step['label'] } : {};
    if (step['dwell'] !== undefined) {
      return { kind: 'dwell', time: positive(q(step['dwell'], 'time', `${where}.dwell`), `${where}.dwell`), ...label };
    }
    const law = step['law'] as MotionLaw;
    const time = positive(q(step['time'], 'time', `${where}.time`), `${where}.time`);
    const accel = typeof step['accel_fraction'] === 'number' ? { accelFraction: step['accel_fraction'] } : {};
    if (step['accel_fraction'] !== undefined && law !== 'trapezoidal') throw new StudyError(`${where}.accel_fraction: only a trapezoidal law has one`);
    if (step['move_to'] !== undefined) {
      const to = point(step['move_to'], `${where}.move_to`);
      return { kind: 'move', to: to.xy, ...stepPhi(step, where, to.phi), law, time, ...accel, ...label };
    }
    const centre = point(step['arc_about'], `${where}.arc_about`);
    return { kind: 'arc', centre: centre.xy, angle: q(step['angle'], 'angle', `${where}.angle`), ...stepPhi(step, where, undefined), law, time, ...accel, ...label };
  });
  if (!steps.some((s) => s.kind !== 'dwell')) throw new StudyError('duty_cycle.steps: a cycle needs at least one move');
  const startPhi = context.dof === 3 ? (start.phi ?? context.phi0) : undefined;
  const path: CyclePath = { start: start.xy, ...(startPhi !== undefined ? { startPhi } : {}), steps };
  const end = pathEnd(path);
  if (Math.hypot(end[0] - start.xy[0], end[1] - start.xy[1]) > 1e-9) {
    throw new StudyError(
      `duty_cycle.steps: the cycle ends at (${fmtMm(end[0])}, ${fmtMm(end[1])}) mm, not where it starts (${fmtMm(start.xy[0])}, ${fmtMm(start.xy[1])}) mm; add the move back`,
    );
  }
  if (startPhi !== undefined && Math.abs(pathEndPhi(path) - startPhi) > 1e-9) {
    const deg = (v: number): string => String(Math.round((v * 180) / Math.PI * 1e6) / 1e6);
    throw new StudyError(`duty_cycle.steps: the cycle ends at orientation ${deg(pathEndPhi(path))} deg, not the ${deg(startPhi)} deg it starts at; turn the platform back in the last moves`);
  }
  const dwellTime = steps.reduce((sum, s) => sum + (s.kind === 'dwell' ? s.time : 0), 0);
  let cycleTime: number | null = null;
  if (raw['cycle_time'] !== undefined) {
    cycleTime = positive(q(raw['cycle_time'], 'time', 'duty_cycle.cycle_time'), 'duty_cycle.cycle_time');
    if (!(cycleTime > dwellTime)) throw new StudyError(`duty_cycle.cycle_time: must be longer than the dwells (${dwellTime} s in all)`);
  }
  let requiredRate: number | null = null;
  if (raw['required_rate'] !== undefined) {
    requiredRate = positive(q(raw['required_rate'], 'frequency', 'duty_cycle.required_rate'), 'duty_cycle.required_rate');
    if (!(1 / requiredRate > dwellTime)) throw new StudyError(`duty_cycle.required_rate: 1/rate must be longer than the dwells (${dwellTime} s in all)`);
  }
  return { path, cycleTime, requiredRate, samples: (raw['samples'] as number | undefined) ?? 200 };
}

/**
 * Joint friction of n actuators: `both`, or `actuator_i` (each falls back to `both`; missing = none).
 * Revolute joints: N·m·s/rad and N·m; prismatic joints: N·s/m and N.
 */
function buildFriction(raw: JsonObject, n: number, joint: ActuatorKind): JointFriction[] {
  for (const key of Object.keys(raw)) {
    const index = /^actuator_(\d)$/.exec(key);
    if (index && Number(index[1]) > n) throw new StudyError(`friction.${key}: the architecture has ${n} actuators`);
  }
  const one = (name: string): JointFriction => {
    const entry = raw[name] ?? raw['both'];
    const where = `friction.${raw[name] !== undefined ? name : 'both'}`;
    if (!isObject(entry)) return { viscous: 0, coulomb: 0 };
    return {
      viscous: positive(viscousCoefficient(entry['viscous'], `${where}.viscous`, joint), `${where}.viscous`, true),
      coulomb: positive(q(entry['coulomb'], joint === 'prismatic' ? 'force' : 'torque', `${where}.coulomb`, 0), `${where}.coulomb`, true),
    };
  };
  return Array.from({ length: n }, (_, i) => one(`actuator_${i + 1}`));
}

/**
 * A viscous coefficient: N·m·s/rad for a revolute joint, N·s/m for a prismatic one. units.ts has no
 * such kind, so "<number> <unit>" is read as "<number> (<unit>)/s", a rotational (linear) stiffness,
 * which has exactly the dimensions of N·m·s/rad ÷ s (N·s/m ÷ s).
 */
function viscousCoefficient(value: Json | undefined, where: string, joint: ActuatorKind = 'revolute'): number {
  const kind = joint === 'prismatic' ? 'linearStiffness' : 'rotationalStiffness';
  const example = joint === 'prismatic' ? '"20 N*s/m" or 20' : '"0.02 N*m*s/rad" or 0.02';
  if (value === undefined || value === null) return 0;
  if (typeof value === 'number') return q(value, kind, where);
  const match = /^\s*([-+]?(?:\d+(?:\.\d*)?|\.\d+)(?:[eE][-+]?\d+)?)\s*(\S.*)?$/.exec(String(value));
  if (!match) throw new StudyError(`${where}: "${String(value)}" is not a viscous coefficient (for example ${example})`);
  if (match[2] === undefined) return Number(match[1]);
  try {
    return parseQuantity(`${match[1]} (${match[2]})/s`, kind, where);
  } catch (error) {
    if (error instanceof UnitError) throw new StudyError(`${where}: "${String(value)}" is not a viscous coefficient (for example ${example})`);
    throw error;
  }
}

/**
 * evaluation.tolerance (alias area_tolerance, the same relative number): present when it governs the
 * sampling, that is when given, or when grid_cells is not given (default 0.005). A study that gives
 * grid_cells without a tolerance keeps its fixed grid, as before the setting existed.
 */
function evaluationTolerance(evalIn: JsonObject): number | undefined {
  const given = evalIn['tolerance'] as number | undefined;
  const alias = evalIn['area_tolerance'] as number | undefined;
  if (given !== undefined && alias !== undefined && given !== alias) {
    throw new StudyError('evaluation: tolerance and area_tolerance are the same setting; give one of them (e.g. tolerance: 0.005 for 0.5 %)');
  }
  const value = given ?? alias;
  if (value !== undefined) return value;
  return evalIn['grid_cells'] === undefined ? DEFAULT_EVALUATION.tolerance : undefined;
}
