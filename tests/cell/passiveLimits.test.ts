/**
 * Passive-joint angle ranges per joint (`cell.interference.passive_limits`, docs/cell.md) on a pose
 * built by construction, the global `passive_min_angle` beside them, and the study parsing.
 * Designs are invented; the studies are invented scenarios (studies/parcel-sorter.yaml, rail-sorter-2prr.yaml).
 */
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { fiveBar } from '../../src/architectures/fivebar.js';
import { PoseStatus, type ModelInput } from '../../src/architectures/types.js';
import { CellChecker } from '../../src/cell/clearance.js';
import type { CellSpec, InterferenceSpec } from '../../src/cell/types.js';
import { metricIndex } from '../../src/core/metrics.js';
import { designFromValues } from '../../src/mechanics/designSpace.js';
import { ArchitectureEvaluator } from '../../src/mechanics/evaluateArchitecture.js';
import { parseStudyText, StudyError } from '../../src/study/parse.js';
import { LoopsmithUserError } from '../../src/core/errors.js';
import { TUBE } from '../architectures/models.js';

const ROOT = join(import.meta.dirname, '..', '..');
const DEG = Math.PI / 180;

function spec(interference: Partial<InterferenceSpec>): CellSpec {
  return {
    zones: [], cycleAsTask: false, keepOuts: [], allowance: 0, mounting: null, regular: { aspect: 1, angle: 0 },
    interference: { links: false, crankWidth: [0, 0], rodWidth: [0, 0], housings: [null, null], housingsFromDrives: false, passiveMinAngle: null, passiveLimits: [], sliderLength: null, ...interference },
  };
}

/**
 * Five-bar (invented): pivots (∓0.1, 0), cranks 0.2 m straight up, rods 0.3 m: elbows C = (∓0.1, 0.2),
 * end point P = (0, 0.2 + √0.08) on the symmetry line (solved in whichever mode reproduces θ = 90°).
 */
function upright() {
  const input = { parameters: { base_span: 0.2, base_rise: 0, crank_1: 0.2, rod_1: 0.3, crank_2: 0.2, rod_2: 0.3 }, assembly: 1, cranks: [TUBE, TUBE], rods: [TUBE, TUBE], payloadMass: 0, gravity: [0, -9.81], drives: null };
  for (const mode of fiveBar.workingModes) {
    for (const assembly of [1, -1] as const) {
      const model = fiveBar.buildModel({ ...input, workingMode: mode, assembly } as unknown as ModelInput);
      const pose = fiveBar.createPose();
      if (fiveBar.solvePose(model, pose, 0, 0.2 + Math.sqrt(0.08)) === PoseStatus.Unreachable) continue;
      if (Math.abs(pose.q[0]! - Math.PI / 2) < 1e-9 && Math.abs(pose.q[1]! - Math.PI / 2) < 1e-9) return { model, pose };
    }
  }
  throw new Error('no working mode has both cranks up');
}

// Derived here: u1 = (0.1, √0.08)/0.3, C→A = (0, −1): elbow angle acos(−√0.08/0.3) ≈ 160.5°;
// u2 = (−0.1, √0.08)/0.3: end-point angle between the rods acos((0.08 − 0.01)/0.09) = acos(7/9) ≈ 38.9°.
const ELBOW = Math.acos(-Math.sqrt(0.08) / 0.3);
const END = Math.acos(7 / 9);

describe('passive-joint ranges per joint (constructed pose)', () => {
  const { model, pose } = upright();
  it('an elbow limited to 150°: margin 150° − 160.5° (opened too far); the other joints unlimited', () => {
    const checker = new CellChecker(spec({ passiveLimits: [{ joint: 'elbow_1', min: 0, max: 150 * DEG }] }), 2);
    checker.prepare(model);
    expect(checker.passiveMargin(pose)).toBeCloseTo(150 * DEG - ELBOW, 12);
  });
  it('the end point at least 40°: margin 38.9° − 40°', () => {
    const checker = new CellChecker(spec({ passiveLimits: [{ joint: 'end_point', min: 40 * DEG, max: Math.PI }] }), 2);
    checker.prepare(model);
    expect(checker.passiveMargin(pose)).toBeCloseTo(END - 40 * DEG, 12);
  });
  it('a per-joint range replaces the global minimum at its joint only', () => {
    // Global 0.1 rad: min(elbow − 0.1, elbow − 0.1, end − 0.1) = end − 0.1. elbow_1 given [0, π]: its
    // upper side π − elbow ≈ 0.34 rad is now the smallest (elbow_2 keeps the global minimum).
    const global = new CellChecker(spec({ passiveMinAngle: 0.1 }), 2);
    global.prepare(model);
    expect(global.passiveMargin(pose)).toBeCloseTo(END - 0.1, 12);
    const both = new CellChecker(spec({ passiveMinAngle: 0.1, passiveLimits: [{ joint: 'elbow_1', min: 0, max: Math.PI }] }), 2);
    both.prepare(model);
    expect(both.passiveMargin(pose)).toBeCloseTo(Math.min(END - 0.1, Math.PI - ELBOW), 12);
    expect(Math.PI - ELBOW).toBeLessThan(END - 0.1);
  });
  it('negative control: no limits at all gives +∞', () => {
    const none = new CellChecker(spec({}), 2);
    none.prepare(model);
    expect(none.passiveMargin(pose)).toBe(Infinity);
  });
});

describe('passive_limits in a study', () => {
  const base = readFileSync(join(ROOT, 'studies', 'parcel-sorter.yaml'), 'utf8');
  const withCell = (cell: string, text = base) => parseStudyText(`${text}\ncell:\n  interference:\n${cell}\n`, '<passive limits>').study;
  it('parses to radians and makes passive_joint_margin available without passive_min_angle', () => {
    const s = withCell('    passive_limits: { elbow_1: { min: 20 deg, max: 170 deg }, end_point: { min: 25 deg } }');
    expect(s.cell!.interference!.passiveLimits).toEqual([
      { joint: 'elbow_1', min: 20 * DEG, max: 170 * DEG },
      { joint: 'end_point', min: 25 * DEG, max: Math.PI },
    ]);
    const ev = new ArchitectureEvaluator(s);
    const m = ev.evaluate(designFromValues(ev.variables, s.baseline)).metrics;
    expect(Number.isFinite(m[metricIndex('passive_joint_margin')]!)).toBe(true);
    // Negative control: without any passive limit the metric is not computed.
    const plain = withCell('    links: true');
    const ev2 = new ArchitectureEvaluator(plain);
    expect(Number.isNaN(ev2.evaluate(designFromValues(ev2.variables, plain.baseline)).metrics[metricIndex('passive_joint_margin')]!)).toBe(true);
  });
  it('refuses a joint the architecture does not have, and an empty range', () => {
    expect(() => withCell('    passive_limits: { slider_1: { min: 20 deg } }')).toThrow(/not a passive joint of this architecture \(elbow_1, elbow_2, end_point\)/);
    expect(() => withCell('    passive_limits: { elbow_2: { min: 120 deg, max: 100 deg } }')).toThrow(LoopsmithUserError);
    expect(() => withCell('    passive_limits: { knee_1: { min: 20 deg } }')).toThrow(StudyError);
    const rail = readFileSync(join(ROOT, 'studies', 'rail-sorter-2prr.yaml'), 'utf8');
    expect(withCell('    passive_limits: { slider_2: { min: 30 deg, max: 150 deg } }', rail).cell!.interference!.passiveLimits[0]!.joint).toBe('slider_2');
    expect(() => withCell('    passive_limits: { elbow_1: { min: 30 deg } }', rail)).toThrow(/slider_1, slider_2, end_point/);
  });
});
