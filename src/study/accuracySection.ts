/**
 * Study sections about the built arm (docs/accuracy.md): `tolerances`, `joints`, `strength` and
 * `link_sections`, parsed into an AccuracySpec (src/accuracy/spec.ts), SI units. A study with none of
 * them gets no AccuracySpec, so its settings hash and every earlier result stay as they were.
 */
import type { ActuatorKind } from '../architectures/types.js';
import type { AccuracySpec, JointStiffnessSpec, SectionChoiceSpec, StrengthSpec, ToleranceSpec, TubeOption } from '../accuracy/spec.js';
import { sectionProperties, type SectionProperties, type SectionShape } from '../accuracy/sections.js';
import { parseQuantity, UnitError, type QuantityKind } from './units.js';
import { BUILT_ARM_METRICS } from '../core/metrics.js';

type Json = null | boolean | number | string | Json[] | { [key: string]: Json };
type JsonObject = { [key: string]: Json };

/** Materials a tube list may name (handbook values, from memory; the same as the mass section's). */
const TUBE_MATERIALS: Readonly<Record<string, { density: number; youngsModulus: number }>> = {
  'aluminium-6061': { density: 2700, youngsModulus: 68.9e9 },
  steel: { density: 7850, youngsModulus: 200e9 },
};

function isObject(v: Json | undefined): v is JsonObject {
  return typeof v === 'object' && v !== null && !Array.isArray(v);
}

function quantity(value: Json | undefined, kind: QuantityKind, where: string, fallback?: number): number {
  if (value === undefined || value === null) {
    if (fallback !== undefined) return fallback;
    throw new UnitError(`${where}: missing value`);
  }
  return parseQuantity(value, kind, where);
}

function nonNegative(value: number, where: string, strict = false): number {
  if (!(strict ? value > 0 : value >= 0)) throw new UnitError(`${where}: must be ${strict ? 'positive' : 'zero or positive'} (got ${value})`);
  return value;
}

/** Why a built-arm metric cannot be computed for this study's data (null when it can, or for other metrics). */
export function accuracyMetricProblem(metric: string, data: JsonObject): string | null {
  if (!BUILT_ARM_METRICS.has(metric)) return null;
  const has = (key: string): boolean => data[key] !== undefined;
  if (metric.includes('_error_')) return has('tolerances') ? null : 'needs a tolerances section (docs/accuracy.md)';
  return ['tolerances', 'joints', 'strength', 'link_sections'].some(has) ? null : 'needs a strength section (docs/accuracy.md), and section shapes for stress, buckling and the out-of-plane mode';
}

/** Objectives' and constraints' metrics (in order) that need an accuracy section the study lacks: a study error naming the first. */
export function checkAccuracyMetricNeeds(metrics: readonly string[], data: JsonObject): void {
  const objectives = Array.isArray(data['objectives']) ? data['objectives'].length : 0;
  metrics.forEach((metric, k) => {
    const problem = accuracyMetricProblem(metric, data);
    const where = k < objectives ? `objectives[${k}].metric` : `constraints[${k - objectives}].metric`;
    if (problem) throw new UnitError(`${where}: "${metric}" ${problem}`);
  });
}

/** The four sections of a study's data; null when the study has none of them. */
export function parseAccuracySections(data: JsonObject, actuators: readonly ActuatorKind[]): AccuracySpec | null {
  const keys = ['tolerances', 'joints', 'strength', 'link_sections'] as const;
  if (keys.every((k) => data[k] === undefined)) return null;
  const mass = isObject(data['mass']) ? data['mass'] : {};
  const n = actuators.length;
  const shapeOf = (specific: string, shared: string): SectionProperties | null => {
    const link = mass[specific] ?? mass[shared];
    return isObject(link) && isObject(link['section']) ? sectionProperties(parseShape(link['section'], `mass.${specific}.section`)) : null;
  };
  return {
    tolerances: isObject(data['tolerances']) ? parseTolerances(data['tolerances'], actuators) : null,
    joints: isObject(data['joints']) ? parseJoints(data['joints']) : null,
    strength: isObject(data['strength']) ? parseStrength(data['strength']) : null,
    crankSections: Array.from({ length: n }, (_, i) => (actuators[i] === 'revolute' ? shapeOf(`crank_${i + 1}`, 'cranks') : null)),
    rodSections: Array.from({ length: n }, (_, i) => shapeOf(`rod_${i + 1}`, 'rods')),
    sectionChoice: isObject(data['link_sections']) ? parseSectionChoice(data['link_sections'], actuators) : null,
  };
}

/** `tolerances:` — link_length, pivot_position, joint_clearance, backlash (one value or per actuator), encoder, coverage. */
function parseTolerances(raw: JsonObject, actuators: readonly ActuatorKind[]): ToleranceSpec {
  const where = 'tolerances';
  const length = (key: string): number => nonNegative(quantity(raw[key], 'length', `${where}.${key}`, 0), `${where}.${key}`);
  const backlashIn = raw['backlash'];
  const backlash = actuators.map((kind, i) => {
    const unit: QuantityKind = kind === 'revolute' ? 'angle' : 'length';
    const value = isObject(backlashIn) ? (backlashIn[`actuator_${i + 1}`] ?? backlashIn['both']) : backlashIn;
    const at = isObject(backlashIn) ? `${where}.backlash.actuator_${i + 1}` : `${where}.backlash`;
    return nonNegative(quantity(value, unit, at, 0), at);
  });
  const encoder = raw['encoder'] ?? false;
  if (typeof encoder !== 'boolean') throw new UnitError(`${where}.encoder: true or false (include ± half an encoder count of each drive)`);
  const coverage = quantity(raw['coverage'], 'dimensionless', `${where}.coverage`, 3);
  if (!(coverage > 0 && coverage <= 6)) throw new UnitError(`${where}.coverage: a coverage factor between 0 and 6 (3 is usual)`);
  return {
    linkLength: length('link_length'),
    pivotPosition: length('pivot_position'),
    jointClearance: length('joint_clearance'),
    backlash,
    encoder,
    coverage,
  };
}

/** `joints:` — bearing_radial_stiffness (N/m), gearbox_torsional_stiffness (N·m/rad, output side), servo_stiffness (N·m/rad, motor side). */
function parseJoints(raw: JsonObject): JointStiffnessSpec {
  const where = 'joints';
  const optional = (key: string, kind: QuantityKind): number | null =>
    raw[key] === undefined ? null : nonNegative(quantity(raw[key], kind, `${where}.${key}`), `${where}.${key}`, true);
  return {
    bearingRadialStiffness: optional('bearing_radial_stiffness', 'linearStiffness') ?? Infinity,
    gearboxStiffness: optional('gearbox_torsional_stiffness', 'rotationalStiffness'),
    servoStiffness: optional('servo_stiffness', 'rotationalStiffness'),
  };
}

/** `strength:` — yield_strength (Pa), safety_factor, buckling_factor, end_load (N), poisson_ratio. */
function parseStrength(raw: JsonObject): StrengthSpec {
  const where = 'strength';
  const factor = (key: string, fallback: number): number => {
    const v = quantity(raw[key], 'dimensionless', `${where}.${key}`, fallback);
    if (!(v >= 1)) throw new UnitError(`${where}.${key}: a factor of at least 1 (got ${v})`);
    return v;
  };
  const poisson = quantity(raw['poisson_ratio'], 'dimensionless', `${where}.poisson_ratio`, 0.3);
  if (!(poisson > -1 && poisson < 0.5)) throw new UnitError(`${where}.poisson_ratio: between −1 and 0.5 (metals about 0.3)`);
  return {
    yieldStrength: raw['yield_strength'] === undefined ? null : nonNegative(quantity(raw['yield_strength'], 'modulus', `${where}.yield_strength`), `${where}.yield_strength`, true),
    safetyFactor: factor('safety_factor', 1.5),
    bucklingFactor: factor('buckling_factor', 3),
    endLoad: nonNegative(quantity(raw['end_load'], 'force', `${where}.end_load`, 0), `${where}.end_load`),
    poissonRatio: poisson,
  };
}

/** A section shape as the mass section writes it (shape, width, height, wall, diameter). */
export function parseShape(raw: JsonObject, where: string): SectionShape {
  const len = (key: string): number => nonNegative(quantity(raw[key], 'length', `${where}.${key}`), `${where}.${key}`, true);
  const shape = raw['shape'];
  if (shape === 'round') return { shape, diameter: len('diameter') };
  if (shape === 'round-tube') {
    const s = { shape, diameter: len('diameter'), wall: len('wall') } as const;
    if (2 * s.wall >= s.diameter) throw new UnitError(`${where}.wall: twice the wall must be less than the diameter`);
    return s;
  }
  if (shape === 'rectangle') return { shape, width: len('width'), height: len('height') };
  if (shape === 'rectangular-tube') {
    const s = { shape, width: len('width'), height: len('height'), wall: len('wall') } as const;
    if (2 * s.wall >= Math.min(s.width, s.height)) throw new UnitError(`${where}.wall: twice the wall must be less than width and height`);
    return s;
  }
  throw new UnitError(`${where}.shape: one of round, round-tube, rectangle, rectangular-tube`);
}

/** `link_sections:` — applies_to (rods, cranks, links), material, tubes: [{name, shape, …}]. */
function parseSectionChoice(raw: JsonObject, actuators: readonly ActuatorKind[]): SectionChoiceSpec {
  const where = 'link_sections';
  const appliesTo = (raw['applies_to'] ?? 'rods') as SectionChoiceSpec['appliesTo'];
  if (!['rods', 'cranks', 'links'].includes(appliesTo)) throw new UnitError(`${where}.applies_to: rods, cranks or links`);
  if (appliesTo !== 'rods' && actuators.some((a) => a !== 'revolute')) throw new UnitError(`${where}.applies_to: this architecture has no cranks; use rods`);
  const materialIn = raw['material'] ?? 'aluminium-6061';
  let material: { density: number; youngsModulus: number };
  if (typeof materialIn === 'string') {
    const m = TUBE_MATERIALS[materialIn];
    if (!m) throw new UnitError(`${where}.material: ${Object.keys(TUBE_MATERIALS).join(' or ')}, or {density, youngs_modulus}`);
    material = m;
  } else if (isObject(materialIn)) {
    material = {
      density: quantity(materialIn['density'], 'density', `${where}.material.density`),
      youngsModulus: quantity(materialIn['youngs_modulus'], 'modulus', `${where}.material.youngs_modulus`),
    };
  } else {
    throw new UnitError(`${where}.material: a material name or {density, youngs_modulus}`);
  }
  const tubes = raw['tubes'];
  if (!Array.isArray(tubes) || tubes.length < 2) throw new UnitError(`${where}.tubes: a list of at least two sections to choose from`);
  const names = new Set<string>();
  const options: TubeOption[] = tubes.map((tube, k) => {
    const at = `${where}.tubes[${k}]`;
    if (!isObject(tube)) throw new UnitError(`${at}: a section {name, shape, diameter/width/height, wall}`);
    const section = sectionProperties(parseShape(tube, at));
    const label = typeof tube['name'] === 'string' ? tube['name'] : section.label;
    if (names.has(label)) throw new UnitError(`${at}.name: "${label}" appears twice`);
    names.add(label);
    return { label, section, massPerLength: material.density * section.area, youngsModulus: material.youngsModulus };
  });
  return { appliesTo, options };
}
