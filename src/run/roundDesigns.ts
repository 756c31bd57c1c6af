/**
 * Buildable numbers: the selected stored designs with every length design variable snapped to a
 * step (e.g. 0.5 mm), re-evaluated under the run's own study through the store's cache and the worker
 * pool, and stored as an `evaluate` run linked to the source run (so the store holds the rounded
 * designs as ordinary evaluations with ids, and `export --ids` or `query` reach them). Reports, per
 * design, what moved: variables, objectives, feasibility, and constraints that broke.
 *
 * A snapped value stays inside the variable's bounds: the nearest multiple of the step that lies
 * within them (the bound itself when no multiple does). Angles and choices are left as they are.
 */
import { designFromValues, variableKind } from '../mechanics/designSpace.js';
import { LoopsmithUserError } from '../core/errors.js';
import { isFeasible } from '../optimizer/types.js';
import { EvaluationPool, type PoolOptions } from '../pool/pool.js';
import { Store, type StoredEvaluation } from '../store/store.js';
import { parseStudyText } from '../study/parse.js';
import { startBatch } from './batch.js';
import { studyProblem } from './problem.js';

export class RoundingError extends LoopsmithUserError {
  override readonly name = 'RoundingError';
}

export interface RoundedDesign {
  readonly sourceId: number;
  /** Evaluation id of the rounded design in the store. */
  readonly roundedId: number;
  readonly changedVariables: readonly { name: string; from: number; to: number }[];
  readonly objectives: readonly { metric: string; sense: 'min' | 'max'; from: number | null; to: number | null }[];
  readonly feasibleBefore: boolean;
  readonly feasibleAfter: boolean;
  /** Constraints that held before and are violated after rounding, with the new margin. */
  readonly brokenConstraints: readonly { name: string; margin: number }[];
}

export interface RoundingResult {
  readonly runId: number;
  readonly sourceRunId: number;
  /** Step in metres. */
  readonly step: number;
  readonly designs: readonly RoundedDesign[];
}

/** The nearest multiple of `step` within [min, max] (the nearer bound when none lies inside). */
export function snapToStep(value: number, step: number, min: number, max: number): number {
  let snapped = Math.round(value / step) * step;
  if (snapped < min) snapped = Math.ceil(min / step - 1e-9) * step;
  if (snapped > max) snapped = Math.floor(max / step + 1e-9) * step;
  if (snapped < min || snapped > max) snapped = Math.abs(value - min) <= Math.abs(value - max) ? min : max;
  // Strip binary noise (0.1 + 0.2 style) so that stored values read as the step's decimals.
  return Number(snapped.toPrecision(12));
}

export interface RoundingOptions extends PoolOptions {
  readonly dbPath: string;
  /** Step in metres (> 0). */
  readonly step: number;
  /** The stored designs to round (all from the same run). */
  readonly designs: readonly StoredEvaluation[];
  readonly sourceRunId: number;
}

export async function roundAndEvaluate(options: RoundingOptions): Promise<RoundingResult> {
  if (!(options.step > 0) || !Number.isFinite(options.step)) throw new RoundingError(`--round: the step must be a positive length, got ${options.step} m`);
  const store = Store.open(options.dbPath);
  let pool: EvaluationPool | undefined;
  try {
    const run = store.getRun(options.sourceRunId);
    if (!run) throw new RoundingError(`${options.dbPath}: no run ${options.sourceRunId}`);
    const studyRow = store.getStudy(run.studyId)!;
    const loaded = parseStudyText(studyRow.fileText, `${options.dbPath} (study of run ${run.id})`);
    const sp = studyProblem(loaded.study);
    const rounded = options.designs.map((d) => {
      const values: Record<string, number | string> = { ...d.variables };
      const changed: { name: string; from: number; to: number }[] = [];
      for (const v of sp.variables) {
        const value = values[v.name];
        if (v.kind !== 'real' || typeof value !== 'number' || variableKind(loaded.study, v.name) !== 'length') continue;
        const snapped = snapToStep(value, options.step, v.min, v.max);
        if (snapped !== value) changed.push({ name: v.name, from: value, to: snapped });
        values[v.name] = snapped;
      }
      return { design: designFromValues(sp.variables, values, true), changed };
    });
    pool = new EvaluationPool(loaded.study, sp.variables.length, sp.constraints.length, options);
    const designs = rounded.map((r) => r.design);
    const { evaluations, keys, newRecords, failed } = await startBatch(store, pool, sp, loaded, designs).result;
    store.ensureColumns(sp.columns);
    const runId = store.createRun({ studyId: run.studyId, kind: 'evaluate', parentRunId: run.id, seed: run.seed, settings: { rounding: options.step, from: run.id }, workers: pool.workers });
    const seen = new Set<string>();
    const members = keys
      .map((key, k) => ({ key, rank: isFeasible(evaluations[k]!) ? 0 : 2, crowding: 0 }))
      .filter((m) => (seen.has(m.key) ? false : (seen.add(m.key), true)));
    store.writeGeneration({
      runId,
      generation: 0,
      newEvaluations: newRecords,
      members,
      stats: { evaluations: members.length, newEvaluations: newRecords.length, failed, feasibleCount: members.filter((m) => m.rank === 0).length, hypervolume: null, elapsedSeconds: 0, evaluationsPerSecond: 0 },
      optimizerState: null,
    });
    store.markRun(runId, 'finished', `${options.designs.length} designs of run ${run.id} with lengths rounded to ${options.step} m`);
    const stored = store.findEvaluations(keys);
    const result = options.designs.map((source, k): RoundedDesign => {
      const after = stored.get(keys[k]!)!;
      const margins = (e: StoredEvaluation, name: string): number | null => e.constraints[name] ?? null;
      return {
        sourceId: source.id,
        roundedId: after.id,
        changedVariables: rounded[k]!.changed,
        objectives: loaded.study.objectives.map((o) => ({ metric: o.metric, sense: o.sense, from: source.metrics[o.metric] ?? null, to: after.metrics[o.metric] ?? null })),
        feasibleBefore: source.feasible && source.error === null,
        feasibleAfter: after.feasible && after.error === null,
        brokenConstraints: sp.constraints
          .map((c) => ({ name: c.name, before: margins(source, c.name), after: margins(after, c.name) }))
          .filter((c) => c.before !== null && c.before >= 0 && c.after !== null && c.after < 0)
          .map((c) => ({ name: c.name, margin: c.after! })),
      };
    });
    return { runId, sourceRunId: run.id, step: options.step, designs: result };
  } finally {
    await pool?.close();
    store.close();
  }
}
