/**
 * `loopsmith export`: selects stored designs (the front of a run, or evaluation ids), builds their
 * candidate sheets and writes them as JSON sheets, one CSV table, or MJCF models.
 */
import { existsSync, mkdirSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { Ajv, type ErrorObject } from 'ajv';
import { FrontError, runFront } from '../run/front.js';
import { queryEvaluations } from '../store/query.js';
import { Store, type RunRow, type StoredEvaluation } from '../store/store.js';
import { parseStudyText, studySettingsHash } from '../study/parse.js';
import type { Study } from '../study/types.js';
import { ExportError, loopsmithVersion, sheetToJson } from './candidate.js';
import { candidateExport, type CandidateExport, type CandidateSheet as AnyCandidateSheet } from './candidate.js';
import { candidatesCsv } from './csv.js';
import { MJCF_TIMESTEP } from './mjcf.js';
import { mjcfCheckReference, runMjcfCheck, type MjcfCheckResult } from './mjcfCheck.js';
import { pacedCycle } from '../simulate/study.js';
import candidateSchema from './candidate.schema.json' with { type: 'json' };

import { EXPORT_FORMATS, type ExportFormat } from './request.js';

export { EXPORT_FORMATS, type ExportFormat };

export interface ExportSelection {
  /** The feasible Pareto front of the run (default: the latest optimization or sweep run). */
  readonly front?: boolean;
  /** Evaluation ids. */
  readonly ids?: readonly number[];
  /** Run whose study and provenance to use (with `front`: whose front). */
  readonly runId?: number;
}

export interface ExportOptions extends ExportSelection {
  readonly format: ExportFormat;
  /** Output folder, created when missing. */
  readonly outDir: string;
}

export interface ExportResult {
  readonly sheets: readonly AnyCandidateSheet[];
  /** Files written, in candidate order. */
  readonly files: readonly string[];
}

let validator: ReturnType<Ajv['compile']> | undefined;

/** Schema errors of a candidate sheet as parsed JSON (empty when it conforms to candidate.schema.json). */
export function candidateSchemaErrors(parsedJson: unknown): readonly ErrorObject[] {
  if (!validator) validator = new Ajv({ allErrors: true, strict: true }).compile(candidateSchema);
  return validator(parsedJson) ? [] : (validator.errors ?? []);
}

interface Selected {
  readonly run: RunRow;
  readonly study: Study;
  readonly studyFileHash: string;
  readonly settingsHash: string;
  readonly studyName: string;
  readonly evaluation: StoredEvaluation;
}

function runStudy(store: Store, dbPath: string, run: RunRow): { study: Study; fileHash: string; settingsHash: string; name: string } {
  const row = store.getStudy(run.studyId);
  if (!row) throw new ExportError(`${dbPath}: run ${run.id} has no stored study`);
  const loaded = parseStudyText(row.fileText, `${dbPath} (study of run ${run.id})`);
  return { study: loaded.study, fileHash: loaded.fileHash, settingsHash: loaded.settingsHash, name: row.name };
}

/** True when the study of run `otherRunId` has the same evaluation settings as `study` (program version aside). */
function sameStudySettings(store: Store, run: RunRow, otherRunId: number, study: Study): boolean {
  const other = store.getRun(otherRunId);
  const row = other ? store.getStudy(other.studyId) : undefined;
  if (!row) return false;
  if (other!.studyId === run.studyId) return true;
  return studySettingsHash(parseStudyText(row.fileText, `study of run ${otherRunId}`).study) === studySettingsHash(study);
}

/** The stored designs an export selection names, each with the run and study it is described by. */
export function selectCandidates(dbPath: string, selection: ExportSelection): Selected[] {
  if (!existsSync(dbPath)) throw new ExportError(`${dbPath}: no such database (run a study first: loopsmith run STUDY)`);
  const hasIds = selection.ids !== undefined;
  if (selection.front === true && hasIds) throw new ExportError('give either --front or --ids, not both');
  if (selection.front !== true && !hasIds) throw new ExportError('nothing selected: give --front or --ids ID,...');

  if (selection.front === true) {
    let front;
    try {
      front = runFront(dbPath, selection.runId);
    } catch (error) {
      if (error instanceof FrontError) throw new ExportError(error.message);
      throw error;
    }
    if (front.designs.length === 0) throw new ExportError(`${dbPath}: run ${front.runId} has no feasible design on its front: nothing to export`);
    const store = Store.open(dbPath);
    try {
      const run = store.getRun(front.runId)!;
      const s = runStudy(store, dbPath, run);
      return front.designs.map((evaluation) => ({ run, study: s.study, studyFileHash: s.fileHash, settingsHash: s.settingsHash, studyName: s.name, evaluation }));
    } finally {
      store.close();
    }
  }

  const ids = [...new Set(selection.ids!)];
  if (ids.length === 0) throw new ExportError('--ids: the list is empty: nothing to export');
  for (const id of ids) if (!Number.isSafeInteger(id) || id < 1) throw new ExportError(`--ids: "${id}" is not an evaluation id (positive integers)`);
  const found = queryEvaluations(dbPath, { where: `id IN (${ids.join(', ')})`, columns: ['id', 'eval_key'] }).rows;
  const keyById = new Map(found.map((row) => [row['id'] as number, row['eval_key'] as string]));
  const unknown = ids.filter((id) => !keyById.has(id));
  if (unknown.length > 0) {
    throw new ExportError(`${dbPath}: no evaluation with id ${unknown.join(', ')} (see: loopsmith query ${dbPath})`);
  }
  const store = Store.open(dbPath);
  try {
    const byKey = store.findEvaluations([...keyById.values()]);
    const fixedRun = selection.runId !== undefined ? store.getRun(selection.runId) : undefined;
    if (selection.runId !== undefined && !fixedRun) throw new ExportError(`${dbPath}: no run ${selection.runId} (see: loopsmith runs ${dbPath})`);
    const studies = new Map<number, ReturnType<typeof runStudy>>();
    return ids.map((id) => {
      const evaluation = byKey.get(keyById.get(id)!)!;
      if (evaluation.error !== null) throw new ExportError(`evaluation ${id} failed when it was evaluated (${evaluation.error}): nothing to export`);
      const run = fixedRun ?? store.getRun(evaluation.firstRunId);
      if (!run) throw new ExportError(`${dbPath}: evaluation ${id} names run ${evaluation.firstRunId}, which is not stored`);
      let s = studies.get(run.id);
      if (!s) {
        s = runStudy(store, dbPath, run);
        studies.set(run.id, s);
      }
      // Compared without the program version: an evaluation made by an earlier loopsmith still belongs to its run's study.
      if (run.id !== evaluation.firstRunId && !sameStudySettings(store, run, evaluation.firstRunId, s.study)) {
        throw new ExportError(`evaluation ${id} was computed with other study settings than run ${run.id}'s study; export it without --run or with the run that evaluated it (run ${evaluation.firstRunId})`);
      }
      return { run, study: s.study, studyFileHash: s.fileHash, settingsHash: evaluation.settingsHash, studyName: s.name, evaluation };
    });
  } finally {
    store.close();
  }
}

/** Sheets and MJCF writers of a selection (any architecture; a comparison design by its chosen member). */
export function candidateExports(dbPath: string, selection: ExportSelection): CandidateExport[] {
  const version = loopsmithVersion();
  return selectCandidates(dbPath, selection).map((s) => {
    try {
      return candidateExport(s.study, s.evaluation, {
        database: dbPath,
        evaluationId: s.evaluation.id,
        runId: s.run.id,
        runKind: s.run.kind,
        seed: s.run.seed,
        studyName: s.studyName,
        studyFileHash: s.studyFileHash,
        settingsHash: s.settingsHash,
        loopsmithVersion: version,
      });
    } catch (error) {
      if (error instanceof ExportError) throw new ExportError(`candidate ${s.evaluation.id}: ${error.message}`);
      throw error;
    }
  });
}

/** Candidate sheets of a selection (five-bar sheets for five-bar designs, architecture sheets otherwise). */
export function candidateSheets(dbPath: string, selection: ExportSelection): AnyCandidateSheet[] {
  return candidateExports(dbPath, selection).map((e) => e.sheet);
}

/** Selects, builds and writes; returns the sheets and the files written. */
export function exportCandidates(dbPath: string, options: ExportOptions): ExportResult {
  if (!EXPORT_FORMATS.includes(options.format)) throw new ExportError(`--format ${String(options.format)}: expected one of ${EXPORT_FORMATS.join(', ')}`);
  return writeExports(candidateExports(dbPath, options), options);
}

/** Writes built exports in the chosen format into the output folder. */
function writeExports(exports: readonly CandidateExport[], options: ExportOptions): ExportResult {
  const sheets = exports.map((e) => e.sheet);
  const texts: { name: string; text: string }[] = [];
  if (options.format === 'csv') {
    texts.push({ name: 'candidates.csv', text: candidatesCsv(sheets) });
  } else {
    for (const { sheet, mjcf } of exports) {
      if (options.format === 'json') {
        const text = sheetToJson(sheet);
        const errors = candidateSchemaErrors(JSON.parse(text));
        // A sheet that breaks its own schema is a bug in loopsmith, not a user error.
        if (errors.length > 0) throw new Error(`candidate ${sheet.id}: the sheet does not match candidate.schema.json: ${JSON.stringify(errors.slice(0, 3))}`);
        texts.push({ name: `candidate-${sheet.id}.json`, text });
      } else {
        texts.push({ name: `candidate-${sheet.id}.xml`, text: mjcf() });
      }
    }
  }
  try {
    mkdirSync(options.outDir, { recursive: true });
  } catch (error) {
    throw new ExportError(`${options.outDir}: cannot create the output folder (${(error as NodeJS.ErrnoException).code ?? String(error)})`);
  }
  const files = texts.map(({ name, text }) => {
    const path = join(options.outDir, name);
    writeFileSync(path, text);
    return path;
  });
  return { sheets, files };
}

/** The check sheet of one exported model (`candidate-<id>.check.json`). */
export interface MjcfCheckSheet extends MjcfCheckResult {
  readonly format: 'loopsmith-mjcf-check/1';
  readonly safetyNote: string;
  readonly id: number;
  readonly architecture: string;
  /** The checked file (its name in the output folder). */
  readonly model: string;
  readonly provenance: AnyCandidateSheet['provenance'];
}

export interface CheckedExportResult extends ExportResult {
  /** One check sheet per exported model, in candidate order. */
  readonly checks: readonly MjcfCheckSheet[];
}

/**
 * `export --format mjcf --verify`: writes the MJCF models as `exportCandidates` does, then runs each in
 * MuJoCo with its own settings against loopsmith's rigid simulation (mjcfCheck.ts) on the study's duty
 * cycle (or the standard motion around the home pose) and writes `candidate-<id>.check.json` beside it
 * with the end-point error, the loop gap and the verdict. Needs the optional package mujoco-js.
 */
export async function exportCandidatesChecked(dbPath: string, options: ExportOptions): Promise<CheckedExportResult> {
  if (options.format !== 'mjcf') throw new ExportError(`--verify checks MJCF models in MuJoCo: use it with --format mjcf (not ${String(options.format)})`);
  const exports = candidateExports(dbPath, options);
  const written = writeExports(exports, options);
  const checks: MjcfCheckSheet[] = [];
  const files = [...written.files];
  for (const [k, e] of exports.entries()) {
    if (!e.built || !e.home) throw new Error(`candidate ${e.sheet.id}: the export does not carry its design`);
    const trajectory = pacedCycle(e.built.study);
    const reference = mjcfCheckReference(e.built.architecture, e.built.model, trajectory, e.home, MJCF_TIMESTEP);
    const result = await runMjcfCheck(reference, e.mjcf());
    const sheet: MjcfCheckSheet = {
      format: 'loopsmith-mjcf-check/1',
      safetyNote: e.sheet.safetyNote,
      id: e.sheet.id,
      architecture: e.sheet.architecture,
      model: `candidate-${e.sheet.id}.xml`,
      ...result,
      provenance: e.sheet.provenance,
    };
    checks.push(sheet);
    const path = join(options.outDir, `candidate-${e.sheet.id}.check.json`);
    writeFileSync(path, sheetToJson(sheet));
    files.splice(2 * k + 1, 0, path);
  }
  return { sheets: written.sheets, files, checks };
}
