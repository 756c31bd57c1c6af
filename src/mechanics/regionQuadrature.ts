/**
 * Area integrals over a region given by a level function on a lattice of nodes, refined where the
 * integrand or the boundary is not resolved. Knows nothing about mechanisms: a `LevelField` answers
 * for one point of the parameter plane (its level margin, ≥ 0 inside; the integrand there).
 *
 * Rule on one cell (as the workspace area does): two triangles split along the (0,0)–(1,1) diagonal;
 * in each, the level margin and the integrand are linear between the vertices, so the inside part is
 * a triangle or a quadrilateral cut at the margin's zero crossings on the edges, and the integral of
 * the linear integrand over it is exact (fan of triangles, area × mean of the vertex values). A
 * crossing between two points where the margin is continuous is interpolated; where one end is
 * outside the reach of the mechanism (the margin there is only a code), it is found by bisection
 * along the edge with the field itself.
 *
 * A split field (`LevelField.split`) bounds its inside part by two margins: the first known
 * everywhere (a mechanism's reach), the second only where the first is ≥ 0 (joint ranges, assembly
 * sign: nothing to measure where a leg does not reach). Each triangle is cut by the first margin,
 * then by the second, linear between the vertices of that polygon. Where the inside end of an edge
 * fails the second margin, the field is solved at the first margin's crossing (its second margin and
 * integrand there, not the outside end's code), and the second margin's zero next to it by regula
 * falsi. So a thin part between the two
 * boundaries is seen on the edges it crosses, even with no inside corner, and cells whose first
 * margin changes sign are tested as well as those with an inside corner. Where the integrand falls as
 * the square root of the first margin (`rootEdge`: a mechanism's leg at the end of its reach), it is
 * taken as the square root of a linear function on the triangles near that edge (rootIntegral).
 * Where it does not (`legs`: struts, whose reach ends at a stroke), each leg's reach margin is carried
 * apart and a triangle with a point out of reach is cut by each in turn (legClip), with the inside
 * end's integrand at each crossing.
 *
 * Adaptivity (classical local refinement): a candidate cell's rule is compared with the sum of its
 * four children's rules (five new points); when the difference exceeds the cell's share of the
 * error budget the children are refined in turn, each with a quarter of the share. The accepted
 * value is the finer sum; half the differences, summed, is the error estimate (Richardson: the finer
 * sum's error is the difference over 2^p − 1 for a rule of order p; p = 2 for smooth cells, about
 * 1.5 at the square-root edges of singular boundaries).
 */
import { SlotTable } from './slotTable.js';

/** One point of the parameter plane, answered by the caller. */
export interface LevelField {
  /**
   * Solves the point (u, v) and returns its level margin (≥ 0 inside). Writes the integrand into
   * out[0] (finite wherever the margin is continuous) and into out[1] 1 when the margin is a
   * continuous function at this point, 0 when it is only a code (nothing reachable there).
   */
  sample(u: number, v: number, out: Float64Array): number;
  /**
   * A split field: the inside part is {margin ≥ 0} ∩ {second ≥ 0}, with the margin continuous
   * everywhere and `sample` writing the second margin into out[2] (NaN where the margin is < 0).
   */
  readonly split?: boolean;
  /**
   * A split field whose integrand falls to 0 as the square root of the first margin at its zero (a
   * leg at the end of its reach is singular: 1/κ ∝ its transmission sine ∝ √margin): near that edge
   * its triangles take rootIntegral's rule.
   */
  readonly rootEdge?: boolean;
  /**
   * A split field whose first margin is the smallest of `legs` margins (≤ MAX_LEGS; one per leg of
   * a mechanism, each smooth where their minimum has a kink), written by `sample` into out[3 …]: a
   * triangle with a point out of reach is cut by each of them in turn (legClip), so a corner of the
   * inside part between two legs' reach boundaries is kept, not cut off by the chord of their minimum.
   * Not with `rootEdge`.
   */
  readonly legs?: number;
}

/** Values at the nodes of a lattice: stride 3 per node (margin, integrand, continuous flag). */
export interface NodeLattice {
  readonly nu: number;
  readonly nv: number;
  readonly u0: number;
  readonly v0: number;
  readonly hu: number;
  readonly hv: number;
  /** (margin, integrand, continuous) per node, row-major (index = j * nu + i). */
  readonly values: Float64Array;
  /** Per node: 0 when a cell at this node must not be refined (another region's node), else 1. */
  readonly refinable: Uint8Array;
  /** Split fields: the second margin per node (NaN where the margin is < 0). */
  readonly second?: Float64Array;
  /** Fields with `legs`: the legs' margins per node (`legs` per node, row-major). */
  readonly legMargins?: Float64Array;
}

export interface RegionIntegral {
  /** ∫ f over the inside part. */
  integral: number;
  /** Area of the inside part (parameter plane units²). */
  area: number;
  /** Estimated absolute errors of both. */
  integralError: number;
  areaError: number;
  /** Points the refinement solved. */
  samples: number;
}

/** Slots of the point cache (bits). */
const CACHE_BITS = 16;
/** Bisection steps along an edge whose outer end is outside the reach (the crossing to 1/2⁸ of the edge). */
const BISECTION_STEPS = 8;
/** Solves per crossing of a split field's first margin (regula falsi towards a point with margin ≥ 0). */
const CROSSING_SOLVES = 3;
/** Solves per crossing of the second margin next to a solved crossing of the first (regula falsi). */
const SECOND_SOLVES = 2;
/** After a crossing solve that lands outside, the next one aims this fraction (of the distance from the inside end) short of the secant's root. */
const CROSSING_PULLBACK = 2 ** -BISECTION_STEPS;
/** Relative spread of squared values below which rootIntegral takes the edge-midpoint rule. */
const ROOT_SPREAD = 1e-4;
/** Per lattice node (NodeLattice.values): margin, integrand, continuous flag. */
const NODE_STRIDE = 3;
/** Most legs whose margins a field carries apart (LevelField.legs). */
export const MAX_LEGS = 3;
/** Per point: margin, integrand, continuous flag, second margin (+∞ for a field that is not split), the legs' margins. */
const STRIDE = 4 + MAX_LEGS;
/** Per vertex of legClip's polygons: u, v, integrand, second margin, the legs' margins, origin (LEG_*). */
const LEG_VERTEX = 5 + MAX_LEGS;
/** legClip vertex origins: a triangle's vertex (reached), a crossing with the inside end's values, a crossing with none yet. */
const LEG_CORNER = 2;
const LEG_INHERITED = 1;
const LEG_UNKNOWN = 0;
/** Most vertices of a polygon: a triangle cut by MAX_LEGS lines and by the second margin. */
const POLY_VERTICES = 4 + MAX_LEGS;
/** Per depth: 3 × 3 points. */
const LEVEL = 9 * STRIDE;
/** Slots of the corners of a 3 × 3 block. */
const CORNER_SLOTS = [0, 2, 6, 8] as const;
/** A queued cell: u, v, hu, hv, rule (2), error (2), children's rules (8), its 3 × 3 block. */
const RECORD = 16 + LEVEL;

export class RegionQuadrature {
  readonly maxDepth: number;
  private readonly levels: Float64Array;
  private readonly out = new Float64Array(3 + MAX_LEGS);
  private readonly childI: Float64Array;
  private readonly childA: Float64Array;
  /** Polygon scratch: up to POLY_VERTICES vertices (u, v, f, second margin), and the second clip's output. */
  private readonly poly = new Float64Array(4 * POLY_VERTICES);
  private readonly clipped = new Float64Array(4 * POLY_VERTICES);
  /** legClip's polygons (LEG_VERTEX per vertex), before and after each cut. */
  private readonly legPoly = new Float64Array(LEG_VERTEX * POLY_VERTICES);
  private readonly legCut = new Float64Array(LEG_VERTEX * POLY_VERTICES);
  /** Per polygon vertex: 1 when it is a solved crossing of the first margin (the second margin is steep there). */
  private readonly solvedVertex = new Uint8Array(POLY_VERTICES);
  private readonly clippedSolved = new Uint8Array(POLY_VERTICES);
  private field: LevelField | null = null;
  private splitField = false;
  private rootEdge = false;
  private second: Float64Array | null = null;
  /** Legs whose margins the field carries apart (0: none), and their node values. */
  private legs = 0;
  private legMargins: Float64Array | null = null;
  /** Values in use per point (STRIDE places each): margin, integrand, continuous flag, second margin, then `legs` leg margins. */
  private width = 4;
  private ruleIntegral = 0;
  private ruleArea = 0;
  private samples = 0;
  private sampleCap = 0;
  private integralError = 0;
  private areaError = 0;
  private integralSum = 0;
  private areaSum = 0;
  private cellMarks = new Uint8Array(0);
  private cellRuleI = new Float64Array(0);
  private cellRuleA = new Float64Array(0);
  private order = new Int32Array(0);
  private key = new Float64Array(0);
  /** Cells waiting for refinement on this level and the next (RECORD floats each). */
  private queue = new Float64Array(0);
  private nextQueue = new Float64Array(0);

  constructor(maxDepth = 6) {
    this.maxDepth = maxDepth;
    this.levels = new Float64Array(2 * LEVEL);
    this.childI = new Float64Array(4);
    this.childA = new Float64Array(4);
  }

  /**
   * Integral of the field's integrand over {margin ≥ 0} on the lattice's cells, refined to a
   * relative tolerance (of the integral and of the area). `candidates`: 'all' tests every cell with
   * an inside corner (smooth integrands on a fixed domain); 'boundary' tests cells cut by the
   * boundary and their neighbours, and estimates the other cells' error from the lattice itself.
   * `sampleCap`: most points the refinement may solve.
   */
  integrate(lattice: NodeLattice, field: LevelField, tolerance: number, candidates: 'all' | 'boundary', sampleCap: number): RegionIntegral {
    this.field = field;
    this.splitField = field.split === true;
    this.rootEdge = this.splitField && field.rootEdge === true;
    this.second = this.splitField ? lattice.second! : null;
    this.legs = this.splitField && !this.rootEdge ? Math.min(field.legs ?? 0, MAX_LEGS) : 0;
    this.legMargins = this.legs > 0 ? lattice.legMargins! : null;
    this.width = 4 + this.legs;
    this.samples = 0;
    this.beginCache(lattice);
    this.sampleCap = sampleCap;
    this.integralError = 0;
    this.areaError = 0;
    const cells = (lattice.nu - 1) * (lattice.nv - 1);
    if (this.cellMarks.length < cells) {
      this.cellMarks = new Uint8Array(cells);
      this.cellRuleI = new Float64Array(cells);
      this.cellRuleA = new Float64Array(cells);
    }
    this.markCells(lattice, candidates);
    let integral = 0;
    let area = 0;
    const { nu, nv } = lattice;
    for (let j = 0; j + 1 < nv; j++) {
      for (let i = 0; i + 1 < nu; i++) {
        const c = j * (nu - 1) + i;
        if (this.cellMarks[c] === 0) continue;
        this.loadCorners(lattice, i, j, 0);
        this.cellRule(lattice.u0 + i * lattice.hu, lattice.v0 + j * lattice.hv, lattice.hu, lattice.hv, 0, 2);
        this.cellRuleI[c] = this.ruleIntegral;
        this.cellRuleA[c] = this.ruleArea;
        integral += this.ruleIntegral;
        area += this.ruleArea;
      }
    }
    // The interior's estimate may use a share of the tolerance by area; steeper blocks are refined.
    const cellShare = (lattice.hu * lattice.hv) / Math.max(area, 1e-300);
    if (candidates === 'boundary') this.interiorErrorEstimate(lattice, 0.5 * tolerance * Math.abs(integral) * cellShare);
    this.integralSum = integral;
    this.areaSum = area;
    this.refineLevels(lattice, Math.max(tolerance * Math.abs(integral), 1e-300), Math.max(tolerance * area, 1e-300));
    return { integral: this.integralSum, area: this.areaSum, integralError: this.integralError, areaError: this.areaError, samples: this.samples };
  }

  /** Marks: 0 nothing inside, 1 counted by its rule only, 2 also tested by refinement. Returns the tested count. */
  private markCells(lattice: NodeLattice, candidates: 'all' | 'boundary'): number {
    const { nu, nv, refinable } = lattice;
    const marks = this.cellMarks;
    const cu = nu - 1;
    marks.fill(0, 0, cu * (nv - 1));
    for (let j = 0; j + 1 < nv; j++) {
      for (let i = 0; i + 1 < nu; i++) {
        const k = j * nu + i;
        let inside = 0;
        let reached = 0;
        for (let c = 0; c < 4; c++) {
          const node = k + (c & 1) + (c >> 1) * nu;
          if (this.nodeInside(lattice, node)) inside++;
          if (lattice.values[node * NODE_STRIDE]! >= 0) reached++;
        }
        // A split field's cell whose first margin changes sign may hold a part between both boundaries;
        // with the legs apart, a cell out of reach at every corner may hold a corner between two legs'.
        if (inside === 0 && !(this.splitField && reached > 0 && reached < 4) && !(reached === 0 && this.legs > 0 && this.legsMeetAtNodes(k, nu))) continue;
        marks[j * cu + i] = candidates === 'all' || inside < 4 ? 3 : 1;
      }
    }
    // Cut cells are 3; a cell next to a cut cell (8-neighbourhood) is tested too when the boundary rule is asked for.
    let count = 0;
    for (let j = 0; j + 1 < nv; j++) {
      for (let i = 0; i + 1 < nu; i++) {
        const c = j * cu + i;
        if (marks[c] === 0) continue;
        let near = marks[c] === 3 || marks[c] === 5;
        if (near) marks[c] = 5;
        for (let dj = -1; dj <= 1 && !near; dj++) {
          for (let di = -1; di <= 1; di++) {
            const ii = i + di;
            const jj = j + dj;
            if (ii >= 0 && jj >= 0 && ii < cu && jj + 1 < nv && (marks[jj * cu + ii] === 3 || marks[jj * cu + ii] === 5)) { near = true; break; }
          }
        }
        const k = j * nu + i;
        const canRefine = refinable[k]! && refinable[k + 1]! && refinable[k + nu]! && refinable[k + nu + 1]!;
        if (marks[c] === 5) {
          if (!canRefine) marks[c] = 6;
        } else {
          marks[c] = near && canRefine ? 4 : 1;
        }
      }
    }
    for (let c = 0; c < cu * (nv - 1); c++) {
      const m = marks[c]!;
      if (m === 4 || m === 5) { marks[c] = 2; count++; }
      else if (m === 6) marks[c] = 1;
    }
    return count;
  }

  /**
   * Whether every leg reaches at some corner of the lattice cell with lower left node k: else one leg
   * fails at all four, and (its margin being about linear) over the whole cell.
   */
  private legsMeetAtNodes(k: number, nu: number): boolean {
    const legMargins = this.legMargins!;
    const legs = this.legs;
    for (let leg = 0; leg < legs; leg++) {
      if (!(legMargins[k * legs + leg]! >= 0 || legMargins[(k + 1) * legs + leg]! >= 0 || legMargins[(k + nu) * legs + leg]! >= 0 || legMargins[(k + nu + 1) * legs + leg]! >= 0)) return false;
    }
    return true;
  }

  /** legsMeetAtNodes for a cell whose corners are at these block offsets. */
  private legsMeet(p1: number, p2: number, p3: number, p4: number): boolean {
    const L = this.levels;
    const legs = this.legs;
    for (let leg = 4; leg < 4 + legs; leg++) {
      if (!(L[p1 + leg]! >= 0 || L[p2 + leg]! >= 0 || L[p3 + leg]! >= 0 || L[p4 + leg]! >= 0)) return false;
    }
    return true;
  }

  /** Whether a lattice node is inside (both margins of a split field ≥ 0). */
  private nodeInside(lattice: NodeLattice, node: number): boolean {
    return lattice.values[node * NODE_STRIDE]! >= 0 && (this.second === null || this.second[node]! >= 0);
  }

  /**
   * Error of the cells that are not tested: for 2 × 2 blocks of inside cells, the difference between
   * the rule on the block and on its four cells, divided by 3 (Richardson, O(h²) rule). A block whose
   * estimate exceeds its cells' share of the budget is marked for testing instead.
   */
  private interiorErrorEstimate(lattice: NodeLattice, cellBudget: number): void {
    const { nu, nv, values } = lattice;
    const cu = nu - 1;
    const area = lattice.hu * lattice.hv;
    for (let j = 0; j + 2 < nv; j += 2) {
      for (let i = 0; i + 2 < nu; i += 2) {
        let ok = true;
        for (let dj = 0; dj < 2 && ok; dj++) for (let di = 0; di < 2; di++) if (this.cellMarks[(j + dj) * cu + i + di] !== 1) { ok = false; break; }
        if (!ok) continue;
        let fine = 0;
        for (let dj = 0; dj <= 2; dj++) {
          for (let di = 0; di <= 2; di++) {
            const w = (di === 1 ? 2 : 1) * (dj === 1 ? 2 : 1);
            fine += w * values[((j + dj) * nu + i + di) * NODE_STRIDE + 1]!;
          }
        }
        fine *= area / 4;
        const f = (di: number, dj: number): number => values[((j + dj) * nu + i + di) * NODE_STRIDE + 1]!;
        const coarse = area * (f(0, 0) + f(2, 0) + f(0, 2) + f(2, 2));
        const estimate = Math.abs(fine - coarse) / 3;
        if (estimate > 4 * cellBudget) continue;
        this.integralError += estimate;
        for (let dj = 0; dj < 2; dj++) for (let di = 0; di < 2; di++) this.cellMarks[(j + dj) * cu + i + di] = 8;
      }
    }
    // Inside cells of steep blocks, and those in no whole block, are tested like boundary cells, each
    // with its area's budget (mark 7); estimated ones go back to 1.
    for (let c = 0; c < cu * (nv - 1); c++) {
      if (this.cellMarks[c] === 1) this.cellMarks[c] = 7;
      else if (this.cellMarks[c] === 8) this.cellMarks[c] = 1;
    }
  }

  /** Copies the lattice node values of cell (i, j) into the corners of depth `d`'s 3 × 3 block. */
  private loadCorners(lattice: NodeLattice, i: number, j: number, d: number): void {
    const { nu, values } = lattice;
    const base = d * LEVEL;
    const put = (slot: number, node: number): void => {
      this.levels[base + slot * STRIDE] = values[node * NODE_STRIDE]!;
      this.levels[base + slot * STRIDE + 1] = values[node * NODE_STRIDE + 1]!;
      this.levels[base + slot * STRIDE + 2] = values[node * NODE_STRIDE + 2]!;
      this.levels[base + slot * STRIDE + 3] = this.second === null ? Infinity : this.second[node]!;
      for (let leg = 0; leg < this.legs; leg++) this.levels[base + slot * STRIDE + 4 + leg] = this.legMargins![node * this.legs + leg]!;
    };
    const k = j * nu + i;
    put(0, k);
    put(2, k + 1);
    put(6, k + nu);
    put(8, k + nu + 1);
  }

  /**
   * The field at (u, v) into levels[offset …]: from the cache when a neighbouring cell has solved this
   * point of the finest lattice already (an edge midpoint is shared by two cells), else solved.
   */
  private sampleInto(u: number, v: number, offset: number): void {
    if (!this.cacheOn) {
      this.solveInto(u, v, offset);
      return;
    }
    const fi = Math.round((u - this.cacheU0) / this.cacheHu);
    const fj = Math.round((v - this.cacheV0) / this.cacheHv);
    const key = fj * this.cacheWidth + fi;
    const cache = this.cache;
    const found = cache.find(key);
    if (found >= 0) {
      for (let k = 0; k < this.width; k++) this.levels[offset + k] = this.cacheValue[STRIDE * found + k]!;
      return;
    }
    const slot = cache.free;
    this.solveInto(u, v, offset);
    if (slot < 0) return;
    cache.claim(key);
    for (let k = 0; k < this.width; k++) this.cacheValue[STRIDE * slot + k] = this.levels[offset + k]!;
  }

  private solveInto(u: number, v: number, offset: number): void {
    const m = this.field!.sample(u, v, this.out);
    this.samples++;
    this.levels[offset] = m;
    this.levels[offset + 1] = this.out[0]!;
    this.levels[offset + 2] = this.out[1]!;
    this.levels[offset + 3] = this.splitField ? this.out[2]! : Infinity;
    for (let leg = 0; leg < this.legs; leg++) this.levels[offset + 4 + leg] = this.out[3 + leg]!;
  }

  /** Solved points by their place on the finest lattice, valid for one integrate call: STRIDE values per slot. */
  private readonly cache = new SlotTable(CACHE_BITS);
  private readonly cacheValue = new Float64Array(STRIDE << CACHE_BITS);
  private cacheU0 = 0;
  private cacheV0 = 0;
  private cacheHu = 1;
  private cacheHv = 1;
  private cacheWidth = 0;
  private cacheOn = false;

  /** Starts the cache for a lattice: the finest lattice has 2^maxDepth points per lattice cell. */
  private beginCache(lattice: NodeLattice): void {
    const split = 2 ** this.maxDepth;
    this.cacheU0 = lattice.u0;
    this.cacheV0 = lattice.v0;
    this.cacheHu = lattice.hu / split;
    this.cacheHv = lattice.hv / split;
    this.cacheWidth = (lattice.nu - 1) * split + 1;
    // Keys are 32-bit: a lattice too fine for them (thousands of cells) is not cached.
    this.cacheOn = this.cacheWidth * ((lattice.nv - 1) * split + 1) < 2 ** 31;
    this.cache.clear();
  }

  /**
   * Breadth-first, greedy refinement. Each level: every queued cell (a candidate of the lattice, or a
   * child of a cell refined on the level before) gets its five inner points and the rule on its four
   * children, the difference being its error; then the cells with the largest errors (relative to the
   * targets) are split, until the errors left — those accepted so far plus this level's unsplit ones —
   * fit the targets. Level by level, so that a sample cap, when it binds, leaves equal depths.
   */
  private refineLevels(lattice: NodeLattice, targetI: number, targetA: number): void {
    const { nu, nv, hu, hv } = lattice;
    const cu = nu - 1;
    let count = 0;
    for (let c = 0; c < cu * (nv - 1); c++) {
      const mark = this.cellMarks[c]!;
      if (mark !== 2 && mark !== 7) continue;
      const i = c % cu;
      const j = (c - i) / cu;
      this.loadCorners(lattice, i, j, 0);
      count = this.enqueue(0, count, lattice.u0 + i * hu, lattice.v0 + j * hv, hu, hv, this.cellRuleI[c]!, this.cellRuleA[c]!, 0.5 * Math.abs(this.cellRuleI[c]!), 0.5 * Math.abs(this.cellRuleA[c]!), false);
    }
    for (let depth = 0; count > 0; depth++) {
      const tested = this.testLevel(count, targetI, targetA);
      const order = this.order.subarray(0, tested);
      const key = this.key;
      order.sort((a, b) => key[b]! - key[a]!);
      // This level may use half of what is left of each target; the split cells' children get the rest.
      const allowI = this.integralError + 0.5 * Math.max(targetI - this.integralError, 0);
      const allowA = this.areaError + 0.5 * Math.max(targetA - this.areaError, 0);
      let leftI = this.integralError;
      let leftA = this.areaError;
      for (let t = 0; t < tested; t++) {
        leftI += this.queue[order[t]! * RECORD + 6]!;
        leftA += this.queue[order[t]! * RECORD + 7]!;
      }
      let next = 0;
      for (let t = 0; t < tested; t++) {
        const r = order[t]!;
        const at = r * RECORD;
        const q = this.queue;
        if ((leftI > allowI || leftA > allowA) && depth + 1 < this.maxDepth) {
          leftI -= q[at + 6]!;
          leftA -= q[at + 7]!;
          next = this.split(at, next);
          continue;
        }
        this.integralError += q[at + 6]!;
        this.areaError += q[at + 7]!;
      }
      const swap = this.queue;
      this.queue = this.nextQueue;
      this.nextQueue = swap;
      count = next;
    }
  }

  /**
   * Tests the `count` queued cells: inner points, children's rules, errors (into the records), the
   * sums moved to the finer rules. Cells beyond the sample cap keep their share of their parent's
   * error. Returns the number tested (their record numbers in `order`, their weighted errors in `key`).
   */
  private testLevel(count: number, targetI: number, targetA: number): number {
    if (this.order.length < count) {
      this.order = new Int32Array(2 * count);
      this.key = new Float64Array(2 * count);
    }
    let tested = 0;
    for (let r = 0; r < count; r++) {
      const at = r * RECORD;
      const q = this.queue;
      if (this.samples + 5 > this.sampleCap) {
        this.integralError += q[at + 6]!;
        this.areaError += q[at + 7]!;
        continue;
      }
      this.copyBlock(q, at + 16, this.levels, 0);
      const u = q[at]!, v = q[at + 1]!, cellU = q[at + 2]!, cellV = q[at + 3]!;
      this.sampleMidpoints(u, v, cellU, cellV);
      this.childRules(u, v, cellU, cellV);
      const fineI = this.childI[0]! + this.childI[1]! + this.childI[2]! + this.childI[3]!;
      const fineA = this.childA[0]! + this.childA[1]! + this.childA[2]! + this.childA[3]!;
      this.integralSum += fineI - q[at + 4]!;
      this.areaSum += fineA - q[at + 5]!;
      // Error of the finer sum: (coarse − fine)/(2^p − 1) for a rule of order p; p ≥ 1.5 near the
      // square-root edges of singular boundaries and 2 elsewhere: half the difference.
      q[at + 6] = 0.5 * Math.abs(fineI - q[at + 4]!);
      q[at + 7] = 0.5 * Math.abs(fineA - q[at + 5]!);
      for (let c = 0; c < 4; c++) {
        q[at + 8 + c] = this.childI[c]!;
        q[at + 12 + c] = this.childA[c]!;
      }
      this.copyBlock(this.levels, 0, q, at + 16);
      this.key[r] = Math.max(q[at + 6]! / targetI, q[at + 7]! / targetA);
      this.order[tested++] = r;
    }
    return tested;
  }

  /** Copies a 3 × 3 block (the first `width` values of each of its nine slots). */
  private copyBlock(from: Float64Array, fromAt: number, to: Float64Array, toAt: number): void {
    const width = this.width;
    for (let slot = 0; slot < 9; slot++) {
      const a = fromAt + slot * STRIDE;
      const b = toAt + slot * STRIDE;
      for (let k = 0; k < width; k++) to[b + k] = from[a + k]!;
    }
  }

  /** Queues the four children of the tested cell at record offset `at` for the next level. */
  private split(at: number, next: number): number {
    const q = this.queue;
    this.copyBlock(q, at + 16, this.levels, 0);
    const u = q[at]!, v = q[at + 1]!;
    const hu2 = q[at + 2]! / 2;
    const hv2 = q[at + 3]! / 2;
    const shareI = q[at + 6]! / 4;
    const shareA = q[at + 7]! / 4;
    for (let c = 0; c < 4; c++) {
      const ci = c & 1;
      const cj = c >> 1;
      for (let corner = 0; corner < 4; corner++) {
        const from = ((cj + (corner >> 1)) * 3 + ci + (corner & 1)) * STRIDE;
        const to = LEVEL + ((corner >> 1) * 6 + (corner & 1) * 2) * STRIDE;
        for (let k = 0; k < this.width; k++) this.levels[to + k] = this.levels[from + k]!;
      }
      next = this.enqueue(1, next, u + ci * hu2, v + cj * hv2, hu2, hv2, this.queue[at + 8 + c]!, this.queue[at + 12 + c]!, shareI, shareA, true);
    }
    return next;
  }

  /**
   * Appends a cell whose corners are in block `block` (slots 0, 2, 6, 8) to the current queue, or to
   * the next level's queue when `toNext`: u, v, hu, hv, its rule (2), its error or share of its
   * parent's (2), its children's rules (8), its 3 × 3 block. Returns the new count of that queue.
   */
  private enqueue(block: number, count: number, u: number, v: number, hu: number, hv: number, ruleI: number, ruleA: number, shareI: number, shareA: number, toNext: boolean): number {
    let q = toNext ? this.nextQueue : this.queue;
    if ((count + 1) * RECORD > q.length) {
      const grown = new Float64Array(Math.max(2 * q.length, 64 * RECORD));
      grown.set(q);
      q = grown;
      if (toNext) this.nextQueue = grown;
      else this.queue = grown;
    }
    const at = count * RECORD;
    q[at] = u; q[at + 1] = v; q[at + 2] = hu; q[at + 3] = hv;
    q[at + 4] = ruleI; q[at + 5] = ruleA; q[at + 6] = shareI; q[at + 7] = shareA;
    for (const slot of CORNER_SLOTS) {
      for (let k = 0; k < this.width; k++) q[at + 16 + slot * STRIDE + k] = this.levels[block * LEVEL + slot * STRIDE + k]!;
    }
    return count + 1;
  }

  /** Samples the five inner points of the cell held in block 0 (slots 1, 3, 4, 5, 7). */
  private sampleMidpoints(u: number, v: number, hu: number, hv: number): void {
    const hu2 = hu / 2;
    const hv2 = hv / 2;
    this.sampleInto(u + hu2, v, 1 * STRIDE);
    this.sampleInto(u, v + hv2, 3 * STRIDE);
    this.sampleInto(u + hu2, v + hv2, 4 * STRIDE);
    this.sampleInto(u + hu, v + hv2, 5 * STRIDE);
    this.sampleInto(u + hu2, v + hv, 7 * STRIDE);
  }

  /** Rules of the four children of the cell held in block 0, into childI/childA[0 … 3]. */
  private childRules(u: number, v: number, hu: number, hv: number): void {
    const hu2 = hu / 2;
    const hv2 = hv / 2;
    for (let c = 0; c < 4; c++) {
      const ci = c & 1;
      const cj = c >> 1;
      this.cellRuleAt(u + ci * hu2, v + cj * hv2, hu2, hv2, (cj * 3 + ci) * STRIDE, 1, 3);
      this.childI[c] = this.ruleIntegral;
      this.childA[c] = this.ruleArea;
    }
  }

  /** Rule of the cell whose corners are slots 0, 2, 6, 8 of block d (`step` 2 between them). */
  private cellRule(u: number, v: number, hu: number, hv: number, d: number, step: number): void {
    this.cellRuleAt(u, v, hu, hv, d * LEVEL, step, step * 3);
  }

  /**
   * Rule of a cell with corners at `at` (lower left), `at + right·STRIDE` and `at + up·STRIDE` in a
   * 3 × 3 block (right: 1 or 2 slots; up: 3 or 6 slots).
   */
  private cellRuleAt(u: number, v: number, hu: number, hv: number, at: number, right: number, up: number): void {
    const p00 = at;
    const p10 = at + right * STRIDE;
    const p01 = at + up * STRIDE;
    const p11 = p01 + right * STRIDE;
    const L = this.levels;
    const inside = (p: number): boolean => L[p]! >= 0 && L[p + 3]! >= 0;
    const a = inside(p00), b = inside(p10), c = inside(p01), e = inside(p11);
    // A split field's cell near the edge of reach goes through the triangles even when inside.
    if (a && b && c && e && !(this.rootEdge && nearReach(L[p00]!, L[p10]!, L[p01]!, L[p11]!))) {
      this.ruleIntegral = 0.25 * hu * hv * (L[p00 + 1]! + L[p10 + 1]! + L[p01 + 1]! + L[p11 + 1]!);
      this.ruleArea = hu * hv;
      return;
    }
    // No inside corner: nothing inside, unless a split field's first margin changes sign in the cell.
    const reached = (L[p00]! >= 0 ? 1 : 0) + (L[p10]! >= 0 ? 1 : 0) + (L[p01]! >= 0 ? 1 : 0) + (L[p11]! >= 0 ? 1 : 0);
    if (!a && !b && !c && !e && !(this.splitField && reached > 0 && reached < 4) && !(reached === 0 && this.legs > 0 && this.legsMeet(p00, p10, p01, p11))) {
      this.ruleIntegral = 0;
      this.ruleArea = 0;
      return;
    }
    let integral = 0;
    let area = 0;
    this.triangle(u, v, p00, u + hu, v, p10, u + hu, v + hv, p11);
    integral += this.ruleIntegral;
    area += this.ruleArea;
    this.triangle(u, v, p00, u + hu, v + hv, p11, u, v + hv, p01);
    this.ruleIntegral += integral;
    this.ruleArea += area;
  }

  /**
   * Inside part of one triangle (vertices with their block offsets), exact for linear margins and
   * integrand: cut by the margin, then (split fields) by the second margin.
   */
  private triangle(u1: number, v1: number, p1: number, u2: number, v2: number, p2: number, u3: number, v3: number, p3: number): void {
    const L = this.levels;
    let n: number;
    let root = false;
    if (this.legs > 0 && !(L[p1]! >= 0 && L[p2]! >= 0 && L[p3]! >= 0)) {
      n = this.legClip(u1, v1, p1, u2, v2, p2, u3, v3, p3);
    } else {
      n = this.edge(u1, v1, p1, u2, v2, p2, 0);
      n = this.edge(u2, v2, p2, u3, v3, p3, n);
      n = this.edge(u3, v3, p3, u1, v1, p1, n);
      // The square-root rule where the first margin (reach) extrapolates to zero within the triangle.
      root = this.rootEdge && nearReach(L[p1]!, L[p2]!, L[p3]!, L[p3]!);
    }
    if (this.splitField) n = this.clipSecond(n, root);
    const poly = this.poly;
    let integral = 0;
    let area = 0;
    for (let k = 1; k + 1 < n; k++) {
      const ax = poly[4 * k]! - poly[0]!;
      const ay = poly[4 * k + 1]! - poly[1]!;
      const bx = poly[4 * k + 4]! - poly[0]!;
      const by = poly[4 * k + 5]! - poly[1]!;
      const t = 0.5 * Math.abs(ax * by - ay * bx);
      area += t;
      if (root) integral += rootIntegral(t, poly[2]!, poly[4 * k + 2]!, poly[4 * k + 6]!);
      else integral += (t * (poly[2]! + poly[4 * k + 2]! + poly[4 * k + 6]!)) / 3;
    }
    this.ruleIntegral = integral;
    this.ruleArea = area;
  }

  /**
   * The part of a triangle with a vertex out of reach where every leg reaches (fields with `legs`),
   * into `poly` (u, v, f, second); returns its vertex count. The triangle is cut by each leg's margin
   * in turn, each linear between the vertices of the polygon left so far, so the inside part may end
   * in a corner between two legs' boundaries that no vertex of the triangle reaches (the chord of
   * the legs' smallest margin cuts such a corner off, and misses a wedge between two nodes).
   *
   * Values at a crossing: the integrand and the second margin of the edge's inside end, when that end
   * has them (the point beyond is out of reach: its integrand is a code, 0, and a leg that is not
   * singular at the end of its reach, a strut at its stroke, does not take 1/κ to 0 there; the
   * interpolation towards the code took gci low by about 1 % on 3-RPR demo designs, a first-order
   * error that the refinement's estimate did not cover: docs/regions.md). Crossings whose
   * inside end is itself out of reach (of another leg) take the mean of the polygon's other values;
   * a polygon with none (a wedge's tip between the triangle's vertices) is solved at its centroid.
   * A crossing whose inherited second margin fails is solved (once), as solvedCrossing does.
   */
  private legClip(u1: number, v1: number, p1: number, u2: number, v2: number, p2: number, u3: number, v3: number, p3: number): number {
    const L = this.levels;
    const legs = this.legs;
    const W = LEG_VERTEX;
    const origin = W - 1;
    // A leg that fails at the three vertices fails over the triangle.
    for (let leg = 4; leg < 4 + legs; leg++) if (!(L[p1 + leg]! >= 0 || L[p2 + leg]! >= 0 || L[p3 + leg]! >= 0)) return 0;
    let a = this.legPoly;
    let b = this.legCut;
    this.legCorner(a, 0, u1, v1, p1);
    this.legCorner(a, W, u2, v2, p2);
    this.legCorner(a, 2 * W, u3, v3, p3);
    let n = 3;
    for (let leg = 4; leg < 4 + legs && n > 0; leg++) {
      let m = 0;
      for (let k = 0; k < n; k++) {
        const x = k * W;
        const y = ((k + 1) % n) * W;
        const mx = a[x + leg]!;
        const my = a[y + leg]!;
        if (mx >= 0) {
          for (let c = 0; c < W; c++) b[m * W + c] = a[x + c]!;
          m++;
        }
        if (mx >= 0 !== my >= 0) {
          const t = mx / (mx - my);
          const o = m * W;
          b[o] = a[x]! + t * (a[y]! - a[x]!);
          b[o + 1] = a[x + 1]! + t * (a[y + 1]! - a[x + 1]!);
          for (let c = 4; c < 4 + legs; c++) b[o + c] = a[x + c]! + t * (a[y + c]! - a[x + c]!);
          b[o + leg] = 0;
          const inside = mx >= 0 ? x : y;
          b[o + 2] = a[inside + 2]!;
          b[o + 3] = a[inside + 3]!;
          b[o + origin] = a[inside + origin]! === LEG_UNKNOWN ? LEG_UNKNOWN : LEG_INHERITED;
          m++;
        }
      }
      const swap = a;
      a = b;
      b = swap;
      n = m;
    }
    if (n === 0) return 0;
    // Crossings with no values: the mean of the others, else the field at the centroid.
    let known = 0;
    let f = 0;
    let second = 0;
    let cu = 0;
    let cv = 0;
    for (let k = 0; k < n; k++) {
      cu += a[k * W]!;
      cv += a[k * W + 1]!;
      if (a[k * W + origin]! === LEG_UNKNOWN) continue;
      known++;
      f += a[k * W + 2]!;
      second += a[k * W + 3]!;
    }
    if (known > 0) {
      f /= known;
      second /= known;
    } else {
      if (this.samples >= this.sampleCap) return 0;
      const m = this.field!.sample(cu / n, cv / n, this.out);
      this.samples++;
      if (!(m >= 0)) return 0;
      f = this.out[0]!;
      second = this.out[2]!;
    }
    const poly = this.poly;
    for (let k = 0; k < n; k++) {
      const x = k * W;
      this.solvedVertex[k] = 0;
      if (a[x + origin]! === LEG_UNKNOWN) {
        a[x + 2] = f;
        a[x + 3] = second;
      }
      if (a[x + origin]! !== LEG_CORNER && !(a[x + 3]! >= 0) && this.samples < this.sampleCap) {
        // The inside end fails the second margin: the crossing's own (a part between both boundaries may pass here).
        const m = this.field!.sample(a[x]!, a[x + 1]!, this.out);
        this.samples++;
        if (m >= 0 && Number.isFinite(this.out[2]!)) {
          a[x + 2] = this.out[0]!;
          a[x + 3] = this.out[2]!;
          this.solvedVertex[k] = 1;
        }
      }
      for (let c = 0; c < 4; c++) poly[4 * k + c] = a[x + c]!;
    }
    return n;
  }

  /** A triangle's vertex at block offset p into legClip's polygon at `at`. */
  private legCorner(a: Float64Array, at: number, u: number, v: number, p: number): void {
    const L = this.levels;
    a[at] = u;
    a[at + 1] = v;
    a[at + 2] = L[p + 1]!;
    a[at + 3] = L[p + 3]!;
    for (let leg = 4; leg < 4 + this.legs; leg++) a[at + leg] = L[p + leg]!;
    a[at + LEG_VERTEX - 1] = L[p]! >= 0 ? LEG_CORNER : LEG_UNKNOWN;
  }

  /**
   * The part of the polygon's `n` vertices (u, v, f, second) where the second margin is ≥ 0, the
   * margin and the integrand (its square with `root`) linear along its edges (Sutherland–Hodgman
   * against one level line); next to a solved crossing of the first margin, the zero is solved
   * (secondRoot).
   * Written back into the polygon; returns its vertex count (at most n + 1: a convex polygon).
   */
  private clipSecond(n: number, root: boolean): number {
    const poly = this.poly;
    const out = this.clipped;
    let m = 0;
    for (let k = 0; k < n; k++) {
      const a = 4 * k;
      const b = 4 * ((k + 1) % n);
      const sa = poly[a + 3]!;
      const sb = poly[b + 3]!;
      if (sa >= 0) {
        for (let c = 0; c < 4; c++) out[4 * m + c] = poly[a + c]!;
        this.clippedSolved[m] = this.solvedVertex[k]!;
        m++;
      }
      if (sa >= 0 !== sb >= 0) {
        const steep = this.solvedVertex[k]! === 1 || this.solvedVertex[(k + 1) % n]! === 1;
        const t = steep ? (sa >= 0 ? this.secondRoot(a, b, sa, sb) : 1 - this.secondRoot(b, a, sb, sa)) : sa / (sa - sb);
        this.clippedSolved[m] = 0;
        for (let c = 0; c < 2; c++) out[4 * m + c] = poly[a + c]! + t * (poly[b + c]! - poly[a + c]!);
        const fa = poly[a + 2]!;
        const fb = poly[b + 2]!;
        out[4 * m + 2] = root ? Math.sqrt(Math.max(fa * fa + t * (fb * fb - fa * fa), 0)) : fa + t * (fb - fa);
        out[4 * m + 3] = 0;
        m++;
      }
    }
    for (let k = 0; k < 4 * m; k++) poly[k] = out[k]!;
    for (let k = 0; k < m; k++) this.solvedVertex[k] = this.clippedSolved[k]!;
    return m;
  }

  /**
   * Where the second margin is zero on the polygon edge from vertex offset `a` (second margin
   * sa ≥ 0) to `b` (sb < 0), as a fraction of the edge: regula falsi with the field, SECOND_SOLVES
   * solves at most (the joint margin rises as a square root towards a leg's reach boundary, so the
   * chord from a crossing there misplaces the zero).
   */
  private secondRoot(a: number, b: number, sa: number, sb: number): number {
    const poly = this.poly;
    let lo = 0;
    let hi = 1;
    let sLo = sa;
    let sHi = sb;
    for (let k = 0; k < SECOND_SOLVES && this.samples < this.sampleCap; k++) {
      const t = lo + ((hi - lo) * sLo) / (sLo - sHi);
      const m = this.field!.sample(poly[a]! + t * (poly[b]! - poly[a]!), poly[a + 1]! + t * (poly[b + 1]! - poly[a + 1]!), this.out);
      this.samples++;
      const second = this.out[2]!;
      if (!(m >= 0) || !Number.isFinite(second)) break;
      if (second >= 0) { lo = t; sLo = second; } else { hi = t; sHi = second; }
    }
    return lo + ((hi - lo) * sLo) / (sLo - sHi);
  }

  /** Walks one edge a → b of a triangle: adds a when inside, then the crossing when the sign changes. Returns the vertex count. */
  private edge(ua: number, va: number, pa: number, ub: number, vb: number, pb: number, n: number): number {
    const L = this.levels;
    const poly = this.poly;
    const ina = L[pa]! >= 0;
    const inb = L[pb]! >= 0;
    if (ina) {
      poly[4 * n] = ua;
      poly[4 * n + 1] = va;
      poly[4 * n + 2] = L[pa + 1]!;
      poly[4 * n + 3] = L[pa + 3]!;
      this.solvedVertex[n] = 0;
      n++;
    }
    if (ina !== inb) {
      this.solvedVertex[n] = 0;
      if (ina) this.crossing(pa, pb, ua, va, ub, vb, 4 * n);
      else this.crossing(pb, pa, ub, vb, ua, va, 4 * n);
      n++;
    }
    return n;
  }

  /** Zero crossing of the margin on the edge from an inside point to an outside one: (u, v, f, second) into poly at `slot`. */
  private crossing(pin: number, pout: number, uin: number, vin: number, uout: number, vout: number, slot: number): void {
    const L = this.levels;
    const poly = this.poly;
    const mIn = L[pin]!;
    const mOut = L[pout]!;
    const fIn = L[pin + 1]!;
    const fOut = L[pout + 1]!;
    // A split field's second margin at a crossing the field is not asked about: the inside end's.
    poly[slot + 3] = L[pin + 3]!;
    // Only where the inside end fails the second margin is the crossing's own second margin needed:
    // a part between both boundaries may lie on the edge (elsewhere the inside end's is kept).
    if (this.splitField && !(L[pin + 3]! >= 0)) {
      this.solvedCrossing(pin, pout, uin, vin, uout, vout, slot);
      return;
    }
    if (L[pin + 2]! > 0 && L[pout + 2]! > 0) {
      const t = mIn / (mIn - mOut);
      poly[slot] = uin + t * (uout - uin);
      poly[slot + 1] = vin + t * (vout - vin);
      poly[slot + 2] = Number.isFinite(fOut) ? fIn + t * (fOut - fIn) : fIn;
      return;
    }
    // The outer end is a code, not a margin: bisection with the field (the inside end's integrand is kept).
    let lo = 0;
    let hi = 1;
    let f = fIn;
    for (let s = 0; s < BISECTION_STEPS && this.samples < this.sampleCap; s++) {
      const t = 0.5 * (lo + hi);
      const m = this.field!.sample(uin + t * (uout - uin), vin + t * (vout - vin), this.out);
      this.samples++;
      if (m >= 0) {
        lo = t;
        f = this.out[0]!;
      } else {
        hi = t;
      }
    }
    const t = 0.5 * (lo + hi);
    poly[slot] = uin + t * (uout - uin);
    poly[slot + 1] = vin + t * (vout - vin);
    poly[slot + 2] = f;
  }

  /**
   * A split field's crossing of its (continuous) first margin: the point where the margin,
   * interpolated linearly, is zero is solved, so that the second margin and the integrand there are
   * the field's own (not the outside end's code); when the solve lands outside (margin < 0), a secant
   * step moves in from there, CROSSING_SOLVES solves at most (then the inside end's values are kept).
   */
  private solvedCrossing(pin: number, pout: number, uin: number, vin: number, uout: number, vout: number, slot: number): void {
    const L = this.levels;
    const poly = this.poly;
    const mIn = L[pin]!;
    let hi = 1;
    let mHi = L[pout]!;
    let f = L[pin + 1]!;
    let second = L[pin + 3]!;
    let t = mIn / (mIn - mHi);
    for (let k = 0; k < CROSSING_SOLVES && this.samples < this.sampleCap; k++) {
      const m = this.field!.sample(uin + t * (uout - uin), vin + t * (vout - vin), this.out);
      this.samples++;
      if (m >= 0) {
        f = this.out[0]!;
        second = this.out[2]!;
        break;
      }
      hi = t;
      mHi = m;
      // The secant's root, moved in by the bisection's resolution: a root landing on the outside
      // (a convex margin) would be met again and again by regula falsi.
      t = ((hi * mIn) / (mIn - mHi)) * (1 - CROSSING_PULLBACK);
    }
    poly[slot] = uin + t * (uout - uin);
    poly[slot + 1] = vin + t * (vout - vin);
    poly[slot + 2] = f;
    poly[slot + 3] = second;
    this.solvedVertex[slot >> 2] = 1;
  }
}

/**
 * ∫ √L over a triangle of area `area` where L is linear with the vertex values f1², f2², f3² (the
 * integrand f interpolated as the square root of a linear function: exact where f falls as the
 * square root of the distance to an edge, a leg singularity, and second order elsewhere). By the
 * divided-difference form of the integral of a function of a linear one over a triangle (the
 * Hermite–Genocchi formula; from memory),
 * 2·area·G[a, b, c] with G(x) = (4/15) x^(5/2) (G'' = √x); the edge-midpoint rule where the values
 * are too close for the differences.
 */
function rootIntegral(area: number, f1: number, f2: number, f3: number): number {
  let a = f1 * f1;
  let b = f2 * f2;
  let c = f3 * f3;
  if (a > b) { const s = a; a = b; b = s; }
  if (b > c) { const s = b; b = c; c = s; }
  if (a > b) { const s = a; a = b; b = s; }
  const spread = c - a;
  if (!(spread > ROOT_SPREAD * c)) return (area * (Math.sqrt(0.5 * (a + b)) + Math.sqrt(0.5 * (b + c)) + Math.sqrt(0.5 * (a + c)))) / 3;
  const g = (x: number): number => (4 / 15) * x * x * Math.sqrt(x);
  const slope = (x: number, y: number): number => (y - x > ROOT_SPREAD * spread ? (g(y) - g(x)) / (y - x) : (2 / 3) * Math.sqrt(0.5 * (x + y)) ** 3);
  return (2 * area * (slope(b, c) - slope(a, b))) / spread;
}

/**
 * Whether the first margin, linear over a triangle or cell with these corner values, reaches zero
 * within about its own size (its smallest value not above its spread): there 1/κ may fall as the
 * square root of the distance to a leg's reach boundary, and rootIntegral's rule is taken; farther in,
 * the linear one (the square root of a linear function is concave, which the linear rule is not
 * biased by where the integrand is smooth).
 */
function nearReach(m1: number, m2: number, m3: number, m4: number): boolean {
  const low = Math.min(m1, m2, m3, m4);
  return low <= Math.max(m1, m2, m3, m4) - low;
}
