// NSGA-II against NSGA-III on the invented five-objective test study (tests/fixtures/five-objective-sorter.yaml):
// the same population, generations and seeds for both; hypervolume of each run's stored front with every
// objective normalised by the ideal and nadir of all runs together (minimisation form), reference point 1.1.
// Figures only, no pass/fail. Run after `npm run build`:
//   node bench/nsga3-vs-nsga2.mjs [population] [generations] [seeds, e.g. 1,2,3]
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { hypervolume, loadStudyFile, parseStudyText, runFront, runOptimization } from '../dist/index.js';

const population = Number(process.argv[2] ?? 100);
const generations = Number(process.argv[3] ?? 50);
const seeds = (process.argv[4] ?? '1,2,3').split(',').map(Number);
const base = loadStudyFile(new URL('../tests/fixtures/five-objective-sorter.yaml', import.meta.url).pathname);
const directory = mkdtempSync(join(tmpdir(), 'loopsmith-nsga3-bench-'));
const fronts = [];
try {
  for (const algorithm of ['nsga2', 'nsga3']) {
    for (const seed of seeds) {
      const loaded = parseStudyText(base.text.replace('algorithm: nsga3', `algorithm: ${algorithm}`), `five-objective-sorter (${algorithm})`);
      const dbPath = join(directory, `${algorithm}-${seed}.db`);
      const started = Date.now();
      const summary = await runOptimization(loaded, { dbPath, seed, population, generations, workers: 1 });
      const front = runFront(dbPath, summary.runId);
      const points = front.designs.map((d) => front.objectives.map((o) => (o.sense === 'max' ? -1 : 1) * d.metrics[o.metric]));
      fronts.push({ algorithm, seed, points, seconds: (Date.now() - started) / 1000 });
    }
  }
} finally {
  rmSync(directory, { recursive: true, force: true });
}
const all = fronts.flatMap((f) => f.points);
const m = all[0].length;
const ideal = Array.from({ length: m }, (_, k) => Math.min(...all.map((p) => p[k])));
const nadir = Array.from({ length: m }, (_, k) => Math.max(...all.map((p) => p[k])));
process.stdout.write(`population ${population}, ${generations} generations, seeds ${seeds.join(',')}; HV reference 1.1 per objective (box volume ${(1.1 ** m).toFixed(4)})\n`);
for (const f of fronts) {
  const normalised = f.points.map((p) => p.map((v, k) => (v - ideal[k]) / (nadir[k] - ideal[k])));
  process.stdout.write(`${f.algorithm} seed ${f.seed}: front ${f.points.length} designs, HV ${hypervolume(normalised, Array(m).fill(1.1)).toFixed(4)}, ${f.seconds.toFixed(0)} s\n`);
}
