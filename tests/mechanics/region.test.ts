/**
 * Region averages and extremes (src/mechanics/regionMetrics.ts, regionQuadrature.ts, extremeSearch.ts)
 * against closed forms derived here, at the default settings (evaluation.tolerance 0.005, grid_cells
 * 120, task_samples 12): every value within 0.5 %, and the reported error estimate covers the error.
 * The studies are invented scenarios.
 */
import { describe, expect, it } from 'vitest';
import { Evaluator } from '../../src/mechanics/evaluate.js';
import { metricIndex } from '../../src/core/metrics.js';
import { parseStudyText } from '../../src/study/parse.js';
import type { Study } from '../../src/study/types.js';
import { ExtremeSearch } from '../../src/mechanics/extremeSearch.js';
import { RegionQuadrature, type NodeLattice } from '../../src/mechanics/regionQuadrature.js';

function study(text: string): Study {
  return parseStudyText(`study: region-test\ndescription: invented scenario\n${text}objectives: [ { metric: gci } ]\n`, '<region test>').study;
}

function evaluate(s: Study): { value: (name: string) => number; error: (name: string) => number } {
  const r = new Evaluator(s).evaluate([]);
  return { value: (name) => r.metrics[metricIndex(name)]!, error: (name) => r.errors![metricIndex(name)]! };
}

/** Composite Simpson rule with 2n panels (an independent 1-D quadrature of a closed-form integrand). */
function simpson(f: (t: number) => number, a: number, b: number, n = 4000): number {
  const h = (b - a) / (2 * n);
  let s = f(a) + f(b);
  for (let k = 1; k < 2 * n; k++) s += (k % 2 === 1 ? 4 : 2) * f(a + k * h);
  return (s * h) / 3;
}

// 2-PRR, rail y = 0, equal rods d, working mode "-+" (slider 1 left of P), P above the rail.
// Derived here: with c = √(d² − y²), u_1 = (c, y)/d, u_2 = (−c, y)/d and B = diag(c/d, −c/d), so
// J⁻¹ = B⁻¹A = [[1, y/c], [1, −y/c]], whose singular values are √2 and √2 y/c: 1/κ = min(t, 1/t) with
// t = y/c = tan α (α the rod angle to the rail). It depends on y only; at y → 0 the rods align
// (1/κ ~ y/d), at y → d both rods stand perpendicular to the rail (1/κ ~ √(2(d − y)/d), a square-root edge).
const D = 0.5;
const invCondPrr = (y: number): number => Math.min(y / Math.sqrt(D * D - y * y), Math.sqrt(D * D - y * y) / y);
/** Antiderivative of 1/κ: −c for y ≤ d/√2 (tan branch), c − d ln((d + c)/y) above (cot branch), continuous at d/√2. */
function invCondPrrIntegral(y0: number, y1: number): number {
  const split = D / Math.SQRT2;
  const tanPart = (a: number, b: number): number => Math.sqrt(D * D - a * a) - Math.sqrt(D * D - b * b);
  const cotAnti = (y: number): number => {
    const c = Math.sqrt(Math.max(D * D - y * y, 0));
    return c - D * Math.log((D + c) / y);
  };
  let total = 0;
  if (y0 < split) total += tanPart(y0, Math.min(y1, split));
  if (y1 > split) total += cotAnti(y1) - cotAnti(Math.max(y0, split));
  return total;
}
const PRR = `architecture: 2-prr
geometry: { rail_height: 0, rod_1: ${D}, rod_2: ${D} }
working_mode: "-+"
assembly_mode: "+"
`;

describe('gci of a 2-PRR with equal rods against its closed form', () => {
  it('the antiderivative agrees with an independent Simpson rule (checks the closed form itself)', () => {
    for (const [a, b] of [[0.05, 0.3], [0.3, 0.5], [0.1, 0.45]] as const) {
      expect(Math.abs(invCondPrrIntegral(a, b) / simpson(invCondPrr, a, b) - 1)).toBeLessThan(1e-6);
    }
  });

  it('over the usable workspace bounded by both singularities: 1 − √2 + ln(1 + √2), within 0.5 % at the defaults', () => {
    // No thresholds: the usable region is the window's width times 0 < y < d (y < 0 is the other
    // assembly). Derived: mean of 1/κ over y ∈ (0, d) = [(d − d/√2) + (d ln(1 + √2) − d/√2)]/d.
    const exact = 1 - Math.SQRT2 + Math.log(1 + Math.SQRT2);
    expect(invCondPrrIntegral(1e-12, D) / D).toBeCloseTo(exact, 9);
    const r = evaluate(study(`${PRR}task: { speed: 0 }\nevaluation: { min_inverse_condition: 0, min_transmission_angle: 0, window: { x: [-0.3, 0.3], y: [-0.6, 0.6] } }\n`));
    const error = Math.abs(r.value('gci') - exact);
    expect(error / exact).toBeLessThan(0.005);
    // The estimate is of the right size: not below a third of the error, not above the tolerance.
    expect(r.error('gci')).toBeGreaterThan(error / 3);
    expect(r.error('gci') / exact).toBeLessThan(0.005);
  });

  it('over the usable workspace cut by the thresholds (1/κ ≥ 0.2, transmission ≥ 25°)', () => {
    // Derived: 1/κ ≥ 0.2 ⇔ 0.2 ≤ tan α ≤ 5; the leg sine is cos α ≥ sin 25° ⇔ α ≤ 65°; the mechanism
    // sine is sin 2α ≥ sin 25° ⇔ 12.5° ≤ α ≤ 77.5°. So α ∈ [12.5°, 65°], y = d sin α.
    const deg = Math.PI / 180;
    const y0 = D * Math.sin(12.5 * deg);
    const y1 = D * Math.sin(65 * deg);
    const exact = invCondPrrIntegral(y0, y1) / (y1 - y0);
    const r = evaluate(study(`${PRR}task: { speed: 0 }\nevaluation: { min_inverse_condition: 0.2, min_transmission_angle: 25 deg, window: { x: [-0.3, 0.3], y: [-0.6, 0.6] } }\n`));
    expect(Math.abs(r.value('gci') / exact - 1)).toBeLessThan(0.005);
    expect(r.value('min_inv_condition')).toBeCloseTo(Math.tan(12.5 * deg), 3);
  });

  // A task region assembled everywhere takes the tensor Gauss–Legendre path (regionMetrics.ts
  // smoothTaskMean): once with a smooth integrand, once across the kink of min(t, 1/t) at y = d/√2.
  for (const [y0, y1] of [[0.15, 0.3], [0.3, 0.42]] as const) {
    it(`over a task region assembled everywhere, y ∈ [${y0}, ${y1}]${y1 > D / Math.SQRT2 ? ' (across the kink at d/√2)' : ''}: the antiderivative, and the error estimate covers the error`, () => {
      const exact = invCondPrrIntegral(y0, y1) / (y1 - y0);
      const r = evaluate(study(`${PRR}task: { region: { shape: rectangle, centre: [0.05, ${(y0 + y1) / 2}], width: 0.2, height: ${y1 - y0} } }\nevaluation: { window: { x: [-0.6, 0.6], y: [-0.6, 0.6] } }\n`));
      const error = Math.abs(r.value('gci') - exact);
      expect(error / exact).toBeLessThan(0.005);
      expect(r.error('gci')).toBeGreaterThanOrEqual(error);
    });
  }

  it('over a task region whose top edge lies on the leg singularity (square-root edge)', () => {
    // Rectangle x ∈ [−0.1, 0.1], y ∈ [0.3, 0.5 = d]: gci = ∫ 1/κ dy / 0.2 by the antiderivative.
    const exact = invCondPrrIntegral(0.3, D) / 0.2;
    const r = evaluate(study(`${PRR}task: { region: { shape: rectangle, centre: [0, 0.4], width: 0.2, height: 0.2 } }\nevaluation: { window: { x: [-0.6, 0.6], y: [-0.6, 0.6] } }\n`));
    expect(Math.abs(r.value('gci') / exact - 1)).toBeLessThan(0.005);
    expect(r.error('gci') / exact).toBeLessThan(0.005);
    // Negative control: the task samples alone (trapezoid rule on 13 rows, 1/κ = 0 on the top row)
    // miss the square-root edge by more than the tolerance.
    let trapezoid = 0;
    for (let j = 0; j <= 12; j++) {
      const y = 0.3 + (0.2 * j) / 12;
      trapezoid += (j === 0 || j === 12 ? 0.5 : 1) * (y >= D ? 0 : invCondPrr(y));
    }
    expect(Math.abs(trapezoid / 12 / exact - 1)).toBeGreaterThan(0.005);
  });
});

// Symmetric five-bar: pivots A_1,2 = (∓s/2, 0), cranks p, rods d, elbows outward.
// Derived here: at P = (0, y) the mirror image of leg 1 is leg 2, so u_2 = (−u_x, u_y) and s_2 = −s_1;
// with A rows u_iᵀ and B = diag(p s_i), J⁻¹ = B⁻¹A = (1/(p s_1)) [[u_x, u_y], [u_x, −u_y]], whose
// singular values are √2|u_x|/|p s_1| and √2|u_y|/|p s_1|: 1/κ = min(|u_x/u_y|, |u_y/u_x|) with u the
// unit rod direction of leg 1. The elbow C_1 is the intersection of the circles (A_1, p) and (P, d)
// away from the axis: with r = |P − A_1|, a = (p² − d² + r²)/(2r), h = √(p² − a²),
// C_1 = A_1 + a e + h n (e = (P − A_1)/r, n = e turned a quarter turn counter-clockwise, pointing away from the axis).
const S = 0.15;
const P5 = 0.2;
const D5 = 0.3;
function invCondAxis(y: number): number {
  const [ax, ay] = [-S / 2, 0];
  const r = Math.hypot(-ax, y - ay);
  const [ex, ey] = [-ax / r, (y - ay) / r];
  const a = (P5 * P5 - D5 * D5 + r * r) / (2 * r);
  const h = Math.sqrt(P5 * P5 - a * a);
  const [nx, ny] = [-ey, ex];
  const cx = ax + a * ex + h * nx;
  const cy = ay + a * ey + h * ny;
  const ux = (0 - cx) / D5;
  const uy = (y - cy) / D5;
  return Math.min(Math.abs(ux / uy), Math.abs(uy / ux));
}
const FIVE_BAR = `architecture: five-bar
geometry: { base_span: ${S}, base_rise: 0, crank_1: ${P5}, rod_1: ${D5}, crank_2: ${P5}, rod_2: ${D5} }
working_mode: "+-"
`;

describe('1/κ along the symmetry axis of a symmetric five-bar', () => {
  // A strip 0.1 mm wide along the axis, y ∈ [0.18, 0.42] m: 1/κ is even in x, so the strip's mean is
  // the axis mean to O(w²) (≈ 1e-7 here); the axis mean is the Simpson integral of the closed form.
  const [y0, y1] = [0.18, 0.42];
  const strip = `task: { region: { shape: rectangle, centre: [0, ${(y0 + y1) / 2}], width: 0.0001, height: ${y1 - y0} } }\n`;

  it('the engine bends the elbows outward in this mode and matches the closed form pointwise', () => {
    const s = study(FIVE_BAR + strip);
    const { architecture, model } = new Evaluator(s).architectureDesign([]);
    const pose = architecture.createPose();
    for (const y of [0.2, 0.3, 0.4]) {
      expect(architecture.solvePose(model, pose, 0, y)).toBe(0);
      expect(pose.proximalJoint[0]!).toBeLessThan(-S / 2);
      expect(pose.inverseCondition).toBeCloseTo(invCondAxis(y), 10);
    }
  });

  it('gci over the strip is the axis mean of the closed form, min_inv_condition its minimum (within 0.5 %)', () => {
    const r = evaluate(study(FIVE_BAR + strip));
    const mean = simpson(invCondAxis, y0, y1) / (y1 - y0);
    let min = Infinity;
    for (let k = 0; k <= 100000; k++) min = Math.min(min, invCondAxis(y0 + ((y1 - y0) * k) / 100000));
    expect(Math.abs(r.value('gci') / mean - 1)).toBeLessThan(0.005);
    expect(Math.abs(r.value('min_inv_condition') / min - 1)).toBeLessThan(0.005);
  });
});

describe('an extreme that lies between samples by construction', () => {
  // Five-bar as above. Derived here: P = A_1 + p e + d u gives r² = p² + d² + 2pd (e·u), so the leg
  // sine |s_1| = √(1 − ((r² − p² − d²)/(2pd))²) depends only on r = |P − A_1|, and the joint speed for
  // the end-point speed v is v ‖row_1(J⁻¹)‖ = v/(p |s_1|). For r² < p² + d² it grows as r falls, so over
  // a rectangle above A_1 whose r stays below √(p² + d²) its largest value is at the foot of the
  // perpendicular from A_1 to the bottom edge. The rectangle is placed so that this foot lies between
  // two samples of the bottom edge, at no simple fraction of their spacing (12 intervals over 0.24 m:
  // samples every 20 mm from x = −182.4 mm; the foot at x = −75 mm is 7.4 mm from the nearest one).
  const v = 1.0;
  const bottom = 0.11;
  const speedAt = (r: number): number => v / (P5 * Math.sqrt(1 - ((r * r - P5 * P5 - D5 * D5) / (2 * P5 * D5)) ** 2));
  const text = `${FIVE_BAR}task: { region: { shape: rectangle, centre: [-0.0624, ${bottom + 0.03}], width: 0.24, height: 0.06 }, speed: ${v} }\n`;

  it('peak_joint_speed_1 is the closed form at the foot (within 0.5 %), the samples alone are not', () => {
    const exact = speedAt(bottom);
    const r = evaluate(study(text));
    expect(Math.abs(r.value('peak_joint_speed_1') / exact - 1)).toBeLessThan(0.005);
    expect(r.value('peak_joint_speed_1')).toBeLessThanOrEqual(exact * (1 + 1e-9));
    expect(r.error('peak_joint_speed_1') / exact).toBeLessThan(0.005);
    // Negative control: the nearest sample is 7.4 mm beside the foot.
    const nearestSample = speedAt(Math.hypot(bottom, 0.0074));
    expect(1 - nearestSample / exact).toBeGreaterThan(0.01);
  });
});

describe('the generic pieces on fields with known answers', () => {
  it('quadrature of x² + y² over the unit disc cut from a lattice: π/2, refined at its circular edge', () => {
    // Derived: ∫∫_{r ≤ 1} r² dA = 2π ∫ r³ dr = π/2; the margin 1 − r² is smooth, so the crossings are
    // interpolated (no bisection), and the integrand is linearised on sub-cells.
    const n = 21;
    const h = 2.4 / (n - 1);
    const values = new Float64Array(3 * n * n);
    for (let j = 0; j < n; j++) {
      for (let i = 0; i < n; i++) {
        const [x, y] = [-1.2 + i * h, -1.2 + j * h];
        values.set([1 - x * x - y * y, x * x + y * y, 1], 3 * (j * n + i));
      }
    }
    const lattice: NodeLattice = { nu: n, nv: n, u0: -1.2, v0: -1.2, hu: h, hv: h, values, refinable: new Uint8Array(n * n).fill(1) };
    const field = { sample: (x: number, y: number, out: Float64Array) => { out[0] = x * x + y * y; out[1] = 1; return 1 - x * x - y * y; } };
    const q = new RegionQuadrature();
    const errors: number[] = [];
    for (const tolerance of [1e-2, 1e-4]) {
      const r = q.integrate(lattice, field, tolerance, 'boundary', 2e6);
      const error = Math.abs(r.integral - Math.PI / 2);
      // Within the tolerance and covered by the estimate, for the integral and the area.
      expect(error / (Math.PI / 2)).toBeLessThan(tolerance);
      expect(error).toBeLessThanOrEqual(r.integralError);
      expect(Math.abs(r.area - Math.PI) / Math.PI).toBeLessThan(tolerance);
      // The area's estimate (half the last refinement's change) may be low by a small factor.
      expect(Math.abs(r.area - Math.PI)).toBeLessThanOrEqual(2 * r.areaError);
      errors.push(error);
    }
    // And falling with the tolerance.
    expect(errors[1]!).toBeLessThan(errors[0]! / 4);
  });

  it('the compass search finds the maximum of a peak off the start, and stays on a projected box edge', () => {
    const search = new ExtremeSearch();
    const peak = { value: (x: number, y: number) => 1 - (x - 0.013) ** 2 - 2 * (y + 0.007) ** 2 };
    const r = search.search(peak, 1, 0, 0, peak.value(0, 0), 0.05, 1e-9, 1e-10, 500);
    expect(r.x).toBeCloseTo(0.013, 4);
    expect(r.y).toBeCloseTo(-0.007, 4);
    // Constrained to x ≤ 0: the maximum is on the edge, at (0, −0.007).
    const boxed = { ...peak, project: (x: number, y: number, out: Float64Array) => { out[0] = Math.min(x, 0); out[1] = y; } };
    const b = search.search(boxed, 1, -0.04, 0.02, boxed.value(-0.04, 0.02), 0.05, 1e-9, 1e-10, 500);
    expect(b.x).toBe(0);
    expect(b.value).toBeCloseTo(1 - 0.013 ** 2, 9);
  });
});
