/**
 * Drive-train features of `simulate` (docs/drives.md): efforts that saturate at the drives'
 * envelopes (the tracking error shows what the saturation costs), and the singularly perturbed
 * closure compared with the stabilised one, with the decay of a constraint error under each.
 */
import { jointPeakEffortAtSpeed } from '../drives/envelope.js';
import { designFromValues, designVariables, drivesAtJoint, resolveDesign } from '../mechanics/designSpace.js';
import type { DriveSimulationHooks } from './driveHooks.js';
import { cutChainState } from './simulateArchitecture.js';
import { simulateStudyDesign, type StudySimulationOptions, type StudySimulationSetup } from './study.js';
import { DEFAULT_STABILISATION_RATE, SimulationError, type SimulationResult } from './shared.js';

/** The design's joint-side effort limit at joint speed q̇ per actuator: the peak envelope of a drive train, else the rectangle (peak effort up to the speed limit, 0 beyond). */
export function effortLimits(setup: StudySimulationSetup): ((speed: number) => number)[] | null {
  const variables = designVariables(setup.study);
  const drives = resolveDesign(setup.study, variables, designFromValues(variables, setup.design, true)).drives;
  if (!drives) return null;
  const atJoint = drivesAtJoint(setup.study, drives)!;
  return drives.map((d, i) => {
    const train = d.train;
    if (train) return (speed: number) => jointPeakEffortAtSpeed(train, speed);
    const j = atJoint[i]!;
    return (speed: number) => (Math.abs(speed) <= j.maxSpeed ? j.peakEffort : 0);
  });
}

/** The saturation hook for a study design (SimulationError without drives). */
export function saturationHook(setup: StudySimulationSetup): NonNullable<DriveSimulationHooks['saturate']> {
  const limits = effortLimits(setup);
  if (!limits) throw new SimulationError('--saturate needs drives in the study (their envelopes are the limits)');
  return (efforts, speeds) => {
    for (let i = 0; i < efforts.length; i++) {
      const limit = limits[i]!(speeds[i]!);
      const e = efforts[i]!;
      if (e > limit) efforts[i] = limit;
      else if (e < -limit) efforts[i] = -limit;
    }
  };
}

/** Share of the recorded samples (0..1) at which some joint's effort sits at its limit. */
export function saturatedShare(setup: StudySimulationSetup, result: SimulationResult): number {
  const limits = effortLimits(setup);
  if (!limits) return 0;
  const s = result.series;
  let hits = 0;
  for (let k = 0; k < s.count; k++) {
    for (let i = 0; i < limits.length; i++) {
      const limit = limits[i]!(s.speeds[i]![k]!);
      if (Math.abs(s.torques[i]![k]!) >= limit * (1 - 1e-9)) { hits++; break; }
    }
  }
  return s.count > 0 ? hits / s.count : 0;
}

/** One ε against the stabilised run. */
export interface FormulationComparison {
  /** ε, s. */
  readonly epsilon: number;
  /** Largest difference of the actuated joint positions to the stabilised run over the samples (rad or m), and of the end point (m). */
  readonly maxJointDifference: number;
  readonly maxEndPointDifference: number;
  /** Largest loop-closure error |Φ| along the cycle, m. */
  readonly maxClosureError: number;
  /** Time for an initial closure error to fall below 1 % of itself, s. */
  readonly decayTime: number;
}

export interface FormulationReport {
  /** The stabilised run: Baumgarte rate (1/s), its largest |Φ| and its decay time. */
  readonly stabilised: { readonly rate: number; readonly maxClosureError: number; readonly decayTime: number };
  readonly perturbed: readonly FormulationComparison[];
}

/**
 * Runs the stabilised formulation and the perturbed one for each ε on the same design, cycle and
 * controller, and measures the difference and the closure error. The decay runs start from the
 * cycle's start with rod 1 turned by `offset` rad off the closed loop (a closure error of about
 * d_1 × offset) and last 0.1 s, sampled every 0.05 ms; the decay time is when the closure error in
 * excess of the same run started on the loop stays below 1 % of its initial value.
 */
export function compareFormulations(setup: StudySimulationSetup, options: StudySimulationOptions, epsilons: readonly number[], offset = 1e-2): FormulationReport {
  const base = simulateStudyDesign(setup, options);
  const perturbed = epsilons.map((epsilon) => {
    const run = simulateStudyDesign(setup, { ...options, formulation: 'perturbed', epsilon });
    return {
      epsilon,
      ...differences(base, run),
      maxClosureError: run.summary.maxClosureError,
      decayTime: decayTime(setup, options, { formulation: 'perturbed', epsilon }, offset),
    };
  });
  return {
    stabilised: { rate: DEFAULT_STABILISATION_RATE, maxClosureError: base.summary.maxClosureError, decayTime: decayTime(setup, options, {}, offset) },
    perturbed,
  };
}

function differences(a: SimulationResult, b: SimulationResult): { maxJointDifference: number; maxEndPointDifference: number } {
  const count = Math.min(a.series.count, b.series.count);
  let joint = 0;
  let end = 0;
  for (let k = 0; k < count; k++) {
    for (let i = 0; i < a.series.positions.length; i++) joint = Math.max(joint, Math.abs(a.series.positions[i]![k]! - b.series.positions[i]![k]!));
    end = Math.max(end, Math.hypot(a.series.x[k]! - b.series.x[k]!, a.series.y[k]! - b.series.y[k]!));
  }
  return { maxJointDifference: joint, maxEndPointDifference: end };
}

function decayTime(setup: StudySimulationSetup, options: StudySimulationOptions, hooks: DriveSimulationHooks, offset: number): number {
  const s = { x: 0, y: 0, vx: 0, vy: 0, ax: 0, ay: 0, phi: 0, vphi: 0, aphi: 0 };
  setup.trajectory.stepStateAtFraction(0, 0, s);
  const n = setup.architecture.dof;
  const size = 2 * (2 * n + (n === 3 ? 3 : 2));
  const state = new Float64Array(size);
  if (!cutChainState(setup.architecture, setup.architectureModel, [s.x, s.y, s.phi], [s.vx, s.vy, s.vphi], state)) throw new SimulationError('the cycle start cannot be assembled');
  const settings = { ...options, ...hooks, duration: 0.1, outputInterval: 5e-5 };
  // The closure error the formulation keeps anyway (ε² Φ̈_free for the perturbed one) is taken off:
  // what decays is the excess over the same run started on the loop.
  const reference = simulateStudyDesign(setup, { ...settings, initialState: Float64Array.from(state) }).series.closure;
  state[1] = state[1]! + offset;
  const run = simulateStudyDesign(setup, { ...settings, initialState: state });
  const closure = run.series.closure;
  const excess = (k: number): number => Math.abs(closure[k]! - reference[k]!);
  const threshold = 0.01 * excess(0);
  let last = -1;
  for (let k = 0; k < run.series.count; k++) if (excess(k) > threshold) last = k;
  return last + 1 < run.series.count ? run.series.time[last + 1]! : Infinity;
}

/** Lines for the `simulate` summary about the drive-train options (empty when none is used). */
export function driveSimulationLines(setup: StudySimulationSetup, result: SimulationResult, hooks: DriveSimulationHooks): string[] {
  const lines: string[] = [];
  if (hooks.formulation === 'perturbed') lines.push(`loop closure: singularly perturbed, ε = ${hooks.epsilon ?? 0.01} s (constraint error ε²Φ̈ + 2εΦ̇ + Φ = ε²Φ̈_free)`);
  if (hooks.saturate) lines.push(`efforts saturate at the drive envelopes: at the limit in ${(saturatedShare(setup, result) * 100).toFixed(1)} % of the samples (see max |e| above)`);
  return lines;
}

/** The comparison table of `--compare-epsilon`. */
export function formulationReportLines(report: FormulationReport): string[] {
  const mm = (v: number): string => (v * 1e3).toPrecision(3);
  const ms = (v: number): string => (Number.isFinite(v) ? (v * 1e3).toFixed(2) : '—');
  return [
    '',
    'closure formulations (difference to the stabilised run; decay of an initial closure error to 1 %):',
    `  stabilised (Baumgarte ${report.stabilised.rate} 1/s): max |Φ| ${report.stabilised.maxClosureError.toExponential(2)} m, decay ${ms(report.stabilised.decayTime)} ms`,
    ...report.perturbed.map((p) => `  perturbed ε = ${p.epsilon} s: max |Δq| ${p.maxJointDifference.toExponential(2)}, max |ΔP| ${mm(p.maxEndPointDifference)} mm, max |Φ| ${mm(p.maxClosureError)} mm, decay ${ms(p.decayTime)} ms`),
  ];
}

/** The hooks of the `simulate` options --formulation, --epsilon and --saturate. */
export function driveHooksOf(setup: StudySimulationSetup, formulation: 'stabilised' | 'perturbed', epsilon: number | undefined, saturate: boolean): DriveSimulationHooks {
  return {
    ...(formulation === 'perturbed' ? { formulation, epsilon: epsilon ?? 0.01 } : {}),
    ...(saturate ? { saturate: saturationHook(setup) } : {}),
  };
}

/** "0.01,0.003,0.001" → ε values, s (SimulationError on anything else). */
export function epsilonList(text: string): number[] {
  const values = text.split(',').map((t) => Number(t.trim()));
  if (values.length === 0 || values.some((v) => !(v > 0 && v <= 1))) throw new SimulationError('--compare-epsilon: give ε values in s between 0 and 1, comma-separated (e.g. 0.01,0.003,0.001)');
  return values;
}

/** The drive-train fields of the `simulate` JSON: closure formulation (ε in s) and, when saturating, the share of samples at the limit. */
export function driveSimulationJson(setup: StudySimulationSetup, result: SimulationResult, hooks: DriveSimulationHooks): Record<string, unknown> {
  return {
    closure: hooks.formulation === 'perturbed' ? { formulation: 'perturbed', epsilon: hooks.epsilon ?? 0.01 } : { formulation: 'stabilised' },
    ...(hooks.saturate ? { saturation: { saturatedShare: saturatedShare(setup, result) } } : {}),
  };
}
