/**
 * Area of the intersection of two discs of radii r1, r2 whose centres are d apart (m²): the lens
 * formula r1² α1 + r2² α2 − (kite), with the half-angles from the law of cosines (common practice, no
 * source). An independent reference for src/architectures/annuli.ts (tests/architectures/annuli.test.ts).
 */
export function discIntersectionArea(r1: number, r2: number, d: number): number {
  if (r1 <= 0 || r2 <= 0) return 0;
  if (d >= r1 + r2) return 0;
  if (d <= Math.abs(r1 - r2)) return Math.PI * Math.min(r1, r2) ** 2;
  const a1 = Math.acos(Math.min(Math.max((d * d + r1 * r1 - r2 * r2) / (2 * d * r1), -1), 1));
  const a2 = Math.acos(Math.min(Math.max((d * d + r2 * r2 - r1 * r1) / (2 * d * r2), -1), 1));
  const kite = 0.5 * Math.sqrt(Math.max((-d + r1 + r2) * (d + r1 - r2) * (d - r1 + r2) * (d + r1 + r2), 0));
  return r1 * r1 * a1 + r2 * r2 * a2 - kite;
}
