/**
 * Arms of the evaluation region that the adaptive refinement (adaptive.ts) cannot see from the
 * corners of its cells, measured on a dense lattice instead. An arm is a strip of the usable set
 * narrower than a coarse cell running between nodes that are all outside (or a tapering tip): no
 * corner of its cells is inside, and a refined cell drops the children whose corners miss it.
 *
 * Detection (derived here): where the usable set is an intersection of half-planes the margin is the
 * smallest of several smooth terms, so across a strip it is a ridge with a kink on top. Along each
 * row and column of the coarse grid, an edge whose two ends are outside is tested by extending the
 * line through the two nodes before it and the line through the two nodes after it; when they cross
 * on the edge at a margin ≥ 0 (the two lines are exact for the smallest of two linear terms), a ridge
 * may cross the edge and both cells along it are marked, and the cells around a marked cell with no
 * node of the region join (the arm may turn away from the row). A cell with two or more nodes of the
 * region is left to the corner refinement.
 *
 * Tips (derived here): where two terms of the margin meet inside a cell with one node of the region,
 * the region's corner there may be a long thin wedge that leaves the refined children through edges
 * whose ends are all outside. On a field smooth at the cell's scale the centre's value departs from
 * the mean of the four corners by a second-order amount (an eighth of the cell's area times the
 * field's Laplacian), at a kink by a first-order one. So such a cell is sampled at its centre (the
 * refinement's first sample anyway) and marked when the centre stands above the corners' mean by more
 * than KINK of their spread. KINK is chosen, not derived: on the 30 3-DOF reference designs of
 * tests/mechanics/adaptive-accuracy.test.ts, 297 of the 558 cells with one node of the region lie
 * within ±0.03 and 40 above 0.25, among them the two wedges that were lost (0.34 and 0.55).
 *
 * Marked cells are left out of the corner refinement. Each is sampled on a lattice of SPLIT × SPLIT
 * sub-cells (through the sampler's cache), the usable sub-nodes connected to the evaluation region
 * are found by a flood fill over the marked cells together (seeded at the region's nodes and on the
 * sides shared with unmarked cells that have a node of the region), and their area is the sub-cell
 * estimate on two triangles per sub-cell with the unconnected nodes counted as outside (a part of
 * another region that enters a marked cell is not counted).
 *
 * On the lattice the margin is treated as locally concave (the smallest of terms nearly linear over a
 * sub-cell), whose usable set is convex: two usable nodes of one sub-cell are connected along the
 * segment between them, so the flood also steps diagonally, and each sub-cell is split into its two
 * triangles along the diagonal with the larger mean (the split whose linear pieces lie closer to a
 * concave field). An arm narrower than a sub-cell crosses lattice edges whose ends are both outside:
 * the ridge test above, run on the lattice's rows and columns at an outside node next to the flooded
 * set, lets the flood pass such a node (a passage adds no area). The error estimate is a third of the
 * difference from the same estimate on every other sub-node (Richardson, h²; from memory), plus, for
 * every passage, its width on the crossed edge times one sub-cell (the strip the estimate leaves out
 * between two lattice lines). A ridge that shows on no coarse row or column, in a cell with no node
 * of the region, is still missed.
 */
import type { MarginGrid } from './grid.js';
import { trianglePositiveFraction } from './grid.js';

/** Sub-cells per coarse cell side on the dense lattice (divides 2^MAX_LEVEL of adaptive.ts). */
export const SPLIT = 16;
const SIDE = SPLIT + 1;
const NODES = SIDE * SIDE;
/** Most cells measured densely per design (beyond it the marks are dropped: the corner refinement takes them). */
const MAX_CELLS = 48;
/** A cell with one node of the region is marked when its centre exceeds its corners' mean by this share of their spread (a kink). */
const KINK = 0.25;

/** What the dense measure needs from the adaptive sampler. */
export interface ThinHost {
  /** Usability margin at fine-lattice node (fi, fj) of the sampler (cached; unmasked). */
  sample(fi: number, fj: number): number;
  /** Adds a boundary point (m) to the workspace boundary of the sampler. */
  addBoundaryPoint(x: number, y: number): void;
}

/** Dense measure of thin parts; one per AdaptiveArea (owns its buffers). */
export class ThinParts {
  /** Per coarse cell: its slot among the marked cells, or −1. */
  private slot = new Int32Array(0);
  private cells = new Int32Array(MAX_CELLS);
  private count = 0;
  private readonly values = new Float64Array(MAX_CELLS * NODES);
  private readonly reached = new Uint8Array(MAX_CELLS * NODES);
  private readonly queue = new Int32Array(MAX_CELLS * NODES);
  /** Area (m²) and its error estimate of the last `measure`. */
  area = 0;
  error = 0;
  /** Sum of the passages' widths on their crossed edges (lattice steps) in the last flood. */
  private passages = 0;

  constructor(private readonly host: ThinHost) {}

  /** Whether coarse cell k (lower-left node index) was marked by the last `mark`. */
  marked(k: number): boolean {
    return this.count > 0 && this.slot[k]! >= 0;
  }

  /**
   * Marks the cells an arm or a tip may cross (see the file comment). `masked`: the region-masked
   * margins of the coarse nodes (≥ 0 only in the evaluation region); `fineStep`: fine-lattice units
   * per coarse cell (2^MAX_LEVEL).
   */
  mark(grid: MarginGrid, masked: Float64Array, fineStep: number): void {
    const { nx, ny, values } = grid;
    if (this.slot.length < grid.capacity) this.slot = new Int32Array(grid.capacity);
    this.slot.fill(-1, 0, nx * ny);
    this.count = 0;
    this.masked = masked;
    this.nx = nx;
    this.ny = ny;
    this.fineStep = fineStep;
    for (let j = 0; j < ny; j++) {
      for (let i = 1; i + 2 < nx; i++) {
        const k = j * nx + i;
        if (ridgeCrosses(values[k - 1]!, values[k]!, values[k + 1]!, values[k + 2]!)) {
          this.add(k - nx, j > 0);
          this.add(k, j + 1 < ny);
        }
      }
    }
    for (let i = 0; i < nx; i++) {
      for (let j = 1; j + 2 < ny; j++) {
        const k = j * nx + i;
        if (ridgeCrosses(values[k - nx]!, values[k]!, values[k + nx]!, values[k + 2 * nx]!)) {
          this.add(k - 1, i > 0);
          this.add(k, i + 1 < nx);
        }
      }
    }
    // An arm may leave the rows and columns where its ridge shows: the cells around an outside one join.
    const ridgeCells = this.count;
    for (let s = 0; s < ridgeCells; s++) {
      const k = this.cells[s]!;
      if (touchesRegion(masked, k, nx)) continue;
      const i = k % nx;
      const j = (k - i) / nx;
      for (let dj = -1; dj <= 1; dj++) {
        for (let di = -1; di <= 1; di++) {
          if (i + di >= 0 && j + dj >= 0 && i + di + 1 < nx && j + dj + 1 < ny) this.add(k + dj * nx + di, true);
        }
      }
    }
    this.markKinks(grid, masked);
  }

  /** Marks the unmarked cells with one node of the region whose centre shows a kink (see the file comment). */
  private markKinks(grid: MarginGrid, masked: Float64Array): void {
    const { nx, ny, values } = grid;
    const half = this.fineStep >> 1;
    for (let j = 0; j + 1 < ny; j++) {
      for (let i = 0; i + 1 < nx; i++) {
        const k = j * nx + i;
        if (this.slot[k]! >= 0 || this.count >= MAX_CELLS) continue;
        if ((masked[k]! >= 0 ? 1 : 0) + (masked[k + 1]! >= 0 ? 1 : 0) + (masked[k + nx]! >= 0 ? 1 : 0) + (masked[k + nx + 1]! >= 0 ? 1 : 0) !== 1) continue;
        const a = values[k]!;
        const b = values[k + 1]!;
        const c = values[k + nx]!;
        const d = values[k + nx + 1]!;
        const spread = Math.max(a, b, c, d) - Math.min(a, b, c, d);
        const centre = this.host.sample(i * this.fineStep + half, j * this.fineStep + half);
        if (centre - 0.25 * (a + b + c + d) > KINK * spread) this.add(k, true);
      }
    }
  }

  private masked: Float64Array = new Float64Array(0);
  private nx = 0;
  private ny = 0;

  private add(k: number, valid: boolean): void {
    if (!valid || this.slot[k]! >= 0 || this.count >= MAX_CELLS) return;
    // A cell with two or more nodes of the region is left to the corner refinement (an arm's root has one).
    const m = this.masked;
    const nx = this.nx;
    if ((m[k]! >= 0 ? 1 : 0) + (m[k + 1]! >= 0 ? 1 : 0) + (m[k + nx]! >= 0 ? 1 : 0) + (m[k + nx + 1]! >= 0 ? 1 : 0) > 1) return;
    this.slot[k] = this.count;
    this.cells[this.count++] = k;
  }

  /**
   * Samples the marked cells densely, floods the usable sub-nodes connected to the region and
   * measures them (area, error); their boundary crossings go to the host.
   */
  measure(grid: MarginGrid, masked: Float64Array): void {
    this.area = 0;
    this.error = 0;
    if (this.count === 0) return;
    this.values.fill(Number.NaN, 0, this.count * NODES);
    this.flood(grid, masked);
    const h = grid.h;
    let fine = 0;
    let coarse = 0;
    for (let s = 0; s < this.count; s++) {
      fine += this.cellArea(s, 1);
      coarse += this.cellArea(s, 2);
      this.boundary(grid, s, 1 / SPLIT);
    }
    const sub = (h / SPLIT) ** 2;
    this.area = fine * sub;
    this.error = (Math.abs(fine - coarse) / 3 + this.passages) * sub;
  }

  private fineStep = 0;

  /** Margin at node (a, b) of slot s, sampled when first asked for (only nodes near the flooded set are). */
  private value(s: number, a: number, b: number): number {
    const q = s * NODES + b * SIDE + a;
    const v = this.values[q]!;
    if (v === v) return v;
    const k = this.cells[s]!;
    const nx = this.nx;
    const step = this.fineStep / SPLIT;
    const w = this.host.sample((k % nx) * this.fineStep + a * step, Math.floor(k / nx) * this.fineStep + b * step);
    this.values[q] = w;
    return w;
  }

  /** Margin at lattice node (a, b) of slot s, which may lie beyond its cell (NaN beyond the grid). */
  private around(s: number, a: number, b: number): number {
    if (a >= 0 && a <= SPLIT && b >= 0 && b <= SPLIT) return this.value(s, a, b);
    const k = this.cells[s]!;
    const step = this.fineStep / SPLIT;
    const fi = (k % this.nx) * this.fineStep + a * step;
    const fj = Math.floor(k / this.nx) * this.fineStep + b * step;
    if (fi < 0 || fj < 0 || fi > (this.nx - 1) * this.fineStep || fj > (this.ny - 1) * this.fineStep) return Number.NaN;
    return this.host.sample(fi, fj);
  }

  /**
   * The ridge test (ridgeWidth) on the lattice edges of the outside node (a, b) of slot s along its
   * row and column: the widest crossing found (lattice steps), or −1 when no ridge crosses them.
   */
  private ridgeAt(s: number, a: number, b: number): number {
    const v = this.value(s, a, b);
    let width = -1;
    for (let axis = 0; axis < 2; axis++) {
      const da = 1 - axis;
      const db = axis;
      const next = this.around(s, a + da, b + db);
      const prev = this.around(s, a - da, b - db);
      // Each edge needs its far end outside and the margin rising towards it (lazy samples), and a
      // usable point of the fine lattice inside it.
      if (next < 0 && v > prev) {
        const w = ridgeWidth(prev, v, next, this.around(s, a + 2 * da, b + 2 * db));
        if (w > width && this.edgeHasUsable(s, a, b, da, db)) width = w;
      }
      if (prev < 0 && next < v) {
        const w = ridgeWidth(this.around(s, a - 2 * da, b - 2 * db), prev, v, next);
        if (w > width && this.edgeHasUsable(s, a, b, -da, -db)) width = w;
      }
    }
    return width;
  }

  /**
   * Whether a node of the sampler's fine lattice strictly inside the lattice edge from (a, b) of slot
   * s towards (a + da, b + db) is usable. The ridge test extrapolates the two lines on either side of
   * the edge; where two regions only touch (a pinch, their margins meeting below zero) the lines can
   * cross at a value ≥ 0 with nothing usable on the edge, and the flood would pass into the other
   * region: one 3-PRR reference design came out 1.3 % high so. An arm narrower than the fine lattice's
   * spacing (1/64 of a coarse cell) is given up with it.
   */
  private edgeHasUsable(s: number, a: number, b: number, da: number, db: number): boolean {
    const k = this.cells[s]!;
    const step = this.fineStep / SPLIT;
    if (step <= 1) return true;
    const fi = (k % this.nx) * this.fineStep + a * step;
    const fj = Math.floor(k / this.nx) * this.fineStep + b * step;
    const maxI = (this.nx - 1) * this.fineStep;
    const maxJ = (this.ny - 1) * this.fineStep;
    for (let m = 1; m < step; m++) {
      const i = fi + da * m;
      const j = fj + db * m;
      if (i < 0 || j < 0 || i > maxI || j > maxJ) return false;
      if (this.host.sample(i, j) >= 0) return true;
    }
    return false;
  }

  /** Value of node (a, b) of slot s with unconnected usable nodes counted as outside. */
  private connected(s: number, a: number, b: number): number {
    const v = this.value(s, a, b);
    return v >= 0 && this.reached[s * NODES + b * SIDE + a] !== 1 ? -v - 1e-300 : v;
  }

  /** Whether a node of the sub-cell (a, b)–(a + stride, b + stride) of slot s was reached by the flood. */
  private touched(s: number, a: number, b: number, stride: number): boolean {
    const r = this.reached;
    const q = s * NODES + b * SIDE + a;
    return r[q] === 1 || r[q + stride] === 1 || r[q + stride * SIDE] === 1 || r[q + stride * SIDE + stride] === 1;
  }

  /** Sub-cell estimate of slot s in sub-cells of `stride` lattice steps (in sub-cell units of stride 1). */
  private cellArea(s: number, stride: number): number {
    let sum = 0;
    for (let b = 0; b < SPLIT; b += stride) {
      for (let a = 0; a < SPLIT; a += stride) {
        // A sub-cell with no flooded corner has no connected part.
        if (!this.touched(s, a, b, stride)) continue;
        const v00 = this.connected(s, a, b);
        const v10 = this.connected(s, a + stride, b);
        const v01 = this.connected(s, a, b + stride);
        const v11 = this.connected(s, a + stride, b + stride);
        // Split along the diagonal with the larger mean (see the file comment).
        if (v10 + v01 > v00 + v11) sum += 0.5 * (trianglePositiveFraction(v10, v11, v01) + trianglePositiveFraction(v10, v01, v00));
        else sum += 0.5 * (trianglePositiveFraction(v00, v10, v11) + trianglePositiveFraction(v00, v11, v01));
      }
    }
    return sum * stride * stride;
  }

  /**
   * Flood fill of the usable sub-nodes over the marked cells: seeded at the region's coarse nodes and
   * on the sides shared with unmarked cells that have a node of the region; from a usable node to its
   * eight neighbours that are usable, and to its four neighbours that are passages (ridgeAt), from a
   * passage to its four neighbours; a node on a side shared by two marked cells passes to both.
   */
  private flood(grid: MarginGrid, masked: Float64Array): void {
    const { nx, ny } = grid;
    const reached = this.reached;
    reached.fill(0, 0, this.count * NODES);
    this.passages = 0;
    let tail = 0;
    const push = (s: number, a: number, b: number): void => {
      const q = s * NODES + b * SIDE + a;
      if (reached[q] === 1 || !(this.value(s, a, b) >= 0)) return;
      reached[q] = 1;
      this.queue[tail++] = q;
    };
    // reached: 1 usable and flooded, 2 a passage, 3 an outside node found no passage.
    const pass = (s: number, a: number, b: number): void => {
      const q = s * NODES + b * SIDE + a;
      if (reached[q] !== 0) return;
      if (this.value(s, a, b) >= 0) {
        reached[q] = 1;
      } else {
        const width = this.ridgeAt(s, a, b);
        reached[q] = width >= 0 ? 2 : 3;
        if (width < 0) return;
        this.passages += width;
      }
      this.queue[tail++] = q;
    };
    for (let s = 0; s < this.count; s++) {
      const k = this.cells[s]!;
      const i = k % nx;
      const j = (k - i) / nx;
      for (let c = 0; c < 4; c++) if (masked[k + (c & 1) + (c >> 1) * nx]! >= 0) push(s, (c & 1) * SPLIT, (c >> 1) * SPLIT);
      // Sides shared with an unmarked cell that touches the region: every usable node on them.
      for (let side = 0; side < 4; side++) {
        const di = side === 0 ? -1 : side === 1 ? 1 : 0;
        const dj = side === 2 ? -1 : side === 3 ? 1 : 0;
        const ni = i + di;
        const nj = j + dj;
        if (ni < 0 || nj < 0 || ni + 1 >= nx || nj + 1 >= ny) continue;
        const n = nj * nx + ni;
        if (this.slot[n]! >= 0 || !touchesRegion(masked, n, nx)) continue;
        for (let t = 0; t < SIDE; t++) {
          if (di !== 0) push(s, di < 0 ? 0 : SPLIT, t);
          else push(s, t, dj < 0 ? 0 : SPLIT);
        }
      }
    }
    for (let head = 0; head < tail; head++) {
      const q = this.queue[head]!;
      const s = Math.floor(q / NODES);
      const r = q - s * NODES;
      const a = r % SIDE;
      const b = (r - a) / SIDE;
      if (a > 0) pass(s, a - 1, b);
      if (a < SPLIT) pass(s, a + 1, b);
      if (b > 0) pass(s, a, b - 1);
      if (b < SPLIT) pass(s, a, b + 1);
      if (reached[q] === 1) {
        for (let d = 0; d < 4; d++) {
          const da = d & 1 ? 1 : -1;
          const db = d & 2 ? 1 : -1;
          if (a + da >= 0 && a + da <= SPLIT && b + db >= 0 && b + db <= SPLIT) push(s, a + da, b + db);
        }
      }
      if (a === 0 || a === SPLIT || b === 0 || b === SPLIT) this.alias(s, a, b, nx, pass);
    }
  }

  /** Passes a node on the side of slot s's cell to the marked cells that share it. */
  private alias(s: number, a: number, b: number, nx: number, push: (s: number, a: number, b: number) => void): void {
    const k = this.cells[s]!;
    for (let dj = -1; dj <= 1; dj++) {
      if ((dj < 0 && b !== 0) || (dj > 0 && b !== SPLIT)) continue;
      for (let di = -1; di <= 1; di++) {
        if ((di < 0 && a !== 0) || (di > 0 && a !== SPLIT) || (di === 0 && dj === 0)) continue;
        const n = k + dj * nx + di;
        if (n < 0 || n >= this.slot.length) continue;
        const t = this.slot[n]!;
        if (t >= 0) push(t, a - di * SPLIT, b - dj * SPLIT);
      }
    }
  }

  /** Zero crossings on the sub-cell edges of slot s (connected values), as boundary points. */
  private boundary(grid: MarginGrid, s: number, frac: number): void {
    const k = this.cells[s]!;
    const x0 = grid.x0 + (k % grid.nx) * grid.h;
    const y0 = grid.y0 + Math.floor(k / grid.nx) * grid.h;
    const d = frac * grid.h;
    const r = this.reached;
    for (let b = 0; b <= SPLIT; b++) {
      for (let a = 0; a <= SPLIT; a++) {
        const q = s * NODES + b * SIDE + a;
        // A crossing has a flooded end.
        if (r[q] !== 1 && !(a < SPLIT && r[q + 1] === 1) && !(b < SPLIT && r[q + SIDE] === 1)) continue;
        const v = this.connected(s, a, b);
        if (a < SPLIT) {
          const w = this.connected(s, a + 1, b);
          if ((v >= 0) !== (w >= 0)) this.host.addBoundaryPoint(x0 + (a + v / (v - w)) * d, y0 + b * d);
        }
        if (b < SPLIT) {
          const w = this.connected(s, a, b + 1);
          if ((v >= 0) !== (w >= 0)) this.host.addBoundaryPoint(x0 + a * d, y0 + (b + v / (v - w)) * d);
        }
      }
    }
  }
}

/** Whether coarse cell n has a node of the region at a corner. */
function touchesRegion(masked: Float64Array, n: number, nx: number): boolean {
  return masked[n]! >= 0 || masked[n + 1]! >= 0 || masked[n + nx]! >= 0 || masked[n + nx + 1]! >= 0;
}

/**
 * Whether a ridge may cross the edge between nodes 1 and 2 of four equally spaced nodes whose middle
 * two are outside: the line through nodes 0, 1 rising, the line through nodes 2, 3 falling, and their
 * crossing on the edge at a value ≥ 0.
 */
export function ridgeCrosses(v0: number, v1: number, v2: number, v3: number): boolean {
  return ridgeWidth(v0, v1, v2, v3) >= 0;
}

/**
 * The ridge test of ridgeCrosses with the width of the strip on the edge where both lines are ≥ 0
 * (in node spacings): crest × (1/rise − 1/fall); −1 when no ridge crosses the edge.
 */
export function ridgeWidth(v0: number, v1: number, v2: number, v3: number): number {
  if (v1 >= 0 || v2 >= 0) return -1;
  const rise = v1 - v0;
  const fall = v3 - v2;
  if (!(rise > 0) || !(fall < 0)) return -1;
  // v1 + rise t = v2 + fall (t − 1) at t, the edge being t ∈ [0, 1].
  const t = (v2 - fall - v1) / (rise - fall);
  if (!(t >= 0 && t <= 1)) return -1;
  const crest = v1 + rise * t;
  return crest >= 0 ? crest * (1 / rise - 1 / fall) : -1;
}
