/**
 * `loopsmith run`: NSGA-II over a study's design space, evaluations on the worker pool, one SQLite
 * transaction per generation. A run that was killed or stopped resumes from its last committed
 * generation when started again with the same study, seed and population.
 */
import { LoopsmithUserError } from '../core/errors.js';
import { existsSync } from 'node:fs';
import { designFromValues } from '../mechanics/designSpace.js';
import { hypervolume } from '../optimizer/hypervolume.js';
import type { Nsga2State } from '../optimizer/nsga2.js';
import { createOptimizer, type AskTellOptimizer } from '../optimizer/algorithm.js';
import { isFeasible, type Evaluation } from '../optimizer/types.js';
import { EvaluationPool, type PoolOptions } from '../pool/pool.js';
import { canonicalJson, Store, type GenerationWrite, type NewEvaluation } from '../store/store.js';
import type { LoadedStudy } from '../study/parse.js';
import { evaluationKey, studyProblem, type StudyProblem, withEvaluatorNamespace } from './problem.js';
import { evaluateWithCache } from './batch.js';

export interface RunOptions extends PoolOptions {
  readonly dbPath: string;
  readonly seed?: number;
  readonly population?: number;
  /** Generations in all, the initial population included (evaluations ≈ population × generations). */
  readonly generations?: number;
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
  readonly generations: number;
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
  readonly evaluations: number;
  readonly newEvaluations: number;
  readonly elapsedSeconds: number;
}

/** Fixed objective bounds for the hypervolume record of one run (minimisation form). */
interface HypervolumeFrame {
  ideal: number[];
  nadir: number[];
}

interface RunState {
  nsga2: Nsga2State;
  hypervolumeFrame: HypervolumeFrame | null;
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
  const last = store.lastGeneration(runId);
  if (last === undefined) return;
  const fronts: number[][][] = [];
  for (let g = 0; g <= last; g++) {
    fronts.push(
      store
        .generationMembers(runId, g)
        .filter((m) => m.rank === 0 && m.feasible && m.error === null)
        .map((m) => sp.study.objectives.map((o) => {
          const v = m.metrics[o.metric] ?? Number.NaN;
          const finite = v === Infinity ? Number.MAX_VALUE : v === -Infinity ? -Number.MAX_VALUE : v;
          return o.sense === 'max' ? -finite : finite;
        })),
    );
  }
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

export async function runOptimization(studyIn: LoadedStudy, options: RunOptions): Promise<RunSummary> {
  const loaded = withEvaluatorNamespace(studyIn, options.evaluatorModule);
  const sp = studyProblem(loaded.study);
  const seed = options.seed ?? loaded.study.optimizer.seed;
  const population = options.population ?? loaded.study.optimizer.population;
  const generations = options.generations ?? loaded.study.optimizer.generations;
  const nsgaSettings = { populationSize: population, seed };
  const algorithm = loaded.study.optimizer.algorithm;
  const warm = options.warmStart ? warmStartDesigns(options.warmStart, sp) : null;
  const settings = {
    ...(algorithm === 'nsga3' ? { algorithm, population, seed, crossoverProbability: 1, crossoverEta: 30, mutationEta: 20 } : { algorithm, population, seed, crossoverProbability: 0.9, crossoverEta: 20, mutationEta: 20 }),
    ...(warm ? { warmStart: { database: options.warmStart!.dbPath, run: warm.runId } } : {}),
  };
  const settingsJson = canonicalJson(settings);

  const store = Store.open(options.dbPath, { access: 'write' });
  const pool = new EvaluationPool(loaded.text, loaded.source, sp.variables.length, sp.constraints.length, options);
  try {
    const studyId = store.upsertStudy({ name: loaded.study.name, architecture: loaded.study.architecture, fileText: loaded.text, settingsHash: loaded.settingsHash });
    store.ensureColumns(sp.columns);
    let runId: number;
    let optimizer: AskTellOptimizer;
    let frame: HypervolumeFrame | null = null;
    let resumedFrom: number | null = null;
    // Takes the unfinished run of the same settings (refused while another living process writes it), or starts one.
    const claimed = store.claimRun({ studyId, kind: 'optimize', seed, settings: JSON.parse(settingsJson) as unknown, workers: pool.workers, command: options.command ?? null });
    runId = claimed.run.id;
    if (claimed.resumed && claimed.run.optimizerState) {
      const state = JSON.parse(claimed.run.optimizerState) as RunState;
      optimizer = createOptimizer(algorithm, sp.problem, nsgaSettings, state.nsga2);
      frame = state.hypervolumeFrame;
      resumedFrom = claimed.run.generationsDone;
    } else {
      optimizer = createOptimizer(algorithm, sp.problem, nsgaSettings);
    }
    try {
      return await optimizeLoop();
    } catch (error) {
      // Never leave a run "running" behind an error. With generations stored it is 'stopped' (the same
      // command resumes it from the last one); without any it 'failed'. The reason goes with it.
      const reason = error instanceof Error ? error.message : String(error);
      const done = store.getRun(runId)?.generationsDone ?? 0;
      store.markRun(runId, done > 0 ? 'stopped' : 'failed', done > 0 ? `stopped by an error after ${done} generation(s): ${reason}` : `failed: ${reason}`);
      throw error;
    }

    async function optimizeLoop(): Promise<RunSummary> {

      let totalEvaluations = 0;
      let totalNew = 0;
      const started = performance.now();
      let status: 'finished' | 'stopped' = 'finished';
      // The store write of generation g runs on the main thread while the workers evaluate generation
      // g + 1; its records are served from memory until then, so the database ends up exactly as if
      // every generation had been written before the next was asked for.
      let pendingWrite: GenerationWrite | null = null;
      let pendingRecords = new Map<string, NewEvaluation>();
      const flush = (): void => {
        if (!pendingWrite) return;
        store.writeGeneration(pendingWrite);
        pendingWrite = null;
        pendingRecords = new Map();
      };
      while (optimizer.generation + 1 < generations) {
        const generation = optimizer.generation + 1;
        const genStart = performance.now();
        let designs = generation === 0 ? optimizer.initialDesigns() : optimizer.ask();
        if (generation === 0 && warm) {
          // Warm start: the earlier run's final population first, then space-filling designs up to the population size.
          designs = [...warm.designs, ...designs].slice(0, population);
        }
        const { evaluations, newRecords, failed } = await evaluateWithCache(store, pool, sp, loaded, designs, pendingRecords, flush);
        optimizer.tell(designs, evaluations);

        const members = optimizer.population();
        const feasibleFront = members.filter((m) => m.rank === 0 && isFeasible(m.evaluation)).map((m) => minimised(sp, m.evaluation));
        const feasibleCount = members.filter((m) => isFeasible(m.evaluation)).length;
        // The frame grows with every generation's front, so the figure shown during the run is in the
        // same normalisation as the record rewritten at the end (equal to it at the last generation).
        frame = widenFrame(frame, feasibleFront);
        const spread = spreadFrame(frame);
        const hv = spread ? frameHypervolume(feasibleFront, spread) : null;
        const elapsed = (performance.now() - genStart) / 1000;
        const memberKeys = members.map((m) => ({ key: evaluationKey(loaded.settingsHash, m.design), rank: m.rank, crowding: m.crowding }));
        const state: RunState = { nsga2: optimizer.snapshot(), hypervolumeFrame: frame };
        pendingWrite = {
          runId,
          generation,
          newEvaluations: newRecords,
          members: memberKeys,
          stats: {
            evaluations: designs.length,
            newEvaluations: newRecords.length,
            failed,
            feasibleCount,
            hypervolume: hv,
            elapsedSeconds: elapsed,
            evaluationsPerSecond: elapsed > 0 ? newRecords.length / elapsed : 0,
          },
          optimizerState: JSON.stringify(state),
        };
        for (const record of newRecords) pendingRecords.set(record.key, record);
        totalEvaluations += designs.length;
        totalNew += newRecords.length;
        options.onGeneration?.({
          runId,
          generation,
          generations,
          evaluations: designs.length,
          newEvaluations: newRecords.length,
          failed,
          feasibleCount,
          hypervolume: hv,
          evaluationsPerSecond: elapsed > 0 ? newRecords.length / elapsed : 0,
          elapsedSeconds: (performance.now() - started) / 1000,
          resumed: resumedFrom !== null,
        });
        if (options.shouldStop?.() && optimizer.generation + 1 < generations) {
          status = 'stopped';
          break;
        }
      }
      flush();
      if (status === 'finished') recordFinalHypervolumes(store, runId, sp);
      store.markRun(runId, status, status === 'stopped' ? `stopped by the user after generation ${optimizer.generation}` : null);
      return {
        runId,
        status,
        resumedFromGeneration: resumedFrom,
        generationsDone: optimizer.generation + 1,
        evaluations: totalEvaluations,
        newEvaluations: totalNew,
        elapsedSeconds: (performance.now() - started) / 1000,
      };
    }
  } finally {
    await pool.close();
    store.close();
  }
}
