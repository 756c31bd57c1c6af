// Region averages and extremes: convergence against closed forms, and the cost per evaluation.
// Figures only, no pass/fail. Run with: npm run build && node bench/region.mjs [--cost | --cost-only]
// The closed forms are derived in tests/mechanics/region.test.ts (invented scenarios).
import { Evaluator, loadStudyFile, parseStudyText } from '../dist/index.js';
import { metricIndex } from '../dist/core/metrics.js';
import { sampleWorkspace } from '../dist/mechanics/workspace.js';
import { taskSamples } from '../dist/mechanics/taskSamples.js';

const line = (s) => process.stdout.write(s + '\n');
const tables = !process.argv.includes('--cost-only');
const pct = (v) => `${(100 * v).toFixed(4)} %`.padStart(11);
const study = (text) => parseStudyText(`study: region-bench\ndescription: invented scenario\n${text}objectives: [ { metric: gci } ]\n`, '<bench>').study;
const evaluate = (s) => {
  const r = new Evaluator(s).evaluate([]);
  return { value: (n) => r.metrics[metricIndex(n)], error: (n) => r.errors[metricIndex(n)] };
};

// 2-PRR, equal rods d = 0.5 m, rail y = 0: 1/κ = min(t, 1/t), t = y/√(d² − y²).
const D = 0.5;
const PRR = `architecture: 2-prr\ngeometry: { rail_height: 0, rod_1: ${D}, rod_2: ${D} }\nworking_mode: "-+"\nassembly_mode: "+"\n`;
const cotAnti = (y) => { const c = Math.sqrt(Math.max(D * D - y * y, 0)); return c - D * Math.log((D + c) / y); };
const split = D / Math.SQRT2;

if (tables) {
  const exact = 1 - Math.SQRT2 + Math.log(1 + Math.SQRT2);
  line('Table 1 — gci over the usable workspace of a 2-PRR bounded by its two singularities (1/κ ≥ 0, no transmission');
  line(`limit, window 0.6 m wide): closed form 1 − √2 + ln(1 + √2) = ${exact.toFixed(6)}. Relative errors.`);
  line('grid_cells | node mean (before) | refined, tol 0.5 | refined, tol 0.005 (estimate) | refined, tol 1e-4');
  for (const cells of [30, 40, 60, 80, 120, 160, 240]) {
    const text = (tol) => `${PRR}task: { speed: 0 }\nevaluation: { grid_cells: ${cells}, tolerance: ${tol}, min_inverse_condition: 0, min_transmission_angle: 0, window: { x: [-0.3, 0.3], y: [-0.6, 0.6] } }\n`;
    const s = study(text(0.005));
    // The estimator before this change: the plain mean of 1/κ over the region's grid nodes.
    const ev = new Evaluator(s);
    const { architecture, model } = ev.architectureDesign([]);
    const w = sampleWorkspace(s, architecture, model, 0, cells);
    let sum = 0;
    let n = 0;
    for (let k = 0; k < w.grid.nx * w.grid.ny; k++) if (w.grid.labels[k] === w.region) { sum += w.inverseCondition[k]; n++; }
    const coarse = evaluate(study(text(0.5))).value('gci');
    const d = evaluate(s);
    const fine = evaluate(study(text(1e-4))).value('gci');
    line(`${String(cells).padStart(10)} | ${pct(sum / n / exact - 1).padStart(18)} | ${pct(coarse / exact - 1).padStart(16)} | ${pct(d.value('gci') / exact - 1)} (${pct(d.error('gci') / exact)}) | ${pct(fine / exact - 1)}`);
  }
  line('');
}

if (tables) {
  const exact = (Math.sqrt(D * D - 0.09) - Math.sqrt(D * D - split * split) + cotAnti(D) - cotAnti(split)) / 0.2;
  line('Table 2 — gci over a task region whose top edge lies on the 2-PRR\'s leg singularity (square-root edge),');
  line(`x ∈ [−0.1, 0.1], y ∈ [0.3, 0.5] m: closed form ${exact.toFixed(6)}. Relative errors.`);
  line('task_samples | trapezoid on the samples (before) | refined, tol 0.005 (estimate) | refined, tol 1e-4');
  for (const samples of [4, 6, 8, 12, 16, 24, 32, 48]) {
    const text = (tol) => `${PRR}task: { region: { shape: rectangle, centre: [0, 0.4], width: 0.2, height: 0.2 } }\nevaluation: { task_samples: ${samples}, tolerance: ${tol}, window: { x: [-0.6, 0.6], y: [-0.6, 0.6] } }\n`;
    const s = study(text(0.005));
    const { architecture, model } = new Evaluator(s).architectureDesign([]);
    const pose = architecture.createPose();
    const t = taskSamples(s.task.region, samples);
    let trapezoid = 0;
    for (let k = 0; k < t.x.length; k++) {
      const status = architecture.solvePose(model, pose, t.x[k], t.y[k]);
      trapezoid += t.weight[k] * (status === 0 ? pose.inverseCondition : 0);
    }
    const d = evaluate(s);
    const fine = evaluate(study(text(1e-4))).value('gci');
    line(`${String(samples).padStart(12)} | ${pct(trapezoid / exact - 1).padStart(33)} | ${pct(d.value('gci') / exact - 1)} (${pct(d.error('gci') / exact)}) | ${pct(fine / exact - 1)}`);
  }
  line('');
}

if (tables) {
  // Five-bar, pivots (∓0.075, 0), cranks 0.2 m, rods 0.3 m: peak_joint_speed_1 = v/(p|s_1|) at the foot of
  // the perpendicular from A_1 to the region's bottom edge (r = 0.11 m), 7.4 mm from the nearest sample at 12.
  const [p, d, v, bottom] = [0.2, 0.3, 1, 0.11];
  const exact = v / (p * Math.sqrt(1 - ((bottom * bottom - p * p - d * d) / (2 * p * d)) ** 2));
  const FIVE = `architecture: five-bar\ngeometry: { base_span: 0.15, base_rise: 0, crank_1: ${p}, rod_1: ${d}, crank_2: ${p}, rod_2: ${d} }\nworking_mode: "+-"\n`;
  const text = (samples, tol) => `${FIVE}task: { region: { shape: rectangle, centre: [-0.0624, ${bottom + 0.03}], width: 0.24, height: 0.06 }, speed: ${v} }\nevaluation: { task_samples: ${samples}, tolerance: ${tol} }\n`;
  line(`Table 3 — an extreme between samples: peak_joint_speed_1 of a five-bar, closed form ${exact.toFixed(6)} rad/s. Relative errors.`);
  line('task_samples | largest on the samples (before) | refined, tol 0.005 (estimate)');
  for (const samples of [4, 6, 8, 12, 16, 24, 32, 48]) {
    const s = study(text(samples, 0.005));
    const { architecture, model } = new Evaluator(s).architectureDesign([]);
    const pose = architecture.createPose();
    const t = taskSamples(s.task.region, samples);
    let peak = 0;
    for (let k = 0; k < t.x.length; k++) {
      architecture.solvePose(model, pose, t.x[k], t.y[k]);
      architecture.poseDynamics(model, pose);
      peak = Math.max(peak, v * pose.inverseJacobianRowNorm[0]);
    }
    const r = evaluate(s);
    line(`${String(samples).padStart(12)} | ${pct(peak / exact - 1).padStart(31)} | ${pct(r.value('peak_joint_speed_1') / exact - 1)} (${pct(r.error('peak_joint_speed_1') / exact)})`);
  }
  line('');
  line('tolerance | refined at task_samples 16 (estimate)');
  for (const tol of [0.05, 0.02, 0.01, 0.005, 0.002, 0.001, 1e-4, 1e-5]) {
    const r = evaluate(study(text(16, tol)));
    line(`${String(tol).padStart(9)} | ${pct(r.value('peak_joint_speed_1') / exact - 1)} (${pct(r.error('peak_joint_speed_1') / exact)})`);
  }
  line('');
}

if (process.argv.includes('--cost') || !tables) {
  // Single-thread evaluations per second of each demo study's baseline and random designs.
  for (const file of ['parcel-sorter.yaml', 'rail-sorter-2prr.yaml', 'platform-3rrr.yaml', 'platform-3prr.yaml', 'platform-3rpr.yaml']) {
    const s = loadStudyFile(new URL(`../studies/${file}`, import.meta.url).pathname).study;
    const evaluator = new Evaluator(s);
    let seed = 12345;
    const rand = () => ((seed = (seed * 1103515245 + 12345) % 2147483648) / 2147483648);
    const designs = [];
    for (let k = 0; k < 50; k++) designs.push(Float64Array.from(evaluator.variables.map((x) => (x.kind === 'categorical' ? 0 : x.min + rand() * (x.max - x.min)))));
    for (let k = 0; k < 10; k++) evaluator.evaluate(designs[k]);
    // CPU time of this thread (user + system) as well as wall time: the machine may be shared.
    const t0 = performance.now();
    const c0 = process.cpuUsage();
    let count = 0;
    while (performance.now() - t0 < 3000) evaluator.evaluate(designs[count++ % designs.length]);
    const cpu = process.cpuUsage(c0);
    const cpuSeconds = (cpu.user + cpu.system) / 1e6;
    line(`${file}: ${(count / cpuSeconds).toFixed(1)} evaluations per CPU second (${(count / ((performance.now() - t0) / 1000)).toFixed(1)} per wall second)`);
  }
}
