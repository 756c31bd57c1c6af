/**
 * Worker-thread side of the evaluation pool. The parsed study reaches the worker once, as its
 * workerData (WorkerSetup); each task carries a batch of design vectors (flat). The worker keeps
 * one Evaluator, so its buffers are reused across every design it ever sees. A design whose
 * evaluation throws is returned with the error text.
 */
import { workerData } from 'node:worker_threads';
import { Evaluator } from '../mechanics/evaluate.js';
import { METRICS } from '../mechanics/metrics.js';
import type { Study } from '../study/types.js';

/** What every worker receives once, when it starts. */
export interface WorkerSetup {
  /** The parsed study (structured clone of the main thread's). */
  readonly study: Study;
  /** Optional module (file URL) exporting `createEvaluator(study)`; default: the built-in engine. */
  readonly evaluatorModule?: string;
}

export interface EvaluationTask {
  /** count × variableCount design values, row-major. */
  readonly designs: Float64Array;
  readonly count: number;
  /** Optional: count × 4 stored workspace metrics per design (see Evaluator.evaluateWithWorkspace); a NaN row means a full evaluation. */
  readonly workspace?: Float64Array;
}

export interface EvaluationTaskResult {
  /** count × METRICS.length values. */
  readonly metrics: Float64Array;
  /** count × constraintCount margins. */
  readonly margins: Float64Array;
  readonly violation: Float64Array;
  readonly errors: (string | null)[];
  /** Wall time per design, s. */
  readonly seconds: Float64Array;
}

/** What an evaluator module provides (the built-in one is the five-bar Evaluator). */
export interface DesignEvaluatorLike {
  readonly variables: readonly unknown[];
  readonly constraints: readonly unknown[];
  evaluate(design: Float64Array): { metrics: Float64Array; margins: Float64Array; violation: number };
  evaluateWithWorkspace?(design: Float64Array, workspace: Float64Array): { metrics: Float64Array; margins: Float64Array; violation: number };
}

/** The worker's one evaluator, made on its first task (two tasks may be in hand at once: made once). */
let evaluator: Promise<DesignEvaluatorLike> | null = null;

async function makeEvaluator(): Promise<DesignEvaluatorLike> {
  const setup = workerData as WorkerSetup;
  if (!setup.evaluatorModule) return new Evaluator(setup.study);
  const mod = (await import(setup.evaluatorModule)) as { createEvaluator(study: unknown): DesignEvaluatorLike };
  return mod.createEvaluator(setup.study);
}

function evaluatorOfWorker(): Promise<DesignEvaluatorLike> {
  evaluator ??= makeEvaluator();
  return evaluator;
}

/** A turn of the event loop (a macrotask). */
function nextTurn(): Promise<void> {
  return new Promise((resolve) => setImmediate(resolve));
}

export default async function evaluateBatch(task: EvaluationTask): Promise<EvaluationTaskResult> {
  // A worker holds up to two tasks (the pool's next one arrives while it evaluates): each starts on its
  // own turn of the event loop, so the result of the first goes back before the second is evaluated,
  // and the pool can hand out the remaining work by who is free.
  await nextTurn();
  const evaluator = await evaluatorOfWorker();
  const nv = evaluator.variables.length;
  const nm = METRICS.length;
  const nc = evaluator.constraints.length;
  const metrics = new Float64Array(task.count * nm).fill(Number.NaN);
  const margins = new Float64Array(task.count * nc).fill(Number.NaN);
  const violation = new Float64Array(task.count).fill(Number.NaN);
  const seconds = new Float64Array(task.count);
  const errors: (string | null)[] = new Array<string | null>(task.count).fill(null);
  for (let k = 0; k < task.count; k++) {
    const design = task.designs.subarray(k * nv, (k + 1) * nv);
    const start = performance.now();
    try {
      const reuse = task.workspace?.subarray(k * 4, (k + 1) * 4);
      const result =
        reuse && !Number.isNaN(reuse[0]!) && evaluator.evaluateWithWorkspace
          ? evaluator.evaluateWithWorkspace(design, reuse)
          : evaluator.evaluate(design);
      metrics.set(result.metrics, k * nm);
      margins.set(result.margins, k * nc);
      violation[k] = result.violation;
    } catch (error) {
      errors[k] = error instanceof Error ? `${error.name}: ${error.message}` : String(error);
    }
    seconds[k] = (performance.now() - start) / 1000;
  }
  return { metrics, margins, violation, errors, seconds };
}
