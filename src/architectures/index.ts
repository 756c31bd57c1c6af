/**
 * The architectures of loopsmith behind one interface (see types.ts and docs/architectures.md).
 * Adding an architecture: a file in this folder that exports a PlanarArchitecture, plus one line here.
 */
import { fiveBar } from './fivebar.js';
import { prr2 } from './prr2.js';
import { prr3 } from './prr3.js';
import { rrr3 } from './rrr3.js';
import type { ArchitectureModelBase, ArchitectureName, PlanarArchitecture } from './types.js';

/** Every architecture by name. The model type is erased here; use the named exports for typed access. */
export const ARCHITECTURES: Readonly<Record<ArchitectureName, PlanarArchitecture<ArchitectureModelBase>>> = {
  'five-bar': fiveBar as unknown as PlanarArchitecture<ArchitectureModelBase>,
  '2-prr': prr2 as unknown as PlanarArchitecture<ArchitectureModelBase>,
  '3-rrr': rrr3 as unknown as PlanarArchitecture<ArchitectureModelBase>,
  '3-prr': prr3 as unknown as PlanarArchitecture<ArchitectureModelBase>,
};

export { fiveBar, prr2, prr3, rrr3 };
export * from './types.js';
export { orientationRanges, orientationRequirementMargin, ASSEMBLED_AND_REGULAR } from './orientation.js';
export { characteristicLengthForPoses, inverseConditionAtLength, optimalCharacteristicLength } from './conditioning.js';
export type { LeggedModel } from './legged.js';
