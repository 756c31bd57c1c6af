/** Forward simulation of one design along a duty cycle (see docs/simulate.md). */
export {
  CONTROLLER_KINDS,
  DEFAULT_DAMPING_RATIO,
  DEFAULT_FRICTION_SMOOTHING,
  DEFAULT_NATURAL_FREQUENCY,
  DEFAULT_OUTPUT_INTERVAL,
  SimulationError,
  cycleStartState,
  simulate,
  wrapAngle,
  type ControllerKind,
  type JointSimulationSummary,
  type SimulationDriveLimits,
  type SimulationOptions,
  type SimulationResult,
  type SimulationSeries,
  type SimulationSummary,
  type FiveBarBodies,
} from './simulate.js';
export { fiveBarBodiesOf, fiveBarLegModel } from './fiveBarBodies.js';
export {
  DEFAULT_STABILISATION_RATE,
  FreeChainAcceleration,
  closureError,
  consistentState,
  freeAccelerations,
  freeChain,
  kineticEnergy,
  potentialEnergy,
  tipPosition,
  type FreeChain,
} from './freeChain.js';
export { LegChain } from './legChain.js';
export { cutChainState, simulateArchitecture, type ArchitectureSimulationOptions } from './simulateArchitecture.js';
export { pacedCycle, prepareStudySimulation, scaleCyclePath, simulateStudyDesign, type StudySimulationOptions, type StudySimulationSetup } from './study.js';
export { simulationChartSpecs, simulationCsv, writeSimulationOutputs } from './plots.js';
