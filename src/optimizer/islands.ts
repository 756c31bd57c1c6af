/**
 * Island NSGA-II: K independent NSGA-II populations ("islands") that exchange their best members
 * along a ring at the end of each epoch (the stepping-stone island model; see e.g. Cantú-Paz 2000,
 * "Efficient and Accurate Parallel Genetic Algorithms", Kluwer, for island models in general).
 *
 * Everything here is a pure function of the settings, the problem and the evaluations: an epoch of
 * one island starts from the islands' snapshots at the end of the previous epoch, so the islands of
 * an epoch can run in any order, in one process or as the tasks of a job array, and give the same
 * result bit for bit.
 *
 * Choices, all deterministic:
 * - island i is seeded with `islandSeed(seed, i)`; every island has the same NSGA-II settings;
 * - `generations` offspring generations after the initial population are split over the epochs as
 *   evenly as possible (epoch e ends at generation round((e + 1) · generations / epochs));
 * - migration, at the end of every epoch but the last: island i receives copies of the `migrants`
 *   best members of island i − 1 (ring; best = lower rank, then larger crowding distance, then
 *   population order), which replace its own worst members; a migrant equal to a design already on
 *   the island is not taken. Rank and crowding are recomputed on the new population. The receiving
 *   island's random state and archive are left as they are.
 */
import { Nsga2, type Member, type Nsga2Settings, type Nsga2State } from './nsga2.js';
import { ParetoArchive, type ArchiveMember } from './archive.js';
import type { BatchEvaluate, ProblemSpec } from './types.js';

export interface IslandSettings {
  /** K ≥ 1 islands. */
  readonly islands: number;
  /** Epochs ≥ 1; migration happens between epochs. */
  readonly epochs: number;
  /** Offspring generations per island after the initial population, in all (≥ epochs). */
  readonly generations: number;
  /** Members sent to the next island at each migration (default: 10 % of the population, at least 1). */
  readonly migrants?: number;
  /** NSGA-II settings of every island (population per island); the seed is the study's seed. */
  readonly nsga2: Nsga2Settings;
}

/** Settings with the defaults filled in and checked. */
export function resolveIslandSettings(settings: IslandSettings): Required<IslandSettings> {
  const { islands, epochs, generations } = settings;
  const population = settings.nsga2.populationSize;
  const migrants = settings.migrants ?? Math.max(1, Math.round(population / 10));
  if (!Number.isInteger(islands) || islands < 1) throw new RangeError(`islands must be an integer >= 1, got ${islands}`);
  if (!Number.isInteger(epochs) || epochs < 1) throw new RangeError(`epochs must be an integer >= 1, got ${epochs}`);
  if (!Number.isInteger(generations) || generations < epochs) {
    throw new RangeError(`generations must be an integer >= epochs (${epochs}), got ${generations}`);
  }
  if (!Number.isInteger(migrants) || migrants < 0 || migrants >= population) {
    throw new RangeError(`migrants must be an integer from 0 to population - 1 (${population - 1}), got ${migrants}`);
  }
  return { islands, epochs, generations, migrants, nsga2: settings.nsga2 };
}

/** Seed of island `island`: the run's seed for island 0, then a fixed stride (kept a safe integer). */
export function islandSeed(seed: number, island: number): number {
  const stride = 1_000_003;
  const value = seed + stride * island;
  return Number.isSafeInteger(value) ? value : (seed % 1_000_000_007) + stride * island;
}

/** The generation an island has reached at the end of `epoch` (0-based). */
export function epochEndGeneration(settings: Required<IslandSettings>, epoch: number): number {
  return Math.round(((epoch + 1) * settings.generations) / settings.epochs);
}

function islandNsga2(problem: ProblemSpec, settings: Required<IslandSettings>, island: number, state: Nsga2State | null): Nsga2 {
  const nsga2Settings: Nsga2Settings = { ...settings.nsga2, seed: islandSeed(settings.nsga2.seed, island) };
  return state === null ? new Nsga2(problem, nsga2Settings) : Nsga2.restore(problem, nsga2Settings, state);
}

export interface IslandGeneration {
  readonly island: number;
  readonly generation: number;
  /** Designs told in this generation, in order (the initial population, or the offspring). */
  readonly told: readonly Float64Array[];
  readonly population: readonly Member[];
  readonly snapshot: () => Nsga2State;
}

/**
 * One island through one epoch: from its state at the end of the previous epoch (after migration;
 * null for epoch 0) to the end of `epoch`. Returns the island's state at the end of the epoch.
 */
export async function runIslandEpoch(
  problem: ProblemSpec,
  settingsIn: IslandSettings,
  island: number,
  epoch: number,
  start: Nsga2State | null,
  evaluate: BatchEvaluate,
  onGeneration?: (report: IslandGeneration) => void | Promise<void>,
): Promise<Nsga2State> {
  const settings = resolveIslandSettings(settingsIn);
  const optimizer = islandNsga2(problem, settings, island, start);
  const expected = epoch === 0 ? -1 : epochEndGeneration(settings, epoch - 1);
  if (optimizer.generation !== expected) {
    throw new RangeError(`island ${island}, epoch ${epoch}: the start state is at generation ${optimizer.generation}, expected ${expected}`);
  }
  const end = epochEndGeneration(settings, epoch);
  while (optimizer.generation < end) {
    const designs = optimizer.generation < 0 ? optimizer.initialDesigns() : optimizer.ask();
    const evaluations = await evaluate(designs);
    if (evaluations.length !== designs.length) throw new RangeError(`evaluate returned ${evaluations.length} evaluations for ${designs.length} designs`);
    optimizer.tell(designs, evaluations);
    await onGeneration?.({ island, generation: optimizer.generation, told: designs, population: optimizer.population(), snapshot: () => optimizer.snapshot() });
  }
  return optimizer.snapshot();
}

/** Population indices from best to worst: rank, then crowding distance (larger first), then order. */
function bestFirst(population: readonly Member[]): number[] {
  return population
    .map((_, index) => index)
    .sort((a, b) => {
      const pa = population[a]!;
      const pb = population[b]!;
      if (pa.rank !== pb.rank) return pa.rank - pb.rank;
      if (pa.crowding !== pb.crowding) return pa.crowding > pb.crowding ? -1 : 1;
      return a - b;
    });
}

function designText(design: ArrayLike<number>): string {
  return Array.from(design, (v) => v + 0).join(',');
}

/** Ring migration between epochs: returns every island's state after receiving migrants from its predecessor. */
export function migrate(problem: ProblemSpec, settingsIn: IslandSettings, states: readonly Nsga2State[]): Nsga2State[] {
  const settings = resolveIslandSettings(settingsIn);
  if (states.length !== settings.islands) throw new RangeError(`migrate: ${states.length} island states for ${settings.islands} islands`);
  if (settings.islands === 1 || settings.migrants === 0) return states.map((s) => structuredClone(s));
  const populations = states.map((state, island) => islandNsga2(problem, settings, island, state).population());
  return states.map((state, island) => {
    const sourceIsland = (island - 1 + settings.islands) % settings.islands;
    const source = populations[sourceIsland]!;
    const present = new Set(populations[island]!.map((m) => designText(m.design)));
    // Population index p is entry p of the state (restore keeps the order).
    const incoming = bestFirst(source)
      .slice(0, settings.migrants)
      .filter((index) => !present.has(designText(source[index]!.design)));
    const worst = bestFirst(populations[island]!).reverse();
    const next = structuredClone(state);
    incoming.forEach((index, k) => {
      next.population[worst[k]!] = structuredClone(states[sourceIsland]!.population[index]!);
    });
    return next;
  });
}

export interface IslandResult {
  /** Final population of every island, with rank and crowding within the island. */
  readonly populations: readonly (readonly Member[])[];
  /** Non-dominated feasible designs over every island's archive (islands in order). */
  readonly archive: readonly ArchiveMember[];
  readonly states: readonly Nsga2State[];
}

/** Island NSGA-II in one process: every epoch, every island in order, then migration. */
export async function optimizeIslands(problem: ProblemSpec, evaluate: BatchEvaluate, settingsIn: IslandSettings): Promise<IslandResult> {
  const settings = resolveIslandSettings(settingsIn);
  let states: (Nsga2State | null)[] = new Array<Nsga2State | null>(settings.islands).fill(null);
  for (let epoch = 0; epoch < settings.epochs; epoch++) {
    const ended: Nsga2State[] = [];
    for (let island = 0; island < settings.islands; island++) {
      ended.push(await runIslandEpoch(problem, settings, island, epoch, states[island]!, evaluate));
    }
    states = epoch < settings.epochs - 1 ? migrate(problem, settings, ended) : ended;
  }
  const finalStates = states as Nsga2State[];
  const optimizers = finalStates.map((state, island) => islandNsga2(problem, settings, island, state));
  return { populations: optimizers.map((o) => o.population()), archive: combinedArchive(problem, optimizers), states: finalStates };
}

function combinedArchive(problem: ProblemSpec, optimizers: readonly Nsga2[]): readonly ArchiveMember[] {
  const archive = new ParetoArchive(problem.objectives);
  for (const optimizer of optimizers) for (const member of optimizer.archive()) archive.offer(member.design, member.evaluation);
  return archive.members();
}
