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
import { runState, Store, StoreError, type RunRow } from '../store/store.js';
import { toCsv } from '../store/format.js';
import type { QuantityKind } from '../study/units.js';
import { betterDirection, chooseColumns, csvHeader, describeColumn, displayCell, emptyColumns, parseSort, sortRows } from './columns.js';
import { commandLine, programName, resumableCommand } from './invocation.js';
import { loadStudyFile, StudyError } from '../study/parse.js';
import { unreachableTaskProblems } from '../api/plausibility.js';
import { formatMetric, formatValue, studyActuators, table, toJson, variableKind } from './format.js';
import { integerOption, positiveInteger } from './argChecks.js';
import { fmtTime, formatImprovement, hypervolumeTrajectory, latestStudy, noFeasibleText, removeEmptyStore, runNote, runStandingLines, runSummaryText } from '../api/runText.js';

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

/** Progress reporter: a bar on a terminal, a plain line every few seconds otherwise, nothing when quiet. */
function progressReporter(quiet: boolean, label: string) {
  const tty = process.stderr.isTTY === true;
  let bar: cliProgress.SingleBar | undefined;
  let lastLine = 0;
  let first: { done: number; elapsed: number } | undefined;
  return {
    update(done: number, total: number, fields: { rate: number; hv: string; feasible: number; elapsed: number }): void {
      if (quiet) return;
      // The first step carries the start-up (threads, first compilation, an empty cache): the time left
      // is estimated from the pace after it, and not shown until there is one.
      first ??= { done, elapsed: fields.elapsed };
      const eta = done > first.done ? ((fields.elapsed - first.elapsed) / (done - first.done)) * (total - done) : Number.NaN;
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

const positiveInt = (name: string, minimum = 1) => positiveInteger(name, minimum);

export function registerStoreCommands(cli: Argv): Argv {
  const commands = [registerRunCommand, registerSweepCommand, registerRescoreCommand, registerSensitivityCommand, registerRunsCommand, registerFrontCommand, registerQueryCommand];
  return commands.reduce((c, register) => register(c), cli);
}

export function registerRunCommand(cli: Argv): Argv {
  return cli.command(
    'run <study>',
    'optimize: NSGA-II over the design space into SQLite (resumes an unfinished run)',
    (y) =>
      y
        .positional('study', { type: 'string', demandOption: true, describe: 'study file (YAML)' })
        .option('db', { type: 'string', describe: 'database file (default results/<study>.db)' })
        .option('seed', { type: 'string', describe: 'random seed, a whole number (default: the study\'s optimizer.seed)', coerce: integerOption('seed') })
        .option('workers', { type: 'number', describe: 'worker threads (default: available cores)', coerce: positiveInt('workers') })
        .option('generations', { type: 'number', describe: 'generations in all, the initial population included', coerce: positiveInt('generations') })
        .option('population', { type: 'number', describe: 'designs per generation, at least 2 (default: the study\'s optimizer.population)', coerce: positiveInt('population', 2) })
        .option('from', { type: 'string', describe: 'warm start from the final population of DB[:RUN]' })
        .option('more', { type: 'string', describe: 'continue the finished run of this study and seed: N more generations, or "converge" (until the front stops improving again)', coerce: moreOption })
        .option('run', { type: 'number', describe: 'with --more: the run to continue (default: the newest one)', coerce: positiveInt('run') })
        .option('quiet', { type: 'boolean', default: false, describe: 'no progress and no summary (errors are still printed)' })
        .check((a) => {
          if (a.more !== undefined && a.generations !== undefined) throw usageError('--more and --generations do not go together: --more N adds N generations to a finished run');
          if (a.more !== undefined && a.from !== undefined) throw usageError('--more continues a finished run; --from starts a new one: give one of them');
          if (a.run !== undefined && a.more === undefined) throw usageError('--run only goes with --more (the run to continue)');
          return true;
        })
        .example('$0 run studies/parcel-sorter.yaml', 'optimize until the front stops improving (or 10,000 evaluations)')
        .example('$0 run studies/parcel-sorter.yaml --more 20', 'continue the finished run for 20 more generations')
        .example('$0 run studies/parcel-sorter.yaml --more converge', 'continue it until the front stops improving again')
        .example('$0 run studies/parcel-sorter.yaml --db trial.db --generations 10 --seed 3', 'a short trial run with another seed'),
    async (args) => {
      const loaded = loadStudyFile(args.study);
      const problems = unreachableTaskProblems(loaded.study);
      if (problems.length > 0) throw new StudyError(`${args.study}: the study cannot succeed:\n  - ${problems.join('\n  - ')}`);
      const dbPath = args.db ?? defaultDb(args.study, loaded.study.name);
      const existed = existsSync(dbPath);
      const interrupt = interruptFlag(args.quiet);
      const progress = progressReporter(args.quiet, 'generation');
      try {
        const summary = await runOptimization(loaded, {
          dbPath,
          command: resumableCommand(),
          ...(args.seed !== undefined ? { seed: args.seed } : {}),
          ...(args.workers !== undefined ? { workers: args.workers } : {}),
          ...(args.generations !== undefined ? { generations: args.generations } : {}),
          ...(args.population !== undefined ? { population: args.population } : {}),
          ...(args.from !== undefined ? { warmStart: parseFrom(args.from) } : {}),
          ...(args.more !== undefined ? { more: args.more } : {}),
          ...(args.run !== undefined ? { runId: args.run } : {}),
          shouldStop: interrupt.stop,
          onGeneration: (p: GenerationProgress) =>
            progress.update(p.generation + 1, p.generations, {
              rate: p.evaluationsPerSecond,
              // The population's hypervolume is provisional (its frame is fixed at the end); the archive's gain over the window is what decides convergence.
              hv: `${p.hypervolume === null ? '—' : `${p.hypervolume.toFixed(4)} (provisional)`}, front gain ${p.hvImprovement === null ? '—' : formatImprovement(p.hvImprovement)} per window${p.phase === 'refine' ? ', refining' : ''}`,
              feasible: p.feasibleCount,
              elapsed: p.elapsedSeconds,
            }),
        });
        progress.stop();
        const front = runFront(dbPath, summary.runId);
        if (!args.quiet) {
          const trajectory = hypervolumeTrajectory(dbPath, summary.runId);
          const standing = runStandingLines({ ...summary, trajectory }, continueCommand(args.study, dbPath, args.db !== undefined, summary.runId, args.seed, args.population));
          out(runSummaryText(dbPath, summary, front.designs.length, args.more !== undefined, standing, commandLine(['front', dbPath])));
        }
        if (front.designs.length === 0) process.stderr.write(noFeasibleText(dbPath, summary.runId, loaded.study));
        if (summary.status === 'stopped') process.exitCode = 130;
      } catch (error) {
        removeEmptyStore(dbPath, existed);
        throw error;
      } finally {
        progress.stop();
        interrupt.dispose();
      }
    },
  );
}

export function registerSweepCommand(cli: Argv): Argv {
  return cli.command(
    'sweep <study>',
    'evaluate a space-filling sample of the design space into SQLite',
    (y) =>
      y
        .positional('study', { type: 'string', demandOption: true, describe: 'study file (YAML)' })
        .option('samples', { type: 'number', demandOption: true, coerce: positiveInt('samples'), describe: 'number of designs to evaluate' })
        .option('method', { choices: ['lhs', 'grid'] as const, default: 'lhs' as const, describe: 'lhs: Latin hypercube; grid: a full factorial grid of about that many points' })
        .option('db', { type: 'string', describe: 'database file (default results/<study>.db)' })
        .option('seed', { type: 'string', describe: 'random seed of the sample, a whole number (default: the study\'s optimizer.seed)', coerce: integerOption('seed') })
        .option('workers', { type: 'number', coerce: positiveInt('workers'), describe: 'worker threads (default: available cores)' })
        .option('quiet', { type: 'boolean', default: false, describe: 'no progress and no summary' })
        .example('$0 sweep studies/parcel-sorter.yaml --samples 2000', 'a design atlas of 2000 Latin-hypercube designs'),
    async (args) => {
      const loaded = loadStudyFile(args.study);
      const dbPath = args.db ?? defaultDb(args.study, loaded.study.name);
      const existed = existsSync(dbPath);
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
        if (!args.quiet) out(`${result.status} sweep run ${result.runId}: ${result.evaluations} designs, ${result.feasible} feasible\ndatabase: ${dbPath}\nnext: ${commandLine(['front', dbPath])}`);
      } catch (error) {
        removeEmptyStore(dbPath, existed);
        throw error;
      } finally {
        progress.stop();
        interrupt.dispose();
      }
    },
  );
}

export function registerRescoreCommand(cli: Argv): Argv {
  return cli.command(
    'rescore <db>',
    'rescore the designs of a run under a changed study (drives, margins, constraints, objectives)',
    (y) =>
      y
        .positional('db', { type: 'string', demandOption: true, describe: 'database file' })
        .option('study', { type: 'string', demandOption: true, describe: 'the changed study file' })
        .option('run', { type: 'number', coerce: positiveInteger('run'), describe: 'run to rescore (default: the latest)' })
        .option('workers', { type: 'number', coerce: positiveInt('workers'), describe: 'worker threads (default: available cores)' })
        .option('json', { type: 'boolean', default: false, describe: 'print the outcome as JSON' })
        .option('quiet', { type: 'boolean', default: false, describe: 'no progress bar' })
        .example('$0 rescore results/parcel-sorter.db --study studies/parcel-sorter-drives.yaml', 'the stored designs under other drives'),
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
  );
}

export function registerSensitivityCommand(cli: Argv): Argv {
  return cli.command(
    'sensitivity <db>',
    'do the front\'s representatives stay non-dominated when a study assumption changes by ± a percentage?',
    (y) =>
      y
        .positional('db', { type: 'string', demandOption: true })
        .option('vary', { type: 'string', array: true, demandOption: true, describe: 'NAME=±PERCENT; NAME is payload, joint_stiffness, rated_torque, peak_torque, min_inverse_condition or a path in the study file (drives.both.joint_stiffness, constraints.1.min)' })
        .option('run', { type: 'number', describe: 'run whose front is tested (default: the latest)' })
        .option('representatives', { type: 'number', coerce: positiveInt('representatives'), describe: 'representatives to follow (default 4)' })
        .option('workers', { type: 'number', coerce: positiveInt('workers'), describe: 'worker threads (default: available cores)' })
        .option('json', { type: 'boolean', default: false, describe: 'print the outcome as JSON' })
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
  );
}

export function registerRunsCommand(cli: Argv): Argv {
  return cli.command(
    'runs <db>',
    'list the runs in a database: state (running, interrupted, stopped, finished, failed), seed, generations, time',
    (y) =>
      y
        .positional('db', { type: 'string', demandOption: true, describe: 'database file' })
        .option('json', { type: 'boolean', default: false, describe: 'print the runs as JSON' })
        .example('$0 runs results/parcel-sorter.db', 'which runs the store holds and how to resume an interrupted one'),
    (args) => {
      const store = openExisting(args.db);
      try {
        const runs = store.listRuns();
        const now = new Date();
        if (args.json) {
          out(toJson(runs.map(({ optimizerState: _state, ownerToken: _token, ...rest }) => ({ ...rest, state: runState(rest as RunRow, now), study: store.getStudy(rest.studyId)?.name }))));
          return;
        }
        if (runs.length === 0) {
          out(`${args.db}: no runs yet (start one: ${programName()} run STUDY --db ${args.db})`);
          return;
        }
        out(
          table(
            ['run', 'study', 'kind', 'state', 'ended', 'seed', 'generations', 'last-window HV gain', 'workers', 'started', 'elapsed'],
            runs.map((r) => {
              const last = r.kind === 'optimize' ? store.generationStats(r.id).at(-1) : undefined;
              const gain = last?.hvImprovement === null || last?.hvImprovement === undefined ? '—' : formatImprovement(last.hvImprovement);
              return [String(r.id), store.getStudy(r.studyId)?.name ?? '?', r.kind, runState(r, now), r.endReason ?? '—', String(r.seed), String(r.generationsDone), gain, String(r.workers), r.startedAt.replace('T', ' ').replace(/\.\d+Z$/, 'Z'), fmtTime(r.elapsedSeconds)];
            }),
          ),
        );
        const notes = runs.flatMap((r) => runNote(r, runState(r, now)));
        if (notes.length > 0) out('\n' + notes.join('\n'));
      } finally {
        store.close();
      }
    },
  );
}

export function registerFrontCommand(cli: Argv): Argv {
  return cli.command(
    'front <db>',
    'the feasible Pareto front of a run (default: the latest finished run)',
    (y) =>
      y
        .positional('db', { type: 'string', demandOption: true, describe: 'database file' })
        .option('run', { type: 'number', coerce: positiveInteger('run'), describe: 'run id (default: the latest finished run; see loopsmith runs DB)' })
        .option('sort', { type: 'string', describe: 'sort by a metric or variable, :asc or :desc (default on terminals: the first objective, best first)' })
        .option('limit', { type: 'number', coerce: positiveInt('limit'), describe: 'show at most N designs (after sorting)' })
        .option('columns', { type: 'string', describe: 'columns to show, comma-separated (default: id, design variables, objectives); names without prefix' })
        .option('format', { choices: ['table', 'csv', 'json'] as const, default: 'table' as const, describe: 'table: engineering units; csv: SI values, units in the header; json: SI values, stable keys' })
        .option('representatives', { type: 'number', coerce: positiveInt('representatives'), describe: 'show K distinct designs: extremes and knees, then the farthest apart (normalised objective space)' })
        .option('knees', { type: 'boolean', describe: 'list the knee designs (largest distance from the hyperplane through the extremes, Das 1999)' })
        .option('redundancy', { type: 'boolean', describe: 'objectives that do not conflict on the front: correlations and principal components' })
        .example('$0 front results/parcel-sorter.db --representatives 5', 'five genuinely different designs, with why each was chosen')
        .example('$0 front results/parcel-sorter.db --sort first_mode_in_plane:desc --limit 10', 'the ten stiffest-dynamics designs of the latest finished run')
        .example('$0 front results/parcel-sorter.db --format csv > front.csv', 'every metric, SI units, for a spreadsheet'),
    (args) => {
      requireDatabase(args.db);
      const front = runFront(args.db, args.run);
      if (args.representatives !== undefined || args.knees === true || args.redundancy === true) {
        analysedFront(args, front);
        return;
      }
      const designs = front.designs.map((d) => ({ id: d.id, ...d.variables, ...d.metrics } as Record<string, unknown>));
      const variableNames = front.designs[0] ? Object.keys(front.designs[0].variables) : [];
      const objectiveNames = front.objectives.map((o) => o.metric);
      const metricNames = front.designs[0] ? Object.keys(front.designs[0].metrics) : METRICS.map((m) => m.name);
      const keys = ['id', ...variableNames, ...metricNames];
      const sort = args.sort !== undefined ? parseSort(args.sort, keys, betterDirection) : args.format === 'table' && objectiveNames[0] ? { key: objectiveNames[0], direction: front.objectives[0]!.sense === 'max' ? ('desc' as const) : ('asc' as const) } : undefined;
      let rows = sort ? sortRows(designs, sort.key, sort.direction) : designs;
      if (args.limit !== undefined) rows = rows.slice(0, args.limit);
      const chosenIds = new Set(rows.map((r) => r['id']));
      if (args.format === 'json') {
        const byId = new Map(front.designs.map((d) => [d.id, d]));
        out(toJson({ run: front.runId, objectives: front.objectives, designs: rows.map((r) => byId.get(r['id'] as number)!).filter((d) => chosenIds.has(d.id)).map((d) => ({ id: d.id, variables: d.variables, metrics: d.metrics, constraints: d.constraints })) }));
        return;
      }
      const actuators = studyActuators(front.study, front.designs[0]?.variables);
      const kindOf = (name: string): QuantityKind | null => (variableNames.includes(name) ? (typeof front.designs[0]?.variables[name] === 'number' ? variableKind(front.study, name) : null) : null);
      const empty = emptyColumns(keys, designs);
      const shown = args.columns !== undefined
        ? chooseColumns(args.columns, keys)
        : args.format === 'csv' ? keys.filter((k) => !empty.has(k)) : ['id', ...variableNames, ...objectiveNames];
      const columns = shown.map((k) => (k === 'id' ? { key: 'id', title: 'id', kind: null } : describeColumn(k, kindOf, actuators)));
      if (args.format === 'csv') {
        out(toCsv(columns.map(csvHeader), rows.map((r) => Object.fromEntries(columns.map((c) => [csvHeader(c), r[c.key]])))));
        return;
      }
      const which = front.reason ? `; ${front.reason} — another with --run N (see: ${programName()} runs ${args.db})` : '';
      const state = front.run ? `, ${runState(front.run)}, ${front.run.generationsDone} generations` : '';
      const limited = rows.length < front.designs.length ? ` (showing ${rows.length}${sort ? `, sorted by ${sort.key} ${sort.direction}` : ''})` : sort ? ` (sorted by ${sort.key} ${sort.direction})` : '';
      out(`run ${front.runId} (${front.kind}${state}${which})\n${front.designs.length} designs on the feasible front${limited}; objectives ${front.objectives.map((o) => `${o.metric} (${o.sense})`).join(', ')}\n`);
      if (rows.length > 0) out(table(columns.map((c) => c.title), rows.map((r) => columns.map((c) => displayCell(r[c.key], c)))));
    },
  );
}

export function registerQueryCommand(cli: Argv): Argv {
  return cli.command(
    'query <db>',
    'select stored evaluations with an SQL expression (read-only)',
    (y) =>
      y
        .positional('db', { type: 'string', demandOption: true, describe: 'database file' })
        .option('where', { type: 'string', describe: 'SQL expression over the columns, e.g. "feasible = 1 AND m_gci > 0.8"' })
        .option('order-by', { type: 'string', describe: 'column [asc|desc], e.g. "m_first_mode_in_plane desc"' })
        .option('sort', { type: 'string', describe: 'same as --order-by, with a metric name: gci:desc' })
        .option('limit', { type: 'number', coerce: positiveInt('limit'), describe: 'at most N rows' })
        .option('run', { type: 'number', coerce: positiveInteger('run'), describe: 'only designs that were members of this run' })
        .option('columns', { type: 'string', describe: 'columns to show, comma-separated (default on terminals: id, feasible, variables, metrics with values)' })
        .option('all-columns', { type: 'boolean', default: false, describe: 'every stored column, empty ones included (default for csv and json)' })
        .option('format', { choices: ['table', 'csv', 'json'] as const, default: 'table' as const, describe: 'table: engineering units; csv: SI values, units in the header; json: SI values, stored column names' })
        .example('$0 query results/parcel-sorter.db --where "feasible = 1 AND m_gci > 0.85" --sort first_mode_in_plane:desc --limit 5', 'five feasible, well-conditioned designs with the highest natural frequency')
        .example('$0 query results/parcel-sorter.db --format csv > all.csv', 'every stored evaluation as CSV'),
    (args) => {
      requireDatabase(args.db);
      let orderBy = args.orderBy;
      if (args.sort !== undefined) {
        const all = queryEvaluations(args.db, { limit: 0 }).columns;
        const sort = parseSort(args.sort, all, betterDirection);
        orderBy = `${sort.key} ${sort.direction}`;
      }
      const result = queryEvaluations(args.db, {
        ...(args.where !== undefined ? { where: args.where } : {}),
        ...(orderBy !== undefined ? { orderBy } : {}),
        ...(args.limit !== undefined ? { limit: args.limit } : {}),
        ...(args.run !== undefined ? { runId: args.run } : {}),
      });
      result.notes?.forEach((note) => process.stderr.write(`loopsmith: warning: ${note}\n`));
      const keys = result.columns;
      const study = latestStudy(args.db);
      const textVariable = (name: string): boolean => name === 'working_mode' || name === 'architecture' || /^drive(_\d)?$/.test(name);
      const kindOf = (name: string): QuantityKind | null => (textVariable(name) ? null : study ? variableKind(study, name) : /angle|^phi/.test(name) ? 'angle' : 'length');
      let shown: string[];
      if (args.columns !== undefined) shown = chooseColumns(args.columns, keys);
      else if (args.allColumns || args.format !== 'table') shown = keys;
      else {
        const empty = emptyColumns(keys, result.rows);
        shown = keys.filter((k) => !empty.has(k) && (k === 'id' || k === 'feasible' || k === 'error' || k.startsWith('v_') || k.startsWith('m_')));
      }
      if (args.format === 'json') {
        out(toJson(result.rows.map((r) => Object.fromEntries(shown.map((k) => [k, r[k]])))));
        return;
      }
      const columns = shown.map((k) => (k.startsWith('v_') || k.startsWith('m_') || k.startsWith('c_') ? describeColumn(k, kindOf, study ? studyActuators(study) : undefined) : { key: k, title: k, kind: null }));
      if (args.format === 'csv') {
        out(toCsv(columns.map(csvHeader), result.rows.map((r) => Object.fromEntries(columns.map((c) => [csvHeader(c), r[c.key]])))));
        return;
      }
      const hidden = keys.length - shown.length;
      out(`${table(columns.map((c) => c.title), result.rows.map((r) => columns.map((c) => displayCell(r[c.key], c))))}\n(${result.rows.length} rows${hidden > 0 ? `; ${hidden} columns not shown — choose with --columns, or --all-columns` : ''})`);
    },
  );
}

/** A command-line mistake found by a check: the CLI reports it like yargs' own (exit 2). */
function usageError(message: string): Error {
  const error = new Error(message);
  error.name = 'YError';
  return error;
}

/** --more N (a positive whole number of generations) or --more converge. */
function moreOption(value: unknown): number | 'converge' | undefined {
  if (value === undefined) return undefined;
  const text = String(value).trim();
  if (text === 'converge' || text === 'convergence') return 'converge';
  const n = Number(text);
  if (!Number.isInteger(n) || n < 1) throw new Error(`--more ${text}: give a number of generations (e.g. --more 20) or "converge"`);
  return n;
}

/** The exact command that continues this run. */
function continueCommand(study: string, dbPath: string, dbGiven: boolean, runId: number, seed: number | undefined, population: number | undefined): (more: string) => string {
  const quote = (t: string): string => (/^[\w./:@%+=,-]+$/.test(t) ? t : `'${t.replace(/'/g, `'\\''`)}'`);
  return (more) => ['loopsmith run', quote(study), ...(dbGiven ? ['--db', quote(dbPath)] : []), ...(seed !== undefined ? ['--seed', String(seed)] : []), ...(population !== undefined ? ['--population', String(population)] : []), '--more', more, '--run', String(runId)].join(' ');
}

/** `front --representatives/--knees/--redundancy`: the analysed front (issue of the front tools). */
function analysedFront(args: { representatives?: number | undefined; knees?: boolean | undefined; redundancy?: boolean | undefined; format: 'table' | 'csv' | 'json' }, front: ReturnType<typeof runFront>): void {
    const analysis = analyseFront(front, args.representatives ?? 0);
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
}

/** DB or DB:RUN. */
function parseFrom(text: string): { dbPath: string; runId?: number } {
  const match = /^(.*):(\d+)$/.exec(text);
  return match ? { dbPath: match[1]!, runId: Number(match[2]) } : { dbPath: text };
}

/** Refuse a database path that does not exist (opening would create it). */
function requireDatabase(path: string): void {
  if (!existsSync(path)) throw new StoreError(`${path}: no such database (run a study first: ${programName()} run STUDY --db ${path})`);
}

function openExisting(path: string): Store {
  requireDatabase(path);
  return Store.open(path, { access: 'read' });
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
