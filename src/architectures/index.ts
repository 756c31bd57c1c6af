/**
 * The one registry of loopsmith's architectures (see types.ts and docs/architectures.md): the only
 * list of architecture names. Adding an architecture: its file in this folder, plus one line here.
 */
import { fiveBar } from './fivebar.js';
import { prr2 } from './prr2.js';
import { prr3 } from './prr3.js';
import { rrr3 } from './rrr3.js';
import { rpr3 } from './rpr3.js';
import type { ArchitectureModelBase, PlanarArchitecture } from './types.js';

const REGISTRY = {
  'five-bar': fiveBar,
  '2-prr': prr2,
  '3-rrr': rrr3,
  '3-prr': prr3,
  '3-rpr': rpr3,
};

/** Names of the architectures: the registry's keys. */
export type ArchitectureName = keyof typeof REGISTRY;

/** Every architecture by name. The model type is erased here; use the named exports for typed access. */
export const ARCHITECTURES = REGISTRY as unknown as Readonly<Record<ArchitectureName, PlanarArchitecture<ArchitectureModelBase>>>;

/** The architecture names in registry order. */
export const ARCHITECTURE_NAMES = Object.keys(REGISTRY) as ArchitectureName[];

export { fiveBar, prr2, prr3, rrr3 };
export * from './types.js';
export { orientationRanges, orientationRequirementMargin, ASSEMBLED_AND_REGULAR } from './orientation.js';
export { characteristicLengthForPoses, inverseConditionAtLength, optimalCharacteristicLength } from './conditioning.js';
export type { LeggedModel, LegKind, LegGeometry } from './legged.js';
