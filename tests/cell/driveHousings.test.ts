/**
 * Drive housings from the drive data (docs/cell.md): a motor catalogue's `housing_diameter` or
 * `housing_width`/`housing_height` becomes the housing at its actuated pivot when the study's cell
 * section gives no housings. Constructed cases with known clearances (derived here, below); the
 * catalogue and studies are invented scenarios (studies/catalogues/invented-motors.csv).
 */
import { mkdtempSync, readFileSync, rmSync, writeFileSync, mkdirSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { fiveBar } from '../../src/architectures/fivebar.js';
import { PoseStatus, type ModelInput } from '../../src/architectures/types.js';
import { CellChecker } from '../../src/cell/clearance.js';
import type { CellSpec } from '../../src/cell/types.js';
import { metricIndex } from '../../src/core/metrics.js';
import { designFromValues } from '../../src/mechanics/designSpace.js';
import { ArchitectureEvaluator } from '../../src/mechanics/evaluateArchitecture.js';
import { buildMotor } from '../../src/study/driveTrains.js';
import { loadStudyFile, StudyError } from '../../src/study/parse.js';
import { TUBE } from '../architectures/models.js';

const ROOT = join(import.meta.dirname, '..', '..');
const dirs: string[] = [];
afterAll(() => { for (const d of dirs) rmSync(d, { recursive: true, force: true }); });

function cellSpec(housingsFromDrives: boolean): CellSpec {
  return {
    zones: [], cycleAsTask: false, keepOuts: [], allowance: 0, mounting: null, regular: { aspect: 1, angle: 0 },
    interference: { links: false, crankWidth: [0, 0], rodWidth: [0, 0], housings: [null, null], housingsFromDrives, passiveMinAngle: null, passiveLimits: [], sliderLength: null },
  };
}

/** Five-bar (invented): pivots at (∓span/2, 0), cranks 0.2 m, rods 0.3 m. */
function fiveBarModel(span: number) {
  const input: ModelInput = {
    parameters: { base_span: span, base_rise: 0, crank_1: 0.2, rod_1: 0.3, crank_2: 0.2, rod_2: 0.3 },
    workingMode: '+-', assembly: 1, cranks: [TUBE, TUBE], rods: [TUBE, TUBE], payloadMass: 0,
  } as unknown as ModelInput;
  return fiveBar.buildModel(input);
}

describe('motor catalogue housings', () => {
  const base = { name: 'M', rated_torque: '1 N*m', peak_torque: '3 N*m', max_speed: '3000 rpm', rotor_inertia: '3e-5 kg*m^2' };
  it('housing_diameter gives a round housing of half that radius; width and height a box; width alone a square', () => {
    expect(buildMotor({ ...base, housing_diameter: '80 mm' }, 'm').housing).toEqual({ shape: 'circle', radius: 0.04 });
    expect(buildMotor({ ...base, housing_width: '60 mm', housing_height: '90 mm' }, 'm').housing).toEqual({ shape: 'box', width: 0.06, height: 0.09, angle: 0 });
    expect(buildMotor({ ...base, housing_width: '60 mm' }, 'm').housing).toEqual({ shape: 'box', width: 0.06, height: 0.06, angle: 0 });
    expect(buildMotor(base, 'm').housing).toBeUndefined();
  });
  it('refuses both a diameter and a box, a height alone, and a length without a length unit', () => {
    expect(() => buildMotor({ ...base, housing_diameter: '80 mm', housing_width: '60 mm' }, 'm')).toThrow(/not both/);
    expect(() => buildMotor({ ...base, housing_height: '60 mm' }, 'm')).toThrow(/needs housing_width/);
    expect(() => buildMotor({ ...base, housing_diameter: '80 N*m' }, 'm')).toThrow();
  });
});

describe('housings from the drives at the pivots (constructed)', () => {
  it('two round motors of radius 30 mm and 50 mm on a 40 mm span: clearance 0.04 − 0.08 = −0.04 m', () => {
    // Derived here: two circles, centres 0.04 m apart: gap = 0.04 − (0.03 + 0.05). The cranks start at
    // their own pivots and are skipped against their own housing; crank 1 starts 0.04 m from A2, inside
    // housing 2 by only 0.01 m, so the housing pair is the smallest.
    const model = fiveBarModel(0.04);
    const pose = fiveBar.createPose();
    expect(fiveBar.solvePose(model, pose, 0, 0.35)).not.toBe(PoseStatus.Unreachable);
    const checker = new CellChecker(cellSpec(true), 2);
    checker.prepare(model, undefined, [{ shape: 'circle', radius: 0.03 }, { shape: 'circle', radius: 0.05 }]);
    expect(checker.clearance(pose)).toBeCloseTo(-0.04, 12);
    expect(checker.source).toBe('housing');
    expect(checker.closestPair()).toEqual(['housing 1', 'housing 2']);
    // Negative control: the study gave housings (even none), so the drive data stay unused.
    const given = new CellChecker(cellSpec(false), 2);
    given.prepare(model, undefined, [{ shape: 'circle', radius: 0.03 }, { shape: 'circle', radius: 0.05 }]);
    expect(given.clearance(pose)).toBe(Infinity);
  });
  it('two square 60 mm flanges side by side on a 100 mm span: clearance 0.1 − 0.06 = 0.04 m', () => {
    // Derived here: axis-aligned squares of half-width 0.03 centred 0.1 m apart on the x axis: the
    // facing edges are 0.1 − 2·0.03 apart. At P = (0, 0.45) the cranks rise away from the other housing.
    const model = fiveBarModel(0.1);
    const pose = fiveBar.createPose();
    expect(fiveBar.solvePose(model, pose, 0, 0.45)).not.toBe(PoseStatus.Unreachable);
    const square = { shape: 'box' as const, width: 0.06, height: 0.06, angle: 0 };
    const checker = new CellChecker(cellSpec(true), 2);
    checker.prepare(model, undefined, [square, square]);
    expect(checker.clearance(pose)).toBeCloseTo(0.04, 12);
    expect(checker.source).toBe('housing');
  });
});

describe('a drive-train study with a cell section and no housings', () => {
  /** The drive-train demo (invented) with a 50 mm base span and a cell section appended, in a temporary folder. */
  function load(cell: string, motors?: (text: string) => string): ReturnType<typeof loadStudyFile> {
    const dir = mkdtempSync(join(tmpdir(), 'loopsmith-housings-'));
    dirs.push(dir);
    mkdirSync(join(dir, 'catalogues'));
    for (const f of ['invented-motors.csv', 'invented-gearboxes.csv']) {
      const text = readFileSync(join(ROOT, 'studies', 'catalogues', f), 'utf8');
      writeFileSync(join(dir, 'catalogues', f), f.includes('motors') && motors ? motors(text) : text);
    }
    const study = readFileSync(join(ROOT, 'studies', 'parcel-sorter-drivetrains.yaml'), 'utf8').replace('  base_span: 200 mm\n', '  base_span: 50 mm\n');
    writeFileSync(join(dir, 'study.yaml'), `${study}\ncell:\n${cell}\n`);
    return loadStudyFile(join(dir, 'study.yaml'));
  }
  function clearance(loaded: ReturnType<typeof loadStudyFile>): number {
    const s = loaded.study;
    const ev = new ArchitectureEvaluator(s);
    return ev.evaluate(designFromValues(ev.variables, s.baseline)).metrics[metricIndex('min_clearance')]!;
  }
  it('the baseline motors (IM-400, 60 mm square flanges) on a 50 mm span overlap by 10 mm: min_clearance −0.01 m', () => {
    // Derived here: squares of half-width 0.03 m centred 0.05 m apart: 0.05 − 0.06 = −0.01 m; the links
    // (elbows outward, end point 0.4 m below) pass no housing closer than that.
    expect(clearance(load('  interference: { links: false }'))).toBeCloseTo(-0.01, 9);
  });
  it('negative controls: housings given in the study win; a catalogue without housings gives no housing check', () => {
    // Derived here: circles of radius 10 mm centred 0.05 m apart: 0.05 − 0.02 = 0.03 m at most.
    const given = clearance(load('  interference: { links: false, housings: { radius: 10 mm } }'));
    expect(given).toBeGreaterThan(0);
    expect(given).toBeLessThanOrEqual(0.03 + 1e-12);
    const stripped = (text: string) => text.replace(/,housing_width,housing_height/, '').replace(/,\d+ mm,\d+ mm$/gm, '');
    const none = clearance(load('  interference: { links: false }', stripped));
    expect(none).toBe(Infinity);
  });
  it('a catalogue housing without a length unit is refused when the study loads', () => {
    expect(() => load('  interference: { links: false }', (t) => t.replace('IM-400,', 'IM-400,').replace(/60 mm,60 mm/g, '60 N*m,60 N*m'))).toThrow(StudyError);
  });
});
