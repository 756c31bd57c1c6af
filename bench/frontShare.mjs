// Share of a reference front's hypervolume that a run reaches (used by bench/run.mjs).
//
// The reference front is the feasible non-dominated set of one long run of the same study (population
// 100 × 1,000 generations = 100,000 evaluations, seed 1, a fixed generation count): at least ten times
// the 10,000-evaluation budget of the default termination. It is slow (minutes), so it is computed once
// and cached as JSON in results/ (file name with the study file's hash); delete the file to recompute.
// The share is taken in one normalised frame: ideal and nadir of the union of the reference front and
// the measured front (minimisation form), reference point 1.1 per objective.
import { existsSync, mkdirSync, mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { createHash } from 'node:crypto';
import { hypervolume, runFront, runOptimization, Store } from '../dist/index.js';

export const REFERENCE_SETTINGS = { population: 100, generations: 1000, seed: 1 };

/** Objectives of a stored design in minimisation form. */
function minimisedOf(objectives, metrics) {
  return objectives.map((o) => (o.sense === 'max' ? -metrics[o.metric] : metrics[o.metric]));
}

/** Feasible front of a run in minimisation form: generation members and the optimizer's archive. */
export function runFrontPoints(dbPath, runId) {
  const front = runFront(dbPath, runId);
  const points = front.designs.map((d) => minimisedOf(front.objectives, d.metrics));
  const store = Store.open(dbPath);
  try {
    const run = store.getRun(front.runId);
    const state = run?.optimizerState ? JSON.parse(run.optimizerState) : null;
    for (const member of state?.nsga2?.archive?.members ?? []) {
      points.push(member.evaluation.objectives.map((v, k) => (front.objectives[k].sense === 'max' ? -v : v)));
    }
  } finally {
    store.close();
  }
  return nonDominated(points);
}

export function nonDominated(points) {
  const sorted = [...points].sort((a, b) => {
    for (let k = 0; k < a.length; k++) if (a[k] !== b[k]) return a[k] - b[k];
    return 0;
  });
  const kept = [];
  for (const p of sorted) {
    if (p.some((v) => !Number.isFinite(v))) continue;
    if (!kept.some((q) => q.every((v, k) => v <= p[k]))) kept.push(p);
  }
  return kept;
}

/** The cached reference front of a study (computing it when the cache is missing), with how it was made. */
export async function referenceFront(loaded, { cacheDir, workers = 2, log = () => {} }) {
  const hash = createHash('sha256').update(loaded.text).digest('hex').slice(0, 12);
  const { population, generations, seed } = REFERENCE_SETTINGS;
  const file = join(cacheDir, `bench-reference-${loaded.study.name}-${hash}-${population}x${generations}-seed${seed}.json`);
  if (existsSync(file)) return { ...JSON.parse(readFileSync(file, 'utf8')), file, cached: true };
  log(`computing the reference front: ${population} × ${generations} generations (${population * generations} evaluations), once; cached in ${file}`);
  mkdirSync(cacheDir, { recursive: true });
  const dir = mkdtempSync(join(tmpdir(), 'loopsmith-bench-ref-'));
  try {
    const dbPath = join(dir, 'reference.db');
    const t0 = performance.now();
    const summary = await runOptimization(loaded, { dbPath, workers, population, generations, seed });
    const points = runFrontPoints(dbPath, summary.runId);
    const result = { study: loaded.study.name, studyHash: hash, population, generations, seed, evaluations: summary.evaluations, seconds: (performance.now() - t0) / 1000, madeAt: new Date().toISOString(), points };
    writeFileSync(file, JSON.stringify(result));
    return { ...result, file, cached: false };
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
}

/** HV(front) / HV(reference ∪ front) in the normalised frame of the union (reference point 1.1). */
export function hypervolumeShare(front, reference) {
  const union = nonDominated([...reference, ...front]);
  const m = union[0].length;
  const ideal = Array.from({ length: m }, (_, k) => Math.min(...union.map((p) => p[k])));
  const nadir = Array.from({ length: m }, (_, k) => Math.max(...union.map((p) => p[k])));
  const scale = (points) => points.map((p) => p.map((v, k) => (v - ideal[k]) / (nadir[k] - ideal[k])));
  const ref = new Array(m).fill(1.1);
  return hypervolume(scale(front), ref) / hypervolume(scale(union), ref);
}
