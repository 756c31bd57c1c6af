/**
 * The 2-PRR, 3-RRR and 3-PRR through the whole pipeline: study files, evaluation, the orientation
 * requirement, the reachable band of a 2-PRR against its closed form, determinism of small runs per
 * architecture (real command line, dist/; run `npm run build` first), and the comparison study
 * whose front holds a five-bar and a 2-PRR.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { join } from 'node:path';
import { readFileSync } from 'node:fs';
import { ARCHITECTURES } from '../../src/architectures/index.js';
import { PoseStatus } from '../../src/architectures/types.js';
import { Evaluator } from '../../src/mechanics/evaluate.js';
import { architectureUsableMargin } from '../../src/mechanics/evaluateArchitecture.js';
import { METRICS, metricIndex } from '../../src/mechanics/metrics.js';
import { designFromValues, designVariables } from '../../src/mechanics/designSpace.js';
import { taskSamples } from '../../src/mechanics/evaluate.js';
import { nonDominated } from '../../src/run/front.js';
import { loadStudyFile, parseStudyText, StudyError } from '../../src/study/parse.js';
import { driveAtJoint } from '../../src/study/drives.js';
import { assertBuilt, dumpDatabase, makeTemporaryDirectory, removeTemporaryDirectories, REPO_ROOT, runArgs, runCli } from '../fixtures/harness.js';

const STUDY = (name: string): string => join(REPO_ROOT, 'studies', name);
const DEMOS = ['rail-sorter-2prr.yaml', 'platform-3rrr.yaml', 'platform-3prr.yaml', 'platform-3rpr.yaml'] as const;

function metric(values: Float64Array, name: string): number {
  return values[metricIndex(name)]!;
}

describe('demo studies of the new architectures', () => {
  for (const file of DEMOS) {
    it(`${file}: the baseline evaluates, covers the task and meets its constraints`, () => {
      const { study } = loadStudyFile(STUDY(file));
      const evaluator = new Evaluator(study);
      const design = designFromValues(evaluator.variables, study.baseline);
      const result = evaluator.evaluate(design);
      const n = ARCHITECTURES[study.architecture].dof;
      expect(metric(result.metrics, 'task_coverage')).toBe(1);
      expect(result.feasible).toBe(true);
      for (const name of ['reachable_area', 'workspace_area', 'gci', 'min_inv_condition', 'min_stiffness', 'bandwidth', 'footprint', 'moving_mass', 'accel_capability', 'resolution']) {
        const v = metric(result.metrics, name);
        expect(Number.isFinite(v) && v > 0, `${name} = ${v}`).toBe(true);
      }
      // The usable workspace is part of the reachable area.
      expect(metric(result.metrics, 'workspace_area')).toBeLessThanOrEqual(metric(result.metrics, 'reachable_area'));
      // Per-actuator metrics exist for exactly n actuators; orientation metrics for 3-DOF only.
      for (let i = 1; i <= 3; i++) expect(Number.isNaN(metric(result.metrics, `peak_gravity_torque_${i}`))).toBe(i > n);
      expect(Number.isNaN(metric(result.metrics, 'orientation_margin'))).toBe(n === 2);
      // Duty-cycle metrics are five-bar only.
      expect(Number.isNaN(metric(result.metrics, 'cycle_peak_torque'))).toBe(true);
      // The same design evaluated twice gives the same bits.
      expect(Array.from(evaluator.evaluate(design).metrics)).toEqual(Array.from(result.metrics));
    });
  }

  it('the peak gravity effort of the 2-PRR baseline is the largest static slider force over the task samples (N)', () => {
    const { study } = loadStudyFile(STUDY('rail-sorter-2prr.yaml'));
    const evaluator = new Evaluator(study);
    const design = designFromValues(evaluator.variables, study.baseline);
    const { architecture, model } = evaluator.architectureDesign(design);
    // Derived, statics of two two-force rods: with massless rods and sliders, rod i carries the force
    // f_i along u_i with f_1 u_1 + f_2 u_2 = m g (the end mass's weight); the slider holds f_i (u_i · e_rail).
    // The rods and sliders have mass here, so compare the pipeline's peak with the peak of the same
    // engine's τ_g over the same task samples — and check the massless closed form separately below.
    const task = taskSamples(study.task.region!, study.evaluation.taskSamples);
    const pose = architecture.createPose();
    let peak = 0;
    for (let k = 0; k < task.x.length; k++) {
      expect(architecture.solvePose(model, pose, task.x[k]!, task.y[k]!)).toBe(PoseStatus.Assembled);
      architecture.poseDynamics(model, pose);
      peak = Math.max(peak, Math.abs(pose.tauG[0]!), Math.abs(pose.tauG[1]!));
    }
    expect(metric(evaluator.evaluate(design).metrics, 'peak_gravity_torque')).toBe(peak);

    const massless = parseStudyText(
      readFileSync(STUDY('rail-sorter-2prr.yaml'), 'utf8')
        .replace(/^ {2}rods: .*$/m, '  rods: { mass_per_length: 0 kg/m }')
        .replace('sliders: 1.2 kg', 'sliders: 0 kg'),
    ).study;
    const m2 = new Evaluator(massless).architectureDesign(designFromValues(designVariables(massless), massless.baseline));
    const endMass = 0.15 + 0.5;
    const g = 9.80665;
    m2.architecture.solvePose(m2.model, pose, 0.1, -0.4);
    m2.architecture.poseDynamics(m2.model, pose);
    const [u1x, u1y, u2x, u2y] = [pose.rodDirection[0]!, pose.rodDirection[1]!, pose.rodDirection[2]!, pose.rodDirection[3]!];
    // Solve f_1 u_1 + f_2 u_2 = (0, −m g) for the rod forces (pulling P towards the sliders is −u_i).
    const det = u1x * u2y - u1y * u2x;
    const wx = 0;
    const wy = -endMass * g;
    const f1 = (wx * u2y - wy * u2x) / det;
    const f2 = (u1x * wy - u1y * wx) / det;
    // Holding effort at slider i balances the rod force's rail component: |f_i u_i,x|.
    expect(Math.abs(pose.tauG[0]!)).toBeCloseTo(Math.abs(f1 * u1x), 9);
    expect(Math.abs(pose.tauG[1]!)).toBeCloseTo(Math.abs(f2 * u2x), 9);
  });

  it('screw drives referred to the slider: force 2π N η τ / ℓ, speed ℓ ω / (2π N), mass J (2π N / ℓ)² (derived)', () => {
    const { study } = loadStudyFile(STUDY('rail-sorter-2prr.yaml'));
    const drive = study.drives![0]!;
    const atJoint = driveAtJoint(drive, 'prismatic');
    const lead = 0.02;
    expect(drive.lead).toBeCloseTo(lead, 15);
    // Derived from the power balance η τ α̇ = F ẋ and ẋ = ℓ α̇ / (2π N), N = 1 here.
    expect(atJoint.ratedEffort).toBeCloseTo((2 * Math.PI * 0.9 * 1.27) / lead, 9);
    expect(atJoint.maxSpeed).toBeCloseTo((3000 * 2 * Math.PI) / 60 * (lead / (2 * Math.PI)), 12);
    expect(atJoint.reflectedInertia).toBeCloseTo(3.4e-5 * ((2 * Math.PI) / lead) ** 2 + 1.5e-5 * ((2 * Math.PI) / lead) ** 2, 9);
    expect(atJoint.encoderStep).toBeCloseTo(lead / 1048576, 18);
    const evaluator = new Evaluator(study);
    const limit = evaluator.evaluate(designFromValues(evaluator.variables, study.baseline));
    const k = evaluator.constraints.findIndex((c) => c.name === 'drive_torque_1');
    expect(limit.constraintMax[k]).toBeCloseTo(atJoint.ratedEffort / 1.5, 9);
  });
});

describe('study files of the new architectures', () => {
  const base = readFileSync(STUDY('rail-sorter-2prr.yaml'), 'utf8');
  it('refuses parameters of another architecture, rails without strokes or window, a cycle without a move, and a drive without a lead', () => {
    expect(() => parseStudyText(base.replace('  rail_height: 0 mm', '  crank_1: 300 mm'))).toThrow(/geometry\.crank_1: not a parameter of the 2-prr/);
    expect(() => parseStudyText(base.replace(/joint_limits:[\s\S]*?max: 850 mm \}\n/, ''))).toThrow(/give a stroke for every slider/);
    expect(() => parseStudyText(base.replace('    lead: 20 mm', ''))).toThrow(/needs lead/);
    // Duty cycles run on every architecture now (docs/duty-cycle.md); a cycle still needs a move.
    expect(() => parseStudyText(`${base}\nduty_cycle: { start: [0, -0.35], steps: [{ dwell: 1 s }] }\n`)).toThrow(/a cycle needs at least one move/);
    expect(() => parseStudyText(base.replace('working_mode: "-+"', 'working_mode: "-+-"'))).toThrow(StudyError);
    expect(() => parseStudyText(base.replace('  - { metric: footprint, sense: min }', '  - { metric: peak_joint_speed_3, sense: min }'))).toThrow(/3-DOF architectures only/);
  });

  it('reads constraint bounds on slider efforts as forces', () => {
    const study = parseStudyText(base.replace('  - { metric: task_coverage, min: 1 }', '  - { metric: task_coverage, min: 1 }\n  - { metric: peak_gravity_torque, max: 50 N }')).study;
    expect(study.constraints.find((c) => c.metric === 'peak_gravity_torque')!.max).toBe(50);
    expect(() => parseStudyText(base.replace('  - { metric: task_coverage, min: 1 }', '  - { metric: peak_gravity_torque, max: 5 N*m }'))).toThrow();
  });
});

describe('2-PRR reachable band against its closed form', () => {
  it('with unlimited rails the reachable set in a window is the band |y − h| ≤ min(d_1, d_2)', () => {
    // Derived (prr2ReachBandHalfHeight): leg i reaches P iff the circle of radius d_i about P meets the
    // rail line, |P_y − h| ≤ d_i; inside the window [−0.5, 0.5] × [−1, 1] the area is 1 m × 2 min(d).
    const text = readFileSync(STUDY('rail-sorter-2prr.yaml'), 'utf8')
      .replace(/joint_limits:[\s\S]*?max: 850 mm \}\n/, '')
      .replace('  rail_height: 0 mm', '  rail_height: 100 mm')
      .replace('  rod_2: { same_as: rod_1 }', '  rod_2: 400 mm')
      .replace('  grid_cells: 100', '  grid_cells: 200\n  window: { x: [-500 mm, 500 mm], y: [-1000 mm, 1000 mm] }')
      .replace('  - { metric: task_coverage, min: 1 }', '  - { metric: gci, min: 0 }');
    const { study } = parseStudyText(text);
    const evaluator = new Evaluator(study);
    for (const rod of [0.3, 0.55]) {
      const result = evaluator.evaluate(designFromValues(evaluator.variables, { rod_1: rod }, true));
      const expected = 1 * 2 * Math.min(rod, 0.4);
      const area = metric(result.metrics, 'reachable_area');
      // Derived error bound: the reach margin d − |y − h| and the window margins are linear, so the grid's
      // interpolated area is exact except in the four corner cells, where the minimum of two linear
      // margins is not linear; each loses less than half a cell, so |error| < 2 h², h = 1 m / 200 cells
      // along the longer side of the clipped box, the window width (seen: 2.5e-5 m²).
      const h = 1 / 200;
      expect(Math.abs(area - expected), `rod ${rod}: grid ${area} vs ${expected}`).toBeLessThan(2 * h * h);
    }
  });

  it('at the stated accuracy the reachable area is the closed form of the band cut by the reachable box, with no error', () => {
    // The demo's strokes [a_i, b_i] on the rail y = h: leg i's reach box is x ∈ [a_i − d_i, b_i + d_i],
    // |y − h| ≤ d_i; the band |y − h| ≤ min(d_1, d_2) (derived above) fills the intersection of the two
    // boxes in y, so the area is (min(b_i + d_i) − max(a_i − d_i)) × 2 min(d_i). Sampling it cost 1,100
    // of the 2,600 points of a random demo design (prr2ReachableArea now).
    const text = readFileSync(STUDY('rail-sorter-2prr.yaml'), 'utf8')
      .replace(/^\s*grid_cells:.*$/m, '')
      .replace(/^(\s*)rod_2: \{ same_as: rod_1 \}.*$/m, '$1rod_2: { min: 350 mm, max: 800 mm }');
    const { study } = parseStudyText(text);
    expect(study.evaluation.tolerance).toBe(0.005);
    const evaluator = new Evaluator(study);
    const [a1, b1, a2, b2] = [-0.85, -0.02, 0.02, 0.85];
    for (const [rod1, rod2] of [[0.45, 0.6], [0.7, 0.5]] as const) {
      const result = evaluator.evaluate(designFromValues(evaluator.variables, { rod_1: rod1, rod_2: rod2 }, true));
      const expected = (Math.min(b1 + rod1, b2 + rod2) - Math.max(a1 - rod1, a2 - rod2)) * 2 * Math.min(rod1, rod2);
      expect(metric(result.metrics, 'reachable_area')).toBeCloseTo(expected, 12);
      expect(result.errors![metricIndex('reachable_area')]).toBe(0);
    }
  });
});

describe('3-RRR orientation requirement', () => {
  const text = readFileSync(STUDY('platform-3rrr.yaml'), 'utf8');

  it('orientation_margin equals the worst margin of φ_0 ± Δφ found by a fine brute-force scan at each task point', () => {
    const { study } = parseStudyText(text);
    const evaluator = new Evaluator(study);
    const design = designFromValues(evaluator.variables, study.baseline);
    const result = evaluator.evaluate(design);
    const { architecture, model } = evaluator.architectureDesign(design);
    const o = study.orientation!;
    const pose = architecture.createPose();
    const usable = (x: number, y: number, phi: number): boolean =>
      architectureUsableMargin(pose, architecture.solvePose(model, pose, x, y, phi), study, 1) >= 0;
    const task = taskSamples(study.task.region!, study.evaluation.taskSamples);
    const step = (0.02 * Math.PI) / 180;
    let worst = Infinity;
    for (let k = 0; k < task.x.length; k++) {
      const x = task.x[k]!;
      const y = task.y[k]!;
      expect(usable(x, y, o.phi0)).toBe(true);
      let hi = o.phi0;
      while (usable(x, y, hi + step) && hi < o.phi0 + Math.PI) hi += step;
      let lo = o.phi0;
      while (usable(x, y, lo - step) && lo > o.phi0 - Math.PI) lo -= step;
      worst = Math.min(worst, Math.min(o.phi0 - o.range - lo, hi - o.phi0 - o.range));
    }
    // Definition (docs/architectures.md): min over task points of min(φ_0 − Δφ − lo, hi − φ_0 − Δφ).
    expect(Math.abs(metric(result.metrics, 'orientation_margin') - worst)).toBeLessThan(step);
    expect(metric(result.metrics, 'orientation_margin')).toBeGreaterThan(0);
  });

  it('a requirement wider than the design allows uncovers the task and makes the margin negative', () => {
    const base = parseStudyText(text).study;
    const baseEvaluator = new Evaluator(base);
    const design = designFromValues(baseEvaluator.variables, base.baseline);
    const margin = metric(baseEvaluator.evaluate(design).metrics, 'orientation_margin');
    const widerDeg = ((base.orientation!.range + margin) * 180) / Math.PI + 5;
    const wide = parseStudyText(text.replace('range: 15 deg', `range: ${widerDeg.toFixed(3)} deg`)).study;
    const result = new Evaluator(wide).evaluate(design);
    expect(metric(result.metrics, 'orientation_margin')).toBeLessThan(0);
    expect(metric(result.metrics, 'task_coverage')).toBeLessThan(1);
    expect(result.feasible).toBe(false);
    // The workspace at φ_0 itself does not depend on Δφ.
    expect(metric(result.metrics, 'workspace_area')).toBe(metric(baseEvaluator.evaluate(design).metrics, 'workspace_area'));
  });
});

beforeAll(assertBuilt);
afterAll(removeTemporaryDirectories);

describe('small runs per architecture (command line)', () => {
  for (const file of [...DEMOS, 'compare-fivebar-2prr.yaml']) {
    it(`${file}: the same run twice (1 and 2 workers) gives the same database contents`, async () => {
      const directory = makeTemporaryDirectory('arch-run');
      const a = join(directory, 'a.db');
      const b = join(directory, 'b.db');
      const settings = { generations: 2, population: 8 };
      const [one, two] = await Promise.all([runCli(runArgs(STUDY(file), a, { ...settings, workers: 1 })), runCli(runArgs(STUDY(file), b, { ...settings, workers: 2 }))]);
      expect(one.code, one.stderr).toBe(0);
      expect(two.code, two.stderr).toBe(0);
      const omit = { runs: ['workers'] };
      const dumpA = dumpDatabase(a, omit);
      expect(dumpA).toEqual(dumpDatabase(b, omit));
      expect((dumpA['evaluations'] ?? []).length).toBeGreaterThan(0);
      expect((dumpA['evaluations'] ?? []).every((row) => row['error'] === null)).toBe(true);
    }, 120_000);
  }
});

describe('comparison study: five-bar against 2-PRR on one front', () => {
  it('stores the union of both architectures\' variables and puts both kinds of design on its front', async () => {
    const { study } = loadStudyFile(STUDY('compare-fivebar-2prr.yaml'));
    const variables = designVariables(study);
    expect(variables.map((v) => v.name)).toEqual(['architecture', 'fivebar_base_span', 'fivebar_crank_1', 'fivebar_rod_1', 'prr2_rail_height', 'prr2_rod_1']);
    const evaluator = new Evaluator(study);
    const baseline = designFromValues(variables, study.baseline);
    // Inactive variables are carried but change nothing.
    const other = Float64Array.from(baseline);
    other[1] = 0.05;
    expect(Array.from(evaluator.evaluate(other).metrics)).toEqual(Array.from(evaluator.evaluate(baseline).metrics));
    const asFiveBar = Float64Array.from(baseline);
    asFiveBar[0] = 0;
    const fiveBar = evaluator.evaluate(asFiveBar);
    const rail = evaluator.evaluate(baseline);
    // The five-bar member gives exactly the numbers of the same design in a five-bar study.
    const member = study.members![0]!;
    const alone = new Evaluator(member).evaluate(designFromValues(designVariables(member), { base_span: 0.2, crank_1: 0.3, rod_1: 0.45 }));
    expect(Array.from(fiveBar.metrics)).toEqual(Array.from(alone.metrics));
    expect(fiveBar.feasible && rail.feasible).toBe(true);
    const minimised = (e: { metrics: Float64Array }): number[] => study.objectives.map((o) => (o.sense === 'max' ? -1 : 1) * e.metrics[metricIndex(o.metric)]!);
    expect(nonDominated([fiveBar, rail], minimised)).toHaveLength(2);

    const directory = makeTemporaryDirectory('compare');
    const db = join(directory, 'c.db');
    const run = await runCli(runArgs(STUDY('compare-fivebar-2prr.yaml'), db, { generations: 6, workers: 2 }));
    expect(run.code, run.stderr).toBe(0);
    const front = await runCli(['front', db, '--format', 'json']);
    expect(front.code, front.stderr).toBe(0);
    const designs = (JSON.parse(front.stdout) as { designs: { variables: Record<string, unknown> }[] }).designs;
    const kinds = new Set(designs.map((d) => d.variables['architecture']));
    expect([...kinds].sort()).toEqual(['2-prr', 'five-bar']);
    const table = await runCli(['front', db]);
    expect(table.code, table.stderr).toBe(0);
    expect(METRICS.length).toBeGreaterThan(0);
  }, 180_000);
});
