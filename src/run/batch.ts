/** Evaluate a batch of designs through the store's cache and the worker pool. */
import type { Evaluation } from '../optimizer/types.js';
import type { EvaluationPool } from '../pool/pool.js';
import type { GenerationWrite, NewEvaluation, Store } from '../store/store.js';
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

/**
 * @param pending evaluations made but not yet written to the store (served like cached ones)
 * @param whileEvaluating work for the main thread while the workers evaluate (e.g. writing the
 *   previous generation); called once, after the batch has been handed to the pool
 */
export async function evaluateWithCache(
  store: Store,
  pool: EvaluationPool,
  sp: StudyProblem,
  loaded: LoadedStudy,
  designs: readonly Float64Array[],
  pending?: ReadonlyMap<string, NewEvaluation>,
  whileEvaluating?: () => void,
): Promise<BatchResult> {
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
  try {
    whileEvaluating?.();
  } catch (error) {
    await evaluating.catch(() => undefined);
    throw error;
  }
  const outcomes = await evaluating;
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
}

/**
 * Write-behind of one batch's store write: it is held until the workers have the next batch (pass
 * `records` and `flush` to evaluateWithCache), so the main thread writes while the threads evaluate.
 * The records held are served from memory until then, so the database ends up exactly as if every
 * batch had been written before the next was evaluated. `flush` before reading the store or ending.
 */
export class WriteBehind<W extends Pick<GenerationWrite, 'newEvaluations'>> {
  private held: W | null = null;
  /** New evaluations of the held write, by key (for the cache lookup of the next batch). */
  records = new Map<string, NewEvaluation>();

  constructor(private readonly write: (held: W) => void) {}

  /** Holds a write (the previous one must have been flushed, as evaluateWithCache does). */
  hold(held: W): void {
    if (this.held) throw new Error('WriteBehind.hold: the previous write was not flushed');
    this.held = held;
    for (const record of held.newEvaluations) this.records.set(record.key, record);
  }

  readonly flush = (): void => {
    if (!this.held) return;
    const held = this.held;
    this.held = null;
    this.records = new Map();
    this.write(held);
  };
}
