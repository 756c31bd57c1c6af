/**
 * Interference and keep-out checks (src/cell/clearance.ts) and mounting (src/cell/mounting.ts) on
 * poses built by construction, every architecture family: crossed five-bar cranks, two sliders on one
 * rail at a known gap, a keep-out a 3-RRR crank sweeps into, housings at the pivots, passive-joint
 * angles and a mounted model against the unmounted one.
 */
import { describe, expect, it } from 'vitest';
import { fiveBar } from '../../src/architectures/fivebar.js';
import { prr2 } from '../../src/architectures/prr2.js';
import { rrr3 } from '../../src/architectures/rrr3.js';
import type { LeggedModel } from '../../src/architectures/legged.js';
import { PoseStatus, type ModelInput } from '../../src/architectures/types.js';
import { CellChecker } from '../../src/cell/clearance.js';
import { mountModel } from '../../src/cell/mounting.js';
import type { CellSpec, InterferenceSpec } from '../../src/cell/types.js';
import { PRR2_INPUT, RRR3_INPUT, TUBE } from '../architectures/models.js';

const SQ = Math.SQRT2;

function spec(interference: Partial<InterferenceSpec> | null, extra: Partial<CellSpec> = {}, legs = 2): CellSpec {
  const zero = Array.from({ length: legs }, () => 0);
  return {
    zones: [],
    cycleAsTask: false,
    keepOuts: [],
    interference: interference ? { links: true, crankWidth: zero, rodWidth: zero, housings: zero.map(() => null), passiveMinAngle: null, sliderLength: null, ...interference } : null,
    allowance: 0,
    mounting: null,
    regular: { aspect: 1, angle: 0 },
    ...extra,
  };
}

/** Five-bar, pivots (∓0.1, 0), cranks 0.2 m, rods 0.3 m (invented). */
const FIVE_BAR: ModelInput = {
  parameters: { base_span: 0.2, base_rise: 0, crank_1: 0.2, rod_1: 0.3, crank_2: 0.2, rod_2: 0.3 },
  workingMode: '+-',
  assembly: 1,
  cranks: [TUBE, TUBE],
  rods: [TUBE, TUBE],
  payloadMass: 0,
  gravity: [0, -9.81],
  drives: null,
};

/**
 * The five-bar at crank angles (θ1, θ2), solved by inverse kinematics in whichever working mode and
 * assembly reproduce them (the pose comes from forward kinematics: P above the elbows on the symmetry line).
 */
function fiveBarAt(theta1: number, theta2: number): { model: LeggedModel; pose: ReturnType<typeof fiveBar.createPose> } {
  const c1 = [-0.1 + 0.2 * Math.cos(theta1), 0.2 * Math.sin(theta1)];
  const c2 = [0.1 + 0.2 * Math.cos(theta2), 0.2 * Math.sin(theta2)];
  // Symmetric elbows (same height): P on x = (c1x + c2x)/2 at rod distance.
  const half = (c2[0]! - c1[0]!) / 2;
  const px = (c1[0]! + c2[0]!) / 2;
  const py = c1[1]! + Math.sqrt(0.09 - half * half);
  for (const mode of fiveBar.workingModes) {
    for (const assembly of [1, -1] as const) {
      const model = fiveBar.buildModel({ ...FIVE_BAR, workingMode: mode, assembly });
      const pose = fiveBar.createPose();
      const status = fiveBar.solvePose(model, pose, px, py);
      if (status === PoseStatus.Unreachable) continue;
      const d1 = Math.abs(Math.atan2(Math.sin(pose.q[0]! - theta1), Math.cos(pose.q[0]! - theta1)));
      const d2 = Math.abs(Math.atan2(Math.sin(pose.q[1]! - theta2), Math.cos(pose.q[1]! - theta2)));
      if (d1 < 1e-9 && d2 < 1e-9) return { model, pose };
    }
  }
  throw new Error('no working mode reproduces the crank angles');
}

describe('link against link', () => {
  it('crossed cranks of a five-bar: minus the elbow’s distance to the other crank, less the widths', () => {
    // Derived here: cranks at 45° from (−0.1, 0) and 135° from (0.1, 0) are perpendicular and meet at
    // X = (0, 0.1); elbow C1 = (−0.1 + 0.1√2, 0.1√2) lies |C1 − X| = 0.2 − 0.1√2 past X along crank 1, i.e.
    // that far from crank 2 (perpendicular). Signed distance −(0.2 − 0.1√2); crank widths 10 mm take 10 mm more.
    const { model, pose } = fiveBarAt(Math.PI / 4, (3 * Math.PI) / 4);
    const checker = new CellChecker(spec({ crankWidth: [0.01, 0.01] }), 2);
    checker.prepare(model);
    expect(checker.clearance(pose)).toBeCloseTo(-(0.2 - 0.1 * SQ) - 0.01, 12);
    expect(checker.source).toBe('links');
  });
  it('negative control: the same cranks turned outwards do not cross', () => {
    // Derived here: at 135° and 45° the elbows are (∓(0.1 + 0.1√2), 0.1√2) and P = (0, 0.1√2 + √(0.09 − 0.2414²)):
    // the cranks point away from each other and each rod stays on its own side of x = 0, so the closest
    // non-adjacent pair is crank 1 and crank 2, 0.2 apart at the pivots: clearance 0.2 − 0.01 (widths).
    const { model, pose } = fiveBarAt((3 * Math.PI) / 4, Math.PI / 4);
    const checker = new CellChecker(spec({ crankWidth: [0.01, 0.01] }), 2);
    checker.prepare(model);
    expect(checker.clearance(pose)).toBeCloseTo(0.2 - 0.01, 12);
  });
  it('links: false switches the check off (the crossing then goes unseen)', () => {
    const { model, pose } = fiveBarAt(Math.PI / 4, (3 * Math.PI) / 4);
    const checker = new CellChecker(spec({ links: false }), 2);
    checker.prepare(model);
    expect(checker.clearance(pose)).toBe(Infinity);
  });
});

describe('keep-outs against a link', () => {
  it('the deepest of two keep-outs counts, whichever is checked first (no pruning past a penetration)', () => {
    // Derived here: crank 1 at 45° runs from A1 = (−0.1, 0) along e = (1, 1)/√2; n = (−1, 1)/√2 is across it.
    // Keep-out A (0.05 along e, 0.1 across) spans −0.005 … 0.095 across the centre line at 0.2 of the crank:
    // the chord's midpoint is 0.005 deep → −0.005 − w/2. Keep-out B (0.03 along, 0.06 across) sits on the
    // line at 0.5 of the crank: the midpoint is 0.015 deep (half its length along e) → −0.015 − w/2.
    const { model, pose } = fiveBarAt(Math.PI / 4, (3 * Math.PI) / 4);
    const at = (t: number, across: number): [number, number] => [-0.1 + (0.2 * t - across) / SQ, (0.2 * t + across) / SQ];
    const [ax, ay] = at(0.2, 0.045);
    const [bx, by] = at(0.5, 0);
    const a = { name: 'A', shape: 'rectangle' as const, centreX: ax, centreY: ay, width: 0.05, height: 0.1, angle: Math.PI / 4 };
    const b = { name: 'B', shape: 'rectangle' as const, centreX: bx, centreY: by, width: 0.03, height: 0.06, angle: Math.PI / 4 };
    for (const keepOuts of [[a, b], [b, a]]) {
      const checker = new CellChecker(spec({ links: false, crankWidth: [0.01, 0.01] }, { keepOuts }), 2);
      checker.prepare(model);
      expect(checker.clearance(pose)).toBeCloseTo(-0.015 - 0.005, 12);
    }
    // Negative control: A alone gives its own, shallower value.
    const alone = new CellChecker(spec({ links: false, crankWidth: [0.01, 0.01] }, { keepOuts: [a] }), 2);
    alone.prepare(model);
    expect(alone.clearance(pose)).toBeCloseTo(-0.005 - 0.005, 12);
  });
});

describe('housings at the pivots', () => {
  it('two round housings on a 40 mm span overlap by their radii less the span', () => {
    // Derived here: circles of radius 45 mm whose centres are 40 mm apart: clearance 0.04 − 0.09 = −0.05 m.
    const model = fiveBar.buildModel({ ...FIVE_BAR, parameters: { ...FIVE_BAR.parameters, base_span: 0.04 } });
    const checker = new CellChecker(spec({ links: false, housings: [{ shape: 'circle', radius: 0.045 }, { shape: 'circle', radius: 0.045 }] }), 2);
    checker.prepare(model);
    const pose = fiveBar.createPose();
    expect(fiveBar.solvePose(model, pose, 0, 0.35)).not.toBe(PoseStatus.Unreachable);
    expect(checker.clearance(pose)).toBeCloseTo(-0.05, 12);
    expect(checker.source).toBe('housing');
  });
  it('a rod passing over the other drive’s housing', () => {
    // Derived here: with the cranks crossed as above, crank 2 passes A1 at 0.1√2 ≈ 0.1414 m (its line's
    // distance from A1); a 0.16 m housing at A1 then reaches 0.16 − 0.1√2 into it (crank 1 is its own, skipped).
    const { model, pose } = fiveBarAt(Math.PI / 4, (3 * Math.PI) / 4);
    const checker = new CellChecker(spec({ links: false, housings: [{ shape: 'circle', radius: 0.16 }, null] }), 2);
    checker.prepare(model);
    expect(checker.clearance(pose)).toBeCloseTo(-(0.16 - 0.1 * SQ), 12);
  });
});

describe('sliders on one rail', () => {
  it('2-PRR, sliders on either side: gap = √(d1² − Δy²) + √(d2² − Δy²) − carriage length', () => {
    // Derived here: rail y = 0.05, P = (0.02, 0.23), Δy = 0.18; mode "-+": S1 = P − (√(0.35² − 0.18²), Δy),
    // S2 = P + (√(0.3² − 0.18²), −Δy) = P + (0.24, −Δy); gap between carriages of 0.1 m.
    const model = prr2.buildModel(PRR2_INPUT);
    const checker = new CellChecker(spec({ links: true, sliderLength: 0.1 }), 2);
    checker.prepare(model);
    const pose = prr2.createPose();
    expect(prr2.solvePose(model, pose, 0.02, 0.23)).not.toBe(PoseStatus.Unreachable);
    expect(checker.sliderGap(pose, 0, 1)).toBeCloseTo(Math.sqrt(0.35 ** 2 - 0.18 ** 2) + 0.24 - 0.1, 12);
    expect(checker.clearance(pose)).toBeCloseTo(Math.sqrt(0.35 ** 2 - 0.18 ** 2) + 0.24 - 0.1, 12);
  });
  it('2-PRR, both sliders on the same side: the carriages collide when the rods are nearly equal', () => {
    // Derived here: mode "++", Δy = 0.18: x1 − x2 = √(0.35² − Δy²) − 0.24 ≈ 0.0602 m < 0.1 m carriage: gap ≈ −0.0398 m.
    const model = prr2.buildModel({ ...PRR2_INPUT, workingMode: '++' });
    const checker = new CellChecker(spec({ links: true, sliderLength: 0.1 }), 2);
    checker.prepare(model);
    const pose = prr2.createPose();
    prr2.solvePose(model, pose, 0.02, 0.23);
    const expected = Math.sqrt(0.35 ** 2 - 0.18 ** 2) - 0.24 - 0.1;
    expect(expected).toBeLessThan(0);
    expect(checker.clearance(pose)).toBeCloseTo(expected, 12);
    expect(checker.source).toBe('slider-gap');
  });
});

describe('keep-outs, passive joints and mounting', () => {
  it('3-RRR: a wall across the base line is entered by the links; moving it away clears them', () => {
    const model = rrr3.buildModel(RRR3_INPUT);
    const pose = rrr3.createPose();
    expect(rrr3.solvePose(model, pose, 0, 0, 0)).not.toBe(PoseStatus.Unreachable);
    // Every pivot lies on the base circle of radius 0.3; a square keep-out around pivot 1 holds it.
    const ax = model.baseX[0]!;
    const ay = model.baseY[0]!;
    const wall = { name: 'wall', shape: 'rectangle' as const, centreX: ax, centreY: ay, width: 0.04, height: 0.04, angle: 0 };
    const inside = new CellChecker(spec(null, { keepOuts: [wall] }, 3), 3);
    inside.prepare(model);
    expect(inside.clearance(pose)).toBeLessThan(0);
    expect(inside.source).toBe('keep-out');
    // Derived here: the same square 2 m away is at least 2 − 0.02√2 − (reach 0.3 + 0.2 + 0.25) m clear.
    const far = new CellChecker(spec(null, { keepOuts: [{ ...wall, centreX: ax + 2 }] }, 3), 3);
    far.prepare(model);
    expect(far.clearance(pose)).toBeGreaterThan(2 - 0.03 - 0.75);
  });
  it('passive margin of a five-bar at the crossed pose: elbows at 90°, end joint as constructed', () => {
    // Derived here: θ1 = 45°, θ2 = 135°: C1 = (0.0414, 0.1414), C2 = (−0.0414, 0.1414), P = (0, 0.1414 + √(0.09 − 0.0414²)).
    // Rod 1 direction u1 = (P − C1)/0.3; elbow angle between −e1 = (−1, −1)/√2 and u1; end angle between u1 and u2.
    const { model, pose } = fiveBarAt(Math.PI / 4, (3 * Math.PI) / 4);
    const c1x = -0.1 + 0.1 * SQ;
    const py = 0.1 * SQ + Math.sqrt(0.09 - c1x * c1x);
    const u1 = [-c1x / 0.3, (py - 0.1 * SQ) / 0.3];
    const elbow = Math.acos((-u1[0]! - u1[1]!) / SQ);
    const end = Math.acos(u1[1]! * u1[1]! - u1[0]! * u1[0]!); // u2 = (−u1x, u1y)
    const checker = new CellChecker(spec({ passiveMinAngle: 0.1 }), 2);
    checker.prepare(model);
    expect(checker.passiveMargin(pose)).toBeCloseTo(Math.min(elbow, end) - 0.1, 12);
  });
  it('a mounted model solved in the task frame equals the unmounted one in the base frame', () => {
    // Derived here: p_task = m + R(a) p_base, so a task point p maps to R(−a)(p − m); crank angles gain a.
    const base = fiveBar.buildModel(FIVE_BAR);
    const mount = { x: 0.12, y: -0.3, angle: 0.4 };
    const mounted = mountModel(base, mount);
    const p1 = fiveBar.createPose();
    const p2 = fiveBar.createPose();
    const [tx, ty] = [0.05, 0.05];
    const c = Math.cos(mount.angle), s = Math.sin(mount.angle);
    const bx = c * (tx - mount.x) + s * (ty - mount.y);
    const by = -s * (tx - mount.x) + c * (ty - mount.y);
    const st1 = fiveBar.solvePose(mounted, p1, tx, ty);
    const st2 = fiveBar.solvePose(base, p2, bx, by);
    expect(st1).toBe(st2);
    expect(st1).not.toBe(PoseStatus.Unreachable);
    expect(p1.inverseCondition).toBeCloseTo(p2.inverseCondition, 12);
    for (let i = 0; i < 2; i++) {
      const d = p1.q[i]! - p2.q[i]! - mount.angle;
      expect(Math.abs(Math.atan2(Math.sin(d), Math.cos(d)))).toBeLessThan(1e-12);
    }
    // Negative control: without the mount the task point is another base point (different solution).
    const p3 = fiveBar.createPose();
    fiveBar.solvePose(base, p3, tx, ty);
    expect(Math.abs(p3.inverseCondition - p2.inverseCondition) + Math.abs(p3.q[0]! - p2.q[0]!)).toBeGreaterThan(1e-3);
  });
});
