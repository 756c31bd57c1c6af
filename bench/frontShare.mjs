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
import { hypervolume, parseStudyText, runFront, runOptimization, Store } from '../dist/index.js';

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

/** Seeds of the bench's front-share runs (each a full default-termination run of the demo study). */
export const FRONT_SHARE_SEEDS = [1, 2, 3, 4, 5];

/** The issue's target: at least this share of the reference hypervolume ... */
export const TARGET_SHARE = 0.99;
/** ... in at most this many evaluations (the default evaluation cap). */
export const TARGET_EVALUATIONS = 10000;

/**
 * Bench section 6: runs the study without its generation count (the default termination: stop on
 * convergence, at most 10,000 evaluations) once per seed and measures the share of the reference
 * front's hypervolume each reaches. Returns plain data (for printing or JSON):
 * { reference: {...}, runs: [{ seed, share, evaluations, endReason, generations, frontDesigns, seconds, met }], target }.
 */
export async function measureFrontShare(loaded, { cacheDir, seeds = FRONT_SHARE_SEEDS, workers = 2, log = () => {} }) {
  // The demo study gives a fixed generation count; without it, the study's default termination applies.
  const text = loaded.text.replace(/^\s*generations:.*$/m, '');
  if (text === loaded.text) throw new Error('bench: could not remove the generation count of the study');
  const defaultStudy = parseStudyText(text, `${loaded.study.name}, default termination`);
  const reference = await referenceFront(loaded, { cacheDir, workers, log });
  const runs = [];
  for (const seed of seeds) {
    const dir = mkdtempSync(join(tmpdir(), 'loopsmith-bench-front-'));
    try {
      const dbPath = join(dir, 'front.db');
      const t0 = performance.now();
      const summary = await runOptimization(defaultStudy, { dbPath, workers, seed });
      const seconds = (performance.now() - t0) / 1000;
      const front = runFrontPoints(dbPath, summary.runId);
      const share = hypervolumeShare(front, reference.points);
      const evaluations = summary.totalEvaluations;
      const run = { seed, share, evaluations, endReason: summary.endReason, generations: summary.generationsDone, frontDesigns: front.length, seconds, met: share >= TARGET_SHARE && evaluations <= TARGET_EVALUATIONS };
      runs.push(run);
      log(run);
    } finally {
      rmSync(dir, { recursive: true, force: true });
    }
  }
  const { points, ...about } = reference;
  return { reference: { ...about, designs: points.length }, runs, target: { share: TARGET_SHARE, evaluations: TARGET_EVALUATIONS } };
}

/** One line per seed for the bench's text output. */
export function describeFrontShareRun(run) {
  return `demo study, default termination, seed ${run.seed}: ${(run.share * 100).toFixed(2)} % of the reference front's hypervolume with ${run.evaluations} evaluations (${run.endReason}, ${run.generations} generations, ${run.frontDesigns} front designs, ${run.seconds.toFixed(0)} s)  [target ≥ 99 % in ≤ 10,000: ${run.met ? 'met' : 'NOT met'}]`;
}

export function describeFrontShareReference(r) {
  return `reference front: ${r.designs} designs from one run of ${r.evaluations} evaluations (population ${r.population} × ${r.generations} generations, seed ${r.seed}, fixed count)${r.cached ? `, cached in ${r.file} (made ${r.madeAt}; delete it to recompute)` : `, computed in ${r.seconds.toFixed(0)} s and cached in ${r.file}`}`;
}

export function describeFrontShareSummary({ runs }) {
  const shares = runs.map((run) => run.share * 100);
  const mean = shares.reduce((a, b) => a + b, 0) / shares.length;
  return `demo study, default termination: share ${Math.min(...shares).toFixed(2)}–${Math.max(...shares).toFixed(2)} % (mean ${mean.toFixed(2)} %) over seeds ${runs.map((run) => run.seed).join(', ')}; at most ${Math.max(...runs.map((run) => run.evaluations))} evaluations; target met by ${runs.filter((run) => run.met).length} of ${runs.length}`;
}
