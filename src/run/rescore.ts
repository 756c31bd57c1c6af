/**
 * `loopsmith rescore`: the designs of an earlier run under a changed study (other drives, margins,
 * constraints or objectives). Writes a new run linked to the old one and reports how the front moved.
 *
 * What is recomputed depends on what changed:
 * - same evaluation settings: nothing (every design is found in the store's cache);
 * - same workspace settings (geometry, modes, joint limits, task region, evaluation grid) and a task
 *   region: only the per-pose metrics over the task region; the stored workspace metrics are reused;
 * - anything else: a full evaluation.
 */
import { LoopsmithUserError } from '../core/errors.js';
import { designFromValues } from '../mechanics/designSpace.js';
import { WORKSPACE_METRICS } from '../mechanics/evaluate.js';
import { isFeasible, type Evaluation } from '../optimizer/types.js';
import { EvaluationPool, type PoolOptions } from '../pool/pool.js';
import { Store, type NewEvaluation, type RunRow, type StoredEvaluation } from '../store/store.js';
import { parseStudyText, workspaceSettingsHash, type LoadedStudy } from '../study/parse.js';
import { nonDominated } from './front.js';
import { evaluationFromOutcome, evaluationFromStored, evaluationKey, newEvaluationRecord, studyProblem, type StudyProblem, withEvaluatorNamespace } from './problem.js';

export class RescoreError extends LoopsmithUserError {
  override readonly name = 'RescoreError';
}

export interface RescoreOptions extends PoolOptions {
  readonly dbPath: string;
  /** Run whose designs are rescored (default: the latest optimize, sweep or rescore run). */
  readonly runId?: number;
  readonly onProgress?: (done: number, total: number) => void;
  /** 'front': only the old run's feasible non-dominated designs (by its own study) are rescored (default 'all'). */
  readonly designs?: 'all' | 'front';
}

export interface RescoreResult {
  readonly runId: number;
  readonly parentRunId: number;
  readonly mode: 'cached' | 'per-pose' | 'full';
  readonly designs: number;
  readonly evaluated: number;
  readonly feasible: number;
  readonly front: readonly StoredEvaluation[];
  /** Old-front designs (by design values) no longer on the front, and new ones that joined. */
  readonly left: readonly StoredEvaluation[];
  readonly joined: readonly StoredEvaluation[];
  /** Per constraint: how many designs of the old front now violate it, and how many new-front designs hold it with less than 1 % to spare. */
  readonly constraints: readonly { name: string; violatedByOldFront: number; activeOnNewFront: number }[];
}

function designIdentity(values: Readonly<Record<string, number | string>>): string {
  return JSON.stringify(Object.keys(values).sort().map((k) => [k, values[k]]));
}

export async function rescoreRun(studyIn: LoadedStudy, options: RescoreOptions): Promise<RescoreResult> {
  const loaded = withEvaluatorNamespace(studyIn, options.evaluatorModule);
  const store = Store.open(options.dbPath, { access: 'write' });
  let pool: EvaluationPool | undefined;
  try {
    const old = oldRunToRescore(store, loaded, options);
    const stored = storedDesigns(store, old, options);
    const sp = old.problem;
    const designs = stored.map((e) => designFromValues(sp.variables, e.variables, true));
    const keys = designs.map((d) => evaluationKey(loaded.settingsHash, d));
    const sameWorkspace = workspaceSettingsHash(old.loaded.study) === workspaceSettingsHash(loaded.study) && loaded.study.task.region !== null;
    const scored = await scoreDesigns(store, loaded, sp, stored, designs, keys, sameWorkspace, options, (p) => (pool = p));

    // Rank 0: feasible and non-dominated; 1: other feasible; 2: infeasible or failed.
    const { evaluations } = scored;
    const minimised = (k: number): number[] => evaluations[k]!.objectives.map((v, i) => (loaded.study.objectives[i]!.sense === 'max' ? -v : v));
    const feasibleIndices = designs.map((_, k) => k).filter((k) => isFeasible(evaluations[k]!));
    const frontSet = new Set(nonDominated(feasibleIndices, minimised));
    const uniqueMembers = new Set<string>();
    const members = designs
      .map((_, k) => ({ key: keys[k]!, rank: frontSet.has(k) ? 0 : isFeasible(evaluations[k]!) ? 1 : 2, crowding: 0 }))
      .filter((m) => (uniqueMembers.has(m.key) ? false : (uniqueMembers.add(m.key), true)));
    const runId = writeRescoreRun(store, loaded, sp, old.run, scored, members, feasibleIndices.length, pool?.workers ?? 0, options);

    // Fronts from what is in memory (re-reading every member of both runs costs more than the rescore):
    // the old front by the old study's objectives over the old run's designs, the new one from the ranks above.
    const newFrontKeys = [...new Set([...frontSet].sort((a, b) => a - b).map((k) => keys[k]!))];
    const changes = frontChanges(store, loaded, old, stored, newFrontKeys);
    return {
      runId,
      parentRunId: old.run.id,
      mode: scored.mode,
      designs: members.length,
      evaluated: scored.newRecords.length,
      feasible: feasibleIndices.length,
      ...changes,
    };
  } finally {
    await pool?.close();
    try {
      store.close();
    } catch {
      // already closed
    }
  }
}

/** The run to rescore, its own study, and the new study's problem (which must have the same design variables). */
interface OldRun {
  readonly run: RunRow;
  /** The study the run was made with. */
  readonly loaded: LoadedStudy;
  /** The new study's problem (its design variables are the old run's). */
  readonly problem: StudyProblem;
}

function oldRunToRescore(store: Store, loaded: LoadedStudy, options: RescoreOptions): OldRun {
  const runs = store.listRuns();
  const oldRun = options.runId !== undefined ? store.getRun(options.runId) : runs.filter((r) => r.kind !== 'evaluate').at(-1);
  if (!oldRun) throw new RescoreError(options.runId !== undefined ? `${options.dbPath}: no run ${options.runId}` : `${options.dbPath}: no run to rescore`);
  const oldStudyRow = store.getStudy(oldRun.studyId)!;
  const oldLoaded = parseStudyText(oldStudyRow.fileText, `${options.dbPath} (study of run ${oldRun.id})`);
  const sp: StudyProblem = studyProblem(loaded.study);
  const oldSp = studyProblem(oldLoaded.study);
  const oldNames = oldSp.variables.map((v) => v.name).join(',');
  const newNames = sp.variables.map((v) => v.name).join(',');
  if (oldNames !== newNames) {
    throw new RescoreError(`rescore needs the same design variables: run ${oldRun.id} has [${oldNames}], the study has [${newNames}]; use "loopsmith run" for a new design space`);
  }
  return { run: oldRun, loaded: oldLoaded, problem: sp };
}

/** Every distinct design that was a member of the old run (or only its front, by its own study), by id. */
function storedDesigns(store: Store, old: OldRun, options: RescoreOptions): StoredEvaluation[] {
  const last = store.lastGeneration(old.run.id);
  const byId = new Map<number, StoredEvaluation>();
  for (let g = 0; last !== undefined && g <= last; g++) for (const m of store.generationMembers(old.run.id, g)) byId.set(m.id, m);
  const everyStored = [...byId.values()].sort((a, b) => a.id - b.id);
  const stored =
    options.designs === 'front'
      ? nonDominated(
          everyStored.filter((e) => e.feasible && e.error === null),
          (e) => old.loaded.study.objectives.map((o) => (o.sense === 'max' ? -(e.metrics[o.metric] ?? Number.NaN) : (e.metrics[o.metric] ?? Number.NaN))),
        )
      : everyStored;
  if (stored.length === 0) throw new RescoreError(`${options.dbPath}: run ${old.run.id} has no stored designs`);
  return stored;
}

interface ScoredDesigns {
  readonly mode: RescoreResult['mode'];
  /** One evaluation per design (duplicates share theirs). */
  readonly evaluations: Evaluation[];
  readonly newRecords: NewEvaluation[];
}

/**
 * The designs under the new study: from the store's cache when evaluated before under the same
 * settings, else in the worker pool (reusing the stored workspace metrics when the workspace settings
 * are unchanged). `onPool` receives the pool so the caller closes it.
 */
async function scoreDesigns(
  store: Store,
  loaded: LoadedStudy,
  sp: StudyProblem,
  stored: readonly StoredEvaluation[],
  designs: readonly Float64Array[],
  keys: readonly string[],
  sameWorkspace: boolean,
  options: RescoreOptions,
  onPool: (pool: EvaluationPool) => void,
): Promise<ScoredDesigns> {
  const cached = store.findEvaluations(keys);
  const evaluations: Evaluation[] = new Array<Evaluation>(designs.length);
  const toEvaluate: number[] = [];
  const seen = new Set<string>();
  designs.forEach((_, k) => {
    const hit = cached.get(keys[k]!);
    if (hit) evaluations[k] = evaluationFromStored(sp, hit);
    else if (!seen.has(keys[k]!)) {
      seen.add(keys[k]!);
      toEvaluate.push(k);
    }
  });
  const mode: RescoreResult['mode'] = toEvaluate.length === 0 ? 'cached' : sameWorkspace ? 'per-pose' : 'full';
  const newRecords: NewEvaluation[] = [];
  if (toEvaluate.length > 0) {
    const pool = new EvaluationPool(loaded.study, sp.variables.length, sp.constraints.length, options);
    onPool(pool);
    const workspace = toEvaluate.map((k) => {
      const old = stored[k]!;
      if (!sameWorkspace || old.error !== null) return null;
      const values = WORKSPACE_METRICS.map((m) => old.metrics[m]);
      return values.every((v) => typeof v === 'number') ? Float64Array.from(values as number[]) : null;
    });
    const batch = 4096;
    for (let start = 0; start < toEvaluate.length; start += batch) {
      const part = toEvaluate.slice(start, start + batch);
      const outcomes = await pool.evaluate(part.map((k) => designs[k]!), workspace.slice(start, start + batch));
      part.forEach((k, u) => {
        const evaluation = evaluationFromOutcome(sp, outcomes[u]!);
        evaluations[k] = evaluation;
        newRecords.push(newEvaluationRecord(sp, loaded.settingsHash, keys[k]!, designs[k]!, outcomes[u]!, evaluation));
      });
      options.onProgress?.(Math.min(start + batch, toEvaluate.length), toEvaluate.length);
    }
  }
  designs.forEach((_, k) => {
    evaluations[k] ??= evaluations[designs.findIndex((_, j) => keys[j] === keys[k])]!;
  });
  return { mode, evaluations, newRecords };
}

/** The rescore run: one generation holding every distinct design with its rank; returns its id. */
function writeRescoreRun(
  store: Store,
  loaded: LoadedStudy,
  sp: StudyProblem,
  oldRun: RunRow,
  scored: ScoredDesigns,
  members: readonly { key: string; rank: number; crowding: number }[],
  feasibleCount: number,
  workers: number,
  options: RescoreOptions,
): number {
  const { mode, newRecords } = scored;
  const studyId = store.upsertStudy({ name: loaded.study.name, architecture: loaded.study.architecture, fileText: loaded.text, settingsHash: loaded.settingsHash });
  store.ensureColumns(sp.columns);
  const runId = store.createRun({
    studyId,
    kind: 'rescore',
    parentRunId: oldRun.id,
    seed: oldRun.seed,
    settings: { from: oldRun.id, mode, ...(options.designs === 'front' ? { designs: 'front' } : {}) },
    workers,
  });
  store.writeGeneration({
    runId,
    generation: 0,
    newEvaluations: newRecords,
    members: [...members],
    stats: {
      evaluations: members.length,
      newEvaluations: newRecords.length,
      failed: newRecords.filter((r) => r.error !== null).length,
      feasibleCount,
      hypervolume: null,
      elapsedSeconds: 0,
      evaluationsPerSecond: 0,
    },
    optimizerState: null,
  });
  store.markRun(runId, 'finished', `rescore of run ${oldRun.id} (${mode})`);
  return runId;
}

/** The new front, the designs that left and joined it, and what each constraint does to the fronts. Closes the store. */
function frontChanges(
  store: Store,
  loaded: LoadedStudy,
  old: OldRun,
  stored: readonly StoredEvaluation[],
  newFrontKeys: readonly string[],
): Pick<RescoreResult, 'front' | 'left' | 'joined' | 'constraints'> {
  const sp = old.problem;
  const oldMinimised = (e: StoredEvaluation): number[] =>
    old.loaded.study.objectives.map((o) => {
      const v = e.metrics[o.metric] ?? Number.NaN;
      return o.sense === 'max' ? -v : v;
    });
  const oldFront = nonDominated(stored.filter((e) => e.feasible && e.error === null), oldMinimised);
  const oldFrontKeys = oldFront.map((e) => evaluationKey(loaded.settingsHash, designFromValues(sp.variables, e.variables, true)));
  const found = store.findEvaluations([...newFrontKeys, ...oldFrontKeys]);
  store.close();
  const newFront = newFrontKeys.map((k) => found.get(k)).filter((e): e is StoredEvaluation => e !== undefined).sort((a, b) => a.id - b.id);
  const oldFrontNow = oldFrontKeys.map((k) => found.get(k)).filter((e): e is StoredEvaluation => e !== undefined);
  const oldIds = new Set(oldFront.map((e) => designIdentity(e.variables)));
  const newIds = new Set(newFront.map((e) => designIdentity(e.variables)));
  const constraints = sp.constraints.map((c) => ({
    name: c.name,
    violatedByOldFront: oldFrontNow.filter((e) => (e.constraints[c.name] ?? 0) < 0).length,
    activeOnNewFront: newFront.filter((e) => {
      const m = e.constraints[c.name];
      // Strictly inside 1 % of the bound: a metric sitting exactly on its best possible value (a task coverage of 1) is not a limit.
      return m !== undefined && m !== null && m > 0 && m < 0.01;
    }).length,
  }));
  return {
    front: newFront,
    left: oldFront.filter((e) => !newIds.has(designIdentity(e.variables))),
    joined: newFront.filter((e) => !oldIds.has(designIdentity(e.variables))),
    constraints,
  };
}
