/**
 * The built-arm sections through the one evaluator (study → metrics), on an invented five-bar and
 * 3-RRR study: old studies unchanged, gearbox + servo in series, bearings in series with each leg,
 * the tube list as a design variable, the strength constraints, parse errors.
 */
import { describe, expect, it } from 'vitest';
import { parseStudyText } from '../../src/study/parse.js';
import { evaluateDesign, probeArchitectureDesign } from '../../src/api/design.js';
import { toleranceScatter } from '../../src/api/accuracy.js';

const BASE = `
study: accuracy-test
description: invented scenario for tests
architecture: five-bar
geometry: { base_span: 0.15, base_rise: 0, crank_1: { min: 0.15, max: 0.3 }, rod_1: 0.3, crank_2: { same_as: crank_1 }, rod_2: 0.3 }
working_mode: "+-"
assembly_mode: "+"
mass:
  cranks: { section: { shape: rectangular-tube, width: 30 mm, height: 15 mm, wall: 2 mm }, material: aluminium-6061 }
  rods: { section: { shape: round-tube, diameter: 16 mm, wall: 1.5 mm }, material: aluminium-6061 }
  payload: 0.4 kg
gravity: vertical
drives:
  both: { gear_ratio: 10, rated_torque: 0.6, peak_torque: 1.9, max_speed: 300, joint_stiffness: 3.0e4, encoder_counts: 131072 }
task: { region: { shape: rectangle, centre: [0, 0.3], width: 0.12, height: 0.06 } }
evaluation: { grid_cells: 60, task_samples: 6 }
objectives: [ { metric: gci } ]
baseline: { crank_1: 0.2 }
`;

const metricsOf = (text: string): Readonly<Record<string, number | null>> => evaluateDesign(parseStudyText(text).study).report.metrics;

describe('built-arm sections through the evaluator', () => {
  it('a study without the sections keeps every earlier metric and leaves the new ones empty', () => {
    const plain = metricsOf(BASE);
    expect(plain['position_error_worst']).toBeNull();
    expect(plain['peak_link_stress']).toBeNull();
    // With only tolerances, the stiffness and dynamics metrics are exactly those of the plain study.
    const withTolerances = metricsOf(`${BASE}\ntolerances: { link_length: 0.02 mm }\n`);
    for (const name of ['min_stiffness', 'first_mode_in_plane', 'encoder_resolution', 'gci', 'peak_gravity_torque']) expect(withTolerances[name], name).toBe(plain[name]);
    expect(withTolerances['position_error_worst']).toBeGreaterThan(0);
  });

  it('gearbox and servo in series: same as a drive joint stiffness of 1/(1/k_g + 1/(N² k_s)) (derived: springs in series, servo referred through N²)', () => {
    const kg = 2e4;
    const ks = 50;
    const series = 1 / (1 / kg + 1 / (100 * ks));
    const a = metricsOf(`${BASE}\njoints: { gearbox_torsional_stiffness: ${kg}, servo_stiffness: ${ks} }\n`);
    const b = metricsOf(BASE.replace('joint_stiffness: 3.0e4', `joint_stiffness: ${series}`));
    expect(a['min_stiffness']).toBeCloseTo(b['min_stiffness']!, 6);
    expect(a['first_mode_in_plane']).toBeCloseTo(b['first_mode_in_plane']!, 9);
    expect(a['min_stiffness']).toBeLessThan(metricsOf(BASE)['min_stiffness']!);
  });

  it('bearings: with rigid links and drives, K_x = (k_b/2) Σ u_i u_iᵀ (derived: two pins per leg in series along the rod)', () => {
    const kb = 5e7;
    const rigid = BASE.replace(/mass:\n(  .*\n)+/, 'mass: { payload: 0.4 kg }\n').replace('joint_stiffness: 3.0e4', 'joint_stiffness: 1e30');
    const study = parseStudyText(`${rigid}\njoints: { bearing_radial_stiffness: ${kb} }\n`).study;
    const { report } = probeArchitectureDesign(study, 0.02, 0.31);
    expect(report.status).toBe('assembled');
    const k = [[0, 0], [0, 0]];
    for (let i = 0; i < 2; i++) {
      const ux = report.distalJoints![i]![0] - report.proximalJoints![i]![0];
      const uy = report.distalJoints![i]![1] - report.proximalJoints![i]![1];
      const l = Math.hypot(ux, uy);
      const u = [ux / l, uy / l];
      for (let a = 0; a < 2; a++) for (let b = 0; b < 2; b++) k[a]![b]! += (kb / 2) * u[a]! * u[b]!;
    }
    for (let a = 0; a < 2; a++) for (let b = 0; b < 2; b++) expect(report.cartesianStiffness![a]![b]! / (kb / 2)).toBeCloseTo(k[a]![b]! / (kb / 2), 6);
  });

  it('the tube list is a design variable: the chosen tube sets the mass of the rods (ρ A L per rod)', () => {
    const tubes = `${BASE}
link_sections:
  applies_to: rods
  material: steel
  tubes:
    - { name: small, shape: round-tube, diameter: 10 mm, wall: 1 mm }
    - { name: big, shape: round-tube, diameter: 20 mm, wall: 2 mm }
`;
    const study = parseStudyText(tubes).study;
    const small = evaluateDesign(study, ['link_section=small']).report.metrics['moving_mass']!;
    const big = evaluateDesign(study, ['link_section=big']).report.metrics['moving_mass']!;
    // Derived: Δm = 2 rods × 0.3 m × 7850 kg/m³ × π/4 × ((20² − 16²) − (10² − 8²)) mm².
    const area = (Math.PI / 4) * ((400 - 256) - (100 - 64)) * 1e-6;
    expect(big - small).toBeCloseTo(2 * 0.3 * 7850 * area, 9);
  });

  it('strength section adds link_yield (stress ≤ yield / factor) and link_buckling (Euler ratio ≥ factor)', () => {
    const { report } = evaluateDesign(parseStudyText(`${BASE}\nstrength: { yield_strength: 240 MPa, safety_factor: 2, buckling_factor: 3, end_load: 30 N }\n`).study);
    const yieldRow = report.constraints.find((c) => c.name === 'link_yield')!;
    expect(yieldRow.max).toBeCloseTo(120e6, 3);
    expect(report.constraints.find((c) => c.name === 'link_buckling')!.min).toBe(3);
    expect(report.metrics['peak_link_stress']).toBeGreaterThan(0);
    expect(report.metrics['peak_link_axial_force']).toBeGreaterThan(30); // at least the end load on some leg
  });

  it('a built-arm metric without its section is a study error', () => {
    expect(() => parseStudyText(`${BASE.replace('objectives: [ { metric: gci } ]', 'objectives: [ { metric: position_error_worst } ]')}`)).toThrow(/needs a tolerances section/);
  });

  it('the old names bandwidth and resolution still read, as the renamed metrics', () => {
    const study = parseStudyText(BASE.replace('objectives: [ { metric: gci } ]', 'objectives: [ { metric: bandwidth }, { metric: resolution } ]')).study;
    expect(study.objectives.map((o) => o.metric)).toEqual(['first_mode_in_plane', 'encoder_resolution']);
    const m = evaluateDesign(study).report.metrics;
    expect(m['first_mode_in_plane']).toBeGreaterThan(0);
    expect(m['encoder_resolution']).toBeGreaterThan(0);
  });

  it('3-RRR: the tolerance check through the API (first order vs Monte Carlo, seeded)', () => {
    const text = `
study: rrr-accuracy
description: invented scenario for tests
architecture: 3-rrr
geometry: { base_radius: 0.3, platform_radius: 0.08, platform_twist: 0.2, crank_1: 0.2, rod_1: 0.25, crank_2: 0.2, rod_2: 0.25, crank_3: 0.2, rod_3: 0.25 }
mass: { platform: { mass: 0.5, inertia: 0.001 } }
gravity: horizontal
tolerances: { link_length: 0.01 mm, pivot_position: 0.01 mm, joint_clearance: 0.004 mm, backlash: 0.01 deg }
objectives: [ { metric: gci } ]
`;
    const study = parseStudyText(text).study;
    let report: ReturnType<typeof toleranceScatter> | null = null;
    for (const [x, y] of [[0, 0], [0.02, 0.01], [-0.03, 0.02]] as const) {
      try { report = toleranceScatter(study, x, y, 0, [], { samples: 3000, seed: 3 }); break; } catch { /* try the next point */ }
    }
    expect(report).not.toBeNull();
    expect(Math.abs(report!.rssRatio - 1)).toBeLessThan(0.1);
    expect(report!.worstRatio).toBeGreaterThanOrEqual(1);
    expect(report!.firstOrder.orientationErrorWorst).toBeGreaterThan(0);
  });
});

describe('link loads along the duty cycle', () => {
  // Horizontal plane, no end load: over the region the links carry nothing; along the cycle the end
  // body's inertia loads them (d'Alembert: f = A⁻ᵀ m (−a)). Derived: a move twice as slow has a quarter
  // of the acceleration, so a quarter of the force.
  const cycle = (time: string): string => `${BASE.replace('gravity: vertical', 'gravity: horizontal')}
strength: { end_load: 0 }
duty_cycle:
  waypoints: { a: [-40 mm, 300 mm], b: [40 mm, 300 mm] }
  start: a
  steps:
    - { move_to: b, law: cycloidal, time: ${time} }
    - { move_to: a, law: cycloidal, time: ${time} }
  samples: 200
`;

  it('without a cycle the horizontal arm carries nothing; with it the peak force scales with 1/T²', () => {
    const still = metricsOf(`${BASE.replace('gravity: vertical', 'gravity: horizontal')}\nstrength: { end_load: 0 }\n`);
    expect(still['peak_link_axial_force']).toBe(0);
    const fast = metricsOf(cycle('100 ms'))['peak_link_axial_force']!;
    const slow = metricsOf(cycle('200 ms'))['peak_link_axial_force']!;
    expect(fast).toBeGreaterThan(0);
    expect(fast / slow).toBeCloseTo(4, 9);
    // Derived bound: cycloidal peak acceleration 2π s/T² = 2π · 0.08 m / (0.1 s)² = 50.3 m/s² on 0.4 kg
    // gives |F| = 20.1 N at P; F = Aᵀ f with unit rows, so |F| ≤ √2 |f| ≤ 2 max|f_i|: max|f_i| ≥ |F|/2.
    expect(fast).toBeGreaterThanOrEqual(0.4 * 50.26 * 0.5 * 0.999);
  });
});

describe('public API: toleranceScatter', () => {
  it('checks its arguments and gives the same numbers for the same seed', async () => {
    const api = await import('../../src/index.js');
    const study = api.parseStudyText(`${BASE}\ntolerances: { link_length: 0.01 mm, joint_clearance: 0.003 mm, backlash: 0.02 deg }\n`);
    expect(() => api.toleranceScatter(study, 0, 0.3, { samples: 3 })).toThrow(api.ApiArgumentError);
    const a = api.toleranceScatter(study, 0.01, 0.3, { samples: 500, seed: 4 });
    const b = api.toleranceScatter(study, 0.01, 0.3, { samples: 500, seed: 4 });
    expect(a.monteCarlo.positionMax).toBe(b.monteCarlo.positionMax);
    expect(a.worstRatio).toBeGreaterThanOrEqual(1);
    expect(() => api.toleranceScatter(api.parseStudyText(BASE), 0, 0.3)).toThrow(/no tolerances section/);
  });
});

describe('backlash from the gearbox catalogue', () => {
  it('without a study backlash, the design\'s gearbox backlash is used (same figure as giving it explicitly)', async () => {
    const { mkdtempSync, cpSync, readFileSync, writeFileSync, rmSync } = await import('node:fs');
    const { join } = await import('node:path');
    const { tmpdir } = await import('node:os');
    const { fileURLToPath } = await import('node:url');
    const { loadStudyFile } = await import('../../src/study/parse.js');
    const { Evaluator } = await import('../../src/mechanics/evaluate.js');
    const { chooseDesign } = await import('../../src/api/design.js');
    const studies = fileURLToPath(new URL('../../studies/', import.meta.url));
    const dir = mkdtempSync(join(tmpdir(), 'loopsmith-backlash-'));
    try {
      cpSync(join(studies, 'catalogues'), join(dir, 'catalogues'), { recursive: true });
      const text = readFileSync(join(studies, 'parcel-sorter-drivetrains.yaml'), 'utf8');
      const write = (name: string, extra: string): string => {
        writeFileSync(join(dir, name), `${text}\n${extra}\n`);
        return join(dir, name);
      };
      const fromCatalogue = loadStudyFile(write('a.yaml', 'tolerances: { link_length: 0.01 mm }')).study;
      const choice = chooseDesign(fromCatalogue, []);
      const resolved = new Evaluator(choice.study).architectureDesign(choice.design).resolved;
      const backlash = resolved.drives!.map((d) => d.train!.gearbox.backlash);
      expect(backlash.every((b) => b > 0)).toBe(true); // the invented catalogue gives every gearbox a backlash
      const explicit = loadStudyFile(write('b.yaml', `tolerances: { link_length: 0.01 mm, backlash: { actuator_1: ${backlash[0]}, actuator_2: ${backlash[1]} } }`)).study;
      const none = loadStudyFile(write('c.yaml', 'tolerances: { link_length: 0.01 mm, backlash: 1e-12 }')).study;
      const { metricIndex } = await import('../../src/core/metrics.js');
      const worst = (s: typeof explicit): number => new Evaluator(s).evaluate(chooseDesign(s, []).design).metrics[metricIndex('position_error_worst')]!;
      const a = worst(fromCatalogue);
      expect(a).toBeCloseTo(worst(explicit), 12);
      expect(a).toBeGreaterThan(2 * worst(none)); // negative control: the backlash matters here
    } finally {
      rmSync(dir, { recursive: true, force: true });
    }
  });
});
