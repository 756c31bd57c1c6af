/**
 * loopsmith programmatic API. The `loopsmith` command is a thin layer over these exports.
 * All quantities are SI (m, kg, s, rad, N, N·m) unless a name says otherwise.
 */
// Study files
export { loadStudyFile, parseStudyText, StudyError, evaluationSettingsHash, MATERIALS, type LoadedStudy } from './study/parse.js';
export type * from './study/types.js';
export { parseQuantity, formatQuantity, UnitError, type QuantityKind } from './study/units.js';
export { STUDY_TEMPLATE } from './study/template.js';

// Five-bar engine
export {
  FiveBarPose,
  PoseStatus,
  solvePose,
  poseDynamics,
  forwardKinematics,
  footprint,
  WORKING_MODES,
  type FiveBarModel,
  type WorkingMode,
  type AssemblyMode,
  type JointRange,
} from './mechanics/fivebar.js';
export { Evaluator, constraintDefinitions, taskSamples, type DesignEvaluation, type ConstraintDefinition } from './mechanics/evaluate.js';
export { METRICS, metricInfo, type MetricInfo } from './mechanics/metrics.js';
export { designVariables, designFromValues, designToValues, resolveDesign, buildFiveBarModel, DesignError, type DesignVariable } from './mechanics/designSpace.js';
export { MarginGrid } from './mechanics/grid.js';
export { probePose, type PoseReport } from './mechanics/probe.js';
export { chooseDesign, evaluateDesign, probeDesign, type EvaluationReport, type ConstraintReport } from './api/design.js';

// Optimizer (generic; usable on its own)
export * as optimizer from './optimizer/index.js';
export { Nsga2, optimize, type Nsga2Settings, type Member, type Nsga2State } from './optimizer/nsga2.js';
export { hypervolume } from './optimizer/hypervolume.js';
export type { ProblemSpec, VariableSpec, ObjectiveSpec as OptimizerObjective, Evaluation, BatchEvaluate } from './optimizer/types.js';

// Batch runs, pool and store
export { EvaluationPool, defaultWorkerCount, type PoolOptions } from './pool/pool.js';
export { runOptimization, type RunOptions, type RunSummary, type GenerationProgress } from './run/optimize.js';
export { runSweep, type SweepOptions } from './run/sweep.js';
export { runFront, type FrontResult } from './run/front.js';
export { Store, StoreError } from './store/store.js';
export { queryEvaluations, QueryError } from './store/query.js';

// Drive changes and candidates for detailed simulation
export { rescoreRun, type RescoreOptions, type RescoreResult } from './run/rescore.js';
export * as exporting from './export/index.js';
export { exportCandidates, candidateSheet, toMjcf } from './export/index.js';

// Pictures
export { renderWorkspaceMap, workspaceMapSpec } from './report/map.js';
export { writeReport } from './report/report.js';
export { svgToPng, renderVegaLiteSvg } from './report/render.js';

// Forward simulation along a duty cycle
export * as simulation from './simulate/index.js';

// Architectures (the one registry and the leg layer)
export { ARCHITECTURES, ARCHITECTURE_NAMES } from './architectures/index.js';
export type { PlanarArchitecture, ArchitectureName, ArchitecturePose, LeggedModel, LegKind } from './architectures/index.js';
export { sampleWorkspace, type WorkspaceSample } from './mechanics/workspace.js';
export { usabilityMargin } from './mechanics/usability.js';
export { probeArchitecturePose, type ArchitecturePoseReport } from './mechanics/probe.js';
export { probeArchitectureDesign } from './api/design.js';
export { LoopsmithUserError } from './core/errors.js';
export { candidateExport } from './export/candidateArchitecture.js';
export { renderArchitectureMap } from './report/architectureMap.js';
