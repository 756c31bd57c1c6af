/**
 * The bodies of a five-bar design in the layout of the former five-bar engine model (SI): what the
 * programmatic `simulate(model, …)` and the five-bar's own free chain (freeChain.ts) take, and their
 * translation to and from the five-bar's leg model (src/architectures/fivebar.ts), through which
 * `simulate` integrates like every other architecture.
 */
import { fiveBar } from '../architectures/fivebar.js';
import type { LeggedModel } from '../architectures/legged.js';
import { RIGID_MASSLESS } from '../architectures/types.js';
import type { JointRange } from '../core/pose.js';

export interface FiveBarBodies {
  /** Actuated pivots A_1, A_2, m. */
  readonly pivotX: readonly [number, number];
  readonly pivotY: readonly [number, number];
  /** Crank lengths p_i and rod lengths d_i, m. */
  readonly crank: readonly [number, number];
  readonly rod: readonly [number, number];
  /** Working-mode signs σ_i ∈ {+1, −1} and the assembly sign (required sign of det A). */
  readonly sigma: readonly [number, number];
  readonly assembly: 1 | -1;
  /** Actuated-joint ranges, rad, or null for an unlimited joint. */
  readonly jointLimits: readonly [JointRange | null, JointRange | null];
  /** Crank inertia about its pivot, elbow hub included (kg·m²), and its first moment along the crank (kg·m). */
  readonly crankInertiaAboutPivot: readonly [number, number];
  readonly crankFirstMoment: readonly [number, number];
  /** Rod mass (kg), centre-of-mass distance from the elbow (m), inertia about the centre of mass (kg·m²). */
  readonly rodMass: readonly [number, number];
  readonly rodComDistance: readonly [number, number];
  readonly rodInertiaAboutCom: readonly [number, number];
  /** Mass at the end point (end hub plus payload), kg. */
  readonly endMass: number;
  /** Drive inertia reflected to each crank, kg·m². */
  readonly reflectedInertia: readonly [number, number];
  /** Gravity in the plane, m/s². */
  readonly gravity: readonly [number, number];
}

/** The five-bar leg model with exactly these bodies (the end mass as the payload at P). */
export function fiveBarLegModel(m: FiveBarBodies): LeggedModel {
  const base = fiveBar.buildModel({
    parameters: { base_span: m.pivotX[1] - m.pivotX[0], base_rise: m.pivotY[1] - m.pivotY[0], crank_1: m.crank[0], rod_1: m.rod[0], crank_2: m.crank[1], rod_2: m.rod[1] },
    workingMode: m.sigma.map((s) => (s > 0 ? '+' : '-')).join(''),
    assembly: m.assembly,
    rods: [RIGID_MASSLESS, RIGID_MASSLESS],
    payloadMass: 0,
    gravity: m.gravity,
    drives: null,
  });
  return {
    ...base,
    baseX: [...m.pivotX],
    baseY: [...m.pivotY],
    jointLimits: [...m.jointLimits],
    proximalInertia: [...m.crankInertiaAboutPivot],
    proximalFirstMoment: [...m.crankFirstMoment],
    rodMass: [...m.rodMass],
    rodComDistance: [...m.rodComDistance],
    rodInertiaAboutCom: [...m.rodInertiaAboutCom],
    platformMass: 0,
    payloadMass: m.endMass,
    reflectedInertia: [...m.reflectedInertia],
    gravity: m.gravity,
  };
}

/** The bodies of a five-bar leg model (end hub and payload lumped into the end mass). */
export function fiveBarBodiesOf(model: LeggedModel): FiveBarBodies {
  if (model.architecture !== 'five-bar') throw new Error(`fiveBarBodiesOf: a five-bar model is needed, not a ${model.architecture}`);
  const pair = (v: readonly number[]): [number, number] => [v[0]!, v[1]!];
  return {
    pivotX: pair(model.baseX),
    pivotY: pair(model.baseY),
    crank: pair(model.crank),
    rod: pair(model.rod),
    sigma: pair(model.sigma),
    assembly: model.assembly,
    jointLimits: [model.jointLimits[0] ?? null, model.jointLimits[1] ?? null],
    crankInertiaAboutPivot: pair(model.proximalInertia),
    crankFirstMoment: pair(model.proximalFirstMoment),
    rodMass: pair(model.rodMass),
    rodComDistance: pair(model.rodComDistance),
    rodInertiaAboutCom: pair(model.rodInertiaAboutCom),
    endMass: model.platformMass + model.payloadMass,
    reflectedInertia: pair(model.reflectedInertia),
    gravity: model.gravity,
  };
}
