/**
 * The area of a field's positive set inside one coarse cell from its boundary, for the cells the
 * boundary crosses simply (one arc in, one arc out: two corners-edges with a sign change, no saddle).
 *
 * - The two edge crossings are solved on the edges (the Illinois variant of regula falsi:
 *   M. Dowell and P. Jarratt 1971, "A modified regula falsi method for computing the root of an
 *   equation", BIT 11; from memory), so the polygon of the inside corners and the two crossings is
 *   exact up to the bulge of the boundary arc over its chord.
 * - The bulge is measured by one more root on the chord's perpendicular bisector (the arc's point
 *   there) and added as the area between the chord and the parabola through the three boundary points,
 *   two thirds of chord × sagitta (Archimedes' quadrature of the parabola). For a smooth arc the
 *   remainder falls with the fourth power of the cell size.
 * - The remainder is checked, not assumed: the field is sampled once on the parabola at a quarter of
 *   the chord; its value over the field's gradient there (bilinear from the corners) is the distance
 *   from the parabola to the boundary, and the area between them is taken as the cell's error
 *   estimate. Where two boundaries meet inside the cell (a kink) this estimate is large, and the
 *   caller refines such a cell instead.
 *
 * Crossings are cached per edge (SlotTable), so neighbouring cells share them. Every solved point is a
 * sample of the field through the caller's sampler (no allocation per point).
 */
import { SlotTable } from './slotTable.js';

/** Samples one point: writes the usability margin and the reach margin into out[0], out[1]. */
export type PointSampler = (x: number, y: number, out: Float64Array) => void;

/** Illinois steps per root at most, and the relative bracket width at which a root is taken as found. */
const MAX_STEPS = 12;
const ROOT_TOLERANCE = 1e-4;
/** Slots of the crossing cache (bits). */
const EDGE_BITS = 14;
/** Boundary points written per simple cell for the inscribed radius: the crossings and this many along the parabola between them. */
const POINTS_BETWEEN = 7;
/** The parabola's points are written only where the check sample puts the boundary within this share of the chord from it. */
const PARABOLA_FIT = 1e-3;

/** Per-cell results of BoundaryCells.cellArea. */
export class BoundaryCells {
  private sampler: PointSampler | null = null;
  private field = 0;
  private readonly out = new Float64Array(2);
  /** Crossings by edge key (see cellArea), valid for one begin: their points per slot. */
  private readonly edges = new SlotTable(EDGE_BITS);
  private readonly edgeX = new Float64Array(1 << EDGE_BITS);
  private readonly edgeY = new Float64Array(1 << EDGE_BITS);
  /** Samples taken since begin. */
  samples = 0;
  /** Error estimate of the last cellArea, m² (≥ 0). */
  cellError = 0;
  /** Boundary points of the simple cells since begin (x, y interleaved). */
  points = new Float64Array(2048);
  pointCount = 0;

  /** Starts a field (0: usability margin, 1: reach margin). */
  begin(sampler: PointSampler, field: number): void {
    this.sampler = sampler;
    this.field = field;
    this.samples = 0;
    this.pointCount = 0;
    this.edges.clear();
  }

  private sample(x: number, y: number): number {
    this.samples++;
    this.sampler!(x, y, this.out);
    return this.out[this.field]!;
  }

  /**
   * The crossing on the edge from (x0, y0) (value v0) along (dx, dy) to the next corner (value v1),
   * cached by `edge` (a key unique to the edge, or −1 for none); written to crossX, crossY.
   */
  private crossing(edge: number, x0: number, y0: number, dx: number, dy: number, v0: number, v1: number): void {
    const edges = this.edges;
    const found = edge < 0 ? -1 : edges.find(edge);
    if (found >= 0) {
      this.crossX = this.edgeX[found]!;
      this.crossY = this.edgeY[found]!;
      return;
    }
    const slot = edge < 0 ? -1 : edges.free;
    this.root(x0, y0, dx, dy, 0, v0, 1, v1);
    const t = this.rootT;
    this.crossX = x0 + t * dx;
    this.crossY = y0 + t * dy;
    if (slot < 0) return;
    edges.claim(edge);
    this.edgeX[slot] = this.crossX;
    this.edgeY[slot] = this.crossY;
  }

  private crossX = 0;
  /** The last root (written by root, not returned: a returned number would be boxed). */
  private rootT = 0;
  private crossY = 0;

  /**
   * Root in t (into rootT) of the field along (x0, y0) + t (dx, dy) between t0 (value f0) and t1
   * (value f1) of opposite signs, to ROOT_TOLERANCE of `span` (default the bracket's width).
   */
  private root(x0: number, y0: number, dx: number, dy: number, t0: number, f0: number, t1: number, f1: number, span = Math.abs(t1 - t0)): void {
    const tolerance = ROOT_TOLERANCE * span;
    let side = 0;
    let t = (t0 * f1 - t1 * f0) / (f1 - f0);
    let previous = Number.NaN;
    for (let step = 0; step < MAX_STEPS; step++) {
      if (step > 0) t = (t0 * f1 - t1 * f0) / (f1 - f0);
      if (Math.abs(t - previous) <= tolerance || Math.abs(t1 - t0) <= tolerance) break;
      previous = t;
      const f = this.sample(x0 + t * dx, y0 + t * dy);
      if (f >= 0 === f0 >= 0) {
        t0 = t;
        f0 = f;
        if (side === -1) f1 *= 0.5;
        side = -1;
      } else {
        t1 = t;
        f1 = f;
        if (side === 1) f0 *= 0.5;
        side = 1;
      }
      if (f === 0) break;
    }
    this.rootT = t;
  }

  /**
   * Area (m²) of the positive set in the square cell of side h with lower-left corner (x0, y0) and
   * corner values a = (x0, y0), b = (x0 + h, y0), c = (x0, y0 + h), d = (x0 + h, y0 + h), when the
   * boundary crosses it simply; NaN otherwise (a saddle, no or four crossings, or an arc whose
   * bisector root is not found within half a chord). Sets cellError. `edges` keys the cell's bottom,
   * right, top and left edges (keys[0 … 3], −1 for none) so that neighbours share their crossings.
   */
  cellArea(x0: number, y0: number, h: number, a: number, b: number, c: number, d: number, keys: Int32Array): number {
    const pa = a >= 0;
    const pb = b >= 0;
    const pc = c >= 0;
    const pd = d >= 0;
    // A saddle (diagonal corners alike, neighbours unlike) has four crossings: not simple.
    if (pa === pd && pb === pc && pa !== pb) return Number.NaN;
    // Walk the cell counter-clockwise: a → b → d → c, writing the inside corners and the crossings.
    const poly = this.poly;
    let n = 0;
    let crossings = 0;
    if (pa) { poly[n++] = x0; poly[n++] = y0; }
    if (pa !== pb) {
      this.crossing(keys[0]!, x0, y0, h, 0, a, b);
      poly[n++] = this.crossX; poly[n++] = this.crossY;
      this.recordCrossing(crossings++);
    }
    if (pb) { poly[n++] = x0 + h; poly[n++] = y0; }
    if (pb !== pd) {
      this.crossing(keys[1]!, x0 + h, y0, 0, h, b, d);
      poly[n++] = this.crossX; poly[n++] = this.crossY;
      this.recordCrossing(crossings++);
    }
    if (pd) { poly[n++] = x0 + h; poly[n++] = y0 + h; }
    if (pd !== pc) {
      this.crossing(keys[2]!, x0, y0 + h, h, 0, c, d);
      poly[n++] = this.crossX; poly[n++] = this.crossY;
      this.recordCrossing(crossings++);
    }
    if (pc) { poly[n++] = x0; poly[n++] = y0 + h; }
    if (pc !== pa) {
      this.crossing(keys[3]!, x0, y0, 0, h, a, c);
      poly[n++] = this.crossX; poly[n++] = this.crossY;
      this.recordCrossing(crossings++);
    }
    if (crossings !== 2) return Number.NaN;
    let area = 0;
    for (let p = 0; p < n; p += 2) {
      const q = (p + 2) % n;
      area += poly[p]! * poly[q + 1]! - poly[q]! * poly[p + 1]!;
    }
    area *= 0.5;
    const bulge = this.bulge(x0, y0, h, a, b, c, d);
    if (Number.isNaN(bulge)) return Number.NaN;
    return area + bulge;
  }

  private readonly poly = new Float64Array(16);
  private readonly ends = new Float64Array(4);

  private recordCrossing(index: number): void {
    if (index < 2) {
      this.ends[2 * index] = this.crossX;
      this.ends[2 * index + 1] = this.crossY;
    }
  }

  /**
   * Signed area between the chord of the two crossings and the parabola through them and the arc's
   * point on the chord's bisector (positive when the arc bulges away from the positive side); sets
   * cellError from one check sample on the parabola; NaN when the bisector root is not bracketed.
   */
  private bulge(x0: number, y0: number, h: number, a: number, b: number, c: number, d: number): number {
    const e = this.ends;
    const ax = e[0]!;
    const ay = e[1]!;
    const bx = e[2]!;
    const by = e[3]!;
    const cx = bx - ax;
    const cy = by - ay;
    const chord = Math.sqrt(cx * cx + cy * cy);
    if (!(chord > 0)) return Number.NaN;
    // Unit normal pointing to where the field falls (the bilinear gradient at the chord's middle).
    const mx = 0.5 * (ax + bx);
    const my = 0.5 * (ay + by);
    const u = (mx - x0) / h;
    const v = (my - y0) / h;
    const gx = ((b - a) * (1 - v) + (d - c) * v) / h;
    const gy = ((c - a) * (1 - u) + (d - b) * u) / h;
    let nx = -cy / chord;
    let ny = cx / chord;
    if (nx * gx + ny * gy > 0) { nx = -nx; ny = -ny; }
    const reach = 0.5 * chord;
    const fm = this.sample(mx, my);
    const far = fm >= 0 ? reach : -reach;
    // First guess: a Newton step from the chord's middle with the bilinear gradient (the field falls
    // along n); a bracket with the middle when it crosses, else with the far end, as the bisector's
    // root must lie within half a chord.
    const fall = -(nx * gx + ny * gy);
    const guess = fall > 0 ? Math.max(Math.min(fm / fall, reach), -reach) : far;
    const fg = this.sample(mx + guess * nx, my + guess * ny);
    const secant = fm !== fg ? (guess * fm) / (fm - fg) : far;
    if (Math.abs(secant - guess) <= ROOT_TOLERANCE * reach) {
      // The secant through both values moves the guess less than root()'s tolerance: taken, as root() would.
      this.rootT = secant;
    } else if (fm >= 0 !== fg >= 0) {
      this.root(mx, my, nx, ny, 0, fm, guess, fg, reach);
    } else {
      if (guess === far) return Number.NaN;
      const ff = this.sample(mx + far * nx, my + far * ny);
      if (fg >= 0 === ff >= 0) return Number.NaN;
      this.root(mx, my, nx, ny, guess, fg, far, ff, reach);
    }
    const s = this.rootT;
    // Check: the parabola at a quarter of the chord lies at 3/4 of the sagitta from it.
    const qx = ax + 0.25 * cx + 0.75 * s * nx;
    const qy = ay + 0.25 * cy + 0.75 * s * ny;
    const fq = this.sample(qx, qy);
    const slope = Math.sqrt(gx * gx + gy * gy);
    const offset = slope > 0 ? Math.abs(fq) / slope : reach;
    // Plus the crossings' own uncertainty (ROOT_TOLERANCE of an edge, along the chord).
    this.cellError = (2 / 3) * chord * Math.min(offset, reach) + ROOT_TOLERANCE * h * chord;
    this.writePoints(ax, ay, cx, cy, s, nx, ny, offset <= PARABOLA_FIT * chord ? POINTS_BETWEEN : 1);
    return (2 / 3) * chord * s;
  }

  /**
   * The crossings and `between` points of the parabola between them (odd: the middle one is the
   * arc's own point), for the inscribed radius. Where the check sample finds the parabola off the
   * boundary (a kink in the cell) only the arc's point is written between the crossings: a parabola
   * point inside the region would stop the inscribed circle short.
   */
  private writePoints(ax: number, ay: number, cx: number, cy: number, s: number, nx: number, ny: number, between: number): void {
    const need = 2 * (this.pointCount + between + 2);
    if (need > this.points.length) {
      const grown = new Float64Array(Math.max(2 * this.points.length, need));
      grown.set(this.points);
      this.points = grown;
    }
    const p = this.points;
    let w = 2 * this.pointCount;
    for (let k = 0; k <= between + 1; k++) {
      const t = k / (between + 1);
      const off = 4 * t * (1 - t) * s;
      p[w++] = ax + t * cx + off * nx;
      p[w++] = ay + t * cy + off * ny;
    }
    this.pointCount = w >> 1;
  }
}
