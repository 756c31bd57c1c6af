/**
 * Adaptive workspace sampling at a stated accuracy (study setting `evaluation.tolerance`, relative).
 *
 * A coarse grid of nodes is sampled everywhere (workspace.ts labels its usable regions). The cells
 * whose corners disagree in sign, or whose corner nearest the zero level is close against the spread
 * of its corners (the zero level may pass through them), are listed. Level by level, a listed cell
 * the boundary crosses simply is measured from its boundary (crossings.ts: the edge crossings, the
 * arc's bulge, and a check sample whose miss is the cell's error estimate); any other listed cell is
 * split into four and its undecided children are listed for the next level, down to MAX_LEVEL. The
 * area is the cells known to be inside plus the measured ones; the error estimate is the sum of the
 * cells' estimates. Outside the coarse nodes' reach the method is blind: a part of the region
 * thinner than a coarse cell and away from every listed cell is missed.
 *
 * Sub-samples are cached by their position on the finest lattice (open addressing, no allocation
 * per point), so neighbouring cells share their edge samples. Two fields are refined from one pass:
 * the reach margin (reachable area) and the usability margin restricted to the evaluation region
 * (workspace area; positive sub-samples inside a cell that touches the region count as the region).
 */
import type { MarginGrid } from './grid.js';
import { trianglePositiveFraction } from './grid.js';
import { BoundaryCells, type PointSampler } from './crossings.js';
import { SlotTable } from './slotTable.js';
import { EmptyCircle, PointBuckets } from './emptyCircle.js';
import { ThinParts } from './thinParts.js';

/** Deepest refinement level (sub-cells of 1/2^MAX_LEVEL coarse cells). */
export const MAX_LEVEL = 6;
/**
 * Share of the tolerance (of the coarse area estimate) for the boundary cells' error estimates: each
 * listed coarse cell may use an equal part of it, each child half of its parent's.
 */
const SIMPLE_BUDGET = 0.5;
/**
 * From this level on a simply crossed cell is measured whatever its error estimate (which is still
 * added to the reported error): where two boundaries meet in a cell (a kink) the estimate falls only
 * with the cell's area, and splitting it down to the deepest level costs more than it gains.
 */
const ACCEPT_LEVEL = 2;
const CACHE_BITS = 17;
const CACHE_SIZE = 1 << CACHE_BITS;
/** Stop adding sub-samples beyond this many (half the cache): the estimate then stays at the last full level. */
const MAX_SUBSAMPLES = CACHE_SIZE >> 1;

export type { PointSampler };

/** An area with its estimated error (both m²) and the refinement it took. */
export interface AreaEstimate {
  area: number;
  error: number;
  /** Refinement levels used below the coarse grid. */
  levels: number;
}


/** Lattice refinement of a neck probe (per coarse cell; divides 2^MAX_LEVEL) and the most probes per design. */
const PROBE_SPLIT = 16;
/** A uniform coarse cell is refined when its corner nearest the zero level is within this share of its corner spread. */
const NEAR_FACTOR = 0.5;
/** Eight unit directions of the hops between ascents (see climb). */
const HOP_X = Float64Array.from({ length: 8 }, (_, k) => Math.cos((k * Math.PI) / 4));
const HOP_Y = Float64Array.from({ length: 8 }, (_, k) => Math.sin((k * Math.PI) / 4));
/** Ascents per inscribed radius (from the starts nearest to the best). */
const SEARCHES = 8;
/** Repairs of an inscribed circle against the field (repairCircle): rounds, probes on the circle, points it rests on at most. */
const REPAIR_ROUNDS = 3;
const REPAIR_PROBES = 24;
const MAX_CONTACTS = 16;
/** Rounds of refining the coarse cells the workspace region was found to run into (area), and the most cells per round. */
const ESCAPE_ROUNDS = 4;
const MAX_ESCAPES = 64;
/** Coarse cell states of a workspace measurement (cellState). */
const CELL_LISTED = 1;
const CELL_FULL = 2;
const CELL_THIN = 3;
const CELL_ESCAPED = 4;
/** A repair counts only beyond this share of the radius (a tenth of the default tolerance): smaller gains or losses are left. */
const REPAIR_SLACK = 5e-4;
/** Points within this share of the radius beyond the circle have the gaps to their neighbours probed (repairCircle). */
const GAP_REACH = 0.02;
const PROBE_NODES = (2 * PROBE_SPLIT + 1) ** 2;
const MAX_PROBES = 64;

/** Growable list of cells (fine-lattice corner coordinates and the four corner values), reused across designs. */
class CellList {
  at = new Int32Array(4096);
  corners = new Float64Array(8192);
  count = 0;
  push(i: number, j: number, a: number, b: number, c: number, d: number): void {
    if (2 * this.count + 2 > this.at.length) {
      const at = new Int32Array(this.at.length * 2);
      at.set(this.at);
      this.at = at;
      const corners = new Float64Array(this.corners.length * 2);
      corners.set(this.corners);
      this.corners = corners;
    }
    const n = this.count;
    this.at[2 * n] = i;
    this.at[2 * n + 1] = j;
    this.corners[4 * n] = a;
    this.corners[4 * n + 1] = b;
    this.corners[4 * n + 2] = c;
    this.corners[4 * n + 3] = d;
    this.count = n + 1;
  }
}

/** The area of a field's positive set by adaptive refinement; one per evaluator (owns its buffers). */
export class AdaptiveArea {
  /** Sub-samples by fine-lattice node (fj · fineWidth + fi): usability and reach margins per slot. */
  private readonly cache = new SlotTable(CACHE_BITS);
  private readonly usable = new Float64Array(CACHE_SIZE);
  private readonly reach = new Float64Array(CACHE_SIZE);
  private subsamples = 0;
  private readonly point = new Float64Array(2);
  private current = new CellList();
  private next = new CellList();
  /** Region-masked usability margins of the coarse nodes. */
  private masked = new Float64Array(0);
  private grid: MarginGrid | null = null;
  private sampler: PointSampler | null = null;
  /** Fine-lattice spacing (m) and nodes per fine row. */
  private hf = 0;
  private fineWidth = 0;
  /** Boundary points of the last workspace field (finest level): x, y interleaved; see boundaryCount. */
  boundary = new Float64Array(4096);
  boundaryCount = 0;
  /**
   * Whether arms thinner than a coarse cell are looked for and measured densely (thinParts.ts). The
   * evaluator turns it off for 2-DOF designs: on the 20 + 10 reference designs of those the corner
   * refinement alone is within 0.5 % (tests/mechanics/adaptive-accuracy.test.ts), and the pass would
   * cost the five-bar demo about 6 % more samples.
   */
  thinArms = true;
  /** Arms thinner than a coarse cell, measured densely (thinParts.ts). */
  private readonly thin = new ThinParts({ sample: (fi, fj) => this.value(2, fi, fj), addBoundaryPoint: (x, y) => this.pushBoundary(x, y) });
  /** Sub-samples taken in the last `begin` … calls. */
  get samples(): number {
    return this.subsamples;
  }

  /** Starts a design: the coarse grid (sampled, labelled) and the sampler for sub-samples. */
  begin(grid: MarginGrid, sampler: PointSampler, region: number): void {
    this.grid = grid;
    this.sampler = sampler;
    this.cache.clear();
    this.subsamples = 0;
    this.hf = grid.h / (1 << MAX_LEVEL);
    this.fineWidth = (grid.nx - 1) * (1 << MAX_LEVEL) + 1;
    const n = grid.nx * grid.ny;
    if (this.masked.length < n) this.masked = new Float64Array(grid.capacity);
    if (this.merged.length < grid.capacity) this.merged = new Uint8Array(grid.capacity);
    this.merged.fill(0, 0, grid.regionCount);
    if (region >= 0) {
      this.merged[region] = 1;
      this.connectNecks();
    }
    const { values, labels } = grid;
    for (let k = 0; k < n; k++) {
      const v = values[k]!;
      const label = labels[k]!;
      this.masked[k] = label >= 0 && this.merged[label] === 1 ? v : v >= 0 ? -v - 1e-300 : v;
    }
  }

  /** Per coarse region label: 1 when it belongs to the evaluation region (itself or joined through a neck). */
  private merged = new Uint8Array(0);
  private readonly probeQueue = new Int32Array(PROBE_NODES);
  private readonly probeSeen = new Uint8Array(PROBE_NODES);

  /**
   * Joins to the evaluation region the coarse regions connected to it through necks narrower than a
   * coarse cell: around every outside node that has a node of the region and a node of another
   * region among its eight neighbours, the usable set is flood-filled on a lattice PROBE_SPLIT / 2
   * times finer over the 2 × 2 cells about that node, and PROBE_SPLIT times finer when that reaches
   * no other region (its points are shared, the coarser lattice being part of the finer); regions
   * reached are joined (repeated until none is).
   */
  private connectNecks(): void {
    const grid = this.grid!;
    const { nx, ny, labels } = grid;
    let probes = 0;
    for (let changed = true; changed && probes < MAX_PROBES; ) {
      changed = false;
      for (let j = 1; j + 1 < ny && probes < MAX_PROBES; j++) {
        for (let i = 1; i + 1 < nx && probes < MAX_PROBES; i++) {
          const s = j * nx + i;
          if (labels[s]! >= 0) continue;
          let inside = false;
          let other = false;
          for (let dj = -1; dj <= 1; dj++) {
            for (let di = -1; di <= 1; di++) {
              const label = labels[s + dj * nx + di]!;
              if (label < 0) continue;
              if (this.merged[label] === 1) inside = true;
              else other = true;
            }
          }
          if (!inside || !other) continue;
          probes++;
          // A wide neck shows on the coarser lattice at a quarter of the points; else the finer one.
          if (this.probe(i, j, PROBE_SPLIT >> 1) || this.probe(i, j, PROBE_SPLIT)) changed = true;
        }
      }
    }
  }

  /** Flood fill of the usable set, on a lattice `split` times finer, over the 2 × 2 coarse cells about node (i, j); joins the regions reached. */
  private probe(i: number, j: number, split: number): boolean {
    const grid = this.grid!;
    const { nx, labels } = grid;
    const side = 2 * split + 1;
    const step = (1 << MAX_LEVEL) / split;
    const fi0 = (i - 1) << MAX_LEVEL;
    const fj0 = (j - 1) << MAX_LEVEL;
    const queue = this.probeQueue;
    const seen = this.probeSeen;
    seen.fill(0);
    let head = 0;
    let tail = 0;
    for (let dj = 0; dj <= 2; dj++) {
      for (let di = 0; di <= 2; di++) {
        const label = labels[(j - 1 + dj) * nx + i - 1 + di]!;
        if (label < 0 || this.merged[label] !== 1) continue;
        const q = dj * split * side + di * split;
        seen[q] = 1;
        queue[tail++] = q;
      }
    }
    let joined = false;
    while (head < tail) {
      const q = queue[head++]!;
      const qi = q % side;
      const qj = (q - qi) / side;
      if (qi % split === 0 && qj % split === 0) {
        const label = labels[(j - 1 + qj / split) * nx + i - 1 + qi / split]!;
        if (label >= 0 && this.merged[label] !== 1) {
          this.merged[label] = 1;
          joined = true;
        }
      }
      for (let d = 0; d < 4; d++) {
        const ni = qi + (d === 0 ? 1 : d === 1 ? -1 : 0);
        const nj = qj + (d === 2 ? 1 : d === 3 ? -1 : 0);
        if (ni < 0 || nj < 0 || ni >= side || nj >= side) continue;
        const nq = nj * side + ni;
        if (seen[nq] === 1) continue;
        seen[nq] = 1;
        if (this.value(2, fi0 + ni * step, fj0 + nj * step) >= 0) queue[tail++] = nq;
      }
    }
    return joined;
  }

  /** Field value (0: region-masked usability, 1: reach, 2: usability) at fine-lattice node (fi, fj). */
  private value(field: number, fi: number, fj: number): number {
    const mask = (1 << MAX_LEVEL) - 1;
    const grid = this.grid!;
    if ((fi & mask) === 0 && (fj & mask) === 0) {
      const k = (fj >> MAX_LEVEL) * grid.nx + (fi >> MAX_LEVEL);
      return field === 0 ? this.masked[k]! : field === 1 ? grid.secondary[k]! : grid.values[k]!;
    }
    const key = fj * this.fineWidth + fi;
    const cache = this.cache;
    const found = cache.find(key);
    if (found >= 0) return field === 1 ? this.reach[found]! : this.usable[found]!;
    const slot = cache.free;
    this.subsamples++;
    const point = this.point;
    this.sampler!(grid.x0 + fi * this.hf, grid.y0 + fj * this.hf, point);
    if (slot >= 0) {
      cache.claim(key);
      this.usable[slot] = point[0]!;
      this.reach[slot] = point[1]!;
    }
    return field === 1 ? point[1]! : point[0]!;
  }

  /**
   * Area of a field's positive set (0: the evaluation region's usable workspace, 1: the reachable
   * set) to a relative tolerance; records the workspace boundary points when field = 0.
   */
  area(field: number, tolerance: number): AreaEstimate {
    const grid = this.grid!;
    const { nx, ny } = grid;
    const h = grid.h;
    const coarse = field === 0 ? this.masked : grid.secondary;
    const S = 1 << MAX_LEVEL;
    let full = 0;
    let partial = 0;
    this.current.count = 0;
    const thin = field === 0 && this.thinArms ? this.thin : null;
    thin?.mark(grid, this.masked, S);
    // Per coarse cell (workspace field): CELL_LISTED, CELL_FULL, CELL_THIN, or 0 (left out).
    if (this.cellState.length < nx * ny) this.cellState = new Uint8Array(grid.capacity);
    const state = this.cellState;
    state.fill(0, 0, nx * ny);
    this.escapes = 0;
    for (let j = 0; j + 1 < ny; j++) {
      for (let i = 0; i + 1 < nx; i++) {
        const k = j * nx + i;
        if (thin?.marked(k)) {
          state[k] = CELL_THIN;
          continue;
        }
        const a = coarse[k]!;
        const b = coarse[k + 1]!;
        const c = coarse[k + nx]!;
        const d = coarse[k + nx + 1]!;
        const inside = (a >= 0 ? 1 : 0) + (b >= 0 ? 1 : 0) + (c >= 0 ? 1 : 0) + (d >= 0 ? 1 : 0);
        if (inside === 4 || inside === 0) {
          // The zero level may still cross the cell when a corner is close to it.
          const lo = Math.min(a, b, c, d);
          const hi = Math.max(a, b, c, d);
          const near = inside === 4 ? lo : -hi;
          if (!(near < NEAR_FACTOR * (hi - lo))) {
            if (inside === 4) {
              full += 1;
              state[k] = CELL_FULL;
            }
            continue;
          }
          if (field === 0 && inside === 0 && !this.nearRegion(i, j)) continue;
        }
        state[k] = CELL_LISTED;
        this.current.push(i * S, j * S, a, b, c, d);
        partial += 0.5 * (trianglePositiveFraction(a, b, d) + trianglePositiveFraction(a, d, c));
      }
    }
    const cellArea = h * h;
    full *= cellArea;
    const cells = this.cells;
    cells.begin(this.sampler!, field === 1 ? 1 : 0);
    const share = (SIMPLE_BUDGET * tolerance * Math.abs(full + partial * cellArea)) / Math.max(this.current.count, 1);
    if (field === 0) this.boundaryCount = 0;
    this.refine(field, share);
    let area = full + this.refinedArea;
    let error = this.refinedError;
    let level = this.refinedLevel;
    // The workspace field: where the refinement found the region running on into a coarse cell that
    // was left out (an arm between coarse nodes that are all outside), those cells are refined in
    // turn with the same share each (ESCAPE_ROUNDS at most).
    for (let round = 0; field === 0 && round < ESCAPE_ROUNDS && this.escapes > 0; round++) {
      this.current.count = 0;
      const count = this.escapes;
      this.escapes = 0;
      for (let e = 0; e < count; e++) {
        const k = this.escapeList[e]!;
        const i = k % nx;
        const j = (k - i) / nx;
        state[k] = CELL_LISTED;
        this.current.push(i * S, j * S, coarse[k]!, coarse[k + 1]!, coarse[k + nx]!, coarse[k + nx + 1]!);
      }
      this.refine(field, share);
      area += this.refinedArea;
      error += this.refinedError;
      level = Math.max(level, this.refinedLevel);
    }
    this.subsamples += cells.samples;
    if (field === 0) this.appendBoundary(cells.points, cells.pointCount);
    if (!thin) return { area, error, levels: level };
    thin.measure(grid, this.masked);
    return { area: area + thin.area, error: error + thin.error, levels: level };
  }

  /** Area, error (m²) and deepest level of the last `refine`. */
  private refinedArea = 0;
  private refinedError = 0;
  private refinedLevel = 0;

  /**
   * Level by level from the coarse cells in `current`: the listed cells the boundary crosses simply
   * are measured from their boundary (crossings.ts); the others are split, their undecided children
   * listed for the next level. The workspace field's cells left at the end give their crossings to
   * the boundary points, and the coarse cells the region runs into are collected (findEscapes).
   */
  private refine(field: number, coarseShare: number): void {
    const S = 1 << MAX_LEVEL;
    const h = this.grid!.h;
    let cellArea = h * h;
    let share = coarseShare;
    let area = 0;
    let error = 0;
    let level = 0;
    for (;;) {
      if (field === 0) this.findEscapes(S >> level);
      this.measureSimple(field, level, share);
      area += this.simpleArea;
      error += this.simpleError;
      if (this.current.count === 0) break;
      if (level === MAX_LEVEL || this.subsamples + this.cells.samples + 5 * this.current.count > MAX_SUBSAMPLES) {
        // Unresolved: the triangle estimate, with half of each cell as its error.
        area += this.simplePartialLeft * cellArea;
        error += 0.5 * this.current.count * cellArea;
        break;
      }
      level++;
      cellArea /= 4;
      share /= 2;
      area += this.split(field, S >> level) * cellArea;
    }
    if (field === 0) this.collectBoundary(level);
    this.refinedArea = area;
    this.refinedError = error;
    this.refinedLevel = level;
  }

  /**
   * For each listed cell of side `step` (fine-lattice units): a usable corner on a side of its coarse
   * cell (not a coarse node) whose coarse neighbour across that side was left out means that the
   * region runs on into the neighbour; the neighbour is added to escapeList (escapes: their count).
   */
  private findEscapes(step: number): void {
    const list = this.current;
    const { nx, ny } = this.grid!;
    const S = 1 << MAX_LEVEL;
    const { at, corners } = list;
    for (let c = 0; c < list.count; c++) {
      const fi = at[2 * c]!;
      const fj = at[2 * c + 1]!;
      for (let q = 0; q < 4; q++) {
        if (!(corners[4 * c + q]! >= 0)) continue;
        const ci = fi + (q & 1) * step;
        const cj = fj + (q >> 1) * step;
        const onColumn = ci % S === 0;
        const onRow = cj % S === 0;
        if (onColumn === onRow) continue;
        // Not through a side that ends at a usable node of another region (the usable points on it
        // may be that region's, which the sub-samples do not tell apart).
        const n0 = Math.floor(cj / S) * nx + Math.floor(ci / S);
        const n1 = onColumn ? n0 + nx : n0 + 1;
        if (this.otherRegion(n0) || this.otherRegion(n1)) continue;
        // The two coarse cells either side of the side the corner lies on.
        const i0 = onColumn ? ci / S - 1 : Math.floor(ci / S);
        const j0 = onRow ? cj / S - 1 : Math.floor(cj / S);
        const i1 = onColumn ? i0 + 1 : i0;
        const j1 = onRow ? j0 + 1 : j0;
        this.escapeInto(i0, j0, nx, ny);
        this.escapeInto(i1, j1, nx, ny);
      }
    }
  }

  /** Whether coarse node k is usable but not of the evaluation region (masked out). */
  private otherRegion(k: number): boolean {
    return this.grid!.values[k]! >= 0 && !(this.masked[k]! >= 0);
  }

  private escapeInto(i: number, j: number, nx: number, ny: number): void {
    if (i < 0 || j < 0 || i + 1 >= nx || j + 1 >= ny) return;
    const k = j * nx + i;
    if (this.cellState[k] !== 0 || this.escapes >= MAX_ESCAPES) return;
    this.cellState[k] = CELL_ESCAPED;
    this.escapeList[this.escapes++] = k;
  }

  /**
   * Splits every listed cell (fine-lattice corner, four corner values) into four: five new (or
   * cached) values; the undecided children become the list. Returns the count of children wholly
   * inside.
   */
  private split(field: number, step: number): number {
    const list = this.current;
    const out = this.next;
    out.count = 0;
    const at = list.at;
    const corners = list.corners;
    for (let c = 0; c < list.count; c++) {
      const i0 = at[2 * c]!;
      const j0 = at[2 * c + 1]!;
      const v00 = corners[4 * c]!;
      const v20 = corners[4 * c + 1]!;
      const v02 = corners[4 * c + 2]!;
      const v22 = corners[4 * c + 3]!;
      const v10 = this.value(field, i0 + step, j0);
      const v01 = this.value(field, i0, j0 + step);
      const v11 = this.value(field, i0 + step, j0 + step);
      const v21 = this.value(field, i0 + 2 * step, j0 + step);
      const v12 = this.value(field, i0 + step, j0 + 2 * step);
      this.child(out, i0, j0, v00, v10, v01, v11);
      this.child(out, i0 + step, j0, v10, v20, v11, v21);
      this.child(out, i0, j0 + step, v01, v11, v02, v12);
      this.child(out, i0 + step, j0 + step, v11, v21, v12, v22);
    }
    const inside = this.fullChildren;
    this.fullChildren = 0;
    this.current = out;
    this.next = list;
    return inside;
  }

  /** Per coarse cell of the last workspace measurement: CELL_LISTED, CELL_FULL, CELL_THIN or 0 (left out). */
  private cellState = new Uint8Array(0);
  /** Coarse cells the region was found to run into (refined next), and their count. */
  private readonly escapeList = new Int32Array(MAX_ESCAPES);
  private escapes = 0;
  private readonly cells = new BoundaryCells();
  private readonly edgeKeys = new Int32Array(4);
  private simpleArea = 0;
  private simpleError = 0;
  private simplePartialLeft = 0;

  /**
   * The listed cells of `level` that the boundary crosses simply (two crossings, every corner a value
   * of the field itself, not a coarse node of another region masked out) are measured by
   * BoundaryCells and leave the list when their error estimate is within `share`; the others stay.
   * Sets simpleArea and simpleError (m²) and simplePartialLeft (the triangle estimate of the cells
   * left, in cells of this level).
   */
  private measureSimple(field: number, level: number, share: number): void {
    const grid = this.grid!;
    const list = this.current;
    const cells = this.cells;
    const step = (1 << MAX_LEVEL) >> level;
    const size = step * this.hf;
    const keys = this.edgeKeys;
    // Edge keys: (level, orientation, fine-lattice start), unique while they fit 31 bits.
    const width = this.fineWidth;
    const keyed = (2 * MAX_LEVEL + 2) * width * width < 2 ** 31;
    let area = 0;
    let error = 0;
    let partialLeft = 0;
    let kept = 0;
    const { at, corners } = list;
    for (let c = 0; c < list.count; c++) {
      const fi = at[2 * c]!;
      const fj = at[2 * c + 1]!;
      const a = corners[4 * c]!;
      const b = corners[4 * c + 1]!;
      const cc = corners[4 * c + 2]!;
      const d = corners[4 * c + 3]!;
      const plain = field === 1 || (this.isTrue(fi, fj, a) && this.isTrue(fi + step, fj, b) && this.isTrue(fi, fj + step, cc) && this.isTrue(fi + step, fj + step, d));
      const inside = (a >= 0 ? 1 : 0) + (b >= 0 ? 1 : 0) + (cc >= 0 ? 1 : 0) + (d >= 0 ? 1 : 0);
      if (plain && inside > 0 && inside < 4) {
        const base = 2 * level;
        keys[0] = keyed ? (base * width + fj) * width + fi : -1;
        keys[1] = keyed ? ((base + 1) * width + fj) * width + fi + step : -1;
        keys[2] = keyed ? (base * width + fj + step) * width + fi : -1;
        keys[3] = keyed ? ((base + 1) * width + fj) * width + fi : -1;
        const value = cells.cellArea(grid.x0 + fi * this.hf, grid.y0 + fj * this.hf, size, a, b, cc, d, keys);
        if (!Number.isNaN(value) && (cells.cellError <= share || level >= ACCEPT_LEVEL)) {
          area += value;
          error += cells.cellError;
          continue;
        }
      }
      partialLeft += 0.5 * (trianglePositiveFraction(a, b, d) + trianglePositiveFraction(a, d, cc));
      if (kept !== c) {
        at[2 * kept] = fi;
        at[2 * kept + 1] = fj;
        for (let q = 0; q < 4; q++) corners[4 * kept + q] = corners[4 * c + q]!;
      }
      kept++;
    }
    list.count = kept;
    this.simpleArea = area;
    this.simpleError = error;
    this.simplePartialLeft = partialLeft;
  }

  /**
   * Whether a corner value at fine-lattice node (fi, fj) is the usability margin itself: true for
   * sub-samples, and for coarse nodes unless masked out as a usable node of another region.
   */
  private isTrue(fi: number, fj: number, value: number): boolean {
    const mask = (1 << MAX_LEVEL) - 1;
    if ((fi & mask) !== 0 || (fj & mask) !== 0) return true;
    return value === this.grid!.values[(fj >> MAX_LEVEL) * this.grid!.nx + (fi >> MAX_LEVEL)]!;
  }

  /** Appends points to the boundary list. */
  private appendBoundary(points: Float64Array, count: number): void {
    const need = 2 * (this.boundaryCount + count);
    if (need > this.boundary.length) {
      const grown = new Float64Array(Math.max(2 * this.boundary.length, need));
      grown.set(this.boundary.subarray(0, 2 * this.boundaryCount));
      this.boundary = grown;
    }
    this.boundary.set(points.subarray(0, 2 * count), 2 * this.boundaryCount);
    this.boundaryCount += count;
  }

  /**
   * Radius of the largest circle inside the evaluation region (m), without a distance transform of
   * a fine grid: the coarse grid's deepest nodes (MarginGrid.deepCandidates) are the starting
   * centres; each is scored against the boundary points of the finest level (bucketed by coarse
   * cell, nearest point by rings of cells: PointBuckets), and the best few climb the medial axis of the boundary
   * points to the largest empty circle (climb, emptyCircle.ts).
   * Call after area(0, …).
   */
  inscribedRadius(region: number): number {
    const grid = this.grid!;
    if (region < 0 || this.boundaryCount === 0) return 0;
    this.buckets.build(this.boundary, this.boundaryCount, grid.x0, grid.y0, grid.h, grid.nx, grid.ny);
    const { nx, h } = grid;
    // The deepest candidate nodes (coarse distance transform) of every coarse region joined to the
    // evaluation region are the starting centres.
    const starts = this.starts;
    starts.fill(-1);
    const scores = this.startScores;
    scores.fill(-1);
    for (let label = 0; label < grid.regionCount; label++) {
      if (this.merged[label] !== 1) continue;
      const nc = grid.deepCandidates(label);
      const nodes = grid.candidateNodes;
      for (let c = 0; c < nc; c++) {
        const k = nodes[c]!;
        const depth = grid.depth(k);
        for (let s = 0; s < starts.length; s++) {
          if (depth > scores[s]!) {
            for (let t = starts.length - 1; t > s; t--) { scores[t] = scores[t - 1]!; starts[t] = starts[t - 1]!; }
            scores[s] = depth;
            starts[s] = k;
            break;
          }
        }
      }
    }
    // Exact distances of the starts; only those within half a cell of the best are searched from,
    let first = 0;
    for (let s = 0; s < starts.length && starts[s]! >= 0; s++) {
      const k = starts[s]!;
      scores[s] = this.nearest(grid.x0 + (k % nx) * h, grid.y0 + Math.floor(k / nx) * h);
      if (scores[s]! > first) first = scores[s]!;
    }
    // At most the SEARCHES best of them, in order of their distance.
    let climbs = 0;
    for (let searched = 0; searched < SEARCHES; searched++) {
      let pick = -1;
      for (let s = 0; s < starts.length && starts[s]! >= 0; s++) {
        if (scores[s]! >= first - 0.5 * h && (pick < 0 || scores[s]! > scores[pick]!)) pick = s;
      }
      if (pick < 0) break;
      const k = starts[pick]!;
      scores[pick] = -1;
      // A start next to one already searched climbs the same hill.
      let near = false;
      for (let t = 0; t < searched; t++) {
        const q = this.searchedFrom[t]!;
        if (Math.abs((q % nx) - (k % nx)) <= 1 && Math.abs(Math.floor(q / nx) - Math.floor(k / nx)) <= 1) near = true;
      }
      this.searchedFrom[searched] = k;
      if (near) continue;
      const value = this.climb(grid.x0 + (k % nx) * h, grid.y0 + Math.floor(k / nx) * h, h);
      this.climbX[climbs] = this.circle.x;
      this.climbY[climbs] = this.circle.y;
      this.climbR[climbs] = value;
      climbs++;
    }
    return this.repairBest(climbs, h);
  }

  /**
   * The largest of the ascents' circles, checked against the field itself: the boundary points are
   * crossings and points of fitted parabolas, and where a cell holds a kink of the boundary a
   * parabola point can lie well inside the region (the circle then stops short) or outside it (the
   * circle pokes out). So the best circle is repaired (repairCircle) and climbed again; while another
   * ascent's unrepaired radius exceeds the best repaired one, that one is repaired too.
   */
  private repairBest(climbs: number, h: number): number {
    let best = 0;
    for (;;) {
      let pick = -1;
      for (let c = 0; c < climbs; c++) {
        if (this.climbR[c]! > best && (pick < 0 || this.climbR[c]! > this.climbR[pick]!)) pick = c;
      }
      if (pick < 0) return best;
      const value = this.repairCircle(this.climbX[pick]!, this.climbY[pick]!, this.climbR[pick]!, h);
      this.climbR[pick] = -1;
      if (value > best) best = value;
    }
  }

  /**
   * Up to REPAIR_ROUNDS times: each point the circle rests on that lies inside the region is moved
   * out to the boundary along the ray from the centre, and the field is sampled at REPAIR_PROBES
   * points just inside the circle, where any that lies outside the region adds the boundary's point on
   * its ray; after a change the ascent is run again from the centre. Returns the radius (m).
   */
  private repairCircle(x: number, y: number, radius: number, h: number): number {
    let cx = x;
    let cy = y;
    let r = radius;
    const circle = this.circle;
    for (let round = 0; round < REPAIR_ROUNDS; round++) {
      let changed = false;
      const inside = this.sampleAt(cx, cy);
      if (!(inside >= 0)) return r;
      // Points the circle rests on: those within a hair of its radius.
      const points = this.boundary;
      const count = this.contacts(cx, cy, r);
      for (let c = 0; c < count; c++) {
        const p = this.contactList[c]!;
        const dx = points[2 * p]! - cx;
        const dy = points[2 * p + 1]! - cy;
        const d = Math.hypot(dx, dy);
        if (!(d > 0) || !(this.sampleAt(points[2 * p]!, points[2 * p + 1]!) > 0)) continue;
        // Inside: the boundary lies farther out along the ray.
        // Small first steps: a gap to another region narrower than the step could be stepped over.
        const t = this.rayBoundary(cx, cy, dx / d, dy / d, d, h / 16);
        if (t > d * (1 + REPAIR_SLACK)) {
          points[2 * p] = cx + (t * dx) / d;
          points[2 * p + 1] = cy + (t * dy) / d;
          changed = true;
        }
      }
      for (let q = 0; q < REPAIR_PROBES; q++) {
        if (this.probeCircle(cx, cy, r, Math.cos((2 * Math.PI * q) / REPAIR_PROBES), Math.sin((2 * Math.PI * q) / REPAIR_PROBES))) changed = true;
      }
      // Gaps: between a point near the circle and the point written next to it (the same cell's
      // crossing, arc point or parabola point), the boundary may bulge into the circle where the
      // points are sparse (cells whose parabola was not written): probed towards the gap's middle.
      const near = this.contacts(cx, cy, r * (1 + GAP_REACH));
      for (let c = 0; c < near; c++) {
        const p = this.contactList[c]!;
        for (let q = p - 1; q <= p + 1; q += 2) {
          if (q < 0 || q >= this.boundaryCount) continue;
          const mx = 0.5 * (points[2 * p]! + points[2 * q]!) - cx;
          const my = 0.5 * (points[2 * p + 1]! + points[2 * q + 1]!) - cy;
          const m = Math.hypot(mx, my);
          if (m > 0 && m < r * (1 + GAP_REACH) && this.probeCircle(cx, cy, r, mx / m, my / m)) changed = true;
        }
      }
      if (!changed) return r;
      const grid = this.grid!;
      this.buckets.build(this.boundary, this.boundaryCount, grid.x0, grid.y0, grid.h, grid.nx, grid.ny);
      r = this.climb(cx, cy, h);
      cx = circle.x;
      cy = circle.y;
    }
    return r;
  }

  /**
   * Samples the field just inside the circle of radius r about (cx, cy) in unit direction (ux, uy);
   * where it lies outside the region, adds the boundary's point on that ray. Returns whether it did.
   */
  private probeCircle(cx: number, cy: number, r: number, ux: number, uy: number): boolean {
    const rp = r * (1 - REPAIR_SLACK);
    if (this.sampleAt(cx + rp * ux, cy + rp * uy) >= 0) return false;
    const t = this.rayBoundary(cx, cy, ux, uy, 0, rp);
    this.pushBoundary(cx + t * ux, cy + t * uy);
    return true;
  }

  /** Indices of the boundary points within r (plus a hair, 1e-6 relative) of (cx, cy) into contactList (at most MAX_CONTACTS); their count. */
  private contacts(cx: number, cy: number, r: number): number {
    const points = this.boundary;
    const reach = r * (1 + 1e-6);
    const reachSq = reach * reach;
    let count = 0;
    for (let p = 0; p < this.boundaryCount && count < MAX_CONTACTS; p++) {
      const dx = points[2 * p]! - cx;
      const dy = points[2 * p + 1]! - cy;
      if (dx * dx + dy * dy <= reachSq) this.contactList[count++] = p;
    }
    return count;
  }

  /** The usability margin at a point (sampled, counted; not cached). */
  private sampleAt(x: number, y: number): number {
    this.subsamples++;
    this.sampler!(x, y, this.point);
    return this.point[0]!;
  }

  /**
   * The boundary's distance (m) along the ray from (cx, cy) in unit direction (ux, uy): the field is
   * ≥ 0 at distance t0; from there, outwards in steps of `span` (doubling, at most 6) until it is
   * negative, then regula falsi (Illinois) to 1e-4 of the bracket. The point stays inside the grid.
   */
  private rayBoundary(cx: number, cy: number, ux: number, uy: number, t0: number, span: number): number {
    const grid = this.grid!;
    const xMax = grid.x0 + (grid.nx - 1) * grid.h;
    const yMax = grid.y0 + (grid.ny - 1) * grid.h;
    // Largest t that keeps the point inside the grid.
    let limit = Infinity;
    if (ux > 0) limit = Math.min(limit, (xMax - cx) / ux);
    if (ux < 0) limit = Math.min(limit, (grid.x0 - cx) / ux);
    if (uy > 0) limit = Math.min(limit, (yMax - cy) / uy);
    if (uy < 0) limit = Math.min(limit, (grid.y0 - cy) / uy);
    let a = t0;
    let fa = this.sampleAt(cx + a * ux, cy + a * uy);
    let b = Math.min(t0 + span, limit);
    let fb = this.sampleAt(cx + b * ux, cy + b * uy);
    for (let grow = 0; fb >= 0 && grow < 6 && b < limit; grow++) {
      a = b;
      fa = fb;
      span *= 2;
      b = Math.min(b + span, limit);
      fb = this.sampleAt(cx + b * ux, cy + b * uy);
    }
    if (fb >= 0 || !(fa >= 0)) return fb >= 0 ? b : a;
    const tolerance = 1e-4 * (b - a);
    let side = 0;
    for (let step = 0; step < 12 && b - a > tolerance; step++) {
      const t = fa > 0 || fb < 0 ? (a * fb - b * fa) / (fb - fa) : 0.5 * (a + b);
      const m = t > a && t < b ? t : 0.5 * (a + b);
      const f = this.sampleAt(cx + m * ux, cy + m * uy);
      if (f >= 0) {
        a = m;
        fa = f;
        if (side === 1) fb *= 0.5;
        side = 1;
      } else {
        b = m;
        fb = f;
        if (side === -1) fa *= 0.5;
        side = -1;
      }
      if (Math.abs(b - a) <= tolerance) break;
    }
    // The outside end of the bracket: a point on or just beyond the boundary.
    return b;
  }

  /**
   * The empty circle grown from (x, y) (emptyCircle.ts), then hops: the medial axis of a long or
   * uneven region has shallow local maxima, so around each one the distance is polled at eight
   * points at h/2, h/4, h/8 (inside the circle, so inside the region); a better one starts a new
   * ascent. Returns the largest radius reached (m).
   */
  private climb(x: number, y: number, h: number): number {
    const circle = this.circle;
    let value = circle.grow(this.buckets, x, y);
    let cx = circle.x;
    let cy = circle.y;
    for (let hop = 0.5 * h; hop > 0.1 * h; ) {
      let moved = false;
      if (hop < value) {
        for (let dir = 0; dir < 8 && !moved; dir++) {
          const px = cx + hop * HOP_X[dir]!;
          const py = cy + hop * HOP_Y[dir]!;
          if (!(this.nearest(px, py) > value * (1 + 1e-9))) continue;
          const next = circle.grow(this.buckets, px, py);
          if (next > value) {
            value = next;
            cx = circle.x;
            cy = circle.y;
            moved = true;
          }
        }
      }
      hop = moved ? 0.5 * h : 0.5 * hop;
    }
    return value;
  }

  private readonly circle = new EmptyCircle();
  private readonly climbX = new Float64Array(SEARCHES);
  private readonly climbY = new Float64Array(SEARCHES);
  private readonly climbR = new Float64Array(SEARCHES);
  private readonly contactList = new Int32Array(MAX_CONTACTS);
  private readonly starts = new Int32Array(8);
  private readonly searchedFrom = new Int32Array(8);
  private readonly startScores = new Float64Array(8);
  private readonly buckets = new PointBuckets();

  /** Distance (m) from (x, y) to the nearest boundary point (after buckets.build). */
  private nearest(x: number, y: number): number {
    this.buckets.nearest(x, y);
    return Math.sqrt(this.buckets.nearestSq);
  }

  private fullChildren = 0;

  /** One child sub-cell: counts it when wholly inside, lists it when undecided. */
  private child(out: CellList, i: number, j: number, a: number, b: number, c: number, d: number): void {
    if (a >= 0 && b >= 0 && c >= 0 && d >= 0) {
      this.fullChildren++;
      return;
    }
    if (a < 0 && b < 0 && c < 0 && d < 0) return;
    out.push(i, j, a, b, c, d);
  }

  /** Whether a node of the ring around coarse cell (i, j) lies in the region (masked ≥ 0 there). */
  private nearRegion(i: number, j: number): boolean {
    const { nx, ny } = this.grid!;
    const m = this.masked;
    for (let jj = Math.max(j - 1, 0); jj <= Math.min(j + 2, ny - 1); jj++) {
      for (let ii = Math.max(i - 1, 0); ii <= Math.min(i + 2, nx - 1); ii++) if (m[jj * nx + ii]! >= 0) return true;
    }
    return false;
  }

  /** Zero crossings along the edges of the finest undecided sub-cells of the workspace field. */
  private collectBoundary(level: number): void {
    const step = (1 << MAX_LEVEL) >> level;
    const list = this.current;
    const grid = this.grid!;
    for (let c = 0; c < list.count; c++) {
      const fi = list.at[2 * c]!;
      const fj = list.at[2 * c + 1]!;
      const a = list.corners[4 * c]!;
      const b = list.corners[4 * c + 1]!;
      const cc = list.corners[4 * c + 2]!;
      const d = list.corners[4 * c + 3]!;
      // Bottom and left edges of every cell, plus top and right (shared edges give repeated points; harmless).
      this.crossing(a, b, fi, fj, step, 0, grid);
      this.crossing(a, cc, fi, fj, 0, step, grid);
      this.crossing(cc, d, fi, fj + step, step, 0, grid);
      this.crossing(b, d, fi + step, fj, 0, step, grid);
    }
  }

  private crossing(v: number, w: number, fi: number, fj: number, di: number, dj: number, grid: MarginGrid): void {
    if ((v >= 0) === (w >= 0)) return;
    const t = v / (v - w);
    this.pushBoundary(grid.x0 + (fi + t * di) * this.hf, grid.y0 + (fj + t * dj) * this.hf);
  }

  private pushBoundary(x: number, y: number): void {
    if (2 * this.boundaryCount + 2 > this.boundary.length) {
      const grown = new Float64Array(this.boundary.length * 2);
      grown.set(this.boundary);
      this.boundary = grown;
    }
    this.boundary[2 * this.boundaryCount] = x;
    this.boundary[2 * this.boundaryCount + 1] = y;
    this.boundaryCount++;
  }
}
