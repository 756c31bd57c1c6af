// Reference values for tests/mechanics/adaptive-accuracy.test.ts: workspace_area, reachable_area and
// inscribed_radius of random asymmetric designs of every architecture on a fixed 1000-cell grid
// (the fixed-grid engine, sub-cell areas), written to tests/fixtures/area-reference.json.
// Run after `npm run build`: node scripts/area-reference.mjs   (a few minutes on two cores)
import { readFileSync, writeFileSync } from 'node:fs';
import { Evaluator, parseStudyText } from '../dist/index.js';
import { METRICS } from '../dist/core/metrics.js';
import { ARCHITECTURES } from '../dist/architectures/index.js';
import { modelJointScale, sampleWorkspace } from '../dist/mechanics/workspace.js';

const root = new URL('../', import.meta.url);
const read = (file) => readFileSync(new URL(file, root), 'utf8');
/** The demo studies made asymmetric (every leg its own lengths; the five-bar's pivots at different heights). */
export const ACCURACY_CASES = [
  { name: 'five-bar', file: 'studies/parcel-sorter.yaml', designs: 60, edits: [
    ['base_rise: 0 mm', 'base_rise: { min: -120 mm, max: 120 mm }'],
    ['crank_2: { same_as: crank_1 }', 'crank_2: { min: 150 mm, max: 450 mm }'],
    ['rod_2: { same_as: rod_1 }', 'rod_2: { min: 250 mm, max: 650 mm }'],
  ] },
  { name: '2-prr', file: 'studies/rail-sorter-2prr.yaml', designs: 30, edits: [
    ['rod_2: { same_as: rod_1 }', 'rod_2: { min: 350 mm, max: 800 mm }'],
    ['rail_height: 0 mm', 'rail_height: { min: -50 mm, max: 50 mm }'],
  ] },
  { name: '3-rrr', file: 'studies/platform-3rrr.yaml', designs: 30, edits: [
    ['crank_2: { same_as: crank_1 }', 'crank_2: { min: 150 mm, max: 350 mm }'],
    ['rod_2: { same_as: rod_1 }', 'rod_2: { min: 150 mm, max: 350 mm }'],
    ['crank_3: { same_as: crank_1 }', 'crank_3: { min: 150 mm, max: 350 mm }'],
    ['rod_3: { same_as: rod_1 }', 'rod_3: { min: 150 mm, max: 350 mm }'],
  ] },
  { name: '3-prr', file: 'studies/platform-3prr.yaml', designs: 30, edits: [
    ['rod_2: { same_as: rod_1 }', 'rod_2: { min: 250 mm, max: 450 mm }'],
    ['rod_3: { same_as: rod_1 }', 'rod_3: { min: 250 mm, max: 450 mm }'],
  ] },
  { name: '3-rpr', file: 'studies/platform-3rpr.yaml', designs: 30, edits: [] },
];

/**
 * Study text of a case with its grid setting replaced: the `grid_cells` and `tolerance` lines of its
 * evaluation section removed, then `gridLine` (e.g. `grid_cells: 1000`, a fixed grid) put first in
 * that section, or nothing (the default tolerance).
 */
export function caseText(text, c, gridLine) {
  let out = text;
  for (const [from, to] of c.edits) {
    if (!out.includes(from)) throw new Error(`${c.name}: "${from}" not found in ${c.file}`);
    out = out.replace(from, to);
  }
  const section = /^evaluation:\n((?:[ \t]+\S.*\n)*)/m.exec(out);
  if (!section) throw new Error(`${c.name}: no evaluation section in ${c.file}`);
  const body = section[1].replace(/^[ \t]+(?:grid_cells|tolerance|area_tolerance):.*\n/gm, '');
  return out.slice(0, section.index) + `evaluation:\n${gridLine ? `  ${gridLine}\n` : ''}${body}` + out.slice(section.index + section[0].length);
}

/**
 * Inscribed radius on the fixed grid without the node restriction: from the deepest nodes, a compass
 * search (step halved to 1e-6 of the radius) maximises the distance to the boundary points
 * interpolated along the grid's cell edges (brute force over all of them).
 */
function continuousInscribedRadius(sample) {
  const { grid, region } = sample;
  if (region < 0) return 0;
  const { nx, ny, h, x0, y0 } = grid;
  const inside = (k) => grid.labels[k] === region;
  const value = (k) => (inside(k) ? grid.values[k] : grid.values[k] >= 0 ? -grid.values[k] - 1e-300 : grid.values[k]);
  const bx = [];
  const by = [];
  for (let j = 0; j < ny; j++) {
    for (let i = 0; i < nx; i++) {
      const k = j * nx + i;
      const v = value(k);
      if (i + 1 < nx) { const w = value(k + 1); if ((v >= 0) !== (w >= 0)) { bx.push(x0 + (i + v / (v - w)) * h); by.push(y0 + j * h); } }
      if (j + 1 < ny) { const w = value(k + nx); if ((v >= 0) !== (w >= 0)) { bx.push(x0 + i * h); by.push(y0 + (j + v / (v - w)) * h); } }
    }
  }
  const nearest = (x, y) => {
    let best = Infinity;
    for (let p = 0; p < bx.length; p++) best = Math.min(best, (bx[p] - x) ** 2 + (by[p] - y) ** 2);
    return Math.sqrt(best);
  };
  // Starting centres: the 2 % of inside nodes farthest from the boundary by a coarse screen (every 8th boundary point), at most 12.
  const screen = (x, y) => {
    let best = Infinity;
    for (let p = 0; p < bx.length; p += 8) best = Math.min(best, (bx[p] - x) ** 2 + (by[p] - y) ** 2);
    return best;
  };
  const nodes = [];
  for (let k = 0; k < nx * ny; k += 1) if (inside(k)) nodes.push(k);
  const stride = Math.max(1, Math.floor(nodes.length / 4000));
  const scored = [];
  for (let q = 0; q < nodes.length; q += stride) { const k = nodes[q]; scored.push([screen(x0 + (k % nx) * h, y0 + Math.floor(k / nx) * h), k]); }
  scored.sort((a, b) => b[0] - a[0]);
  let best = 0;
  for (const [, k] of scored.slice(0, 12)) {
    let cx = x0 + (k % nx) * h;
    let cy = y0 + Math.floor(k / nx) * h;
    let r = nearest(cx, cy);
    let step = 4 * h * stride;
    while (step > 1e-6 * Math.max(r, h)) {
      let moved = false;
      for (let d = 0; d < 16; d++) {
        if (step >= r) break;
        const x = cx + step * Math.cos((d * Math.PI) / 8);
        const y = cy + step * Math.sin((d * Math.PI) / 8);
        const v = nearest(x, y);
        if (v > r) { r = v; cx = x; cy = y; moved = true; }
      }
      if (!moved) step /= 2;
    }
    best = Math.max(best, r);
  }
  return best;
}

if (import.meta.url === `file://${process.argv[1]}`) {
  const index = (name) => METRICS.findIndex((m) => m.name === name);
  const out = { note: 'Generated by scripts/area-reference.mjs: fixed 1000-cell grid (workspace_area: sub-cell area with the margin continued outside the reach, workspace_area_fixed_grid: the fixed-grid engine value; inscribed_radius maximised continuously against the boundary points interpolated along its cell edges, inscribed_radius_at_nodes the engine\'s node-centred value). Invented scenarios (the demo studies made asymmetric).', cells: 1000, cases: [] };
  for (const c of ACCURACY_CASES) {
    const text = caseText(read(c.file), c, 'grid_cells: 1000');
    const evaluator = new Evaluator(parseStudyText(text, c.name).study);
    const vars = evaluator.variables;
    let seed = 20261202;
    const rand = () => ((seed = (seed * 1103515245 + 12345) % 2147483648) / 2147483648);
    const designs = [];
    let tries = 0;
    while (designs.length < c.designs && tries < 400) {
      tries++;
      const design = vars.map((v) => (v.kind === 'real' ? v.min + rand() * (v.max - v.min) : v.min));
      const m = evaluator.evaluate(Float64Array.from(design)).metrics;
      const workspace = m[index('workspace_area')];
      if (!(workspace > 0)) continue;
      const study = evaluator.study;
      const architecture = ARCHITECTURES[study.architecture];
      const phi = architecture.dof === 3 ? (study.orientation?.phi0 ?? 0) : 0;
      const model = evaluator.path.model(Float64Array.from(design));
      const sample = sampleWorkspace(study, architecture, model, phi, 1000);
      // Unreachable nodes carry −1; outside a leg's reach the margin is continued by the reach margin
      // over the joint scale (as the adaptive sampler does), so that the crossing where the usable set
      // ends at a reach limit (a strut's stroke) is interpolated between comparable values. Signs,
      // and so the regions, do not change.
      const { grid } = sample;
      const jointScale = modelJointScale(model);
      for (let k = 0; k < grid.nx * grid.ny; k++) {
        if (sample.status[k] === 1) grid.values[k] = Math.min(grid.secondary[k] / jointScale, -1e-12);
      }
      const workspaceContinuous = grid.regionArea(sample.region);
      const inscribed = continuousInscribedRadius(sample);
      designs.push({ design, reachable_area: m[index('reachable_area')], workspace_area: workspaceContinuous, workspace_area_fixed_grid: workspace, inscribed_radius: inscribed, inscribed_radius_at_nodes: m[index('inscribed_radius')] });
      process.stderr.write(`${c.name} ${designs.length}/${c.designs}\n`);
    }
    out.cases.push({ name: c.name, designs });
  }
  writeFileSync(new URL('tests/fixtures/area-reference.json', root), JSON.stringify(out, null, 1) + '\n');
}
