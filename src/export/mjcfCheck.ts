/**
 * The check of an exported MJCF model in motion (`export --format mjcf --verify`): the model is run in
 * MuJoCo with its own settings (integrator, time step, loop-closure softness, joint ranges) and
 * compared with loopsmith's rigid simulation of the same design (src/simulate, the cut-open chain with
 * Lagrange multipliers, integrated to 1e-10) on the study's duty cycle at its evaluated pace, or on a
 * standard motion around the home pose when the study has none (`standardMotion`). Two runs:
 *
 * - recorded efforts: loopsmith simulates the cycle under computed torque (no friction: the exported
 *   model has none) and MuJoCo replays those efforts open loop from the cycle's start state, each step
 *   with the effort at the step's middle (the mean of the efforts recorded at its two ends);
 * - zero effort: both start from the cycle's state at its fastest instant (pose and rates) and coast
 *   for one cycle time with the drives off, under gravity.
 *
 * Reported per run: the largest distance between MuJoCo's end point and loopsmith's over the run
 * (compared every millisecond), the one at the end, and the largest loop gap (distance between the two sites
 * of any loop closure). A free run is compared while it stays in the design's operating poses: inside
 * the actuated joints' ranges (beyond them MuJoCo's joint limits act, which loopsmith's simulation does
 * not model), in its working mode and in its assembly mode (no parallel singularity crossed, where the
 * closed chain's motion hangs on round-off).
 * Controls are not clamped to `ctrlrange` in the replay (a check of dynamics, not of drive sizing); the
 * result says whether the recorded efforts stay inside it. MuJoCo states come from the engine's poses
 * through the body tree (`bodyTreeJoints`), rates by a central difference along the task rates.
 */
import { PoseStatus, type ArchitectureModelBase, type PlanarArchitecture } from '../architectures/types.js';
import type { CyclePath, EndPointState } from '../core/cycle.js';
import { CycleDynamics, CycleSamples, CycleTrajectory, DutyCycleAnalysis } from '../mechanics/dutyCycle.js';
import { cutChainState, simulateArchitecture } from '../simulate/simulateArchitecture.js';
import { buildSegments, FRACTION_NUDGE, type Segment, type SimulationResult } from '../simulate/shared.js';
import { LOOP_CLOSURE_SOLIMP, LOOP_CLOSURE_SOLREF, MJCF_TIMESTEP } from './mjcf.js';
import { loadMujocoEngine, MujocoRun } from './mujocoEngine.js';

/** Bounds of the check (issue: the exported model must stay true in motion): end point 0.05 mm, loop gap 0.01 mm. */
export const MJCF_CHECK_TOLERANCES = { endPoint: 5e-5, loopGap: 1e-5 } as const;

export interface MjcfCheckRun {
  readonly name: 'recorded-efforts' | 'zero-effort';
  /** What was run, in words. */
  readonly description: string;
  /** Time compared, s. */
  readonly duration: number;
  /** Largest and final distance of MuJoCo's end point from loopsmith's, m. */
  readonly endPointError: number;
  readonly finalEndPointError: number;
  /** Largest loop gap over the run, m. */
  readonly loopGap: number;
  /** Largest end-point travel over the run (how much moved), m. */
  readonly travel: number;
  readonly passed: boolean;
}

export interface MjcfCheckResult {
  /** The motion: the study's duty cycle at its evaluated pace, or the standard motion around the home pose. */
  readonly motion: 'duty-cycle' | 'standard-motion';
  /** The motion in words (and why the standard motion was used). */
  readonly motionNote: string;
  readonly cycleTime: number;
  /** The model's own settings as MuJoCo read them. */
  readonly settings: { readonly integrator: string; readonly timestep: number; readonly loopClosureSolref: string; readonly loopClosureSolimp: string };
  readonly runs: readonly MjcfCheckRun[];
  /** Worst over the runs, m. */
  readonly endPointError: number;
  readonly loopGap: number;
  readonly tolerances: typeof MJCF_CHECK_TOLERANCES;
  /** Largest difference between loopsmith's recorded efforts and the replayed ones (inverse dynamics along the motion), relative to the largest recorded effort. */
  readonly recordedEffortDeviation: number;
  /** True when the recorded efforts stay inside the motors' ctrlrange (the drives' peak efforts). */
  readonly effortsWithinCtrlRange: boolean;
  /** Simulated seconds per wall-clock second of MuJoCo (this machine, this run). */
  readonly simulatedTimePerWallSecond: number;
  readonly mujocoVersion: string;
  readonly passed: boolean;
}

const INTEGRATOR_NAMES = ['Euler', 'RK4', 'implicit', 'implicitfast'];
/** Spacing of the compared instants, s. */
const COMPARE_INTERVAL = 1e-3;

/**
 * A standard closed motion around the home pose for studies without a duty cycle: out by r along x,
 * a full circle of radius r about the home point, back (poly5, poly7, poly5; 0.3 + 0.6 + 0.3 s), the
 * 3-DOF platform turning by ±0.1 rad on the way. r = 2 % of the design's size proxy (at least 5 mm,
 * at most 30 mm), halved until the design can follow the motion (null when it cannot at r ≥ 1 mm).
 */
export function standardMotion(architecture: PlanarArchitecture<ArchitectureModelBase>, model: ArchitectureModelBase, home: { x: number; y: number; phi?: number }): CycleTrajectory | null {
  const turn = model.dof === 3 ? 0.1 : 0;
  const phi0 = model.dof === 3 ? (home.phi ?? 0) : 0;
  const withPhi = (value: number): { phi?: number } => (model.dof === 3 ? { phi: value } : {});
  for (let r = Math.min(0.03, Math.max(0.005, 0.02 * architecture.footprint(model))); r >= 1e-3; r /= 2) {
    const path: CyclePath = {
      start: [home.x, home.y],
      ...(model.dof === 3 ? { startPhi: phi0 } : {}),
      steps: [
        { kind: 'move', to: [home.x + r, home.y], ...withPhi(phi0 + turn), law: 'poly5', time: 0.3 },
        { kind: 'arc', centre: [home.x, home.y], angle: 2 * Math.PI, ...withPhi(phi0 - turn), law: 'poly7', time: 0.6 },
        { kind: 'move', to: [home.x, home.y], ...withPhi(phi0), law: 'poly5', time: 0.3 },
      ],
    };
    const trajectory = new CycleTrajectory(path);
    if (new DutyCycleAnalysis(new CycleSamples(trajectory, 120), null, architecture).run(model)) return trajectory;
  }
  return null;
}

/** MuJoCo joint positions and rates (tree order) at task pose `task` moving at `rate` (engine poses, central difference). */
function treeState(
  architecture: PlanarArchitecture<ArchitectureModelBase>, model: ArchitectureModelBase, task: readonly number[], rate: readonly number[],
): { qpos: Float64Array; qvel: Float64Array } {
  const pose = architecture.createPose();
  const at = (h: number): Float64Array => {
    const status = architecture.solvePose(model, pose, task[0]! + h * rate[0]!, task[1]! + h * rate[1]!, (task[2] ?? 0) + h * (rate[2] ?? 0));
    if (status === PoseStatus.Unreachable) throw new Error('MJCF check: a pose of the motion cannot be assembled');
    return architecture.bodyTreeJoints(model, pose);
  };
  const h = 1e-6;
  const ahead = at(h);
  const behind = at(-h);
  const qpos = at(0);
  const kinds = architecture.bodyTree(model).bodies.filter((b) => b.joint !== null).map((b) => b.joint!.kind);
  const qvel = Float64Array.from(qpos, (_, k) => {
    let d = ahead[k]! - behind[k]!;
    if (kinds[k] === 'revolute') d = Math.atan2(Math.sin(d), Math.cos(d));
    return d / (2 * h);
  });
  return { qpos, qvel };
}

/** The task pose and rate (x, y[, φ]) of a cut-chain state. */
function taskOf(y: Float64Array, dof: number): { task: number[]; rate: number[] } {
  const N = 2 * dof + (dof === 3 ? 3 : 2);
  const P = 2 * dof;
  const k = dof === 3 ? 3 : 2;
  return { task: Array.from({ length: k }, (_, i) => y[P + i]!), rate: Array.from({ length: k }, (_, i) => y[N + P + i]!) };
}

/** The trajectory's state of largest end-point speed (sampled every millisecond). */
function fastestState(trajectory: CycleTrajectory): EndPointState {
  const s: EndPointState = { x: 0, y: 0, vx: 0, vy: 0, ax: 0, ay: 0, phi: 0, vphi: 0, aphi: 0 };
  let best = -1;
  let tBest = 0;
  for (let t = 0; t < trajectory.cycleTime; t += 1e-3) {
    trajectory.stateAt(t, s);
    const speed = Math.hypot(s.vx, s.vy);
    if (speed > best) { best = speed; tBest = t; }
  }
  trajectory.stateAt(tBest, s);
  return s;
}

interface Sites {
  readonly end: number;
  readonly closures: readonly (readonly [number, number])[];
}

function sitesOf(run: MujocoRun, architecture: PlanarArchitecture<ArchitectureModelBase>, model: ArchitectureModelBase): Sites {
  const tree = architecture.bodyTree(model);
  const end = ['end_point', 'centre'].map((name) => run.siteId(name)).find((id) => id >= 0);
  if (end === undefined) throw new Error('MJCF check: the model has no end_point or centre site');
  return { end, closures: tree.closures.map((c) => [run.siteId(c.site1), run.siteId(c.site2)] as const) };
}

/**
 * Number of leading samples of a free rigid run that stay in the design's operating poses: assembled
 * in its assembly mode (no type-2 singularity crossed), actuated joints inside their ranges, and the
 * chain in its working mode (inverse kinematics of P gives the chain's own joint positions).
 */
function samplesInOperatingPoses(result: SimulationResult, architecture: PlanarArchitecture<ArchitectureModelBase>, model: ArchitectureModelBase): number {
  const s = result.series;
  const pose = architecture.createPose();
  for (let k = 0; k < s.count; k++) {
    if (architecture.solvePose(model, pose, s.x[k]!, s.y[k]!, s.phi ? s.phi[k]! : 0) !== PoseStatus.Assembled) return k;
    for (let i = 0; i < model.dof; i++) {
      let gap = pose.q[i]! - s.positions[i]![k]!;
      if (model.actuators[i] === 'revolute') gap = Math.atan2(Math.sin(gap), Math.cos(gap));
      if (Math.abs(gap) > 1e-6) return k;
    }
  }
  return s.count;
}

/**
 * The computed-torque efforts of the rigid run as functions of time: with its exact model the run
 * tracks the motion to integration accuracy, so its efforts are the inverse dynamics along the motion
 * (CycleDynamics; checked against the recorded ones). `mean` integrates them over a MuJoCo step,
 * split where the motion's acceleration may jump (segment ends).
 */
class MotionEfforts {
  private readonly segments: Segment[];
  private readonly dynamics: CycleDynamics;
  private readonly state: EndPointState = { x: 0, y: 0, vx: 0, vy: 0, ax: 0, ay: 0, phi: 0, vphi: 0, aphi: 0 };
  private readonly scratch: Float64Array;
  private cursor = 0;

  constructor(architecture: PlanarArchitecture<ArchitectureModelBase>, private readonly model: ArchitectureModelBase, private readonly motion: CycleTrajectory, duration: number) {
    this.segments = buildSegments(motion, duration);
    this.dynamics = new CycleDynamics(architecture);
    this.scratch = new Float64Array(model.dof);
  }

  /** Efforts at time t inside `segment`, into out (N·m or N). */
  at(segment: Segment, t: number, out: Float64Array): void {
    const step = this.motion.path.steps[segment.step]!;
    let fraction = (t - segment.stepStart) / step.time;
    fraction = Math.min(Math.max(fraction, segment.fractionLow + FRACTION_NUDGE), segment.fractionHigh - FRACTION_NUDGE);
    this.motion.stepStateAtFraction(segment.step, fraction, this.state);
    const s = this.state;
    const d = this.dynamics;
    if (d.solveAt(this.model, s.x, s.y, s.phi ?? 0) === PoseStatus.Unreachable) throw new Error(`MJCF check: the motion cannot be assembled at t = ${t} s`);
    d.fromTaskMotion([s.vx, s.vy, s.vphi ?? 0], [s.ax, s.ay, s.aphi ?? 0]);
    for (let i = 0; i < this.model.dof; i++) out[i] = d.effortInertial[i]! + d.effortGravity[i]!;
  }

  /** The segment holding t (searched forward from the last one; t non-decreasing between calls, else reset). */
  segmentAt(t: number): Segment {
    if (this.segments[this.cursor]!.start > t) this.cursor = 0;
    while (this.cursor + 1 < this.segments.length && this.segments[this.cursor]!.end <= t) this.cursor++;
    return this.segments[this.cursor]!;
  }

  /** Mean efforts over [a, b], into out: the midpoint rule on each smooth piece (second order, like a step with held controls). */
  mean(a: number, b: number, out: Float64Array): void {
    const n = this.model.dof;
    out.fill(0);
    let lo = a;
    while (lo < b - 1e-15) {
      const segment = this.segmentAt(lo);
      const hi = Math.min(b, segment.end);
      if (hi <= lo) break;
      this.at(segment, 0.5 * (lo + hi), this.scratch);
      for (let i = 0; i < n; i++) out[i] = out[i]! + ((hi - lo) * this.scratch[i]!) / (b - a);
      lo = hi;
    }
  }
}

/** Steps MuJoCo from a rigid result's start and measures the gaps at its samples (one every `stride` steps). */
function replay(
  run: MujocoRun, sites: Sites, reference: SimulationResult, stride: number, steps: number, efforts: (k: number) => ArrayLike<number>,
): { endPointError: number; finalEndPointError: number; loopGap: number; travel: number } {
  const s = reference.series;
  let endPointError = 0, finalEndPointError = 0, loopGap = 0, travel = 0;
  const measure = (k: number): void => {
    const [x, y] = run.site(sites.end);
    finalEndPointError = Math.hypot(x - s.x[k]!, y - s.y[k]!);
    endPointError = Math.max(endPointError, finalEndPointError);
    travel = Math.max(travel, Math.hypot(s.x[k]! - s.x[0]!, s.y[k]! - s.y[0]!));
    for (const [a, b] of sites.closures) {
      const p = run.site(a), q = run.site(b);
      loopGap = Math.max(loopGap, Math.hypot(p[0] - q[0], p[1] - q[1]));
    }
  };
  measure(0);
  for (let k = 0; k < steps; k++) {
    run.step(efforts(k));
    if ((k + 1) % stride === 0) measure((k + 1) / stride);
  }
  return { endPointError, finalEndPointError, loopGap, travel };
}

/**
 * loopsmith's side of the check for one design and motion at MuJoCo time step `timestep`: the rigid
 * runs, the step means of the efforts, the MuJoCo start states. Built once, it serves any number of
 * exported files of the design with that time step (`runMjcfCheck`), e.g. a file and altered copies.
 */
export interface MjcfCheckReference {
  readonly architecture: PlanarArchitecture<ArchitectureModelBase>;
  readonly model: ArchitectureModelBase;
  readonly motion: CycleTrajectory;
  readonly motionKind: MjcfCheckResult['motion'];
  readonly motionNote: string;
  readonly timestep: number;
  /** MuJoCo steps per compared sample, steps of the tracked run and of the free run. */
  readonly stride: number;
  readonly steps: number;
  readonly coastSteps: number;
  readonly tracked: SimulationResult;
  readonly coasting: SimulationResult;
  /** Step means of the efforts, n per step. */
  readonly means: Float64Array;
  readonly trackedStart: { readonly qpos: Float64Array; readonly qvel: Float64Array };
  readonly coastingStart: { readonly qpos: Float64Array; readonly qvel: Float64Array };
  readonly recordedEffortDeviation: number;
  readonly effortsWithinCtrlRange: boolean;
}

/** Builds loopsmith's side of the check (see MjcfCheckReference); `trajectory` null: the standard motion around `home`. */
export function mjcfCheckReference(
  architecture: PlanarArchitecture<ArchitectureModelBase>, model: ArchitectureModelBase, trajectory: CycleTrajectory | null, home: { x: number; y: number; phi?: number }, timestep: number,
): MjcfCheckReference {
  // A design that cannot follow the study's cycle (a candidate of a sweep, say) is checked on the standard motion.
  const follows = trajectory !== null && new DutyCycleAnalysis(new CycleSamples(trajectory, 240), null, architecture).run(model);
  const motion = follows ? trajectory : standardMotion(architecture, model, home);
  if (!motion) throw new Error('MJCF check: the design cannot follow a standard motion of 1 mm around its home pose');
  const motionNote = follows ? 'the study\'s duty cycle at its evaluated pace'
    : trajectory ? 'the standard motion around the home pose (the design cannot follow the study\'s duty cycle)' : 'the standard motion around the home pose (the study has no duty cycle)';
  const dt = timestep;
  const n = model.dof;
  // Compared every `stride` steps (about every millisecond).
  const stride = Math.max(1, Math.round(COMPARE_INTERVAL / dt));
  const steps = stride * Math.floor(motion.cycleTime / (stride * dt) + 1e-9);
  const duration = steps * dt;
  const tracked = simulateArchitecture(architecture, model, { controller: 'computed-torque', trajectory: motion, duration, friction: null, outputInterval: stride * dt });
  const efforts = new MotionEfforts(architecture, model, motion, duration);
  const means = new Float64Array(steps * n);
  const mean = new Float64Array(n);
  for (let k = 0; k < steps; k++) {
    efforts.mean(k * dt, (k + 1) * dt, mean);
    means.set(mean, k * n);
  }
  const peak = model.drives ? model.drives.map((d) => d.peakEffort) : null;
  const effortsWithinCtrlRange = peak === null || tracked.series.torques.every((t, i) => !(Number.isFinite(peak[i]!) && peak[i]! > 0) || t.every((v) => Math.abs(v) <= peak[i]!));
  const start = taskOf(startState(architecture, model, motion), n);

  // Zero effort from the fastest state of the motion, compared while the actuated joints stay in range.
  const fast = fastestState(motion);
  const fastTask = n === 3 ? [fast.x, fast.y, fast.phi ?? 0] : [fast.x, fast.y];
  const fastRate = n === 3 ? [fast.vx, fast.vy, fast.vphi ?? 0] : [fast.vx, fast.vy];
  const z0 = new Float64Array(2 * (2 * n + (n === 3 ? 3 : 2)));
  if (!cutChainState(architecture, model, [...fastTask, 0], [...fastRate, 0], z0)) throw new Error('MJCF check: the fastest pose of the motion cannot be assembled');
  const coasting = simulateArchitecture(architecture, model, { controller: 'none', trajectory: null, duration, initialState: z0, outputInterval: stride * dt });
  const inside = samplesInOperatingPoses(coasting, architecture, model);
  return {
    architecture, model, motion, motionKind: follows ? 'duty-cycle' : 'standard-motion', motionNote, timestep: dt, stride, steps,
    coastSteps: stride * Math.max(0, Math.min(steps / stride, inside - 1)),
    tracked, coasting, means,
    trackedStart: treeState(architecture, model, start.task, start.rate),
    coastingStart: treeState(architecture, model, fastTask, fastRate),
    recordedEffortDeviation: effortDeviation(tracked, efforts),
    effortsWithinCtrlRange,
  };
}

/**
 * Runs one exported model (`xml`, written by architectureMjcf for the reference's design) in MuJoCo
 * with its own settings against the reference. Throws MujocoCheckError when MuJoCo is not installed
 * or refuses the model, and Error when the file's time step is not the reference's.
 */
export async function runMjcfCheck(reference: MjcfCheckReference, xml: string): Promise<MjcfCheckResult> {
  const mj = await loadMujocoEngine();
  const run = new MujocoRun(mj, xml);
  try {
    run.unclampControls();
    const ref = reference;
    const dt = run.timestep;
    if (Math.abs(dt - ref.timestep) > 1e-15) throw new Error(`MJCF check: the file's time step ${dt} s is not the reference's ${ref.timestep} s`);
    const n = ref.model.dof;
    const sites = sitesOf(run, ref.architecture, ref.model);
    let wall = 0;
    const timed = <T>(f: () => T): T => {
      const t0 = performance.now();
      const out = f();
      wall += (performance.now() - t0) / 1000;
      return out;
    };
    run.setState(ref.trackedStart.qpos, ref.trackedStart.qvel);
    const recorded = timed(() => replay(run, sites, ref.tracked, ref.stride, ref.steps, (k) => ref.means.subarray(k * n, (k + 1) * n)));
    run.setState(ref.coastingStart.qpos, ref.coastingStart.qvel);
    const zeros = new Float64Array(n);
    const free = timed(() => replay(run, sites, ref.coasting, ref.stride, ref.coastSteps, () => zeros));
    const tol = MJCF_CHECK_TOLERANCES;
    const verdict = (r: { endPointError: number; loopGap: number }): boolean => r.endPointError <= tol.endPoint && r.loopGap <= tol.loopGap;
    const runs: MjcfCheckRun[] = [
      { name: 'recorded-efforts', description: 'the efforts of loopsmith\'s computed-torque simulation of the motion, replayed open loop from its start', duration: ref.steps * dt, ...recorded, passed: verdict(recorded) },
      {
        name: 'zero-effort',
        description: `drives off, coasting under gravity from the motion's fastest state${ref.coastSteps < ref.steps ? ` (compared for ${(ref.coastSteps * dt).toFixed(4)} s, until the free motion leaves the design's operating poses: a joint range, the working or the assembly mode)` : ''}`,
        duration: ref.coastSteps * dt, ...free, passed: verdict(free),
      },
    ];
    return {
      motion: ref.motionKind,
      motionNote: ref.motionNote,
      cycleTime: ref.motion.cycleTime,
      settings: { integrator: INTEGRATOR_NAMES[run.integrator] ?? String(run.integrator), timestep: dt, loopClosureSolref: LOOP_CLOSURE_SOLREF, loopClosureSolimp: LOOP_CLOSURE_SOLIMP },
      runs,
      endPointError: Math.max(...runs.map((r) => r.endPointError)),
      loopGap: Math.max(...runs.map((r) => r.loopGap)),
      tolerances: tol,
      recordedEffortDeviation: ref.recordedEffortDeviation,
      effortsWithinCtrlRange: ref.effortsWithinCtrlRange,
      simulatedTimePerWallSecond: wall > 0 ? ((ref.steps + ref.coastSteps) * dt) / wall : Infinity,
      mujocoVersion: run.version,
      passed: runs.every((r) => r.passed),
    };
  } finally {
    run.dispose();
  }
}

/** The whole check of one exported model on `trajectory` (null: the standard motion around `home`), at the file's own time step. */
export async function checkMjcfInMotion(
  architecture: PlanarArchitecture<ArchitectureModelBase>, model: ArchitectureModelBase, xml: string, trajectory: CycleTrajectory | null, home: { x: number; y: number; phi?: number },
): Promise<MjcfCheckResult> {
  const timestep = Number(/<option[^>]*\stimestep="([^"]+)"/.exec(xml)?.[1] ?? MJCF_TIMESTEP);
  return runMjcfCheck(mjcfCheckReference(architecture, model, trajectory, home, timestep), xml);
}

/** Largest |recorded − inverse-dynamics| effort over the samples away from segment ends, relative to the largest recorded effort. */
function effortDeviation(tracked: SimulationResult, efforts: MotionEfforts): number {
  const s = tracked.series;
  const out = new Float64Array(s.torques.length);
  let worst = 0, peak = 0;
  for (let k = 0; k < s.count; k++) {
    const t = s.time[k]!;
    const segment = efforts.segmentAt(t);
    if (t - segment.start < 1e-9 || segment.end - t < 1e-9) continue;
    efforts.at(segment, t, out);
    s.torques.forEach((tau, i) => {
      worst = Math.max(worst, Math.abs(tau[k]! - out[i]!));
      peak = Math.max(peak, Math.abs(tau[k]!));
    });
  }
  return peak > 0 ? worst / peak : 0;
}

/** The cut-chain state at the start of a motion (its start pose and path rate). */
function startState(architecture: PlanarArchitecture<ArchitectureModelBase>, model: ArchitectureModelBase, motion: CycleTrajectory): Float64Array {
  const s: EndPointState = { x: 0, y: 0, vx: 0, vy: 0, ax: 0, ay: 0, phi: 0, vphi: 0, aphi: 0 };
  motion.stepStateAtFraction(0, 0, s);
  const n = model.dof;
  const out = new Float64Array(2 * (2 * n + (n === 3 ? 3 : 2)));
  if (!cutChainState(architecture, model, [s.x, s.y, s.phi ?? 0], [s.vx, s.vy, s.vphi ?? 0], out)) throw new Error('MJCF check: the start of the motion cannot be assembled');
  return out;
}
