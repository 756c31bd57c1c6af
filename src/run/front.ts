/**
 * Pareto front of a stored run: the feasible, non-dominated designs among the optimizer's archive and every design that was a
 * member of any generation of the run (all populations of an optimization, every chunk of a sweep),
 * by the objectives of the run's study. Taking every generation, not only the last population, keeps
 * good designs that the population's fixed size pushed out.
 */
import { LoopsmithUserError } from '../core/errors.js';
import { Store, type RunRow, type StoredEvaluation } from '../store/store.js';
import { parseStudyText } from '../study/parse.js';
import { evaluationKey } from './problem.js';
import type { ObjectiveSpec, Study } from '../study/types.js';

export class FrontError extends LoopsmithUserError {
  override readonly name = 'FrontError';
}

export interface FrontResult {
  readonly runId: number;
  readonly kind: string;
  readonly objectives: readonly ObjectiveSpec[];
  readonly designs: readonly StoredEvaluation[];
  /** The run's study (architecture, units of variables and metrics). */
  readonly study: Study;
  /** The run as stored. */
  readonly run?: RunRow;
  /** Why this run was shown when none was named. */
  readonly reason?: string;
}

function dominates(a: readonly number[], b: readonly number[]): boolean {
  let better = false;
  for (let k = 0; k < a.length; k++) {
    if (a[k]! > b[k]!) return false;
    if (a[k]! < b[k]!) better = true;
  }
  return better;
}

/**
 * Non-dominated subset (objectives in minimisation form), in input order. Points are visited in
 * lexicographic order of their objectives, so a point can only be dominated by one already kept:
 * O(n · front size) instead of O(n²).
 */
export function nonDominated<T>(items: readonly T[], objectives: (item: T) => number[]): T[] {
  const values = items.map(objectives);
  const order = items.map((_, i) => i).sort((i, j) => {
    const a = values[i]!;
    const b = values[j]!;
    for (let k = 0; k < a.length; k++) if (a[k] !== b[k]) return a[k]! - b[k]!;
    return i - j;
  });
  const kept: number[] = [];
  for (const i of order) {
    if (values[i]!.some((v) => Number.isNaN(v))) continue;
    if (!kept.some((j) => dominates(values[j]!, values[i]!))) kept.push(i);
  }
  return kept.sort((a, b) => a - b).map((i) => items[i]!);
}

/**
 * The optimizer's archive of an optimization run (every feasible design it was told that no other
 * told design dominates, see docs/optimizer.md), looked up in the store by evaluation key. It holds
 * offspring that the population's fixed size never let in, and the designs of the final local
 * refinement.
 */
function archiveEvaluations(store: Store, optimizerState: string | null, settingsHash: string): StoredEvaluation[] {
  if (optimizerState === null) return [];
  const state = JSON.parse(optimizerState) as { nsga2?: { archive?: { members?: { design: number[] }[] } } };
  const members = state.nsga2?.archive?.members ?? [];
  if (members.length === 0) return [];
  const keys = members.map((m) => evaluationKey(settingsHash, Float64Array.from(m.design)));
  const found = store.findEvaluations(keys);
  return keys.map((k) => found.get(k)).filter((e): e is StoredEvaluation => e !== undefined && e.feasible && e.error === null);
}

/**
 * The run a command shows when none is named: the latest finished run; when none has finished, the
 * one with the most generations stored (the latest of those). A run that has just started and holds
 * nothing is never preferred over one with results.
 */
export function chooseDefaultRun(runs: readonly RunRow[]): { run: RunRow; reason: string } | undefined {
  const candidates = runs.filter((r) => r.kind === 'optimize' || r.kind === 'sweep' || r.kind === 'rescore');
  const finished = candidates.filter((r) => r.status === 'finished');
  const latestFinished = finished.at(-1);
  if (latestFinished) {
    const newer = candidates.filter((r) => r.id > latestFinished.id).length;
    return { run: latestFinished, reason: `the latest finished run${newer > 0 ? ` (${newer} newer run(s) not finished)` : ''}` };
  }
  let best: RunRow | undefined;
  for (const r of candidates) if (!best || r.generationsDone >= best.generationsDone) best = r;
  return best ? { run: best, reason: 'no run has finished; this one has the most generations stored' } : undefined;
}

export function runFront(dbPath: string, runId?: number): FrontResult {
  const store = Store.open(dbPath);
  try {
    const chosen = runId !== undefined ? undefined : chooseDefaultRun(store.listRuns());
    const run = runId !== undefined ? store.getRun(runId) : chosen?.run;
    if (!run) throw new FrontError(runId !== undefined ? `${dbPath}: no run ${runId} (see: loopsmith runs ${dbPath})` : `${dbPath}: no optimization or sweep run yet`);
    const studyRow = store.getStudy(run.studyId)!;
    const { study } = parseStudyText(studyRow.fileText, `${dbPath} (study of run ${run.id})`);
    const last = store.lastGeneration(run.id);
    const about = { run, ...(chosen ? { reason: chosen.reason } : {}) };
    if (last === undefined) return { runId: run.id, kind: run.kind, objectives: study.objectives, designs: [], study, ...about };
    const generations = Array.from({ length: last + 1 }, (_, g) => g);
    const byId = new Map<number, StoredEvaluation>();
    let settingsHash: string | undefined;
    for (const g of generations) {
      for (const m of store.generationMembers(run.id, g)) {
        settingsHash ??= m.settingsHash;
        if (m.feasible && m.error === null) byId.set(m.id, m);
      }
    }
    if (settingsHash !== undefined) for (const m of archiveEvaluations(store, run.optimizerState, settingsHash)) byId.set(m.id, m);
    const minimised = (e: StoredEvaluation): number[] =>
      study.objectives.map((o) => {
        const v = e.metrics[o.metric] ?? Number.NaN;
        return o.sense === 'max' ? -v : v;
      });
    const designs = nonDominated([...byId.values()], minimised).sort((a, b) => a.id - b.id);
    return { runId: run.id, kind: run.kind, objectives: study.objectives, designs, study, ...about };
  } finally {
    store.close();
  }
}
