/**
 * Forward simulation of one design of a study: the baseline with `NAME=VALUE` overrides (as
 * `evaluate` takes them), its duty cycle at the pace the study evaluates it (cycle_time, else
 * 1/required_rate, else the steps' own times; moves stretched, dwells kept), its drives' joint-side
 * limits and its joint friction.
 */
import { chooseDesign } from '../api/design.js';
import type { ActuatorKind, ArchitectureModelBase, PlanarArchitecture } from '../architectures/types.js';
import { drivesAtJoint } from '../mechanics/designSpace.js';
import { CycleSamples, CycleTrajectory, DutyCycleAnalysis, cycleDriveLimits, evaluatedCycleTime, type CyclePath, type JointFriction } from '../mechanics/dutyCycle.js';
import { Evaluator } from '../mechanics/evaluate.js';
import type { LeggedModel } from '../architectures/legged.js';
import type { Study } from '../study/types.js';
import { fiveBarBodiesOf, type FiveBarBodies } from './fiveBarBodies.js';
import { SimulationError, type ControllerKind, type SimulationDriveLimits, type SimulationResult } from './shared.js';
import { simulateArchitecture } from './simulateArchitecture.js';
import type { DriveSimulationHooks } from './driveHooks.js';

/** Everything a simulation of one study design needs. */
export interface StudySimulationSetup {
  readonly study: Study;
  /** Named values of the design variables (SI; working mode and drives by name). */
  readonly design: Readonly<Record<string, number | string>>;
  readonly warnings: readonly string[];
  /** The architecture, its model of the design (every architecture) and each joint's kind. */
  readonly architecture: PlanarArchitecture<ArchitectureModelBase>;
  readonly architectureModel: ArchitectureModelBase;
  readonly actuators: readonly ActuatorKind[];
  /** Five-bar studies: the design's bodies in the five-bar layout (what `simulate` takes); null for other architectures. */
  readonly model: FiveBarBodies | null;
  /** The duty cycle at the evaluated pace. */
  readonly trajectory: CycleTrajectory;
  readonly cycleTime: number;
  readonly limits: SimulationDriveLimits | null;
  readonly friction: readonly JointFriction[] | null;
  /** Drive names per actuator (null without drives). */
  readonly driveLabels: readonly string[] | null;
}

/** `DriveSimulationHooks`: formulation, ε and effort saturation (docs/drives.md); `initialState` as simulateArchitecture takes it. */
export interface StudySimulationOptions extends DriveSimulationHooks {
  readonly initialState?: ArrayLike<number>;
  readonly controller: ControllerKind;
  /** Simulated time, s (default one cycle). */
  readonly duration?: number;
  readonly naturalFrequency?: number;
  readonly dampingRatio?: number;
  /** Extra end mass the controller does not know about, kg. */
  readonly extraEndMass?: number;
  /** Include the study's joint friction in the plant (default true). */
  readonly friction?: boolean;
  /** Spacing of recorded samples, s. */
  readonly outputInterval?: number;
}

/** The cycle path with every move and arc stretched by `scale` (dwells unchanged). */
export function scaleCyclePath(path: CyclePath, scale: number): CyclePath {
  return { ...path, steps: path.steps.map((step) => (step.kind === 'dwell' ? step : { ...step, time: step.time * scale })) };
}

/**
 * The study's duty cycle at the pace the study evaluates it (cycle_time, else 1/required_rate, else
 * the steps' own times; moves stretched, dwells kept), or null without a duty_cycle section.
 */
export function pacedCycle(study: Study): CycleTrajectory | null {
  const duty = study.dutyCycle;
  if (!duty) return null;
  const reference = new CycleTrajectory(duty.path);
  const target = evaluatedCycleTime(duty);
  let scale = 1;
  if (target !== null && reference.moveTime > 0) {
    scale = (target - reference.dwellTime) / reference.moveTime;
    if (!(scale > 0)) throw new SimulationError(`the cycle time ${target} s is not longer than the dwells (${reference.dwellTime} s)`);
  }
  return scale === 1 ? reference : new CycleTrajectory(scaleCyclePath(duty.path, scale));
}

/** Model, paced cycle, limits and friction of a study's baseline design with overrides. */
export function prepareStudySimulation(study: Study, overrides: readonly string[] = []): StudySimulationSetup {
  const duty = study.dutyCycle;
  if (!duty) throw new SimulationError(`study ${study.name} has no duty_cycle section: there is no motion to simulate (see docs/duty-cycle.md)`);
  if (study.members) throw new SimulationError('simulate: a comparison study has no single design; simulate one member study');
  const choice = chooseDesign(study, overrides);
  const evaluator = new Evaluator(choice.study);
  const { architecture, model: architectureModel, resolved } = evaluator.architectureDesign(choice.design);
  const trajectory = pacedCycle(study)!;
  const check = new DutyCycleAnalysis(new CycleSamples(trajectory, duty.samples), null, architecture);
  if (!check.run(architectureModel)) {
    throw new SimulationError('this design cannot follow the duty cycle: some point of the cycle is unreachable, outside the joint limits, in the other assembly mode or singular');
  }
  const drives = resolved.drives;
  const isFiveBar = architecture.name === 'five-bar';
  const limits: SimulationDriveLimits | null = isFiveBar && drives
    ? {
        peakTorque: drives.map((d) => d.efficiency * d.gearRatio * d.peakTorque),
        ratedTorque: drives.map((d) => d.efficiency * d.gearRatio * d.ratedTorque),
        speed: drives.map((d) => d.maxSpeed / d.gearRatio),
      }
    : cycleDriveLimits(drivesAtJoint(choice.study, drives));
  return {
    study: choice.study,
    design: choice.values,
    warnings: choice.warnings,
    architecture,
    architectureModel,
    actuators: architecture.actuators,
    model: isFiveBar ? fiveBarBodiesOf(architectureModel as LeggedModel) : null,
    trajectory,
    cycleTime: trajectory.cycleTime,
    limits,
    friction: study.friction ?? null,
    driveLabels: drives ? drives.map((d) => d.label) : null,
  };
}

/** Simulates a prepared study design along its duty cycle. */
export function simulateStudyDesign(setup: StudySimulationSetup, options: StudySimulationOptions): SimulationResult {
  const common = {
    controller: options.controller,
    trajectory: setup.trajectory,
    duration: options.duration ?? setup.cycleTime,
    ...(options.naturalFrequency !== undefined ? { naturalFrequency: options.naturalFrequency } : {}),
    ...(options.dampingRatio !== undefined ? { dampingRatio: options.dampingRatio } : {}),
    ...(options.extraEndMass !== undefined ? { extraEndMass: options.extraEndMass } : {}),
    ...(options.outputInterval !== undefined ? { outputInterval: options.outputInterval } : {}),
    friction: options.friction === false ? null : setup.friction,
    limits: setup.limits,
    ...(options.formulation !== undefined ? { formulation: options.formulation } : {}),
    ...(options.epsilon !== undefined ? { epsilon: options.epsilon } : {}),
    ...(options.saturate !== undefined ? { saturate: options.saturate } : {}),
    ...(options.initialState !== undefined ? { initialState: options.initialState } : {}),
  };
  // One path for every architecture: the cut-open chain of legChain.ts on the architecture interface.
  return simulateArchitecture(setup.architecture, setup.architectureModel, common);
}
