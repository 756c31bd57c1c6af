/**
 * The `drives` section's drive trains (docs/drives.md): motor and gearbox catalogues (CSV or YAML,
 * separate files), the options in play, the screw or belt of sliders, the brake factor, and the
 * composition of one motor + gearbox (+ stage) into the `DriveSpec` the rest of the pipeline reads.
 *
 * Catalogue files: CSV with a header row (cells may carry units, "#" lines are comments), or YAML
 * with a list `options:` of mappings with the same field names.
 */
import type { ActuatorKind } from '../architectures/types.js';
import { cornerEnvelopes } from '../drives/envelope.js';
import { DIRECT_DRIVE, type DriveTrain, type GearboxSpec, type LinearStageSpec, type MotorHousing, type MotorSpec, type TorqueSpeedCurve } from '../drives/types.js';
import { CatalogueError, catalogueRecords } from './catalogue.js';
import type { DriveSpec, DriveTrainSetup } from './types.js';
import { parseQuantity, type QuantityKind } from './units.js';

export const MOTOR_FIELDS = [
  'name', 'rated_torque', 'peak_torque', 'max_speed', 'corner_speed', 'rated_torque_at_max_speed', 'peak_torque_at_max_speed',
  'continuous_curve', 'peak_curve', 'rotor_inertia', 'brake_torque', 'encoder_counts', 'mass', 'cost',
  'housing_diameter', 'housing_width', 'housing_height',
] as const;
export const GEARBOX_FIELDS = [
  'name', 'ratio', 'ratios', 'efficiency', 'inertia', 'rated_torque', 'acceleration_torque', 'emergency_stop_torque',
  'max_input_speed', 'backlash', 'stiffness', 'mass', 'cost',
] as const;

type Raw = Record<string, unknown>;

/** Records of a motor or gearbox catalogue file, fields checked against `fields` (the drive catalogue's reader). */
export function tableRecords(text: string, path: string, fields: readonly string[]): Raw[] {
  return catalogueRecords(text, path, fields);
}

function quantity(raw: Raw, key: string, kind: QuantityKind, where: string, fallback?: number): number {
  const v = raw[key];
  if (v === undefined || v === null) {
    if (fallback !== undefined) return fallback;
    throw new CatalogueError(`${where}: missing ${key}`);
  }
  return parseQuantity(v, kind, `${where}.${key}`);
}

function positiveQuantity(raw: Raw, key: string, kind: QuantityKind, where: string, fallback?: number, allowZero = false): number {
  const v = quantity(raw, key, kind, where, fallback);
  if (!(allowZero ? v >= 0 : v > 0)) throw new CatalogueError(`${where}.${key}: must be ${allowZero ? 'zero or positive' : 'positive'} (got ${v})`);
  return v;
}

/**
 * A torque–speed curve: "0 rpm: 3.8 N*m; 2000 rpm: 3.8 N*m; 3000 rpm: 2 N*m" (CSV cell or YAML
 * string) or a YAML list of [speed, torque] pairs. Speeds start at 0 and increase; torques ≥ 0.
 */
export function parseCurve(value: unknown, where: string): TorqueSpeedCurve {
  const pairs: [unknown, unknown][] = [];
  if (typeof value === 'string') {
    for (const part of value.split(';')) {
      if (part.trim() === '') continue;
      const colon = part.indexOf(':');
      if (colon < 0) throw new CatalogueError(`${where}: "${part.trim()}" is not "speed: torque" (for example "0 rpm: 3.8 N*m; 3000 rpm: 2 N*m")`);
      pairs.push([part.slice(0, colon).trim(), part.slice(colon + 1).trim()]);
    }
  } else if (Array.isArray(value)) {
    value.forEach((p, i) => {
      if (!Array.isArray(p) || p.length !== 2) throw new CatalogueError(`${where}[${i}]: give [speed, torque]`);
      pairs.push([p[0], p[1]]);
    });
  } else throw new CatalogueError(`${where}: give "speed: torque; …" or a list of [speed, torque]`);
  const speeds = pairs.map((p, i) => parseQuantity(p[0], 'angularSpeed', `${where}[${i}].speed`));
  const torques = pairs.map((p, i) => parseQuantity(p[1], 'torque', `${where}[${i}].torque`));
  if (speeds.length < 2 || speeds[0] !== 0) throw new CatalogueError(`${where}: give at least two points, the first at speed 0`);
  for (let k = 1; k < speeds.length; k++) if (!(speeds[k]! > speeds[k - 1]!)) throw new CatalogueError(`${where}: speeds must increase`);
  if (torques.some((t) => !(t >= 0))) throw new CatalogueError(`${where}: torques must be zero or positive`);
  return { speeds, torques };
}

/** One motor from a catalogue record: curves as points, or rated/peak torque with an optional corner speed. */
export function buildMotor(raw: Raw, where: string): MotorSpec {
  const name = raw['name'];
  if (typeof name !== 'string' || name === '') throw new CatalogueError(`${where}: missing name`);
  const w = `${where} "${name}"`;
  let continuous: TorqueSpeedCurve;
  let peak: TorqueSpeedCurve;
  if (raw['continuous_curve'] !== undefined || raw['peak_curve'] !== undefined) {
    if (raw['continuous_curve'] === undefined || raw['peak_curve'] === undefined) throw new CatalogueError(`${w}: give both continuous_curve and peak_curve`);
    continuous = parseCurve(raw['continuous_curve'], `${w}.continuous_curve`);
    peak = parseCurve(raw['peak_curve'], `${w}.peak_curve`);
  } else {
    const rated = positiveQuantity(raw, 'rated_torque', 'torque', w);
    const peakTorque = positiveQuantity(raw, 'peak_torque', 'torque', w);
    if (peakTorque < rated) throw new CatalogueError(`${w}: peak_torque is below rated_torque`);
    const maxSpeed = positiveQuantity(raw, 'max_speed', 'angularSpeed', w);
    const opt = (key: string, kind: QuantityKind): number | undefined => (raw[key] === undefined ? undefined : positiveQuantity(raw, key, kind, w, undefined, true));
    const corner = opt('corner_speed', 'angularSpeed');
    const continuousAtMax = opt('rated_torque_at_max_speed', 'torque');
    const peakAtMax = opt('peak_torque_at_max_speed', 'torque');
    ({ continuous, peak } = cornerEnvelopes({
      ratedTorque: rated, peakTorque, maxSpeed,
      ...(corner !== undefined ? { cornerSpeed: corner } : {}),
      ...(continuousAtMax !== undefined ? { continuousAtMax } : {}),
      ...(peakAtMax !== undefined ? { peakAtMax } : {}),
    }));
  }
  const maxSpeed = Math.min(continuous.speeds.at(-1)!, peak.speeds.at(-1)!);
  const counts = raw['encoder_counts'] ?? 0;
  if (typeof counts !== 'number' || !Number.isInteger(counts) || counts < 0) throw new CatalogueError(`${w}.encoder_counts: must be a whole number`);
  return {
    name, continuous, peak, maxSpeed,
    rotorInertia: positiveQuantity(raw, 'rotor_inertia', 'inertia', w),
    ...(raw['brake_torque'] !== undefined ? { brakeTorque: positiveQuantity(raw, 'brake_torque', 'torque', w) } : {}),
    encoderCounts: counts,
    mass: positiveQuantity(raw, 'mass', 'mass', w, 0, true),
    cost: raw['cost'] === undefined ? Number.NaN : positiveQuantity(raw, 'cost', 'dimensionless', w, undefined, true),
    ...motorHousing(raw, w),
  };
}

/**
 * A motor's outline from `housing_diameter` (round) or `housing_width` and `housing_height` (a box,
 * width along the base's x axis; a square when only the width is given), lengths; none when absent.
 */
function motorHousing(raw: Raw, w: string): { housing?: MotorHousing } {
  const diameter = raw['housing_diameter'];
  const width = raw['housing_width'];
  const height = raw['housing_height'];
  if (diameter !== undefined) {
    if (width !== undefined || height !== undefined) throw new CatalogueError(`${w}: give housing_diameter or housing_width/housing_height, not both`);
    return { housing: { shape: 'circle', radius: positiveQuantity(raw, 'housing_diameter', 'length', w) / 2 } };
  }
  if (width === undefined) {
    if (height !== undefined) throw new CatalogueError(`${w}: housing_height needs housing_width`);
    return {};
  }
  const boxWidth = positiveQuantity(raw, 'housing_width', 'length', w);
  const boxHeight = height === undefined ? boxWidth : positiveQuantity(raw, 'housing_height', 'length', w);
  return { housing: { shape: 'box', width: boxWidth, height: boxHeight, angle: 0 } };
}

/** Gearbox entries of one record: one per ratio when it lists `ratios` (named "name:ratio"). */
export function buildGearboxes(raw: Raw, where: string): GearboxSpec[] {
  const name = raw['name'];
  if (typeof name !== 'string' || name === '') throw new CatalogueError(`${where}: missing name`);
  const w = `${where} "${name}"`;
  const efficiency = quantity(raw, 'efficiency', 'dimensionless', w, 1);
  if (!(efficiency > 0 && efficiency <= 1)) throw new CatalogueError(`${w}.efficiency: must be in (0, 1]`);
  const rated = positiveQuantity(raw, 'rated_torque', 'torque', w);
  const base = {
    efficiency,
    inertia: positiveQuantity(raw, 'inertia', 'inertia', w, 0, true),
    ratedTorque: rated,
    accelerationTorque: positiveQuantity(raw, 'acceleration_torque', 'torque', w, rated),
    emergencyStopTorque: positiveQuantity(raw, 'emergency_stop_torque', 'torque', w, Infinity),
    maxInputSpeed: positiveQuantity(raw, 'max_input_speed', 'angularSpeed', w, Infinity),
    backlash: positiveQuantity(raw, 'backlash', 'angle', w, 0, true),
    stiffness: positiveQuantity(raw, 'stiffness', 'rotationalStiffness', w, Infinity),
    mass: positiveQuantity(raw, 'mass', 'mass', w, 0, true),
    cost: raw['cost'] === undefined ? Number.NaN : positiveQuantity(raw, 'cost', 'dimensionless', w, undefined, true),
  };
  if (base.accelerationTorque < rated) throw new CatalogueError(`${w}: acceleration_torque is below rated_torque`);
  if (raw['ratios'] !== undefined) {
    const list = Array.isArray(raw['ratios']) ? raw['ratios'] : String(raw['ratios']).split(';').map((x) => x.trim()).filter((x) => x !== '').map(Number);
    const ratios = list.map((r) => Number(r));
    if (ratios.length === 0 || ratios.some((r) => !(r > 0))) throw new CatalogueError(`${w}.ratios: give positive ratios, e.g. "5; 10; 20"`);
    return ratios.map((ratio) => ({ name: `${name}:${ratio}`, ratio, ...base }));
  }
  const ratio = quantity(raw, 'ratio', 'dimensionless', w);
  if (!(ratio > 0)) throw new CatalogueError(`${w}.ratio: must be positive`);
  return [{ name, ratio, ...base }];
}

/** The sliders' screw or belt from the study (`drives.linear_stage`). */
export function buildStage(raw: Raw, where: string): LinearStageSpec {
  const kind = raw['kind'] ?? 'screw';
  if (kind !== 'screw' && kind !== 'belt') throw new CatalogueError(`${where}.kind: "screw" or "belt"`);
  const efficiency = quantity(raw, 'efficiency', 'dimensionless', where, 0.9);
  if (!(efficiency > 0 && efficiency <= 1)) throw new CatalogueError(`${where}.efficiency: must be in (0, 1]`);
  return {
    kind,
    lead: positiveQuantity(raw, 'lead', 'length', where),
    efficiency,
    maxThrust: positiveQuantity(raw, 'max_thrust', 'force', where),
    maxSpeed: positiveQuantity(raw, 'max_speed', 'speed', where, Infinity),
    inertia: positiveQuantity(raw, 'inertia', 'inertia', where, 0, true),
    stiffness: positiveQuantity(raw, 'stiffness', 'linearStiffness', where, Infinity),
  };
}

/** Names must be unique within a catalogue. */
function unique<T extends { name: string }>(items: T[], path: string): T[] {
  const seen = new Set<string>();
  for (const it of items) {
    if (seen.has(it.name)) throw new CatalogueError(`${path}: "${it.name}" appears twice`);
    seen.add(it.name);
  }
  return items;
}

export function readMotors(text: string, path: string): MotorSpec[] {
  return unique(tableRecords(text, path, MOTOR_FIELDS).map((r, i) => buildMotor(r, `${path}: entry ${i + 1}`)), path);
}

export function readGearboxes(text: string, path: string): GearboxSpec[] {
  return unique(tableRecords(text, path, GEARBOX_FIELDS).flatMap((r, i) => buildGearboxes(r, `${path}: entry ${i + 1}`)), path);
}

/** Picks named entries (a study's subset); every name must exist. */
export function pick<T extends { name: string }>(all: readonly T[], names: readonly string[] | undefined, where: string): T[] {
  if (!names) return [...all];
  return names.map((n) => {
    const hit = all.find((o) => o.name === n);
    if (!hit) throw new CatalogueError(`${where}: no entry "${n}" (entries: ${all.map((o) => o.name).join(', ')})`);
    return hit;
  });
}

/**
 * One actuator's drive as the pipeline reads it (src/study/drives.ts refers it to the joint), with
 * the train kept for the envelope checks. Gear-side inertia: revolute N² J_gear at the joint;
 * prismatic N² J_gear + J_stage at the screw shaft (driveAtJoint multiplies by (2π/ℓ)²).
 */
export function composeDrive(train: DriveTrain, kind: ActuatorKind): DriveSpec {
  const { motor, gearbox, ratio, stage } = train;
  if (kind === 'prismatic' && !stage) throw new CatalogueError('drives.linear_stage: sliders need a screw or belt (lead, efficiency, max_thrust)');
  const n = ratio;
  const speedLimit = Math.min(motor.maxSpeed, gearbox.maxInputSpeed);
  // Slider: the stage in series with the gearbox's torsional stiffness seen at the slider, k_g/r_s² (r_s = ℓ/2π).
  const rs = stage ? stage.lead / (2 * Math.PI) : 1;
  const stiffness = kind === 'prismatic' ? 1 / (1 / stage!.stiffness + (rs * rs) / gearbox.stiffness) : gearbox.stiffness;
  return {
    label: gearbox === DIRECT_DRIVE ? motor.name : `${motor.name} + ${gearbox.name}${gearbox.ratio !== ratio ? ` @${Number(ratio.toPrecision(6))}` : ''}`,
    mass: motor.mass + gearbox.mass,
    gearRatio: n,
    efficiency: gearbox.efficiency * (stage ? stage.efficiency : 1),
    rotorInertia: motor.rotorInertia,
    gearInertia: n * n * gearbox.inertia + (stage ? stage.inertia : 0),
    ratedTorque: motor.continuous.torques[0]!,
    peakTorque: motor.peak.torques[0]!,
    maxSpeed: speedLimit,
    jointStiffness: stiffness,
    encoderCounts: motor.encoderCounts,
    ...(stage ? { lead: stage.lead } : {}),
    train,
  };
}

/** The drive per actuator when nothing is chosen (one motor, one gearbox, no ratio variable), else null. */
export function fixedDrives(setup: DriveTrainSetup, kinds: readonly ActuatorKind[]): DriveSpec[] | null {
  if (setup.motors.length > 1 || setup.gearboxes.length > 1 || setup.ratio) return null;
  const gearbox = setup.gearboxes[0]!;
  return kinds.map((kind) => composeDrive({ motor: setup.motors[0]!, gearbox, ratio: gearbox.ratio, stage: setup.stage }, kind));
}

/**
 * The drive-train part of a study's `drives` section, or null when it names no `motors` file.
 * `attachments` holds the catalogue files' text (loadStudyFile bundles them).
 */
export function buildDriveTrainSetup(drives: Raw, attachments: ReadonlyMap<string, string>, kinds: readonly ActuatorKind[]): DriveTrainSetup | null {
  const motorsPath = drives['motors'];
  if (typeof motorsPath !== 'string') {
    if (drives['gearboxes'] !== undefined) throw new CatalogueError('drives.gearboxes: needs drives.motors (the motor catalogue)');
    return null;
  }
  if (drives['catalogue'] !== undefined || drives['both'] !== undefined || drives['choices'] !== undefined) {
    throw new CatalogueError('drives.motors: give either motor and gearbox catalogues (motors, gearboxes) or the combined drive catalogue / inline drives, not both');
  }
  const text = (path: string, key: string): string => {
    const content = attachments.get(path);
    if (content === undefined) throw new CatalogueError(`drives.${key}: "${path}" is not attached (load the study with loadStudyFile so the file is read)`);
    return content;
  };
  const allMotors = readMotors(text(motorsPath, 'motors'), motorsPath);
  const gearboxesPath = typeof drives['gearboxes'] === 'string' ? drives['gearboxes'] : null;
  const allGearboxes = gearboxesPath ? readGearboxes(text(gearboxesPath, 'gearboxes'), gearboxesPath) : [DIRECT_DRIVE];
  const motors = pick(allMotors, drives['motor_choices'] as string[] | undefined, 'drives.motor_choices');
  const gearboxes = gearboxesPath ? pick(allGearboxes, drives['gearbox_choices'] as string[] | undefined, 'drives.gearbox_choices') : allGearboxes;
  let ratio: DriveTrainSetup['ratio'] = null;
  const ratioIn = drives['gear_ratio'] as Raw | undefined;
  if (ratioIn) {
    if (!gearboxesPath) throw new CatalogueError('drives.gear_ratio: a continuous ratio needs drives.gearboxes (whose ratings it keeps)');
    const min = quantity(ratioIn, 'min', 'dimensionless', 'drives.gear_ratio');
    const max = quantity(ratioIn, 'max', 'dimensionless', 'drives.gear_ratio');
    if (!(min > 0 && max > min)) throw new CatalogueError('drives.gear_ratio: need 0 < min < max');
    ratio = { min, max };
  }
  const prismatic = kinds.some((k) => k === 'prismatic');
  const stageIn = drives['linear_stage'] as Raw | undefined;
  if (prismatic && !stageIn) throw new CatalogueError('drives.linear_stage: the sliders need a screw or belt (lead, efficiency, max_thrust)');
  const brakeFactor = drives['brake_factor'] === undefined ? 1.5 : quantity(drives, 'brake_factor', 'dimensionless', 'drives');
  if (!(brakeFactor >= 1)) throw new CatalogueError('drives.brake_factor: must be at least 1');
  const maxInertiaRatio = drives['max_inertia_ratio'] === undefined ? null : quantity(drives, 'max_inertia_ratio', 'dimensionless', 'drives');
  if (maxInertiaRatio !== null && !(maxInertiaRatio > 0)) throw new CatalogueError('drives.max_inertia_ratio: must be positive');
  const choose = drives['choose'] === 'shared' ? 'shared' : 'per-actuator';
  if (drives['choose'] !== undefined && drives['choose'] !== 'shared' && drives['choose'] !== 'per-actuator') throw new CatalogueError('drives.choose: "shared" or "per-actuator"');
  return {
    motorsPath, gearboxesPath, motors, gearboxes, choose, ratio,
    // A revolute architecture ignores it (a comparison study may share one drives section).
    stage: stageIn && prismatic ? buildStage(stageIn, 'drives.linear_stage') : null,
    brakeFactor, maxInertiaRatio,
  };
}
