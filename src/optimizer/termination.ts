/**
 * When a run stops, as data: `Termination` says what may end the run, `TerminationTracker` applies it
 * generation by generation and is itself plain JSON between generations (part of a run's state), so
 * a resumed run stops exactly where the uninterrupted one would.
 *
 * Generations are counted as in `Nsga2.generation`: 0 is the initial population, then one per
 * offspring batch. Evaluations are designs told to the optimizer (an oversampled initial population
 * counts in full).
 */
import { ConvergenceMonitor, validateConvergenceSettings, type ConvergenceSettings, type ConvergenceState, type ConvergenceStatus } from './convergence.js';

export interface Termination {
  /** Stop after this generation (offspring generations after the initial population). */
  generations?: number;
  /** Cap on evaluations: no generation is started that would go beyond it. */
  maxEvaluations?: number;
  /** Stop when the archive's hypervolume stagnates (see convergence.ts). */
  convergence?: ConvergenceSettings;
  /**
   * Generations of final local refinement (`Nsga2.startRefinement`) before the run ends: started
   * when the search converges or when only this many generations fit in the evaluation cap
   * (default 0: none).
   */
  refinementGenerations?: number;
  /** Never stop on convergence before this generation (used to continue a converged run). */
  notBefore?: number;
}

/** Why a run ended: its hypervolume stagnated, or a generation count / evaluation cap was reached. */
export type EndReason = 'converged' | 'budget';

export interface TerminationState {
  convergence: ConvergenceState;
  /** Generation at which the search converged (refinement may follow); null while it has not. */
  convergedAt: number | null;
  /** Generation after which refinement started; null before. */
  refinementFrom: number | null;
}

export interface TerminationDecision {
  readonly status: ConvergenceStatus;
  /** Stop after this generation. */
  readonly stop: boolean;
  /** Set when stop is true. */
  readonly reason: EndReason | null;
  /** The next generation is the first of the final refinement: call startRefinement(). */
  readonly startRefinement: boolean;
}

/** Window and tolerance used to report the improvement when the termination itself has no convergence test. */
const REPORTING_CONVERGENCE: ConvergenceSettings = { window: 20, tolerance: 1e-3 };

export function validateTermination(termination: Termination): void {
  const { generations, maxEvaluations, convergence, refinementGenerations, notBefore } = termination;
  if (generations !== undefined && !(Number.isInteger(generations) && generations >= 0)) throw new RangeError(`termination.generations must be an integer >= 0, got ${generations}`);
  if (maxEvaluations !== undefined && !(Number.isInteger(maxEvaluations) && maxEvaluations >= 1)) throw new RangeError(`termination.maxEvaluations must be an integer >= 1, got ${maxEvaluations}`);
  if (refinementGenerations !== undefined && !(Number.isInteger(refinementGenerations) && refinementGenerations >= 0)) throw new RangeError(`termination.refinementGenerations must be an integer >= 0, got ${refinementGenerations}`);
  if (notBefore !== undefined && !Number.isInteger(notBefore)) throw new RangeError(`termination.notBefore must be an integer, got ${notBefore}`);
  if (convergence) validateConvergenceSettings(convergence);
  if (generations === undefined && maxEvaluations === undefined) throw new RangeError('termination needs generations or maxEvaluations (a convergence test alone might never stop)');
}

export class TerminationTracker {
  readonly termination: Termination;
  private readonly monitor: ConvergenceMonitor;
  private convergedAt: number | null;
  private refinementFrom: number | null;
  /** The last generation's observation while it is put off (see afterGeneration). */
  private unobserved: (() => ConvergenceStatus) | null = null;

  constructor(termination: Termination, state?: TerminationState) {
    validateTermination(termination);
    this.termination = termination;
    this.monitor = new ConvergenceMonitor(termination.convergence ?? REPORTING_CONVERGENCE, state?.convergence);
    this.convergedAt = state?.convergedAt ?? null;
    this.refinementFrom = state?.refinementFrom ?? null;
  }

  /** Window and tolerance of the convergence figures (the termination's, or 20 generations and 0.1 % for reporting only). */
  get convergence(): ConvergenceSettings {
    return this.monitor.settings;
  }

  /**
   * Called after generation `generation` was told, with the evaluations told so far, the population
   * size (evaluations of one more generation) and the archive in minimisation form. The archive's
   * hypervolume figures are measured now when the decision depends on them (a convergence test that
   * counts), else when `status` is first read, or at the latest before the next generation or toJSON():
   * the same figures either way, so a caller may start the next generation first. `archive` must
   * stay unchanged until then.
   */
  afterGeneration(generation: number, evaluations: number, populationSize: number, archive: readonly ArrayLike<number>[]): TerminationDecision {
    this.settle();
    const t = this.termination;
    let observed: ConvergenceStatus | null = null;
    const observe = (): ConvergenceStatus => (observed ??= this.monitor.observe(generation, archive));
    this.unobserved = observe;
    const refinement = t.refinementGenerations ?? 0;
    const refining = this.refinementFrom !== null;
    const decide = (stop: boolean, reason: EndReason | null, startRefinement: boolean): TerminationDecision => ({
      get status() {
        return observe();
      },
      stop,
      reason,
      startRefinement,
    });
    const stop = (reason: EndReason): TerminationDecision => decide(true, reason, false);
    const go = (startRefinement: boolean): TerminationDecision => decide(false, null, startRefinement);

    const fits = (n: number): boolean => t.maxEvaluations === undefined || evaluations + n * populationSize <= t.maxEvaluations;
    if (t.generations !== undefined && generation >= t.generations) return stop(this.convergedAt !== null ? 'converged' : 'budget');
    if (!fits(1)) return stop(this.convergedAt !== null ? 'converged' : 'budget');
    if (refining) {
      return generation >= this.refinementFrom! + refinement ? stop(this.convergedAt !== null ? 'converged' : 'budget') : go(false);
    }
    const convergenceCounts = t.convergence !== undefined && (t.notBefore === undefined || generation >= t.notBefore);
    if (convergenceCounts && observe().converged) {
      this.convergedAt = generation;
      if (refinement === 0) return stop('converged');
      this.refinementFrom = generation;
      return go(true);
    }
    // Keep the last `refinement` generations of the evaluation cap for the refinement.
    if (refinement > 0 && t.maxEvaluations !== undefined && !fits(refinement + 1)) {
      this.refinementFrom = generation;
      return go(true);
    }
    return go(false);
  }

  /** Measures the last generation's archive if that was put off (see afterGeneration). */
  private settle(): void {
    this.unobserved?.();
    this.unobserved = null;
  }

  /** Generation at which the search converged (null while it has not). */
  get convergedGeneration(): number | null {
    return this.convergedAt;
  }

  toJSON(): TerminationState {
    this.settle();
    return { convergence: this.monitor.toJSON(), convergedAt: this.convergedAt, refinementFrom: this.refinementFrom };
  }
}
