/**
 * The largest circle free of a set of boundary points, grown from a start inside the region by
 * following the medial axis of the points exactly (their Voronoi diagram; common practice, no source):
 *
 * - one nearest point p₁: move straight away from it until a second point is as near (the step is
 *   the root of a linear equation per point, |c + t g − q| = |c + t g − p₁|);
 * - two nearest points: move along their bisector, the way the distance grows, until a third point
 *   is as near;
 * - three nearest points (a Voronoi vertex, the circle through them): stop when the centre lies inside
 *   their triangle (a local maximum of the distance), else leave along the bisector of the two points
 *   that span the triangle's longest side, away from the third.
 *
 * The distance to the nearest point never falls along the way, so the circle stays empty and the
 * centre cannot leave a region whose boundary is sampled more densely than twice the start's
 * distance. Each step searches the points by rings of cells around the centre (PointBuckets, below;
 * no allocation).
 */

/** Steps at most per ascent (each adds or swaps one active point; a few dozen suffice). */
const MAX_STEPS = 200;
/** Relative tie tolerance on squared distances. */
const TIE = 1e-9;

export class EmptyCircle {
  /** Centre of the last ascent, m. */
  x = 0;
  y = 0;
  private readonly active = new Int32Array(3);

  /**
   * Radius (m) of the largest empty circle reached from (x0, y0) among the bucketed points; 0
   * without points. The centre is left in x, y.
   */
  grow(buckets: PointBuckets, x0: number, y0: number): number {
    const points = buckets.points;
    if (buckets.count === 0) return 0;
    let cx = x0;
    let cy = y0;
    const active = this.active;
    active[0] = buckets.nearest(cx, cy);
    let activeCount = 1;
    for (let step = 0; step < MAX_STEPS; step++) {
      if (activeCount === 3 && !this.leaveVertex(points)) break;
      const p1 = active[0]!;
      const ax = points[2 * p1]!;
      const ay = points[2 * p1 + 1]!;
      let gx: number;
      let gy: number;
      if (activeCount === 1) {
        gx = cx - ax;
        gy = cy - ay;
      } else {
        const p2 = active[1]!;
        // Along the bisector of p₁p₂, the way away from their midpoint.
        gx = -(points[2 * p2 + 1]! - ay);
        gy = points[2 * p2]! - ax;
        const mx = 0.5 * (ax + points[2 * p2]!);
        const my = 0.5 * (ay + points[2 * p2 + 1]!);
        if (gx * (cx - mx) + gy * (cy - my) < 0) { gx = -gx; gy = -gy; }
        if (activeCount === 3) {
          // Away from the dropped point's side: it lies behind the centre along g.
          const p3 = active[2]!;
          if (gx * (points[2 * p3]! - mx) + gy * (points[2 * p3 + 1]! - my) > 0) { gx = -gx; gy = -gy; }
          activeCount = 2;
        }
      }
      const norm = Math.hypot(gx, gy);
      if (!(norm > 0)) break;
      gx /= norm;
      gy /= norm;
      // The first point q to become as near as p₁ when moving by t along g.
      const hit = buckets.firstAlong(cx, cy, gx, gy, p1, activeCount === 2 ? active[1]! : -1);
      const best = buckets.step;
      if (hit < 0 || !Number.isFinite(best)) break;
      cx += best * gx;
      cy += best * gy;
      active[activeCount] = hit;
      activeCount++;
    }
    this.x = cx;
    this.y = cy;
    const p = active[0]!;
    return Math.hypot(cx - points[2 * p]!, cy - points[2 * p + 1]!);
  }

  /**
   * At a vertex of three active points: false when the centre lies inside their triangle (a local
   * maximum); else reorders `active` so that [0], [1] span the longest side and [2] is to be left.
   */
  private leaveVertex(points: Float64Array): boolean {
    const a = this.active;
    const x0 = points[2 * a[0]!]!;
    const y0 = points[2 * a[0]! + 1]!;
    const x1 = points[2 * a[1]!]!;
    const y1 = points[2 * a[1]! + 1]!;
    const x2 = points[2 * a[2]!]!;
    const y2 = points[2 * a[2]! + 1]!;
    const s01 = (x0 - x1) * (x0 - x1) + (y0 - y1) * (y0 - y1);
    const s12 = (x1 - x2) * (x1 - x2) + (y1 - y2) * (y1 - y2);
    const s20 = (x2 - x0) * (x2 - x0) + (y2 - y0) * (y2 - y0);
    // The circumcentre lies inside (or on) the triangle unless one angle is obtuse: the longest side's
    // square exceeds the sum of the other two (law of cosines).
    const longest = Math.max(s01, s12, s20);
    if (longest <= (s01 + s12 + s20 - longest) * (1 + TIE)) return false;
    // Rotate so that [0], [1] span the longest side.
    if (longest === s12) {
      const t = a[0]!;
      a[0] = a[1]!;
      a[1] = a[2]!;
      a[2] = t;
    } else if (longest === s20) {
      const t = a[2]!;
      a[2] = a[1]!;
      a[1] = a[0]!;
      a[0] = t;
    }
    return true;
  }
}

/**
 * Points (x, y interleaved) sorted into the cells of a uniform grid (counting sort), searched by
 * rings of cells around a position: the nearest point, and the first point an empty circle meets
 * when its centre moves along a direction. Both return what a scan of every point would (ties to the
 * lowest index); rings stop once no point in a farther ring can do better. Points outside the grid
 * are counted in its edge cells, which would void the rings' bounds: callers keep them inside.
 */
export class PointBuckets {
  points: Float64Array<ArrayBufferLike> = new Float64Array(0);
  count = 0;
  /** Squared distance of the last `nearest`; step t (m) of the last `firstAlong`. */
  nearestSq = Infinity;
  step = Infinity;
  private x0 = 0;
  private y0 = 0;
  private h = 1;
  private nx = 1;
  private ny = 1;
  private start = new Int32Array(0);
  private order = new Int32Array(0);
  /** Per cell: rings around it holding no point (Chebyshev distance in cells to the nearest cell with one). */
  private empty = new Int32Array(0);

  /** Sorts `count` points of `points` into the nx × ny cells of side h from (x0, y0). */
  build(points: Float64Array, count: number, x0: number, y0: number, h: number, nx: number, ny: number): void {
    this.points = points;
    this.count = count;
    this.x0 = x0;
    this.y0 = y0;
    this.h = h;
    this.nx = nx;
    this.ny = ny;
    const cells = nx * ny;
    if (this.start.length < cells + 1) this.start = new Int32Array(cells + 1);
    if (this.order.length < count) this.order = new Int32Array(points.length >> 1);
    const start = this.start;
    start.fill(0, 0, cells + 1);
    for (let p = 0; p < count; p++) start[this.cellOf(points[2 * p]!, points[2 * p + 1]!) + 1]!++;
    for (let c = 0; c < cells; c++) start[c + 1]! += start[c]!;
    for (let p = 0; p < count; p++) {
      const c = this.cellOf(points[2 * p]!, points[2 * p + 1]!);
      this.order[start[c]!++] = p;
    }
    // start[c] now holds the end of cell c: shift back to starts.
    for (let c = cells; c > 0; c--) start[c] = start[c - 1]!;
    start[0] = 0;
    this.emptyRings();
  }

  /**
   * The empty rings of every cell: the chessboard distance transform of the occupied cells, by a
   * forward and a backward pass over the 8-neighbourhood (exact for the chessboard metric;
   * Rosenfeld & Pfaltz 1966, "Sequential operations in digital picture processing", JACM 13; from
   * memory).
   */
  private emptyRings(): void {
    const { nx, ny, start } = this;
    const cells = nx * ny;
    if (this.empty.length < cells) this.empty = new Int32Array(this.start.length);
    const e = this.empty;
    const far = nx + ny;
    for (let c = 0; c < cells; c++) e[c] = start[c + 1]! > start[c]! ? 0 : far;
    for (let j = 0; j < ny; j++) {
      for (let i = 0; i < nx; i++) {
        const c = j * nx + i;
        let v = e[c]!;
        if (i > 0) v = Math.min(v, e[c - 1]! + 1);
        if (j > 0) {
          v = Math.min(v, e[c - nx]! + 1);
          if (i > 0) v = Math.min(v, e[c - nx - 1]! + 1);
          if (i + 1 < nx) v = Math.min(v, e[c - nx + 1]! + 1);
        }
        e[c] = v;
      }
    }
    for (let j = ny - 1; j >= 0; j--) {
      for (let i = nx - 1; i >= 0; i--) {
        const c = j * nx + i;
        let v = e[c]!;
        if (i + 1 < nx) v = Math.min(v, e[c + 1]! + 1);
        if (j + 1 < ny) {
          v = Math.min(v, e[c + nx]! + 1);
          if (i + 1 < nx) v = Math.min(v, e[c + nx + 1]! + 1);
          if (i > 0) v = Math.min(v, e[c + nx - 1]! + 1);
        }
        e[c] = v;
      }
    }
  }

  /** Cell of the last `locate`, distance (m) to its edge, last ring holding cells, first ring that may hold a point. */
  private ci = 0;
  private cj = 0;
  private edge = 0;
  private rings = 0;
  private ring0 = 0;

  /**
   * The rings about (x, y): its cell (ci, cj), which may lie outside the grid; the distance to that
   * cell's edge, so that ring r holds no point closer than (r − 1) h + edge; the last ring holding
   * cells of the grid; the first ring that may hold a point (its empty rings; 0 outside the grid).
   */
  private locate(x: number, y: number): void {
    const { nx, ny, h } = this;
    const fi = (x - this.x0) / h;
    const fj = (y - this.y0) / h;
    const ci = Math.floor(fi);
    const cj = Math.floor(fj);
    this.ci = ci;
    this.cj = cj;
    this.edge = Math.max(Math.min(fi - ci, ci + 1 - fi, fj - cj, cj + 1 - fj), 0) * h;
    this.rings = Math.max(ci, nx - 1 - ci, cj, ny - 1 - cj, 0);
    this.ring0 = ci >= 0 && cj >= 0 && ci < nx && cj < ny ? this.empty[cj * nx + ci]! : 0;
  }

  /** The occupied cells of one ring (ringCells), reused. */
  private ring = new Int32Array(0);

  /**
   * Writes the cells of ring r about the last `locate`'s cell that lie in the grid and hold a point
   * into `ring`, row by row; returns their count.
   */
  private ringCells(r: number): number {
    const { nx, ny, ci, cj, start } = this;
    if (this.ring.length < 8 * r + 1) this.ring = new Int32Array(Math.max(8 * r + 1, 2 * this.ring.length));
    const ring = this.ring;
    let count = 0;
    for (let j = Math.max(cj - r, 0); j <= Math.min(cj + r, ny - 1); j++) {
      const onRow = j === cj - r || j === cj + r;
      for (let i = ci - r; i <= ci + r; i += onRow || r === 0 ? 1 : 2 * r) {
        if (i < 0 || i >= nx) continue;
        const c = j * nx + i;
        if (start[c + 1] !== start[c]) ring[count++] = c;
      }
    }
    return count;
  }

  private cellOf(x: number, y: number): number {
    const i = Math.min(Math.max(Math.floor((x - this.x0) / this.h), 0), this.nx - 1);
    const j = Math.min(Math.max(Math.floor((y - this.y0) / this.h), 0), this.ny - 1);
    return j * this.nx + i;
  }

  /** Index of the point nearest to (x, y), −1 without points; its squared distance in nearestSq. */
  nearest(x: number, y: number): number {
    const { nx, h, points, start, order } = this;
    this.locate(x, y);
    const { edge, rings } = this;
    let bestSq = Infinity;
    let best = -1;
    for (let r = this.ring0; r <= rings; r++) {
      const reach = r === 0 ? 0 : (r - 1) * h + edge;
      if (reach * reach > bestSq) break;
      const cells = this.ringCells(r);
      const ring = this.ring;
      for (let k = 0; k < cells; k++) {
        const c = ring[k]!;
        const i = c % nx;
        const j = (c - i) / nx;
        const ox = Math.max(this.x0 + i * h - x, x - this.x0 - (i + 1) * h, 0);
        const oy = Math.max(this.y0 + j * h - y, y - this.y0 - (j + 1) * h, 0);
        if (ox * ox + oy * oy > bestSq) continue;
        for (let s = start[c]!; s < start[c + 1]!; s++) {
          const p = order[s]!;
          const dx = points[2 * p]! - x;
          const dy = points[2 * p + 1]! - y;
          const d = dx * dx + dy * dy;
          if (d < bestSq || (d === bestSq && p < best)) { bestSq = d; best = p; }
        }
      }
    }
    this.nearestSq = bestSq;
    return best;
  }

  /**
   * Moving the centre (cx, cy) of a circle through point p₁ along the unit direction (gx, gy): the
   * first point q (other than p₁ and `skip`, or a copy of either) that becomes as near as p₁, at the step t (m, in
   * `step`) that solves |c + t g − q| = |c + t g − p₁|; −1 when none. A point at distance D from c
   * has t ≥ (D − r₁)/2 (r₁ = |c − p₁|; the denominator 2 g·(q − p₁) is at most 2(D + r₁)), so the
   * rings stop at D = r₁ + 2t; a cell is skipped when the same bound from its nearest distance and
   * its largest denominator exceeds the best t, or when no point of it lies ahead of p₁ along g.
   */
  firstAlong(cx: number, cy: number, gx: number, gy: number, p1: number, skip: number): number {
    const { nx, h, points, start, order } = this;
    const ax = points[2 * p1]!;
    const ay = points[2 * p1 + 1]!;
    const d1 = (cx - ax) * (cx - ax) + (cy - ay) * (cy - ay);
    const r1 = Math.sqrt(d1);
    const sx = skip >= 0 ? points[2 * skip]! : Number.NaN;
    const sy = skip >= 0 ? points[2 * skip + 1]! : Number.NaN;
    this.locate(cx, cy);
    const { edge, rings } = this;
    // Half the spread of g·q over a cell.
    const spread = 0.5 * h * (Math.abs(gx) + Math.abs(gy));
    let best = Infinity;
    let hit = -1;
    for (let r = this.ring0; r <= rings; r++) {
      const reach = r === 0 ? 0 : (r - 1) * h + edge;
      if (reach - r1 > 2 * best) break;
      const cells = this.ringCells(r);
      const ring = this.ring;
      for (let k = 0; k < cells; k++) {
        const c = ring[k]!;
        const i = c % nx;
        const j = (c - i) / nx;
        // The cell's bound: its largest denominator and its nearest distance from c.
        const xa = this.x0 + i * h;
        const ya = this.y0 + j * h;
        const most = 2 * (gx * (xa + 0.5 * h - ax) + gy * (ya + 0.5 * h - ay) + spread);
        if (!(most > 0)) continue;
        const ox = Math.max(xa - cx, cx - xa - h, 0);
        const oy = Math.max(ya - cy, cy - ya - h, 0);
        if ((ox * ox + oy * oy - d1) / most > best) continue;
        for (let s = start[c]!; s < start[c + 1]!; s++) {
          const q = order[s]!;
          const qx = points[2 * q]!;
          const qy = points[2 * q + 1]!;
          // A copy of an active point (neighbouring cells write their shared crossing each) is that point.
          if ((qx === ax && qy === ay) || (qx === sx && qy === sy)) continue;
          const denominator = 2 * (gx * (qx - ax) + gy * (qy - ay));
          if (!(denominator > 0)) continue;
          const dq = (cx - qx) * (cx - qx) + (cy - qy) * (cy - qy);
          const t = Math.max(dq - d1, 0) / denominator;
          if (t < best || (t === best && q < hit)) { best = t; hit = q; }
        }
      }
    }
    this.step = best;
    return hit;
  }
}
