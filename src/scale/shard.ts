/**
 * `loopsmith shard`: one shard of a plan, written into a store on node-local scratch and moved into
 * the plan folder (copy to `NAME.part`, then rename) only when complete. A shard whose file is
 * already in the plan folder is a no-op, so requeued and resubmitted tasks are harmless.
 *
 * - sweep / rescore shard: one store with one run (kind sweep or rescore) holding the shard's
 *   designs in order, in chunks.
 * - island shard (one epoch): per island, the members it starts the epoch with (a run of kind
 *   evaluate, when the epoch is not the first), then its generations (a run of kind optimize); and
 *   per island a state file (the NSGA-II state and the records of its population) that the next
 *   epoch starts from after the ring migration.
 */
import { copyFileSync, existsSync, mkdirSync, mkdtempSync, readFileSync, renameSync, rmSync, unlinkSync, writeFileSync } from 'node:fs';
import { hostname, tmpdir } from 'node:os';
import { join } from 'node:path';
import { designFromValues } from '../mechanics/designSpace.js';
import { epochEndGeneration, migrate, resolveIslandSettings, runIslandEpoch, type IslandSettings } from '../optimizer/islands.js';
import type { Nsga2State } from '../optimizer/nsga2.js';
import { designLayout, latinHypercube } from '../optimizer/operators.js';
import { SeededRandom } from '../optimizer/random.js';
import { isFeasible } from '../optimizer/types.js';
import { EvaluationPool } from '../pool/pool.js';
import { startBatch } from '../run/batch.js';
import { evaluationKey, studyProblem, type StudyProblem } from '../run/problem.js';
import { gridDesigns } from '../run/sweep.js';
import { Store, type NewEvaluation, type StoredEvaluation } from '../store/store.js';
import type { LoadedStudy } from '../study/parse.js';
import { planDesignValues, planStudy, readPlan, ScaleError, shardFolder, shardName, type Plan } from './plan.js';

export interface ShardOptions {
  /** Shard index (default: SLURM_ARRAY_TASK_ID). */
  readonly index?: number;
  /** Epoch of an island plan (default: LOOPSMITH_EPOCH). */
  readonly epoch?: number;
  /** Every shard (and every epoch) on this machine, in order. */
  readonly all?: boolean;
  /** Evaluation workers (default: SLURM_CPUS_PER_TASK, else the plan's CPUs per task). */
  readonly workers?: number;
  /** Node-local scratch folder (default: the plan's, else $TMPDIR, else the system's). */
  readonly scratch?: string;
  readonly onShard?: (report: ShardReport) => void;
}

export interface ShardReport {
  readonly index: number;
  readonly epoch: number | null;
  readonly status: 'done' | 'already complete';
  readonly designs: number;
  readonly file: string;
}

/** Designs per stored chunk of a sweep or rescore shard (the same chunks as `loopsmith sweep`). */
export const CHUNK = 500;

/** Settings every shard run records, checked by the merge. */
export function shardProvenance(plan: Plan, index: number, epoch: number | null): Record<string, unknown> {
  return { plan: plan.id, shard: index, epoch, settingsHash: plan.settingsHash, loopsmithVersion: plan.loopsmithVersion, nodeVersion: plan.nodeVersion };
}

// ------------------------------------------------------------------ JSON with infinities

/** JSON in which ±Infinity survive (as {"$float": "Infinity"}). */
export function toJsonWithInfinity(value: unknown): string {
  return JSON.stringify(value, (_key, v: unknown) => (typeof v === 'number' && !Number.isFinite(v) && !Number.isNaN(v) ? { $float: v > 0 ? 'Infinity' : '-Infinity' } : v));
}

export function fromJsonWithInfinity<T>(text: string): T {
  return JSON.parse(text, (_key, v: unknown) => {
    if (v !== null && typeof v === 'object' && !Array.isArray(v) && Object.keys(v).length === 1 && '$float' in v) {
      return (v as { $float: string }).$float === 'Infinity' ? Infinity : -Infinity;
    }
    return v;
  }) as T;
}

export function recordOf(stored: StoredEvaluation): NewEvaluation {
  const { id: _id, firstRunId: _first, ...record } = stored;
  return record;
}

// ------------------------------------------------------------------ files

function scratchRoot(plan: Plan, options: ShardOptions): string {
  return options.scratch ?? plan.slurm.scratch ?? process.env['TMPDIR'] ?? tmpdir();
}

/** Copies a finished file into the plan folder under a temporary name, then renames it (atomic on one file system). */
export function moveInto(source: string, target: string): void {
  copyFileSync(source, `${target}.part`);
  renameSync(`${target}.part`, target);
}

function envInteger(name: string): number | undefined {
  const text = process.env[name];
  if (text === undefined || text === '') return undefined;
  if (!/^\d+$/.test(text)) throw new ScaleError(`${name}="${text}" is not a whole number`);
  return Number(text);
}

// ------------------------------------------------------------------ entry point

export async function runShards(dir: string, options: ShardOptions = {}): Promise<ShardReport[]> {
  const plan = readPlan(dir);
  const loaded = planStudy(plan);
  const reports: ShardReport[] = [];
  const epochs = plan.islands?.epochs ?? 1;
  const indexOf = (): number => {
    const index = options.index ?? envInteger('SLURM_ARRAY_TASK_ID');
    if (index === undefined) throw new ScaleError('which shard? give --index I (or --all); inside a Slurm array task the index comes from SLURM_ARRAY_TASK_ID');
    if (!Number.isInteger(index) || index < 0 || index >= plan.shards) throw new ScaleError(`--index ${index}: the plan has shards 0 to ${plan.shards - 1}`);
    return index;
  };
  const epochOf = (): number | null => {
    if (plan.kind !== 'islands') {
      if (options.epoch !== undefined) throw new ScaleError('--epoch is only for island plans');
      return null;
    }
    const epoch = options.epoch ?? envInteger('LOOPSMITH_EPOCH');
    if (epoch === undefined) throw new ScaleError(`which epoch? give --epoch E (0 to ${epochs - 1}) or --all; the batch script sets LOOPSMITH_EPOCH`);
    if (!Number.isInteger(epoch) || epoch < 0 || epoch >= epochs) throw new ScaleError(`--epoch ${epoch}: the plan has epochs 0 to ${epochs - 1}`);
    return epoch;
  };
  const jobs: [number | null, number][] = [];
  if (options.all === true) {
    if (options.index !== undefined || options.epoch !== undefined) throw new ScaleError('--all runs every shard: leave out --index and --epoch');
    for (let e = 0; e < epochs; e++) for (let i = 0; i < plan.shards; i++) jobs.push([plan.kind === 'islands' ? e : null, i]);
  } else {
    jobs.push([epochOf(), indexOf()]);
  }
  for (const [epoch, index] of jobs) {
    const report = await runOneShard(dir, plan, loaded, index, epoch, options);
    options.onShard?.(report);
    reports.push(report);
  }
  return reports;
}

async function runOneShard(dir: string, plan: Plan, loaded: LoadedStudy, index: number, epoch: number | null, options: ShardOptions): Promise<ShardReport> {
  const folder = shardFolder(dir, plan, epoch);
  const final = join(folder, `${shardName(index)}.db`);
  const [start, end] = plan.ranges[index]!;
  if (existsSync(final)) return { index, epoch, status: 'already complete', designs: end - start, file: final };
  mkdirSync(folder, { recursive: true });
  const marker = join(folder, `${shardName(index)}.running`);
  writeFileSync(marker, JSON.stringify({ host: hostname(), pid: process.pid, job: process.env['SLURM_JOB_ID'] ?? null, started: new Date().toISOString() }) + '\n');
  mkdirSync(scratchRoot(plan, options), { recursive: true });
  const scratch = mkdtempSync(join(scratchRoot(plan, options), `loopsmith-${plan.id.slice(0, 8)}-${shardName(index)}-`));
  const workers = options.workers ?? envInteger('SLURM_CPUS_PER_TASK') ?? plan.slurm.cpusPerTask;
  const sp = studyProblem(loaded.study);
  const pool = new EvaluationPool(loaded.study, sp.variables.length, sp.constraints.length, { workers });
  try {
    const store = Store.open(join(scratch, 'shard.db'));
    let designs: number;
    let states: Map<number, string> = new Map();
    try {
      const studyId = store.upsertStudy({ name: loaded.study.name, architecture: loaded.study.architecture, fileText: loaded.text, settingsHash: loaded.settingsHash });
      store.ensureColumns(sp.columns);
      if (plan.kind === 'islands') {
        states = await islandShard(dir, plan, loaded, sp, store, studyId, pool, index, epoch!);
        designs = end - start;
      } else {
        designs = await designShard(dir, plan, loaded, sp, store, studyId, pool, index);
      }
    } finally {
      store.close(); // checkpoints the WAL: the file alone is the whole store
    }
    for (const [island, text] of states) {
      const local = join(scratch, `island-${island}.json`);
      writeFileSync(local, text);
      moveInto(local, join(folder, `island-${String(island).padStart(4, '0')}.json`));
    }
    moveInto(join(scratch, 'shard.db'), final);
    return { index, epoch, status: 'done', designs, file: final };
  } finally {
    await pool.close();
    rmSync(scratch, { recursive: true, force: true });
    try {
      unlinkSync(marker);
    } catch {
      // a merge may have tidied it away already
    }
  }
}

// ------------------------------------------------------------------ sweep and rescore shards

/** Every design of a sweep or rescore plan, in design order (cheap next to evaluating them). */
export function planDesigns(dir: string, plan: Plan, sp: StudyProblem): Float64Array[] {
  if (plan.kind === 'rescore') return planDesignValues(dir, plan).map((values) => designFromValues(sp.variables, values, true));
  const layout = designLayout(sp.problem);
  const sweep = plan.sweep!;
  return sweep.method === 'grid' ? gridDesigns(layout, sweep.samples) : latinHypercube(sweep.samples, layout, new SeededRandom(plan.seed));
}

async function designShard(dir: string, plan: Plan, loaded: LoadedStudy, sp: StudyProblem, store: Store, studyId: number, pool: EvaluationPool, index: number): Promise<number> {
  const [start, end] = plan.ranges[index]!;
  const designs = planDesigns(dir, plan, sp).slice(start, end);
  const runId = store.createRun({ studyId, kind: plan.kind === 'rescore' ? 'rescore' : 'sweep', seed: plan.seed, settings: { ...shardProvenance(plan, index, null), start, end }, workers: pool.workers });
  for (let from = 0, generation = 0; from < designs.length; from += CHUNK, generation++) {
    const part = designs.slice(from, from + CHUNK);
    const t0 = performance.now();
    const result = await startBatch(store, pool, sp, loaded, part).result;
    const elapsed = (performance.now() - t0) / 1000;
    store.writeGeneration({
      runId,
      generation,
      newEvaluations: result.newRecords,
      members: result.keys.map((key) => ({ key, rank: -1, crowding: 0 })),
      stats: {
        evaluations: part.length,
        newEvaluations: result.newRecords.length,
        failed: result.failed,
        feasibleCount: result.evaluations.filter(isFeasible).length,
        hypervolume: null,
        elapsedSeconds: elapsed,
        evaluationsPerSecond: elapsed > 0 ? result.newRecords.length / elapsed : 0,
      },
      optimizerState: null,
    });
  }
  store.markRun(runId, 'finished');
  return designs.length;
}

// ------------------------------------------------------------------ island shards

/** What an island carries from one epoch to the next: its NSGA-II state and its population's records. */
export interface IslandFile {
  readonly plan: string;
  readonly island: number;
  readonly epoch: number;
  readonly nsga2: Nsga2State;
  readonly records: readonly NewEvaluation[];
}

export function islandSettings(plan: Plan): IslandSettings {
  const i = plan.islands!;
  return { islands: i.islands, epochs: i.epochs, generations: i.generations, migrants: i.migrants, nsga2: { populationSize: i.population, seed: plan.seed } };
}

/** The islands' starts for `epoch`: the previous epoch's end states after ring migration, with their records. */
function islandStarts(dir: string, plan: Plan, sp: StudyProblem, epoch: number): { states: Nsga2State[]; records: Map<string, NewEvaluation> } {
  const K = plan.islands!.islands;
  const folder = shardFolder(dir, plan, epoch - 1);
  const files: IslandFile[] = [];
  const missing: number[] = [];
  for (let island = 0; island < K; island++) {
    const path = join(folder, `island-${String(island).padStart(4, '0')}.json`);
    if (!existsSync(path)) {
      missing.push(island);
      continue;
    }
    const file = fromJsonWithInfinity<IslandFile>(readFileSync(path, 'utf8'));
    if (file.plan !== plan.id) throw new ScaleError(`${path} belongs to another plan (${file.plan.slice(0, 12)})`);
    files.push(file);
  }
  if (missing.length > 0) {
    throw new ScaleError(`epoch ${epoch} starts from epoch ${epoch - 1}, which is not complete (islands ${missing.join(', ')} missing in ${folder}); run epoch ${epoch - 1} first`);
  }
  const records = new Map<string, NewEvaluation>();
  for (const file of files) for (const r of file.records) records.set(r.key, r);
  return { states: migrate(sp.problem, islandSettings(plan), files.map((f) => f.nsga2)), records };
}

async function islandShard(dir: string, plan: Plan, loaded: LoadedStudy, sp: StudyProblem, store: Store, studyId: number, pool: EvaluationPool, index: number, epoch: number): Promise<Map<number, string>> {
  const settings = islandSettings(plan);
  const resolved = resolveIslandSettings(settings);
  const [first, last] = plan.ranges[index]!;
  const starts = epoch > 0 ? islandStarts(dir, plan, sp, epoch) : null;
  const firstGeneration = epoch === 0 ? 0 : epochEndGeneration(resolved, epoch - 1) + 1;
  const out = new Map<number, string>();
  const keyOf = (design: ArrayLike<number>): string => evaluationKey(loaded.settingsHash, Float64Array.from(design));
  for (let island = first; island < last; island++) {
    const provenance = { ...shardProvenance(plan, index, epoch), island, firstGeneration };
    const start = starts ? starts.states[island]! : null;
    if (start) {
      // The members the island starts with (its own and the migrants) enter this store first.
      const carried = start.population.map((p) => starts!.records.get(keyOf(p.design)));
      if (carried.some((r) => r === undefined)) throw new ScaleError(`island ${island}: a member of its start population has no record in epoch ${epoch - 1}'s island files`);
      const carryRun = store.createRun({ studyId, kind: 'evaluate', seed: plan.seed, settings: { ...provenance, carried: true }, workers: pool.workers });
      store.writeGeneration({
        runId: carryRun,
        generation: 0,
        newEvaluations: carried as NewEvaluation[],
        members: carried.map((r) => ({ key: r!.key, rank: -1, crowding: 0 })),
        stats: { evaluations: carried.length, newEvaluations: carried.length, failed: 0, feasibleCount: carried.filter((r) => r!.feasible).length, hypervolume: null, elapsedSeconds: 0, evaluationsPerSecond: 0 },
        optimizerState: null,
      });
      store.markRun(carryRun, 'finished');
    }
    const runId = store.createRun({ studyId, kind: 'optimize', seed: plan.seed, settings: provenance, workers: pool.workers });
    let batch: Awaited<ReturnType<typeof startBatch>['result']> | undefined;
    let generation = 0;
    let t0 = performance.now();
    const end = await runIslandEpoch(
      sp.problem,
      settings,
      island,
      epoch,
      start,
      async (designs) => {
        t0 = performance.now();
        batch = await startBatch(store, pool, sp, loaded, designs).result;
        return batch.evaluations;
      },
      (report) => {
        const elapsed = (performance.now() - t0) / 1000;
        store.writeGeneration({
          runId,
          generation: generation++,
          newEvaluations: batch!.newRecords,
          members: report.population.map((m) => ({ key: keyOf(m.design), rank: m.rank, crowding: m.crowding })),
          stats: {
            evaluations: report.told.length,
            newEvaluations: batch!.newRecords.length,
            failed: batch!.failed,
            feasibleCount: report.population.filter((m) => isFeasible(m.evaluation)).length,
            hypervolume: null,
            elapsedSeconds: elapsed,
            evaluationsPerSecond: elapsed > 0 ? batch!.newRecords.length / elapsed : 0,
          },
          optimizerState: null,
        });
      },
    );
    store.markRun(runId, 'finished');
    const keys = end.population.map((p) => keyOf(p.design));
    const found = store.findEvaluations(keys);
    const file: IslandFile = { plan: plan.id, island, epoch, nsga2: end, records: keys.map((k) => recordOf(found.get(k)!)) };
    out.set(island, toJsonWithInfinity(file) + '\n');
  }
  return out;
}
