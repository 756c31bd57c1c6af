/**
 * What NSGA-II (nsga2.ts) and NSGA-III (nsga3.ts) share: the ask/tell cycle around a population of
 * N evaluated designs, the external archive, snapshot and restore, the constrained non-dominated
 * sort with rank and crowding distance of the kept population, the initial Latin hypercube and the
 * variation step (SBX crossover and polynomial mutation, duplicates re-mutated).
 *
 * The two algorithms differ only in three places, which a subclass supplies:
 * - `selectSurvivors`: how P_{t+1} is cut from R_t = P_t ∪ Q_t (crowding distance in NSGA-II,
 *   reference-point niching in NSGA-III);
 * - `makeOffspring`: how parents are chosen for the variation step;
 * - small hooks (`initialCount`, `sortViolation`, `beforeSurvival`, `restoreExtra`, `snapshotExtra`)
 *   for NSGA-II's feasibility-seeking start, ε-constraint level and refinement phase.
 *
 * Determinism: every random draw comes from one seeded source in a fixed order. `ask()` and
 * `initialDesigns()` draw from a copy of the committed random state and cache the designs with the
 * state after them; `tell()` continues from that state (survival draws, if any, come after the
 * offspring's) and commits it. A snapshot taken after `tell()` is plain JSON and restores exactly.
 */

import { deserializeEvaluation, ParetoArchive, serializeEvaluation, type ArchiveMember } from './archive.js';
import type { Member, Nsga2State, ResolvedNsga2Settings } from './nsga2.js';
import { crossover, designLayout, DesignSet, latinHypercube, mutate, mutateVariable, repair, uniformDesign, type DesignLayout } from './operators.js';
import { SeededRandom } from './random.js';
import { crowdingDistance, NonDominatedSorter } from './sorting.js';
import { sanitizeEvaluation, validateProblem, type Evaluation, type ProblemSpec } from './types.js';

/** Maximum re-mutations of an offspring that duplicates an existing design. */
export const MAX_DUPLICATE_ATTEMPTS = 20;

/**
 * Polynomial mutation and repair of a new child, mutated again (at least one variable each time) while
 * it repeats a design already in `seen`, up to MAX_DUPLICATE_ATTEMPTS; the child joins `seen`.
 */
export function mutateDistinct(child: Float64Array, layout: DesignLayout, seen: DesignSet, mutationProbability: number, mutationEta: number, random: SeededRandom): Float64Array {
  mutate(child, layout, mutationProbability, mutationEta, random);
  repair(child, layout);
  for (let attempt = 0; attempt < MAX_DUPLICATE_ATTEMPTS && seen.has(child); attempt++) {
    if (mutate(child, layout, mutationProbability, mutationEta, random) === 0) mutateVariable(child, random.int(layout.count), layout, mutationEta, random);
    repair(child, layout);
  }
  seen.add(child);
  return child;
}

/** A told design with its evaluation and its objectives in minimisation form. */
export interface Individual {
  design: Float64Array;
  evaluation: Evaluation;
  minimized: Float64Array;
}

export abstract class PopulationOptimizer {
  readonly problem: ProblemSpec;
  readonly settings: ResolvedNsga2Settings;
  protected readonly layout: DesignLayout;
  protected readonly objectiveCount: number;
  protected readonly maximize: boolean[];
  protected readonly sorter = new NonDominatedSorter();
  /** Scratch for the sort: minimised objectives (row-major), violations, crowding distances. */
  protected objectiveScratch = new Float64Array(0);
  private violationScratch = new Float64Array(0);
  private distanceScratch = new Float64Array(0);

  /** Random state at the start of the next step; ask()/initialDesigns() draw from a copy. */
  protected random: SeededRandom;
  protected generationNumber = -1;
  protected individuals: Individual[] = [];
  protected members: Member[] = [];
  /** Every told design is offered here (unless `keepArchive` is false); the run's real result. */
  protected paretoArchive: ParetoArchive;
  protected keepArchive = true;
  /** Designs of the next step and the random state after making them (cache of ask()). */
  private pending: { designs: Float64Array[]; randomAfter: SeededRandom } | undefined;

  protected constructor(problem: ProblemSpec, settings: ResolvedNsga2Settings) {
    validateProblem(problem);
    this.problem = problem;
    this.settings = settings;
    this.layout = designLayout(problem);
    this.objectiveCount = problem.objectives.length;
    this.maximize = problem.objectives.map((objective) => objective.sense === 'max');
    this.random = new SeededRandom(settings.seed);
    this.paretoArchive = new ParetoArchive(problem.objectives);
  }

  /** Loads a snapshot() into this fresh optimizer (used by the subclasses' static restore). */
  protected restoreState(state: Nsga2State): void {
    if (!Number.isInteger(state.generation) || state.generation < -1) throw new RangeError(`bad generation ${state.generation}`);
    if ((state.generation === -1) !== (state.population.length === 0)) {
      throw new RangeError('state: the population must be empty exactly when generation is -1');
    }
    this.random = SeededRandom.fromState(state.random);
    this.generationNumber = state.generation;
    this.restoreExtra(state);
    const individuals = state.population.map((entry, j) => {
      if (entry.design.length !== this.layout.count) {
        throw new RangeError(`state: design ${j} has ${entry.design.length} variables, expected ${this.layout.count}`);
      }
      return this.individual(Float64Array.from(entry.design), deserializeEvaluation(entry.evaluation));
    });
    this.adoptPopulation(individuals);
    if (state.archive === undefined) {
      // Older snapshot without an archive: the best that can be rebuilt is its population.
      for (const individual of individuals) this.paretoArchive.offer(individual.design, individual.evaluation);
    } else {
      this.paretoArchive = ParetoArchive.fromJSON(this.problem.objectives, state.archive);
    }
  }

  /** -1 before the initial population is told, 0 after, then +1 per tell(). */
  get generation(): number {
    return this.generationNumber;
  }

  /**
   * The designs of the initial population: Latin hypercube sampling for real and integer
   * variables, uniform for categoricals; a design equal to an earlier one is replaced by a
   * uniformly random one (bounded attempts). Calling it again before tell() returns the same designs.
   */
  initialDesigns(): Float64Array[] {
    if (this.generationNumber !== -1) throw new Error('initialDesigns(): the initial population has already been told');
    return this.pendingDesigns().map((design) => design.slice());
  }

  /** Q_{t+1}: the offspring of P_t. Calling it again before tell() returns the same designs. */
  ask(): Float64Array[] {
    if (this.generationNumber < 0) throw new Error('ask(): tell the initial population first (see initialDesigns())');
    return this.pendingDesigns().map((design) => design.slice());
  }

  /**
   * The first call gives the initial population P_0 (any number of designs; more than N are reduced
   * to N by the survival rule). Every later call gives the evaluated offspring Q_t, and P_{t+1} is
   * chosen from R_t = P_t ∪ Q_t by the subclass's survival rule.
   */
  tell(designs: readonly Float64Array[], evaluations: readonly Evaluation[]): void {
    if (designs.length !== evaluations.length) throw new RangeError(`tell(): ${designs.length} designs but ${evaluations.length} evaluations`);
    if (designs.length === 0) throw new RangeError('tell(): no designs');
    const offspring = designs.map((design, j) => {
      if (design.length !== this.layout.count) throw new RangeError(`tell(): design ${j} has ${design.length} variables, expected ${this.layout.count}`);
      const copy = new Float64Array(design.length);
      for (let i = 0; i < design.length; i++) copy[i] = design[i]! + 0;
      return this.individual(copy, sanitizeEvaluation(evaluations[j]!, this.objectiveCount));
    });
    // Survival draws (NSGA-III's niching) come from the random state that follows the offspring's draws.
    const random = this.pendingRandomAfter().clone();
    if (this.keepArchive) for (const individual of offspring) this.paretoArchive.offer(individual.design, individual.evaluation);
    this.beforeSurvival(offspring);
    const survivors = this.selectSurvivors(this.individuals.concat(offspring), this.settings.populationSize, random);
    this.adoptPopulation(survivors);
    this.random = random;
    this.pending = undefined;
    this.generationNumber++;
  }

  /** Current population P_t with rank and crowding distance (computed within P_t). */
  population(): readonly Member[] {
    return this.members;
  }

  /** Rank-0 feasible members of the current population. */
  front(): readonly Member[] {
    return this.members.filter((member) => member.rank === 0 && member.evaluation.failed === undefined && member.evaluation.violation === 0);
  }

  /**
   * External archive: every feasible design told so far (initial and offspring) that no other told
   * design weakly dominates, in the order it was admitted; of equal objective vectors the first
   * told design. This is the best front found, usually far larger and better than front().
   */
  archive(): readonly ArchiveMember[] {
    return this.paretoArchive.members();
  }

  /** Objectives of the archive members in minimisation form (for convergence tests). */
  archivePoints(): Float64Array[] {
    return this.paretoArchive.points();
  }

  /** Plain-JSON state including the archive; take it after tell() to persist a generation. */
  snapshot(): Nsga2State {
    return {
      generation: this.generationNumber,
      random: this.random.state(),
      population: this.individuals.map((individual) => ({ design: Array.from(individual.design), evaluation: serializeEvaluation(individual.evaluation) })),
      archive: this.paretoArchive.toJSON(),
      ...this.snapshotExtra(),
    };
  }

  // ---------------------------------------------------------------- what a subclass supplies

  /** P_{t+1} from R_t = P_t ∪ Q_t; `random` continues after the offspring's draws. */
  protected abstract selectSurvivors(combined: Individual[], populationSize: number, random: SeededRandom): Individual[];

  /** Q_{t+1} from the current population (and archive), drawing from `random`. */
  protected abstract makeOffspring(random: SeededRandom): Float64Array[];

  /** Designs in the initial Latin hypercube (default N). */
  protected initialCount(): number {
    return this.settings.populationSize;
  }

  /** Violation as the sort sees it (default: the true violation). */
  protected sortViolation(violation: number): number {
    return violation;
  }

  /** Called in tell() after the archive has seen the new designs and before survival. */
  protected beforeSurvival(_told: readonly Individual[]): void {}

  /** Reads the subclass's own fields of a snapshot (before the population is sorted). */
  protected restoreExtra(_state: Nsga2State): void {}

  /** The subclass's own fields of a snapshot. */
  protected snapshotExtra(): Partial<Nsga2State> {
    return {};
  }

  /** Drops the cached designs of the next step (after a change of how they are made). */
  protected discardPending(): void {
    this.pending = undefined;
  }

  // ---------------------------------------------------------------- sorting

  /** Makes `individuals` the population and recomputes rank and crowding within it. */
  protected adoptPopulation(individuals: Individual[]): void {
    this.individuals = individuals;
    if (individuals.length === 0) {
      this.members = [];
      return;
    }
    const { fronts, rank } = this.sortFronts(individuals);
    const distance = this.crowdingScratch(individuals.length);
    for (const front of fronts) crowdingDistance(this.objectiveScratch, this.objectiveCount, front, distance);
    this.members = individuals.map((individual, p) => ({ design: individual.design, evaluation: individual.evaluation, rank: rank[p]!, crowding: distance[p]! }));
  }

  /** Constrained non-dominated sort; leaves the minimised objectives in `objectiveScratch`. */
  protected sortFronts(individuals: Individual[]): { fronts: Int32Array[]; rank: Int32Array } {
    const count = individuals.length;
    const objectiveCount = this.objectiveCount;
    if (this.objectiveScratch.length < count * objectiveCount) {
      this.objectiveScratch = new Float64Array(count * objectiveCount);
      this.violationScratch = new Float64Array(count);
    }
    for (let p = 0; p < count; p++) {
      const individual = individuals[p]!;
      this.objectiveScratch.set(individual.minimized, p * objectiveCount);
      this.violationScratch[p] = this.sortViolation(individual.evaluation.violation);
    }
    return this.sorter.sort({ count, objectiveCount, objectives: this.objectiveScratch, violations: this.violationScratch });
  }

  protected crowdingScratch(count: number): Float64Array {
    if (this.distanceScratch.length < count) this.distanceScratch = new Float64Array(count);
    return this.distanceScratch;
  }

  protected individual(design: Float64Array, evaluation: Evaluation): Individual {
    const minimized = new Float64Array(this.objectiveCount);
    for (let m = 0; m < this.objectiveCount; m++) {
      const value = evaluation.objectives[m] ?? Number.NaN;
      minimized[m] = this.maximize[m] ? -value : value;
    }
    return { design, evaluation, minimized };
  }

  // ---------------------------------------------------------------- variation

  private pendingDesigns(): Float64Array[] {
    this.pending ??= this.makeDesigns();
    return this.pending.designs;
  }

  private pendingRandomAfter(): SeededRandom {
    this.pending ??= this.makeDesigns();
    return this.pending.randomAfter;
  }

  /** Designs of the next step, drawn from a copy of the committed random state. */
  private makeDesigns(): { designs: Float64Array[]; randomAfter: SeededRandom } {
    const random = this.random.clone();
    const designs = this.generationNumber < 0 ? this.makeInitialPopulation(random) : this.makeOffspring(random);
    return { designs, randomAfter: random };
  }

  private makeInitialPopulation(random: SeededRandom): Float64Array[] {
    const designs = latinHypercube(this.initialCount(), this.layout, random);
    const seen = new DesignSet();
    for (const design of designs) {
      for (let attempt = 0; attempt < MAX_DUPLICATE_ATTEMPTS && seen.has(design); attempt++) uniformDesign(this.layout, random, design);
      seen.add(design);
    }
    return designs;
  }

  /**
   * N offspring of the population: pairs of parents by `selectParent` (called twice per pair, first
   * parent first), SBX crossover with probability p_c, polynomial mutation with probability p_m per
   * variable; integers rounded and clamped. An offspring equal to a population member or an earlier
   * offspring is mutated again (up to 20 times; if a round of mutation changes nothing, one random
   * variable is mutated for sure).
   */
  protected variation(random: SeededRandom, selectParent: () => number): Float64Array[] {
    const { populationSize, crossoverProbability, crossoverEta, mutationEta, mutationProbability } = this.settings;
    const layout = this.layout;
    const seen = new DesignSet();
    for (const individual of this.individuals) seen.add(individual.design);
    const scratchPair = new Float64Array(2);
    const offspring: Float64Array[] = [];
    while (offspring.length < populationSize) {
      const first = this.individuals[selectParent()]!.design;
      const second = this.individuals[selectParent()]!.design;
      const child1 = new Float64Array(layout.count);
      const child2 = new Float64Array(layout.count);
      crossover(first, second, child1, child2, layout, crossoverProbability, crossoverEta, random, scratchPair);
      for (const child of [child1, child2]) {
        if (offspring.length === populationSize) break;
        offspring.push(mutateDistinct(child, layout, seen, mutationProbability, mutationEta, random));
      }
    }
    return offspring;
  }
}
