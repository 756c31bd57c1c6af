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
 * distance. Each step is one pass over the points (no allocation).
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
   * Radius (m) of the largest empty circle reached from (x0, y0) among `count` points (x, y
   * interleaved in `points`); 0 without points. The centre is left in x, y.
   */
  grow(points: Float64Array, count: number, x0: number, y0: number): number {
    if (count === 0) return 0;
    let cx = x0;
    let cy = y0;
    const active = this.active;
    active[0] = this.nearestIndex(points, count, cx, cy);
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
      const d1 = (cx - ax) * (cx - ax) + (cy - ay) * (cy - ay);
      let best = Infinity;
      let hit = -1;
      for (let q = 0; q < count; q++) {
        if (q === p1 || (activeCount === 2 && q === active[1])) continue;
        const qx = points[2 * q]!;
        const qy = points[2 * q + 1]!;
        const denominator = 2 * (gx * (qx - ax) + gy * (qy - ay));
        if (!(denominator > 0)) continue;
        const dq = (cx - qx) * (cx - qx) + (cy - qy) * (cy - qy);
        const t = Math.max(dq - d1, 0) / denominator;
        if (t < best) { best = t; hit = q; }
      }
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

  private nearestIndex(points: Float64Array, count: number, x: number, y: number): number {
    let best = 0;
    let bestSq = Infinity;
    for (let p = 0; p < count; p++) {
      const dx = points[2 * p]! - x;
      const dy = points[2 * p + 1]! - y;
      const d = dx * dx + dy * dy;
      if (d < bestSq) { bestSq = d; best = p; }
    }
    return best;
  }
}
