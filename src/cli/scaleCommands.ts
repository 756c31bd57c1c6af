/** Commands for studies larger than one machine: plan, shard, merge (Slurm job arrays). */
import { basename, extname, join } from 'node:path';
import type { Argv } from 'yargs';
import { mergePlan } from '../scale/merge.js';
import { makePlan, ScaleError } from '../scale/plan.js';
import { runShards } from '../scale/shard.js';
import { loadStudyFile } from '../study/parse.js';

const out = (text: string): void => {
  process.stdout.write(text.endsWith('\n') ? text : text + '\n');
};

const wholeNumber = (name: string, min: number) => (value: unknown): number | undefined => {
  if (value === undefined) return undefined;
  const n = Number(value);
  if (!Number.isInteger(n) || n < min) throw new Error(`--${name} must be a whole number >= ${min}, got ${String(value)}`);
  return n;
};

export function registerScaleCommands(cli: Argv): Argv {
  const commands = [registerPlanCommand, registerShardCommand, registerMergeCommand];
  return commands.reduce((c, register) => register(c), cli);
}

export function registerPlanCommand(cli: Argv): Argv {
  return cli.command(
    'plan <study>',
    'cut a study into shards for a Slurm job array: writes the plan and the batch scripts',
    (y) =>
      y
        .positional('study', { type: 'string', demandOption: true })
        .option('sweep', { type: 'number', coerce: wholeNumber('sweep', 1), describe: 'a sweep of N samples (as loopsmith sweep)' })
        .option('method', { choices: ['lhs', 'grid'] as const, default: 'lhs' as const, describe: 'sample of a sweep' })
        .option('rescore', { type: 'string', describe: 'rescore the designs of a run of this store under the study' })
        .option('run', { type: 'number', coerce: wholeNumber('run', 1), describe: 'run to rescore (default: the latest)' })
        .option('islands', { type: 'number', coerce: wholeNumber('islands', 1), describe: 'island NSGA-II with K islands (ring migration between epochs)' })
        .option('epochs', { type: 'number', coerce: wholeNumber('epochs', 1), describe: 'epochs of an island run; each epoch is one job array' })
        .option('population', { type: 'number', coerce: wholeNumber('population', 2), describe: 'population per island (default: the study\'s)' })
        .option('generations', { type: 'number', coerce: wholeNumber('generations', 2), describe: 'generations per island in all, initial one included (default: the study\'s)' })
        .option('migrants', { type: 'number', coerce: wholeNumber('migrants', 0), describe: 'members sent to the next island per migration (default: 10 % of the population)' })
        .option('shards', { type: 'number', demandOption: true, coerce: wholeNumber('shards', 1), describe: 'array tasks (per epoch)' })
        .option('out', { type: 'string', demandOption: true, describe: 'plan folder, on a file system every node sees' })
        .option('db', { type: 'string', describe: 'store the merge writes (default: results/<study>.db)' })
        .option('seed', { type: 'number', describe: 'random seed (default: the study\'s optimizer.seed)' })
        .option('partition', { type: 'string', describe: 'Slurm partition (default: the cluster\'s)' })
        .option('cpus-per-task', { type: 'number', default: 1, coerce: wholeNumber('cpus-per-task', 1), describe: 'CPUs per array task = evaluation workers per shard' })
        .option('time', { type: 'string', describe: 'time limit per task, e.g. 02:00:00' })
        .option('scratch', { type: 'string', describe: 'node-local scratch folder for shards (default: $TMPDIR on the node)' })
        .conflicts('sweep', ['rescore', 'islands'])
        .conflicts('rescore', 'islands')
        .implies('islands', 'epochs')
        .implies('epochs', 'islands')
        .example('loopsmith plan study.yaml --sweep 1000000 --shards 200 --out /shared/atlas --cpus-per-task 8 --partition compute', 'a design atlas as 200 array tasks')
        .example('loopsmith plan study.yaml --islands 8 --epochs 5 --shards 8 --out /shared/islands', 'island NSGA-II, one array of 8 tasks per epoch')
        .example('bash /shared/atlas/submit.sh', 'then submit the arrays and the merge job'),
    (args) => {
      const loaded = loadStudyFile(args.study);
      const db = args.db ?? join('results', `${loaded.study.name || basename(args.study, extname(args.study))}.db`);
      const { plan, dir } = makePlan(loaded, {
        outDir: args.out,
        shards: args.shards!,
        db,
        ...(args.seed !== undefined ? { seed: args.seed } : {}),
        ...(args.sweep !== undefined ? { sweep: { samples: args.sweep, method: args.method } } : {}),
        ...(args.rescore !== undefined ? { rescore: { database: args.rescore, ...(args.run !== undefined ? { runId: args.run } : {}) } } : {}),
        ...(args.islands !== undefined
          ? { islands: { islands: args.islands, epochs: args.epochs!, ...(args.population !== undefined ? { population: args.population } : {}), ...(args.generations !== undefined ? { generations: args.generations } : {}), ...(args.migrants !== undefined ? { migrants: args.migrants } : {}) } }
          : {}),
        slurm: { cpusPerTask: args['cpus-per-task'] ?? 1, ...(args.partition !== undefined ? { partition: args.partition } : {}), ...(args.time !== undefined ? { time: args.time } : {}), ...(args.scratch !== undefined ? { scratch: args.scratch } : {}) },
      });
      const what = plan.kind === 'islands' ? `${plan.islands!.islands} islands × ${plan.islands!.population}, ${plan.islands!.epochs} epochs` : `${plan.ranges.at(-1)![1]} designs`;
      out(
        `plan ${plan.id.slice(0, 12)}: ${plan.kind} of ${plan.study.name}, ${what}, ${plan.shards} shards (loopsmith ${plan.loopsmithVersion}, Node ${plan.nodeVersion})\n` +
          `  folder  ${dir}\n  store   ${plan.db}\n` +
          `submit:  bash ${join(dir, 'submit.sh')}\n` +
          `or here: loopsmith shard ${dir} --all && loopsmith merge ${dir}`,
      );
    },
  );
}

export function registerShardCommand(cli: Argv): Argv {
  return cli.command(
    'shard <dir>',
    'run one shard of a plan (the index from SLURM_ARRAY_TASK_ID), or every shard with --all',
    (y) =>
      y
        .positional('dir', { type: 'string', demandOption: true })
        .option('index', { type: 'number', coerce: wholeNumber('index', 0), describe: 'shard index (default: SLURM_ARRAY_TASK_ID)' })
        .option('epoch', { type: 'number', coerce: wholeNumber('epoch', 0), describe: 'epoch of an island plan (default: LOOPSMITH_EPOCH)' })
        .option('all', { type: 'boolean', describe: 'every shard (every epoch) on this machine, in order' })
        .option('workers', { type: 'number', coerce: wholeNumber('workers', 1), describe: 'evaluation workers (default: SLURM_CPUS_PER_TASK, else the plan\'s CPUs per task)' })
        .option('scratch', { type: 'string', describe: 'node-local scratch folder (default: the plan\'s, else $TMPDIR)' })
        .option('quiet', { type: 'boolean', default: false, describe: 'no progress output' })
        .conflicts('all', ['index', 'epoch'])
        .example('loopsmith shard /shared/atlas --index 17', 'run shard 17 here'),
    async (args) => {
      await runShards(args.dir, {
        ...(args.index !== undefined ? { index: args.index } : {}),
        ...(args.epoch !== undefined ? { epoch: args.epoch } : {}),
        ...(args.all === true ? { all: true } : {}),
        ...(args.workers !== undefined ? { workers: args.workers } : {}),
        ...(args.scratch !== undefined ? { scratch: args.scratch } : {}),
        onShard: (r) => {
          if (!args.quiet) out(`${r.epoch === null ? '' : `epoch ${r.epoch} `}shard ${r.index}: ${r.status} (${r.designs} ${r.epoch === null ? 'designs' : 'islands'}) ${r.file}`);
        },
      });
    },
  );
}

export function registerMergeCommand(cli: Argv): Argv {
  return cli.command(
    'merge <dir>',
    'check that every shard of a plan is complete and write them into one store',
    (y) =>
      y
        .positional('dir', { type: 'string', demandOption: true })
        .option('db', { type: 'string', describe: 'store to write (default: the plan\'s)' })
        .option('scratch', { type: 'string', describe: 'local scratch folder for the shard copies (default: $TMPDIR)' })
        .example('loopsmith merge /shared/atlas --db results/atlas.db', 'merge by hand'),
    async (args) => {
      const result = await mergePlan(args.dir, { ...(args.db !== undefined ? { db: args.db } : {}), ...(args.scratch !== undefined ? { scratch: args.scratch } : {}) });
      if (result.alreadyMerged) {
        out(`already merged into ${result.db} (run ${result.runId}); nothing written`);
        return;
      }
      if (result.removedLeftovers.length > 0) out(`removed ${result.removedLeftovers.length} leftover file(s) of interrupted tasks`);
      out(`merged into ${result.db}: run ${result.runId}, ${result.designs} designs, ${result.newEvaluations} new evaluations`);
    },
  );
}

export { ScaleError };
