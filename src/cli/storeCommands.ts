/** Commands that run studies and read the store: run, sweep, runs, front, query. */
import { existsSync } from 'node:fs';
import { basename, extname, join } from 'node:path';
import cliProgress from 'cli-progress';
import type { Argv } from 'yargs';
import { METRICS } from '../mechanics/metrics.js';
import { runFront } from '../run/front.js';
import { analyseFront, type StoredFrontAnalysis } from '../run/frontTools.js';
import { runOptimization, type GenerationProgress } from '../run/optimize.js';
import { runSweep } from '../run/sweep.js';
import { rescoreRun } from '../run/rescore.js';
import { parseVariation, sensitivity } from '../run/sensitivity.js';
import { queryEvaluations } from '../store/query.js';
import { Store, StoreError } from '../store/store.js';
import { formatTable, toCsv } from '../store/format.js';
import { loadStudyFile } from '../study/parse.js';
import { formatMetric, formatValue, studyActuators, table, toJson, variableKind } from './format.js';

const out = (text: string): void => {
  process.stdout.write(text.endsWith('\n') ? text : text + '\n');
};

function defaultDb(studyPath: string, studyName: string): string {
  return join('results', `${studyName || basename(studyPath, extname(studyPath))}.db`);
}

/** Stop after the current generation on the first Ctrl-C; a second one exits at once. */
function interruptFlag(quiet: boolean): { stop: () => boolean; dispose: () => void } {
  let requested = false;
  const handler = (): void => {
    if (requested) process.exit(130);
    requested = true;
    if (!quiet) process.stderr.write('\nloopsmith: stopping after the current generation (Ctrl-C again to quit at once; committed generations are kept)\n');
  };
  process.on('SIGINT', handler);
  process.on('SIGTERM', handler);
  return { stop: () => requested, dispose: () => { process.off('SIGINT', handler); process.off('SIGTERM', handler); } };
}

function fmtTime(seconds: number): string {
  if (!Number.isFinite(seconds) || seconds < 0) return '—';
  if (seconds < 60) return `${seconds.toFixed(0)} s`;
  return `${Math.floor(seconds / 60)} min ${Math.round(seconds % 60)} s`;
}

/** Progress reporter: a bar on a terminal, a plain line every few seconds otherwise, nothing when quiet. */
function progressReporter(quiet: boolean, label: string) {
  const tty = process.stderr.isTTY === true;
  let bar: cliProgress.SingleBar | undefined;
  let lastLine = 0;
  return {
    update(done: number, total: number, fields: { rate: number; hv: string; feasible: number; elapsed: number }): void {
      if (quiet) return;
      const eta = done > 0 ? (fields.elapsed / done) * (total - done) : Number.NaN;
      if (tty) {
        if (!bar) {
          bar = new cliProgress.SingleBar(
            { format: `${label} [{bar}] {value}/{total} | {rate} eval/s | HV {hv} | feasible {feasible} | left {eta_text}`, stream: process.stderr, hideCursor: true },
            cliProgress.Presets.shades_classic,
          );
          bar.start(total, 0, { rate: '—', hv: '—', feasible: 0, eta_text: '—' });
        }
        bar.update(done, { rate: fields.rate.toFixed(0), hv: fields.hv, feasible: fields.feasible, eta_text: fmtTime(eta) });
      } else {
        const now = Date.now();
        if (done === total || done === 1 || now - lastLine >= 5000) {
          lastLine = now;
          process.stderr.write(`${label} ${done}/${total}: ${fields.rate.toFixed(0)} eval/s, HV ${fields.hv}, feasible ${fields.feasible}, elapsed ${fmtTime(fields.elapsed)}, left ${fmtTime(eta)}\n`);
        }
      }
    },
    stop(): void {
      bar?.stop();
    },
  };
}

const positiveInt = (name: string) => (value: unknown): number | undefined => {
  if (value === undefined) return undefined;
  const n = Number(value);
  if (!Number.isInteger(n) || n < 1) throw new Error(`--${name} must be a positive integer`);
  return n;
};

export function registerStoreCommands(cli: Argv): Argv {
  return cli
    .command(
      'run <study>',
      'optimize: NSGA-II over the design space into SQLite (resumes an unfinished run)',
      (y) =>
        y
          .positional('study', { type: 'string', demandOption: true })
          .option('db', { type: 'string', describe: 'database file (default results/<study>.db)' })
          .option('seed', { type: 'number', describe: 'random seed (default: the study\'s)' })
          .option('workers', { type: 'number', describe: 'worker threads (default: available cores)', coerce: positiveInt('workers') })
          .option('generations', { type: 'number', describe: 'generations in all, the initial population included', coerce: positiveInt('generations') })
          .option('population', { type: 'number', describe: 'population size', coerce: positiveInt('population') })
          .option('from', { type: 'string', describe: 'warm start from the final population of DB[:RUN]' })
          .option('quiet', { type: 'boolean', default: false }),
      async (args) => {
        const loaded = loadStudyFile(args.study);
        const dbPath = args.db ?? defaultDb(args.study, loaded.study.name);
        const interrupt = interruptFlag(args.quiet);
        const progress = progressReporter(args.quiet, 'generation');
        try {
          const summary = await runOptimization(loaded, {
            dbPath,
            ...(args.seed !== undefined ? { seed: args.seed } : {}),
            ...(args.workers !== undefined ? { workers: args.workers } : {}),
            ...(args.generations !== undefined ? { generations: args.generations } : {}),
            ...(args.population !== undefined ? { population: args.population } : {}),
            ...(args.from !== undefined ? { warmStart: parseFrom(args.from) } : {}),
            shouldStop: interrupt.stop,
            onGeneration: (p: GenerationProgress) =>
              progress.update(p.generation + 1, p.generations, { rate: p.evaluationsPerSecond, hv: p.hypervolume === null ? '—' : p.hypervolume.toFixed(4), feasible: p.feasibleCount, elapsed: p.elapsedSeconds }),
          });
          progress.stop();
          if (!args.quiet) {
            const front = runFront(dbPath, summary.runId);
            out(
              `${summary.status === 'finished' ? 'finished' : 'stopped'} run ${summary.runId}${summary.resumedFromGeneration !== null ? ` (resumed at generation ${summary.resumedFromGeneration})` : ''}: ` +
                `${summary.generationsDone} generations, ${summary.newEvaluations} new evaluations in ${fmtTime(summary.elapsedSeconds)}; ` +
                `${front.designs.length} designs on the feasible front\ndatabase: ${dbPath}\nnext: loopsmith front ${dbPath}`,
            );
          }
          if (summary.status === 'stopped') process.exitCode = 130;
        } finally {
          progress.stop();
          interrupt.dispose();
        }
      },
    )
    .command(
      'sweep <study>',
      'evaluate a space-filling sample of the design space into SQLite',
      (y) =>
        y
          .positional('study', { type: 'string', demandOption: true })
          .option('samples', { type: 'number', demandOption: true, coerce: positiveInt('samples') })
          .option('method', { choices: ['lhs', 'grid'] as const, default: 'lhs' as const })
          .option('db', { type: 'string' })
          .option('seed', { type: 'number' })
          .option('workers', { type: 'number', coerce: positiveInt('workers') })
          .option('quiet', { type: 'boolean', default: false }),
      async (args) => {
        const loaded = loadStudyFile(args.study);
        const dbPath = args.db ?? defaultDb(args.study, loaded.study.name);
        const interrupt = interruptFlag(args.quiet);
        const progress = progressReporter(args.quiet, 'designs');
        try {
          const result = await runSweep(loaded, {
            dbPath,
            samples: args.samples!,
            method: args.method,
            ...(args.seed !== undefined ? { seed: args.seed } : {}),
            ...(args.workers !== undefined ? { workers: args.workers } : {}),
            shouldStop: interrupt.stop,
            onChunk: (p) => progress.update(p.done, p.total, { rate: p.evaluationsPerSecond, hv: '—', feasible: p.feasible, elapsed: p.elapsedSeconds }),
          });
          progress.stop();
          if (!args.quiet) out(`${result.status} sweep run ${result.runId}: ${result.evaluations} designs, ${result.feasible} feasible\ndatabase: ${dbPath}`);
        } finally {
          progress.stop();
          interrupt.dispose();
        }
      },
    )
    .command(
      'rescore <db>',
      'rescore the designs of a run under a changed study (drives, margins, constraints, objectives)',
      (y) =>
        y
          .positional('db', { type: 'string', demandOption: true })
          .option('study', { type: 'string', demandOption: true, describe: 'the changed study file' })
          .option('run', { type: 'number', describe: 'run to rescore (default: the latest)' })
          .option('workers', { type: 'number', coerce: positiveInt('workers') })
          .option('json', { type: 'boolean', default: false })
          .option('quiet', { type: 'boolean', default: false }),
      async (args) => {
        openExisting(args.db).close();
        const loaded = loadStudyFile(args.study);
        const progress = progressReporter(args.quiet || args.json, 'designs');
        const started = performance.now();
        const result = await rescoreRun(loaded, {
          dbPath: args.db,
          ...(args.run !== undefined ? { runId: args.run } : {}),
          ...(args.workers !== undefined ? { workers: args.workers } : {}),
          onProgress: (done, total) => progress.update(done, total, { rate: done / ((performance.now() - started) / 1000), hv: '—', feasible: 0, elapsed: (performance.now() - started) / 1000 }),
        });
        progress.stop();
        if (args.json) {
          const brief = (e: { id: number; variables: unknown; metrics: unknown }) => ({ id: e.id, variables: e.variables, metrics: e.metrics });
          out(toJson({ run: result.runId, from: result.parentRunId, mode: result.mode, designs: result.designs, evaluated: result.evaluated, feasible: result.feasible, front: result.front.map(brief), left: result.left.map(brief), joined: result.joined.map(brief), constraints: result.constraints }));
          return;
        }
        const modeText = { cached: 'nothing to recompute (same evaluation settings)', 'per-pose': 'per-pose metrics recomputed, workspace reused', full: 'full evaluation' }[result.mode];
        const lines = [
          `rescore run ${result.runId} of run ${result.parentRunId}: ${result.designs} designs, ${result.evaluated} evaluated (${modeText}), ${result.feasible} feasible`,
          `front: ${result.front.length} designs; ${result.left.length} left the front, ${result.joined.length} joined`,
        ];
        const binding = result.constraints.filter((c) => c.violatedByOldFront > 0 || c.activeOnNewFront > 0);
        if (binding.length > 0) {
          lines.push('', table(['constraint', 'old-front designs now violating', 'new-front designs within 1 %'], binding.map((c) => [c.name, String(c.violatedByOldFront), String(c.activeOnNewFront)])));
        }
        lines.push('', `see the new front: loopsmith front ${args.db} --run ${result.runId}`);
        out(lines.join('\n'));
      },
    )
    .command(
      'sensitivity <db>',
      'do the front\'s representatives stay non-dominated when a study assumption changes by ± a percentage?',
      (y) =>
        y
          .positional('db', { type: 'string', demandOption: true })
          .option('vary', { type: 'string', array: true, demandOption: true, describe: 'NAME=±PERCENT; NAME is payload, joint_stiffness, rated_torque, peak_torque, min_inverse_condition or a path in the study file (drives.both.joint_stiffness, constraints.1.min)' })
          .option('run', { type: 'number', describe: 'run whose front is tested (default: the latest)' })
          .option('representatives', { type: 'number', coerce: positiveInt('representatives'), describe: 'representatives to follow (default 4)' })
          .option('workers', { type: 'number', coerce: positiveInt('workers') })
          .option('json', { type: 'boolean', default: false })
          .example('$0 sensitivity results/parcel-sorter.db --vary payload=20% --vary joint_stiffness=30%', 'payload ±20 %, drive stiffness ±30 %')
          .example('$0 sensitivity results/parcel-sorter.db --vary constraints.1.min=10%', 'a constraint threshold ±10 %'),
      async (args) => {
        openExisting(args.db).close();
        const variations = args.vary.map((v) => parseVariation(String(v)));
        const result = await sensitivity({
          dbPath: args.db,
          variations,
          ...(args.run !== undefined ? { runId: args.run } : {}),
          ...(args.representatives !== undefined ? { representatives: args.representatives } : {}),
          ...(args.workers !== undefined ? { workers: args.workers } : {}),
          onCase: (done, total) => { if (!args.json) process.stderr.write(`rescored ${done} of ${total} changes\n`); },
        });
        if (args.json) {
          out(toJson(result));
          return;
        }
        const ids = result.representatives.map((r) => r.id);
        const lines = [
          `run ${result.runId}: ${result.frontSize} front designs rescored under each change; representatives ${result.representatives.map((r) => `${r.id} (${r.reasons.join(', ')})`).join('; ')}`,
          '',
          table(
            ['assumption', 'change', 'value', 'front', ...ids.map((id) => `design ${id}`), 'rescore run'],
            result.cases.map((c) => [c.path, `${c.change > 0 ? '+' : ''}${(100 * c.change).toFixed(0)} %`, `${c.from} → ${c.to}`, String(c.frontSize), ...ids.map((id) => c.representatives.find((x) => x.id === id)!.status), String(c.rescoreRunId)]),
          ),
          '',
          result.robust.length > 0
            ? `non-dominated under every change: ${result.robust.map((id) => `design ${id}`).join(', ')}`
            : 'no representative stays non-dominated under every change',
          'Early-design estimates from simplified models, not a safety analysis.',
        ];
        out(lines.join('\n'));
      },
    )
    .command(
      'runs <db>',
      'list the runs in a database',
      (y) => y.positional('db', { type: 'string', demandOption: true }).option('json', { type: 'boolean', default: false }),
      (args) => {
        const store = openExisting(args.db);
        try {
          const runs = store.listRuns();
          if (args.json) {
            out(toJson(runs.map(({ optimizerState: _state, ...rest }) => ({ ...rest, study: store.getStudy(rest.studyId)?.name }))));
            return;
          }
          out(
            table(
              ['run', 'study', 'kind', 'status', 'seed', 'generations', 'workers', 'started', 'elapsed'],
              runs.map((r) => [String(r.id), store.getStudy(r.studyId)?.name ?? '?', r.kind, r.status, String(r.seed), String(r.generationsDone), String(r.workers), r.startedAt, fmtTime(r.elapsedSeconds)]),
            ),
          );
        } finally {
          store.close();
        }
      },
    )
    .command(
      'front <db>',
      'the feasible Pareto front of a run (default: the latest)',
      (y) =>
        y
          .positional('db', { type: 'string', demandOption: true })
          .option('run', { type: 'number' })
          .option('format', { choices: ['table', 'csv', 'json'] as const, default: 'table' as const })
          .option('representatives', { type: 'number', coerce: positiveInt('representatives'), describe: 'show K distinct designs: extremes and knees, then the farthest apart (normalised objective space)' })
          .option('knees', { type: 'boolean', describe: 'list the knee designs (largest distance from the hyperplane through the extremes, Das 1999)' })
          .option('redundancy', { type: 'boolean', describe: 'objectives that do not conflict on the front: correlations and principal components' })
          .example('$0 front results/parcel-sorter.db --representatives 5', 'five genuinely different designs, with why each was chosen')
          .example('$0 front results/parcel-sorter.db --knees --redundancy', 'knee designs and redundant objectives'),
      (args) => {
        requireDatabase(args.db);
        const front = runFront(args.db, args.run);
        const analysing = args.representatives !== undefined || args.knees === true || args.redundancy === true;
        const analysis = analysing ? analyseFront(front, args.representatives ?? 0) : undefined;
        const chosen = args.representatives !== undefined && analysis ? new Map(analysis.representatives.map((r) => [r.id, r])) : undefined;
        const shown = chosen ? analysis!.representatives.map((r) => front.designs.find((d) => d.id === r.id)!) : front.designs;
        const variableNames = front.designs[0] ? Object.keys(front.designs[0].variables) : [];
        const objectiveNames = front.objectives.map((o) => o.metric);
        const otherMetrics = METRICS.map((m) => m.name).filter((n) => !objectiveNames.includes(n));
        if (args.format === 'json') {
          out(toJson({ run: front.runId, objectives: front.objectives, designs: shown.map((d) => ({ id: d.id, variables: d.variables, metrics: d.metrics, constraints: d.constraints })), ...(analysis ? { analysis: analysisJson(analysis, args) } : {}) }));
          return;
        }
        const columns = ['id', ...variableNames, ...objectiveNames, ...(args.format === 'csv' ? otherMetrics : [])];
        if (args.format === 'csv') {
          out(toCsv(chosen ? [...columns, 'chosen_as'] : columns, shown.map((d) => ({ id: d.id, ...d.variables, ...d.metrics, ...(chosen ? { chosen_as: chosen.get(d.id)!.reasons.join('; ') } : {}) }))));
          return;
        }
        out(`run ${front.runId} (${front.kind}): ${front.designs.length} designs on the feasible front; objectives ${front.objectives.map((o) => `${o.metric} (${o.sense})`).join(', ')}\n`);
        if (chosen) out(`${shown.length} representatives (extremes and knees kept, the rest farthest apart in normalised objective space); every front design lies within ${analysis!.coverRadius.toFixed(3)} of one (normalised units, each objective's range on the front = 1)\n`);
        out(
          table(
            chosen ? [...columns, 'chosen as', 'represents'] : columns,
            shown.map((d) => [
              String(d.id),
              ...variableNames.map((v) => (typeof d.variables[v] === 'number' ? formatValue(d.variables[v] as number, variableKind(front.study, v)) : String(d.variables[v]))),
              ...objectiveNames.map((m) => formatMetric(m, d.metrics[m], studyActuators(front.study, d.variables))),
              ...(chosen ? [chosen.get(d.id)!.reasons.join(', '), String(chosen.get(d.id)!.clusterSize)] : []),
            ]),
          ),
        );
        if (analysis && args.knees === true) out('\n' + kneeLines(analysis).join('\n'));
        if (analysis && args.redundancy === true) out('\n' + redundancyLines(analysis).join('\n'));
      },
    )
    .command(
      'query <db>',
      'select stored evaluations with an SQL expression (read-only)',
      (y) =>
        y
          .positional('db', { type: 'string', demandOption: true })
          .option('where', { type: 'string', describe: 'SQL expression over the columns, e.g. "feasible = 1 AND m_gci > 0.8"' })
          .option('order-by', { type: 'string', describe: 'column [asc|desc]' })
          .option('limit', { type: 'number', coerce: positiveInt('limit') })
          .option('run', { type: 'number', describe: 'only designs that were members of this run' })
          .option('format', { choices: ['table', 'csv', 'json'] as const, default: 'table' as const }),
      (args) => {
        requireDatabase(args.db);
        const result = queryEvaluations(args.db, {
          ...(args.where !== undefined ? { where: args.where } : {}),
          ...(args.orderBy !== undefined ? { orderBy: args.orderBy } : {}),
          ...(args.limit !== undefined ? { limit: args.limit } : {}),
          ...(args.run !== undefined ? { runId: args.run } : {}),
        });
        if (args.format === 'json') out(toJson(result.rows));
        else if (args.format === 'csv') out(toCsv(result.columns, result.rows));
        else out(`${formatTable(result.columns, result.rows)}\n(${result.rows.length} rows)`);
      },
    );
}

/** DB or DB:RUN. */
function parseFrom(text: string): { dbPath: string; runId?: number } {
  const match = /^(.*):(\d+)$/.exec(text);
  return match ? { dbPath: match[1]!, runId: Number(match[2]) } : { dbPath: text };
}

/** Refuse a database path that does not exist (opening would create it). */
function requireDatabase(path: string): void {
  if (!existsSync(path)) {
    throw new StoreError(`${path}: no such database (run a study first: loopsmith run STUDY)`);
  }
}

function openExisting(path: string): Store {
  requireDatabase(path);
  return Store.open(path);
}

function analysisJson(analysis: StoredFrontAnalysis, args: { representatives?: number; knees?: boolean; redundancy?: boolean }): Record<string, unknown> {
  return {
    extremes: analysis.extremes,
    ...(args.representatives !== undefined ? { representatives: analysis.representatives, coverRadius: analysis.coverRadius } : {}),
    ...(args.knees === true || args.representatives !== undefined ? { knees: analysis.knees, kneePlane: analysis.kneePlane } : {}),
    ...(args.redundancy === true ? { redundancy: analysis.redundancy } : {}),
  };
}

function kneeLines(analysis: StoredFrontAnalysis): string[] {
  if (analysis.knees.length === 0) return ['knees: none (no design lies on the ideal side of the hyperplane through the extremes)'];
  const plane = analysis.kneePlane === 'extremes' ? 'the hyperplane through the extreme designs' : 'the plane sum = 1 (the extremes do not span a hyperplane)';
  return [
    `knees (Das 1999: largest normalised distance from ${plane}, towards the ideal point):`,
    ...analysis.knees.map((k) => `  design ${k.id}: distance ${k.distance.toFixed(3)}`),
  ];
}

function redundancyLines(analysis: StoredFrontAnalysis): string[] {
  const r = analysis.redundancy;
  const names = analysis.objectives.map((o) => o.metric);
  if (analysis.designs < 3) return ['redundancy: too few designs on the front to judge'];
  const lines = ['objective correlations on the front (minimisation form: + means they do not conflict):'];
  lines.push(table(['', ...names], names.map((a) => [a, ...names.map((b) => r.correlation[a]![b]!.toFixed(2))])));
  lines.push('', 'principal components of the correlation matrix (after Deb & Saxena 2006):');
  lines.push(table(['component', 'variance share', ...names], r.components.map((c, i) => [String(i + 1), `${(100 * c.share).toFixed(1)} %`, ...names.map((n) => c.weights[n]!.toFixed(2))])));
  lines.push('', `essential objectives: ${r.essential.join(', ')}`);
  if (r.redundant.length === 0) lines.push('redundant objectives: none');
  for (const x of r.redundant) lines.push(`redundant: ${x.metric} follows ${x.follows} on the front (correlation ${x.correlation.toFixed(3)}); the trade-off is the same without it`);
  return lines;
}
