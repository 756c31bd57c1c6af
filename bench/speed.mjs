// `npm run bench -- --json`: one JSON object of speed and accuracy figures (no pass/fail; the targets
// of the speed work are printed beside them under "targets"). Single-thread figures use the demo
// studies with their evaluation defaults (the grid_cells line removed: the default tolerance
// governs). Options: --quick (smaller counts).
import { readFileSync, mkdtempSync, rmSync } from 'node:fs';
import { availableParallelism, cpus, loadavg, tmpdir } from 'node:os';
import { join } from 'node:path';
import { execFileSync } from 'node:child_process';
import { fileURLToPath } from 'node:url';

const root = new URL('../', import.meta.url);
const { Evaluator, parseStudyText, runOptimization } = await import(new URL('dist/index.js', root).href);
const { designFromValues } = await import(new URL('dist/mechanics/designSpace.js', root).href);
const { METRICS } = await import(new URL('dist/core/metrics.js', root).href);

const quick = process.argv.includes('--quick');
const read = (file) => readFileSync(new URL(file, root), 'utf8');
/** A demo study with its evaluation defaults: the fixed grid_cells line removed. */
export function withDefaults(text) {
  return text.replace(/^\s*grid_cells:.*$/m, '');
}
const samplesOf = (evaluator) =>
  typeof evaluator.lastWorkspaceSamples === 'function' ? evaluator.lastWorkspaceSamples() : evaluator.path.grid.nx * evaluator.path.grid.ny;
const lcg = (seed) => () => ((seed = (seed * 1103515245 + 12345) % 2147483648) / 2147483648);

/** Single-thread evaluations of random designs over the study's ranges. */
function singleThread(text, count) {
  const evaluator = new Evaluator(parseStudyText(text, 'bench').study);
  const rand = lcg(12345);
  const designs = Array.from({ length: 200 }, () => Float64Array.from(evaluator.variables, (v) => (v.kind === 'real' ? v.min + rand() * (v.max - v.min) : v.min)));
  for (let k = 0; k < 100; k++) evaluator.evaluate(designs[k % 200]);
  let samples = 0;
  const t0 = performance.now();
  const c0 = process.cpuUsage();
  for (let k = 0; k < count; k++) {
    evaluator.evaluate(designs[k % 200]);
    samples += samplesOf(evaluator);
  }
  const seconds = (performance.now() - t0) / 1000;
  const cpu = process.cpuUsage(c0);
  const cpuSeconds = (cpu.user + cpu.system) / 1e6;
  return { evaluationsPerSecond: count / seconds, evaluationsPerCpuSecond: count / cpuSeconds, samplesPerCandidate: samples / count, nsPerSample: (seconds * 1e9) / samples, nsPerSampleCpu: (cpuSeconds * 1e9) / samples };
}

/** Evaluations per second of designs within ±5 % of a study's baseline (as section 5 of bench/run.mjs). */
function baselineRate(text, count) {
  const s = parseStudyText(text, 'bench').study;
  const evaluator = new Evaluator(s);
  const baseline = designFromValues(evaluator.variables, s.baseline);
  const rand = lcg(4242);
  const designs = Array.from({ length: 32 }, () => Float64Array.from(baseline, (v, k) => (evaluator.variables[k].kind === 'real' ? v * (0.95 + 0.1 * rand()) : v)));
  // Warm-up long enough for the optimizing compiler to finish the study's hot paths: its background
  // threads count in this process's CPU time, and 8 evaluations left a study measured first up to a
  // third slower than the same study measured again.
  for (let k = 0; k < 96; k++) evaluator.evaluate(designs[k % 32]);
  const c0 = process.cpuUsage();
  for (let k = 0; k < count; k++) evaluator.evaluate(designs[k % 32]);
  const cpu = process.cpuUsage(c0);
  // CPU time of this thread's process: on a shared machine wall time mostly measures the neighbours.
  return count / ((cpu.user + cpu.system) / 1e6);
}

/** Worst relative errors against the stored 1000-cell references (tests/fixtures/area-reference.json). */
async function accuracy() {
  const { ACCURACY_CASES, caseText } = await import(new URL('scripts/area-reference.mjs', root).href);
  const reference = JSON.parse(read('tests/fixtures/area-reference.json'));
  const index = (name) => METRICS.findIndex((m) => m.name === name);
  const out = {};
  for (const c of ACCURACY_CASES) {
    const evaluator = new Evaluator(parseStudyText(caseText(read(c.file), c, ''), c.name).study);
    const worst = { workspace_area: 0, inscribed_radius: 0, reachable_area: 0 };
    const beyond = { workspace_area: 0, inscribed_radius: 0 };
    const designs = reference.cases.find((x) => x.name === c.name).designs;
    for (const d of designs) {
      const m = evaluator.evaluate(Float64Array.from(d.design)).metrics;
      for (const key of Object.keys(worst)) {
        const error = Math.abs(m[index(key)] / d[key] - 1);
        worst[key] = Math.max(worst[key], error);
        if (key in beyond && error > 0.005) beyond[key]++;
      }
    }
    // Designs beyond 0.5 % (the ones tests/mechanics/adaptive-accuracy.test.ts pins: tips and regions smaller than a coarse cell).
    out[c.name] = { designs: designs.length, ...worst, designs_beyond_0_5_percent: beyond };
  }
  return out;
}

/** Rate of `count` evaluations in 1 worker thread, and in 2 at once: { one, two } (evaluations per wall second, all threads). */
async function machineCeiling(text, count) {
  const { Worker } = await import('node:worker_threads');
  const code = `
    const { workerData, parentPort } = require('node:worker_threads');
    import(workerData.index).then(({ Evaluator, parseStudyText }) => {
      const evaluator = new Evaluator(parseStudyText(workerData.text, 'bench').study);
      let seed = 12345;
      const rand = () => ((seed = (seed * 1103515245 + 12345) % 2147483648) / 2147483648);
      const designs = Array.from({ length: 200 }, () => Float64Array.from(evaluator.variables, (v) => (v.kind === 'real' ? v.min + rand() * (v.max - v.min) : v.min)));
      for (let k = 0; k < 200; k++) evaluator.evaluate(designs[k % 200]);
      parentPort.postMessage('ready');
      parentPort.once('message', () => {
        for (let k = 0; k < workerData.count; k++) evaluator.evaluate(designs[k % 200]);
        parentPort.postMessage('done');
      });
    });`;
  const index = new URL('dist/index.js', root).href;
  const rate = async (threads) => {
    const workers = Array.from({ length: threads }, () => new Worker(code, { eval: true, workerData: { index, text, count } }));
    await Promise.all(workers.map((w) => new Promise((resolve) => w.once('message', resolve))));
    const t0 = performance.now();
    const done = workers.map((w) => new Promise((resolve) => w.once('message', resolve)));
    for (const w of workers) w.postMessage('go');
    await Promise.all(done);
    const seconds = (performance.now() - t0) / 1000;
    await Promise.all(workers.map((w) => w.terminate()));
    return (threads * count) / seconds;
  };
  const one = await rate(1);
  const two = await rate(2);
  return { one, two };
}

async function endToEnd(text, workers, population, generations) {
  const dir = mkdtempSync(join(tmpdir(), 'loopsmith-bench-'));
  try {
    const t0 = performance.now();
    const summary = await runOptimization(parseStudyText(text, 'bench'), { dbPath: join(dir, 'bench.db'), workers, population, generations, seed: 1 });
    return { seconds: (performance.now() - t0) / 1000, evaluations: summary.newEvaluations };
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
}

const demo = withDefaults(read('studies/parcel-sorter.yaml'));
const load = loadavg()[0];
const single = singleThread(demo, quick ? 300 : 2000);
const accuracyFigures = await accuracy();
const byArchitecture = {};
const asWritten = {};
for (const [name, file] of [['five-bar', 'parcel-sorter.yaml'], ['2-prr', 'rail-sorter-2prr.yaml'], ['3-rrr', 'platform-3rrr.yaml'], ['3-prr', 'platform-3prr.yaml'], ['3-rpr', 'platform-3rpr.yaml']]) {
  const text = read(`studies/${file}`);
  byArchitecture[name] = baselineRate(withDefaults(text), quick ? 40 : 200);
  asWritten[name] = baselineRate(text, quick ? 40 : 200);
}
// Parallel efficiency: the demo run as written (100 designs × 60 generations) on 1 and 2 workers,
// alternated, fastest of each.
const generations = quick ? 5 : 60;
const ones = [];
const twos = [];
for (let r = 0; r < (quick ? 1 : 2); r++) {
  twos.push(await endToEnd(demo, 2, 100, generations));
  ones.push(await endToEnd(demo, 1, 100, generations));
}
const fastest = (runs) => runs.reduce((a, b) => (b.seconds < a.seconds ? b : a));
const one = fastest(ones);
const two = fastest(twos);
// Start-up: a whole run of 4 designs × 1 generation on 2 workers (store, pool, study; almost no evaluation).
const startups = [];
for (let r = 0; r < 3; r++) startups.push((await endToEnd(demo, 2, 4, 1)).seconds);
const workspaceWorst = accuracyFigures['five-bar'].workspace_area;
// What the machine itself allows: the same fixed evaluation loop in 1 thread, then in 2 threads at
// once (no pool, no optimizer, no store); the ratio of their rates is the ceiling of any parallel
// efficiency of CPU-bound work here (cores that share execution units or caches, a busy host).
const ceiling = await machineCeiling(demo, quick ? 150 : 600);
// Allocation per evaluation: a child process whose young generation holds every allocation of the measured evaluations.
const allocation = JSON.parse(
  execFileSync(process.execPath, ['--expose-gc', '--min-semi-space-size=512', '--max-semi-space-size=512', fileURLToPath(new URL('bench/alloc.mjs', root))], { encoding: 'utf8' }),
);
const result = {
  node: process.version,
  cores: availableParallelism(),
  cpu: cpus()[0]?.model ?? 'unknown',
  load_average_1min_at_start: load,
  load_average_1min_at_end: loadavg()[0],
  quick,
  ns_per_sample: single.nsPerSample,
  ns_per_sample_cpu_time: single.nsPerSampleCpu,
  evaluations_per_cpu_second: single.evaluationsPerCpuSecond,
  samples_per_candidate: single.samplesPerCandidate,
  bytes_allocated_per_evaluation: allocation.bytes_per_evaluation,
  bytes_allocated_per_workspace_sample: allocation.bytes_per_workspace_sample,
  evaluations_per_second: single.evaluationsPerSecond,
  workspace_area_worst_error: workspaceWorst,
  workspace_area_worst_error_note: 'worst |relative error| against a fixed 1000-cell grid over the 60 random asymmetric demo (five-bar) designs of tests/fixtures/area-reference.json (the first 20 are the set first used)',
  accuracy_by_architecture: accuracyFigures,
  evaluations_per_second_by_architecture: byArchitecture,
  evaluations_per_second_by_architecture_note: 'designs within ±5 % of each demo baseline, evaluations per CPU second of this process (as section 5 of the text bench); _as_written: the demo study with its own grid_cells',
  evaluations_per_second_by_architecture_as_written: asWritten,
  parallel_efficiency: (one.seconds / one.evaluations) / (2 * (two.seconds / two.evaluations)),
  parallel_ceiling_of_this_machine: ceiling.two / (2 * ceiling.one),
  parallel_ceiling_note: 'the same evaluation loop in 2 threads at once against 1 thread (no pool, optimizer or store): the most any parallel efficiency of CPU-bound work reaches on this machine',
  parallel_runs: { one_worker_seconds: ones.map((r) => r.seconds), two_worker_seconds: twos.map((r) => r.seconds), evaluations: one.evaluations },
  startup_seconds: Math.min(...startups),
  startup_runs_seconds: startups,
  targets: { evaluations_per_second: 3000, workspace_area_worst_error: 0.005, parallel_efficiency: 0.85, startup_seconds: 0.3 },
};
process.stdout.write(JSON.stringify(result, null, 1) + '\n');
