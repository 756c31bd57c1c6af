/**
 * `loopsmith sweep`: a space-filling sample of the design space (Latin hypercube or full grid),
 * evaluated into the same store for design atlases. Written in chunks, one transaction each.
 */
import { LoopsmithUserError } from '../core/errors.js';
import { designLayout, latinHypercube, KIND_CATEGORICAL } from '../optimizer/operators.js';
import { SeededRandom } from '../optimizer/random.js';
import { isFeasible } from '../optimizer/types.js';
import { EvaluationPool, type PoolOptions } from '../pool/pool.js';
import { Store, type GenerationWrite } from '../store/store.js';
import type { LoadedStudy } from '../study/parse.js';
import { startBatch, WriteBehind } from './batch.js';
import { studyProblem, withEvaluatorNamespace } from './problem.js';

export interface SweepOptions extends PoolOptions {
  readonly dbPath: string;
  readonly samples: number;
  readonly method: 'lhs' | 'grid';
  readonly seed?: number;
  /** Designs per stored chunk (default 500). */
  readonly chunkSize?: number;
  readonly onChunk?: (progress: { runId: number; done: number; total: number; feasible: number; evaluationsPerSecond: number; elapsedSeconds: number }) => void;
  readonly shouldStop?: () => boolean;
}

/** Full-factorial grid with about `samples` points: the same number of levels per real variable, every choice of categoricals. */
export function gridDesigns(layout: ReturnType<typeof designLayout>, samples: number): Float64Array[] {
  const realCount = Array.from(layout.kinds).filter((k) => k !== KIND_CATEGORICAL).length;
  let categoricalProduct = 1;
  for (let i = 0; i < layout.count; i++) if (layout.kinds[i] === KIND_CATEGORICAL) categoricalProduct *= layout.choiceCounts[i]!;
  const levels = realCount === 0 ? 1 : Math.max(2, Math.floor(Math.pow(samples / categoricalProduct, 1 / realCount) + 1e-9));
  const axes: number[][] = [];
  for (let i = 0; i < layout.count; i++) {
    if (layout.kinds[i] === KIND_CATEGORICAL) {
      axes.push(Array.from({ length: layout.choiceCounts[i]! }, (_, c) => c));
    } else {
      const lo = layout.lower[i]!;
      const hi = layout.upper[i]!;
      axes.push(Array.from({ length: levels }, (_, l) => lo + ((hi - lo) * l) / (levels - 1)));
    }
  }
  const out: Float64Array[] = [];
  const index = new Array<number>(layout.count).fill(0);
  for (;;) {
    out.push(Float64Array.from(index.map((l, i) => axes[i]![l]!)));
    let i = layout.count - 1;
    while (i >= 0 && ++index[i]! >= axes[i]!.length) index[i--] = 0;
    if (i < 0) break;
  }
  return out;
}

/** A sweep the study cannot give (a user error). */
export class SweepError extends LoopsmithUserError {
  override readonly name = 'SweepError';
}

export async function runSweep(studyIn: LoadedStudy, options: SweepOptions): Promise<{ runId: number; evaluations: number; feasible: number; status: 'finished' | 'stopped' }> {
  const loaded = withEvaluatorNamespace(studyIn, options.evaluatorModule);
  const sp = studyProblem(loaded.study);
  if (sp.variables.length === 0) throw new SweepError(`${loaded.source}: this study has no design variables to sweep (make a geometry parameter a { min, max } range)`);
  const seed = options.seed ?? loaded.study.optimizer.seed;
  const layout = designLayout(sp.problem);
  const designs = options.method === 'grid' ? gridDesigns(layout, options.samples) : latinHypercube(options.samples, layout, new SeededRandom(seed));
  // The workers start first: they load their modules while this thread opens the store.
  const pool = new EvaluationPool(loaded.study, sp.variables.length, sp.constraints.length, options);
  let store: Store;
  try {
    store = Store.open(options.dbPath, { access: 'write' });
  } catch (error) {
    await pool.close();
    throw error;
  }
  try {
    const studyId = store.upsertStudy({ name: loaded.study.name, architecture: loaded.study.architecture, fileText: loaded.text, settingsHash: loaded.settingsHash });
    store.ensureColumns(sp.columns);
    const runId = store.createRun({ studyId, kind: 'sweep', seed, settings: { method: options.method, samples: options.samples, designs: designs.length }, workers: pool.workers });
    const chunk = options.chunkSize ?? 500;
    let feasible = 0;
    const started = performance.now();
    let status: 'finished' | 'stopped' = 'finished';
    const writes = new WriteBehind<GenerationWrite>((held) => store.writeGeneration(held));
    for (let start = 0, generation = 0; start < designs.length; start += chunk, generation++) {
      const part = designs.slice(start, start + chunk);
      const t0 = performance.now();
      const batch = startBatch(store, pool, sp, loaded, part, writes.records);
      await batch.during(writes.flush);
      const result = await batch.result;
      const chunkFeasible = result.evaluations.filter(isFeasible).length;
      feasible += chunkFeasible;
      const elapsed = (performance.now() - t0) / 1000;
      // Written while the workers evaluate the next chunk (or at the end).
      writes.hold(result.newRecords, () => ({
        runId,
        generation,
        newEvaluations: result.newRecords,
        // Sweeps do not rank designs: rank −1 marks "not ranked".
        members: result.keys.map((key) => ({ key, rank: -1, crowding: 0 })),
        stats: {
          evaluations: part.length,
          newEvaluations: result.newRecords.length,
          failed: result.failed,
          feasibleCount: chunkFeasible,
          hypervolume: null,
          elapsedSeconds: elapsed,
          evaluationsPerSecond: elapsed > 0 ? result.newRecords.length / elapsed : 0,
        },
        optimizerState: null,
      }));
      options.onChunk?.({ runId, done: Math.min(start + chunk, designs.length), total: designs.length, feasible, evaluationsPerSecond: elapsed > 0 ? result.newRecords.length / elapsed : 0, elapsedSeconds: (performance.now() - started) / 1000 });
      if (options.shouldStop?.() && start + chunk < designs.length) {
        status = 'stopped';
        break;
      }
    }
    writes.flush();
    store.markRun(runId, status);
    return { runId, evaluations: designs.length, feasible, status };
  } finally {
    await pool.close();
    store.close();
  }
}
