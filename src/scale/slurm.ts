/** Slurm batch scripts of a plan: the shard array, the merge job, and the script that submits both. */
import { join } from 'node:path';
import type { Plan } from './plan.js';

/** Single-quoted for bash. */
export function shellQuote(text: string): string {
  return `'${text.replace(/'/g, `'\\''`)}'`;
}

/** Job names carry the plan id, so a waiting merge job can be found and cancelled by name. */
export function jobNames(plan: Plan): { shard: string; merge: string } {
  const id = plan.id.slice(0, 8);
  return { shard: `loopsmith-shard-${id}`, merge: `loopsmith-merge-${id}` };
}

function directives(plan: Plan, dir: string, name: string, cpus: number, log: string): string[] {
  const lines = [`#SBATCH --job-name=${name}`, `#SBATCH --cpus-per-task=${cpus}`, `#SBATCH --output=${join(dir, 'logs', log)}`];
  if (plan.slurm.partition) lines.push(`#SBATCH --partition=${plan.slurm.partition}`);
  if (plan.slurm.time) lines.push(`#SBATCH --time=${plan.slurm.time}`);
  return lines;
}

/** The files to write: shard.sbatch, merge.sbatch, submit.sh. */
export function batchScripts(plan: Plan, dir: string): Record<string, string> {
  const names = jobNames(plan);
  const program = `${shellQuote(plan.program.node)} ${shellQuote(plan.program.cli)}`;
  const header = `# Written by loopsmith ${plan.loopsmithVersion} (plan ${plan.id.slice(0, 12)}, ${plan.kind} of study ${plan.study.name}).`;
  const shard = [
    '#!/bin/bash',
    ...directives(plan, dir, names.shard, plan.slurm.cpusPerTask, 'shard-%A_%a.out'),
    '#SBATCH --requeue',
    header,
    '# One array task runs one shard; its index comes from SLURM_ARRAY_TASK_ID, the epoch of an island',
    '# plan from LOOPSMITH_EPOCH. A finished shard is a no-op, so a requeued task is harmless.',
    'set -euo pipefail',
    `exec ${program} shard ${shellQuote(dir)} \${LOOPSMITH_EPOCH:+--epoch "$LOOPSMITH_EPOCH"}`,
    '',
  ].join('\n');
  const merge = [
    '#!/bin/bash',
    ...directives(plan, dir, names.merge, 1, 'merge-%j.out'),
    header,
    'set -euo pipefail',
    `exec ${program} merge ${shellQuote(dir)} --db ${shellQuote(plan.db)}`,
    '',
  ].join('\n');
  const epochs = plan.islands?.epochs ?? 1;
  const last = plan.shards - 1;
  const submit = [
    '#!/bin/bash',
    header,
    '# Submits the shards as job arrays and the merge job after them (afterok).',
    `#   bash submit.sh                        every shard${epochs > 1 ? ' of every epoch' : ''}, then the merge`,
    `#   bash submit.sh --only 1,3             only these shards${epochs > 1 ? ' (of the first epoch submitted)' : ''}, then the merge`,
    ...(epochs > 1 ? ['#   bash submit.sh --from-epoch E [--only LIST]   epochs E and later (LIST in epoch E)'] : []),
    'set -euo pipefail',
    `only="0-${last}"`,
    'from=0',
    'while [ $# -gt 0 ]; do',
    '  case "$1" in',
    '    --only) only="$2"; shift 2 ;;',
    '    --from-epoch) from="$2"; shift 2 ;;',
    '    *) echo "usage: $0 [--only LIST] [--from-epoch E]" >&2; exit 2 ;;',
    '  esac',
    'done',
    `# A merge job (or a later epoch) left waiting behind a failed array never starts`,
    `# (DependencyNeverSatisfied): a resubmission cancels those still pending before submitting again.`,
    `scancel --name=${names.merge} --state=PENDING 2>/dev/null || true`,
    `if [ "$only" != "0-${last}" ] || [ "$from" != 0 ]; then scancel --name=${names.shard} --state=PENDING 2>/dev/null || true; fi`,
    'dep=""',
    `for epoch in $(seq "$from" ${epochs - 1}); do`,
    `  array="$only"; [ "$epoch" = "$from" ] || array="0-${last}"`,
    `  id=$(sbatch --parsable --array="$array" \${dep:+--dependency=afterok:$dep} ${plan.kind === 'islands' ? '--export=ALL,LOOPSMITH_EPOCH="$epoch" ' : ''}${shellQuote(join(dir, 'shard.sbatch'))})`,
    '  dep="${id%%;*}"',
    `  echo "${plan.kind === 'islands' ? 'epoch $epoch: ' : ''}job array $dep (shards $array)"`,
    'done',
    `id=$(sbatch --parsable --dependency=afterok:"$dep" ${shellQuote(join(dir, 'merge.sbatch'))})`,
    'echo "merge: job ${id%%;*} (after job $dep)"',
    '',
  ].join('\n');
  return { 'shard.sbatch': shard, 'merge.sbatch': merge, 'submit.sh': submit };
}
