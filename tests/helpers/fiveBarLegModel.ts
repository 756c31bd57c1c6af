/**
 * The five-bar's leg model (src/architectures/fivebar.ts) with the lumped inertia fields of a
 * five-bar closed-form model (fiveBarClosedForm.ts), so the tests can run the same invented design
 * through the closed forms of fiveBarClosedFormCycle.ts and through the architecture interface.
 */
import { fiveBar } from '../../src/architectures/fivebar.js';
import type { LeggedModel } from '../../src/architectures/legged.js';
import { RIGID_MASSLESS } from '../../src/architectures/types.js';
import type { FiveBarModel } from './fiveBarClosedForm.js';

export function legModelOf(m: FiveBarModel): LeggedModel {
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
