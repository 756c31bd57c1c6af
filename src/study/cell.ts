/**
 * Parsing of the study's `cell` section (docs/cell.md) into a CellSpec (src/cell/types.ts), SI units. The JSON Schema
 * (src/study/study.schema.json, definitions/cell) checks the shape first; this checks the values.
 */
import { LoopsmithUserError } from '../core/errors.js';
import { parseQuantity, type QuantityKind } from './units.js';
import { polygonSelfIntersects, polygonSignedArea } from '../cell/geometry.js';
import { MOUNT_VARIABLES, type CellParameter, type CellShape, type CellSpec, type Housing, type InterferenceSpec, type MountingSpec, type NamedShape } from '../cell/types.js';

type Json = unknown;
type JsonObject = { readonly [key: string]: Json };

/** A user error in the cell section. */
export class CellSettingsError extends LoopsmithUserError {
  constructor(message: string) {
    super(message);
    this.name = 'StudyError';
  }
}

function isObject(v: Json): v is JsonObject {
  return typeof v === 'object' && v !== null && !Array.isArray(v);
}

function q(value: Json, kind: QuantityKind, where: string, fallback?: number): number {
  if (value === undefined || value === null) {
    if (fallback !== undefined) return fallback;
    throw new CellSettingsError(`${where}: missing value`);
  }
  return parseQuantity(value, kind, where);
}

function positive(value: number, where: string, allowZero = false): number {
  if (!(allowZero ? value >= 0 : value > 0)) throw new CellSettingsError(`${where}: must be ${allowZero ? 'zero or positive' : 'positive'} (got ${value})`);
  return value;
}

/** What the cell parser needs from the rest of the study. */
export interface CellContext {
  /** Actuator kinds per leg. */
  readonly actuators: readonly ('revolute' | 'prismatic')[];
  /** The study's raw `mass` section (link sections give the default link widths). */
  readonly massIn: JsonObject;
  /** Whether the study has a duty cycle. */
  readonly hasDutyCycle: boolean;
}

/**
 * The study's cell section (null without one). A study that asks for the regular workspace without a
 * cell section gets the defaults (a square, nothing else); the other cell metrics need what they measure.
 */
export function studyCell(data: JsonObject, context: CellContext): CellSpec | null {
  const raw = data['cell'];
  const used: { metric: string; where: string }[] = [];
  for (const key of ['objectives', 'constraints']) {
    const list = data[key];
    if (Array.isArray(list)) list.forEach((o, i) => { if (isObject(o) && typeof o['metric'] === 'string') used.push({ metric: o['metric'], where: `${key}[${i}].metric` }); });
  }
  const cell = isObject(raw) ? parseCell(raw, context) : used.some((u) => u.metric.startsWith('regular_workspace_')) ? parseCell({}, context) : null;
  for (const { metric, where } of used) {
    const missing =
      (metric === 'min_clearance' && !(cell && (cell.keepOuts.length > 0 || cell.interference))) ? 'cell.keep_outs or cell.interference' :
      (metric === 'passive_joint_margin' && cell?.interference?.passiveMinAngle == null) ? 'cell.interference.passive_min_angle' :
      (metric === 'zone_coverage' && !(cell && cell.zones.length > 0)) ? 'cell.zones' :
      (metric === 'cycle_coverage' && !cell?.cycleAsTask) ? 'cell.cycle_as_task: true (and a duty_cycle)' : null;
    if (missing) throw new CellSettingsError(`${where}: "${metric}" needs ${missing}`);
  }
  return cell;
}

/** The cell section of a study. */
export function parseCell(raw: JsonObject, context: CellContext): CellSpec {
  const zones = Array.isArray(raw['zones']) ? raw['zones'].map((z, i) => parseNamedShape(z as JsonObject, `cell.zones[${i}]`, `zone_${i + 1}`)) : [];
  const keepOuts = Array.isArray(raw['keep_outs']) ? raw['keep_outs'].map((z, i) => parseNamedShape(z as JsonObject, `cell.keep_outs[${i}]`, `keep_out_${i + 1}`)) : [];
  const cycleAsTask = raw['cycle_as_task'] === true;
  if (cycleAsTask && !context.hasDutyCycle) throw new CellSettingsError('cell.cycle_as_task: needs a duty_cycle section (its path is the task)');
  const interference = isObject(raw['interference']) ? parseInterference(raw['interference'], context) : null;
  const allowance = positive(q(raw['clearance'], 'length', 'cell.clearance', 0), 'cell.clearance', true);
  const mounting = isObject(raw['mounting']) ? parseMounting(raw['mounting']) : null;
  const reg = isObject(raw['regular_workspace']) ? raw['regular_workspace'] : {};
  const aspect = positive(q(reg['aspect'], 'dimensionless', 'cell.regular_workspace.aspect', 1), 'cell.regular_workspace.aspect');
  if (aspect > 20 || aspect < 0.05) throw new CellSettingsError('cell.regular_workspace.aspect: width/height between 0.05 and 20');
  const angle = q(reg['angle'], 'angle', 'cell.regular_workspace.angle', 0);
  return { zones, cycleAsTask, keepOuts, interference, allowance, mounting, regular: { aspect, angle } };
}

function parseNamedShape(raw: JsonObject, where: string, fallbackName: string): NamedShape {
  const name = typeof raw['name'] === 'string' ? raw['name'] : fallbackName;
  return { ...parseShape(raw, where), name };
}

/** A rectangle (optionally turned by `angle`), a circle, or a polygon given by `vertices`. */
export function parseShape(raw: JsonObject, where: string): CellShape {
  const shape = raw['shape'] ?? (raw['vertices'] !== undefined ? 'polygon' : undefined);
  if (shape === 'polygon') {
    const list = raw['vertices'];
    if (!Array.isArray(list) || list.length < 3) throw new CellSettingsError(`${where}.vertices: at least three [x, y] points`);
    const vertices: number[] = [];
    list.forEach((p, k) => {
      if (!Array.isArray(p) || p.length !== 2) throw new CellSettingsError(`${where}.vertices[${k}]: an [x, y] pair`);
      vertices.push(q(p[0], 'length', `${where}.vertices[${k}][0]`), q(p[1], 'length', `${where}.vertices[${k}][1]`));
    });
    const poly = Float64Array.from(vertices);
    if (Math.abs(polygonSignedArea(poly)) === 0) throw new CellSettingsError(`${where}.vertices: the polygon has no area`);
    if (polygonSelfIntersects(poly)) throw new CellSettingsError(`${where}.vertices: the polygon crosses itself; list the corners in order around it`);
    return { shape: 'polygon', vertices };
  }
  const centre = raw['centre'];
  if (!Array.isArray(centre) || centre.length !== 2) throw new CellSettingsError(`${where}.centre: an [x, y] pair (or give vertices for a polygon)`);
  const centreX = q(centre[0], 'length', `${where}.centre[0]`);
  const centreY = q(centre[1], 'length', `${where}.centre[1]`);
  if (shape === 'circle') return { shape: 'circle', centreX, centreY, radius: positive(q(raw['radius'], 'length', `${where}.radius`), `${where}.radius`) };
  if (shape !== 'rectangle') throw new CellSettingsError(`${where}.shape: rectangle, circle or polygon`);
  return {
    shape: 'rectangle',
    centreX,
    centreY,
    width: positive(q(raw['width'], 'length', `${where}.width`), `${where}.width`),
    height: positive(q(raw['height'], 'length', `${where}.height`), `${where}.height`),
    angle: q(raw['angle'], 'angle', `${where}.angle`, 0),
  };
}

/** In-plane width of a link from its section in the study's mass section (rectangle width, round diameter), else 0. */
function sectionWidth(massIn: JsonObject, specific: string, shared: string): number {
  const link = massIn[specific] ?? massIn[shared];
  if (!isObject(link) || !isObject(link['section'])) return 0;
  const s = link['section'];
  const value = s['shape'] === 'rectangle' || s['shape'] === 'rectangular-tube' ? s['width'] : s['diameter'];
  return value === undefined ? 0 : parseQuantity(value, 'length', `mass.${specific}.section`);
}

function parseInterference(raw: JsonObject, context: CellContext): InterferenceSpec {
  const n = context.actuators.length;
  const w = raw['link_width'];
  const crankWidth: number[] = [];
  const rodWidth: number[] = [];
  for (let i = 0; i < n; i++) {
    if (w !== undefined && w !== 'sections') {
      const value = positive(q(w, 'length', 'cell.interference.link_width'), 'cell.interference.link_width', true);
      crankWidth.push(value);
      rodWidth.push(value);
    } else {
      crankWidth.push(context.actuators[i] === 'revolute' ? sectionWidth(context.massIn, `crank_${i + 1}`, 'cranks') : 0);
      rodWidth.push(sectionWidth(context.massIn, `rod_${i + 1}`, 'rods'));
    }
  }
  const housingsIn = raw['housings'];
  const housings: (Housing | null)[] = [];
  for (let i = 0; i < n; i++) {
    const h = Array.isArray(housingsIn) ? housingsIn[i] : housingsIn;
    housings.push(isObject(h) ? parseHousing(h, `cell.interference.housings${Array.isArray(housingsIn) ? `[${i}]` : ''}`) : null);
  }
  const passive = raw['passive_min_angle'];
  const passiveMinAngle = passive === undefined ? null : q(passive, 'angle', 'cell.interference.passive_min_angle');
  if (passiveMinAngle !== null && !(passiveMinAngle >= 0 && passiveMinAngle < Math.PI / 2)) {
    throw new CellSettingsError('cell.interference.passive_min_angle: between 0 and 90 deg');
  }
  const slider = raw['slider_length'];
  const sliderLength = slider === undefined ? null : positive(q(slider, 'length', 'cell.interference.slider_length'), 'cell.interference.slider_length', true);
  // Architectures without two sliders on one rail ignore it (a comparison study shares one cell section).
  return { links: raw['links'] !== false, crankWidth, rodWidth, housings, passiveMinAngle, sliderLength };
}

function parseHousing(raw: JsonObject, where: string): Housing {
  if (raw['radius'] !== undefined) return { shape: 'circle', radius: positive(q(raw['radius'], 'length', `${where}.radius`), `${where}.radius`) };
  return {
    shape: 'box',
    width: positive(q(raw['width'], 'length', `${where}.width`), `${where}.width`),
    height: positive(q(raw['height'], 'length', `${where}.height`), `${where}.height`),
    angle: q(raw['angle'], 'angle', `${where}.angle`, 0),
  };
}

function parseMounting(raw: JsonObject): MountingSpec {
  for (const key of Object.keys(raw)) {
    if (!(MOUNT_VARIABLES as readonly string[]).includes(key)) throw new CellSettingsError(`cell.mounting.${key}: unknown (mount_x, mount_y, mount_angle)`);
  }
  const spec = (name: string, kind: QuantityKind): CellParameter => {
    const value = raw[name];
    const where = `cell.mounting.${name}`;
    if (value === undefined) return { kind: 'fixed', value: 0 };
    if (isObject(value)) {
      const min = q(value['min'], kind, `${where}.min`);
      const max = q(value['max'], kind, `${where}.max`);
      if (!(max > min)) throw new CellSettingsError(`${where}: max must be greater than min`);
      return { kind: 'variable', min, max };
    }
    return { kind: 'fixed', value: q(value, kind, where) };
  };
  return { mount_x: spec('mount_x', 'length'), mount_y: spec('mount_y', 'length'), mount_angle: spec('mount_angle', 'angle') };
}

/** Baseline value of a mounting variable (m or rad), checked against its bounds. */
export function mountBaseline(cell: CellSpec | null | undefined, name: string, value: Json): number | undefined {
  if (!(MOUNT_VARIABLES as readonly string[]).includes(name)) return undefined;
  const spec = cell?.mounting?.[name as (typeof MOUNT_VARIABLES)[number]];
  if (!spec || spec.kind !== 'variable') throw new CellSettingsError(`baseline.${name}: not a design variable in this study (give cell.mounting.${name} as {min, max})`);
  const v = q(value, name === 'mount_angle' ? 'angle' : 'length', `baseline.${name}`);
  if (v < spec.min - 1e-12 || v > spec.max + 1e-12) throw new CellSettingsError(`baseline.${name}: outside its bounds [${spec.min}, ${spec.max}] (SI)`);
  return v;
}
