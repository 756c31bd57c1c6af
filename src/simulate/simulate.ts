/**
 * Forward simulation of a five-bar given by its bodies (`FiveBarBodies`, the layout of the former
 * five-bar engine model): the programmatic entry kept for callers of the five-bar API. It runs the one
 * path of every architecture — simulateArchitecture.ts, the cut-open chain of legChain.ts with the
 * loop closures held by Lagrange multipliers and Baumgarte stabilisation, integrated by ODEX between
 * the instants where the desired motion is not smooth — on the five-bar's leg model, and reports in
 * the layout of the five-bar's free chain (freeChain.ts):
 *
 * - `initialState` and `finalState` hold (θ_1, β_1, θ_2, β_2, θ̇_1, β̇_1, θ̇_2, β̇_2) (crank angles θ_i,
 *   absolute rod angles β_i, rad); the end point starts at arm 1's tip with arm 1's tip velocity;
 * - the potential energy series is measured as the free chain measures it (zero with every first
 *   moment at the pivots; derived: the leg chain's V differs by the constant −γ·((m_rod,1 + m_end) A_1
 *   + m_rod,2 A_2) whenever the end point sits on arm 1's tip).
 *
 * Controllers, friction, the unknown extra end mass, the energy balance and the summary are those of
 * simulateArchitecture.ts (docs/simulate.md).
 */
import { fiveBar } from '../architectures/fivebar.js';
import type { ArchitectureModelBase, PlanarArchitecture } from '../architectures/types.js';
import type { CycleTrajectory, EndPointState } from '../mechanics/dutyCycle.js';
import { fiveBarLegModel, type FiveBarBodies } from './fiveBarBodies.js';
import { SimulationError, type SimulationOptions, type SimulationResult } from './shared.js';
import { cutChainState, simulateArchitecture } from './simulateArchitecture.js';

export {
  CONTROLLER_KINDS,
  DEFAULT_DAMPING_RATIO,
  DEFAULT_FRICTION_SMOOTHING,
  DEFAULT_NATURAL_FREQUENCY,
  DEFAULT_OUTPUT_INTERVAL,
  DEFAULT_STABILISATION_RATE,
  FRACTION_NUDGE,
  SimulationError,
  allocateSeries,
  buildSegments,
  summarise,
  wrapAngle,
  type ControllerKind,
  type JointSimulationSummary,
  type Segment,
  type SimulationDriveLimits,
  type SimulationOptions,
  type SimulationResult,
  type SimulationSeries,
  type SimulationSummary,
  type SummaryInputs,
} from './shared.js';
export type { FiveBarBodies } from './fiveBarBodies.js';

const FIVE_BAR = fiveBar as unknown as PlanarArchitecture<ArchitectureModelBase>;

/** Indices of (θ_1, β_1, θ_2, β_2) and their rates in the five-bar's cut-chain state (z = θ_1, β_1, θ_2, β_2, x, y; then ż). */
const ARM_INDICES = [0, 1, 2, 3, 6, 7, 8, 9] as const;

/** The cut-chain state of an arm state (8 values): the end point at arm 1's tip, moving with it. */
function cutChainFromArms(model: FiveBarBodies, arms: ArrayLike<number>): Float64Array {
  const [t1, b1, t2, b2, dt1, db1, dt2, db2] = Array.from({ length: 8 }, (_, k) => arms[k]!);
  const p = model.crank[0], d = model.rod[0];
  return Float64Array.from([
    t1!, b1!, t2!, b2!,
    model.pivotX[0] + p * Math.cos(t1!) + d * Math.cos(b1!),
    model.pivotY[0] + p * Math.sin(t1!) + d * Math.sin(b1!),
    dt1!, db1!, dt2!, db2!,
    -p * Math.sin(t1!) * dt1! - d * Math.sin(b1!) * db1!,
    p * Math.cos(t1!) * dt1! + d * Math.cos(b1!) * db1!,
  ]);
}

/** Constant by which the leg chain's potential energy exceeds the free chain's, J (see the file comment). */
function potentialOffset(model: FiveBarBodies): number {
  const [gx, gy] = model.gravity;
  const m1 = model.rodMass[0] + model.endMass;
  const m2 = model.rodMass[1];
  return -(gx * (m1 * model.pivotX[0] + m2 * model.pivotX[1]) + gy * (m1 * model.pivotY[0] + m2 * model.pivotY[1]));
}

/** The initial state on the cycle: θ by inverse kinematics at the start, β from the pose, θ̇ and β̇ from the path velocity (8 values). */
export function cycleStartState(model: FiveBarBodies, trajectory: CycleTrajectory, out: Float64Array): boolean {
  const s: EndPointState = { x: 0, y: 0, vx: 0, vy: 0, ax: 0, ay: 0 };
  trajectory.stepStateAtFraction(0, 0, s);
  const state = new Float64Array(12);
  if (!cutChainState(FIVE_BAR, fiveBarLegModel(model), [s.x, s.y], [s.vx, s.vy], state)) return false;
  ARM_INDICES.forEach((index, k) => (out[k] = state[index]!));
  return true;
}

/**
 * Integrates the closed chain of a five-bar under the chosen controller. `model` is the controller's
 * model; the plant is the same model with `extraEndMass` added at the end point. Throws
 * SimulationError when the desired motion leaves the assembled poses, the controller's model cannot
 * be evaluated, or the integrator gives up.
 */
export function simulate(model: FiveBarBodies, options: SimulationOptions): SimulationResult {
  const legModel = fiveBarLegModel(model);
  const { initialState, ...rest } = options;
  let start: Float64Array | undefined;
  if (initialState) {
    if (initialState.length !== 8) throw new SimulationError('the initial state needs 8 values (θ1, β1, θ2, β2 and their rates)');
    start = cutChainFromArms(model, initialState);
  }
  const result = simulateArchitecture(FIVE_BAR, legModel, start ? { ...rest, initialState: start } : rest);
  const offset = potentialOffset(model);
  const potential = result.series.potential;
  for (let k = 0; k < potential.length; k++) potential[k] = potential[k]! - offset;
  return { ...result, finalState: Float64Array.from(ARM_INDICES, (index) => result.finalState[index]!) };
}
