/**
 * `loopsmith merge`: every shard of a plan into one store, in design order, each design once (by its
 * content hash, the evaluation key). The result is the store that the same work on one machine
 * writes (`loopsmith sweep`, `loopsmith rescore`, or an island run), timings aside.
 *
 * Before anything is written the merge checks that every shard is present, complete and made by
 * this plan with the same settings hash, loopsmith and Node; on a gap it names the missing shards
 * and the command that resubmits only those. Leftovers of killed tasks (`*.part`, `*-wal`, `*-shm`,
 * `*.running`) are never read, and are removed once the merge goes ahead. Shard files are copied to
 * local scratch before they are opened: SQLite must not open files on a shared file system.
 */
import { copyFileSync, existsSync, mkdtempSync, readdirSync, readFileSync, renameSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join, resolve } from 'node:path';
import { epochEndGeneration, resolveIslandSettings } from '../optimizer/islands.js';
import { isFeasible } from '../optimizer/types.js';
import { nonDominated } from '../run/front.js';
import { recordFinalHypervolumes } from '../run/optimize.js';
import { evaluationFromStored, studyProblem, type StudyProblem } from '../run/problem.js';
import { Store, type NewEvaluation, type RunRow } from '../store/store.js';
import { queryEvaluations } from '../store/query.js';
import { planStudy, readPlan, ScaleError, shardFolder, shardName, type Plan } from './plan.js';
import { CHUNK, islandSettings, moveInto, recordOf, shardProvenance } from './shard.js';
import { shellQuote } from './slurm.js';

export interface MergeOptions {
  /** Store to write (default: the plan's). */
  readonly db?: string;
  /** Local scratch folder for the copies of the shard files (default: $TMPDIR, else the system's). */
  readonly scratch?: string;
}

export interface MergeResult {
  readonly db: string;
  readonly runId: number;
  readonly designs: number;
  readonly newEvaluations: number;
  readonly removedLeftovers: readonly string[];
  /** True when this plan had already been merged into this store (nothing written again). */
  readonly alreadyMerged: boolean;
}

/** DIR/merged.json: the stores this plan was merged into, so that a repeated (or requeued) merge job writes nothing twice. */
interface MergeRecord {
  readonly db: string;
  readonly runId: number;
  readonly designs: number;
}

function mergeRecords(dir: string): MergeRecord[] {
  const file = join(dir, 'merged.json');
  return existsSync(file) ? (JSON.parse(readFileSync(file, 'utf8')) as MergeRecord[]) : [];
}

function previousMerge(dir: string, db: string): MergeRecord | undefined {
  const record = mergeRecords(dir).find((r) => r.db === db);
  if (!record || !existsSync(db)) return undefined;
  const store = Store.open(db);
  try {
    return store.getRun(record.runId)?.status === 'finished' ? record : undefined;
  } finally {
    store.close();
  }
}

function recordMerge(dir: string, db: string, runId: number, designs: number): void {
  const records = mergeRecords(dir).filter((r) => r.db !== db);
  records.push({ db, runId, designs });
  const file = join(dir, 'merged.json');
  writeFileSync(`${file}.part`, JSON.stringify(records, null, 1) + '\n');
  renameSync(`${file}.part`, file);
}

const LEFTOVER = /(\.part|-wal|-shm|\.running)$/;

/** Missing shard indices per epoch (one entry, epoch null, for sweep and rescore plans). */
export function missingShards(dir: string, plan: Plan): { epoch: number | null; shards: number[] }[] {
  const epochs = plan.kind === 'islands' ? Array.from({ length: plan.islands!.epochs }, (_, e) => e) : [null];
  return epochs
    .map((epoch) => ({ epoch, shards: Array.from({ length: plan.shards }, (_, i) => i).filter((i) => !existsSync(join(shardFolder(dir, plan, epoch), `${shardName(i)}.db`))) }))
    .filter((m) => m.shards.length > 0);
}

function gapMessage(dir: string, plan: Plan, missing: { epoch: number | null; shards: number[] }[]): string {
  const first = missing[0]!;
  const list = first.shards.join(',');
  const where = first.epoch === null ? '' : ` of epoch ${first.epoch}`;
  const lines = missing.map((m) => `  ${m.epoch === null ? '' : `epoch ${m.epoch}: `}shards ${m.shards.join(', ')} missing`);
  const fromEpoch = first.epoch !== null && first.epoch > 0 ? ` --from-epoch ${first.epoch}` : '';
  return (
    `${dir}: the plan is not complete, nothing was merged:\n${lines.join('\n')}\n` +
    `Resubmit only the missing shards${where}${first.epoch !== null && first.epoch < plan.islands!.epochs - 1 ? ' (and the later epochs)' : ''} and the merge:\n` +
    `  bash ${shellQuote(join(dir, 'submit.sh'))}${fromEpoch} --only ${list}\n` +
    `or run them here: ${first.shards.map((i) => `loopsmith shard ${shellQuote(dir)} --index ${i}${first.epoch === null ? '' : ` --epoch ${first.epoch}`}`).join('; ')}`
  );
}

function removeLeftovers(folder: string): string[] {
  if (!existsSync(folder)) return [];
  const removed: string[] = [];
  for (const entry of readdirSync(folder, { withFileTypes: true })) {
    const path = join(folder, entry.name);
    if (entry.isDirectory()) removed.push(...removeLeftovers(path));
    else if (LEFTOVER.test(entry.name)) {
      rmSync(path, { force: true });
      removed.push(path);
    }
  }
  return removed;
}

/** A shard file opened from a private copy on local scratch, checked against the plan. */
interface OpenShard {
  readonly store: Store;
  readonly runs: { run: RunRow; settings: Record<string, unknown> }[];
}

function openShard(dir: string, plan: Plan, epoch: number | null, index: number, scratch: string): OpenShard {
  const file = join(shardFolder(dir, plan, epoch), `${shardName(index)}.db`);
  const copy = join(scratch, `${epoch ?? 'x'}-${shardName(index)}.db`);
  if (!existsSync(copy)) copyFileSync(file, copy);
  const store = Store.open(copy);
  const runs = store.listRuns().map((run) => ({ run, settings: JSON.parse(run.settingsJson) as Record<string, unknown> }));
  const expected = shardProvenance(plan, index, epoch);
  const bad = (why: string): never => {
    store.close();
    throw new ScaleError(`${file}: ${why}; delete this file and run the shard again (loopsmith shard ${shellQuote(dir)} --index ${index}${epoch === null ? '' : ` --epoch ${epoch}`})`);
  };
  if (runs.length === 0) bad('holds no run');
  for (const { run, settings } of runs) {
    for (const [key, value] of Object.entries(expected)) {
      if (settings[key] !== value) bad(`was made with ${key} = ${JSON.stringify(settings[key])}, the plan needs ${JSON.stringify(value)}`);
    }
    if (run.status !== 'finished') bad(`run ${run.id} is ${run.status}, not finished`);
  }
  return { store, runs };
}

/** Records of a shard run's generations in member order (sweep and rescore shards). */
function* memberRecords(shard: OpenShard, runId: number): Generator<NewEvaluation> {
  const last = shard.store.lastGeneration(runId);
  for (let g = 0; last !== undefined && g <= last; g++) for (const m of shard.store.generationMembers(runId, g)) yield recordOf(m);
}

export async function mergePlan(dirIn: string, options: MergeOptions = {}): Promise<MergeResult> {
  const dir = resolve(dirIn);
  const plan = readPlan(dir);
  const loaded = planStudy(plan);
  const db = resolve(options.db ?? plan.db);
  const done = previousMerge(dir, db);
  if (done) return { db, runId: done.runId, designs: done.designs, newEvaluations: 0, removedLeftovers: [], alreadyMerged: true };
  const missing = missingShards(dir, plan);
  if (missing.length > 0) throw new ScaleError(gapMessage(dir, plan, missing));
  const removedLeftovers = removeLeftovers(join(dir, 'shards'));
  const scratchRoot = options.scratch ?? process.env['TMPDIR'] ?? tmpdir();
  const scratch = mkdtempSync(join(scratchRoot, `loopsmith-merge-${plan.id.slice(0, 8)}-`));
  // A new store is written on scratch and moved in whole; an existing one is extended in place.
  const fresh = !existsSync(db);
  const target = fresh ? join(scratch, 'merged.db') : db;
  try {
    const store = Store.open(target);
    let result: Omit<MergeResult, 'db' | 'removedLeftovers' | 'alreadyMerged'>;
    try {
      const sp = studyProblem(loaded.study);
      const studyId = store.upsertStudy({ name: loaded.study.name, architecture: loaded.study.architecture, fileText: loaded.text, settingsHash: loaded.settingsHash });
      store.ensureColumns(sp.columns);
      const shards = (epoch: number | null): OpenShard[] => Array.from({ length: plan.shards }, (_, i) => openShard(dir, plan, epoch, i, scratch));
      const one = (i: number): OpenShard => openShard(dir, plan, null, i, scratch);
      // Every shard is checked before anything is written; then they are read one at a time.
      for (const epoch of plan.kind === 'islands' ? Array.from({ length: plan.islands!.epochs }, (_, e) => e) : [null]) {
        for (let i = 0; i < plan.shards; i++) openShard(dir, plan, epoch, i, scratch).store.close();
      }
      if (plan.kind === 'islands') result = mergeIslands(plan, sp, store, studyId, shards);
      else if (plan.kind === 'sweep') result = mergeSweep(plan, sp, store, studyId, one);
      else result = mergeRescore(plan, sp, store, studyId, one, db);
    } finally {
      store.close();
    }
    if (fresh) moveInto(target, db);
    recordMerge(dir, db, result.runId, result.designs);
    return { db, removedLeftovers, alreadyMerged: false, ...result };
  } finally {
    rmSync(scratch, { recursive: true, force: true });
  }
}

/** Chunks of designs written as `loopsmith sweep` writes them: each design once, cached ones reused. */
function writeChunk(store: Store, sp: StudyProblem, runId: number, generation: number, records: readonly NewEvaluation[], ranking?: (k: number) => number): number {
  const cached = store.findEvaluations(records.map((r) => r.key));
  const seen = new Set<string>();
  const fresh = records.filter((r) => !cached.has(r.key) && !seen.has(r.key) && (seen.add(r.key), true));
  store.writeGeneration({
    runId,
    generation,
    newEvaluations: fresh,
    members: records.map((r, k) => ({ key: r.key, rank: ranking ? ranking(k) : -1, crowding: 0 })),
    stats: {
      evaluations: records.length,
      newEvaluations: fresh.length,
      failed: fresh.filter((r) => r.error !== null).length,
      feasibleCount: records.filter((r) => isFeasible(evaluationFromStored(sp, { ...r, id: 0, firstRunId: 0 }))).length,
      hypervolume: null,
      elapsedSeconds: 0,
      evaluationsPerSecond: 0,
    },
    optimizerState: null,
  });
  return fresh.length;
}

function mergeSweep(plan: Plan, sp: StudyProblem, store: Store, studyId: number, open: (index: number) => OpenShard): Omit<MergeResult, 'db' | 'removedLeftovers' | 'alreadyMerged'> {
  const sweep = plan.sweep!;
  const runId = store.createRun({ studyId, kind: 'sweep', seed: plan.seed, settings: { method: sweep.method, samples: sweep.samples, designs: sweep.designs }, workers: plan.slurm.cpusPerTask });
  let chunk: NewEvaluation[] = [];
  let generation = 0;
  let designs = 0;
  let added = 0;
  for (let index = 0; index < plan.shards; index++) {
    const shard = open(index);
    try {
      for (const record of memberRecords(shard, shard.runs[0]!.run.id)) {
        chunk.push(record);
        designs++;
        if (chunk.length === CHUNK) {
          added += writeChunk(store, sp, runId, generation++, chunk);
          chunk = [];
        }
      }
    } finally {
      shard.store.close();
    }
  }
  if (chunk.length > 0) added += writeChunk(store, sp, runId, generation++, chunk);
  if (designs !== sweep.designs) throw new ScaleError(`the shards hold ${designs} designs, the plan ${sweep.designs}`);
  store.markRun(runId, 'finished');
  return { runId, designs, newEvaluations: added };
}

/** As `loopsmith rescore` (full evaluation): one generation, rank 0 = feasible front, 1 = other feasible, 2 = the rest. */
function mergeRescore(plan: Plan, sp: StudyProblem, store: Store, studyId: number, open: (index: number) => OpenShard, db: string): Omit<MergeResult, 'db' | 'removedLeftovers' | 'alreadyMerged'> {
  const records: NewEvaluation[] = [];
  for (let index = 0; index < plan.shards; index++) {
    const shard = open(index);
    try {
      for (const r of memberRecords(shard, shard.runs[0]!.run.id)) records.push(r);
    } finally {
      shard.store.close();
    }
  }
  const r = plan.rescore!;
  if (records.length !== r.designs) throw new ScaleError(`the shards hold ${records.length} designs, the plan ${r.designs}`);
  const evaluations = records.map((rec) => evaluationFromStored(sp, { ...rec, id: 0, firstRunId: 0 }));
  const minimised = (k: number): number[] => evaluations[k]!.objectives.map((v, i) => (sp.study.objectives[i]!.sense === 'max' ? -v : v));
  const feasible = records.map((_, k) => k).filter((k) => isFeasible(evaluations[k]!));
  const front = new Set(nonDominated(feasible, minimised));
  const parent = resolve(db) === resolve(r.database) ? r.runId : null;
  const runId = store.createRun({ studyId, kind: 'rescore', parentRunId: parent, seed: plan.seed, settings: { from: r.runId, mode: 'full', database: r.database }, workers: plan.slurm.cpusPerTask });
  const added = writeChunk(store, sp, runId, 0, records, (k) => (front.has(k) ? 0 : isFeasible(evaluations[k]!) ? 1 : 2));
  store.markRun(runId, 'finished', `rescore of run ${r.runId} of ${r.database} (full, merged from ${plan.shards} shards)`);
  return { runId, designs: records.length, newEvaluations: added };
}

/**
 * One optimize run: generation g holds every island's population side by side (island order, then
 * population order; rank and crowding as on the island), and the designs the islands evaluated in
 * that generation, island by island in the order they were told.
 */
function mergeIslands(plan: Plan, sp: StudyProblem, store: Store, studyId: number, openEpoch: (epoch: number) => OpenShard[]): Omit<MergeResult, 'db' | 'removedLeftovers' | 'alreadyMerged'> {
  const settings = resolveIslandSettings(islandSettings(plan));
  const i = plan.islands!;
  const runId = store.createRun({
    studyId,
    kind: 'optimize',
    seed: plan.seed,
    settings: { algorithm: 'nsga2-islands', islands: i.islands, epochs: i.epochs, population: i.population, migrants: i.migrants, generations: i.generations + 1, seed: plan.seed, crossoverProbability: 0.9, crossoverEta: 20, mutationEta: 20 },
    workers: plan.slurm.cpusPerTask,
  });
  let designs = 0;
  let added = 0;
  let generation = 0;
  for (let epoch = 0; epoch < i.epochs; epoch++) {
    const shards = openEpoch(epoch);
    try {
      const islands = islandRuns(plan, shards, epoch);
      const epochGenerations = epochEndGeneration(settings, epoch) - (epoch === 0 ? -1 : epochEndGeneration(settings, epoch - 1));
      for (let local = 0; local < epochGenerations; local++, generation++) {
        const told: NewEvaluation[] = [];
        const members: { key: string; rank: number; crowding: number }[] = [];
        const memberRecords: NewEvaluation[] = [];
        let evaluations = 0;
        let elapsed = 0;
        for (const island of islands) {
          told.push(...island.toldByGeneration[local]!);
          const stats = island.stats[local]!;
          evaluations += stats.evaluations;
          elapsed += stats.elapsedSeconds;
          for (const m of island.shard.store.generationMembers(island.runId, local)) {
            members.push({ key: m.key, rank: m.rank, crowding: m.crowding });
            memberRecords.push(recordOf(m));
          }
        }
        const cached = store.findEvaluations([...told, ...memberRecords].map((r) => r.key));
        const seen = new Set<string>();
        const fresh = [...told, ...memberRecords].filter((r) => !cached.has(r.key) && !seen.has(r.key) && (seen.add(r.key), true));
        store.writeGeneration({
          runId,
          generation,
          newEvaluations: fresh,
          members,
          stats: {
            evaluations,
            newEvaluations: fresh.length,
            failed: fresh.filter((r) => r.error !== null).length,
            feasibleCount: memberRecords.filter((r) => isFeasible(evaluationFromStored(sp, { ...r, id: 0, firstRunId: 0 }))).length,
            hypervolume: null,
            elapsedSeconds: elapsed,
            evaluationsPerSecond: elapsed > 0 ? fresh.length / elapsed : 0,
          },
          optimizerState: null,
        });
        designs += evaluations;
        added += fresh.length;
      }
    } finally {
      for (const shard of shards) shard.store.close();
    }
  }
  recordFinalHypervolumes(store, runId, sp);
  store.markRun(runId, 'finished', `${i.islands} islands, ${i.epochs} epochs`);
  return { runId, designs, newEvaluations: added };
}

interface IslandRun {
  readonly shard: OpenShard;
  readonly runId: number;
  readonly stats: ReturnType<Store['generationStats']>;
  /** Records the island stored in each generation of the epoch, in the order it told them. */
  readonly toldByGeneration: NewEvaluation[][];
}

function islandRuns(plan: Plan, shards: OpenShard[], epoch: number): IslandRun[] {
  const runs: IslandRun[] = [];
  for (let island = 0; island < plan.islands!.islands; island++) {
    const index = plan.ranges.findIndex(([a, b]) => island >= a && island < b);
    const shard = shards[index]!;
    const found = shard.runs.find((r) => r.run.kind === 'optimize' && r.settings['island'] === island);
    if (!found) throw new ScaleError(`epoch ${epoch}, shard ${index}: no run of island ${island}`);
    const stats = shard.store.generationStats(found.run.id);
    // Evaluations first stored by the island's run, in id order = the order they were told.
    const keys = queryEvaluations(shard.store.path, { where: `first_run_id = ${found.run.id}`, orderBy: 'id', columns: ['eval_key'] }).rows.map((row) => String(row['eval_key']));
    const byKey = shard.store.findEvaluations(keys);
    const toldByGeneration: NewEvaluation[][] = [];
    let offset = 0;
    for (const s of stats) {
      toldByGeneration.push(keys.slice(offset, offset + s.newEvaluations).map((k) => recordOf(byKey.get(k)!)));
      offset += s.newEvaluations;
    }
    if (offset !== keys.length) throw new ScaleError(`epoch ${epoch}, shard ${index}: island ${island} stored ${keys.length} evaluations, its generations count ${offset}`);
    runs.push({ shard, runId: found.run.id, stats, toldByGeneration });
  }
  return runs;
}
