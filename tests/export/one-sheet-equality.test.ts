/**
 * Equality of the one candidate sheet and the one MJCF writer (body-tree walk) with the earlier twin
 * builders, for every demo study: the baseline design (and, for studies without drives data, the same)
 * sheet values compared path by path, and both MJCF models run in MuJoCo (mujoco-js) from their home
 * keyframes. Temporary: run before the twins are deleted; its figures are in the report.
 */
import { describe, expect, it } from 'vitest';
import { readdirSync } from 'node:fs';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { loadStudyFile, parseStudyText } from '../../src/study/parse.js';
import { readFileSync } from 'node:fs';
import { designFromValues, designToValues } from '../../src/mechanics/designSpace.js';
import { Evaluator, constraintDefinitions } from '../../src/mechanics/evaluate.js';
import { METRICS } from '../../src/mechanics/metrics.js';
import { chooseDesign } from '../../src/api/design.js';
import { candidateExport as oldExport } from '../../src/export/candidateArchitecture.js';
import { candidateExport as newExport, candidateSchemaErrorsFor } from './oneSheetHelpers.js';
import { flattenSheet } from '../../src/export/csv.js';
import { SimulatedModel } from './mujocoSim.js';

const ROOT = fileURLToPath(new URL('../../', import.meta.url));
const studies = readdirSync(join(ROOT, 'studies')).filter((f) => f.endsWith('.yaml'));

function loaded(name: string) {
  if (name === 'parcel-sorter-no-region') {
    const text = readFileSync(join(ROOT, 'studies', 'parcel-sorter.yaml'), 'utf8').replace(/^ {2}region: .*\n/m, '').replace(/^ {2}- \{ metric: task_coverage.*\n/m, '');
    return parseStudyText(text, name);
  }
  return loadStudyFile(join(ROOT, 'studies', name));
}

async function simulate(xml: string) {
  const sim = await SimulatedModel.load(xml, 'x.xml');
  try {
    sim.resetToKeyframe('home');
    const masses = Array.from(sim.bodyMasses());
    const armature = Array.from(sim.armature());
    sim.step(1);
    const acc = Array.from(sim.jointAccelerations());
    sim.step(199);
    const q = Array.from(sim.jointPositions());
    return { sizes: sim.sizes, masses, armature, acc, q };
  } finally {
    sim.dispose();
  }
}

/** Relative difference, on a floor of 1e-3 (SI values: a coordinate near 0 is compared on a mm scale). */
const rel = (a: number, b: number) => (a === b ? 0 : Math.abs(a - b) / Math.max(Math.abs(a), Math.abs(b), 1e-3));

describe.each([...studies, 'parcel-sorter-no-region'])('%s', (name) => {
  it('new sheet equals the old one; new MJCF runs as the old one in MuJoCo', async () => {
    const l = loaded(name);
    const study = l.study;
    const choice = chooseDesign(study, []);
    const ev = new Evaluator(choice.study).evaluate(choice.design);
    const metrics: Record<string, number | null> = {};
    METRICS.forEach((m, k) => (metrics[m.name] = Number.isNaN(ev.metrics[k]!) ? null : ev.metrics[k]!));
    const constraints: Record<string, number | null> = {};
    constraintDefinitions(study).forEach((c, k) => (constraints[c.name] = ev.margins[k]!));
    const variables = designToValues(new Evaluator(study).variables, choice.design);
    const record = { id: 7, variables, metrics, constraints, feasible: ev.feasible, violation: ev.violation };
    const prov = { database: 'none', evaluationId: 7, runId: 1, runKind: 'evaluate', seed: 1, studyName: study.name, studyFileHash: l.fileHash, settingsHash: l.settingsHash, loopsmithVersion: '0.1.0' };
    const a = oldExport(study, record, prov);
    const b = newExport(study, record, prov);
    expect(candidateSchemaErrorsFor(b.sheet).map((e) => `${e.instancePath} ${e.schemaPath} ${e.message}`)).toEqual([]);
    const fa = flattenSheet(a.sheet);
    const fb = flattenSheet(b.sheet as never);
    let exact = 0, numbers = 0, worst = 0, worstPath = '';
    const textDiffs: string[] = [];
    const missing: string[] = [];
    for (const [path, va] of fa) {
      if (!fb.has(path)) { missing.push(path); continue; }
      const vb = fb.get(path);
      if (typeof va === 'number' && typeof vb === 'number') {
        numbers++;
        if (va === vb) exact++;
        const r = rel(va, vb);
        if (r > worst) { worst = r; worstPath = path; }
      } else if (va !== vb) textDiffs.push(`${path}: ${String(va)} | ${String(vb)}`);
    }
    const xa = await simulate(a.mjcf());
    const xb = await simulate(b.mjcf());
    let simWorst = 0;
    for (const key of ['masses', 'armature', 'acc', 'q'] as const) {
      xa[key].forEach((v, k) => { simWorst = Math.max(simWorst, Math.abs(v - xb[key][k]!)); });
    }
    console.info(`${name} [${a.sheet.architecture}]: ${numbers} numbers, ${exact} bit-equal, worst relative ${worst.toExponential(2)} (${worstPath}); missing paths ${missing.length ? missing.join(' ') : 'none'}; text changes ${textDiffs.length ? textDiffs.join(' ; ') : 'none'}; MuJoCo: sizes ${JSON.stringify(xa.sizes) === JSON.stringify(xb.sizes) ? 'equal' : 'DIFFER'}, largest |difference| of masses, armature, q̈ at home, q after 0.1 s: ${simWorst.toExponential(2)}; |q̈|∞ held ${Math.max(...xb.acc.map(Math.abs)).toExponential(2)}`);
    expect(missing).toEqual([]);
    // Without a task region the home node differs (the one rule: largest Euclidean distance to the
    // region's outside; the earlier five-bar sheet: 4-connected steps); reported, not compared.
    if (name === 'parcel-sorter-no-region') return;
    expect(worst).toBeLessThan(1e-12);
    expect(xb.sizes).toEqual(xa.sizes);
    expect(simWorst).toBeLessThan(1e-9);
  }, 60_000);
});
