/**
 * Design space of a study: which parameters the optimizer varies, how a design vector maps to a
 * full geometry (ties resolved), and how a geometry plus the study's masses and drives become an
 * immutable FiveBarModel.
 */
import type { FiveBarModel, WorkingMode } from './fivebar.js';
import { FIVE_BAR_PARAMETERS, type DriveSpec, type FiveBarParameter, type Study } from '../study/types.js';

export type DesignVariable =
  | { readonly name: FiveBarParameter; readonly kind: 'real'; readonly min: number; readonly max: number }
  | { readonly name: 'working_mode'; readonly kind: 'categorical'; readonly choices: readonly WorkingMode[] }
  | { readonly name: 'drive' | 'drive_1' | 'drive_2'; readonly kind: 'categorical'; readonly choices: readonly string[]; readonly options: readonly DriveSpec[] };

/**
 * The study's design variables, in design-vector order: geometry variables, the working mode when it
 * is a choice, then the drive choice (`drive`, or `drive_1` and `drive_2`) when the optimizer picks
 * catalogue options.
 */
export function designVariables(study: Study): DesignVariable[] {
  const out: DesignVariable[] = [];
  for (const name of FIVE_BAR_PARAMETERS) {
    const spec = study.geometry[name];
    if (spec.kind === 'variable') out.push({ name, kind: 'real', min: spec.min, max: spec.max });
  }
  if (study.workingModes.length > 1) out.push({ name: 'working_mode', kind: 'categorical', choices: study.workingModes });
  const choice = study.driveChoice;
  if (choice.kind !== 'fixed') {
    const labels = choice.options.map((o) => o.label);
    const names = choice.kind === 'shared' ? (['drive'] as const) : (['drive_1', 'drive_2'] as const);
    for (const name of names) out.push({ name, kind: 'categorical', choices: labels, options: choice.options });
  }
  return out;
}

export interface ResolvedDesign {
  readonly geometry: Readonly<Record<FiveBarParameter, number>>;
  readonly workingMode: WorkingMode;
  /** Drives of this design (per actuator), or null when the study gives none. */
  readonly drives: readonly [DriveSpec, DriveSpec] | null;
}

/** Full geometry and working mode of a design vector. */
export function resolveDesign(study: Study, variables: readonly DesignVariable[], design: ArrayLike<number>): ResolvedDesign {
  const geometry = {} as Record<FiveBarParameter, number>;
  let workingMode = study.workingModes[0]!;
  let drives = study.drives;
  let drive1: DriveSpec | undefined;
  let drive2: DriveSpec | undefined;
  variables.forEach((v, k) => {
    const index = Math.round(design[k]!);
    if (v.kind === 'real') geometry[v.name] = design[k]!;
    else if (v.name === 'working_mode') workingMode = v.choices[index]!;
    else if (v.name === 'drive') drive1 = drive2 = v.options[index]!;
    else if (v.name === 'drive_1') drive1 = v.options[index]!;
    else drive2 = v.options[index]!;
  });
  if (drive1 && drive2) drives = [drive1, drive2];
  for (const name of FIVE_BAR_PARAMETERS) {
    const spec = study.geometry[name];
    if (spec.kind === 'fixed') geometry[name] = spec.value;
  }
  for (const name of FIVE_BAR_PARAMETERS) {
    const spec = study.geometry[name];
    if (spec.kind === 'tied') geometry[name] = geometry[spec.to];
  }
  return { geometry, workingMode, drives };
}

/** Error a user can cause with a design value (--set, baseline). */
export class DesignError extends Error {
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
        throw new DesignError(`${v.name} = ${value} m is outside its bounds [${v.min}, ${v.max}] m`);
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

/** Mass of links and hubs that move (payload excluded), kg. */
export function movingMass(study: Study, geometry: Readonly<Record<FiveBarParameter, number>>): number {
  const l = study.links;
  return (
    l.cranks[0].massPerLength * geometry.crank_1 +
    l.cranks[1].massPerLength * geometry.crank_2 +
    l.rods[0].massPerLength * geometry.rod_1 +
    l.rods[1].massPerLength * geometry.rod_2 +
    2 * study.elbowHubMass +
    study.endHubMass
  );
}

/** Build the immutable model of one design. */
export function buildFiveBarModel(study: Study, resolved: ResolvedDesign): FiveBarModel {
  const g = resolved.geometry;
  const crank = [g.crank_1, g.crank_2] as const;
  const rod = [g.rod_1, g.rod_2] as const;
  const { cranks, rods } = study.links;
  const hub = study.elbowHubMass;

  // Uniform bar about one end: I = m L²/3, first moment m L/2; elbow hub is a point mass at the crank end.
  const crankMass = [cranks[0].massPerLength * crank[0], cranks[1].massPerLength * crank[1]] as const;
  const crankInertiaAboutPivot = [
    (crankMass[0] * crank[0] ** 2) / 3 + hub * crank[0] ** 2,
    (crankMass[1] * crank[1] ** 2) / 3 + hub * crank[1] ** 2,
  ] as const;
  const crankFirstMoment = [(crankMass[0] * crank[0]) / 2 + hub * crank[0], (crankMass[1] * crank[1]) / 2 + hub * crank[1]] as const;
  const rodMass = [rods[0].massPerLength * rod[0], rods[1].massPerLength * rod[1]] as const;

  const drives = resolved.drives;
  const reflected = (i: 0 | 1): number => (drives ? drives[i].gearRatio ** 2 * drives[i].rotorInertia + drives[i].gearInertia : 0);
  const jointStiffness = (i: 0 | 1): number => (drives ? drives[i].jointStiffness : Infinity);
  const bending = (i: 0 | 1): number =>
    crank[i] ** 2 / jointStiffness(i) + crank[i] ** 3 / (3 * cranks[i].youngsModulus * cranks[i].secondMoment);
  const [s1, s2] = resolved.workingMode === '++' ? [1, 1] : resolved.workingMode === '+-' ? [1, -1] : resolved.workingMode === '-+' ? [-1, 1] : [-1, -1];

  return {
    pivotX: [-g.base_span / 2, g.base_span / 2],
    pivotY: [0, g.base_rise],
    crank,
    rod,
    sigma: [s1, s2],
    assembly: study.assemblyMode === '+' ? 1 : -1,
    jointLimits: study.jointLimits,
    crankInertiaAboutPivot,
    crankFirstMoment,
    rodMass,
    rodComDistance: [rod[0] / 2, rod[1] / 2],
    rodInertiaAboutCom: [(rodMass[0] * rod[0] ** 2) / 12, (rodMass[1] * rod[1] ** 2) / 12],
    endMass: study.endHubMass + study.payloadMass,
    reflectedInertia: [reflected(0), reflected(1)],
    gravity: study.gravity,
    complianceBending: [bending(0), bending(1)],
    complianceCrankAxial: [crank[0] / (cranks[0].youngsModulus * cranks[0].area), crank[1] / (cranks[1].youngsModulus * cranks[1].area)],
    complianceRodAxial: [rod[0] / (rods[0].youngsModulus * rods[0].area), rod[1] / (rods[1].youngsModulus * rods[1].area)],
  };
}
