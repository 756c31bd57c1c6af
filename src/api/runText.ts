/**
 * What the run commands report about a run and a store: the summary of a finished or stopped run,
 * its standing (how it ended, hypervolume trajectory, how to continue), why no design was feasible,
 * notes on interrupted runs, and the store helpers the commands need (the latest run's study, removing
 * a store a refused command created). The command line prints these as they are.
 */
import { existsSync, rmSync } from 'node:fs';
import { constraintDefinitions } from '../mechanics/evaluate.js';
import type { RunSummary } from '../run/optimize.js';
import { queryEvaluations } from '../store/query.js';
import { Store, type RunRow, type RunState } from '../store/store.js';
import { parseStudyText } from '../study/parse.js';
import type { Study } from '../study/types.js';
import { table } from './text.js';

/** A duration as "42 s" or "3 min 5 s" ("—" when unknown). */
export function fmtTime(seconds: number): string {
  if (!Number.isFinite(seconds) || seconds < 0) return '—';
  if (seconds < 60) return `${seconds.toFixed(0)} s`;
  return `${Math.floor(seconds / 60)} min ${Math.round(seconds % 60)} s`;
}

/** A relative improvement as a percentage with sensible digits. */
export function formatImprovement(value: number): string {
  if (!Number.isFinite(value)) return 'new front';
  const percent = value * 100;
  return `${percent < 0.01 ? percent.toExponential(1) : percent < 10 ? percent.toFixed(2) : percent.toFixed(1)} %`;
}

/** Recorded population-front hypervolume per generation (one frame for the whole run). */
export function hypervolumeTrajectory(dbPath: string, runId: number): { generation: number; hypervolume: number | null }[] {
  const store = Store.open(dbPath);
  try {
    return store.generationStats(runId).map((s) => ({ generation: s.generation, hypervolume: s.hypervolume }));
  } finally {
    store.close();
  }
}

/** About eight evenly spaced points of a hypervolume trajectory, as text. */
export function trajectoryText(trajectory: readonly { generation: number; hypervolume: number | null }[]): string {
  const known = trajectory.filter((t) => t.hypervolume !== null);
  if (known.length === 0) return '— (no feasible front yet)';
  const step = Math.max(1, Math.ceil((known.length - 1) / 7));
  const picked = known.filter((_, i) => i % step === 0 || i === known.length - 1);
  return picked.map((t) => `g${t.generation} ${t.hypervolume!.toFixed(4)}`).join(' → ');
}

/** How the run ended, its hypervolume trajectory and last-window improvement, and how to continue it. */
export function runStandingLines(
  s: Pick<RunSummary, 'status' | 'endReason' | 'hvImprovement' | 'window' | 'tolerance' | 'stillImproving' | 'totalEvaluations' | 'archiveSize' | 'termination' | 'convergedAt' | 'generationsDone'> & { trajectory: readonly { generation: number; hypervolume: number | null }[] },
  continueWith: (more: string) => string,
): string[] {
  const gain = s.hvImprovement === null ? `not known yet (fewer than ${s.window} generations)` : `${formatImprovement(s.hvImprovement)} over the last ${s.window} generations (tolerance ${formatImprovement(s.tolerance)})`;
  const budget = s.termination.generations !== undefined ? `its generation count (${s.termination.generations + 1} in all)` : `its evaluation cap (${s.termination.maxEvaluations ?? '?'})`;
  const lines: string[] = [];
  if (s.status === 'stopped') lines.push('ended: stopped by the user; run the same command again to resume');
  else if (s.endReason === 'converged') {
    const refined = s.convergedAt !== null && s.convergedAt < s.generationsDone - 1 ? `, then ${s.generationsDone - 1 - s.convergedAt} generations of final local refinement` : '';
    lines.push(`ended: converged — the best front found improved by less than ${formatImprovement(s.tolerance)} over ${s.window} generations at generation ${s.convergedAt ?? '?'}${refined} (${s.totalEvaluations} evaluations)`);
  }
  else lines.push(`ended: budget — reached ${budget} after ${s.totalEvaluations} evaluations`);
  lines.push(`front hypervolume by generation (population front, normalised, reference 1.1): ${trajectoryText(s.trajectory)}`);
  lines.push(`best front found: ${s.archiveSize} designs; its hypervolume improved by ${gain}`);
  if (s.status === 'finished' && s.stillImproving) {
    lines.push(`NOTE: the front was still improving when the run stopped; it is probably not the final answer. Continue with:`);
    lines.push(`  ${continueWith('converge')}`);
  }
  return lines;
}

/** The summary line of a finished or stopped run, with the counts the report uses. */
export function runSummaryText(dbPath: string, summary: RunSummary, frontSize: number, continued: boolean, standing: readonly string[], next: string): string {
  const store = Store.open(dbPath, { access: 'read' });
  try {
    const stats = store.generationStats(summary.runId);
    const asked = stats.reduce((n, s) => n + s.evaluations, 0);
    const computed = stats.reduce((n, s) => n + s.newEvaluations, 0);
    const distinct = queryEvaluations(dbPath, { runId: summary.runId, columns: ['id'] }).rows.length;
    const hv = stats.at(-1)?.hypervolume;
    const verb = summary.status === 'finished' ? 'finished' : 'stopped';
    return (
      `${verb} run ${summary.runId}${summary.resumedFromGeneration !== null ? ` (${continued ? 'continued' : 'resumed'} at generation ${summary.resumedFromGeneration})` : ''}: ` +
      `${summary.generationsDone} generations in ${fmtTime(summary.elapsedSeconds)}; ${asked} designs asked for, ${computed} evaluated (${asked - computed} found in the store), ` +
      `${distinct} distinct designs kept in a population; ${frontSize} on the feasible front` +
      `${hv !== null && hv !== undefined ? `; hypervolume ${hv.toFixed(4)} (normalised, as in the report)` : ''}\n` +
      standing.map((line) => `${line}\n`).join('') +
      `database: ${dbPath}\nnext: ${next}`
    );
  } finally {
    store.close();
  }
}

/** Why a run found no feasible design: the constraints that fail most often, and by how much. */
export function noFeasibleText(dbPath: string, runId: number, study: Study): string {
  const names = constraintDefinitions(study).map((c) => c.name);
  const rows = queryEvaluations(dbPath, { runId, columns: ['id', ...names.map((n) => `c_${n}`).filter((c) => queryEvaluations(dbPath, { limit: 0 }).columns.includes(c))] }).rows;
  const lines = [`loopsmith: warning: run ${runId} found NO feasible design among its ${rows.length} designs.`];
  const failing = names
    .map((name) => {
      const margins = rows.map((r) => r[`c_${name}`]).filter((v): v is number => typeof v === 'number');
      const violated = margins.filter((m) => m < 0).sort((a, b) => a - b);
      return { name, count: violated.length, total: margins.length, median: violated[Math.floor(violated.length / 2)] ?? 0, worst: violated[0] ?? 0 };
    })
    .filter((f) => f.count > 0)
    .sort((a, b) => b.count - a.count);
  if (failing.length > 0) {
    const pct = (v: number): string => `${(v * 100).toPrecision(3)} %`;
    lines.push('Constraints that fail most often (margins are shortfalls as a fraction of the bound):');
    lines.push(table(['constraint', 'designs failing', 'median shortfall', 'worst'], failing.map((f) => [f.name, `${f.count} of ${f.total}`, pct(-f.median), pct(-f.worst)])));
    lines.push('Relax those bounds, widen the design bounds, or check the task region (loopsmith check STUDY).');
  }
  return lines.join('\n') + '\n';
}

/** The study of the store's latest run (for units of variable columns), or undefined. */
export function latestStudy(dbPath: string): Study | undefined {
  try {
    const store = Store.open(dbPath, { access: 'read' });
    try {
      const run = store.listRuns().at(-1);
      const row = run ? store.getStudy(run.studyId) : undefined;
      return row ? parseStudyText(row.fileText, dbPath).study : undefined;
    } finally {
      store.close();
    }
  } catch {
    return undefined;
  }
}

/** A note per run that needs one: who writes a running run, how to resume an interrupted one. */
export function runNote(run: RunRow, state: RunState): string[] {
  if (state === 'interrupted') {
    const who = run.ownerPid !== null ? `its process ${run.ownerPid} on ${run.ownerHost ?? '?'} is gone` : 'its process is gone';
    const resume = run.kind === 'optimize' ? (run.command ? `; resume it with: ${run.command}` : '; the command that started it resumes it') : '; a sweep starts again from the beginning';
    return [`run ${run.id} was interrupted after ${run.generationsDone} generation(s) (${who})${resume}`];
  }
  if (state === 'running') return [`run ${run.id} is being written by process ${run.ownerPid} on ${run.ownerHost ?? '?'} since ${run.ownerSince ?? run.startedAt}`];
  if ((state === 'failed' || state === 'stopped') && run.message) return [`run ${run.id}: ${run.message}`];
  return [];
}

/** After a refused or failed command: a store this command created that holds no generation is removed. */
export function removeEmptyStore(dbPath: string, existedBefore: boolean): void {
  if (existedBefore || !existsSync(dbPath)) return;
  try {
    const store = Store.open(dbPath, { access: 'read' });
    let stored = 0;
    try {
      stored = store.listRuns().reduce((n, r) => n + r.generationsDone, 0);
    } finally {
      store.close();
    }
    if (stored > 0) return;
  } catch {
    // Not even a readable store: nothing in it to keep.
  }
  for (const suffix of ['', '-wal', '-shm', '-journal']) rmSync(dbPath + suffix, { force: true });
}
