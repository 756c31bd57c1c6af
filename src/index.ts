/**
 * loopsmith programmatic API. The `loopsmith` command is a thin layer over these exports.
 * All quantities are SI (m, kg, s, rad, N, N·m) unless a name says otherwise.
 */
// Main entry points, with their arguments checked (a wrong one throws ApiArgumentError)
export {
  loadStudyFile,
  parseStudyText,
  designVariables,
  chooseDesign,
  evaluateDesign,
  probeDesign,
  checkStudy,
  studySummary,
  Evaluator,
  runOptimization,
  runSweep,
  rescoreRun,
  runFront,
  queryEvaluations,
  exportCandidates,
  writeReport,
  workspaceMapSpec,
  renderWorkspaceMap,
  type StudyInput,
} from './public/api.js';
export { ApiArgumentError, type DesignOverrides } from './public/arguments.js';
export { loopsmithVersion, demoStudyNames, demoStudyPath, packageFile } from './public/packageFiles.js';

// Study files
export { StudyError, evaluationSettingsHash, studySettingsHash, MATERIALS, type LoadedStudy } from './study/parse.js';
export type * from './study/types.js';
export { parseQuantity, formatQuantity, UnitError, type QuantityKind } from './study/units.js';
export { STUDY_TEMPLATE } from './study/template.js';

// The five-bar (thin names on the one engine, see src/public/fiveBar.ts) and shared pose vocabulary
export { FiveBarPose, solvePose, poseDynamics, forwardKinematics, footprint, buildFiveBarModel, type FiveBarModel } from './public/fiveBar.js';
export { PoseStatus, WORKING_MODES, type WorkingMode, type AssemblyMode, type JointRange } from './core/pose.js';
export { constraintDefinitions, taskSamples, type DesignEvaluation, type ConstraintDefinition } from './mechanics/evaluate.js';
export { METRICS, metricInfo, type MetricInfo } from './mechanics/metrics.js';
export { designFromValues, designToValues, resolveDesign, DesignError, type DesignVariable } from './mechanics/designSpace.js';
export { MarginGrid } from './mechanics/grid.js';
export { probePose, type PoseReport } from './mechanics/probe.js';
export type { EvaluationReport, ConstraintReport, DesignChoice } from './api/design.js';
export type { StudyCheck, BaselineVerdict } from './api/studySummary.js';

// Optimizer (generic; usable on its own)
export * as optimizer from './optimizer/index.js';
export { Nsga2, optimize, type Nsga2Settings, type Member, type Nsga2State } from './optimizer/nsga2.js';
export { hypervolume } from './optimizer/hypervolume.js';
export { optimizeIslands, runIslandEpoch, migrate, type IslandSettings, type IslandResult } from './optimizer/islands.js';
export type { ProblemSpec, VariableSpec, ObjectiveSpec as OptimizerObjective, Evaluation, BatchEvaluate } from './optimizer/types.js';

// Batch runs, pool and store
export { EvaluationPool, defaultWorkerCount, type PoolOptions } from './pool/pool.js';
export { type RunOptions, type RunSummary, type GenerationProgress } from './run/optimize.js';
export type { SweepOptions } from './run/sweep.js';
export type { FrontResult } from './run/front.js';
// Choosing from the front: representatives, knees, redundant objectives; rounding; sensitivity
export { analyseFront, analysePoints, type StoredFrontAnalysis, type FrontAnalysis } from './run/frontTools.js';
export { roundAndEvaluate, snapToStep, RoundingError, type RoundingResult, type RoundedDesign } from './run/roundDesigns.js';
export { sensitivity, parseVariation, type SensitivityResult, type SensitivityOptions, type Variation } from './run/sensitivity.js';

// Studies larger than one machine: plan, shards (Slurm job arrays), merge; options are checked inside (ScaleError)
export { makePlan, readPlan, ScaleError, type Plan, type PlanOptions } from './scale/plan.js';
export { runShards, type ShardOptions, type ShardReport } from './scale/shard.js';
export { mergePlan, missingShards, type MergeOptions, type MergeResult } from './scale/merge.js';
export { Store, StoreError } from './store/store.js';
export { QueryError, type QueryOptions, type QueryResult } from './store/query.js';

// Drive changes and candidates for detailed simulation
export { type RescoreOptions, type RescoreResult } from './run/rescore.js';
export * as exporting from './export/index.js';
export { candidateSheet, architectureMjcf } from './export/index.js';
export type { ExportOptions, ExportResult, ExportFormat } from './export/export.js';

// Pictures
export type { WorkspaceMapOptions } from './report/map.js';
export { svgToPng, renderVegaLiteSvg } from './report/render.js';

// Forward simulation along a duty cycle
export * as simulation from './simulate/index.js';

// Architectures (the one registry and the leg layer)
export { ARCHITECTURES, ARCHITECTURE_NAMES } from './architectures/index.js';
export type { PlanarArchitecture, ArchitectureName, ArchitecturePose, LeggedModel, LegKind } from './architectures/index.js';
export type { BodyTree, TreeBody, TreeJoint, TreeSite, TreeClosure } from './architectures/types.js';
export { sampleWorkspace, type WorkspaceSample } from './mechanics/workspace.js';
export { usabilityMargin } from './mechanics/usability.js';
export { probeArchitecturePose, type ArchitecturePoseReport } from './mechanics/probe.js';
export { probeArchitectureDesign } from './api/design.js';
export { LoopsmithUserError } from './core/errors.js';
export { candidateExport } from './export/candidate.js';
export { renderArchitectureMap } from './report/architectureMap.js';

// Drive trains: motor and gearbox catalogues, envelopes, checks along the cycle (docs/drives.md)
export type { MotorSpec, GearboxSpec, LinearStageSpec, DriveTrain, TorqueSpeedCurve } from './drives/types.js';
export { curveTorque, cornerEnvelopes, motorTorque, jointPeakEffortAtSpeed } from './drives/envelope.js';
export { readMotors, readGearboxes, composeDrive } from './study/driveTrains.js';
export { compareFormulations, type FormulationReport, type FormulationComparison } from './simulate/driveSimulation.js';

// The built arm: tolerances, real joints, out-of-plane mode, strength (docs/accuracy.md)
export { toleranceScatter } from './public/accuracyApi.js';
export { ToleranceCheckError, type ToleranceScatterReport } from './api/accuracy.js';
export { FirstOrderAccuracy, type PoseAccuracy } from './accuracy/firstOrder.js';
export { monteCarloAtPose, type MonteCarloResult, type MonteCarloOptions } from './accuracy/monteCarlo.js';
export { sectionProperties, eulerLoad, cantilever, simplySupportedUniform, type SectionProperties, type SectionShape } from './accuracy/sections.js';
export { builtArmAtPose, type BuiltArmPoseReport } from './mechanics/builtArmDesign.js';
export type { AccuracySpec, ToleranceSpec, JointStiffnessSpec, StrengthSpec, SectionChoiceSpec } from './accuracy/spec.js';
export { METRIC_ALIASES, currentMetricName } from './core/metrics.js';
