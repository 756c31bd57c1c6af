/**
 * `loopsmith run`: NSGA-II over a study's design space, evaluations on the worker pool, one SQLite
 * transaction per generation. A run that was killed or stopped resumes from its last committed
 * generation when started again with the same study, seed and population.
 */
import { LoopsmithUserError } from '../core/errors.js';
import { existsSync } from 'node:fs';
import { designFromValues } from '../mechanics/designSpace.js';
import { hypervolume } from '../optimizer/hypervolume.js';
import { Nsga2, type Nsga2Settings, type Nsga2State } from '../optimizer/nsga2.js';
import { createOptimizer, type AskTellOptimizer } from '../optimizer/algorithm.js';
import { TerminationTracker, type EndReason, type Termination, type TerminationDecision, type TerminationState } from '../optimizer/termination.js';
import { isFeasible, type Evaluation } from '../optimizer/types.js';
import { EvaluationPool, type PoolOptions } from '../pool/pool.js';
import { canonicalJson, Store, type GenerationWrite, type NewEvaluation, type RunRow } from '../store/store.js';
import type { LoadedStudy } from '../study/parse.js';
import { evaluationKey, studyProblem, type StudyProblem, withEvaluatorNamespace } from './problem.js';
import { startBatch, WriteBehind } from './batch.js';

export interface RunOptions extends PoolOptions {
  readonly dbPath: string;
  readonly seed?: number;
  readonly population?: number;
  /**
   * Generations in all, the initial population included (evaluations ≈ population × generations):
   * a fixed count instead of the study's termination.
   */
  readonly generations?: number;
  /**
   * Continue a finished (or stopped) run of this study, seed and settings (the newest, or `runId`)
   * for this many more generations, or until it converges again ('converge': at least one more
   * convergence window, at most the study's max_evaluations more evaluations). The result is the
   * same as one longer run with the same seed.
   */
  readonly more?: number | 'converge';
  /** With `more`: the run to continue (default: the newest matching one). */
  readonly runId?: number;
  /** Warm start: the first generation takes the final population of this earlier run (its database and run id; default the latest optimize run there). */
  readonly warmStart?: { readonly dbPath: string; readonly runId?: number };
  /** Called after each committed generation. */
  readonly onGeneration?: (progress: GenerationProgress) => void;
  /** Checked after each committed generation; true stops the run cleanly (status "stopped"). */
  readonly shouldStop?: () => boolean;
  /** The command line that starts (and resumes) the run, kept with the run for `loopsmith runs`. */
  readonly command?: string;
}

export interface GenerationProgress {
  readonly runId: number;
  readonly generation: number;
  /** Generations in all when the run goes to its cap (an upper bound when it may stop on convergence). */
  readonly generations: number;
  /** Designs in the optimizer's archive (the best front found so far). */
  readonly archiveSize: number;
  /** Relative archive hypervolume improvement over the last window; null before a full window. */
  readonly hvImprovement: number | null;
  /** 'search' or 'refine' (final local refinement). */
  readonly phase: 'search' | 'refine';
  readonly evaluations: number;
  readonly newEvaluations: number;
  readonly failed: number;
  readonly feasibleCount: number;
  readonly hypervolume: number | null;
  readonly evaluationsPerSecond: number;
  readonly elapsedSeconds: number;
  readonly resumed: boolean;
}

export interface RunSummary {
  readonly runId: number;
  readonly status: 'finished' | 'stopped';
  readonly resumedFromGeneration: number | null;
  readonly generationsDone: number;
  /** Designs evaluated in this call (cached ones included). */
  readonly evaluations: number;
  readonly newEvaluations: number;
  readonly elapsedSeconds: number;
  /** Designs told to the optimizer over the whole run (all sessions). */
  readonly totalEvaluations: number;
  /** Why a finished run ended; null when stopped by the user. */
  readonly endReason: EndReason | null;
  /** The termination the run used (generations counted from 0 = initial population). */
  readonly termination: Termination;
  /** Relative archive hypervolume improvement over the last `window` generations (null: fewer generations than a window). */
  readonly hvImprovement: number | null;
  readonly window: number;
  readonly tolerance: number;
  /** Ended on its budget while the improvement over the last window was still at least the tolerance. */
  readonly stillImproving: boolean;
  /** Designs in the archive at the end. */
  readonly archiveSize: number;
  /** Generation at which the search converged (a final refinement may have followed); null if it did not. */
  readonly convergedAt: number | null;
}

/**
 * Search settings of runs that stop on convergence (the default), chosen so that the demo study's
 * narrow feasible region (about 1.5 % of a uniform sample) is found early, the search follows its
 * curved Pareto set, and the last part of the budget fills in the front; see docs/optimizer.md
 * ("Reaching a narrow feasible region"). Runs with a fixed generation count use the paper's
 * NSGA-II unchanged.
 */
export const CONVERGENCE_SEARCH = {
  /** Latin hypercube of k · N designs at the start, the best N kept (feasibility-seeking start). */
  initialOversampling: 4,
  /** Search variation: differential evolution DE/rand/1 + polynomial mutation (NSGA-II-DE, Li & Zhang 2009). */
  variation: 'de' as const,
  /** F of the differential moves. */
  differentialWeight: 0.5,
  /**
   * Budget split: the share of the evaluation cap spent on the final local refinement of the front
   * (its last round(0.3 · cap / N) generations; 30 of the default 10,000 evaluations with N = 100).
   */
  refinementShare: 0.3,
  /** Refinement moves: an archive member plus a difference of two of its archive neighbours. */
  refinementMove: 'differential' as const,
  /** Distribution index of the refinement's polynomial moves (steps of about 0.1 % of a range). */
  refinementEta: 1000,
  /** Refinement children per objective and generation that push the front's ends (anchor moves). */
  refinementAnchors: 2,
  /** T_c of the ε-constraint handling (Takahama & Sakai 2006) in generations; 0: Deb's constrained domination. */
  epsilonGenerations: 0,
};

/** Fixed objective bounds for the hypervolume record of one run (minimisation form). */
interface HypervolumeFrame {
  ideal: number[];
  nadir: number[];
}

interface RunState {
  nsga2: Nsga2State;
  hypervolumeFrame: HypervolumeFrame | null;
  /** Convergence record and phase of the termination (absent in states written before it existed). */
  termination?: TerminationState;
  /** Designs told to the optimizer so far over all sessions (absent in older states). */
  evaluations?: number;
}

/** Objectives in minimisation form. */
function minimised(sp: StudyProblem, evaluation: Evaluation): number[] {
  return evaluation.objectives.map((v, k) => (sp.study.objectives[k]!.sense === 'max' ? -v : v));
}

/**
 * Hypervolume of the feasible members, objectives normalised to the frame (ideal → 0, nadir → 1),
 * reference point 1.1 in every objective.
 */
export function frameHypervolume(points: readonly number[][], frame: HypervolumeFrame): number {
  const m = frame.ideal.length;
  const reference = new Array<number>(m).fill(1.1);
  const normalised = points.map((p) => p.map((v, k) => {
    const span = frame.nadir[k]! - frame.ideal[k]!;
    return span > 0 ? (v - frame.ideal[k]!) / span : v - frame.ideal[k]!;
  }));
  return hypervolume(normalised, reference);
}

function frameFrom(points: readonly number[][]): HypervolumeFrame | null {
  if (points.length === 0) return null;
  const m = points[0]!.length;
  const ideal = new Array<number>(m).fill(Infinity);
  const nadir = new Array<number>(m).fill(-Infinity);
  for (const p of points) {
    for (let k = 0; k < m; k++) {
      ideal[k] = Math.min(ideal[k]!, p[k]!);
      nadir[k] = Math.max(nadir[k]!, p[k]!);
    }
  }
  // A frame needs a spread in every objective; until a generation shows one, no hypervolume is recorded.
  for (let k = 0; k < m; k++) if (!(nadir[k]! > ideal[k]!)) return null;
  return { ideal, nadir };
}

/** The frame widened to cover `points` (objectives clamped to finite values, as in the final record). */
function widenFrame(frame: HypervolumeFrame | null, points: readonly number[][]): HypervolumeFrame | null {
  const finite = points.map((p) => p.map((v) => (v === Infinity ? Number.MAX_VALUE : v === -Infinity ? -Number.MAX_VALUE : v)));
  const all = frame ? [frame.ideal, frame.nadir, ...finite] : finite;
  if (all.length === 0) return null;
  // Bounds of every front point so far, kept even before they spread in every objective.
  const ideal = all[0]!.map((_, k) => Math.min(...all.map((p) => p[k]!)));
  const nadir = all[0]!.map((_, k) => Math.max(...all.map((p) => p[k]!)));
  return { ideal, nadir };
}

/** A frame that spreads in every objective (a hypervolume can be given in it). */
function spreadFrame(frame: HypervolumeFrame | null): HypervolumeFrame | null {
  return frame && frame.ideal.every((v, k) => frame.nadir[k]! > v) ? frame : null;
}

/**
 * At the end of a run, every generation's hypervolume is recomputed in one frame: objectives
 * normalised by the ideal and nadir of the feasible rank-0 members over the whole run (reference
 * point 1.1 per objective), so the recorded convergence is comparable from the first generation to
 * the last. The values shown while the run goes are provisional (frame of the first generation with
 * a spread in every objective).
 */
export function recordFinalHypervolumes(store: Store, runId: number, sp: StudyProblem): void {
  const objectives = sp.study.objectives;
  const fronts = store.rankZeroFeasibleMetrics(runId, objectives.map((o) => o.metric)).map((members) =>
    members.map((values) => objectives.map((o, k) => {
      const v = values[k] ?? Number.NaN;
      const finite = v === Infinity ? Number.MAX_VALUE : v === -Infinity ? -Number.MAX_VALUE : v;
      return o.sense === 'max' ? -finite : finite;
    })),
  );
  if (fronts.length === 0) return;
  const frame = frameFrom(fronts.flat());
  const values = new Map<number, number | null>();
  fronts.forEach((front, g) => values.set(g, frame ? frameHypervolume(front, frame) : null));
  store.setHypervolumes(runId, values);
}

export class WarmStartError extends LoopsmithUserError {
  override readonly name = 'WarmStartError';
}

/** Final population of an earlier optimization run, as design vectors of this study (clamped to its bounds). */
function warmStartDesigns(from: { dbPath: string; runId?: number }, sp: StudyProblem): { runId: number; designs: Float64Array[] } {
  if (!existsSync(from.dbPath)) throw new WarmStartError(`--from ${from.dbPath}: no such database`);
  const store = Store.open(from.dbPath, { access: 'read' });
  try {
    const run = from.runId !== undefined ? store.getRun(from.runId) : store.listRuns().filter((r) => r.kind === 'optimize').at(-1);
    if (!run) throw new WarmStartError(`--from ${from.dbPath}${from.runId !== undefined ? ':' + from.runId : ''}: no such optimization run`);
    const last = store.lastGeneration(run.id);
    if (last === undefined) throw new WarmStartError(`--from: run ${run.id} has no generation yet`);
    const designs = store.generationMembers(run.id, last).map((m) => {
      const values: Record<string, number | string> = {};
      for (const v of sp.variables) {
        const value = m.variables[v.name];
        if (value === undefined) throw new WarmStartError(`--from: run ${run.id} has no variable "${v.name}"; warm starts need the same design variables`);
        values[v.name] = v.kind === 'real' ? Math.min(Math.max(value as number, v.min), v.max) : value;
      }
      return designFromValues(sp.variables, values);
    });
    return { runId: run.id, designs };
  } finally {
    store.close();
  }
}

/** Search settings and termination for a study (or a --generations override). */
function searchPlan(loaded: LoadedStudy, population: number, seed: number, fixedGenerations: number | undefined, algorithm: string): { nsga: Nsga2Settings; termination: Termination; search: Record<string, unknown> | null } {
  const t = loaded.study.optimizer.termination;
  const fixed = fixedGenerations ?? (t.kind === 'generations' ? t.generations : undefined);
  if (fixed !== undefined) return { nsga: { populationSize: population, seed }, termination: { generations: fixed - 1 }, search: null };
  const conv = t.kind === 'convergence' ? t : { window: 20, tolerance: 0.001, maxEvaluations: 10000 };
  const nsga: Nsga2Settings = {
    populationSize: population,
    seed,
    initialOversampling: CONVERGENCE_SEARCH.initialOversampling,
    variation: CONVERGENCE_SEARCH.variation,
    differentialWeight: CONVERGENCE_SEARCH.differentialWeight,
    refinementMove: CONVERGENCE_SEARCH.refinementMove,
    refinementEta: CONVERGENCE_SEARCH.refinementEta,
    refinementAnchors: CONVERGENCE_SEARCH.refinementAnchors,
    ...(CONVERGENCE_SEARCH.epsilonGenerations > 0 ? { epsilonConstraint: { generations: CONVERGENCE_SEARCH.epsilonGenerations } } : {}),
  };
  return {
    nsga,
    // The final local refinement is a phase of Nsga2; NSGA-III runs stop on convergence without it.
    termination: { maxEvaluations: conv.maxEvaluations, convergence: { window: conv.window, tolerance: conv.tolerance }, refinementGenerations: algorithm === 'nsga2' ? Math.round((CONVERGENCE_SEARCH.refinementShare * conv.maxEvaluations) / population) : 0 },
    // NSGA-III keeps its paper's start and variation (it reads none of these settings): recorded as such.
    search: algorithm === 'nsga2' ? { ...CONVERGENCE_SEARCH } : { initialOversampling: 1, variation: 'sbx', refinementShare: 0 },
  };
}

export class ContinueError extends LoopsmithUserError {
  override readonly name = 'ContinueError';
}

/** Upper bound of the generations a termination allows (for progress display). */
function generationBound(termination: Termination, population: number, initial: number): number {
  if (termination.generations !== undefined) return termination.generations + 1;
  const cap = termination.maxEvaluations ?? initial;
  return Math.max(1, 1 + Math.floor((cap - initial) / population));
}

/** Termination of a continued run: N more generations, or until convergence within one more budget. */
function continuedTermination(previous: Termination, lastGeneration: number, evaluations: number, more: number | 'converge', studyPlan: Termination): Termination {
  if (more !== 'converge') return { generations: lastGeneration + more };
  const convergence = previous.convergence ?? studyPlan.convergence ?? { window: 20, tolerance: 0.001 };
  const budget = studyPlan.maxEvaluations ?? 10000;
  return {
    maxEvaluations: evaluations + budget,
    convergence,
    refinementGenerations: previous.refinementGenerations ?? studyPlan.refinementGenerations ?? 0,
    notBefore: lastGeneration + convergence.window + 1,
  };
}

/** What a run is set up with before its pool starts: the study, its problem, the store, the search plan and settings. */
interface RunSetup {
  readonly loaded: LoadedStudy;
  readonly sp: ReturnType<typeof studyProblem>;
  readonly seed: number;
  readonly population: number;
  readonly algorithm: LoadedStudy['study']['optimizer']['algorithm'];
  readonly warm: ReturnType<typeof warmStartDesigns> | null;
  readonly store: Store;
  readonly studyId: number;
  readonly continued: RunRow | undefined;
  readonly plan: ReturnType<typeof searchPlan>;
  readonly settings: Record<string, unknown>;
}

/** Opens the store and settles the run's settings; refuses a bad --from or --more before anything is created. */
function setUpRun(studyIn: LoadedStudy, sp: StudyProblem, options: RunOptions): RunSetup {
  const loaded = withEvaluatorNamespace(studyIn, options.evaluatorModule);
  const seed = options.seed ?? loaded.study.optimizer.seed;
  const population = options.population ?? loaded.study.optimizer.population;
  const algorithm = loaded.study.optimizer.algorithm;
  // Checked before the database is opened, so that a bad --from creates nothing.
  const warm = options.warmStart ? warmStartDesigns(options.warmStart, sp) : null;
  if (options.more !== undefined && !existsSync(options.dbPath)) throw new ContinueError(`--more: ${options.dbPath}: no such database; run the study first (loopsmith run STUDY), then continue it`);
  const store = Store.open(options.dbPath, { access: 'write' });
  const studyId = store.upsertStudy({ name: loaded.study.name, architecture: loaded.study.architecture, fileText: loaded.text, settingsHash: loaded.settingsHash });
  let continued: RunRow | undefined;
  try {
    continued = options.more !== undefined ? findRunToContinue(store, studyId, seed, population, options.runId) : undefined;
  } catch (error) {
    store.close();
    throw error;
  }
  // A continued run keeps its own kind of search (a fixed-count run stays the paper's NSGA-II).
  const continuedFixed = continued !== undefined && !('search' in (JSON.parse(continued.settingsJson) as object));
  const plan = searchPlan(loaded, population, seed, continuedFixed ? continued!.generationsDone : options.generations, algorithm);
  const settings = {
    ...(algorithm === 'nsga3' ? { algorithm, population, seed, crossoverProbability: 1, crossoverEta: 30, mutationEta: 20 } : { algorithm, population, seed, crossoverProbability: 0.9, crossoverEta: 20, mutationEta: 20 }),
    ...(plan.search ? { search: plan.search } : {}),
    ...(warm ? { warmStart: { database: options.warmStart!.dbPath, run: warm.runId } } : {}),
  };
  if (continued && continued.settingsJson !== canonicalJson(settings)) {
    store.close();
    throw new ContinueError(`--more: run ${continued.id} was made with other search settings than this loopsmith uses for the study; start a new run instead`);
  }
  return { loaded, sp, seed, population, algorithm, warm, store, studyId, continued, plan, settings };
}

/** The run's optimizer and termination: restored from the run claimed (resumed or continued), or new. */
interface RunStart {
  readonly runId: number;
  readonly optimizer: AskTellOptimizer;
  readonly frame: HypervolumeFrame | null;
  readonly resumedFrom: number | null;
  readonly termination: Termination;
  readonly trackerState: TerminationState | undefined;
  readonly evaluationsSoFar: number;
}

/**
 * Takes the run to continue (--more), or the unfinished run of the same settings, or starts one;
 * refused while another living process writes it. `onClaim` learns the run id as soon as it is owned.
 */
function startOrResume(setup: RunSetup, options: RunOptions, workers: number, onClaim: (runId: number) => void): RunStart {
  const { store, studyId, seed, settings, continued, algorithm, sp, plan, population } = setup;
  const claimed = store.claimRun({ studyId, kind: 'optimize', seed, settings, workers, command: options.command ?? null, ...(continued ? { runId: continued.id } : {}) });
  const runId = claimed.run.id;
  onClaim(runId);
  const previous = claimed.resumed ? claimed.run : undefined;
  if (!previous || !previous.optimizerState) {
    return { runId, optimizer: createOptimizer(algorithm, sp.problem, plan.nsga), frame: null, resumedFrom: null, termination: plan.termination, trackerState: undefined, evaluationsSoFar: 0 };
  }
  const state = JSON.parse(previous.optimizerState) as RunState;
  const optimizer = createOptimizer(algorithm, sp.problem, plan.nsga, state.nsga2);
  const evaluationsSoFar = state.evaluations ?? previous.generationsDone * population;
  let trackerState = state.termination;
  let termination = plan.termination;
  const recorded = previous.terminationJson ? (JSON.parse(previous.terminationJson) as Termination) : null;
  if (options.more !== undefined) {
    termination = continuedTermination(recorded ?? plan.termination, optimizer.generation, evaluationsSoFar, options.more, plan.termination);
    if (trackerState) trackerState = { ...trackerState, convergedAt: null, refinementFrom: null };
    if (options.more === 'converge' && optimizer instanceof Nsga2) optimizer.resumeSearch();
  } else if (recorded) {
    termination = recorded;
  }
  return { runId, optimizer, frame: state.hypervolumeFrame, resumedFrom: previous.generationsDone, termination, trackerState, evaluationsSoFar };
}

/** Never leave a run "running" behind an error: 'stopped' with generations stored (the same command resumes it), else 'failed'. */
function markRunAfterError(store: Store, runId: number, error: unknown): void {
  const reason = error instanceof Error ? error.message : String(error);
  const done = store.getRun(runId)?.generationsDone ?? 0;
  store.markRun(runId, done > 0 ? 'stopped' : 'failed', done > 0 ? `stopped by an error after ${done} generation(s): ${reason}` : `failed: ${reason}`);
}

/**
 * What one generation leaves behind: the population's members, its feasible count and hypervolume, and
 * the optimizer state to resume from. The frame grows with every generation's front, so the figure shown
 * during the run is in the same normalisation as the record rewritten at the end (equal at the last generation).
 */
function generationRecord(
  optimizer: AskTellOptimizer,
  sp: ReturnType<typeof studyProblem>,
  settingsHash: string,
  frameBefore: HypervolumeFrame | null,
  at: { readonly tracker: TerminationTracker; readonly evaluationsSoFar: number; readonly designs: number; readonly newRecords: number; readonly failed: number; readonly elapsed: number },
) {
  const members = optimizer.population();
  const feasibleFront = members.filter((m) => m.rank === 0 && isFeasible(m.evaluation)).map((m) => minimised(sp, m.evaluation));
  const feasibleCount = members.filter((m) => isFeasible(m.evaluation)).length;
  const frame = widenFrame(frameBefore, feasibleFront);
  const spread = spreadFrame(frame);
  const hypervolume = spread ? frameHypervolume(feasibleFront, spread) : null;
  const state: RunState = { nsga2: optimizer.snapshot(), hypervolumeFrame: frame, termination: at.tracker.toJSON(), evaluations: at.evaluationsSoFar };
  return {
    frame,
    members: members.map((m) => ({ key: evaluationKey(settingsHash, m.design), rank: m.rank, crowding: m.crowding })),
    counts: { evaluations: at.designs, newEvaluations: at.newRecords, failed: at.failed, feasibleCount, hypervolume, evaluationsPerSecond: at.elapsed > 0 ? at.newRecords / at.elapsed : 0 },
    // A fresh plain object (snapshot), made into text when the generation is written, off the critical path.
    optimizerState: state,
  };
}

/** The run's summary: the loop's figures plus the convergence window, tolerance and whether it was still improving. */
function runSummary(tracker: TerminationTracker, figures: Omit<RunSummary, 'window' | 'tolerance' | 'stillImproving' | 'convergedAt'>): RunSummary {
  const { window, tolerance } = tracker.convergence;
  const stillImproving = figures.endReason === 'budget' && (figures.hvImprovement === null || figures.hvImprovement >= tolerance);
  return { ...figures, window, tolerance, stillImproving, convergedAt: tracker.convergedGeneration };
}

type RunWrite = Omit<GenerationWrite, 'optimizerState'> & { optimizerState: RunState };

/** What the generations of one session share: the run, its optimizer and tracker, and the figures so far. */
interface GenerationLoop {
  readonly runId: number;
  readonly sp: StudyProblem;
  readonly loaded: LoadedStudy;
  readonly options: RunOptions;
  readonly optimizer: AskTellOptimizer;
  readonly tracker: TerminationTracker;
  /** Generations in all (bound shown in the progress). */
  readonly generations: number;
  readonly started: number;
  readonly resumed: boolean;
  frame: HypervolumeFrame | null;
  evaluationsSoFar: number;
  totalEvaluations: number;
  totalNew: number;
  lastImprovement: number | null;
  archiveSize: number;
  /** shouldStop() answered true after a generation: the batch in flight is dropped. */
  stopRequested: boolean;
}

/** A generation told to the optimizer, as the loop saw it. */
interface ToldGeneration {
  readonly generation: number;
  readonly decision: TerminationDecision;
  readonly evaluationsSoFar: number;
  readonly designs: number;
  readonly newRecords: NewEvaluation[];
  readonly failed: number;
  readonly elapsed: number;
}

/**
 * Finishes a told generation, while the workers evaluate the next one (the optimizer has only been
 * asked for it since, which changes nothing of what is read here): the archive's convergence
 * figures, the record (hypervolume, members, optimizer state), the progress callback and the stop
 * request. Returns the generation's store write.
 */
function completeGeneration(loop: GenerationLoop, told: ToldGeneration): RunWrite {
  const { optimizer, options } = loop;
  const status = told.decision.status;
  loop.lastImprovement = status.improvement;
  loop.archiveSize = status.archiveSize;
  const record = generationRecord(optimizer, loop.sp, loop.loaded.settingsHash, loop.frame, { tracker: loop.tracker, evaluationsSoFar: told.evaluationsSoFar, designs: told.designs, newRecords: told.newRecords.length, failed: told.failed, elapsed: told.elapsed });
  loop.frame = record.frame;
  const counts = record.counts;
  options.onGeneration?.({
    runId: loop.runId,
    generation: told.generation,
    generations: Math.max(loop.generations, told.generation + 1),
    archiveSize: loop.archiveSize,
    hvImprovement: loop.lastImprovement,
    phase: optimizer instanceof Nsga2 ? optimizer.currentPhase : 'search',
    ...counts,
    elapsedSeconds: (performance.now() - loop.started) / 1000,
    resumed: loop.resumed,
  });
  if (!told.decision.stop && options.shouldStop?.()) loop.stopRequested = true;
  return {
    runId: loop.runId,
    generation: told.generation,
    newEvaluations: told.newRecords,
    members: record.members,
    stats: { ...counts, elapsedSeconds: told.elapsed, archiveSize: loop.archiveSize, hvImprovement: loop.lastImprovement },
    optimizerState: record.optimizerState,
  };
}

/**
 * The generations of one session. Between two generations the main thread does only what the next
 * batch needs (tell, the stop decision, ask, the cache lookup); the rest of a generation is finished
 * and written while the workers evaluate the next batch (WriteBehind), so the workers wait as little
 * as possible. The store ends up as if each generation had been written before the next was asked.
 */
async function runGenerations(loop: GenerationLoop, population: number, store: Store, pool: EvaluationPool, warm: RunSetup['warm']): Promise<{ status: 'finished' | 'stopped'; endReason: EndReason | null }> {
  const { optimizer, tracker, sp, loaded } = loop;
  const termination = tracker.termination;
  if (optimizer.generation >= 0 && termination.generations !== undefined && optimizer.generation >= termination.generations) return { status: 'finished', endReason: 'budget' };
  const writes = new WriteBehind<RunWrite>((held) => store.writeGeneration({ ...held, optimizerState: JSON.stringify(held.optimizerState) }));
  for (;;) {
    const generation = optimizer.generation + 1;
    const genStart = performance.now();
    let designs = generation === 0 ? optimizer.initialDesigns() : optimizer.ask();
    if (generation === 0 && warm) {
      // Warm start: the earlier run's final population first, then space-filling designs up to the initial size.
      designs = [...warm.designs, ...designs].slice(0, designs.length);
    }
    const batch = startBatch(store, pool, sp, loaded, designs, writes.records);
    await batch.during(writes.flush);
    if (loop.stopRequested) {
      batch.abandon();
      return { status: 'stopped', endReason: null };
    }
    const { evaluations, newRecords, failed } = await batch.result;
    optimizer.tell(designs, evaluations);
    loop.evaluationsSoFar += designs.length;
    const decision = tracker.afterGeneration(optimizer.generation, loop.evaluationsSoFar, population, optimizer.archive().map((m) => minimised(sp, m.evaluation)));
    if (decision.startRefinement && optimizer instanceof Nsga2) optimizer.startRefinement();
    const told: ToldGeneration = { generation, decision, evaluationsSoFar: loop.evaluationsSoFar, designs: designs.length, newRecords, failed, elapsed: (performance.now() - genStart) / 1000 };
    writes.hold(newRecords, () => completeGeneration(loop, told));
    loop.totalEvaluations += designs.length;
    loop.totalNew += newRecords.length;
    if (decision.stop) {
      // No more evaluations: the threads end while the last generation is written.
      void pool.close();
      writes.flush();
      return { status: 'finished', endReason: decision.reason };
    }
  }
}

export async function runOptimization(studyIn: LoadedStudy, options: RunOptions): Promise<RunSummary> {
  const sp = studyProblem(studyIn.study);
  // The workers start first: they load their modules while this thread opens the store and settles the run.
  const pool = new EvaluationPool(studyIn.study, sp.variables.length, sp.constraints.length, options);
  let setup: RunSetup;
  try {
    setup = setUpRun(studyIn, sp, options);
  } catch (error) {
    await pool.close();
    throw error;
  }
  const { loaded, population, algorithm, warm, store, plan } = setup;
  const nsgaSettings = plan.nsga;
  let ownedRunId: number | undefined;
  try {
    store.ensureColumns(sp.columns);
    const start = startOrResume(setup, options, pool.workers, (id) => (ownedRunId = id));
    const { runId, optimizer, resumedFrom, termination } = start;
    store.setRunEnd(runId, null, termination);
    const tracker = new TerminationTracker(termination, start.trackerState);
    const initialCount = algorithm === 'nsga2' ? Math.round((nsgaSettings.initialOversampling ?? 1) * population) : population;
    const loop: GenerationLoop = {
      runId, sp, loaded, options, optimizer, tracker,
      generations: generationBound(termination, population, initialCount),
      started: performance.now(),
      resumed: resumedFrom !== null,
      frame: start.frame,
      evaluationsSoFar: start.evaluationsSoFar,
      totalEvaluations: 0,
      totalNew: 0,
      lastImprovement: null,
      archiveSize: optimizer.archive().length,
      stopRequested: false,
    };
    const { status, endReason } = await runGenerations(loop, population, store, pool, warm);
    void pool.close();
    if (status === 'finished') recordFinalHypervolumes(store, runId, sp);
    store.setRunEnd(runId, status === 'finished' ? endReason ?? 'budget' : null, termination);
    store.markRun(runId, status, status === 'stopped' ? `stopped by the user after generation ${optimizer.generation}` : null);
    return runSummary(tracker, {
      runId,
      status,
      resumedFromGeneration: resumedFrom,
      generationsDone: optimizer.generation + 1,
      evaluations: loop.totalEvaluations,
      newEvaluations: loop.totalNew,
      elapsedSeconds: (performance.now() - loop.started) / 1000,
      totalEvaluations: loop.evaluationsSoFar,
      endReason: status === 'finished' ? endReason ?? 'budget' : null,
      termination,
      hvImprovement: loop.lastImprovement,
      archiveSize: loop.archiveSize,
    });
  } catch (error) {
    // The reason goes with the run. A run this process never claimed (another process writes it) is not touched.
    if (ownedRunId !== undefined) markRunAfterError(store, ownedRunId, error);
    throw error;
  } finally {
    await pool.close();
    store.close();
  }
}

/** The run `--more` continues: the given one, or the newest finished/stopped run of this study, seed and population. */
function findRunToContinue(store: Store, studyId: number, seed: number, population: number, runId: number | undefined): RunRow {
  const populationOf = (run: RunRow): unknown => (JSON.parse(run.settingsJson) as { population?: unknown }).population;
  if (runId !== undefined) {
    const run = store.getRun(runId);
    if (!run || run.kind !== 'optimize') throw new ContinueError(`--run ${runId}: no such optimization run in this database (see: loopsmith runs DB)`);
    if (run.studyId !== studyId) throw new ContinueError(`--run ${runId}: that run belongs to another study file; give the study it was run with`);
    if (run.seed !== seed || populationOf(run) !== population) throw new ContinueError(`--run ${runId}: that run used seed ${run.seed} and population ${String(populationOf(run))}; continue it with the same (--seed, --population)`);
    if (!run.optimizerState) throw new ContinueError(`--run ${runId}: the run has no stored generation to continue from`);
    if (run.status === 'running') throw new ContinueError(`--run ${runId}: the run is still running (or was killed): run the same command without --more to resume it first`);
    return run;
  }
  const candidates = store.listRuns().filter((r) => r.kind === 'optimize' && r.studyId === studyId && r.seed === seed && populationOf(r) === population && r.optimizerState !== null);
  const run = candidates.at(-1);
  if (!run) throw new ContinueError(`--more: no earlier run of this study with seed ${seed} and these settings in the database to continue; run it first (loopsmith run STUDY)`);
  if (run.status === 'running') throw new ContinueError(`--more: run ${run.id} is still running (or was killed): run the same command without --more to resume it first`);
  return run;
}
