/**
 * PointBuckets (src/mechanics/emptyCircle.ts) must answer exactly what a scan of every point
 * answers: the nearest point, and the first point an empty circle meets when its centre moves along
 * a direction (the step of the medial-axis ascent), ties to the lowest index. The references here
 * are those plain scans, written out in the test (derived here, no outside source); the point sets
 * are random clouds, rings of points and duplicated points, queried inside, at cell corners and
 * outside the grid.
 */
import { describe, expect, it } from 'vitest';
import { EmptyCircle, PointBuckets } from '../../src/mechanics/emptyCircle.js';

function scanNearest(points: Float64Array, count: number, x: number, y: number): number {
  let best = -1;
  let bestSq = Infinity;
  for (let p = 0; p < count; p++) {
    const d = (points[2 * p]! - x) ** 2 + (points[2 * p + 1]! - y) ** 2;
    if (d < bestSq) { bestSq = d; best = p; }
  }
  return best;
}

function scanFirstAlong(points: Float64Array, count: number, cx: number, cy: number, gx: number, gy: number, p1: number, skip: number): [number, number] {
  const ax = points[2 * p1]!;
  const ay = points[2 * p1 + 1]!;
  const d1 = (cx - ax) ** 2 + (cy - ay) ** 2;
  let best = Infinity;
  let hit = -1;
  for (let q = 0; q < count; q++) {
    const qx = points[2 * q]!;
    const qy = points[2 * q + 1]!;
    // Copies of p₁ or of the skipped point count as that point.
    if ((qx === ax && qy === ay) || (skip >= 0 && qx === points[2 * skip] && qy === points[2 * skip + 1])) continue;
    const denominator = 2 * (gx * (qx - ax) + gy * (qy - ay));
    if (!(denominator > 0)) continue;
    const t = Math.max((cx - qx) ** 2 + (cy - qy) ** 2 - d1, 0) / denominator;
    if (t < best) { best = t; hit = q; }
  }
  return [hit, best];
}

function lcg(seed: number): () => number {
  let s = seed;
  return () => (s = (s * 1103515245 + 12345) % 2147483648) / 2147483648;
}

/** Point sets inside the box [0, 1.2] × [0, 0.8] (grid of 12 × 8 cells of 0.1). */
function clouds(): Float64Array[] {
  const rand = lcg(11);
  const cloud = Float64Array.from({ length: 2 * 300 }, (_, k) => (k % 2 === 0 ? 1.2 : 0.8) * rand());
  const ring = new Float64Array(2 * 400);
  for (let k = 0; k < 400; k++) {
    const a = (2 * Math.PI * k) / 400;
    ring[2 * k] = 0.6 + 0.35 * Math.cos(a);
    ring[2 * k + 1] = 0.4 + 0.35 * Math.sin(a);
  }
  // Duplicates and points on cell edges: ties that only the index order settles.
  const dup = new Float64Array(2 * 60);
  for (let k = 0; k < 30; k++) {
    const x = 0.1 * Math.floor(12 * rand());
    const y = 0.1 * Math.floor(8 * rand());
    dup.set([x, y, x, y], 4 * k);
  }
  return [cloud, ring, dup];
}

describe('PointBuckets answers as a scan of every point does', () => {
  it('nearest point, queries inside, on cell corners and outside the grid', () => {
    const rand = lcg(5);
    const buckets = new PointBuckets();
    for (const points of clouds()) {
      const count = points.length / 2;
      buckets.build(points, count, 0, 0, 0.1, 12, 8);
      for (let k = 0; k < 500; k++) {
        const x = k % 5 === 0 ? 0.1 * Math.floor(13 * rand()) : -0.3 + 1.8 * rand();
        const y = k % 5 === 0 ? 0.1 * Math.floor(9 * rand()) : -0.3 + 1.4 * rand();
        const expected = scanNearest(points, count, x, y);
        expect(buckets.nearest(x, y)).toBe(expected);
        expect(buckets.nearestSq).toBe((points[2 * expected]! - x) ** 2 + (points[2 * expected + 1]! - y) ** 2);
      }
    }
  });

  it('first point met along a direction, from centres of empty circles', () => {
    const rand = lcg(9);
    const buckets = new PointBuckets();
    for (const points of clouds()) {
      const count = points.length / 2;
      buckets.build(points, count, 0, 0, 0.1, 12, 8);
      for (let k = 0; k < 500; k++) {
        const cx = 1.2 * rand();
        const cy = 0.8 * rand();
        // p₁ the nearest point (the circle through it is empty), direction away from it or any.
        const p1 = scanNearest(points, count, cx, cy);
        const angle = 2 * Math.PI * rand();
        const away = k % 2 === 0;
        const dx = away ? cx - points[2 * p1]! : Math.cos(angle);
        const dy = away ? cy - points[2 * p1 + 1]! : Math.sin(angle);
        const norm = Math.hypot(dx, dy) || 1;
        const skip = k % 3 === 0 ? (p1 + 1) % count : -1;
        const [hit, step] = scanFirstAlong(points, count, cx, cy, dx / norm, dy / norm, p1, skip);
        expect(buckets.firstAlong(cx, cy, dx / norm, dy / norm, p1, skip)).toBe(hit);
        expect(buckets.step).toBe(step);
      }
    }
  });

  it('the ascent reaches the inscribed circle of a ring of points (centre and radius known)', () => {
    const [, ring] = clouds();
    const buckets = new PointBuckets();
    buckets.build(ring!, ring!.length / 2, 0, 0, 0.1, 12, 8);
    const circle = new EmptyCircle();
    // Points on a circle of radius 0.35 about (0.6, 0.4): the only vertex of their Voronoi diagram is
    // its centre, the largest empty circle among them that circle itself (elementary geometry).
    const radius = circle.grow(buckets, 0.45, 0.3);
    expect(radius).toBeCloseTo(0.35, 9);
    expect(Math.hypot(circle.x - 0.6, circle.y - 0.4)).toBeLessThan(1e-6);
  });

  it('copies of points (neighbouring cells write their shared crossing each) do not change the ascent', () => {
    // With each point written twice the ascent must reach the circle it reaches on the points written
    // once: a copy of an active point met at a rounding-sized step would end it at a false vertex.
    const rand = lcg(21);
    const once = new PointBuckets();
    const twice = new PointBuckets();
    const circle = new EmptyCircle();
    for (const points of clouds().slice(0, 2)) {
      const count = points.length / 2;
      const doubled = new Float64Array(4 * count);
      for (let k = 0; k < count; k++) doubled.set([points[2 * k]!, points[2 * k + 1]!, points[2 * k]!, points[2 * k + 1]!], 4 * k);
      once.build(points, count, 0, 0, 0.1, 12, 8);
      twice.build(doubled, 2 * count, 0, 0, 0.1, 12, 8);
      for (let k = 0; k < 300; k++) {
        const x = 0.3 + 0.6 * rand();
        const y = 0.15 + 0.5 * rand();
        const expected = circle.grow(once, x, y);
        expect(circle.grow(twice, x, y)).toBe(expected);
      }
    }
  });
});
