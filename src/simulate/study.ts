/**
 * Forward simulation of one design of a study: the baseline with `NAME=VALUE` overrides (as
 * `evaluate` takes them), its duty cycle at the pace the study evaluates it (cycle_time, else
 * 1/required_rate, else the steps' own times; moves stretched, dwells kept), its drives' joint-side
 * limits and its joint friction.
 */
import { chooseDesign } from '../api/design.js';
import { fiveBar, wrapFiveBarModel } from '../architectures/fivebar.js';
import type { ArchitectureModelBase, PlanarArchitecture } from '../architectures/types.js';
import { CycleSamples, CycleTrajectory, DutyCycleAnalysis, type CyclePath, type JointFriction } from '../mechanics/dutyCycle.js';
import { Evaluator } from '../mechanics/evaluate.js';
import type { FiveBarModel } from '../mechanics/fivebar.js';
import type { Study } from '../study/types.js';
import { SimulationError, simulate, type ControllerKind, type SimulationDriveLimits, type SimulationResult } from './simulate.js';

/** Everything a simulation of one study design needs. */
export interface StudySimulationSetup {
  readonly study: Study;
  /** Named values of the design variables (SI; working mode and drives by name). */
  readonly design: Readonly<Record<string, number | string>>;
  readonly warnings: readonly string[];
  readonly model: FiveBarModel;
  /** The duty cycle at the evaluated pace. */
  readonly trajectory: CycleTrajectory;
  readonly cycleTime: number;
  readonly limits: SimulationDriveLimits | null;
  readonly friction: readonly [JointFriction, JointFriction] | null;
  /** Drive names per actuator (null without drives). */
  readonly driveLabels: readonly [string, string] | null;
}

export interface StudySimulationOptions {
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
  return { start: path.start, steps: path.steps.map((step) => (step.kind === 'dwell' ? step : { ...step, time: step.time * scale })) };
}

/** Model, paced cycle, limits and friction of a study's baseline design with overrides. */
export function prepareStudySimulation(study: Study, overrides: readonly string[] = []): StudySimulationSetup {
  const duty = study.dutyCycle;
  if (!duty) throw new SimulationError(`study ${study.name} has no duty_cycle section: there is no motion to simulate (see docs/duty-cycle.md)`);
  const choice = chooseDesign(study, overrides);
  const evaluator = new Evaluator(choice.study);
  const model = evaluator.model(choice.design);
  const resolved = evaluator.resolve(choice.design);
  const reference = new CycleTrajectory(duty.path);
  const target = duty.cycleTime ?? (duty.requiredRate ? 1 / duty.requiredRate : null);
  let scale = 1;
  if (target !== null && reference.moveTime > 0) {
    scale = (target - reference.dwellTime) / reference.moveTime;
    if (!(scale > 0)) throw new SimulationError(`the cycle time ${target} s is not longer than the dwells (${reference.dwellTime} s)`);
  }
  const trajectory = scale === 1 ? reference : new CycleTrajectory(scaleCyclePath(duty.path, scale));
  const check = new DutyCycleAnalysis(new CycleSamples(trajectory, duty.samples), null, fiveBar as unknown as PlanarArchitecture<ArchitectureModelBase>);
  if (!check.run(wrapFiveBarModel(model, 0))) {
    throw new SimulationError('this design cannot follow the duty cycle: some point of the cycle is unreachable, outside the joint limits, in the other assembly mode or singular');
  }
  const drives = resolved.drives;
  const limits: SimulationDriveLimits | null = drives
    ? {
        peakTorque: [drives[0].efficiency * drives[0].gearRatio * drives[0].peakTorque, drives[1].efficiency * drives[1].gearRatio * drives[1].peakTorque],
        ratedTorque: [drives[0].efficiency * drives[0].gearRatio * drives[0].ratedTorque, drives[1].efficiency * drives[1].gearRatio * drives[1].ratedTorque],
        speed: [drives[0].maxSpeed / drives[0].gearRatio, drives[1].maxSpeed / drives[1].gearRatio],
      }
    : null;
  return {
    study: choice.study,
    design: choice.values,
    warnings: choice.warnings,
    model,
    trajectory,
    cycleTime: trajectory.cycleTime,
    limits,
    friction: (study.friction as readonly [JointFriction, JointFriction] | null | undefined) ?? null,
    driveLabels: drives ? [drives[0].label, drives[1].label] : null,
  };
}

/** Simulates a prepared study design along its duty cycle. */
export function simulateStudyDesign(setup: StudySimulationSetup, options: StudySimulationOptions): SimulationResult {
  return simulate(setup.model, {
    controller: options.controller,
    trajectory: setup.trajectory,
    duration: options.duration ?? setup.cycleTime,
    ...(options.naturalFrequency !== undefined ? { naturalFrequency: options.naturalFrequency } : {}),
    ...(options.dampingRatio !== undefined ? { dampingRatio: options.dampingRatio } : {}),
    ...(options.extraEndMass !== undefined ? { extraEndMass: options.extraEndMass } : {}),
    ...(options.outputInterval !== undefined ? { outputInterval: options.outputInterval } : {}),
    friction: options.friction === false ? null : setup.friction,
    limits: setup.limits,
  });
}
