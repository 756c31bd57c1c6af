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
