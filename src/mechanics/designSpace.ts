/**
 * Design space of a study: which parameters the optimizer varies, how a design vector maps to a
 * full geometry (ties resolved), and how a geometry plus the study's masses and drives become the
 * architecture's model input (`modelInput`).
 */
import { LoopsmithUserError } from '../core/errors.js';
import { ARCHITECTURES } from '../architectures/index.js';
import type { ActuatorKind, ArchitectureName, DriveAtJoint, LinkSection, ModelInput } from '../architectures/types.js';
import { driveAtJoint } from '../study/drives.js';
import { takeMount } from '../cell/mounting.js';
import { MOUNT_VARIABLES, type Mount } from '../cell/types.js';
import { motorPerJointUnit, withDriveStiffness } from '../accuracy/joints.js';
import { tubeSection } from '../accuracy/sectionChoice.js';
import { composeDrives, driveTrainVariables, type DriveTrainVariable } from './driveVariables.js';
import { ARCHITECTURE_PREFIX, type DriveSpec, type LinkSpec, type Study } from '../study/types.js';

/**
 * One design variable. `member` marks the variables of a comparison study's member (its index in
 * `study.members`); their names carry the member's prefix (`fivebar_crank_1`, `prr2_rod_1`, …).
 */
export type DesignVariable =
  | { readonly name: string; readonly kind: 'real'; readonly min: number; readonly max: number; readonly member?: number; readonly role?: undefined }
  | DriveTrainVariable
  | { readonly name: string; readonly kind: 'categorical'; readonly role: 'working_mode'; readonly choices: readonly string[]; readonly member?: number }
  | {
      readonly name: string;
      readonly kind: 'categorical';
      readonly role: 'drive';
      /** Actuators (0-based) that take this choice. */
      readonly actuators: readonly number[];
      readonly choices: readonly string[];
      readonly options: readonly DriveSpec[];
      readonly member?: number;
    }
  | { readonly name: 'architecture'; readonly kind: 'categorical'; readonly role: 'architecture'; readonly choices: readonly ArchitectureName[] }
  /** Link section from the study's tube list (docs/accuracy.md). */
  | { readonly name: string; readonly kind: 'categorical'; readonly role: 'section'; readonly choices: readonly string[]; readonly member?: number };

/**
 * The study's design variables, in design-vector order: geometry variables (the architecture's
 * parameter order), the working mode when it is a choice, then the drive choice (`drive`, or
 * `drive_1` … `drive_n`) when the optimizer picks catalogue options. A comparison study lists
 * `architecture` first, then every member's variables with the member's prefix.
 */
export function designVariables(study: Study): DesignVariable[] {
  if (study.members) {
    const out: DesignVariable[] = [{ name: 'architecture', kind: 'categorical', role: 'architecture', choices: study.members.map((m) => m.architecture) }];
    study.members.forEach((member, index) => {
      const prefix = `${ARCHITECTURE_PREFIX[member.architecture]}_`;
      for (const v of designVariables(member)) {
        if (v.kind === 'real') out.push({ ...v, name: prefix + v.name, member: index });
        else if (v.role !== 'architecture') out.push({ ...v, name: prefix + v.name, member: index });
      }
    });
    return out;
  }
  const architecture = ARCHITECTURES[study.architecture];
  const out: DesignVariable[] = [];
  for (const { name } of architecture.parameters) {
    const spec = study.geometry[name]!;
    if (spec.kind === 'variable') out.push({ name, kind: 'real', min: spec.min, max: spec.max });
  }
  if (study.workingModes.length > 1) out.push({ name: 'working_mode', kind: 'categorical', role: 'working_mode', choices: study.workingModes });
  const choice = study.driveChoice;
  if (choice.kind !== 'fixed') {
    const labels = choice.options.map((o) => o.label);
    const n = architecture.dof;
    if (choice.kind === 'shared') {
      out.push({ name: 'drive', kind: 'categorical', role: 'drive', actuators: Array.from({ length: n }, (_, i) => i), choices: labels, options: choice.options });
    } else {
      for (let i = 0; i < n; i++) out.push({ name: `drive_${i + 1}`, kind: 'categorical', role: 'drive', actuators: [i], choices: labels, options: choice.options });
    }
  }
  const tubes = study.accuracy?.sectionChoice;
  if (tubes) out.push({ name: 'link_section', kind: 'categorical', role: 'section', choices: tubes.options.map((o) => o.label) });
  if (study.driveTrains) out.push(...driveTrainVariables(study.driveTrains, architecture.dof));
  // Mounting of the base in the cell (docs/cell.md), last so earlier variables keep their places.
  const mounting = study.cell?.mounting;
  if (mounting) {
    for (const name of MOUNT_VARIABLES) {
      const spec = mounting[name];
      if (spec.kind === 'variable') out.push({ name, kind: 'real', min: spec.min, max: spec.max });
    }
  }
  return out;
}

export interface ResolvedDesign {
  /** Every parameter of the architecture (SI: m, rad), ties resolved. */
  readonly geometry: Readonly<Record<string, number>>;
  readonly workingMode: string;
  /** Drives of this design (one per actuator), or null when the study gives none. */
  readonly drives: readonly DriveSpec[] | null;
  /** Base pose in the task frame (studies with cell.mounting only). */
  readonly mount?: Mount;
  /** Index of the chosen tube of the study's link_sections list (absent: the study's own sections). */
  readonly linkSection?: number;
}

/** A comparison study's design resolved to its member: the member study, its variables and its design vector. */
export interface MemberDesign {
  readonly index: number;
  readonly study: Study;
  readonly variables: readonly DesignVariable[];
  readonly design: Float64Array;
}

/** The member a comparison design vector selects, with the member's own design vector (inactive members' values are ignored). */
export function memberDesign(study: Study, variables: readonly DesignVariable[], design: ArrayLike<number>): MemberDesign {
  const members = study.members;
  if (!members) throw new Error('memberDesign: not a comparison study');
  const k = variables.findIndex((v) => v.kind === 'categorical' && v.role === 'architecture');
  const index = Math.round(design[k]!);
  const memberStudy = members[index];
  if (!memberStudy) throw new DesignError(`architecture index ${index} is not one of ${members.length} members`);
  const memberVariables = designVariables(memberStudy);
  const values: number[] = [];
  variables.forEach((v, j) => {
    if (v.kind === 'real' || v.role !== 'architecture') {
      if (v.member === index) values.push(design[j]!);
    }
  });
  return { index, study: memberStudy, variables: memberVariables, design: Float64Array.from(values) };
}

/** Full geometry and working mode of a design vector (a comparison study: of the member it selects). */
export function resolveDesign(study: Study, variables: readonly DesignVariable[], design: ArrayLike<number>): ResolvedDesign {
  if (study.members) {
    const m = memberDesign(study, variables, design);
    return resolveDesign(m.study, m.variables, m.design);
  }
  const architecture = ARCHITECTURES[study.architecture];
  const geometry: Record<string, number> = {};
  let workingMode = study.workingModes[0]!;
  let drives: DriveSpec[] | null = study.drives ? [...study.drives] : null;
  const chosen: (DriveSpec | undefined)[] = [];
  let linkSection: number | undefined;
  const trainValues: { variable: DriveTrainVariable; value: number }[] = [];
  variables.forEach((v, k) => {
    const index = Math.round(design[k]!);
    if (v.role === 'motor' || v.role === 'gearbox' || v.role === 'gear_ratio') trainValues.push({ variable: v, value: design[k]! });
    else if (v.kind === 'real') geometry[v.name] = design[k]!;
    else if (v.role === 'working_mode') workingMode = v.choices[index]!;
    else if (v.role === 'drive') for (const a of v.actuators) chosen[a] = v.options[index]!;
    else if (v.role === 'section') linkSection = index;
  });
  if (chosen.length === architecture.dof && chosen.every((d) => d !== undefined)) drives = chosen as DriveSpec[];
  if (study.driveTrains && trainValues.length > 0) drives = composeDrives(study.driveTrains, architecture.actuators, trainValues);
  for (const { name } of architecture.parameters) {
    const spec = study.geometry[name]!;
    if (spec.kind === 'fixed') geometry[name] = spec.value;
  }
  for (const { name } of architecture.parameters) {
    const spec = study.geometry[name]!;
    if (spec.kind === 'tied') geometry[name] = geometry[spec.to]!;
  }
  const mount = takeMount(study.cell, geometry);
  return { geometry, workingMode, drives, ...(mount ? { mount } : {}), ...(linkSection !== undefined ? { linkSection } : {}) };
}

/** Error a user can cause with a design value (--set, baseline). */
export class DesignError extends LoopsmithUserError {
  constructor(message: string) {
    super(message);
    this.name = 'DesignError';
  }
}

/**
 * Design vector from named values (SI numbers; the working mode as its name). Every variable needs a
 * value; values outside bounds are refused unless allowOutside is set.
 */
export function designFromValues(
  variables: readonly DesignVariable[],
  values: Readonly<Record<string, number | string>>,
  allowOutside = false,
): Float64Array {
  const design = new Float64Array(variables.length);
  const known = new Set(variables.map((v) => v.name as string));
  for (const name of Object.keys(values)) {
    if (!known.has(name)) {
      throw new DesignError(`"${name}" is not a design variable of this study (design variables: ${[...known].join(', ') || 'none'})`);
    }
  }
  variables.forEach((v, k) => {
    const value = values[v.name];
    if (value === undefined) throw new DesignError(`no value for design variable "${v.name}" (give it in the baseline or with --set ${v.name}=...)`);
    if (v.kind === 'categorical') {
      const index = (v.choices as readonly string[]).indexOf(String(value));
      if (index < 0) throw new DesignError(`${v.name}: "${value}" is not one of ${v.choices.join(', ')}`);
      design[k] = index;
    } else {
      if (typeof value !== 'number' || !Number.isFinite(value)) throw new DesignError(`${v.name}: not a number`);
      if (!allowOutside && (value < v.min - 1e-12 || value > v.max + 1e-12)) {
        throw new DesignError(`${v.name} = ${value} is outside its bounds [${v.min}, ${v.max}] (SI: m or rad)`);
      }
      design[k] = value;
    }
  });
  return design;
}

/** Named values of a design vector (working mode by name). */
export function designToValues(variables: readonly DesignVariable[], design: ArrayLike<number>): Record<string, number | string> {
  const out: Record<string, number | string> = {};
  variables.forEach((v, k) => {
    out[v.name] = v.kind === 'real' ? design[k]! : v.choices[Math.round(design[k]!)]!;
  });
  return out;
}

/** Mass of links and hubs that move (payload excluded), kg (five-bar; other architectures: `architecture.movingMass(model)`). */
export function movingMass(study: Study, geometry: Readonly<Record<string, number>>): number {
  const l = study.links;
  return (
    l.cranks[0]!.massPerLength * geometry.crank_1! +
    l.cranks[1]!.massPerLength * geometry.crank_2! +
    l.rods[0]!.massPerLength * geometry.rod_1! +
    l.rods[1]!.massPerLength * geometry.rod_2! +
    2 * study.elbowHubMass +
    study.endHubMass
  );
}

/** A link section of the study as the architecture models take it. */
function section(link: LinkSpec): LinkSection {
  return { massPerLength: link.massPerLength, area: link.area, secondMoment: link.secondMoment, youngsModulus: link.youngsModulus };
}

/** The design's drives referred to their joints (N·m, rad/s … for cranks; N, m/s … for sliders), or null. */
export function drivesAtJoint(study: Study, drives: readonly DriveSpec[] | null): DriveAtJoint[] | null {
  if (!drives) return null;
  const actuators = ARCHITECTURES[study.architecture].actuators;
  return actuators.map((kind, i) => driveAtJoint(drives[i]!, kind));
}

/**
 * The architecture-independent model input of a design (see src/architectures/types.ts). The
 * characteristic length is the study's when it gives one; `characteristicLength` overrides it (the
 * per-design 'auto' choice); otherwise the model's default (platform circumradius).
 */
export function modelInput(study: Study, resolved: ResolvedDesign, characteristicLength?: number): ModelInput {
  const o = study.orientation;
  const length = characteristicLength ?? (o && typeof o.characteristicLength === 'number' ? o.characteristicLength : undefined);
  const input: ModelInput = {
    parameters: resolved.geometry,
    workingMode: resolved.workingMode,
    assembly: study.assemblyMode === '+' ? 1 : -1,
    jointLimits: study.jointLimits,
    cranks: study.links.cranks.map((link) => tubeSection(study.accuracy?.sectionChoice, resolved.linkSection, 'cranks') ?? section(link)),
    rods: study.links.rods.map((link) => tubeSection(study.accuracy?.sectionChoice, resolved.linkSection, 'rods') ?? section(link)),
    elbowHubMass: study.elbowHubMass,
    sliderMass: study.sliderMass ?? 0,
    endHubMass: study.endHubMass,
    ...(study.platform ? { platform: { mass: study.platform.mass, inertiaAboutCentre: study.platform.inertia } } : {}),
    payloadMass: study.payloadMass,
    gravity: study.gravity,
    drives: drivesAtJoint(study, resolved.drives),
    ...(length !== undefined ? { characteristicLength: length } : {}),
  };
  // Gearbox and servo stiffness of the study's joints section (docs/accuracy.md); unchanged without it.
  return withDriveStiffness(input, study.accuracy?.joints ?? null, resolved.drives ? resolved.drives.map(motorPerJointUnit) : null);
}

/**
 * Actuator kinds of a study's design: its architecture's, or for a comparison study those of the
 * member named by the design's `architecture` value (undefined when it is not known).
 */
export function studyActuators(study: Study, values?: Readonly<Record<string, unknown>>): readonly ActuatorKind[] | undefined {
  if (!study.members) return ARCHITECTURES[study.architecture].actuators;
  const chosen = values?.['architecture'];
  return typeof chosen === 'string' && chosen in ARCHITECTURES ? ARCHITECTURES[chosen as keyof typeof ARCHITECTURES].actuators : undefined;
}

/** Quantity kind of a design variable's value: angle for angle parameters, else length (categorical values are text). */
export function variableKind(study: Study, name: string): 'angle' | 'length' | 'dimensionless' {
  if (/^(?:[a-z0-9]+_)?gear_ratio(_[123])?$/.test(name)) return 'dimensionless';
  if (name === 'mount_angle' || name.endsWith('_mount_angle')) return 'angle';
  const architectures = study.members ? study.members.map((m) => m.architecture) : [study.architecture];
  for (const a of architectures) {
    const prefix = study.members ? `${ARCHITECTURE_PREFIX[a]}_` : '';
    if (!name.startsWith(prefix)) continue;
    const info = ARCHITECTURES[a].parameters.find((p) => p.name === name.slice(prefix.length));
    if (info) return info.kind === 'angle' ? 'angle' : 'length';
  }
  return 'length';
}

