/**
 * simulate with drive trains (docs/drives.md): the singularly perturbed closure against the
 * stabilised one on the demo cycle (studies/parcel-sorter-drivetrains.yaml, INVENTED data), and
 * efforts saturating at the drives' envelopes.
 *
 * Expected behaviour (derived in src/simulate/perturbedChain.ts): ε²Φ̈ + 2εΦ̇ + Φ = ε²Φ̈_free, so
 * the closure error along the cycle is O(ε²) and the motion tends to the constrained one as ε → 0;
 * an initial closure error decays like (1 + t/ε) e^(−t/ε), below 1 % after t ≈ 6.64 ε (derived here:
 * root of (1 + u) e^(−u) = 0.01).
 */
import { describe, expect, it } from 'vitest';
import { join } from 'node:path';
import { loadStudyFile } from '../../src/study/parse.js';
import { prepareStudySimulation, simulateStudyDesign } from '../../src/simulate/study.js';
import { compareFormulations, effortLimits, saturatedShare, saturationHook } from '../../src/simulate/driveSimulation.js';

const ROOT = new URL('../../', import.meta.url).pathname;
const study = loadStudyFile(join(ROOT, 'studies', 'parcel-sorter-drivetrains.yaml')).study;

describe('perturbed and stabilised closures on the demo cycle', () => {
  it('agree, and their difference falls as ε falls', () => {
    const setup = prepareStudySimulation(study);
    const report = compareFormulations(setup, { controller: 'computed-torque' }, [0.01, 0.003, 0.001]);
    console.log(`stabilised: max |Φ| ${report.stabilised.maxClosureError.toExponential(2)} m, decay ${(report.stabilised.decayTime * 1e3).toFixed(2)} ms; ` +
      report.perturbed.map((p) => `ε ${p.epsilon} s: max |Δq| ${p.maxJointDifference.toExponential(2)}, max |ΔP| ${(p.maxEndPointDifference * 1e3).toFixed(4)} mm, max |Φ| ${(p.maxClosureError * 1e3).toFixed(4)} mm, decay ${(p.decayTime * 1e3).toFixed(2)} ms`).join('; '));
    const [a, b, c] = report.perturbed;
    // O(ε²): ε falling by about 3 divides the difference by about 9; at least by 5 is asked.
    expect(a!.maxEndPointDifference / b!.maxEndPointDifference).toBeGreaterThan(5);
    expect(b!.maxEndPointDifference / c!.maxEndPointDifference).toBeGreaterThan(5);
    expect(c!.maxEndPointDifference).toBeLessThan(3e-4); // 0.3 mm at ε = 1 ms
    expect(a!.maxClosureError).toBeGreaterThan(c!.maxClosureError);
    // Decay of an initial closure error: ≈ 6.64 ε as ε → 0 (derived above; at larger ε the transient's
    // own velocities feed Φ̈_free, so the decay measured is faster). Stabilised: 6.64/α = 33.2 ms at α = 200/s.
    expect(report.stabilised.decayTime / (6.64 / report.stabilised.rate)).toBeCloseTo(1, 1);
    expect(a!.decayTime).toBeGreaterThan(b!.decayTime);
    expect(b!.decayTime).toBeGreaterThan(c!.decayTime);
    expect(c!.decayTime / (6.64 * c!.epsilon)).toBeGreaterThan(0.85);
    expect(c!.decayTime / (6.64 * c!.epsilon)).toBeLessThan(1.1);
  }, 600_000);
});

describe('efforts saturating at the drive envelopes', () => {
  it('a weaker motor saturates, the tracking error grows, and the efforts never leave the envelope', () => {
    const strong = prepareStudySimulation(study);
    const weak = prepareStudySimulation(study, ['motor_1=IM-100', 'motor_2=IM-100']);
    const free = simulateStudyDesign(weak, { controller: 'computed-torque' });
    const clipped = simulateStudyDesign(weak, { controller: 'computed-torque', saturate: saturationHook(weak) });
    const baseline = simulateStudyDesign(strong, { controller: 'computed-torque', saturate: saturationHook(strong) });
    const share = saturatedShare(weak, clipped);
    const worst = (r: typeof free): number => Math.max(...r.summary.joints.map((j) => j.maxTrackingError));
    console.log(`saturation: IM-100 at the limit in ${(share * 100).toFixed(1)} % of the samples, max |e| ${worst(clipped).toExponential(3)} rad (unsaturated ${worst(free).toExponential(3)} rad); IM-400 at the limit in ${(saturatedShare(strong, baseline) * 100).toFixed(1)} %, max |e| ${worst(baseline).toExponential(3)} rad`);
    expect(share).toBeGreaterThan(0);
    const limits = effortLimits(weak)!;
    const series = clipped.series;
    for (let k = 0; k < series.count; k++) {
      for (let i = 0; i < 2; i++) expect(Math.abs(series.torques[i]![k]!)).toBeLessThanOrEqual(limits[i]!(series.speeds[i]![k]!) * (1 + 1e-12));
    }
    expect(worst(clipped)).toBeGreaterThan(10 * worst(free));
    // Negative control: the baseline drives stay inside their envelopes on this cycle, so nothing saturates.
    expect(saturatedShare(strong, baseline)).toBe(0);
    expect(worst(baseline)).toBeCloseTo(worst(simulateStudyDesign(strong, { controller: 'computed-torque' })), 9);
  }, 600_000);
});

describe('loopsmith simulate with the drive-train options (command line, in process; needs dist/)', () => {
  const STUDY = join(ROOT, 'studies', 'parcel-sorter-drivetrains.yaml');
  it('--formulation perturbed, --saturate and --compare-epsilon print their lines; bad values are refused', async () => {
    const { runInProcess } = await import('../cli/inProcess.js');
    const perturbed = await runInProcess(['simulate', STUDY, '--formulation', 'perturbed', '--epsilon', '3 ms', '--duration', '0.3 s']);
    expect(perturbed.code, perturbed.stderr).toBe(0);
    expect(perturbed.stdout).toMatch(/loop closure: singularly perturbed, ε = 0\.003 s/);
    const saturated = await runInProcess(['simulate', STUDY, '--saturate', '--set', 'motor_1=IM-100', '--duration', '0.3 s']);
    expect(saturated.code, saturated.stderr).toBe(0);
    expect(saturated.stdout).toMatch(/efforts saturate at the drive envelopes: at the limit in [1-9][0-9.]* %/);
    const compared = await runInProcess(['simulate', STUDY, '--duration', '0.3 s', '--compare-epsilon', '0.01,0.001']);
    expect(compared.code, compared.stderr).toBe(0);
    expect(compared.stdout).toMatch(/perturbed ε = 0\.001 s: max \|Δq\|/);
    expect((await runInProcess(['simulate', STUDY, '--formulation', 'perturbed', '--epsilon', '0 s'])).code).toBe(1);
    expect((await runInProcess(['simulate', STUDY, '--compare-epsilon', 'a,b'])).code).toBe(1);
  }, 600_000);
});
