/**
 * Termination on convergence (src/optimizer/convergence.ts, termination.ts): the run stops by itself
 * when the archive's hypervolume stagnates, not before, and a resumed run stops at the same place.
 */
import { describe, expect, it } from 'vitest';
import {
  ConvergenceMonitor,
  frameOf,
  hypervolume,
  hypervolumeInFrame,
  Nsga2,
  optimize,
  TerminationTracker,
  zdt1,
  type ConvergenceStatus,
  type Nsga2State,
  type TerminationState,
} from '../../src/optimizer/index.js';

/**
 * Analytic hypervolume of the ZDT1 front f2 = 1 - sqrt(f1), f1 in [0, 1] (Zitzler, Deb & Thiele 2000):
 * with reference (1, 1) it is ∫₀¹ sqrt(f1) df1 = 2/3 (derived); with reference (1.1, 1.1) it is
 * ∫₀¹ (0.1 + sqrt(f1)) df1 + 0.1 · 1.1 = 2/3 + 0.21 = 0.876667 (derived).
 */
const ZDT1_HV_REF_1 = 2 / 3;
const ZDT1_HV_REF_1_1 = 2 / 3 + 0.21;

describe('ConvergenceMonitor', () => {
  it('measures the relative archive hypervolume gain over the window in the frame fixed at the window start', () => {
    const monitor = new ConvergenceMonitor({ window: 2, tolerance: 0.01 });
    const a = [[0, 1], [1, 0]];
    const b = [[0, 1], [0.5, 0.5], [1, 0]];
    expect(monitor.observe(0, a).improvement).toBeNull();
    expect(monitor.observe(1, a).improvement).toBeNull();
    const status = monitor.observe(2, b);
    // Frame of generation 0: ideal (0, 0), nadir (1, 1); HV(a) = 1.1² - 1 = 0.21 (derived: the square up to
    // 1.1 minus the unit square a leaves out), HV(b) = 0.21 + 0.25 (the extra corner square, derived).
    expect(hypervolumeInFrame(a, frameOf(a)!)).toBeCloseTo(0.21, 12);
    expect(status.improvement).toBeCloseTo(0.25 / 0.21, 12);
    expect(status.converged).toBe(false);
    expect(monitor.observe(3, b).improvement).toBeCloseTo(0.25 / 0.21, 12); // vs generation 1 (still a)
    const settled = monitor.observe(4, b);
    expect(settled.improvement).toBe(0);
    expect(settled.converged).toBe(true);
  });

  it('is plain JSON between generations: a restored monitor decides the same', () => {
    const monitor = new ConvergenceMonitor({ window: 1, tolerance: 0.5 });
    monitor.observe(0, [[1, 1]]);
    const copy = new ConvergenceMonitor({ window: 1, tolerance: 0.5 }, JSON.parse(JSON.stringify(monitor.toJSON())));
    expect(copy.observe(1, [[0.5, 0.5]])).toEqual(monitor.observe(1, [[0.5, 0.5]]));
  });

  it('an empty archive (no feasible design yet) never counts as converged', () => {
    const monitor = new ConvergenceMonitor({ window: 1, tolerance: 0.5 });
    monitor.observe(0, []);
    expect(monitor.observe(1, []).converged).toBe(false);
  });
});

describe('TerminationTracker', () => {
  // Archives of a front that fills in over generations (invented points on f2 = 1 - f1).
  const archives = Array.from({ length: 12 }, (_, g) => Array.from({ length: g + 2 }, (_, i) => [i / (g + 1), 1 - i / (g + 1)]));

  it('gives the same figures and state whether the archive is measured at once or only when read later', () => {
    for (const termination of [{ generations: 10 }, { maxEvaluations: 400, convergence: { window: 3, tolerance: 0.01 } }]) {
      const atOnce = new TerminationTracker(termination);
      const later = new TerminationTracker(termination);
      const eager: ConvergenceStatus[] = [];
      const decisions: ReturnType<TerminationTracker['afterGeneration']>[] = [];
      for (let g = 0; g < archives.length; g++) {
        const decision = atOnce.afterGeneration(g, 20 * (g + 1), 20, archives[g]!);
        eager.push(decision.status);
        // The second tracker's figures are read only after the next generation was observed.
        decisions.push(later.afterGeneration(g, 20 * (g + 1), 20, archives[g]!));
        expect(decisions[g]!.stop).toBe(decision.stop);
        expect(decisions[g]!.startRefinement).toBe(decision.startRefinement);
        if (decision.stop) break;
      }
      expect(later.toJSON()).toEqual(atOnce.toJSON());
      expect(decisions.map((d) => d.status)).toEqual(eager);
    }
  });
});

describe('termination on convergence with NSGA-II', () => {
  it('ZDT1 stops by itself with the archive hypervolume within 0.5 % of the analytic value', async () => {
    const { problem, evaluate } = zdt1();
    const result = await optimize(problem, evaluate, {
      populationSize: 100,
      seed: 1,
      termination: { maxEvaluations: 100_000, convergence: { window: 20, tolerance: 1e-3 } },
    });
    const points = result.archive.map((m) => m.evaluation.objectives);
    const share1 = hypervolume(points, [1, 1]) / ZDT1_HV_REF_1;
    const share11 = hypervolume(points, [1.1, 1.1]) / ZDT1_HV_REF_1_1;
    // Seen: stops at generation 211 (21,200 evaluations), 99.60 % of 2/3.
    expect(result.endReason).toBe('converged');
    expect(result.evaluations).toBeLessThan(100_000);
    expect(result.convergence.improvement!).toBeLessThan(1e-3);
    expect(share1).toBeGreaterThanOrEqual(0.995);
    expect(share11).toBeGreaterThanOrEqual(0.995);
  }, 120_000);

  it('does not stop early on a problem that keeps improving (ZDT1 with 200 variables): ends on its budget', async () => {
    const { problem, evaluate } = zdt1(200);
    const improvements: (number | null)[] = [];
    const result = await optimize(problem, evaluate, {
      populationSize: 100,
      seed: 1,
      termination: { maxEvaluations: 20_000, convergence: { window: 20, tolerance: 1e-3 } },
      onGeneration: (report) => void improvements.push(report.convergence.improvement),
    });
    expect(result.endReason).toBe('budget');
    expect(result.evaluations).toBe(20_000);
    const known = improvements.filter((v): v is number => v !== null);
    expect(known.length).toBe(improvements.length - 20);
    expect(Math.min(...known)).toBeGreaterThan(1e-3);
  }, 120_000);

  it('a fixed generation count still stops exactly there', async () => {
    const { problem, evaluate } = zdt1();
    const result = await optimize(problem, evaluate, { populationSize: 20, seed: 3, termination: { generations: 7 } });
    expect(result.generation).toBe(7);
    expect(result.evaluations).toBe(160);
    expect(result.endReason).toBe('budget');
  });

  it('a run resumed from a snapshot with its termination state stops at the same generation with the same archive', async () => {
    const { problem, evaluate } = zdt1(10);
    const settings = { populationSize: 20, seed: 5, initialOversampling: 3 };
    const termination = { maxEvaluations: 20 * 400, convergence: { window: 10, tolerance: 1e-2 }, refinementGenerations: 5 };
    const drive = async (optimizer: Nsga2, tracker: TerminationTracker, told: number, until?: number): Promise<{ told: number; last: ConvergenceStatus; stopped: boolean; reason: string | null }> => {
      let last: ConvergenceStatus | undefined;
      for (;;) {
        const designs = optimizer.generation < 0 ? optimizer.initialDesigns() : optimizer.ask();
        optimizer.tell(designs, await evaluate(designs));
        told += designs.length;
        const decision = tracker.afterGeneration(optimizer.generation, told, 20, optimizer.archivePoints());
        if (decision.startRefinement) optimizer.startRefinement();
        last = decision.status;
        if (decision.stop) return { told, last, stopped: true, reason: decision.reason };
        if (until !== undefined && optimizer.generation >= until) return { told, last, stopped: false, reason: null };
      }
    };
    const whole = new Nsga2(problem, settings);
    const wholeEnd = await drive(whole, new TerminationTracker(termination), 0);
    expect(wholeEnd.stopped).toBe(true);

    const first = new Nsga2(problem, settings);
    const firstTracker = new TerminationTracker(termination);
    const half = await drive(first, firstTracker, 0, Math.floor(whole.generation / 2));
    const snapshot = JSON.parse(JSON.stringify(first.snapshot())) as Nsga2State;
    const trackerState = JSON.parse(JSON.stringify(firstTracker.toJSON())) as TerminationState;
    const resumed = Nsga2.restore(problem, settings, snapshot);
    const resumedEnd = await drive(resumed, new TerminationTracker(termination, trackerState), half.told);
    expect(resumed.generation).toBe(whole.generation);
    expect(resumedEnd).toEqual(wholeEnd);
    expect(resumed.snapshot()).toEqual(whole.snapshot());
  }, 120_000);
});

describe('the search of runs that stop on convergence (DE variation, differential refinement)', () => {
  // Same guarantee as above for the settings `loopsmith run` uses when a study stops on convergence
  // (src/run/optimize.ts CONVERGENCE_SEARCH): NSGA-II-DE variation (Li & Zhang 2009) and the
  // differential final refinement. derived here: a snapshot holds everything the next step reads.
  const settings = { populationSize: 20, seed: 11, initialOversampling: 4, variation: 'de' as const, refinementMove: 'differential' as const, refinementEta: 1000 };
  const termination = { maxEvaluations: 20 * 60, convergence: { window: 10, tolerance: 1e-3 }, refinementGenerations: 15 };

  async function drive(optimizer: Nsga2, tracker: TerminationTracker, told: number, until?: number): Promise<{ told: number; stopped: boolean; refined: boolean }> {
    const { evaluate } = zdt1(10);
    let refined = false;
    for (;;) {
      const designs = optimizer.generation < 0 ? optimizer.initialDesigns() : optimizer.ask();
      optimizer.tell(designs, await evaluate(designs));
      told += designs.length;
      const decision = tracker.afterGeneration(optimizer.generation, told, 20, optimizer.archivePoints());
      if (decision.startRefinement) optimizer.startRefinement();
      refined ||= optimizer.currentPhase === 'refine';
      if (decision.stop) return { told, stopped: true, refined };
      if (until !== undefined && optimizer.generation >= until) return { told, stopped: false, refined };
    }
  }

  it('a run resumed from a snapshot in the search and in the refinement ends in the same state', async () => {
    const { problem } = zdt1(10);
    const whole = new Nsga2(problem, settings);
    const wholeEnd = await drive(whole, new TerminationTracker(termination), 0);
    expect(wholeEnd.stopped).toBe(true);
    expect(wholeEnd.refined).toBe(true);
    for (const cut of [5, whole.generation - 5]) {
      const first = new Nsga2(problem, settings);
      const tracker = new TerminationTracker(termination);
      const part = await drive(first, tracker, 0, cut);
      const resumed = Nsga2.restore(problem, settings, JSON.parse(JSON.stringify(first.snapshot())) as Nsga2State);
      const end = await drive(resumed, new TerminationTracker(termination, JSON.parse(JSON.stringify(tracker.toJSON())) as TerminationState), part.told);
      expect(end.told).toBe(wholeEnd.told);
      expect(resumed.snapshot()).toEqual(whole.snapshot());
    }
  }, 120_000);

  it('offspring stay in bounds and differ from the paper variation; the same seed gives the same designs', async () => {
    const { problem, evaluate } = zdt1(10);
    const make = (variation: 'sbx' | 'de'): Nsga2 => new Nsga2(problem, { populationSize: 20, seed: 3, variation });
    const de = make('de');
    const sbx = make('sbx');
    for (const o of [de, sbx]) {
      const initial = o.initialDesigns();
      o.tell(initial, await evaluate(initial));
    }
    const children = de.ask();
    expect(children.every((d) => d.every((v) => v >= 0 && v <= 1))).toBe(true);
    expect(children).not.toEqual(sbx.ask()); // negative control: the option changes the search
    const again = make('de');
    const initial = again.initialDesigns();
    again.tell(initial, await evaluate(initial));
    expect(again.ask()).toEqual(children);
    expect(() => new Nsga2(problem, { populationSize: 20, seed: 3, variation: 'pso' as 'de' })).toThrow(/variation/);
  });
});
