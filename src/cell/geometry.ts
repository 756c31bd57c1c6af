/**
 * Plane geometry kernel of the cell checks (keep-outs, interference, task shapes, regular workspace).
 * Scalar arguments and interleaved Float64Array polygons (x0, y0, x1, y1, …), so the per-pose checks
 * allocate nothing. Lengths in m, angles in rad. Polygons are simple (not self-intersecting), either
 * orientation; the closing edge from the last vertex to the first is implied.
 */

/** z of the cross product (b − a) × (c − a): > 0 when a, b, c turn counter-clockwise. */
export function orient(ax: number, ay: number, bx: number, by: number, cx: number, cy: number): number {
  return (bx - ax) * (cy - ay) - (by - ay) * (cx - ax);
}

/** Distance from P to the segment AB (the nearest point clamped to the segment), m. */
export function pointSegmentDistance(px: number, py: number, ax: number, ay: number, bx: number, by: number): number {
  const dx = bx - ax;
  const dy = by - ay;
  const len2 = dx * dx + dy * dy;
  let t = len2 > 0 ? ((px - ax) * dx + (py - ay) * dy) / len2 : 0;
  if (t < 0) t = 0;
  else if (t > 1) t = 1;
  return Math.hypot(px - (ax + t * dx), py - (ay + t * dy));
}

/** Whether the closed segments AB and CD share a point (touching counts). */
export function segmentsIntersect(ax: number, ay: number, bx: number, by: number, cx: number, cy: number, dx: number, dy: number): boolean {
  const d1 = orient(cx, cy, dx, dy, ax, ay);
  const d2 = orient(cx, cy, dx, dy, bx, by);
  const d3 = orient(ax, ay, bx, by, cx, cy);
  const d4 = orient(ax, ay, bx, by, dx, dy);
  if (((d1 > 0 && d2 < 0) || (d1 < 0 && d2 > 0)) && ((d3 > 0 && d4 < 0) || (d3 < 0 && d4 > 0))) return true;
  // Collinear or touching cases: an end point on the other segment.
  return (
    (d1 === 0 && onSegment(cx, cy, dx, dy, ax, ay)) ||
    (d2 === 0 && onSegment(cx, cy, dx, dy, bx, by)) ||
    (d3 === 0 && onSegment(ax, ay, bx, by, cx, cy)) ||
    (d4 === 0 && onSegment(ax, ay, bx, by, dx, dy))
  );
}

function onSegment(ax: number, ay: number, bx: number, by: number, px: number, py: number): boolean {
  return Math.min(ax, bx) <= px && px <= Math.max(ax, bx) && Math.min(ay, by) <= py && py <= Math.max(ay, by);
}

/**
 * Distance between the segments AB and CD, m: 0 when they meet, else the smallest of the four end
 * point-to-segment distances (two segments that do not meet are nearest at an end point of one of them).
 */
export function segmentSegmentDistance(ax: number, ay: number, bx: number, by: number, cx: number, cy: number, dx: number, dy: number): number {
  if (segmentsIntersect(ax, ay, bx, by, cx, cy, dx, dy)) return 0;
  return Math.min(
    pointSegmentDistance(ax, ay, cx, cy, dx, dy),
    pointSegmentDistance(bx, by, cx, cy, dx, dy),
    pointSegmentDistance(cx, cy, ax, ay, bx, by),
    pointSegmentDistance(dx, dy, ax, ay, bx, by),
  );
}

/**
 * Signed distance of AB and CD, m: their distance when apart; when they cross, minus the smallest
 * end point-to-other-segment distance (how far the nearest end would have to move back to undo the
 * crossing). Continuous through touching (0), negative = overlap.
 */
export function signedSegmentDistance(ax: number, ay: number, bx: number, by: number, cx: number, cy: number, dx: number, dy: number): number {
  const apart = Math.min(
    pointSegmentDistance(ax, ay, cx, cy, dx, dy),
    pointSegmentDistance(bx, by, cx, cy, dx, dy),
    pointSegmentDistance(cx, cy, ax, ay, bx, by),
    pointSegmentDistance(dx, dy, ax, ay, bx, by),
  );
  return segmentsIntersect(ax, ay, bx, by, cx, cy, dx, dy) ? -apart : apart;
}

/** Number of vertices of an interleaved polygon. */
export function vertexCount(poly: Float64Array): number {
  return poly.length >> 1;
}

/** Whether P lies inside the polygon (crossing-number rule; points exactly on an edge may fall either way). */
export function pointInPolygon(px: number, py: number, poly: Float64Array): boolean {
  const n = poly.length >> 1;
  let inside = false;
  for (let i = 0, j = n - 1; i < n; j = i++) {
    const xi = poly[2 * i]!;
    const yi = poly[2 * i + 1]!;
    const xj = poly[2 * j]!;
    const yj = poly[2 * j + 1]!;
    if (yi > py !== yj > py && px < ((xj - xi) * (py - yi)) / (yj - yi) + xi) inside = !inside;
  }
  return inside;
}

/** Distance from P to the polygon's boundary, m. */
export function pointPolygonBoundaryDistance(px: number, py: number, poly: Float64Array): number {
  const n = poly.length >> 1;
  let best = Infinity;
  for (let i = 0, j = n - 1; i < n; j = i++) {
    const d = pointSegmentDistance(px, py, poly[2 * j]!, poly[2 * j + 1]!, poly[2 * i]!, poly[2 * i + 1]!);
    if (d < best) best = d;
  }
  return best;
}

/** Signed distance from P to the polygon, m: positive outside, negative inside (minus the depth). */
export function signedPointPolygonDistance(px: number, py: number, poly: Float64Array): number {
  const d = pointPolygonBoundaryDistance(px, py, poly);
  return pointInPolygon(px, py, poly) ? -d : d;
}

/** Signed area of a polygon (shoelace formula), m²: positive counter-clockwise. */
export function polygonSignedArea(poly: Float64Array): number {
  const n = poly.length >> 1;
  let s = 0;
  for (let i = 0, j = n - 1; i < n; j = i++) s += poly[2 * j]! * poly[2 * i + 1]! - poly[2 * i]! * poly[2 * j + 1]!;
  return s / 2;
}

/** Whether two non-adjacent edges of the polygon meet (it is then not simple). */
export function polygonSelfIntersects(poly: Float64Array): boolean {
  const n = poly.length >> 1;
  for (let i = 0; i < n; i++) {
    const i2 = (i + 1) % n;
    for (let j = i + 1; j < n; j++) {
      const j2 = (j + 1) % n;
      if (j === i2 || j2 === i) continue;
      if (segmentsIntersect(poly[2 * i]!, poly[2 * i + 1]!, poly[2 * i2]!, poly[2 * i2 + 1]!, poly[2 * j]!, poly[2 * j + 1]!, poly[2 * j2]!, poly[2 * j2 + 1]!)) return true;
    }
  }
  return false;
}

/**
 * Whether `inner` lies inside `outer` (both simple): every vertex of inner inside outer and no edge of
 * one properly crossing an edge of the other (derived here: a simple polygon leaves another only by
 * crossing its boundary, so vertices inside plus no crossings means contained; shared boundary
 * points count as not contained).
 */
export function polygonContainsPolygon(outer: Float64Array, inner: Float64Array): boolean {
  const m = inner.length >> 1;
  for (let k = 0; k < m; k++) if (!pointInPolygon(inner[2 * k]!, inner[2 * k + 1]!, outer)) return false;
  const n = outer.length >> 1;
  for (let i = 0, i1 = n - 1; i < n; i1 = i++) {
    for (let k = 0, k1 = m - 1; k < m; k1 = k++) {
      if (segmentsIntersect(outer[2 * i1]!, outer[2 * i1 + 1]!, outer[2 * i]!, outer[2 * i + 1]!, inner[2 * k1]!, inner[2 * k1 + 1]!, inner[2 * k]!, inner[2 * k + 1]!)) return false;
    }
  }
  return true;
}

/** Scratch for the crossing parameters of segmentPolygonClearance (grown on demand, never per pose). */
let crossings = new Float64Array(64);

/**
 * Signed clearance of the segment AB from the polygon, m: its distance to the polygon when it stays
 * outside; when it enters, minus the depth of its deepest sampled point inside (its end points and the
 * midpoints of its chords inside the polygon; derived here: the depth is 0 where the segment crosses
 * the boundary and positive in between, so the estimate is continuous through first contact).
 */
export function segmentPolygonClearance(ax: number, ay: number, bx: number, by: number, poly: Float64Array): number {
  const n = poly.length >> 1;
  if (crossings.length < n + 2) crossings = new Float64Array(2 * n + 2);
  let count = 0;
  let apart = Infinity;
  const dx = bx - ax;
  const dy = by - ay;
  for (let i = 0, j = n - 1; i < n; j = i++) {
    const cx = poly[2 * j]!;
    const cy = poly[2 * j + 1]!;
    const ex = poly[2 * i]!;
    const ey = poly[2 * i + 1]!;
    const d = segmentSegmentDistance(ax, ay, bx, by, cx, cy, ex, ey);
    if (d < apart) apart = d;
    if (d === 0) {
      // Parameter t along AB of the crossing with edge CE (parallel overlap: skip, end points cover it).
      const fx = ex - cx;
      const fy = ey - cy;
      const den = dx * fy - dy * fx;
      if (den !== 0) crossings[count++] = ((cx - ax) * fy - (cy - ay) * fx) / den;
    }
  }
  const aIn = pointInPolygon(ax, ay, poly);
  const bIn = pointInPolygon(bx, by, poly);
  if (apart > 0 && !aIn && !bIn) return apart;
  let depth = 0;
  if (aIn) depth = Math.max(depth, pointPolygonBoundaryDistance(ax, ay, poly));
  if (bIn) depth = Math.max(depth, pointPolygonBoundaryDistance(bx, by, poly));
  // Insertion sort of the few crossing parameters, then the chord midpoints.
  for (let k = 1; k < count; k++) {
    const t = crossings[k]!;
    let m = k - 1;
    while (m >= 0 && crossings[m]! > t) { crossings[m + 1] = crossings[m]!; m--; }
    crossings[m + 1] = t;
  }
  let previous = 0;
  for (let k = 0; k <= count; k++) {
    const t = k < count ? Math.min(Math.max(crossings[k]!, 0), 1) : 1;
    const mid = 0.5 * (previous + t);
    const mx = ax + mid * dx;
    const my = ay + mid * dy;
    if (t > previous && pointInPolygon(mx, my, poly)) depth = Math.max(depth, pointPolygonBoundaryDistance(mx, my, poly));
    previous = t;
  }
  return -depth;
}

/**
 * Signed clearance between two convex polygons, m: the smallest edge-to-edge distance when apart;
 * when they overlap, minus the penetration depth, the smallest overlap of their projections on the
 * edge normals of either (separating-axis theorem: convex sets are disjoint iff some edge normal
 * separates them, and the least overlap over those normals is the shortest translation that parts them).
 */
export function convexPolygonClearance(p: Float64Array, q: Float64Array): number {
  const n = p.length >> 1;
  const m = q.length >> 1;
  let apart = Infinity;
  for (let i = 0, i1 = n - 1; i < n; i1 = i++) {
    for (let k = 0, k1 = m - 1; k < m; k1 = k++) {
      const d = segmentSegmentDistance(p[2 * i1]!, p[2 * i1 + 1]!, p[2 * i]!, p[2 * i + 1]!, q[2 * k1]!, q[2 * k1 + 1]!, q[2 * k]!, q[2 * k + 1]!);
      if (d < apart) apart = d;
    }
  }
  if (apart > 0 && !pointInPolygon(p[0]!, p[1]!, q) && !pointInPolygon(q[0]!, q[1]!, p)) return apart;
  return -Math.min(leastOverlap(p, q), leastOverlap(q, p));
}

/** Least projection overlap of p and q over the edge normals of p, m. */
function leastOverlap(p: Float64Array, q: Float64Array): number {
  const n = p.length >> 1;
  let least = Infinity;
  for (let i = 0, i1 = n - 1; i < n; i1 = i++) {
    let nx = p[2 * i + 1]! - p[2 * i1 + 1]!;
    let ny = p[2 * i1]! - p[2 * i]!;
    const len = Math.hypot(nx, ny);
    if (len === 0) continue;
    nx /= len;
    ny /= len;
    const [pmin, pmax] = projection(p, nx, ny);
    const [qmin, qmax] = projection(q, nx, ny);
    const overlap = Math.min(pmax, qmax) - Math.max(pmin, qmin);
    if (overlap < least) least = overlap;
  }
  return Math.max(least, 0);
}

function projection(p: Float64Array, nx: number, ny: number): [number, number] {
  let lo = Infinity;
  let hi = -Infinity;
  for (let k = 0; k < p.length; k += 2) {
    const t = p[k]! * nx + p[k + 1]! * ny;
    if (t < lo) lo = t;
    if (t > hi) hi = t;
  }
  return [lo, hi];
}

/** Corners of a w × h rectangle centred at (cx, cy), its width along the angle θ (rad), counter-clockwise. */
export function rectanglePolygon(cx: number, cy: number, w: number, h: number, angle = 0): Float64Array {
  const c = Math.cos(angle);
  const s = Math.sin(angle);
  const out = new Float64Array(8);
  const corners = [[-1, -1], [1, -1], [1, 1], [-1, 1]] as const;
  corners.forEach(([a, b], k) => {
    const u = (a * w) / 2;
    const v = (b * h) / 2;
    out[2 * k] = cx + u * c - v * s;
    out[2 * k + 1] = cy + u * s + v * c;
  });
  return out;
}

/**
 * Largest rectangle of aspect ratio a = width/height inside a circle of radius r (any angle): its
 * diagonal is the diameter (derived here: an inscribed rectangle's corners lie on the circle, so
 * w² + h² = (2r)² with w = a h). Returns [w, h]; for a square w = h = r√2.
 */
export function largestRectangleInCircle(r: number, aspect = 1): [number, number] {
  const h = (2 * r) / Math.sqrt(1 + aspect * aspect);
  return [aspect * h, h];
}

/**
 * Largest rectangle of aspect a = w/h at angle θ inside an axis-aligned W × H rectangle (derived here:
 * a convex set holds the rotated rectangle iff it holds its corners, i.e. iff its bounding box
 * w|cos θ| + h|sin θ| by w|sin θ| + h|cos θ| fits in W × H; with w = a h each side bounds h linearly).
 * Returns [w, h]; a square at θ = 0 has side min(W, H), at 45° side min(W, H)/√2.
 */
export function largestRectangleInRectangle(width: number, height: number, aspect = 1, angle = 0): [number, number] {
  const c = Math.abs(Math.cos(angle));
  const s = Math.abs(Math.sin(angle));
  const h = Math.min(width / (aspect * c + s), height / (aspect * s + c));
  return [aspect * h, h];
}
