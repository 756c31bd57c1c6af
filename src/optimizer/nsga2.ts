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
 * the run's real result (`archive()`). The paper's search never reads it.
 *
 * Options, all off by default (see docs/optimizer.md, "Reaching a narrow
 * feasible region"): an oversampled initial Latin hypercube, ε-constraint
 * handling (Takahama & Sakai 2006), differential-evolution variation
 * (NSGA-II-DE, Li & Zhang 2009), and a final local refinement phase that
 * makes its offspring around archive members (Pareto local search).
 *
 * What NSGA-II shares with NSGA-III (ask/tell cycle, archive, snapshot,
 * sort, initial sample, SBX variation) lives in population.ts.
 */

import { crowdedTournament, DesignSet, differentialMove, KIND_CATEGORICAL, mutate, mutateVariable, repair, type DesignLayout } from './operators.js';
import { type ArchiveMember, type SerializedArchive, type SerializedEvaluation } from './archive.js';
import { MAX_DUPLICATE_ATTEMPTS, mutateDistinct, PopulationOptimizer, type Individual } from './population.js';
import type { SeededRandom, RandomState } from './random.js';
import { crowdingDistance } from './sorting.js';
import { validateProblem, type BatchEvaluate, type Evaluation, type ProblemSpec } from './types.js';
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
  /**
   * Variation of the search generations: 'sbx' (the paper's SBX crossover and polynomial mutation,
   * default) or 'de' (differential evolution DE/rand/1 with polynomial mutation, as in NSGA-II-DE of
   * Li & Zhang 2009; see operators.ts differentialMove).
   */
  variation?: 'sbx' | 'de';
  /** F of the differential moves (default 0.5). */
  differentialWeight?: number;
  /**
   * Moves of the final local refinement: 'mutation' (polynomial mutation of an archive member,
   * default) or 'differential' (an archive member plus a scaled difference of two of its nearest
   * archive neighbours, followed by polynomial mutation; see makeRefinementPopulation).
   */
  refinementMove?: 'mutation' | 'differential';
  /** Refinement children per objective spent on anchor moves (default 0; see anchorMoves). */
  refinementAnchors?: number;
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
  variation: 'sbx' | 'de';
  differentialWeight: number;
  refinementMove: 'mutation' | 'differential';
  refinementAnchors: number;
}

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
    variation: settings.variation ?? 'sbx',
    differentialWeight: settings.differentialWeight ?? 0.5,
    refinementMove: settings.refinementMove ?? 'mutation',
    refinementAnchors: settings.refinementAnchors ?? 0,
  };
  if (!(resolved.initialOversampling >= 1 && Number.isFinite(resolved.initialOversampling))) {
    throw new RangeError(`initialOversampling must be a finite number >= 1, got ${resolved.initialOversampling}`);
  }
  const epsilon = resolved.epsilonConstraint;
  if (epsilon && !(Number.isInteger(epsilon.generations) && epsilon.generations >= 1 && epsilon.exponent >= 0 && epsilon.quantile >= 0 && epsilon.quantile <= 1)) {
    throw new RangeError('epsilonConstraint: generations must be an integer >= 1, exponent >= 0, quantile in [0, 1]');
  }
  if (resolved.variation !== 'sbx' && resolved.variation !== 'de') throw new RangeError(`variation must be 'sbx' or 'de', got ${String(resolved.variation)}`);
  if (resolved.refinementMove !== 'mutation' && resolved.refinementMove !== 'differential') throw new RangeError(`refinementMove must be 'mutation' or 'differential', got ${String(resolved.refinementMove)}`);
  if (!(Number.isInteger(resolved.refinementAnchors) && resolved.refinementAnchors >= 0)) throw new RangeError(`refinementAnchors must be an integer >= 0, got ${resolved.refinementAnchors}`);
  if (!(resolved.differentialWeight > 0 && resolved.differentialWeight <= 2)) throw new RangeError(`differentialWeight must be in (0, 2], got ${resolved.differentialWeight}`);
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

export class Nsga2 extends PopulationOptimizer {
  /** ε(0) of the ε-constraint handling (0 without it or before the initial population). */
  private epsilonZero = 0;
  /** ε used by the sort of the generation being formed. */
  private epsilon = 0;
  private phase: 'search' | 'refine' = 'search';

  constructor(problem: ProblemSpec, settings: Nsga2Settings) {
    validateProblem(problem);
    super(problem, resolveSettings(problem, settings));
  }

  /** Continues from a snapshot() of an optimizer with the same problem and settings. */
  static restore(problem: ProblemSpec, settings: Nsga2Settings, state: Nsga2State): Nsga2 {
    const optimizer = new Nsga2(problem, settings);
    optimizer.restoreState(state);
    return optimizer;
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
    this.discardPending();
  }

  /** Back to NSGA-II's make-new-pop after a refinement (used to continue a converged run). */
  resumeSearch(): void {
    if (this.phase === 'search') return;
    this.phase = 'search';
    this.discardPending();
  }

  // ---------------------------------------------------------------- hooks of PopulationOptimizer

  /** Feasibility-seeking start: round(k · N) designs (k = initialOversampling). */
  protected override initialCount(): number {
    return Math.round(this.settings.initialOversampling * this.settings.populationSize);
  }

  /** ε-constraint handling: a violation up to ε(t) counts as feasible in the sort. */
  protected override sortViolation(violation: number): number {
    return violation <= this.epsilon ? 0 : violation;
  }

  protected override beforeSurvival(told: readonly Individual[]): void {
    if (this.generationNumber === -1) this.epsilonZero = this.initialEpsilon(told);
    this.epsilon = this.epsilonLevel(this.generationNumber + 1);
  }

  protected override restoreExtra(state: Nsga2State): void {
    this.epsilonZero = state.epsilonZero ?? 0;
    this.phase = state.phase ?? 'search';
    this.epsilon = this.epsilonLevel(state.generation);
  }

  protected override snapshotExtra(): Partial<Nsga2State> {
    return {
      ...(this.settings.epsilonConstraint ? { epsilonZero: this.epsilonZero } : {}),
      ...(this.phase === 'refine' ? { phase: this.phase } : {}),
    };
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
  protected selectSurvivors(combined: Individual[], populationSize: number): Individual[] {
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

  // ---------------------------------------------------------------- variation

  protected makeOffspring(random: SeededRandom): Float64Array[] {
    return this.phase === 'refine' ? this.makeRefinementPopulation(random) : this.makeNewPopulation(random);
  }

  /**
   * make-new-pop (Deb et al. 2002, Section III-C): N offspring by binary tournament on the crowded
   * comparison, then the shared variation step (SBX, polynomial mutation, see population.ts).
   */
  private makeNewPopulation(random: SeededRandom): Float64Array[] {
    const parents = this.members;
    const rank = Int32Array.from(parents, (member) => member.rank);
    const crowding = Float64Array.from(parents, (member) => member.crowding);
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
    const tournament = (): number => crowdedTournament(drawEntrant(), drawEntrant(), rank, crowding, random);
    // DE/rand/1 needs three distinct members; a smaller population uses the paper's variation.
    if (this.settings.variation === 'de' && parents.length >= 3) return this.differentialVariation(random, tournament);
    return this.variation(random, tournament);
  }

  /**
   * NSGA-II-DE (Li & Zhang 2009): each child is base + F (a - b) (DE/rand/1, crossover rate 1) with
   * the base chosen by the crowded tournament and a, b two other members drawn uniformly, then
   * polynomial mutation; duplicates are re-mutated as in the shared variation step.
   */
  private differentialVariation(random: SeededRandom, selectBase: () => number): Float64Array[] {
    const { populationSize, mutationEta, mutationProbability, differentialWeight } = this.settings;
    const layout = this.layout;
    const parents = this.individuals;
    const seen = new DesignSet();
    for (const individual of parents) seen.add(individual.design);
    const offspring: Float64Array[] = [];
    while (offspring.length < populationSize) {
      const base = selectBase();
      const [a, b] = distinctPair(parents.length, base, random);
      const child = new Float64Array(layout.count);
      differentialMove(parents[base]!.design, parents[a]!.design, parents[b]!.design, differentialWeight, child, layout, random);
      offspring.push(mutateDistinct(child, layout, seen, mutationProbability, mutationEta, random));
    }
    return offspring;
  }

  /**
   * Final local refinement: N neighbours of archive members. A parent is the winner of a binary
   * tournament between two random archive members on their crowding distance within the archive
   * (objective space; the sparser region wins, boundary members first), so the moves fill the gaps
   * of the front. With `refinementMove: 'differential'` the child first takes a differential move
   * parent + F (a - b), a and b two distinct members among the parent's 10 nearest archive
   * neighbours (normalised objective distance): the difference of two neighbouring Pareto-optimal
   * designs points along the Pareto set, so the move lands near the front between existing
   * members even where the set is curved or runs along a constraint boundary (neighbourhood mating
   * as in MOEA/D-DE, Li & Zhang 2009). Then each real or integer variable changes with probability
   * min(1, 2 / n) (at least one) by polynomial mutation with the large distribution index
   * `refinementEta` (steps of about 1 / (eta + 1) of the range). Categorical variables are kept.
   * This is a Pareto local search (Paquete, Chiarandini & Stützle 2004, "Pareto local optimum sets
   * in the biobjective traveling salesman problem: an experimental study") around the archive with
   * a continuous neighbourhood, used as the final stage of a hybrid search as proposed by Deb &
   * Goel 2001 ("A hybrid multi-objective evolutionary approach to engineering shape design", EMO 2001).
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
    const scale = objectiveScale(flat, this.objectiveCount);
    const seen = new DesignSet();
    for (const member of this.members) seen.add(member.design);
    for (const member of members) seen.add(member.design);
    const movable: number[] = [];
    for (let i = 0; i < layout.count; i++) if (layout.kinds[i] !== KIND_CATEGORICAL) movable.push(i);
    const probability = Math.min(1, 2 / Math.max(1, movable.length));
    const step = (child: Float64Array, eta: number): void => {
      for (let attempt = 0; attempt <= MAX_DUPLICATE_ATTEMPTS && (attempt === 0 || seen.has(child)); attempt++) {
        localStep(child, layout, movable, probability, eta, random);
        repair(child, layout);
      }
      seen.add(child);
    };
    const offspring = this.anchorMoves(points, step);
    while (offspring.length < this.settings.populationSize) {
      const a = random.int(members.length);
      const b = random.int(members.length);
      const parent = crowding[a]! > crowding[b]! ? a : crowding[b]! > crowding[a]! ? b : random.next() <= 0.5 ? a : b;
      const child = members[parent]!.design.slice();
      if (this.settings.refinementMove === 'differential' && members.length >= 3) {
        const [a, b] = nearestPair(flat, this.objectiveCount, parent, REFINEMENT_NEIGHBOURS, random, scale);
        differentialMove(members[parent]!.design, members[a]!.design, members[b]!.design, this.settings.differentialWeight, child, layout, random);
      }
      step(child, this.settings.refinementEta);
      offspring.push(child);
    }
    return offspring;
  }

  /**
   * Anchor moves of the refinement: `refinementAnchors` children per objective from the archive
   * member that is best in that objective (its anchor point, the individual minimum of the Normal
   * Boundary Intersection method, Das & Dennis 1998, SIAM J. Optim. 8(3), 631-657). Alternate
   * children take coarse steps (the search's mutation index) and ten times finer ones, a (1 + λ)
   * search per anchor: any child that betters the anchor's objective enters the archive as the new
   * anchor, so the ends of the front keep moving outward while the other moves fill it in.
   */
  private anchorMoves(points: readonly Float64Array[], step: (child: Float64Array, eta: number) => void): Float64Array[] {
    const children: Float64Array[] = [];
    const members = this.paretoArchive.members();
    const count = this.settings.refinementAnchors;
    for (let m = 0; m < this.objectiveCount && count > 0; m++) {
      let best = 0;
      for (let i = 1; i < points.length; i++) if (points[i]![m]! < points[best]![m]!) best = i;
      for (let j = 0; j < count && children.length < this.settings.populationSize; j++) {
        const child = members[best]!.design.slice();
        step(child, j % 2 === 0 ? this.settings.mutationEta : this.settings.mutationEta * 10);
        children.push(child);
      }
    }
    return children;
  }
}

/**
 * A local move: each movable (real or integer) variable changes with probability `probability` by
 * polynomial mutation of index `eta`, at least one of them; without movable variables, the usual
 * mutation of every variable with probability 1 / n.
 */
function localStep(child: Float64Array, layout: DesignLayout, movable: readonly number[], probability: number, eta: number, random: SeededRandom): void {
  if (movable.length === 0) {
    mutate(child, layout, 1 / layout.count, eta, random);
    return;
  }
  let changed = 0;
  for (const i of movable) {
    if (random.next() <= probability) {
      mutateVariable(child, i, layout, eta, random);
      changed++;
    }
  }
  if (changed === 0) mutateVariable(child, movable[random.int(movable.length)]!, layout, eta, random);
}

/** Neighbours of an archive member among which the differential refinement draws its pair. */
const REFINEMENT_NEIGHBOURS = 10;

/** Two distinct indices in [0, n), both other than `exclude` (needs n >= 3). */
function distinctPair(n: number, exclude: number, random: SeededRandom): [number, number] {
  let a = random.int(n - 1);
  if (a >= exclude) a++;
  let b = random.int(n - 2);
  const low = Math.min(a, exclude);
  const high = Math.max(a, exclude);
  if (b >= low) b++;
  if (b >= high) b++;
  return [a, b];
}

/** 1 / range of each objective over the rows (1 where there is no spread). */
function objectiveScale(flat: Float64Array, m: number): Float64Array {
  const lo = new Float64Array(m).fill(Infinity);
  const hi = new Float64Array(m).fill(-Infinity);
  for (let i = 0; i < flat.length; i++) {
    const k = i % m;
    if (flat[i]! < lo[k]!) lo[k] = flat[i]!;
    if (flat[i]! > hi[k]!) hi[k] = flat[i]!;
  }
  return lo.map((l, k) => (hi[k]! > l ? 1 / (hi[k]! - l) : 1));
}

/**
 * Two distinct members among the `k` nearest to `centre` (normalised objective distance, ties by
 * index), drawn uniformly; the centre itself is never drawn. Needs at least 3 rows.
 */
function nearestPair(flat: Float64Array, m: number, centre: number, k: number, random: SeededRandom, scale: Float64Array): [number, number] {
  const n = flat.length / m;
  const distance = new Float64Array(n);
  for (let j = 0; j < n; j++) {
    let d = 0;
    for (let q = 0; q < m; q++) {
      const diff = (flat[j * m + q]! - flat[centre * m + q]!) * scale[q]!;
      d += diff * diff;
    }
    distance[j] = d;
  }
  const order = Array.from({ length: n }, (_, j) => j).filter((j) => j !== centre);
  order.sort((x, y) => distance[x]! - distance[y]! || x - y);
  const near = order.slice(0, Math.max(2, Math.min(k, order.length)));
  const a = random.int(near.length);
  let b = random.int(near.length - 1);
  if (b >= a) b++;
  return [near[a]!, near[b]!];
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
