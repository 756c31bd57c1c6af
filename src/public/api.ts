/**
 * The main entry points of the programmatic API as src/index.ts exports them: the engine's own
 * functions behind argument checks (src/public/arguments.ts). A function that takes a study accepts
 * both what `loadStudyFile` returns and its `.study`; overrides may be `["NAME=VALUE"]` or
 * `{ NAME: VALUE }`. The asynchronous ones report a wrong argument as a rejected promise. The CLI
 * calls the engine's functions directly.
 */
import * as design from '../api/design.js';
import * as summary from '../api/studySummary.js';
import { designVariables as engineDesignVariables, type DesignVariable } from '../mechanics/designSpace.js';
import { Evaluator as EngineEvaluator, type DesignEvaluation } from '../mechanics/evaluate.js';
import type { PoolOptions } from '../pool/pool.js';
import { renderWorkspaceMap as engineRenderWorkspaceMap, workspaceMapSpec as engineWorkspaceMapSpec, type WorkspaceMapOptions, type WorkspaceMapSpec } from '../report/map.js';
import { writeReport as engineWriteReport, type ReportData } from '../report/report.js';
import { runFront as engineRunFront, type FrontResult } from '../run/front.js';
import { runOptimization as engineRunOptimization, type RunOptions, type RunSummary } from '../run/optimize.js';
import { rescoreRun as engineRescoreRun, type RescoreOptions, type RescoreResult } from '../run/rescore.js';
import { runSweep as engineRunSweep, type SweepOptions } from '../run/sweep.js';
import { queryEvaluations as engineQueryEvaluations, type QueryOptions, type QueryResult } from '../store/query.js';
import { loadStudyFile as engineLoadStudyFile, parseStudyText as engineParseStudyText, type LoadedStudy } from '../study/parse.js';
import type { Study } from '../study/types.js';
import { EXPORT_FORMATS, exportCandidates as engineExportCandidates, type ExportOptions, type ExportResult } from '../export/export.js';
import { checkArguments, is, overridesArgument, studyArgument, type DesignOverrides, type OptionRules } from './arguments.js';

/** A study in either shape the API accepts. */
export type StudyInput = Study | LoadedStudy;

const DB_PATH = is.text('path of the SQLite database');
const RUN_ID = is.optional(is.integer(1, 'a run id'));
const POOL_RULES: OptionRules<PoolOptions> = {
  workers: is.optional(is.integer(1, 'worker threads')),
  batchSize: is.optional(is.integer(1, 'designs a thread takes at a time')),
  evaluatorModule: is.optional(is.text('module exporting createEvaluator')),
};

export function loadStudyFile(path: string): LoadedStudy {
  checkArguments('loadStudyFile', { path: [path, is.text('path of a study file')] });
  return engineLoadStudyFile(path);
}

export function parseStudyText(text: string, source?: string): LoadedStudy {
  checkArguments('parseStudyText', { text: [text, is.text('the YAML text of a study')], source: [source, is.optional(is.text('a name for messages'))] });
  return engineParseStudyText(text, source);
}

export function designVariables(study: StudyInput): DesignVariable[] {
  return engineDesignVariables(studyArgument('designVariables', study));
}

export function chooseDesign(study: StudyInput, overrides?: DesignOverrides): design.DesignChoice {
  return design.chooseDesign(studyArgument('chooseDesign', study), overridesArgument('chooseDesign', overrides));
}

export function evaluateDesign(study: StudyInput, overrides?: DesignOverrides): ReturnType<typeof design.evaluateDesign> {
  return design.evaluateDesign(studyArgument('evaluateDesign', study), overridesArgument('evaluateDesign', overrides));
}

/** What `loopsmith check` reports: throws a StudyError when the study cannot succeed, else warnings, baseline verdict and summary. */
export function checkStudy(study: LoadedStudy, source?: string): summary.StudyCheck {
  checkArguments('checkStudy', { study: [study, is.loadedStudy], source: [source, is.optional(is.text('a name for the text'))] });
  return summary.checkStudy(study, source);
}

/** Plain-text summary of a study's sections, as `loopsmith check` prints it. */
export function studySummary(study: StudyInput): string {
  return summary.studySummary(studyArgument('studySummary', study));
}

export function probeDesign(study: StudyInput, x: number, y: number, overrides?: DesignOverrides): ReturnType<typeof design.probeDesign> {
  const s = studyArgument('probeDesign', study);
  checkArguments('probeDesign', { x: [x, is.number('end-point x, m')], y: [y, is.number('end-point y, m')] });
  return design.probeDesign(s, x, y, overridesArgument('probeDesign', overrides));
}

/** The engine's evaluator of a study; `evaluate(design)` checks the design vector's length. */
export class Evaluator extends EngineEvaluator {
  constructor(study: StudyInput) {
    super(studyArgument('new Evaluator', study));
  }

  override evaluate(designValues: ArrayLike<number>): DesignEvaluation {
    checkArguments('Evaluator.evaluate', { design: [designValues, is.design(this.variables.length, this.variables.map((v) => v.name))] });
    return super.evaluate(designValues);
  }
}

const RUN_RULES: OptionRules<RunOptions> = {
  ...POOL_RULES,
  dbPath: DB_PATH,
  seed: is.optional(is.integer(0, 'random seed')),
  population: is.optional(is.integer(2, 'population size')),
  generations: is.optional(is.integer(1, 'generations in all')),
  warmStart: is.optional(is.options<NonNullable<RunOptions['warmStart']>>({ dbPath: DB_PATH, runId: RUN_ID })),
  onGeneration: is.optional(is.function),
  shouldStop: is.optional(is.function),
  more: is.optional({
    expected: 'a whole number of generations ≥ 1 or "converge"',
    problem: (value) => (value === 'converge' || (Number.isInteger(value) && (value as number) >= 1) ? undefined : { path: '', expected: 'a whole number of generations ≥ 1 or "converge"', value }),
  }),
  runId: is.optional(RUN_ID),
  command: is.optional(is.text('the command line that starts the run')),
};

export async function runOptimization(study: LoadedStudy, options: RunOptions): Promise<RunSummary> {
  checkArguments('runOptimization', { study: [study, is.loadedStudy], options: [options, is.options(RUN_RULES)] });
  return engineRunOptimization(study, options);
}

const SWEEP_RULES: OptionRules<SweepOptions> = {
  ...POOL_RULES,
  dbPath: DB_PATH,
  samples: is.integer(1, 'designs to evaluate'),
  method: is.oneOf(['lhs', 'grid']),
  seed: is.optional(is.integer(0, 'random seed')),
  chunkSize: is.optional(is.integer(1, 'designs per stored chunk')),
  onChunk: is.optional(is.function),
  shouldStop: is.optional(is.function),
};

export async function runSweep(study: LoadedStudy, options: SweepOptions): ReturnType<typeof engineRunSweep> {
  checkArguments('runSweep', { study: [study, is.loadedStudy], options: [options, is.options(SWEEP_RULES)] });
  return engineRunSweep(study, options);
}

const RESCORE_RULES: OptionRules<RescoreOptions> = { ...POOL_RULES, dbPath: DB_PATH, runId: RUN_ID, onProgress: is.optional(is.function), designs: is.optional(is.oneOf(['all', 'front'])) };

export async function rescoreRun(study: LoadedStudy, options: RescoreOptions): Promise<RescoreResult> {
  checkArguments('rescoreRun', { study: [study, is.loadedStudy], options: [options, is.options(RESCORE_RULES)] });
  return engineRescoreRun(study, options);
}

export function runFront(dbPath: string, runId?: number): FrontResult {
  checkArguments('runFront', { dbPath: [dbPath, DB_PATH], runId: [runId, RUN_ID] });
  return engineRunFront(dbPath, runId);
}

const QUERY_RULES: OptionRules<QueryOptions> = {
  where: is.optional(is.text('an SQL expression over the evaluation columns')),
  orderBy: is.optional(is.text('a column, optionally followed by asc or desc')),
  limit: is.optional(is.integer(0, 'most rows')),
  runId: RUN_ID,
  columns: is.optional(is.arrayOf(is.text('a column name'), 'column names')),
};

export function queryEvaluations(dbPath: string, options: QueryOptions = {}): QueryResult {
  checkArguments('queryEvaluations', { dbPath: [dbPath, DB_PATH], options: [options, is.options(QUERY_RULES)] });
  return engineQueryEvaluations(dbPath, options);
}

const EXPORT_RULES: OptionRules<ExportOptions> = {
  format: is.oneOf(EXPORT_FORMATS),
  outDir: is.text('output folder'),
  front: is.optional(is.boolean),
  ids: is.optional(is.arrayOf(is.integer(1, 'an evaluation id'), 'evaluation ids')),
  runId: RUN_ID,
};

export function exportCandidates(dbPath: string, options: ExportOptions): ExportResult {
  checkArguments('exportCandidates', { dbPath: [dbPath, DB_PATH], options: [options, is.options(EXPORT_RULES)] });
  return engineExportCandidates(dbPath, options);
}

export async function writeReport(dbPath: string, runId: number | undefined, outDir: string): Promise<{ htmlPath: string; data: ReportData }> {
  checkArguments('writeReport', { dbPath: [dbPath, DB_PATH], runId: [runId, RUN_ID], outDir: [outDir, is.text('output folder')] });
  return engineWriteReport(dbPath, runId, outDir);
}

const MAP_RULES: OptionRules<WorkspaceMapOptions> = {
  cells: is.optional(is.integer(2, 'grid cells across the longer side')),
  maxWidthPx: is.optional(is.number('px')),
  maxHeightPx: is.optional(is.number('px')),
  maxColourCells: is.optional(is.integer(2, 'colour-map cells')),
  title: is.optional(is.text('chart title')),
};

export function workspaceMapSpec(study: StudyInput, overrides?: DesignOverrides, options: WorkspaceMapOptions = {}): WorkspaceMapSpec {
  const s = studyArgument('workspaceMapSpec', study);
  checkArguments('workspaceMapSpec', { options: [options, is.options(MAP_RULES)] });
  return engineWorkspaceMapSpec(s, overridesArgument('workspaceMapSpec', overrides), options);
}

export async function renderWorkspaceMap(study: StudyInput, overrides?: DesignOverrides, options: WorkspaceMapOptions = {}): Promise<string> {
  const s = studyArgument('renderWorkspaceMap', study);
  checkArguments('renderWorkspaceMap', { options: [options, is.options(MAP_RULES)] });
  return engineRenderWorkspaceMap(s, overridesArgument('renderWorkspaceMap', overrides), options);
}
