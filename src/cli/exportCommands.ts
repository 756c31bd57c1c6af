/** Commands that carry designs onward: export (JSON, CSV, MJCF) and rescore. */
import type { Argv } from 'yargs';
import { positiveInteger } from './argChecks.js';
import { EXPORT_FORMATS, ExportError, type ExportFormat } from '../export/request.js';
import type { MjcfCheckSheet } from '../export/export.js';
import { roundAndEvaluate, RoundingError, type RoundingResult } from '../run/roundDesigns.js';
import { formatQuantity, parseQuantity } from '../study/units.js';
import type { StoredEvaluation } from '../store/store.js';

const out = (text: string): void => {
  process.stdout.write(text.endsWith('\n') ? text : text + '\n');
};

/** "3,5, 8" → [3, 5, 8]; anything else is a user error naming the bad item. */
export function parseIdList(text: string): number[] {
  const items = text.split(',').map((s) => s.trim()).filter((s) => s.length > 0);
  if (items.length === 0) throw new ExportError('--ids: give evaluation ids, for example --ids 12,40,41');
  return items.map((item) => {
    if (!/^\d+$/.test(item) || Number(item) < 1 || !Number.isSafeInteger(Number(item))) {
      throw new ExportError(`--ids: "${item}" is not an evaluation id (positive integers separated by commas)`);
    }
    return Number(item);
  });
}

export function registerExportCommands(cli: Argv): Argv {
  return cli.command(
    'export <db>',
    'write candidate sheets (JSON), one CSV table or MJCF simulation models of stored designs',
    (y) =>
      y
        .positional('db', { type: 'string', demandOption: true })
        .option('front', { type: 'boolean', describe: 'the feasible Pareto front of the run (default: the latest run)' })
        .option('ids', { type: 'string', describe: 'evaluation ids, e.g. 12,40,41' })
        .option('run', { type: 'number', coerce: positiveInteger('run'), describe: 'run whose front (--front) or study and provenance (--ids) to use' })
        .option('format', { choices: EXPORT_FORMATS, demandOption: true, describe: 'json: one sheet per design; csv: one table; mjcf: one MuJoCo model per design' })
        .option('out', { type: 'string', demandOption: true, describe: 'output folder (created when missing)' })
        .option('round', { type: 'string', describe: 'snap every length design variable to this step (e.g. 0.5mm), re-evaluate, store the rounded designs and export those' })
        .option('workers', { type: 'number', describe: 'worker threads for the re-evaluation of --round (default: available cores)' })
        .option('verify', { type: 'boolean', describe: 'with --format mjcf: run each model in MuJoCo (npm package mujoco-js) against loopsmith\'s simulation on the duty cycle; writes candidate-<id>.check.json with the end-point error and loop gap (m); exit code 1 when a model misses 0.05 mm or 0.01 mm' })
        .example('$0 export results/rail-sorter-2prr-cycle.db --front --format mjcf --verify --out models', 'MuJoCo models, each checked in motion against loopsmith\'s simulation')
        .example('$0 export results/parcel-sorter.db --front --round 0.5mm --format json --out sheets', 'buildable lengths: rounded, re-evaluated, stored, exported, with what changed')
        .conflicts('front', 'ids')
        .example('$0 export results/parcel-sorter.db --front --format csv --out results/front', 'the front as one CSV table'),
    async (args) => {
      if (args.front !== true && args.ids === undefined) throw new ExportError('nothing selected: give --front or --ids ID,...');
      let ids = args.ids !== undefined ? parseIdList(args.ids) : undefined;
      let rounding: RoundingResult[] | undefined;
      if (args.round !== undefined) {
        rounding = await roundSelection(args.db, { front: args.front === true, ids, runId: args.run, step: args.round, workers: args.workers });
        ids = [...new Set(rounding.flatMap((r) => r.designs.map((d) => d.roundedId)))];
      }
      // ExportError is a user error for the command line (main.ts): one message, exit code 1.
      const options = {
        format: args.format as ExportFormat,
        outDir: args.out,
        ...(args.front === true && !rounding ? { front: true } : {}),
        ...(ids !== undefined ? { ids } : {}),
        ...(args.run !== undefined && !rounding ? { runId: args.run } : {}),
      };
      // The exporters draw maps (chart libraries, about half a second to load): loaded here, not at start.
      const { exportCandidates, exportCandidatesChecked } = await import('../export/export.js');
      const checked = args.verify === true ? await exportCandidatesChecked(args.db, options) : null;
      const result = checked ?? exportCandidates(args.db, options);
      if (rounding) out(roundingReport(rounding));
      out(
        `exported ${result.sheets.length} candidate${result.sheets.length === 1 ? '' : 's'} (${result.sheets.map((s) => s.id).join(', ')}) as ${args.format}:\n` +
          result.files.map((f) => `  ${f}`).join('\n') +
          '\nEarly-design estimates from simplified models, not a safety analysis.',
      );
      if (checked) {
        out(checkReport(checked.checks));
        const failed = checked.checks.filter((c) => !c.passed);
        if (failed.length > 0) throw new ExportError(`the MuJoCo model of candidate ${failed.map((c) => c.id).join(', ')} does not follow loopsmith's simulation within 0.05 mm (end point) and 0.01 mm (loop gap); see the .check.json files`);
      }
    },
  );
}

/** Rounds the selected designs (grouped by the run that describes them), re-evaluates and stores them. */
async function roundSelection(
  dbPath: string,
  selection: { front: boolean; ids: number[] | undefined; runId: number | undefined; step: string; workers: number | undefined },
): Promise<RoundingResult[]> {
  let step: number;
  try {
    step = parseQuantity(selection.step, 'length', '--round');
  } catch (error) {
    throw new ExportError(`--round ${selection.step}: give a length step such as 0.5mm (${(error as Error).message})`);
  }
  if (!(step > 0)) throw new ExportError(`--round ${selection.step}: the step must be a positive length, such as 0.5mm`);
  const { selectCandidates } = await import('../export/export.js');
  const selected = selectCandidates(dbPath, {
    ...(selection.front ? { front: true } : {}),
    ...(selection.ids !== undefined ? { ids: selection.ids } : {}),
    ...(selection.runId !== undefined ? { runId: selection.runId } : {}),
  });
  const byRun = new Map<number, StoredEvaluation[]>();
  for (const s of selected) byRun.set(s.run.id, [...(byRun.get(s.run.id) ?? []), s.evaluation]);
  const results: RoundingResult[] = [];
  try {
    for (const [runId, designs] of byRun) {
      results.push(await roundAndEvaluate({ dbPath, step, designs, sourceRunId: runId, ...(selection.workers !== undefined ? { workers: selection.workers } : {}) }));
    }
  } catch (error) {
    if (error instanceof RoundingError) throw new ExportError(error.message);
    throw error;
  }
  return results;
}

function roundingReport(results: readonly RoundingResult[]): string {
  const lines: string[] = [];
  for (const r of results) {
    const moved = r.designs.filter((d) => d.changedVariables.length > 0).length;
    lines.push(`rounded lengths to ${formatQuantity(r.step, 'length')}: ${r.designs.length} designs of run ${r.sourceRunId} (${moved} changed), re-evaluated and stored as run ${r.runId}`);
    for (const d of r.designs) {
      const variables = d.changedVariables.map((v) => `${v.name} ${formatQuantity(v.from, 'length', 6)} → ${formatQuantity(v.to, 'length', 6)}`).join(', ') || 'already on the step';
      const objectives = d.objectives
        .map((o) => {
          if (o.from === null || o.to === null) return `${o.metric} ${o.from ?? '—'} → ${o.to ?? '—'}`;
          const change = o.from !== 0 ? (100 * (o.to - o.from)) / Math.abs(o.from) : 0;
          return `${o.metric} ${change >= 0 ? '+' : ''}${change.toFixed(2)} %`;
        })
        .join(', ');
      const feasibility = d.feasibleBefore === d.feasibleAfter ? (d.feasibleAfter ? 'still feasible' : 'still infeasible') : d.feasibleAfter ? 'now feasible' : 'NOW INFEASIBLE';
      const broken = d.brokenConstraints.length > 0 ? ` (violates ${d.brokenConstraints.map((c) => `${c.name}, margin ${c.margin.toFixed(4)}`).join('; ')})` : '';
      lines.push(`  design ${d.sourceId} → ${d.roundedId}: ${variables}; ${objectives}; ${feasibility}${broken}`);
    }
  }
  return lines.join('\n');
}

/** The MuJoCo check of each model as a table (end-point error and loop gap in mm). */
function checkReport(checks: readonly MjcfCheckSheet[]): string {
  const mm = (v: number): string => (v * 1000).toExponential(2);
  const lines = [`MuJoCo check in motion (${checks[0]?.settings.integrator ?? ''}, ${checks[0] ? checks[0].settings.timestep * 1000 : ''} ms step; bounds 0.05 mm end point, 0.01 mm loop gap):`];
  for (const c of checks) {
    const runs = c.runs.map((r) => `${r.name} ${mm(r.endPointError)} mm / gap ${mm(r.loopGap)} mm over ${r.duration.toFixed(3)} s`).join('; ');
    lines.push(`  candidate ${c.id} (${c.motion}): ${runs}; ${c.passed ? 'ok' : 'FAILED'} (${c.simulatedTimePerWallSecond.toFixed(2)} simulated s per wall s)`);
  }
  return lines.join('\n');
}
