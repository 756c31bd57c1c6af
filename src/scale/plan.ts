/**
 * `loopsmith plan`: a study cut into shards for a workload manager (Slurm job arrays). The plan
 * folder holds everything a shard needs (study text, settings hash, seed, ranges, versions), the
 * batch scripts, the shard results and their logs:
 *
 *     DIR/plan.json            the plan (see `Plan`)
 *     DIR/designs.json         rescore plans: the designs to score, in order
 *     DIR/shard.sbatch         one array task = one shard (index from SLURM_ARRAY_TASK_ID)
 *     DIR/merge.sbatch         the merge job
 *     DIR/submit.sh            submits the array(s) and the merge job (afterok)
 *     DIR/shards/…             finished shards (renamed in when complete)
 *     DIR/logs/…               Slurm output of every task
 */
import { createHash } from 'node:crypto';
import { existsSync, mkdirSync, readFileSync, renameSync, writeFileSync } from 'node:fs';
import { isAbsolute, join, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';
import { LoopsmithUserError } from '../core/errors.js';
import { designFromValues } from '../mechanics/designSpace.js';
import { designLayout } from '../optimizer/operators.js';
import { resolveIslandSettings } from '../optimizer/islands.js';
import { studyProblem, withEvaluatorNamespace } from '../run/problem.js';
import { gridDesigns } from '../run/sweep.js';
import { canonicalJson, Store } from '../store/store.js';
import { parseStudyText, type LoadedStudy } from '../study/parse.js';
import { programVersion } from '../core/version.js';
import { batchScripts } from './slurm.js';

/** A user error of plan, shard or merge (bad options, an incomplete or foreign plan). */
export class ScaleError extends LoopsmithUserError {}

export type PlanKind = 'sweep' | 'rescore' | 'islands';

export interface SlurmSettings {
  /** Partition for every job (null: the cluster's default). */
  readonly partition: string | null;
  /** CPUs per array task = evaluation workers per shard. */
  readonly cpusPerTask: number;
  /** Time limit per task in Slurm's notation (e.g. "02:00:00"), null for the partition default. */
  readonly time: string | null;
  /** Node-local scratch folder for shards (null: $TMPDIR, else the system's temporary folder). */
  readonly scratch: string | null;
}

export interface Plan {
  readonly format: 'loopsmith-plan';
  readonly formatVersion: 1;
  /** sha256 of the plan's canonical JSON without this field; every shard records it. */
  readonly id: string;
  readonly kind: PlanKind;
  readonly study: { readonly name: string; readonly source: string; readonly text: string; readonly fileHash: string };
  /** Evaluation settings hash (study settings and loopsmith version). */
  readonly settingsHash: string;
  readonly seed: number;
  readonly loopsmithVersion: string;
  readonly nodeVersion: string;
  readonly shards: number;
  /** Half-open index ranges per shard: designs (sweep, rescore) or islands (islands). */
  readonly ranges: readonly (readonly [number, number])[];
  readonly sweep: { readonly method: 'lhs' | 'grid'; readonly samples: number; readonly designs: number } | null;
  readonly rescore: { readonly database: string; readonly runId: number; readonly designs: number; readonly designsHash: string } | null;
  readonly islands: { readonly islands: number; readonly epochs: number; readonly generations: number; readonly population: number; readonly migrants: number } | null;
  /** Store the merge writes into (absolute). */
  readonly db: string;
  readonly slurm: SlurmSettings;
  /** The programs the batch scripts run (absolute paths, the same on every node). */
  readonly program: { readonly node: string; readonly cli: string };
}

export interface PlanOptions {
  readonly outDir: string;
  readonly shards: number;
  readonly db: string;
  readonly seed?: number;
  readonly sweep?: { readonly samples: number; readonly method: 'lhs' | 'grid' };
  readonly rescore?: { readonly database: string; readonly runId?: number };
  readonly islands?: { readonly islands: number; readonly epochs: number; readonly population?: number; readonly generations?: number; readonly migrants?: number };
  readonly slurm?: Partial<SlurmSettings>;
}

/** Half-open ranges that cut `count` items into `shards` nearly equal parts. */
export function shardRanges(count: number, shards: number): [number, number][] {
  return Array.from({ length: shards }, (_, k) => [Math.floor((k * count) / shards), Math.floor(((k + 1) * count) / shards)]);
}

export function shardName(index: number): string {
  return `shard-${String(index).padStart(4, '0')}`;
}

export function epochName(epoch: number): string {
  return `epoch-${String(epoch).padStart(3, '0')}`;
}

/** Folder of finished shard files: DIR/shards, or DIR/shards/epoch-NNN for island plans. */
export function shardFolder(dir: string, plan: Plan, epoch: number | null): string {
  return plan.kind === 'islands' ? join(dir, 'shards', epochName(epoch ?? 0)) : join(dir, 'shards');
}

function planHash(plan: Omit<Plan, 'id'>): string {
  return createHash('sha256').update(canonicalJson(plan)).digest('hex');
}

function cliPath(): string {
  return fileURLToPath(new URL('../../bin/loopsmith.js', import.meta.url));
}

/** Designs of the run to rescore, as value records in stored order (one per distinct design). */
function rescoreDesigns(database: string, runId: number | undefined): { runId: number; values: Record<string, number | string>[] } {
  if (!existsSync(database)) throw new ScaleError(`--rescore ${database}: no such database`);
  const store = Store.open(database);
  try {
    const run = runId !== undefined ? store.getRun(runId) : store.listRuns().filter((r) => r.kind !== 'evaluate').at(-1);
    if (!run) throw new ScaleError(`--rescore ${database}: ${runId !== undefined ? `no run ${runId}` : 'no run to rescore'}`);
    const last = store.lastGeneration(run.id);
    const byId = new Map<number, Record<string, number | string>>();
    for (let g = 0; last !== undefined && g <= last; g++) for (const m of store.generationMembers(run.id, g)) byId.set(m.id, m.variables);
    if (byId.size === 0) throw new ScaleError(`--rescore ${database}: run ${run.id} has no stored designs`);
    return { runId: run.id, values: [...byId.entries()].sort((a, b) => a[0] - b[0]).map(([, v]) => v) };
  } finally {
    store.close();
  }
}

function checkSlurm(s: Partial<SlurmSettings> | undefined): SlurmSettings {
  const cpusPerTask = s?.cpusPerTask ?? 1;
  if (!Number.isInteger(cpusPerTask) || cpusPerTask < 1) throw new ScaleError(`--cpus-per-task must be a whole number >= 1, got ${cpusPerTask}`);
  const partition = s?.partition ?? null;
  if (partition !== null && !/^[A-Za-z0-9_.,-]+$/.test(partition)) throw new ScaleError(`--partition "${partition}": letters, digits, "_", ".", "-" and "," only`);
  const time = s?.time ?? null;
  if (time !== null && !/^[0-9:-]+$/.test(time)) throw new ScaleError(`--time "${time}": use Slurm's notation, e.g. 02:00:00 or 1-00:00:00`);
  const scratch = s?.scratch ?? null;
  if (scratch !== null && !isAbsolute(scratch)) throw new ScaleError(`--scratch "${scratch}": give an absolute path on the compute nodes (e.g. /tmp or /local/scratch)`);
  return { partition, cpusPerTask, time, scratch };
}

/** Writes the plan, the designs of a rescore plan and the batch scripts into `options.outDir`. */
export function makePlan(loaded: LoadedStudy, options: PlanOptions): { plan: Plan; dir: string; files: string[] } {
  const kinds = [options.sweep, options.rescore, options.islands].filter((k) => k !== undefined).length;
  if (kinds !== 1) throw new ScaleError('give exactly one of --sweep N, --rescore DB, --islands K --epochs E');
  const dir = resolve(options.outDir);
  const sp = studyProblem(loaded.study);
  if (sp.variables.length === 0) throw new ScaleError(`${loaded.source}: this study has no design variables to shard`);
  const seed = options.seed ?? loaded.study.optimizer.seed;
  if (!Number.isInteger(options.shards) || options.shards < 1) throw new ScaleError(`--shards must be a whole number >= 1, got ${options.shards}`);
  const slurm = checkSlurm(options.slurm);

  let kind: PlanKind;
  let items: number;
  let sweep: Plan['sweep'] = null;
  let rescore: Plan['rescore'] = null;
  let islands: Plan['islands'] = null;
  let designValues: Record<string, number | string>[] | null = null;
  if (options.sweep) {
    kind = 'sweep';
    const { samples, method } = options.sweep;
    if (!Number.isInteger(samples) || samples < 1) throw new ScaleError(`--sweep must be a whole number of samples >= 1, got ${samples}`);
    items = method === 'grid' ? gridDesigns(designLayout(sp.problem), samples).length : samples;
    sweep = { method, samples, designs: items };
  } else if (options.rescore) {
    kind = 'rescore';
    const database = resolve(options.rescore.database);
    const found = rescoreDesigns(database, options.rescore.runId);
    for (const values of found.values) {
      try {
        designFromValues(sp.variables, values, true);
      } catch (error) {
        throw new ScaleError(`--rescore ${database}: run ${found.runId} does not have this study's design variables (${error instanceof Error ? error.message : String(error)})`);
      }
    }
    designValues = found.values;
    items = found.values.length;
    rescore = { database, runId: found.runId, designs: items, designsHash: createHash('sha256').update(JSON.stringify(found.values) + '\n').digest('hex') };
  } else {
    kind = 'islands';
    const o = options.islands!;
    const population = o.population ?? loaded.study.optimizer.population;
    const generations = (o.generations ?? loaded.study.optimizer.generations) - 1;
    let resolved;
    try {
      resolved = resolveIslandSettings({ islands: o.islands, epochs: o.epochs, generations, ...(o.migrants !== undefined ? { migrants: o.migrants } : {}), nsga2: { populationSize: population, seed } });
    } catch (error) {
      throw new ScaleError(`--islands/--epochs: ${error instanceof Error ? error.message : String(error)} (generations here count offspring generations, the study's generations minus 1)`);
    }
    islands = { islands: resolved.islands, epochs: resolved.epochs, generations: resolved.generations, population, migrants: resolved.migrants };
    items = resolved.islands;
  }
  if (options.shards > items) throw new ScaleError(`--shards ${options.shards} is more than the ${items} ${kind === 'islands' ? 'islands' : 'designs'} to share out`);

  const body: Omit<Plan, 'id'> = {
    format: 'loopsmith-plan',
    formatVersion: 1,
    kind,
    study: { name: loaded.study.name, source: loaded.source, text: loaded.text, fileHash: loaded.fileHash },
    settingsHash: loaded.settingsHash,
    seed,
    loopsmithVersion: programVersion(),
    nodeVersion: process.version,
    shards: options.shards,
    ranges: shardRanges(items, options.shards),
    sweep,
    rescore,
    islands,
    db: resolve(options.db),
    slurm,
    program: { node: process.execPath, cli: cliPath() },
  };
  const plan: Plan = { id: planHash(body), ...body };
  const planFile = join(dir, 'plan.json');
  if (existsSync(planFile)) {
    const previous = readPlan(dir);
    if (previous.id !== plan.id) {
      throw new ScaleError(`${dir} already holds another plan (${previous.kind} of ${previous.study.name}, id ${previous.id.slice(0, 12)}); choose another --out or delete that folder`);
    }
  }
  mkdirSync(join(dir, 'logs'), { recursive: true });
  mkdirSync(join(dir, 'shards'), { recursive: true });
  const files: string[] = [];
  const write = (name: string, text: string, mode = 0o644): void => {
    const path = join(dir, name);
    writeFileSync(`${path}.part`, text, { mode });
    renameSync(`${path}.part`, path);
    files.push(path);
  };
  if (designValues) write('designs.json', JSON.stringify(designValues) + '\n');
  for (const [name, text] of Object.entries(batchScripts(plan, dir))) write(name, text, name.endsWith('.sh') || name.endsWith('.sbatch') ? 0o755 : 0o644);
  write('plan.json', JSON.stringify(plan, null, 1) + '\n');
  return { plan, dir, files };
}

/** Reads and checks DIR/plan.json. */
export function readPlan(dirIn: string): Plan {
  const dir = resolve(dirIn);
  const file = join(dir, 'plan.json');
  let plan: Plan;
  try {
    plan = JSON.parse(readFileSync(file, 'utf8')) as Plan;
  } catch (error) {
    const code = (error as NodeJS.ErrnoException).code;
    throw new ScaleError(code === 'ENOENT' ? `${dir}: no plan.json here (make one with: loopsmith plan STUDY ... --out ${dirIn})` : `${file}: not a readable plan (${error instanceof Error ? error.message : String(error)})`);
  }
  if (plan.format !== 'loopsmith-plan' || plan.formatVersion !== 1) throw new ScaleError(`${file}: not a loopsmith plan of format version 1`);
  const { id, ...body } = plan;
  if (planHash(body) !== id) throw new ScaleError(`${file}: the plan was edited after it was made (its id does not match its content); make it again with loopsmith plan`);
  return plan;
}

/** The plan's study, loaded again and checked against the plan (same settings, same loopsmith and Node). */
export function planStudy(plan: Plan): LoadedStudy {
  if (plan.loopsmithVersion !== programVersion()) {
    throw new ScaleError(`the plan was made with loopsmith ${plan.loopsmithVersion}, this is loopsmith ${programVersion()}: every shard and the merge must run the same version (install ${plan.loopsmithVersion} on the nodes or make the plan again)`);
  }
  if (plan.nodeVersion !== process.version) {
    throw new ScaleError(`the plan was made with Node ${plan.nodeVersion}, this is Node ${process.version}: results may differ between Node versions, so every shard and the merge must run the same one`);
  }
  const loaded = withEvaluatorNamespace(parseStudyText(plan.study.text, plan.study.source), undefined);
  if (loaded.settingsHash !== plan.settingsHash) throw new ScaleError(`the plan's study gives settings hash ${loaded.settingsHash.slice(0, 12)}, the plan says ${plan.settingsHash.slice(0, 12)}: make the plan again`);
  return loaded;
}

/** Design value records of a rescore plan. */
export function planDesignValues(dir: string, plan: Plan): Record<string, number | string>[] {
  const file = join(resolve(dir), 'designs.json');
  const text = existsSync(file) ? readFileSync(file, 'utf8') : '';
  if (createHash('sha256').update(text).digest('hex') !== plan.rescore?.designsHash) throw new ScaleError(`${file}: missing or changed since the plan was made; make the plan again`);
  return JSON.parse(text) as Record<string, number | string>[];
}
