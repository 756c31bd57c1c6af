/**
 * NSGA-II, written from Deb, Pratap, Agarwal & Meyarivan 2002, "A fast and
 * elitist multiobjective genetic algorithm: NSGA-II", IEEE Transactions on
 * Evolutionary Computation 6(2), 182-197.
 *
 * The paper's main loop (Section III-C), one generation t:
 *
 *     R_t     = P_t ∪ Q_t                       combine parents and offspring
 *     F       = fast-non-dominated-sort(R_t)    (constrained domination, Section IV)
 *     P_{t+1} = ∅; i = 1
 *     until |P_{t+1}| + |F_i| > N:
 *         crowding-distance-assignment(F_i); P_{t+1} = P_{t+1} ∪ F_i; i = i + 1
 *     crowding-distance-assignment(F_i); sort(F_i, ≺_n)
 *     P_{t+1} = P_{t+1} ∪ F_i[1 : N - |P_{t+1}|]
 *     Q_{t+1} = make-new-pop(P_{t+1})           tournament, crossover, mutation
 *
 * This class splits the loop at the evaluation so that the caller owns it
 * (ask/tell): `ask()` is make-new-pop, the caller evaluates Q_{t+1}, and
 * `tell()` is the survival step. Between generations the whole state is a
 * plain JSON object (`snapshot()`), and `Nsga2.restore` continues exactly
 * where the snapshot was taken.
 *
 * Choices not fixed by the paper, kept deterministic:
 * - ties are broken by index order (stable sorts), a tournament between two
 *   equal members by one random draw;
 * - rank and crowding distance of the surviving population are recomputed on
 *   that population alone (Deb's code keeps the values computed on R_t), so
 *   that a population restored from a snapshot is indistinguishable;
 * - offspring equal to a parent or to an earlier offspring are re-mutated
 *   (bounded number of attempts), see `ask()`.
 *
 * Not in the paper: every told design is also offered to an external archive
 * (archive.ts) of the non-dominated feasible designs found so far, which is
 * the run's real result (`archive()`). The search never reads it.
 */

import {
  crossover,
  crowdedTournament,
  designLayout,
  DesignSet,
  KIND_CATEGORICAL,
  latinHypercube,
  mutate,
  mutateVariable,
  repair,
  uniformDesign,
  type DesignLayout,
} from './operators.js';
import { deserializeEvaluation, ParetoArchive, serializeEvaluation, type ArchiveMember, type SerializedArchive, type SerializedEvaluation } from './archive.js';
import { SeededRandom, type RandomState } from './random.js';
import { crowdingDistance, NonDominatedSorter } from './sorting.js';
import { sanitizeEvaluation, validateProblem, type BatchEvaluate, type Evaluation, type ProblemSpec } from './types.js';
import { TerminationTracker, type EndReason, type Termination } from './termination.js';
import type { ConvergenceStatus } from './convergence.js';

export interface Nsga2Settings {
  /** N, the number of parents kept and of offspring made per generation. */
  populationSize: number;
  /** Probability that a selected pair is crossed (default 0.9). */
  crossoverProbability?: number;
  /** SBX distribution index eta_c (default 20). */
  crossoverEta?: number;
  /** Polynomial mutation distribution index eta_m (default 20). */
  mutationEta?: number;
  /** Per-variable mutation probability (default 1 / number of variables). */
  mutationProbability?: number;
  /** Any safe integer. */
  seed: number;
  /**
   * Feasibility-seeking start: the initial Latin hypercube has round(k · N) designs, and the
   * survival rule (constrained domination) keeps the best N of them (default k = 1, the paper's start).
   */
  initialOversampling?: number;
  /**
   * ε-constraint handling (Takahama & Sakai 2006, see `EpsilonConstraintSettings`); absent: Deb's
   * constrained domination exactly as in the paper.
   */
  epsilonConstraint?: EpsilonConstraintSettings;
  /** Distribution index of the polynomial moves of the final local refinement (default 100). */
  refinementEta?: number;
}

/**
 * The ε level of Takahama & Sakai 2006 ("Constrained optimization by the ε constrained differential
 * evolution with gradient-based mutation and feasible elites", IEEE CEC 2006): designs whose
 * violation is at most ε(t) count as feasible in the sort, so that near-feasible designs with good
 * objectives keep informing the search while the feasible region is still thinly sampled.
 * ε(0) is the violation of the design at the `quantile` of the initial population sorted by
 * violation; ε(t) = ε(0) · (1 - t / T_c)^cp for t < T_c and 0 from generation T_c on, after which
 * the sort is Deb's constrained domination again. The archive always uses the true violation.
 */
export interface EpsilonConstraintSettings {
  /** T_c: generation from which ε = 0. */
  generations: number;
  /** cp (default 5, as in the paper). */
  exponent?: number;
  /** θ as a fraction of the initial population (default 0.2, as in the paper). */
  quantile?: number;
}

export interface Member {
  /** Shared with the optimizer's state: read it, do not modify it. */
  design: Float64Array;
  /** Sanitized evaluation, objectives in the problem's own sense. */
  evaluation: Evaluation;
  /** Front index within the population, 0 = non-dominated. */
  rank: number;
  /** Crowding distance within its front (boundary members: +Infinity). */
  crowding: number;
}

export { deserializeEvaluation, serializeEvaluation, type ArchiveMember, type SerializedArchive, type SerializedEvaluation } from './archive.js';

/** Plain JSON; JSON.parse(JSON.stringify(state)) restores exactly the same optimizer. */
export interface Nsga2State {
  /** -1 before the initial population has been told. */
  generation: number;
  random: RandomState;
  population: { design: number[]; evaluation: SerializedEvaluation }[];
  /**
   * The external archive (see archive.ts). Always written by snapshot(); a
   * state without it (older snapshots) is restored with the archive rebuilt
   * from its population.
   */
  archive?: SerializedArchive;
  /** ε(0) of the ε-constraint handling, once the initial population is told (absent without it). */
  epsilonZero?: number;
  /** 'refine' after startRefinement() (absent: 'search'). */
  phase?: 'search' | 'refine';
}

/** Settings with every default filled in. */
export interface ResolvedNsga2Settings {
  populationSize: number;
  crossoverProbability: number;
  crossoverEta: number;
  mutationEta: number;
  mutationProbability: number;
  seed: number;
  initialOversampling: number;
  epsilonConstraint: Required<EpsilonConstraintSettings> | null;
  refinementEta: number;
}

/** Maximum re-mutations of an offspring that duplicates an existing design. */
const MAX_DUPLICATE_ATTEMPTS = 20;

export function resolveSettings(problem: ProblemSpec, settings: Nsga2Settings): ResolvedNsga2Settings {
  const resolved: ResolvedNsga2Settings = {
    populationSize: settings.populationSize,
    crossoverProbability: settings.crossoverProbability ?? 0.9,
    crossoverEta: settings.crossoverEta ?? 20,
    mutationEta: settings.mutationEta ?? 20,
    mutationProbability: settings.mutationProbability ?? 1 / problem.variables.length,
    seed: settings.seed,
    initialOversampling: settings.initialOversampling ?? 1,
    epsilonConstraint: settings.epsilonConstraint
      ? { generations: settings.epsilonConstraint.generations, exponent: settings.epsilonConstraint.exponent ?? 5, quantile: settings.epsilonConstraint.quantile ?? 0.2 }
      : null,
    refinementEta: settings.refinementEta ?? 100,
  };
  if (!(resolved.initialOversampling >= 1 && Number.isFinite(resolved.initialOversampling))) {
    throw new RangeError(`initialOversampling must be a finite number >= 1, got ${resolved.initialOversampling}`);
  }
  const epsilon = resolved.epsilonConstraint;
  if (epsilon && !(Number.isInteger(epsilon.generations) && epsilon.generations >= 1 && epsilon.exponent >= 0 && epsilon.quantile >= 0 && epsilon.quantile <= 1)) {
    throw new RangeError('epsilonConstraint: generations must be an integer >= 1, exponent >= 0, quantile in [0, 1]');
  }
  if (!(resolved.refinementEta >= 0 && Number.isFinite(resolved.refinementEta))) throw new RangeError(`refinementEta must be a finite number >= 0, got ${resolved.refinementEta}`);
  if (!Number.isInteger(resolved.populationSize) || resolved.populationSize < 2) {
    throw new RangeError(`populationSize must be an integer >= 2, got ${resolved.populationSize}`);
  }
  for (const key of ['crossoverProbability', 'mutationProbability'] as const) {
    const value = resolved[key];
    if (!(value >= 0 && value <= 1)) throw new RangeError(`${key} must be in [0, 1], got ${value}`);
  }
  for (const key of ['crossoverEta', 'mutationEta'] as const) {
    const value = resolved[key];
    if (!(value >= 0 && Number.isFinite(value))) throw new RangeError(`${key} must be a finite number >= 0, got ${value}`);
  }
  if (!Number.isSafeInteger(resolved.seed)) throw new RangeError(`seed must be a safe integer, got ${resolved.seed}`);
  return resolved;
}

/** A told design with its evaluation and its objectives in minimisation form. */
interface Individual {
  design: Float64Array;
  evaluation: Evaluation;
  minimized: Float64Array;
}

export class Nsga2 {
  readonly problem: ProblemSpec;
  readonly settings: ResolvedNsga2Settings;
  private readonly layout: DesignLayout;
  private readonly objectiveCount: number;
  private readonly maximize: boolean[];
  private readonly sorter = new NonDominatedSorter();
  /** Scratch for the sort: minimised objectives (row-major), violations, crowding distances. */
  private objectiveScratch = new Float64Array(0);
  private violationScratch = new Float64Array(0);
  private distanceScratch = new Float64Array(0);

  /** Random state at the start of the next step; ask()/initialDesigns() draw from a copy. */
  private random: SeededRandom;
  private generationNumber = -1;
  private individuals: Individual[] = [];
  private members: Member[] = [];
  /** Every told design is offered here; only read by the search, never used by it. */
  private paretoArchive: ParetoArchive;
  /** Designs of the next step and the random state after making them (cache of ask()). */
  private pending: { designs: Float64Array[]; randomAfter: SeededRandom } | undefined;
  /** ε(0) of the ε-constraint handling (0 without it or before the initial population). */
  private epsilonZero = 0;
  /** ε used by the sort of the generation being formed. */
  private epsilon = 0;
  private phase: 'search' | 'refine' = 'search';

  constructor(problem: ProblemSpec, settings: Nsga2Settings) {
    validateProblem(problem);
    this.problem = problem;
    this.settings = resolveSettings(problem, settings);
    this.layout = designLayout(problem);
    this.objectiveCount = problem.objectives.length;
    this.maximize = problem.objectives.map((objective) => objective.sense === 'max');
    this.random = new SeededRandom(this.settings.seed);
    this.paretoArchive = new ParetoArchive(problem.objectives);
  }

  /** Continues from a snapshot() of an optimizer with the same problem and settings. */
  static restore(problem: ProblemSpec, settings: Nsga2Settings, state: Nsga2State): Nsga2 {
    const optimizer = new Nsga2(problem, settings);
    if (!Number.isInteger(state.generation) || state.generation < -1) throw new RangeError(`bad generation ${state.generation}`);
    if ((state.generation === -1) !== (state.population.length === 0)) {
      throw new RangeError('state: the population must be empty exactly when generation is -1');
    }
    optimizer.random = SeededRandom.fromState(state.random);
    optimizer.generationNumber = state.generation;
    optimizer.epsilonZero = state.epsilonZero ?? 0;
    optimizer.phase = state.phase ?? 'search';
    optimizer.epsilon = optimizer.epsilonLevel(state.generation);
    const individuals = state.population.map((entry, j) => {
      if (entry.design.length !== optimizer.layout.count) {
        throw new RangeError(`state: design ${j} has ${entry.design.length} variables, expected ${optimizer.layout.count}`);
      }
      return optimizer.individual(Float64Array.from(entry.design), deserializeEvaluation(entry.evaluation));
    });
    optimizer.adoptPopulation(individuals);
    if (state.archive === undefined) {
      // Older snapshot without an archive: the best that can be rebuilt is its population.
      for (const individual of individuals) optimizer.paretoArchive.offer(individual.design, individual.evaluation);
    } else {
      optimizer.paretoArchive = ParetoArchive.fromJSON(problem.objectives, state.archive);
    }
    return optimizer;
  }

  /** -1 before the initial population is told, 0 after, then +1 per tell(). */
  get generation(): number {
    return this.generationNumber;
  }

  /**
   * N designs for the initial population: Latin hypercube sampling for real
   * and integer variables, uniform for categoricals; a design equal to an
   * earlier one is replaced by a uniformly random one (bounded attempts).
   * Calling it again before tell() returns the same designs.
   */
  initialDesigns(): Float64Array[] {
    if (this.generationNumber !== -1) throw new Error('initialDesigns(): the initial population has already been told');
    return this.pendingDesigns().map((design) => design.slice());
  }

  /**
   * Q_{t+1} = make-new-pop(P_{t+1}): N offspring by binary tournament on the
   * crowded comparison, SBX crossover with probability p_c, polynomial
   * mutation with probability p_m per variable; integers rounded and
   * clamped. An offspring equal to a population member or an earlier
   * offspring is mutated again (up to 20 times; if a round of mutation
   * changes nothing, one random variable is mutated for sure).
   * Calling it again before tell() returns the same designs.
   */
  ask(): Float64Array[] {
    if (this.generationNumber < 0) throw new Error('ask(): tell the initial population first (see initialDesigns())');
    return this.pendingDesigns().map((design) => design.slice());
  }

  /**
   * The first call gives the initial population P_0 (any number of designs;
   * more than N are reduced to N by the survival rule). Every later call
   * gives the evaluated offspring Q_t, and P_{t+1} is chosen from
   * R_t = P_t ∪ Q_t by the (mu + lambda) survival of the paper.
   */
  tell(designs: readonly Float64Array[], evaluations: readonly Evaluation[]): void {
    if (designs.length !== evaluations.length) {
      throw new RangeError(`tell(): ${designs.length} designs but ${evaluations.length} evaluations`);
    }
    if (designs.length === 0) throw new RangeError('tell(): no designs');
    const offspring = designs.map((design, j) => {
      if (design.length !== this.layout.count) {
        throw new RangeError(`tell(): design ${j} has ${design.length} variables, expected ${this.layout.count}`);
      }
      const copy = new Float64Array(design.length);
      for (let i = 0; i < design.length; i++) copy[i] = design[i]! + 0;
      return this.individual(copy, sanitizeEvaluation(evaluations[j]!, this.objectiveCount));
    });
    const randomAfter = this.pendingRandomAfter();
    for (const individual of offspring) this.paretoArchive.offer(individual.design, individual.evaluation);
    if (this.generationNumber === -1) this.epsilonZero = this.initialEpsilon(offspring);
    this.epsilon = this.epsilonLevel(this.generationNumber + 1);

    // R_t = P_t ∪ Q_t
    const combined = this.individuals.concat(offspring);
    // P_{t+1}: fill by fronts, the last front by crowding distance.
    const survivors = this.selectSurvivors(combined, this.settings.populationSize);

    this.adoptPopulation(survivors);
    this.random = randomAfter;
    this.pending = undefined;
    this.generationNumber++;
  }

  /** Current population P_t with rank and crowding distance (computed within P_t). */
  population(): readonly Member[] {
    return this.members;
  }

  /** 'search' (NSGA-II generations) or 'refine' (final local refinement, see startRefinement()). */
  get currentPhase(): 'search' | 'refine' {
    return this.phase;
  }

  /** ε used in the sort of the current population (0: Deb's constrained domination). */
  get epsilonLevelNow(): number {
    return this.epsilon;
  }

  /**
   * From the next ask() on, offspring are local moves around archive members instead of NSGA-II's
   * make-new-pop: the final local refinement of the front (see makeRefinementPopulation). Survival
   * stays the paper's. Part of the snapshot.
   */
  startRefinement(): void {
    if (this.generationNumber < 0) throw new Error('startRefinement(): tell the initial population first');
    if (this.phase === 'refine') return;
    this.phase = 'refine';
    this.pending = undefined;
  }

  /** Back to NSGA-II's make-new-pop after a refinement (used to continue a converged run). */
  resumeSearch(): void {
    if (this.phase === 'search') return;
    this.phase = 'search';
    this.pending = undefined;
  }

  /** Rank-0 feasible members of the current population. */
  front(): readonly Member[] {
    return this.members.filter((member) => member.rank === 0 && member.evaluation.failed === undefined && member.evaluation.violation === 0);
  }

  /**
   * External archive: every feasible design told so far (initial and
   * offspring) that no other told design weakly dominates, in the order it
   * was admitted; of equal objective vectors the first told design. This is
   * the best front found, usually far larger and better than front().
   */
  archive(): readonly ArchiveMember[] {
    return this.paretoArchive.members();
  }

  /** Plain-JSON state including the archive; take it after tell() to persist a generation. */
  snapshot(): Nsga2State {
    return {
      generation: this.generationNumber,
      random: this.random.state(),
      population: this.individuals.map((individual) => ({
        design: Array.from(individual.design),
        evaluation: serializeEvaluation(individual.evaluation),
      })),
      archive: this.paretoArchive.toJSON(),
      ...(this.settings.epsilonConstraint ? { epsilonZero: this.epsilonZero } : {}),
      ...(this.phase === 'refine' ? { phase: this.phase } : {}),
    };
  }

  /** Objectives of the archive members in minimisation form (for convergence tests). */
  archivePoints(): Float64Array[] {
    return this.paretoArchive.points();
  }

  /** ε(0): the violation at the θ quantile of the initial population (failed designs excluded). */
  private initialEpsilon(initial: readonly Individual[]): number {
    const settings = this.settings.epsilonConstraint;
    if (!settings) return 0;
    const violations = initial.map((i) => i.evaluation.violation).filter((v) => Number.isFinite(v)).sort((a, b) => a - b);
    if (violations.length === 0) return 0;
    const index = Math.min(violations.length - 1, Math.floor(settings.quantile * initial.length));
    return violations[index]!;
  }

  /** ε(t) = ε(0) (1 - t / T_c)^cp for t < T_c, else 0. */
  private epsilonLevel(generation: number): number {
    const settings = this.settings.epsilonConstraint;
    if (!settings || this.epsilonZero <= 0 || generation >= settings.generations || generation < 0) return 0;
    return this.epsilonZero * Math.pow(1 - generation / settings.generations, settings.exponent);
  }

  // ---------------------------------------------------------------- survival

  /**
   * Fast non-dominated sort of R, then fronts in order until the next one no
   * longer fits; the last front is sorted by the crowded comparison (larger
   * crowding distance first, ties by index) and cut to fill N.
   */
  private selectSurvivors(combined: Individual[], populationSize: number): Individual[] {
    const { fronts } = this.sortFronts(combined);
    const survivors: Individual[] = [];
    for (const front of fronts) {
      if (survivors.length + front.length <= populationSize) {
        for (let i = 0; i < front.length; i++) survivors.push(combined[front[i]!]!);
        if (survivors.length === populationSize) break;
        continue;
      }
      const distance = this.crowdingScratch(combined.length);
      crowdingDistance(this.objectiveScratch, this.objectiveCount, front, distance);
      const ordered = Array.from(front).sort((a, b) => compareCrowdingDescending(distance[a]!, distance[b]!) || a - b);
      for (let i = 0; survivors.length < populationSize; i++) survivors.push(combined[ordered[i]!]!);
      break;
    }
    return survivors;
  }

  /** Makes `individuals` the population and recomputes rank and crowding within it. */
  private adoptPopulation(individuals: Individual[]): void {
    this.individuals = individuals;
    if (individuals.length === 0) {
      this.members = [];
      return;
    }
    const { fronts, rank } = this.sortFronts(individuals);
    const distance = this.crowdingScratch(individuals.length);
    for (const front of fronts) crowdingDistance(this.objectiveScratch, this.objectiveCount, front, distance);
    this.members = individuals.map((individual, p) => ({
      design: individual.design,
      evaluation: individual.evaluation,
      rank: rank[p]!,
      crowding: distance[p]!,
    }));
  }

  private sortFronts(individuals: Individual[]): { fronts: Int32Array[]; rank: Int32Array } {
    const count = individuals.length;
    const objectiveCount = this.objectiveCount;
    if (this.objectiveScratch.length < count * objectiveCount) {
      this.objectiveScratch = new Float64Array(count * objectiveCount);
      this.violationScratch = new Float64Array(count);
    }
    for (let p = 0; p < count; p++) {
      const individual = individuals[p]!;
      this.objectiveScratch.set(individual.minimized, p * objectiveCount);
      const violation = individual.evaluation.violation;
      this.violationScratch[p] = violation <= this.epsilon ? 0 : violation;
    }
    return this.sorter.sort({ count, objectiveCount, objectives: this.objectiveScratch, violations: this.violationScratch });
  }

  private crowdingScratch(count: number): Float64Array {
    if (this.distanceScratch.length < count) this.distanceScratch = new Float64Array(count);
    return this.distanceScratch;
  }

  private individual(design: Float64Array, evaluation: Evaluation): Individual {
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
    const designs =
      this.generationNumber < 0 ? this.makeInitialPopulation(random) : this.phase === 'refine' ? this.makeRefinementPopulation(random) : this.makeNewPopulation(random);
    return { designs, randomAfter: random };
  }

  private makeInitialPopulation(random: SeededRandom): Float64Array[] {
    const count = Math.round(this.settings.initialOversampling * this.settings.populationSize);
    const designs = latinHypercube(count, this.layout, random);
    const seen = new DesignSet();
    for (const design of designs) {
      for (let attempt = 0; attempt < MAX_DUPLICATE_ATTEMPTS && seen.has(design); attempt++) {
        uniformDesign(this.layout, random, design);
      }
      seen.add(design);
    }
    return designs;
  }

  /** make-new-pop (Deb et al. 2002, Section III-C): selection, crossover, mutation. */
  private makeNewPopulation(random: SeededRandom): Float64Array[] {
    const { populationSize, crossoverProbability, crossoverEta, mutationEta, mutationProbability } = this.settings;
    const layout = this.layout;
    const parents = this.members;
    const rank = Int32Array.from(parents, (member) => member.rank);
    const crowding = Float64Array.from(parents, (member) => member.crowding);

    const seen = new DesignSet();
    for (const member of parents) seen.add(member.design);

    // Tournament entrants come from successive random permutations of P_t
    // (each member enters two tournaments per N offspring, as in Deb's code).
    const entrants = new Int32Array(parents.length);
    let nextEntrant = entrants.length;
    const drawEntrant = (): number => {
      if (nextEntrant === entrants.length) {
        random.permutation(entrants);
        nextEntrant = 0;
      }
      return entrants[nextEntrant++]!;
    };

    const scratchPair = new Float64Array(2);
    const offspring: Float64Array[] = [];
    while (offspring.length < populationSize) {
      const first = crowdedTournament(drawEntrant(), drawEntrant(), rank, crowding, random);
      const second = crowdedTournament(drawEntrant(), drawEntrant(), rank, crowding, random);
      const child1 = new Float64Array(layout.count);
      const child2 = new Float64Array(layout.count);
      crossover(parents[first]!.design, parents[second]!.design, child1, child2, layout, crossoverProbability, crossoverEta, random, scratchPair);
      for (const child of [child1, child2]) {
        if (offspring.length === populationSize) break;
        mutate(child, layout, mutationProbability, mutationEta, random);
        repair(child, layout);
        for (let attempt = 0; attempt < MAX_DUPLICATE_ATTEMPTS && seen.has(child); attempt++) {
          if (mutate(child, layout, mutationProbability, mutationEta, random) === 0) {
            mutateVariable(child, random.int(layout.count), layout, mutationEta, random);
          }
          repair(child, layout);
        }
        seen.add(child);
        offspring.push(child);
      }
    }
    return offspring;
  }

  /**
   * Final local refinement: N neighbours of archive members. A parent is the winner of a binary
   * tournament between two random archive members on their crowding distance within the archive
   * (objective space; the sparser region wins, boundary members first), so the moves fill the gaps
   * of the front; its child changes each real or integer variable with probability min(1, 2 / n)
   * (at least one) by polynomial mutation with the large distribution index `refinementEta` (steps
   * of about 1 / (eta + 1) of the range). Categorical variables are kept. This is a Pareto local
   * search (Paquete, Chiarandini & Stützle 2004, "Pareto local optimum sets in the biobjective
   * traveling salesman problem: an experimental study") around the archive with a continuous
   * neighbourhood, used as the final stage of a hybrid search as proposed by Deb & Goel 2001 ("A
   * hybrid multi-objective evolutionary approach to engineering shape design", EMO 2001).
   */
  private makeRefinementPopulation(random: SeededRandom): Float64Array[] {
    const members = this.paretoArchive.members();
    if (members.length === 0) return this.makeNewPopulation(random);
    const layout = this.layout;
    const points = this.paretoArchive.points();
    const flat = new Float64Array(points.length * this.objectiveCount);
    points.forEach((p, i) => flat.set(p, i * this.objectiveCount));
    const indices = Int32Array.from(points, (_, i) => i);
    const crowding = new Float64Array(points.length);
    crowdingDistance(flat, this.objectiveCount, indices, crowding);
    const seen = new DesignSet();
    for (const member of this.members) seen.add(member.design);
    for (const member of members) seen.add(member.design);
    const movable: number[] = [];
    for (let i = 0; i < layout.count; i++) if (layout.kinds[i] !== KIND_CATEGORICAL) movable.push(i);
    const probability = Math.min(1, 2 / Math.max(1, movable.length));
    const eta = this.settings.refinementEta;
    const offspring: Float64Array[] = [];
    while (offspring.length < this.settings.populationSize) {
      const a = random.int(members.length);
      const b = random.int(members.length);
      const parent = crowding[a]! > crowding[b]! ? a : crowding[b]! > crowding[a]! ? b : random.next() <= 0.5 ? a : b;
      const child = members[parent]!.design.slice();
      for (let attempt = 0; attempt <= MAX_DUPLICATE_ATTEMPTS && (attempt === 0 || seen.has(child)); attempt++) {
        if (movable.length === 0) {
          mutate(child, layout, 1 / layout.count, eta, random);
        } else {
          let changed = 0;
          for (const i of movable) {
            if (random.next() <= probability) {
              mutateVariable(child, i, layout, eta, random);
              changed++;
            }
          }
          if (changed === 0) mutateVariable(child, movable[random.int(movable.length)]!, layout, eta, random);
        }
        repair(child, layout);
      }
      seen.add(child);
      offspring.push(child);
    }
    return offspring;
  }
}

/** Larger crowding distance first; +Infinity ties with +Infinity. */
function compareCrowdingDescending(a: number, b: number): number {
  if (a === b) return 0;
  return a > b ? -1 : 1;
}

export interface GenerationReport {
  generation: number;
  population: readonly Member[];
  /** Convergence figures of the archive after this generation (see convergence.ts). */
  convergence: ConvergenceStatus;
  /** Plain-JSON state after this generation, for persisting and resuming. */
  snapshot: () => Nsga2State;
}

export interface OptimizeSettings extends Nsga2Settings {
  termination: Termination;
  onGeneration?: (report: GenerationReport) => void | Promise<void>;
  /** Continue from a snapshot instead of starting afresh. */
  resume?: Nsga2State;
}

export interface OptimizeResult {
  /** Final population P_G with rank and crowding distance. */
  population: readonly Member[];
  /** Rank-0 feasible members of the final population. */
  front: readonly Member[];
  /** Best front found over the whole run (see Nsga2.archive()); the run's real result. */
  archive: readonly ArchiveMember[];
  /** Last generation told. */
  generation: number;
  /** Designs told (evaluations) in this call. */
  evaluations: number;
  /** Why the run ended. */
  endReason: EndReason;
  /** Convergence figures after the last generation. */
  convergence: ConvergenceStatus;
}

/**
 * Runs NSGA-II to termination with a batch evaluator: the initial population (generation 0), then
 * offspring generations until the termination says stop (see termination.ts): after
 * `termination.generations` offspring generations (populationSize * (generations + 1) evaluations
 * from a fresh start), before a generation that would go beyond `maxEvaluations`, or when the
 * archive's hypervolume stagnates (`convergence`), with an optional final local refinement.
 * A resumed run is judged on the evaluations of this call only.
 */
export async function optimize(
  problem: ProblemSpec,
  evaluate: BatchEvaluate,
  settings: OptimizeSettings,
): Promise<OptimizeResult> {
  const optimizer = settings.resume === undefined ? new Nsga2(problem, settings) : Nsga2.restore(problem, settings, settings.resume);
  const tracker = new TerminationTracker(settings.termination);
  let evaluations = 0;

  const step = async (designs: Float64Array[]): Promise<{ stop: boolean; reason: EndReason | null; status: ConvergenceStatus }> => {
    const results = await evaluate(designs);
    if (results.length !== designs.length) {
      throw new RangeError(`evaluate returned ${results.length} evaluations for ${designs.length} designs`);
    }
    optimizer.tell(designs, results);
    evaluations += designs.length;
    const decision = tracker.afterGeneration(optimizer.generation, evaluations, optimizer.settings.populationSize, optimizer.archivePoints());
    if (decision.startRefinement) optimizer.startRefinement();
    await settings.onGeneration?.({
      generation: optimizer.generation,
      population: optimizer.population(),
      convergence: decision.status,
      snapshot: () => optimizer.snapshot(),
    });
    return decision;
  };

  let decision = optimizer.generation < 0 ? await step(optimizer.initialDesigns()) : null;
  if (decision === null && settings.termination.generations !== undefined && optimizer.generation >= settings.termination.generations) {
    return finish(optimizer, 0, 'budget', tracker.afterGeneration(optimizer.generation, 0, optimizer.settings.populationSize, optimizer.archivePoints()).status);
  }
  while (decision === null || !decision.stop) decision = await step(optimizer.ask());
  return finish(optimizer, evaluations, decision.reason ?? 'budget', decision.status);
}

function finish(optimizer: Nsga2, evaluations: number, endReason: EndReason, convergence: ConvergenceStatus): OptimizeResult {
  return {
    population: optimizer.population(),
    front: optimizer.front(),
    archive: optimizer.archive(),
    generation: optimizer.generation,
    evaluations,
    endReason,
    convergence,
  };
}
