/** Export of stored candidates: candidate sheets (JSON), one CSV table, MJCF models. */
export {
  candidateExport,
  candidateSheet,
  designSheet,
  architectureHomePoint,
  sheetToJson,
  loopsmithVersion,
  ExportError,
  CANDIDATE_FORMAT,
  SAFETY_NOTE,
  type CandidateSheet,
  type CandidateSheet as AnyCandidateSheet,
  type CandidateExport,
  type CandidateRecord,
  type BuiltDesign,
  type ActuatorSheet,
  type BodySheet,
  type DriveSheet,
  type HomePoseSheet,
  type ProvenanceSheet,
  type PlanePoint,
} from './candidate.js';
export { candidatesCsv, flattenSheet, type FlatValue } from './csv.js';
export {
  architectureMjcf,
  treeMjcfJoints,
  MJCF_INTEGRATOR,
  MJCF_TIMESTEP,
  LOOP_CLOSURE_SOLREF,
  LOOP_CLOSURE_SOLIMP,
  MASSLESS_BODY_FILL,
  type ArchitectureHomePose,
  type ArchitectureMjcfOptions,
  type MjcfJointInfo,
} from './mjcf.js';
export { bodyFrames, sitePositions, loopClosureGap, type PlaneFrame } from './bodyTree.js';
export {
  checkMjcfInMotion,
  mjcfCheckReference,
  runMjcfCheck,
  standardMotion,
  MJCF_CHECK_TOLERANCES,
  type MjcfCheckReference,
  type MjcfCheckResult,
  type MjcfCheckRun,
} from './mjcfCheck.js';
export { MujocoCheckError } from './mujocoEngine.js';
export {
  exportCandidates,
  exportCandidatesChecked,
  candidateSheets,
  candidateExports,
  selectCandidates,
  candidateSchemaErrors,
  EXPORT_FORMATS,
  type ExportFormat,
  type ExportOptions,
  type ExportSelection,
  type ExportResult,
  type CheckedExportResult,
  type MjcfCheckSheet,
} from './export.js';
