/**
 * Interference and keep-out checks of one solved pose, any leg-based architecture (every one in the
 * registry): the links of the pose as thick segments, checked against the keep-out zones, against
 * the other legs' links, against the drive housings at the pivots, plus the gap between two slider
 * carriages on one rail and the included angles at the passive joints.
 *
 * Links of leg i at a pose (see src/architectures/legged.ts for the points):
 * - crank + rod: crank A_i → C_i (width of the crank), rod C_i → B_i (width of the rod);
 * - slider + rod: rod S_i → B_i; strut: A_i → B_i (housing and tube as one bar, width of the rod);
 * - 3-DOF: the platform's edges B_i → B_j (width 0).
 * Pairs that share a joint are not checked against each other (the two rods of a 2-DOF arm meet at
 * P; a rod and the platform edges at its own pin; the links of one leg). Clearance of two thick
 * segments = signed centre-line distance − (w_a + w_b)/2; against a zone = signed distance − w/2.
 *
 * `min_clearance` (m) is the smallest clearance over every check minus the study's allowance;
 * negative means a collision. `passive_joint_margin` (rad) is the smallest included angle at a
 * passive joint minus the study's limit. Allocation-free per pose.
 */
import type { LeggedModel } from '../architectures/legged.js';
import type { ArchitecturePose } from '../architectures/types.js';
import {
  convexPolygonClearance,
  pointSegmentDistance,
  rectanglePolygon,
  segmentPolygonClearance,
  signedPointPolygonDistance,
  signedSegmentDistance,
} from './geometry.js';
import type { CellShape, CellSpec, Housing, Mount } from './types.js';

/** Segment kinds in the pose's link list. */
const CRANK = 0;
const ROD = 1;
const EDGE = 2;

/** A zone as the checks use it: a polygon, or a circle (cx, cy, r); with its bounding box, m. */
interface Zone {
  readonly polygon: Float64Array | null;
  readonly cx: number;
  readonly cy: number;
  readonly r: number;
  readonly xmin: number;
  readonly xmax: number;
  readonly ymin: number;
  readonly ymax: number;
}

function circleZone(cx: number, cy: number, r: number): Zone {
  return { polygon: null, cx, cy, r, xmin: cx - r, xmax: cx + r, ymin: cy - r, ymax: cy + r };
}

function polygonZone(polygon: Float64Array): Zone {
  let xmin = Infinity, xmax = -Infinity, ymin = Infinity, ymax = -Infinity;
  for (let k = 0; k < polygon.length; k += 2) {
    xmin = Math.min(xmin, polygon[k]!); xmax = Math.max(xmax, polygon[k]!);
    ymin = Math.min(ymin, polygon[k + 1]!); ymax = Math.max(ymax, polygon[k + 1]!);
  }
  return { polygon, cx: 0, cy: 0, r: 0, xmin, xmax, ymin, ymax };
}

function zoneOf(shape: CellShape): Zone {
  if (shape.shape === 'circle') return circleZone(shape.centreX, shape.centreY, shape.radius);
  if (shape.shape === 'rectangle') return polygonZone(rectanglePolygon(shape.centreX, shape.centreY, shape.width, shape.height, shape.angle));
  return polygonZone(Float64Array.from(shape.vertices));
}

/** Lower bound of the distance between the segment AB and the zone: the gap between their bounding boxes, m. */
function boxGap(ax: number, ay: number, bx: number, by: number, z: Zone): number {
  const gx = Math.max(0, z.xmin - Math.max(ax, bx), Math.min(ax, bx) - z.xmax);
  const gy = Math.max(0, z.ymin - Math.max(ay, by), Math.min(ay, by) - z.ymax);
  return Math.sqrt(gx * gx + gy * gy);
}

/** Included angle between two directions, rad in [0, π]. */
function includedAngle(ux: number, uy: number, vx: number, vy: number): number {
  return Math.atan2(Math.abs(ux * vy - uy * vx), ux * vx + uy * vy);
}

/** Clearance of a thick segment from a zone, m. */
function segmentZoneClearance(ax: number, ay: number, bx: number, by: number, w: number, z: Zone): number {
  if (z.polygon) return segmentPolygonClearance(ax, ay, bx, by, z.polygon) - w / 2;
  return pointSegmentDistance(z.cx, z.cy, ax, ay, bx, by) - z.r - w / 2;
}

/** Clearance between two zones, m (each a circle or a polygon; polygons taken as convex: housings are). */
function zoneZoneClearance(a: Zone, b: Zone): number {
  if (!a.polygon && !b.polygon) return Math.hypot(a.cx - b.cx, a.cy - b.cy) - a.r - b.r;
  if (!a.polygon) return signedPointPolygonDistance(a.cx, a.cy, b.polygon!) - a.r;
  if (!b.polygon) return signedPointPolygonDistance(b.cx, b.cy, a.polygon) - b.r;
  return convexPolygonClearance(a.polygon, b.polygon);
}

/** Which check set the smallest clearance (for messages and tests). */
export type ClearanceSource = 'none' | 'keep-out' | 'links' | 'housing' | 'slider-gap';

/** The checks of one study, prepared once per design (`prepare`), run per pose (`clearance`). */
export class CellChecker {
  readonly spec: CellSpec;
  private readonly keepOuts: readonly Zone[];
  private readonly n: number;
  /** Segments of the pose: ax, ay, bx, by, width, leg, kind, other (platform edge: the second pin's leg). */
  private readonly seg: Float64Array;
  private segCount = 0;
  private housings: (Zone | null)[] = [];
  /** Clearance of the fixed parts (housings against each other and against keep-outs), m. */
  private staticClearance = Infinity;
  private staticSource: ClearanceSource = 'none';
  /** Pairs of sliders on one rail (leg indices), and the rail direction of the first. */
  private sliderPairs: number[] = [];
  private model: LeggedModel | null = null;
  /** Which check gave the last `clearance` result. */
  source: ClearanceSource = 'none';

  constructor(spec: CellSpec, legs: number) {
    this.spec = spec;
    this.n = legs;
    this.keepOuts = spec.keepOuts.map(zoneOf);
    this.seg = new Float64Array(8 * (2 * legs + 3));
  }

  /** Fixed parts of a design: housings placed at the (mounted) pivots, slider pairs on a common rail. */
  prepare(model: LeggedModel, mount?: Mount): void {
    this.model = model;
    const inter = this.spec.interference;
    const turn = mount?.angle ?? 0;
    this.housings = model.legs.map((leg, i) => {
      const h: Housing | null | undefined = inter?.housings[i];
      if (!h || leg.name === 'slider-rod') return null;
      const x = model.baseX[i]!;
      const y = model.baseY[i]!;
      return h.shape === 'circle' ? circleZone(x, y, h.radius) : polygonZone(rectanglePolygon(x, y, h.width, h.height, h.angle + turn));
    });
    this.staticClearance = Infinity;
    this.staticSource = 'none';
    const note = (value: number, source: ClearanceSource): void => {
      if (value < this.staticClearance) { this.staticClearance = value; this.staticSource = source; }
    };
    this.housings.forEach((a, i) => {
      if (!a) return;
      for (let j = i + 1; j < this.n; j++) { const b = this.housings[j]; if (b) note(zoneZoneClearance(a, b), 'housing'); }
      for (const k of this.keepOuts) note(zoneZoneClearance(a, k), 'keep-out');
    });
    this.sliderPairs = [];
    if (inter?.sliderLength !== null && inter?.sliderLength !== undefined) {
      for (let i = 0; i < this.n; i++) {
        for (let j = i + 1; j < this.n; j++) {
          if (model.legs[i]!.name !== 'slider-rod' || model.legs[j]!.name !== 'slider-rod') continue;
          const ex = model.railX[i]!;
          const ey = model.railY[i]!;
          const parallel = Math.abs(ex * model.railY[j]! - ey * model.railX[j]!) < 1e-9;
          const offset = ex * (model.baseY[j]! - model.baseY[i]!) - ey * (model.baseX[j]! - model.baseX[i]!);
          if (parallel && Math.abs(offset) < 1e-9) this.sliderPairs.push(i, j);
        }
      }
    }
  }

  /** Gap between the carriages of sliders i and j on one rail at the pose, m (negative: they overlap). */
  sliderGap(pose: ArchitecturePose, i: number, j: number): number {
    const m = this.model!;
    const along = (pose.proximalJoint[2 * j]! - pose.proximalJoint[2 * i]!) * m.railX[i]! + (pose.proximalJoint[2 * j + 1]! - pose.proximalJoint[2 * i + 1]!) * m.railY[i]!;
    return Math.abs(along) - (this.spec.interference?.sliderLength ?? 0);
  }

  private push(c: number, ax: number, ay: number, bx: number, by: number, w: number, leg: number, kind: number, other: number): number {
    const seg = this.seg;
    const o = 8 * c;
    seg[o] = ax; seg[o + 1] = ay; seg[o + 2] = bx; seg[o + 3] = by; seg[o + 4] = w; seg[o + 5] = leg; seg[o + 6] = kind; seg[o + 7] = other;
    return c + 1;
  }

  private collectSegments(pose: ArchitecturePose): void {
    const m = this.model!;
    const inter = this.spec.interference;
    let c = 0;
    for (let i = 0; i < this.n; i++) {
      const px = pose.proximalJoint[2 * i]!;
      const py = pose.proximalJoint[2 * i + 1]!;
      const dx = pose.distalJoint[2 * i]!;
      const dy = pose.distalJoint[2 * i + 1]!;
      const rodWidth = inter?.rodWidth[i] ?? 0;
      const kind = m.legs[i]!.name;
      if (kind === 'crank-rod') c = this.push(c, m.baseX[i]!, m.baseY[i]!, px, py, inter?.crankWidth[i] ?? 0, i, CRANK, -1);
      if (kind === 'strut') c = this.push(c, m.baseX[i]!, m.baseY[i]!, dx, dy, rodWidth, i, ROD, -1);
      else c = this.push(c, px, py, dx, dy, rodWidth, i, ROD, -1);
    }
    if (m.dof === 3) {
      for (let i = 0; i < this.n; i++) {
        const j = (i + 1) % this.n;
        c = this.push(c, pose.distalJoint[2 * i]!, pose.distalJoint[2 * i + 1]!, pose.distalJoint[2 * j]!, pose.distalJoint[2 * j + 1]!, 0, i, EDGE, j);
      }
    }
    this.segCount = c;
  }

  /** Whether segments a and b share a joint (never checked against each other). */
  private shareJoint(a: number, b: number): boolean {
    const seg = this.seg;
    const legA = seg[8 * a + 5]!, kindA = seg[8 * a + 6]!, otherA = seg[8 * a + 7]!;
    const legB = seg[8 * b + 5]!, kindB = seg[8 * b + 6]!, otherB = seg[8 * b + 7]!;
    if (kindA === EDGE && kindB === EDGE) return true;
    if (kindA === EDGE) return legB === legA || legB === otherA;
    if (kindB === EDGE) return legA === legB || legA === otherB;
    if (legA === legB) return true;
    // The rods of a 2-DOF arm meet at the end point.
    return this.model!.dof === 2 && kindA === ROD && kindB === ROD;
  }

  /** Smallest clearance of the solved pose over every declared check, minus the allowance, m. */
  clearance(pose: ArchitecturePose): number {
    this.collectSegments(pose);
    const seg = this.seg;
    const count = this.segCount;
    let best = this.staticClearance;
    let source = this.staticSource;
    for (let a = 0; a < count; a++) {
      const o = 8 * a;
      const ax = seg[o]!, ay = seg[o + 1]!, bx = seg[o + 2]!, by = seg[o + 3]!, w = seg[o + 4]!;
      // A zone whose bounding box is apart from the segment's by more than the best clearance so far
      // cannot lower it (apart boxes: the distance is at least their gap; touching boxes are always checked).
      for (let k = 0; k < this.keepOuts.length; k++) {
        const z = this.keepOuts[k]!;
        const gap = boxGap(ax, ay, bx, by, z);
        if (gap > 0 && gap - w / 2 >= best) continue;
        const v = segmentZoneClearance(ax, ay, bx, by, w, z);
        if (v < best) { best = v; source = 'keep-out'; }
      }
      for (let i = 0; i < this.housings.length; i++) {
        const hz = this.housings[i];
        // A crank or strut is carried by its own housing.
        if (!hz || (seg[o + 5] === i && (seg[o + 6] === CRANK || this.model!.legs[i]!.name === 'strut'))) continue;
        const gap = boxGap(ax, ay, bx, by, hz);
        if (gap > 0 && gap - w / 2 >= best) continue;
        const v = segmentZoneClearance(ax, ay, bx, by, w, hz);
        if (v < best) { best = v; source = 'housing'; }
      }
      if (!this.spec.interference?.links) continue;
      for (let b = a + 1; b < count; b++) {
        if (this.shareJoint(a, b)) continue;
        const p = 8 * b;
        const v = signedSegmentDistance(ax, ay, bx, by, seg[p]!, seg[p + 1]!, seg[p + 2]!, seg[p + 3]!) - 0.5 * (w + seg[p + 4]!);
        if (v < best) { best = v; source = 'links'; }
      }
    }
    for (let k = 0; k < this.sliderPairs.length; k += 2) {
      const v = this.sliderGap(pose, this.sliderPairs[k]!, this.sliderPairs[k + 1]!);
      if (v < best) { best = v; source = 'slider-gap'; }
    }
    this.source = source;
    return best - this.spec.allowance;
  }

  /**
   * Smallest included angle at a passive joint minus the limit, rad (+∞ without a limit): the elbow
   * of a crank leg (between C→A and C→B), a slider's pin (between the rod and its rail line), the
   * end point of a 2-DOF arm (between the two rods) and the platform pins (between B→proximal and B→P).
   */
  passiveMargin(pose: ArchitecturePose): number {
    const limit = this.spec.interference?.passiveMinAngle;
    if (limit === null || limit === undefined) return Infinity;
    const m = this.model!;
    let worst = Infinity;
    const angle = includedAngle;
    for (let i = 0; i < this.n; i++) {
      const ux = pose.rodDirection[2 * i]!;
      const uy = pose.rodDirection[2 * i + 1]!;
      const kind = m.legs[i]!.name;
      if (kind === 'crank-rod') worst = Math.min(worst, angle(-pose.actuatorDirection[2 * i]!, -pose.actuatorDirection[2 * i + 1]!, ux, uy));
      else if (kind === 'slider-rod') { const a = angle(m.railX[i]!, m.railY[i]!, ux, uy); worst = Math.min(worst, a, Math.PI - a); }
      if (m.dof === 3) {
        const rx = pose.x - pose.distalJoint[2 * i]!;
        const ry = pose.y - pose.distalJoint[2 * i + 1]!;
        if (rx !== 0 || ry !== 0) worst = Math.min(worst, angle(-ux, -uy, rx, ry));
      }
    }
    if (m.dof === 2) worst = Math.min(worst, angle(pose.rodDirection[0]!, pose.rodDirection[1]!, pose.rodDirection[2]!, pose.rodDirection[3]!));
    return worst - limit;
  }
}
