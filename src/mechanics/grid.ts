/**
 * Generic analysis of a scalar "margin" field sampled on a regular grid of nodes: a point is inside
 * where the margin is ≥ 0. Provides sub-cell area (linear interpolation on two triangles per cell),
 * 4-neighbour connected regions and the largest inscribed circle. Knows nothing about mechanisms, so
 * it can be tested on fields with known answers. All buffers are allocated once per grid capacity.
 */

/** Fraction of a triangle where the linear interpolant of its vertex values is ≥ 0. */
export function trianglePositiveFraction(a: number, b: number, c: number): number {
  const pa = a >= 0;
  const pb = b >= 0;
  const pc = c >= 0;
  const positives = (pa ? 1 : 0) + (pb ? 1 : 0) + (pc ? 1 : 0);
  if (positives === 3) return 1;
  if (positives === 0) return 0;
  // Put the vertex whose sign differs from the other two first.
  let lone: number, o1: number, o2: number;
  if (positives === 1) {
    if (pa) { lone = a; o1 = b; o2 = c; } else if (pb) { lone = b; o1 = a; o2 = c; } else { lone = c; o1 = a; o2 = b; }
    return (lone * lone) / ((lone - o1) * (lone - o2));
  }
  if (!pa) { lone = a; o1 = b; o2 = c; } else if (!pb) { lone = b; o1 = a; o2 = c; } else { lone = c; o1 = a; o2 = b; }
  return 1 - (lone * lone) / ((lone - o1) * (lone - o2));
}

const FAR = 1e20;

export class MarginGrid {
  /** Node count capacity. */
  readonly capacity: number;
  nx = 0;
  ny = 0;
  /** Position of node (0, 0), m. */
  x0 = 0;
  y0 = 0;
  /** Node spacing, m. */
  h = 0;
  /** Field values per node, row-major (index = j * nx + i). */
  readonly values: Float64Array;
  /** A second field of the same layout, for callers that analyse two margins from one sampling pass. */
  readonly secondary: Float64Array;
  /** Region label per node: −1 outside, else region number. */
  readonly labels: Int32Array;
  /** Node count per region label. */
  readonly regionSizes: Int32Array;
  regionCount = 0;

  private readonly queue: Int32Array;
  private readonly masked: Float64Array;
  private readonly distance: Float64Array;
  private readonly lineIn: Float64Array;
  private readonly lineOut: Float64Array;
  private readonly envelopeAt: Int32Array;
  private readonly envelopeBreak: Float64Array;
  private readonly boundaryX: Float64Array;
  private readonly boundaryY: Float64Array;
  private readonly candidates: Int32Array;

  constructor(maxNodesPerSide: number) {
    const n = maxNodesPerSide * maxNodesPerSide;
    this.capacity = n;
    this.values = new Float64Array(n);
    this.secondary = new Float64Array(n);
    this.labels = new Int32Array(n);
    this.regionSizes = new Int32Array(n);
    this.queue = new Int32Array(n);
    this.masked = new Float64Array(n);
    this.distance = new Float64Array(n);
    this.lineIn = new Float64Array(maxNodesPerSide);
    this.lineOut = new Float64Array(maxNodesPerSide);
    this.envelopeAt = new Int32Array(maxNodesPerSide);
    this.envelopeBreak = new Float64Array(maxNodesPerSide + 1);
    this.boundaryX = new Float64Array(2 * n);
    this.boundaryY = new Float64Array(2 * n);
    this.candidates = new Int32Array(MAX_CANDIDATES);
  }

  /** Lay out nodes covering [xmin, xmax] × [ymin, ymax] with `cells` cells across the longer side, padded by one cell. */
  layout(xmin: number, xmax: number, ymin: number, ymax: number, cells: number): void {
    const width = xmax - xmin;
    const height = ymax - ymin;
    const h = Math.max(width, height) / cells;
    this.h = h;
    this.nx = Math.ceil(width / h - 1e-9) + 3;
    this.ny = Math.ceil(height / h - 1e-9) + 3;
    if (this.nx * this.ny > this.capacity) throw new Error('grid capacity exceeded');
    this.x0 = xmin - h;
    this.y0 = ymin - h;
  }

  /** Area where `field` ≥ 0 over all cells, m² (sub-cell estimate on two triangles per cell). */
  positiveArea(field: Float64Array): number {
    const { nx, ny } = this;
    let cellsTotal = 0;
    for (let j = 0; j + 1 < ny; j++) {
      const row = j * nx;
      const up = row + nx;
      for (let i = 0; i + 1 < nx; i++) {
        const v00 = field[row + i]!;
        const v10 = field[row + i + 1]!;
        const v01 = field[up + i]!;
        const v11 = field[up + i + 1]!;
        if (v00 >= 0 && v10 >= 0 && v01 >= 0 && v11 >= 0) { cellsTotal += 1; continue; }
        if (v00 < 0 && v10 < 0 && v01 < 0 && v11 < 0) continue;
        cellsTotal += 0.5 * (trianglePositiveFraction(v00, v10, v11) + trianglePositiveFraction(v00, v11, v01));
      }
    }
    return cellsTotal * this.h * this.h;
  }

  /** Label 4-connected regions of nodes with values ≥ 0. Returns the region count. */
  labelRegions(): number {
    const { nx, ny, values, labels, queue, regionSizes } = this;
    const n = nx * ny;
    labels.fill(-1, 0, n);
    let count = 0;
    for (let start = 0; start < n; start++) {
      if (labels[start] !== -1 || !(values[start]! >= 0)) continue;
      let head = 0;
      let tail = 0;
      queue[tail++] = start;
      labels[start] = count;
      while (head < tail) {
        const k = queue[head++]!;
        const i = k % nx;
        const j = (k - i) / nx;
        if (i > 0 && labels[k - 1] === -1 && values[k - 1]! >= 0) { labels[k - 1] = count; queue[tail++] = k - 1; }
        if (i + 1 < nx && labels[k + 1] === -1 && values[k + 1]! >= 0) { labels[k + 1] = count; queue[tail++] = k + 1; }
        if (j > 0 && labels[k - nx] === -1 && values[k - nx]! >= 0) { labels[k - nx] = count; queue[tail++] = k - nx; }
        if (j + 1 < ny && labels[k + nx] === -1 && values[k + nx]! >= 0) { labels[k + nx] = count; queue[tail++] = k + nx; }
      }
      regionSizes[count] = tail;
      count++;
    }
    this.regionCount = count;
    return count;
  }

  /**
   * The usable workspace's region: with a task region, the region at its centre when that centre
   * is itself usable (else none, −1); without one, the largest region.
   */
  workspaceRegion(centre: { readonly x: number; readonly y: number } | null, centreUsable: boolean): number {
    if (!centre) return this.largestRegion();
    return centreUsable ? this.regionAt(centre.x, centre.y) : -1;
  }

  /** Label of the largest region, or −1 when there is none. */
  largestRegion(): number {
    let best = -1;
    let bestSize = 0;
    for (let r = 0; r < this.regionCount; r++) {
      if (this.regionSizes[r]! > bestSize) { bestSize = this.regionSizes[r]!; best = r; }
    }
    return best;
  }

  /**
   * Region of the point (x, y): the label of the nearest corner of its cell that lies in a region,
   * or −1. (The caller decides separately whether the point itself is inside.)
   */
  regionAt(x: number, y: number): number {
    const fi = (x - this.x0) / this.h;
    const fj = (y - this.y0) / this.h;
    const i = Math.floor(fi);
    const j = Math.floor(fj);
    if (i < 0 || j < 0 || i + 1 >= this.nx || j + 1 >= this.ny) return -1;
    let best = -1;
    let bestDist = Infinity;
    for (let dj = 0; dj <= 1; dj++) {
      for (let di = 0; di <= 1; di++) {
        const label = this.labels[(j + dj) * this.nx + i + di]!;
        if (label < 0) continue;
        const d = (fi - i - di) ** 2 + (fj - j - dj) ** 2;
        if (d < bestDist) { bestDist = d; best = label; }
      }
    }
    return best;
  }

  /** Field restricted to one region: outside nodes that are positive are mirrored to negative. */
  private maskRegion(region: number): Float64Array {
    const n = this.nx * this.ny;
    const { values, labels, masked } = this;
    for (let k = 0; k < n; k++) {
      const v = values[k]!;
      masked[k] = labels[k] === region ? v : v >= 0 ? -v - 1e-300 : v;
    }
    return masked;
  }

  /** Area of one region, m², with sub-cell boundary estimation. */
  regionArea(region: number): number {
    if (region < 0) return 0;
    return this.positiveArea(this.maskRegion(region));
  }

  /**
   * Radius of the largest circle inside one region, m. Exact Euclidean distance transform of the node
   * mask (Felzenszwalb & Huttenlocher 2012, "Distance transforms of sampled functions", Theory of
   * Computing 8) picks candidate centres; their radius is then refined against the boundary points
   * interpolated along cell edges.
   */
  inscribedRadius(region: number): number {
    const nc = this.deepCandidates(region);
    if (nc === 0) return 0;
    const { nx, ny, h } = this;
    const masked = this.masked;
    // Boundary points: crossings along edges between inside and outside nodes.
    let nb = 0;
    const bx = this.boundaryX;
    const by = this.boundaryY;
    for (let j = 0; j < ny; j++) {
      for (let i = 0; i < nx; i++) {
        const k = j * nx + i;
        const v = masked[k]!;
        if (i + 1 < nx) {
          const w = masked[k + 1]!;
          if ((v >= 0) !== (w >= 0)) {
            const t = v / (v - w);
            bx[nb] = this.x0 + (i + t) * h; by[nb] = this.y0 + j * h; nb++;
          }
        }
        if (j + 1 < ny) {
          const w = masked[k + nx]!;
          if ((v >= 0) !== (w >= 0)) {
            const t = v / (v - w);
            bx[nb] = this.x0 + i * h; by[nb] = this.y0 + (j + t) * h; nb++;
          }
        }
      }
    }
    let best = 0;
    for (let c = 0; c < nc; c++) {
      const k = this.candidates[c]!;
      const cx = this.x0 + (k % nx) * h;
      const cy = this.y0 + Math.floor(k / nx) * h;
      let minSq = Infinity;
      for (let b = 0; b < nb; b++) {
        const dx = bx[b]! - cx;
        const dy = by[b]! - cy;
        const d = dx * dx + dy * dy;
        if (d < minSq) {
          minSq = d;
          // This centre can no longer beat the best one found: stop scanning it.
          if (minSq <= best) break;
        }
      }
      if (minSq > best) best = minSq;
    }
    return Math.sqrt(best);
  }

  /** Squared distance (in cells²) of node k to the nearest node outside the region of the last deepCandidates call. */
  depth(k: number): number {
    return this.distance[k]!;
  }

  /** Candidate centres of the last deepCandidates call (node indices), deepest first. */
  get candidateNodes(): Int32Array {
    return this.candidates;
  }

  /**
   * Candidate centres of the largest circle inside one region: the nodes whose distance to the
   * nearest node outside it (exact Euclidean distance transform of the node mask, Felzenszwalb &
   * Huttenlocher 2012, "Distance transforms of sampled functions", Theory of Computing 8) is within
   * 1.5 cells of the largest; an even subsample of them when there are more than MAX_CANDIDATES
   * (a long ridge of equal distances), the deepest first. Returns their count (see candidateNodes).
   */
  deepCandidates(region: number): number {
    if (region < 0) return 0;
    const { nx, ny } = this;
    const n = nx * ny;
    const masked = this.maskRegion(region);
    const dist = this.distance;
    for (let k = 0; k < n; k++) dist[k] = masked[k]! >= 0 ? FAR : 0;
    // Columns, then rows.
    for (let i = 0; i < nx; i++) {
      for (let j = 0; j < ny; j++) this.lineIn[j] = dist[j * nx + i]!;
      this.distanceTransform1d(ny);
      for (let j = 0; j < ny; j++) dist[j * nx + i] = this.lineOut[j]!;
    }
    let maxSq = 0;
    for (let j = 0; j < ny; j++) {
      const row = j * nx;
      for (let i = 0; i < nx; i++) this.lineIn[i] = dist[row + i]!;
      this.distanceTransform1d(nx);
      for (let i = 0; i < nx; i++) {
        const d = this.lineOut[i]!;
        dist[row + i] = d;
        if (d > maxSq && d < FAR) maxSq = d;
      }
    }
    if (maxSq === 0) return 0;
    const threshold = Math.max(Math.sqrt(maxSq) - 1.5, 0) ** 2;
    let qualifying = 0;
    let deepest = -1;
    for (let k = 0; k < n; k++) {
      if (masked[k]! >= 0 && dist[k]! >= threshold) {
        qualifying++;
        if (deepest < 0 || dist[k]! > dist[deepest]!) deepest = k;
      }
    }
    const stride = Math.max(1, qualifying / (MAX_CANDIDATES - 1));
    // The deepest node first: it sets a good bound early, so the other scans stop sooner.
    let nc = 0;
    if (deepest >= 0) this.candidates[nc++] = deepest;
    let seen = 0;
    let next = 0;
    for (let k = 0; k < n && nc < MAX_CANDIDATES; k++) {
      if (k === deepest || !(masked[k]! >= 0 && dist[k]! >= threshold)) continue;
      if (seen >= next) {
        this.candidates[nc++] = k;
        next += stride;
      }
      seen++;
    }
    return nc;
  }

  /** One-dimensional squared distance transform of lineIn into lineOut (lower envelope of parabolas). */
  private distanceTransform1d(length: number): void {
    const f = this.lineIn;
    const out = this.lineOut;
    const v = this.envelopeAt;
    const z = this.envelopeBreak;
    let k = 0;
    v[0] = 0;
    z[0] = -Infinity;
    z[1] = Infinity;
    for (let q = 1; q < length; q++) {
      let s = (f[q]! + q * q - (f[v[k]!]! + v[k]! * v[k]!)) / (2 * q - 2 * v[k]!);
      while (s <= z[k]!) {
        k--;
        s = (f[q]! + q * q - (f[v[k]!]! + v[k]! * v[k]!)) / (2 * q - 2 * v[k]!);
      }
      k++;
      v[k] = q;
      z[k] = s;
      z[k + 1] = Infinity;
    }
    k = 0;
    for (let q = 0; q < length; q++) {
      while (z[k + 1]! < q) k++;
      const d = q - v[k]!;
      out[q] = d * d + f[v[k]!]!;
    }
  }
}

const MAX_CANDIDATES = 64;
