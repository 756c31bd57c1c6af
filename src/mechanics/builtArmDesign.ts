/**
 * What the built-arm checks (src/accuracy/builtArm.ts) need from a study and a resolved design: the
 * study's accuracy sections, each link's section properties (its own shape or the chosen tube),
 * Young's modulus and shear modulus G = E / (2 (1 + ν)), and the drives at the joints.
 */
import type { BuiltArmDesign } from '../accuracy/builtArm.js';
import { chosenTube, linkSectionProperties } from '../accuracy/sectionChoice.js';
import type { LinkMaterial } from '../accuracy/structure.js';
import type { DriveAtJoint } from '../architectures/types.js';
import type { Study } from '../study/types.js';
import type { ResolvedDesign } from './designSpace.js';

/** The design's inputs to the built-arm checks, or null when the study has none of the accuracy sections. */
export function builtArmDesign(study: Study, resolved: ResolvedDesign, drives: readonly DriveAtJoint[] | null): BuiltArmDesign | null {
  const spec = study.accuracy;
  if (!spec) return null;
  const nu = spec.strength?.poissonRatio ?? 0.3;
  const material = (link: 'cranks' | 'rods', i: number): LinkMaterial => {
    const own = (link === 'cranks' ? spec.crankSections : spec.rodSections)[i] ?? null;
    const tube = chosenTube(spec.sectionChoice, resolved.linkSection, link);
    const youngsModulus = tube ? tube.youngsModulus : study.links[link][i]!.youngsModulus;
    return {
      section: linkSectionProperties(spec.sectionChoice, resolved.linkSection, link, own),
      youngsModulus,
      shearModulus: youngsModulus / (2 * (1 + nu)),
    };
  };
  const n = study.links.rods.length;
  return {
    spec,
    cranks: Array.from({ length: n }, (_, i) => material('cranks', i)),
    rods: Array.from({ length: n }, (_, i) => material('rods', i)),
    drives,
  };
}
