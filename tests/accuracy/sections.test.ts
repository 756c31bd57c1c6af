/**
 * Section properties, beam formulas, Euler buckling and the out-of-plane leg compliance against
 * handbook values and independent numerical solutions. Sources beside each check.
 */
import { describe, expect, it } from 'vitest';
import { cantilever, eulerLoad, sectionProperties, simplySupportedUniform } from '../../src/accuracy/sections.js';
import { StructureAtPose, type LinkMaterial } from '../../src/accuracy/structure.js';
import { fiveBar } from '../../src/architectures/fivebar.js';
import { PoseStatus, type ModelInput } from '../../src/architectures/types.js';
import { TUBE } from '../architectures/models.js';

const MM = 1e-3;

describe('section properties of round and rectangular tubes', () => {
  it('round tube ⌀25 × 2 mm: A = π(D² − d²)/4, I = π(D⁴ − d⁴)/64, J = 2I', () => {
    // Hand values, mm: A = π (625 − 441)/4 = 144.513; I = π (390625 − 194481)/64 = 9628.2;
    // formulas from Roark's Formulas for Stress and Strain, 7th ed., Table A.1 (from memory).
    const s = sectionProperties({ shape: 'round-tube', diameter: 25 * MM, wall: 2 * MM });
    expect(s.area / MM ** 2).toBeCloseTo((Math.PI * 184) / 4, 9);
    expect(s.area / MM ** 2).toBeCloseTo(144.513, 3);
    expect(s.inPlaneSecondMoment / MM ** 4).toBeCloseTo(9628.2, 1);
    expect(s.outOfPlaneSecondMoment).toBe(s.inPlaneSecondMoment);
    // Polar constant of a circular section is I_x + I_y (any mechanics-of-materials text, from memory).
    expect(s.torsionConstant).toBeCloseTo(2 * s.inPlaneSecondMoment, 20);
  });

  it('rectangular tube 40 × 20 × 2 mm (40 mm in the plane): A, I_in, I_out, Bredt torsion constant', () => {
    // Hand values, mm: A = 40·20 − 36·16 = 224; I_in = (20·40³ − 16·36³)/12 = 44458.67;
    // I_out = (40·20³ − 36·16³)/12 = 14378.67; Bredt: J = 4 A_m² t / p_m with A_m = 38·18 = 684,
    // p_m = 112: J = 33418.3 (Roark, 7th ed., Table 10.7 thin-walled closed sections, from memory).
    const s = sectionProperties({ shape: 'rectangular-tube', width: 40 * MM, height: 20 * MM, wall: 2 * MM });
    expect(s.area / MM ** 2).toBeCloseTo(224, 9);
    expect(s.inPlaneSecondMoment / MM ** 4).toBeCloseTo(533504 / 12, 6);
    expect(s.outOfPlaneSecondMoment / MM ** 4).toBeCloseTo(172544 / 12, 6);
    expect(s.torsionConstant / MM ** 4).toBeCloseTo((4 * 684 * 684 * 2) / 112, 6);
    expect(s.inPlaneHalfDepth).toBeCloseTo(20 * MM, 15);
  });

  it('solid square: torsion constant 0.1406 s⁴ (Roark, Table 10.7 case 4: K = 2.25 a⁴ for side 2a, from memory)', () => {
    const s = sectionProperties({ shape: 'rectangle', width: 10 * MM, height: 10 * MM });
    expect(s.torsionConstant / (10 * MM) ** 4 / 0.1406 - 1).toBeLessThan(0.005);
    expect(s.inPlaneSecondMoment / MM ** 4).toBeCloseTo(10000 / 12, 6); // b h³/12
  });
});

/** Lowest eigenvalue of −d²/dx² on (0, L) with w(0) = w(L) = 0, by finite differences (inverse iteration). */
function lowestPinnedEigenvalue(L: number, cells: number): number {
  const h = L / cells;
  const m = cells - 1;
  let v = new Float64Array(m).fill(1);
  let lambda = 0;
  for (let it = 0; it < 200; it++) {
    // Solve (tridiagonal 2, −1)/h² x = v (Thomas algorithm).
    const c = new Float64Array(m);
    const d = new Float64Array(m);
    for (let i = 0; i < m; i++) {
      const a = i > 0 ? -1 / (h * h) : 0;
      const b = 2 / (h * h);
      const cc = -1 / (h * h);
      const denom = b - (i > 0 ? a * c[i - 1]! : 0);
      c[i] = cc / denom;
      d[i] = (v[i]! - (i > 0 ? a * d[i - 1]! : 0)) / denom;
    }
    const x = new Float64Array(m);
    for (let i = m - 1; i >= 0; i--) x[i] = d[i]! - (i < m - 1 ? c[i]! * x[i + 1]! : 0);
    let num = 0, den = 0;
    for (let i = 0; i < m; i++) { num += v[i]! * x[i]!; den += x[i]! * x[i]!; }
    lambda = num / den;
    const norm = Math.sqrt(den);
    v = x.map((e) => e / norm);
  }
  return lambda;
}

describe('Euler buckling of a pinned–pinned strut', () => {
  it('π² E I / L² (Euler 1744; e.g. Gere & Goodno, Mechanics of Materials, §11.3, from memory) and an independent finite-difference eigenvalue of E I w″ + P w = 0', () => {
    const E = 200e9;
    const s = sectionProperties({ shape: 'round', diameter: 10 * MM });
    const L = 0.6;
    const p = eulerLoad(E, s.inPlaneSecondMoment, L);
    // Hand value: I = π 10⁴/64 mm⁴ = 490.87 mm⁴; P = π² · 200e9 · 490.87e-12 / 0.36 = 2691.6 N.
    expect(p).toBeCloseTo(2691.6, 0);
    // Derived here: buckling load = E I × the smallest eigenvalue of −w″ = λ w with pinned ends (λ = π²/L²).
    const numerical = E * s.inPlaneSecondMoment * lowestPinnedEigenvalue(L, 400);
    expect(Math.abs(numerical / p - 1)).toBeLessThan(2e-5);
  });
});

/** Numerical double integration of M/EI for a beam, with the unit-load method (derived check). */
function virtualWork(L: number, moment: (x: number) => number, unit: (x: number) => number, EI: number, steps = 20000): number {
  let sum = 0;
  const h = L / steps;
  for (let k = 0; k < steps; k++) {
    const x = (k + 0.5) * h;
    sum += (moment(x) * unit(x) * h) / EI;
  }
  return sum;
}

describe('cantilever and simply supported deflections', () => {
  const EI = 70e9 * 5e-9;
  const L = 0.4;

  it('cantilever tip force F L³/(3EI), uniform load w L⁴/(8EI) (Roark, 7th ed., Table 8.1 cases 1a and 2a, from memory)', () => {
    const F = 12;
    const w = 30;
    const c = cantilever(F, w, L, EI);
    expect(c.tipDeflection).toBeCloseTo((F * L ** 3) / (3 * EI) + (w * L ** 4) / (8 * EI), 15);
    // Derived here: unit-load method, moment at x from the root M = F (L − x) + w (L − x)²/2, unit moment (L − x).
    const numeric = virtualWork(L, (x) => F * (L - x) + (w * (L - x) ** 2) / 2, (x) => L - x, EI);
    expect(Math.abs(c.tipDeflection / numeric - 1)).toBeLessThan(1e-6);
    expect(c.rootMoment).toBeCloseTo(F * L + (w * L * L) / 2, 12);
  });

  it('simply supported uniform load: M = w L²/8, mid-span 5 w L⁴/(384 EI) (Roark, 7th ed., Table 8.1 case 2e, from memory)', () => {
    const w = 25;
    const s = simplySupportedUniform(w, L, EI);
    expect(s.maxMoment).toBeCloseTo((w * L * L) / 8, 12);
    // Derived here: M(x) = w x (L − x)/2; unit load at mid-span gives m(x) = x/2 for x < L/2, (L − x)/2 beyond.
    const numeric = virtualWork(L, (x) => (w * x * (L - x)) / 2, (x) => (x < L / 2 ? x / 2 : (L - x) / 2), EI);
    expect(Math.abs(s.centreDeflection / numeric - 1)).toBeLessThan(1e-6);
  });

  it('out-of-plane compliance of a crank + rod leg at right angles: p³/(3EI_c) + d³/(3EI_r) + p d²/(GJ_c)', () => {
    // Derived here (Castigliano on the grillage): the rod bends as a cantilever from the elbow; the crank
    // bends under F (lever up to p along it) and twists under F d (the rod's lever is across the crank).
    // Hand pose of tests/accuracy/firstOrder.test.ts is not at right angles; use cranks up, rods level:
    // pivots (∓0.2, 0), cranks 0.1 m up, rods 0.2 m inward to P = (0, 0.1): u_1 = (1, 0), e_1 = (0, 1).
    const input: ModelInput = {
      parameters: { base_span: 0.4, base_rise: 0, crank_1: 0.1, rod_1: 0.2, crank_2: 0.1, rod_2: 0.2 },
      workingMode: '+-', assembly: 1, cranks: [TUBE, TUBE], rods: [TUBE, TUBE], payloadMass: 0, gravity: [0, -9.81], drives: null,
    };
    const model = fiveBar.buildModel(input);
    const pose = fiveBar.createPose();
    const status = fiveBar.solvePose(model, pose, 0, 0.1);
    expect(status === PoseStatus.Assembled || status === PoseStatus.WrongAssemblyMode).toBe(true);
    expect(pose.proximalJoint[0]).toBeCloseTo(-0.2, 12);
    expect(pose.proximalJoint[1]).toBeCloseTo(0.1, 12);
    const crank = sectionProperties({ shape: 'rectangular-tube', width: 30 * MM, height: 15 * MM, wall: 2 * MM });
    const rod = sectionProperties({ shape: 'round-tube', diameter: 16 * MM, wall: 1.5 * MM });
    const E = 68.9e9;
    const G = E / (2 * 1.33);
    const links = (section: typeof crank): LinkMaterial[] => [0, 1].map(() => ({ section, youngsModulus: E, shearModulus: G }));
    const c = new StructureAtPose(2).legCompliance(model, pose, 0, links(crank), links(rod));
    const expected = 0.1 ** 3 / (3 * E * crank.outOfPlaneSecondMoment) + 0.2 ** 3 / (3 * E * rod.outOfPlaneSecondMoment) + (0.1 * 0.2 ** 2) / (G * crank.torsionConstant);
    expect(c / expected - 1).toBeCloseTo(0, 12);
    // Massless links, point mass at P: the legs are springs in parallel under one mass, f = √(Σ 1/c_i / m)/2π
    // (single-degree-of-freedom vibration, any vibration text, from memory).
    const massless = fiveBar.buildModel({ ...input, cranks: [{ ...TUBE, massPerLength: 0 }, { ...TUBE, massPerLength: 0 }], rods: [{ ...TUBE, massPerLength: 0 }, { ...TUBE, massPerLength: 0 }], payloadMass: 2 });
    fiveBar.solvePose(massless, pose, 0, 0.1);
    const s = new StructureAtPose(2);
    const c1 = s.legCompliance(massless, pose, 0, links(crank), links(rod));
    const c2 = s.legCompliance(massless, pose, 1, links(crank), links(rod));
    expect(s.outOfPlane(massless, pose, links(crank), links(rod)) / (Math.sqrt((1 / c1 + 1 / c2) / 2) / (2 * Math.PI)) - 1).toBeCloseTo(0, 12);
  });
});
