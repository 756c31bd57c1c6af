/**
 * Pool of worker threads (piscina) that evaluates batches of designs. A batch lies in shared memory
 * and every thread takes designs from it one at a time until none are left (self-scheduling at the
 * finest grain: the threads finish within about one design of each other, whatever each design
 * costs, with one message each way per thread and batch). Outcomes come back in design order
 * whatever the number of threads, so runs are reproducible. A design that ends its worker thread is
 * reported as failed; the thread is replaced and the rest of the batch is evaluated normally.
 */
import { existsSync } from 'node:fs';
import { availableParallelism } from 'node:os';
import { fileURLToPath } from 'node:url';
import { Piscina } from 'piscina';
import { METRICS } from '../mechanics/metrics.js';
import type { Study } from '../study/types.js';
import { DESIGN_DONE, DESIGN_RUNNING, DESIGN_THREW, DESIGN_WAITING, type EvaluationTask, type EvaluationTaskResult, type SharedBatch, type WorkerSetup } from './worker.js';

export interface PoolOptions {
  /** Worker threads; default: the machine's available parallelism. */
  readonly workers?: number;
  /** Designs a thread takes from a batch at a time (default 1: the finest balance; the messages do not grow with it). */
  readonly batchSize?: number;
  /** Module exporting `createEvaluator(study)` to use instead of the built-in engine (tests, other models). */
  readonly evaluatorModule?: string;
}

export interface DesignOutcome {
  readonly metrics: Float64Array;
  readonly margins: Float64Array;
  readonly violation: number;
  readonly error: string | null;
  readonly seconds: number;
}

export function defaultWorkerCount(): number {
  return Math.max(1, availableParallelism());
}

/**
 * The threads' entry file: workerEntry.cjs beside the compiled worker.js, which it imports (see
 * there why the threads do not load the ES module directly).
 */
function workerFile(): string {
  // Beside this file when it runs compiled; from TypeScript sources (tests), the build's (npm run build).
  for (const folder of [new URL('./', import.meta.url), new URL('../../dist/pool/', import.meta.url)]) {
    const entry = fileURLToPath(new URL('workerEntry.cjs', folder));
    if (existsSync(fileURLToPath(new URL('worker.js', folder))) && existsSync(entry)) return entry;
  }
  throw new Error('compiled worker not found: run "npm run build" first');
}

/** A typed array of `length` elements in shared memory, filled with `fill`. */
function shared<T extends Int32Array | Float64Array>(Kind: { new (buffer: SharedArrayBuffer): T; BYTES_PER_ELEMENT: number }, length: number, fill: number): T {
  const array = new Kind(new SharedArrayBuffer(Math.max(1, length) * Kind.BYTES_PER_ELEMENT));
  array.fill(fill);
  return array;
}

/** How the designs of a batch ended besides a normal outcome: the error of those that threw, of those that ended their thread. */
interface BatchFailures {
  readonly threw: Map<number, string>;
  readonly crashed: Map<number, string>;
}

export class EvaluationPool {
  readonly workers: number;
  private readonly piscina: Piscina;
  private readonly options: PoolOptions;
  private nextTaskId = 0;

  /**
   * Starts the worker threads at once (they load their modules while the caller goes on); `study` is
   * the parsed study, which reaches each worker once, as a structured clone.
   */
  constructor(
    study: Study,
    private readonly variableCount: number,
    private readonly constraintCount: number,
    options: PoolOptions = {},
  ) {
    this.options = options;
    this.workers = Math.max(1, Math.floor(options.workers ?? defaultWorkerCount()));
    // The study reaches each worker once, already parsed (no schema compilation or parsing there).
    const setup: WorkerSetup = {
      study,
      ...(options.evaluatorModule ? { evaluatorModule: options.evaluatorModule } : {}),
    };
    this.piscina = new Piscina({
      filename: workerFile(),
      minThreads: this.workers,
      maxThreads: this.workers,
      idleTimeout: 60_000,
      workerData: setup,
      // One task per thread and batch: a thread that starts late takes the task the first left.
      concurrentTasksPerWorker: 1,
    });
  }

  /**
   * Evaluate designs; outcomes in the same order. `workspace` optionally gives, per design, the four
   * stored workspace metrics to reuse (null = full evaluation).
   */
  async evaluate(designs: readonly Float64Array[], workspace?: readonly (Float64Array | null)[]): Promise<DesignOutcome[]> {
    if (designs.length === 0) return [];
    const batch = this.sharedBatch(designs, workspace);
    const failures: BatchFailures = { threw: new Map(), crashed: new Map() };
    let pending = designs.map((_, k) => k);
    while (pending.length > 0) pending = await this.round(batch, pending, failures);
    return designs.map((_, k) => this.outcome(batch, k, failures));
  }

  /** The designs and their outcome arrays in shared memory (outcomes NaN until written). */
  private sharedBatch(designs: readonly Float64Array[], workspace?: readonly (Float64Array | null)[]): SharedBatch {
    const n = designs.length;
    const nv = this.variableCount;
    const batch: SharedBatch = {
      control: shared(Int32Array, 2, 0),
      order: shared(Int32Array, n, 0),
      state: shared(Int32Array, n, DESIGN_WAITING),
      owner: shared(Int32Array, n, -1),
      designs: shared(Float64Array, n * nv, 0),
      ...(workspace ? { workspace: shared(Float64Array, n * 4, Number.NaN) } : {}),
      metrics: shared(Float64Array, n * METRICS.length, Number.NaN),
      margins: shared(Float64Array, n * this.constraintCount, Number.NaN),
      violation: shared(Float64Array, n, Number.NaN),
      seconds: shared(Float64Array, n, 0),
    };
    designs.forEach((design, k) => {
      batch.designs.set(design, k * nv);
      const reuse = workspace?.[k];
      if (reuse) batch.workspace!.set(reuse, k * 4);
    });
    return batch;
  }

  /**
   * One round: the threads take the `pending` designs until none are left. Returns the designs still
   * to evaluate: none, unless a thread ended; then the design it was evaluating is marked crashed,
   * and those it never reached or whose error text went down with it go to the next round.
   */
  private async round(batch: SharedBatch, pending: readonly number[], failures: BatchFailures): Promise<number[]> {
    batch.order.set(pending);
    Atomics.store(batch.control, 0, 0);
    Atomics.store(batch.control, 1, pending.length);
    const claim = Math.max(1, Math.floor(this.options.batchSize ?? 1));
    const ids = Array.from({ length: Math.min(this.workers, Math.ceil(pending.length / claim)) }, () => this.nextTaskId++);
    const settled = await Promise.allSettled(ids.map((id) => this.piscina.run({ batch, id, claim } satisfies EvaluationTask) as Promise<EvaluationTaskResult>));
    const ended = new Map<number, unknown>();
    settled.forEach((result, i) => {
      if (result.status === 'fulfilled') for (const [k, text] of result.value.errors) failures.threw.set(k, text);
      else ended.set(ids[i]!, result.reason);
    });
    const next: number[] = [];
    for (const k of pending) {
      const state = Atomics.load(batch.state, k);
      const reason = ended.get(Atomics.load(batch.owner, k));
      if (state === DESIGN_RUNNING && reason !== undefined) failures.crashed.set(k, crashText(reason));
      else if (state !== DESIGN_DONE && !(state === DESIGN_THREW && reason === undefined)) next.push(k);
    }
    if (next.length === pending.length) {
      // No thread got anywhere (e.g. the evaluator cannot be made): every design fails with the reason.
      const reason = crashText(ended.values().next().value);
      for (const k of next) failures.crashed.set(k, reason);
      return [];
    }
    for (const k of next) Atomics.store(batch.state, k, DESIGN_WAITING);
    return next;
  }

  private outcome(batch: SharedBatch, k: number, failures: BatchFailures): DesignOutcome {
    const nm = METRICS.length;
    const nc = this.constraintCount;
    const crash = failures.crashed.get(k);
    if (crash !== undefined) {
      return { metrics: new Float64Array(nm).fill(Number.NaN), margins: new Float64Array(nc).fill(Number.NaN), violation: Number.NaN, error: crash, seconds: 0 };
    }
    return {
      metrics: batch.metrics.slice(k * nm, (k + 1) * nm),
      margins: batch.margins.slice(k * nc, (k + 1) * nc),
      violation: batch.violation[k]!,
      error: failures.threw.get(k) ?? null,
      seconds: batch.seconds[k]!,
    };
  }

  private closing: Promise<void> | null = null;

  /** Ends the worker threads (once, however often it is called). */
  close(): Promise<void> {
    this.closing ??= this.piscina.destroy();
    return this.closing;
  }
}

function crashText(reason: unknown): string {
  return `worker thread crashed: ${reason instanceof Error ? reason.message : String(reason)}`;
}
