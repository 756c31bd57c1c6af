/** Evaluate a batch of designs through the store's cache and the worker pool. */
import type { Evaluation } from '../optimizer/types.js';
import type { EvaluationPool } from '../pool/pool.js';
import type { NewEvaluation, Store } from '../store/store.js';
import type { LoadedStudy } from '../study/parse.js';
import { evaluationFromOutcome, evaluationFromStored, evaluationKey, newEvaluationRecord, type StudyProblem } from './problem.js';

export interface BatchResult {
  /** One per design, in order. */
  readonly evaluations: Evaluation[];
  readonly keys: string[];
  /** Rows to insert: designs not found in the store, each once. */
  readonly newRecords: NewEvaluation[];
  /** Failed evaluations among the new ones. */
  readonly failed: number;
}

/** A batch handed to the pool: its result, or abandon it (a run that stops drops the work in flight). */
export interface StartedBatch {
  readonly result: Promise<BatchResult>;
  /**
   * Main-thread work while the workers evaluate (e.g. writing the previous batch); when it throws,
   * the batch is waited for before the error goes on.
   */
  during(work: () => void): Promise<void>;
  abandon(): void;
}

/**
 * Looks the designs up in the store's cache and hands the others to the pool at once (the caller's
 * main-thread work may follow while the workers evaluate).
 * @param pending evaluations made but not yet written to the store (served like cached ones)
 */
export function startBatch(
  store: Store,
  pool: EvaluationPool,
  sp: StudyProblem,
  loaded: LoadedStudy,
  designs: readonly Float64Array[],
  pending?: ReadonlyMap<string, NewEvaluation>,
): StartedBatch {
  const keys = designs.map((d) => evaluationKey(loaded.settingsHash, d));
  const cached = store.findEvaluations(keys);
  if (pending) {
    for (const key of keys) {
      const record = pending.get(key);
      if (record && !cached.has(key)) cached.set(key, { ...record, id: 0, firstRunId: 0 });
    }
  }
  const evaluations: Evaluation[] = new Array<Evaluation>(designs.length);
  const firstIndexOfKey = new Map<string, number>();
  const unique: number[] = [];
  const repeats: number[] = [];
  designs.forEach((_, k) => {
    const key = keys[k]!;
    const hit = cached.get(key);
    if (hit) {
      evaluations[k] = evaluationFromStored(sp, hit);
    } else if (firstIndexOfKey.has(key)) {
      repeats.push(k); // the same design twice in one batch is evaluated once
    } else {
      firstIndexOfKey.set(key, k);
      unique.push(k);
    }
  });
  const evaluating = pool.evaluate(unique.map((k) => designs[k]!));
  const result = evaluating.then((outcomes) => {
    const newRecords: NewEvaluation[] = [];
    let failed = 0;
    unique.forEach((k, u) => {
      const evaluation = evaluationFromOutcome(sp, outcomes[u]!);
      evaluations[k] = evaluation;
      if (evaluation.failed !== undefined) failed++;
      newRecords.push(newEvaluationRecord(sp, loaded.settingsHash, keys[k]!, designs[k]!, outcomes[u]!, evaluation));
    });
    for (const k of repeats) evaluations[k] = evaluations[firstIndexOfKey.get(keys[k]!)!]!;
    return { evaluations, keys, newRecords, failed };
  });
  return {
    result,
    async during(work) {
      try {
        work();
      } catch (error) {
        await result.catch(() => undefined);
        throw error;
      }
    },
    abandon: () => void result.catch(() => undefined),
  };
}

/**
 * Write-behind of one batch's store write: it is held until the workers have the next batch (pass
 * `records` to startBatch, then `flush` to its `during`), so the main thread writes while the threads evaluate.
 * The write itself is made only then (`complete`: the work of finishing a generation is done off the
 * workers' critical path too). The records held are served from memory until then, so the database
 * ends up exactly as if every batch had been written before the next was evaluated. `flush` before
 * reading the store or ending.
 */
export class WriteBehind<W> {
  private held: (() => W) | null = null;
  /** New evaluations of the held write, by key (for the cache lookup of the next batch). */
  records = new Map<string, NewEvaluation>();

  constructor(private readonly write: (held: W) => void) {}

  /** Holds a write with these new evaluations, made by `complete` when flushed (the previous one must have been flushed). */
  hold(newEvaluations: readonly NewEvaluation[], complete: () => W): void {
    if (this.held) throw new Error('WriteBehind.hold: the previous write was not flushed');
    this.held = complete;
    for (const record of newEvaluations) this.records.set(record.key, record);
  }

  readonly flush = (): void => {
    if (!this.held) return;
    const complete = this.held;
    this.held = null;
    const write = complete();
    this.records = new Map();
    this.write(write);
  };
}
