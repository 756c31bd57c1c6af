/**
 * Drive trains in studies (docs/drives.md): motor and gearbox catalogues, design variables, the
 * evaluator's checks for revolute (five-bar, 3-RRR) and prismatic (2-PRR) architectures, and old
 * studies with the rectangle drive unchanged. Catalogues here are INVENTED TEST DATA.
 */
import { afterAll, describe, expect, it } from 'vitest';
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { loadStudyFile } from '../../src/study/parse.js';
import { designFromValues, designVariables, resolveDesign } from '../../src/mechanics/designSpace.js';
import { Evaluator } from '../../src/mechanics/evaluate.js';
import { constraintDefinitions } from '../../src/mechanics/constraints.js';
import { metricIndex } from '../../src/core/metrics.js';
import { readGearboxes, readMotors } from '../../src/study/driveTrains.js';
import { staticSizingNote } from '../../src/api/driveNotes.js';
import { curveTorque } from '../../src/drives/envelope.js';

const ROOT = new URL('../../', import.meta.url).pathname;
const dirs: string[] = [];
afterAll(() => dirs.forEach((d) => rmSync(d, { recursive: true, force: true })));
const RPM = (2 * Math.PI) / 60;

/** A copy of studies/<name> with its top-level drives section replaced and extra files beside it. */
function variant(name: string, drives: string, files: Record<string, string> = {}, edit: (t: string) => string = (t) => t): string {
  const dir = mkdtempSync(join(tmpdir(), 'loopsmith-drives-'));
  dirs.push(dir);
  const text = readFileSync(join(ROOT, 'studies', name), 'utf8');
  const start = text.indexOf('\ndrives:\n') + 1;
  const end = text.slice(start + 8).search(/\n[a-z_]+:/) + start + 8 + 1;
  writeFileSync(join(dir, 'study.yaml'), edit(text.slice(0, start) + drives + '\n' + text.slice(end)));
  for (const [file, content] of Object.entries(files)) writeFileSync(join(dir, file), content);
  return join(dir, 'study.yaml');
}

const metric = (evaluation: { metrics: Float64Array }, name: string): number => evaluation.metrics[metricIndex(name)]!;

describe('catalogues', () => {
  it('motor curves as points (CSV cell) and from corner figures; gearbox ratio lists', () => {
    const motors = readMotors(
      'name,continuous_curve,peak_curve,rotor_inertia\nA,"0 rpm: 1 N*m; 3000 rpm: 0.8 N*m","0 rpm: 3 N*m; 2000 rpm: 3 N*m; 3000 rpm: 1.5 N*m",1e-5 kg*m^2\n',
      'm.csv',
    );
    expect(curveTorque(motors[0]!.peak, 2500 * RPM)).toBeCloseTo(2.25, 12);
    expect(motors[0]!.maxSpeed).toBeCloseTo(3000 * RPM, 12);
    const yaml = readMotors('options:\n  - { name: Y, rated_torque: 1 N*m, peak_torque: 3 N*m, max_speed: 3000 rpm, corner_speed: 2000 rpm, rotor_inertia: 1e-5 kg*m^2 }\n', 'm.yaml');
    expect(curveTorque(yaml[0]!.peak, 2500 * RPM)).toBeCloseTo(2, 12); // halfway from 3 N·m to the default 1 N·m
    const gears = readGearboxes('name,ratios,efficiency,rated_torque\nP,5; 10,0.9,10 N*m\n', 'g.csv');
    expect(gears.map((g) => [g.name, g.ratio])).toEqual([['P:5', 5], ['P:10', 10]]);
    expect(gears[0]!.accelerationTorque).toBe(10);
  });

  it('refuses an unknown column and a motor without inertia', () => {
    expect(() => readMotors('name,torque\nA,1\n', 'm.csv')).toThrow(/unknown column "torque"/);
    expect(() => readMotors('name,rated_torque,peak_torque,max_speed\nA,1,2,3000 rpm\n', 'm.csv')).toThrow(/missing rotor_inertia/);
  });
});

describe('the demo study (invented): motors and gearboxes chosen per actuator', () => {
  const loaded = loadStudyFile(join(ROOT, 'studies', 'parcel-sorter-drivetrains.yaml'));
  const study = loaded.study;

  it('design variables and the baseline', () => {
    const names = designVariables(study).map((v) => v.name);
    expect(names).toEqual(['base_span', 'crank_1', 'rod_1', 'motor_1', 'gearbox_1', 'motor_2', 'gearbox_2']);
    const design = designFromValues(designVariables(study), study.baseline);
    const drives = resolveDesign(study, designVariables(study), design).drives!;
    expect(drives[0]!.train!.motor.name).toBe('IM-400');
    expect(drives[0]!.gearRatio).toBe(10);
  });

  it('evaluates with every drive check, and the envelope constraints replace the rectangle ones', () => {
    const evaluator = new Evaluator(study);
    const e = evaluator.evaluate(designFromValues(evaluator.variables, study.baseline));
    for (const name of ['drive_peak_use', 'drive_rms_use', 'gearbox_torque_use', 'drive_speed_use', 'inertia_ratio', 'gearbox_estop_use', 'brake_use', 'accel_capability_at_speed', 'min_cycle_time']) {
      expect(Number.isFinite(metric(e, name)), name).toBe(true);
    }
    // Invented catalogue costs: IM-400 290 and PG-60 260 per actuator.
    expect(metric(e, 'drive_cost')).toBe(2 * (290 + 260));
    const names = constraintDefinitions(study).map((c) => c.name);
    expect(names).toContain('drive_envelope_1');
    expect(names).toContain('drive_inertia_ratio');
    expect(names).not.toContain('cycle_torque_1');
  });

  it('a smaller motor raises the envelope use, and a larger ratio lowers the inertia ratio', () => {
    const evaluator = new Evaluator(study);
    const at = (values: Record<string, string>): ReturnType<Evaluator['evaluate']> => evaluator.evaluate(designFromValues(evaluator.variables, { ...study.baseline, ...values }));
    const base = at({});
    const small = at({ motor_1: 'IM-200', motor_2: 'IM-200' });
    expect(metric(small, 'drive_peak_use')).toBeGreaterThan(metric(base, 'drive_peak_use'));
    const geared = at({ gearbox_1: 'PG-60:16', gearbox_2: 'PG-60:16' });
    expect(metric(geared, 'inertia_ratio')).toBeLessThan(metric(base, 'inertia_ratio'));
  });
});

describe('a drive train equal to the rectangle drive gives the same joint-side cycle figures', () => {
  // Same rotor inertia, ratio, efficiency, torques; gearbox input inertia J_g with N² J_g = the inline gear_inertia.
  it.each([
    ['platform-3rrr-cycle.yaml', 20, 0.8, 1.4e-5, 1.0e-5 / 400, '0.64 N*m', '1.9 N*m', '1.5e4 N*m/rad', ''],
    ['parcel-sorter-cycle.yaml', 10, 0.85, 3.4e-5, 2.0e-5 / 100, '1.27 N*m', '3.8 N*m', '3.0e4 N*m/rad', ''],
  ])('%s', (name, ratio, eta, rotor, gearIn, rated, peak, stiffness) => {
    const drives = `drives:\n  motors: m.csv\n  gearboxes: g.csv\n  torque_safety_factor: 1.5\n`;
    const path = variant(name, drives, {
      'm.csv': `name,rated_torque,peak_torque,max_speed,rotor_inertia,encoder_counts\nM,${rated},${peak},3000 rpm,${rotor} kg*m^2,131072\n`,
      'g.csv': `name,ratio,efficiency,inertia,rated_torque,stiffness\nG,${ratio},${eta},${gearIn} kg*m^2,1000 N*m,${stiffness}\n`,
    });
    const trains = loadStudyFile(path).study;
    const plain = loadStudyFile(join(ROOT, 'studies', name)).study;
    const a = new Evaluator(trains);
    const b = new Evaluator(plain);
    const ea = a.evaluate(designFromValues(a.variables, trains.baseline));
    const eb = b.evaluate(designFromValues(b.variables, plain.baseline));
    for (const m of ['cycle_peak_torque_1', 'cycle_rms_torque_2', 'cycle_peak_speed_1', 'peak_gravity_torque', 'accel_capability']) {
      expect(Math.abs(metric(ea, m) - metric(eb, m)), m).toBeLessThanOrEqual(1e-9 * Math.max(Math.abs(metric(eb, m)), 1e-9));
    }
    expect(Number.isFinite(metric(ea, 'drive_peak_use_3'))).toBe(name.includes('3rrr'));
  });
});

describe('a screw drive train equal to the rectangle screw drive gives the same joint-side cycle figures (prismatic)', () => {
  // Direct drive (no gearbox) into a screw: lead, η and the screw-shaft inertia as the inline drive has them.
  it.each([
    ['platform-3rpr-cycle.yaml', '0.32 N*m', '0.95 N*m', '1.2e-5', '5 mm', 0, '2.0e6 N/m', 4096],
    ['rail-sorter-2prr-cycle.yaml', '1.27 N*m', '3.8 N*m', '3.4e-5', '40 mm', 1.5e-5, '2.0e7 N/m', 1048576],
  ])('%s', (name, rated, peak, rotor, lead, screwInertia, stiffness, counts) => {
    const drives = `drives:\n  motors: m.csv\n  torque_safety_factor: 1.5\n  linear_stage: { kind: screw, lead: ${lead}, efficiency: 0.9, max_thrust: 1e5 N, inertia: ${screwInertia} kg*m^2, stiffness: ${stiffness} }\n`;
    const path = variant(name, drives, { 'm.csv': `name,rated_torque,peak_torque,max_speed,rotor_inertia,encoder_counts\nM,${rated},${peak},3000 rpm,${rotor} kg*m^2,${counts}\n` });
    const trains = loadStudyFile(path).study;
    const plain = loadStudyFile(join(ROOT, 'studies', name)).study;
    const a = new Evaluator(trains);
    const b = new Evaluator(plain);
    const ea = a.evaluate(designFromValues(a.variables, trains.baseline));
    const eb = b.evaluate(designFromValues(b.variables, plain.baseline));
    for (const m of ['cycle_peak_torque_1', 'cycle_rms_torque_2', 'cycle_peak_speed_1', 'peak_gravity_torque', 'min_stiffness', 'resolution']) {
      expect(Math.abs(metric(ea, m) - metric(eb, m)), m).toBeLessThanOrEqual(1e-9 * Math.max(Math.abs(metric(eb, m)), 1e-9));
    }
    for (const m of ['drive_peak_use', 'drive_rms_use', 'gearbox_torque_use', 'inertia_ratio']) expect(Number.isFinite(metric(ea, m)), m).toBe(true);
  });
});

describe('prismatic: 2-PRR sliders on a screw', () => {
  it('evaluates the drive checks with a linear stage and a continuous gear ratio', () => {
    const drives =
      'drives:\n  motors: m.csv\n  gearboxes: g.csv\n  choose: shared\n  gear_ratio: { min: 1, max: 3 }\n' +
      '  linear_stage: { kind: screw, lead: 40 mm, efficiency: 0.9, max_thrust: 1500 N, inertia: 1.5e-5 kg*m^2 }\n';
    const path = variant('rail-sorter-2prr-cycle.yaml', drives, {
      'm.csv': 'name,rated_torque,peak_torque,max_speed,corner_speed,rotor_inertia\nA,1.27 N*m,3.8 N*m,6000 rpm,3000 rpm,3.4e-5 kg*m^2\nB,2.39 N*m,7.2 N*m,6000 rpm,3000 rpm,1e-4 kg*m^2\n',
      'g.csv': 'name,ratio,efficiency,inertia,rated_torque,stiffness\nG,1,0.97,0 kg*m^2,20 N*m,1e6 N*m/rad\n',
    }, (t) => t.replace(/\nbaseline:\n/, '\nbaseline:\n  motor: A\n  gear_ratio: 1.5\n'));
    const study = loadStudyFile(path).study;
    expect(designVariables(study).filter((v) => v.role === 'motor' || v.role === 'gear_ratio').map((v) => v.name)).toEqual(['motor', 'gear_ratio']);
    const evaluator = new Evaluator(study);
    const e = evaluator.evaluate(designFromValues(evaluator.variables, study.baseline));
    expect(resolveDesign(study, evaluator.variables, designFromValues(evaluator.variables, study.baseline)).drives![1]!.gearRatio).toBe(1.5);
    for (const m of ['drive_peak_use_1', 'drive_rms_use_2', 'gearbox_torque_use', 'inertia_ratio', 'min_cycle_time']) expect(Number.isFinite(metric(e, m)), m).toBe(true);
  });
});

describe('old studies and static sizing', () => {
  it('a rectangle-drive study keeps its constraints and has no drive-train metrics', () => {
    const study = loadStudyFile(join(ROOT, 'studies', 'parcel-sorter-cycle.yaml')).study;
    expect(study.driveTrains).toBeUndefined();
    expect(constraintDefinitions(study).map((c) => c.name)).toEqual([
      'task_coverage', 'min_stiffness', 'cycle_peak_power', 'drive_torque_1', 'drive_speed_1', 'drive_torque_2', 'drive_speed_2',
      'drive_acceleration', 'cycle_torque_1', 'cycle_rms_1', 'cycle_speed_1', 'cycle_torque_2', 'cycle_rms_2', 'cycle_speed_2', 'cycle_rate',
    ]);
    const evaluator = new Evaluator(study);
    const e = evaluator.evaluate(designFromValues(evaluator.variables, study.baseline));
    expect(Number.isNaN(metric(e, 'drive_peak_use'))).toBe(true);
    expect(staticSizingNote(study)).toBeNull();
  });

  it('without a cycle, check and evaluate say torque sizing is static only', () => {
    const study = loadStudyFile(join(ROOT, 'studies', 'parcel-sorter.yaml')).study;
    expect(staticSizingNote(study)).toMatch(/static only/);
  });
});

describe('a comparison study with drive trains per member', () => {
  it('prefixes the motor and gearbox variables and evaluates both members', () => {
    const dir = mkdtempSync(join(tmpdir(), 'loopsmith-drives-'));
    dirs.push(dir);
    let text = readFileSync(join(ROOT, 'studies', 'compare-fivebar-2prr.yaml'), 'utf8');
    const member = (indent: string, stage: string): string =>
      `${indent}drives:\n${indent}  motors: m.csv\n${indent}  gearboxes: g.csv\n${indent}  choose: shared\n${stage ? `${indent}  linear_stage: ${stage}\n` : ''}`;
    const blocks = text.split(/\n    drives:\n(?:      .*\n)+/);
    expect(blocks.length).toBe(3);
    text = blocks[0] + '\n' + member('    ', '') + blocks[1] + '\n' + member('    ', '{ lead: 40 mm, efficiency: 0.9, max_thrust: 1500 N }') + blocks[2];
    text = text.replace('  fivebar_rod_1: 450 mm', '  fivebar_rod_1: 450 mm\n  fivebar_motor: A\n  prr2_motor: B');
    writeFileSync(join(dir, 'study.yaml'), text);
    writeFileSync(join(dir, 'm.csv'), 'name,rated_torque,peak_torque,max_speed,rotor_inertia\nA,1.27 N*m,3.8 N*m,3000 rpm,3.4e-5 kg*m^2\nB,2.39 N*m,7.2 N*m,3000 rpm,1e-4 kg*m^2\n');
    writeFileSync(join(dir, 'g.csv'), 'name,ratio,efficiency,rated_torque,stiffness\nG,10,0.9,30 N*m,3e4 N*m/rad\n');
    const study = loadStudyFile(join(dir, 'study.yaml')).study;
    const names = designVariables(study).map((v) => v.name);
    expect(names).toContain('fivebar_motor');
    expect(names).toContain('prr2_motor');
    const evaluator = new Evaluator(study);
    for (const architecture of ['five-bar', '2-prr']) {
      const e = evaluator.evaluate(designFromValues(evaluator.variables, { ...study.baseline, architecture }));
      expect(Number.isFinite(metric(e, 'gearbox_estop_use')), architecture).toBe(true);
    }
  });
});

describe('acceleration capability at speed', () => {
  const drives = 'drives:\n  motors: m.csv\n  gearboxes: g.csv\n  torque_safety_factor: 1.5\n';
  const gear = 'name,ratio,efficiency,inertia,rated_torque,stiffness\nG,10,0.85,2e-7 kg*m^2,1000 N*m,3.0e4 N*m/rad\n';
  const at = (motor: string): { still: number; moving: number } => {
    const path = variant('parcel-sorter-cycle.yaml', drives, { 'm.csv': `name,rated_torque,peak_torque,max_speed,corner_speed,peak_torque_at_max_speed,rotor_inertia\n${motor}\n`, 'g.csv': gear });
    const study = loadStudyFile(path).study;
    const evaluator = new Evaluator(study);
    const e = evaluator.evaluate(designFromValues(evaluator.variables, study.baseline));
    return { still: metric(e, 'accel_capability'), moving: metric(e, 'accel_capability_at_speed') };
  };
  it('equals the standstill figure below the corner speed and falls above it', () => {
    // Joint speeds for 2 m/s stay below 80 rpm, 800 rpm at the motor (peak_joint_speed of this design).
    const below = at('M,1.27 N*m,3.8 N*m,3000 rpm,2500 rpm,1 N*m,3.4e-5 kg*m^2');
    expect(below.moving).toBeCloseTo(below.still, 9);
    const above = at('M,1.27 N*m,3.8 N*m,3000 rpm,100 rpm,1 N*m,3.4e-5 kg*m^2');
    expect(above.still).toBeCloseTo(below.still, 9);
    expect(above.moving).toBeLessThan(0.9 * above.still); // about 3.15 of 3.8 N·m left at ~770 rpm
  });
});
