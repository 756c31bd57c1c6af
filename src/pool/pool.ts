/**
 * Pool of worker threads (piscina) that evaluates batches of designs. Results come back in design
 * order whatever the number of threads, so runs are reproducible. A design that crashes its worker
 * thread is isolated by re-running its batch one design at a time, and reported as failed.
 */
import { existsSync } from 'node:fs';
import { availableParallelism } from 'node:os';
import { fileURLToPath } from 'node:url';
import { Piscina } from 'piscina';
import { METRICS } from '../mechanics/metrics.js';
import type { Study } from '../study/types.js';
import type { EvaluationTask, EvaluationTaskResult, WorkerSetup } from './worker.js';

export interface PoolOptions {
  /** Worker threads; default: the machine's available parallelism. */
  readonly workers?: number;
  /** Designs per task sent to a thread; default: decreasing tasks sized to the pool (taskSizes). */
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

function workerFile(): string {
  const beside = new URL('./worker.js', import.meta.url);
  if (existsSync(fileURLToPath(beside))) return fileURLToPath(beside);
  // Running from TypeScript sources (tests): use the compiled worker (npm run build).
  const compiled = new URL('../../dist/pool/worker.js', import.meta.url);
  if (existsSync(fileURLToPath(compiled))) return fileURLToPath(compiled);
  throw new Error('compiled worker not found: run "npm run build" first');
}

/** Most designs in one task (bounds the message size and the work lost when a thread dies). */
const MAX_TASK_DESIGNS = 256;

/**
 * Designs per task for a batch, in the order the tasks are queued. One worker takes the batch whole
 * (nothing to balance; tasks of at most 256 designs). Several workers take decreasing tasks ("guided self-scheduling",
 * Polychronopoulos & Kuck 1987): each task is 1/(2·workers) of what is left, so the first tasks are
 * large (few messages) and the last ones hold a design or two, and every worker finishes within about
 * one design's time of the others, whatever each design costs.
 */
export function taskSizes(designs: number, workers: number): number[] {
  const sizes: number[] = [];
  const share = workers <= 1 ? 1 : 2 * workers;
  for (let left = designs; left > 0; ) {
    const size = Math.max(1, Math.min(MAX_TASK_DESIGNS, Math.ceil(left / share)));
    sizes.push(size);
    left -= size;
  }
  return sizes;
}

/** Fixed-size tasks (PoolOptions.batchSize). */
function fixedSizes(designs: number, size: number): number[] {
  return Array.from({ length: Math.ceil(designs / size) }, (_, k) => Math.min(size, designs - k * size));
}

export class EvaluationPool {
  readonly workers: number;
  private readonly piscina: Piscina;
  private readonly options: PoolOptions;

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
      // The whole batch is queued at once (unbounded queue); results are collected in order. Each
      // worker holds its next task while it evaluates one, so it never waits for the main thread
      // (which writes the previous generation meanwhile) to hand out work.
      concurrentTasksPerWorker: 2,
    });
  }

  /**
   * Evaluate designs; outcomes in the same order. `workspace` optionally gives, per design, the four
   * stored workspace metrics to reuse (null = full evaluation).
   */
  async evaluate(designs: readonly Float64Array[], workspace?: readonly (Float64Array | null)[]): Promise<DesignOutcome[]> {
    if (designs.length === 0) return [];
    const sizes = this.options.batchSize ? fixedSizes(designs.length, this.options.batchSize) : taskSizes(designs.length, this.workers);
    const chunks: number[][] = [];
    let start = 0;
    for (const size of sizes) {
      chunks.push(Array.from({ length: size }, (_, k) => start + k));
      start += size;
    }
    const results = await Promise.all(chunks.map((chunk) => this.runChunk(chunk, designs, workspace)));
    return results.flat();
  }

  private async runChunk(chunk: readonly number[], designs: readonly Float64Array[], workspace?: readonly (Float64Array | null)[]): Promise<DesignOutcome[]> {
    try {
      return this.unpack(await this.runTask(chunk, designs, workspace), chunk.length);
    } catch (error) {
      if (chunk.length === 1) {
        return [this.crashed(error)];
      }
      // A thread died: evaluate one by one to find the design that kills it.
      const out: DesignOutcome[] = [];
      for (const index of chunk) {
        try {
          out.push(...this.unpack(await this.runTask([index], designs, workspace), 1));
        } catch (inner) {
          out.push(this.crashed(inner));
        }
      }
      return out;
    }
  }

  private crashed(error: unknown): DesignOutcome {
    const reason = error instanceof Error ? error.message : String(error);
    return {
      metrics: new Float64Array(METRICS.length).fill(Number.NaN),
      margins: new Float64Array(this.constraintCount).fill(Number.NaN),
      violation: Number.NaN,
      error: `worker thread crashed: ${reason}`,
      seconds: 0,
    };
  }

  private runTask(chunk: readonly number[], designs: readonly Float64Array[], workspace?: readonly (Float64Array | null)[]): Promise<EvaluationTaskResult> {
    const flat = new Float64Array(chunk.length * this.variableCount);
    chunk.forEach((index, k) => flat.set(designs[index]!, k * this.variableCount));
    const transfer: ArrayBuffer[] = [flat.buffer as ArrayBuffer];
    let reuse: Float64Array | undefined;
    if (workspace) {
      reuse = new Float64Array(chunk.length * 4).fill(Number.NaN);
      chunk.forEach((index, k) => {
        const w = workspace[index];
        if (w) reuse!.set(w, k * 4);
      });
      transfer.push(reuse.buffer as ArrayBuffer);
    }
    const task: EvaluationTask = {
      designs: flat,
      count: chunk.length,
      ...(reuse ? { workspace: reuse } : {}),
    };
    return this.piscina.run(task, { transferList: transfer }) as Promise<EvaluationTaskResult>;
  }

  private unpack(result: EvaluationTaskResult, count: number): DesignOutcome[] {
    const nm = METRICS.length;
    const nc = this.constraintCount;
    const out: DesignOutcome[] = [];
    for (let k = 0; k < count; k++) {
      out.push({
        metrics: result.metrics.slice(k * nm, (k + 1) * nm),
        margins: result.margins.slice(k * nc, (k + 1) * nc),
        violation: result.violation[k]!,
        error: result.errors[k] ?? null,
        seconds: result.seconds[k]!,
      });
    }
    return out;
  }

  private closing: Promise<void> | null = null;

  /** Ends the worker threads (once, however often it is called). */
  close(): Promise<void> {
    this.closing ??= this.piscina.destroy();
    return this.closing;
  }
}
