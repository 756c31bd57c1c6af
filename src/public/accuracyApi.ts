/**
 * The tolerance check of the public API (docs/accuracy.md) behind argument checks, like the other
 * main entry points (src/public/api.ts).
 */
import { toleranceScatter as engineToleranceScatter, type ToleranceScatterReport } from '../api/accuracy.js';
import { checkArguments, is, overridesArgument, studyArgument, type DesignOverrides } from './arguments.js';
import type { StudyInput } from './api.js';

/**
 * First-order end-point error under the study's tolerances at one pose, next to a seeded Monte Carlo
 * of `samples` perturbed arms closed exactly. x, y in m; phi in rad (3-DOF; default the study's φ_0).
 */
export function toleranceScatter(
  study: StudyInput,
  x: number,
  y: number,
  options: { readonly samples?: number; readonly seed?: number; readonly phi?: number; readonly overrides?: DesignOverrides } = {},
): ToleranceScatterReport {
  const s = studyArgument('toleranceScatter', study);
  checkArguments('toleranceScatter', {
    x: [x, is.number('end-point x, m')],
    y: [y, is.number('end-point y, m')],
    phi: [options.phi, is.optional(is.number('platform orientation, rad'))],
    samples: [options.samples, is.optional(is.integer(10, 'number of perturbed arms'))],
    seed: [options.seed, is.optional(is.integer(0, 'random seed'))],
  });
  return engineToleranceScatter(s, x, y, options.phi, overridesArgument('toleranceScatter', options.overrides), { samples: options.samples ?? 2000, seed: options.seed ?? 1 });
}
