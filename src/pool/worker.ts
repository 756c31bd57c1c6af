/**
 * Worker-thread side of the evaluation pool. The parsed study reaches the worker once, as its
 * workerData (WorkerSetup). A task asks the worker to help with one batch held in shared memory
 * (SharedBatch): it takes designs from the batch's claim counter until none are left, and writes
 * each outcome into the batch, so the threads of the pool share a batch design by design and finish
 * within about one design of each other, with one message each way per thread and batch. The worker
 * keeps one Evaluator, so its buffers are reused across every design it ever sees. A design whose
 * evaluation throws is reported with the error text.
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

/** State of a design in a SharedBatch. */
export const DESIGN_WAITING = 0;
export const DESIGN_RUNNING = 1;
export const DESIGN_DONE = 2;
/** Its evaluation threw (the text is in the task's result). */
export const DESIGN_THREW = 3;

/** A batch of designs and their outcomes in memory shared by the main thread and the workers. */
export interface SharedBatch {
  /** [0]: next position of `order` to claim (Atomics.add); [1]: positions in `order`. */
  readonly control: Int32Array;
  /** Design indices in the order they are claimed. */
  readonly order: Int32Array;
  /** Per design: DESIGN_WAITING … DESIGN_THREW. */
  readonly state: Int32Array;
  /** Per design: id of the task that claimed it last. */
  readonly owner: Int32Array;
  /** Designs × variables, row-major. */
  readonly designs: Float64Array;
  /** Optional: designs × 4 stored workspace metrics (see Evaluator.evaluateWithWorkspace); a NaN row means a full evaluation. */
  readonly workspace?: Float64Array;
  /** Designs × METRICS.length (NaN until written). */
  readonly metrics: Float64Array;
  /** Designs × constraints (NaN until written). */
  readonly margins: Float64Array;
  readonly violation: Float64Array;
  /** Wall time per design, s. */
  readonly seconds: Float64Array;
}

export interface EvaluationTask {
  readonly batch: SharedBatch;
  /** Distinct id of this task (written to `owner` of each design it claims). */
  readonly id: number;
  /** Designs taken from the counter at a time. */
  readonly claim: number;
}

export interface EvaluationTaskResult {
  /** [design index, error text] of the designs whose evaluation threw. */
  readonly errors: [number, string][];
}

/** What an evaluator module provides (the built-in one is the five-bar Evaluator). */
export interface DesignEvaluatorLike {
  readonly variables: readonly unknown[];
  readonly constraints: readonly unknown[];
  evaluate(design: Float64Array): { metrics: Float64Array; margins: Float64Array; violation: number };
  evaluateWithWorkspace?(design: Float64Array, workspace: Float64Array): { metrics: Float64Array; margins: Float64Array; violation: number };
}

/** The worker's one evaluator, made on its first task. */
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

/** Evaluates design k of the batch into it; the error text when the evaluation throws, else null. */
function evaluateInto(evaluator: DesignEvaluatorLike, batch: SharedBatch, k: number): string | null {
  const nv = evaluator.variables.length;
  const nm = METRICS.length;
  const nc = evaluator.constraints.length;
  const design = batch.designs.slice(k * nv, (k + 1) * nv);
  const start = performance.now();
  let error: string | null = null;
  try {
    const reuse = batch.workspace?.slice(k * 4, (k + 1) * 4);
    const result =
      reuse && !Number.isNaN(reuse[0]!) && evaluator.evaluateWithWorkspace
        ? evaluator.evaluateWithWorkspace(design, reuse)
        : evaluator.evaluate(design);
    batch.metrics.set(result.metrics, k * nm);
    batch.margins.set(result.margins, k * nc);
    batch.violation[k] = result.violation;
  } catch (thrown) {
    error = thrown instanceof Error ? `${thrown.name}: ${thrown.message}` : String(thrown);
  }
  batch.seconds[k] = (performance.now() - start) / 1000;
  return error;
}

export default async function evaluateBatch(task: EvaluationTask): Promise<EvaluationTaskResult> {
  const evaluator = await evaluatorOfWorker();
  const { batch, id, claim } = task;
  const count = batch.control[1]!;
  const errors: [number, string][] = [];
  for (;;) {
    const first = Atomics.add(batch.control, 0, claim);
    if (first >= count) break;
    for (let p = first; p < Math.min(first + claim, count); p++) {
      const k = batch.order[p]!;
      Atomics.store(batch.owner, k, id);
      Atomics.store(batch.state, k, DESIGN_RUNNING);
      const error = evaluateInto(evaluator, batch, k);
      if (error !== null) errors.push([k, error]);
      Atomics.store(batch.state, k, error === null ? DESIGN_DONE : DESIGN_THREW);
    }
  }
  return { errors };
}
