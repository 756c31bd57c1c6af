/**
 * Programmatic API of the built-arm checks at one pose (docs/accuracy.md): the figures `probe`
 * adds, and the Monte Carlo of the exact closed loop that checks the first-order accuracy
 * (`loopsmith tolerances`).
 */
import type { LeggedModel } from '../architectures/legged.js';
import { LoopsmithUserError } from '../core/errors.js';
import { monteCarloAtPose, type MonteCarloResult } from '../accuracy/monteCarlo.js';
import { isLeggedModel } from '../accuracy/builtArm.js';
import { builtArmField, withGearboxBacklash, type BuiltArmPoseReport } from '../mechanics/builtArmDesign.js';
import { drivesAtJoint } from '../mechanics/designSpace.js';
import { Evaluator } from '../mechanics/evaluate.js';
import type { PlanarArchitecture } from '../architectures/types.js';
import type { Study } from '../study/types.js';
import { chooseDesign } from './design.js';

export interface ToleranceScatterReport {
  readonly study: string;
  readonly design: Readonly<Record<string, number | string>>;
  readonly point: { readonly x: number; readonly y: number; readonly phi?: number };
  /** First-order figures at the point (worst case, RSS, ellipse). */
  readonly firstOrder: BuiltArmPoseReport;
  /** Monte Carlo of the exact closed loop (errors per sample left out: see `monteCarloAtPose` for them). */
  readonly monteCarlo: Omit<MonteCarloResult, 'errors'>;
  /** first-order RSS / Monte Carlo k σ, and first-order worst case / Monte Carlo maximum (≥ 1 expected). */
  readonly rssRatio: number;
  readonly worstRatio: number;
}

/** Error a user can cause in a tolerance check (no tolerances, a pose the design cannot take). */
export class ToleranceCheckError extends LoopsmithUserError {}

/**
 * First order against Monte Carlo at one pose of a design (baseline plus `NAME=VALUE` overrides).
 * `samples` perturbed arms, seeded: the same call gives the same numbers.
 */
export function toleranceScatter(
  study: Study,
  x: number,
  y: number,
  phi: number | undefined,
  overrides: readonly string[],
  options: { readonly samples: number; readonly seed: number },
): ToleranceScatterReport {
  const tol = study.accuracy?.tolerances;
  if (!tol) throw new ToleranceCheckError('the study has no tolerances section (see docs/accuracy.md); hint: add tolerances: { link_length: 0.02 mm, ... }');
  const choice = chooseDesign(study, overrides);
  const d = new Evaluator(choice.study).architectureDesign(choice.design);
  if (!isLeggedModel(d.model)) throw new ToleranceCheckError(`the ${d.architecture.name} is not built from legs; the tolerance check needs the leg layer`);
  const field = builtArmField(d, x, y, phi);
  if (!field.builtArm) throw new ToleranceCheckError(`the design cannot take the pose (${x}, ${y}${phi !== undefined ? `, ${phi}` : ''}) m/rad in its working and assembly mode, or it is singular there; hint: probe it first`);
  const at: [number, number, number] = [x, y, d.architecture.dof === 3 ? (phi ?? study.orientation?.phi0 ?? 0) : 0];
  const perDesign = withGearboxBacklash(tol, d.study, d.resolved);
  const mc = monteCarloAtPose(d.architecture as PlanarArchitecture<LeggedModel>, d.model, perDesign, drivesAtJoint(d.study, d.resolved.drives), at, options);
  const { errors: _errors, ...summary } = mc;
  return {
    study: study.name,
    design: choice.values,
    point: d.architecture.dof === 3 ? { x, y, phi: at[2] } : { x, y },
    firstOrder: field.builtArm,
    monteCarlo: summary,
    rssRatio: field.builtArm.positionErrorRss! / mc.positionAtCoverage,
    worstRatio: field.builtArm.positionErrorWorst! / mc.positionMax,
  };
}

export { builtArmField };
