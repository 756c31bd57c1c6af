/**
 * The five-bar names of the 0.x programmatic API, kept working on the one engine: the five-bar is an
 * architecture on the leg layer (src/architectures/fivebar.ts) and these are thin calls into it.
 * Since the five-bar joined the leg layer, `FiveBarModel` is its leg model (`LeggedModel`) and
 * `FiveBarPose` an `ArchitecturePose` of two legs: the field names are those of every architecture
 * (`q`, `legSine`, `J`, `D`, `tauG`, …), not the former five-bar-only ones (`theta1`, `s1`, `j11`, …).
 */
import { fiveBar } from '../architectures/fivebar.js';
import type { LeggedModel } from '../architectures/legged.js';
import { ArchitecturePose } from '../architectures/types.js';
import type { PoseStatus } from '../core/pose.js';
import { modelInput, type ResolvedDesign } from '../mechanics/designSpace.js';
import { mountModel } from '../cell/mounting.js';
import type { Study } from '../study/types.js';
import { ApiArgumentError } from './arguments.js';

/** The immutable model of one five-bar design: its leg model. */
export type FiveBarModel = LeggedModel;

/** Reusable per-pose data of the five-bar (an ArchitecturePose with two legs). */
export class FiveBarPose extends ArchitecturePose {
  constructor() {
    super(2);
  }
}

/** Inverse and first-order kinematics at end point (x, y), m; fills `pose` and returns its status. */
export function solvePose(model: FiveBarModel, pose: ArchitecturePose, x: number, y: number): PoseStatus {
  return fiveBar.solvePose(model, pose, x, y);
}

/** D, τ_g, M_x, K_x, compliances and natural frequencies at the pose last solved. */
export function poseDynamics(model: FiveBarModel, pose: ArchitecturePose): void {
  fiveBar.poseDynamics(model, pose);
}

/** End point (x, y), m, of crank angles θ_1, θ_2 (rad) in the model's assembly mode, into `out`; false when the legs cannot close. */
export function forwardKinematics(model: FiveBarModel, theta1: number, theta2: number, out: Float64Array): boolean {
  return fiveBar.forwardKinematics(model, [theta1, theta2], out);
}

/** Size proxy of the design, m. */
export function footprint(model: FiveBarModel): number {
  return fiveBar.footprint(model);
}

/** The model of a five-bar study's design (geometry, working mode and drives resolved, see resolveDesign). */
export function buildFiveBarModel(study: Study, resolved: ResolvedDesign): FiveBarModel {
  if (study.architecture !== 'five-bar' || study.members) {
    throw new ApiArgumentError(`buildFiveBarModel: the study's architecture is ${study.members ? 'a comparison' : study.architecture}, not the five-bar (use new Evaluator(study).architectureDesign(design))`);
  }
  // Mounted in its cell when the study gives cell.mounting (docs/cell.md).
  return mountModel(fiveBar.buildModel(modelInput(study, resolved)), resolved.mount);
}
