/** Export of stored candidates: candidate sheets (JSON), one CSV table, MJCF models. */
export {
  candidateSheet,
  candidateDesign,
  homeEndPoint,
  homePose,
  chainJointAngles,
  actuatedAngle,
  wrapAngle,
  sheetToJson,
  loopsmithVersion,
  ExportError,
  CANDIDATE_FORMAT,
  type CandidateSheet,
  type CandidateDesign,
  type CandidateRecord,
  type BodySheet,
  type DriveSheet,
  type HomePoseSheet,
  type ProvenanceSheet,
  type PlanePoint,
} from './candidate.js';
export {
  candidateExport,
  architectureHomePoint,
  type AnyCandidateSheet,
  type ArchitectureCandidateSheet,
  type ArchitectureBodySheet,
  type ArchitectureDriveSheet,
  type ArchitectureHomePoseSheet,
  type ActuatorSheet,
  type CandidateExport,
} from './candidateArchitecture.js';
export { candidatesCsv, flattenSheet, type FlatValue } from './csv.js';
export { toMjcf, MJCF_JOINTS, MJCF_TIMESTEP, LOOP_CLOSURE_SOLREF, LOOP_CLOSURE_SOLIMP } from './mjcf.js';
export {
  exportCandidates,
  candidateSheets,
  candidateExports,
  selectCandidates,
  candidateSchemaErrors,
  EXPORT_FORMATS,
  type ExportFormat,
  type ExportOptions,
  type ExportSelection,
  type ExportResult,
} from './export.js';
