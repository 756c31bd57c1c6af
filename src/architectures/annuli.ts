/**
 * Area of the intersection of rings (annuli) r_in,i ≤ |P − C_i| ≤ r_out,i (r_in,i = 0: a disc), by
 * Green's theorem over the boundary of the intersection (derived here): the boundary is made of arcs
 * of the rings' circles, namely the arcs between consecutive crossings with the other circles whose
 * midpoints lie in every ring. An outer circle is run counter-clockwise and an inner one clockwise
 * (the region on the left), and each arc adds ½∮(x dy − y dx) = ½ [r² Δθ + a r Δ(sin θ) − b r Δ(cos θ)]
 * for its centre (a, b). The reachable sets of crank + rod and limited strut legs are such rings
 * (legged.ts leggedRingsArea). Allocates a little per call (one call per design), nothing per pose.
 */

/** Relative tolerance of "on a circle" and of two circles being the same one. */
const SAME = 1e-12;

export function annuliIntersectionArea(cx: readonly number[], cy: readonly number[], inner: readonly number[], outer: readonly number[]): number {
  const rings = cx.length;
  let scale = 0;
  for (let i = 0; i < rings; i++) scale = Math.max(scale, outer[i]!, Math.abs(cx[i]!), Math.abs(cy[i]!));
  const eps = SAME * scale;
  // The circles: centre, radius, +1 outer (region inside) / −1 inner (region outside). A circle equal
  // to one already listed with the same sense bounds nothing more (its arcs would count twice).
  const ca: number[] = [];
  const cb: number[] = [];
  const cr: number[] = [];
  const sense: number[] = [];
  const add = (a: number, b: number, r: number, s: number): void => {
    for (let k = 0; k < cr.length; k++) {
      if (sense[k] === s && Math.abs(ca[k]! - a) <= eps && Math.abs(cb[k]! - b) <= eps && Math.abs(cr[k]! - r) <= eps) return;
    }
    ca.push(a);
    cb.push(b);
    cr.push(r);
    sense.push(s);
  };
  for (let i = 0; i < rings; i++) {
    if (!(outer[i]! > inner[i]!)) return 0;
    add(cx[i]!, cy[i]!, outer[i]!, 1);
    if (inner[i]! > 0) add(cx[i]!, cy[i]!, inner[i]!, -1);
  }
  const inAll = (x: number, y: number): boolean => {
    for (let i = 0; i < rings; i++) {
      const rho = Math.hypot(x - cx[i]!, y - cy[i]!);
      if (rho > outer[i]! + eps || rho < inner[i]! - eps) return false;
    }
    return true;
  };
  let area = 0;
  const angles: number[] = [];
  for (let k = 0; k < cr.length; k++) {
    const a = ca[k]!;
    const b = cb[k]!;
    const r = cr[k]!;
    angles.length = 0;
    for (let j = 0; j < cr.length; j++) {
      if (j === k) continue;
      const dx = ca[j]! - a;
      const dy = cb[j]! - b;
      const d = Math.hypot(dx, dy);
      const rj = cr[j]!;
      if (d <= eps || d > r + rj || d < Math.abs(r - rj)) continue;
      // Crossings at the direction of C_j ± the half-angle of the chord seen from C_k.
      const base = Math.atan2(dy, dx);
      const half = Math.acos(Math.min(Math.max((d * d + r * r - rj * rj) / (2 * d * r), -1), 1));
      angles.push(base - half, base + half);
    }
    if (angles.length === 0) {
      if (inAll(a + r, b)) area += sense[k]! * Math.PI * r * r;
      continue;
    }
    // Angles in [θ_0, θ_0 + 2π), sorted; the arcs between neighbours, the last one wrapping round.
    const from = angles[0]!;
    for (let t = 0; t < angles.length; t++) {
      let v = angles[t]! - from;
      v -= 2 * Math.PI * Math.floor(v / (2 * Math.PI));
      angles[t] = from + v;
    }
    angles.sort((p, q) => p - q);
    for (let t = 0; t < angles.length; t++) {
      const t1 = angles[t]!;
      const t2 = t + 1 < angles.length ? angles[t + 1]! : angles[0]! + 2 * Math.PI;
      if (!(t2 > t1)) continue;
      const mid = 0.5 * (t1 + t2);
      if (!inAll(a + r * Math.cos(mid), b + r * Math.sin(mid))) continue;
      area += sense[k]! * 0.5 * (r * r * (t2 - t1) + a * r * (Math.sin(t2) - Math.sin(t1)) - b * r * (Math.cos(t2) - Math.cos(t1)));
    }
  }
  return Math.max(area, 0);
}
