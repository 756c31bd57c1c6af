/**
 * The five-bar's leg model (src/architectures/fivebar.ts) with the lumped inertia fields of a
 * five-bar closed-form model (fiveBarClosedForm.ts), so the tests can run the same invented design
 * through the closed forms of fiveBarClosedFormCycle.ts and through the architecture interface.
 * The closed-form model carries every field of the simulate layer's FiveBarBodies, so this is the
 * library's own conversion (src/simulate/fiveBarBodies.ts), not a copy of it.
 */
import type { LeggedModel } from '../../src/architectures/legged.js';
import { fiveBarLegModel } from '../../src/simulate/fiveBarBodies.js';
import type { FiveBarModel } from './fiveBarClosedForm.js';

export function legModelOf(m: FiveBarModel): LeggedModel {
  return fiveBarLegModel(m);
}
