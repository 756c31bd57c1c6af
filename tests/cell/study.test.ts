/**
 * The cell section through the one evaluator: parsing and errors, mounting variables, results of a
 * study unchanged when its cell section restricts nothing, the usable workspace honouring a keep-out,
 * and a mounted design equal to the unmounted one with its task moved along (derived here: the
 * evaluation grid follows the reachable box, which moves with the base).
 */
import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { parseStudyText } from '../../src/study/parse.js';
import { ArchitectureEvaluator } from '../../src/mechanics/evaluateArchitecture.js';
import { designFromValues } from '../../src/mechanics/designSpace.js';
import { METRIC_NAMES, metricIndex } from '../../src/core/metrics.js';

// The demo on a fixed grid of 120 cells: a study with a cell section keeps the fixed grid of
// grid_cells (docs/evaluation.md), so the plain study is evaluated on the same grid to compare with it.
const DEMO = readFileSync(new URL('../../studies/parcel-sorter.yaml', import.meta.url), 'utf8');
const BASE = DEMO.replace(/^(\s*)tolerance:.*$/m, '$1grid_cells: 120');

/** The parcel-sorter study (invented demo) with extra top-level YAML appended. */
function study(extra = '', replace: [string, string][] = []) {
  let text = BASE;
  for (const [a, b] of replace) {
    expect(text.includes(a)).toBe(true);
    text = text.replace(a, b);
  }
  return parseStudyText(`${text}\n${extra}\n`, '<cell test>').study;
}

function evaluateBaseline(s: ReturnType<typeof study>, values: Record<string, number | string> = {}) {
  const ev = new ArchitectureEvaluator(s);
  return ev.evaluate(designFromValues(ev.variables, { ...s.baseline, ...values }));
}

const CELL_METRICS = ['min_clearance', 'passive_joint_margin', 'zone_coverage', 'cycle_coverage', 'regular_workspace_area', 'regular_workspace_width', 'regular_workspace_x', 'regular_workspace_y'];

describe('cell section', () => {
  it('the demo text was put on its fixed grid', () => expect(BASE).toMatch(/^\s*grid_cells: 120$/m));
  it('a study without it evaluates as before: every cell metric NaN', () => {
    const m = evaluateBaseline(study()).metrics;
    for (const name of CELL_METRICS) expect(Number.isNaN(m[metricIndex(name)]!)).toBe(true);
  });
  it('a cell section that restricts nothing leaves every earlier metric bit-identical, and adds the regular workspace', () => {
    const plain = evaluateBaseline(study()).metrics;
    const cell = evaluateBaseline(study('cell:\n  regular_workspace: { aspect: 2 }')).metrics;
    for (const name of METRIC_NAMES) {
      if (CELL_METRICS.includes(name)) continue;
      const a = plain[metricIndex(name)]!;
      const b = cell[metricIndex(name)]!;
      if (Number.isNaN(a)) expect(Number.isNaN(b)).toBe(true);
      else expect(b).toBe(a);
    }
    const area = cell[metricIndex('regular_workspace_area')]!;
    const width = cell[metricIndex('regular_workspace_width')]!;
    expect(area).toBeGreaterThan(0);
    expect(area).toBeCloseTo((width * width) / 2, 12);
    // A 2:1 rectangle cannot be larger than the usable region holding it.
    expect(area).toBeLessThan(plain[metricIndex('workspace_area')]!);
  });
  it('a keep-out over part of the task region shrinks the usable workspace and gives a negative clearance', () => {
    const plain = evaluateBaseline(study()).metrics;
    const walled = evaluateBaseline(
      study('cell:\n  keep_outs:\n    - { name: post, shape: rectangle, centre: [150 mm, -450 mm], width: 40 mm, height: 300 mm }'),
    ).metrics;
    expect(walled[metricIndex('min_clearance')]!).toBeLessThan(0);
    expect(walled[metricIndex('workspace_area')]!).toBeLessThan(plain[metricIndex('workspace_area')]! - 0.01);
    expect(walled[metricIndex('task_coverage')]!).toBeLessThan(1);
    // Negative control: the same post far outside the reach changes nothing but adds a positive clearance.
    const far = evaluateBaseline(study('cell:\n  keep_outs:\n    - { shape: rectangle, centre: [5 m, 5 m], width: 40 mm, height: 300 mm }')).metrics;
    expect(far[metricIndex('workspace_area')]!).toBe(plain[metricIndex('workspace_area')]!);
    expect(far[metricIndex('min_clearance')]!).toBeGreaterThan(3);
  });
  it('mounting variables: a design mounted at (dx, dy) with the task moved by (dx, dy) evaluates as the unmounted one', () => {
    const mounting = 'cell:\n  mounting:\n    mount_x: { min: -200 mm, max: 200 mm }\n    mount_y: { min: -200 mm, max: 200 mm }\n  regular_workspace: { aspect: 1 }';
    const at = (dx: number, dy: number) => {
      const s = study(mounting, [['centre: [0 mm, -450 mm]', `centre: [${dx * 1000} mm, ${-450 + dy * 1000} mm]`]]);
      const ev = new ArchitectureEvaluator(s);
      expect(ev.variables.map((v) => v.name).slice(-2)).toEqual(['mount_x', 'mount_y']);
      return ev.evaluate(designFromValues(ev.variables, { ...s.baseline, mount_x: dx, mount_y: dy })).metrics;
    };
    const home = at(0, 0);
    const moved = at(0.125, -0.0625);
    for (const name of ['workspace_area', 'task_coverage', 'gci', 'min_inv_condition', 'inscribed_radius', 'regular_workspace_area']) {
      expect(moved[metricIndex(name)]!).toBeCloseTo(home[metricIndex(name)]!, 9);
    }
    expect(moved[metricIndex('regular_workspace_x')]! - home[metricIndex('regular_workspace_x')]!).toBeCloseTo(0.125, 9);
    // Negative control: mounted off by (dx, dy) with the task left in place, the coverage or the area changes.
    const s = study(mounting);
    const ev = new ArchitectureEvaluator(s);
    const off = ev.evaluate(designFromValues(ev.variables, { ...s.baseline, mount_x: 0.125, mount_y: -0.0625 })).metrics;
    expect(Math.abs(off[metricIndex('gci')]! - home[metricIndex('gci')]!)).toBeGreaterThan(1e-4);
  });
  it('refuses a baseline mount value for a fixed mounting and a self-crossing keep-out', () => {
    expect(() => study('cell:\n  mounting: { mount_x: 10 mm }', [['baseline:\n', 'baseline:\n  mount_x: 0 mm\n']])).toThrow(/not a design variable/);
    expect(() => study('cell:\n  keep_outs:\n    - vertices: [[0, 0], [2, 2], [2, 0], [0, 1]]')).toThrow(/crosses itself/);
    expect(() => study('cell:\n  cycle_as_task: true')).toThrow(/needs a duty_cycle/);
  });
});

describe('every architecture', () => {
  const cellFor = (name: string): string => (name.includes('prr') ? cell : cell.replace(', slider_length: 50 mm', ''));
  const cell = [
    'cell:',
    '  keep_outs:',
    '    - { name: far wall, shape: rectangle, centre: [3 m, 0 m], width: 100 mm, height: 2 m }',
    '  interference: { links: true, link_width: 10 mm, housings: { radius: 20 mm }, passive_min_angle: 5 deg, slider_length: 50 mm }',
    '  mounting: { mount_angle: { min: -5 deg, max: 5 deg } }',
    '  regular_workspace: { aspect: 1.5, angle: 20 deg }',
  ].join('\n');
  it.each(['rail-sorter-2prr', 'platform-3rrr', 'platform-3prr', 'platform-3rpr'])('%s: the cell metrics are computed and mount_angle is a variable', (name) => {
    const text = readFileSync(new URL(`../../studies/${name}.yaml`, import.meta.url), 'utf8');
    const s = parseStudyText(`${text}\n${cellFor(name)}\n`, name).study;
    const ev = new ArchitectureEvaluator(s);
    expect(ev.variables.at(-1)!.name).toBe('mount_angle');
    const m = ev.evaluate(designFromValues(ev.variables, { ...s.baseline, mount_angle: 0 })).metrics;
    for (const metric of ['min_clearance', 'passive_joint_margin', 'regular_workspace_area']) expect(Number.isFinite(m[metricIndex(metric)]!), metric).toBe(true);
    // The wall is 3 m away: whatever limits the clearance is the mechanism itself (links, housings, sliders), well under 3 m.
    expect(m[metricIndex('min_clearance')]!).toBeLessThan(2.5);
    // Derived here: the rectangle is inside the usable region, so it cannot have more area.
    expect(m[metricIndex('regular_workspace_area')]!).toBeLessThanOrEqual(m[metricIndex('workspace_area')]! + 1e-12);
  });
});
