/**
 * Link sections chosen from the study's tube list (categorical design variable `link_section`,
 * docs/accuracy.md): the chosen tube replaces the study's own section of the links it applies to,
 * for the mass, stiffness, out-of-plane and strength models alike.
 */
import type { LinkSection } from '../architectures/types.js';
import type { SectionChoiceSpec, TubeOption } from './spec.js';
import type { SectionProperties } from './sections.js';

/** The chosen tube of a design for a kind of link, or null when the study's own section applies. */
export function chosenTube(choice: SectionChoiceSpec | null | undefined, index: number | undefined, link: 'cranks' | 'rods'): TubeOption | null {
  if (!choice || index === undefined) return null;
  if (choice.appliesTo !== 'links' && choice.appliesTo !== link) return null;
  return choice.options[index] ?? null;
}

/** The chosen tube as the architecture models take a section, or null. */
export function tubeSection(choice: SectionChoiceSpec | null | undefined, index: number | undefined, link: 'cranks' | 'rods'): LinkSection | null {
  const tube = chosenTube(choice, index, link);
  if (!tube) return null;
  return { massPerLength: tube.massPerLength, area: tube.section.area, secondMoment: tube.section.inPlaneSecondMoment, youngsModulus: tube.youngsModulus };
}

/** Full section properties of a link: the chosen tube's, else the study's own shape (null when not known). */
export function linkSectionProperties(
  choice: SectionChoiceSpec | null | undefined,
  index: number | undefined,
  link: 'cranks' | 'rods',
  own: SectionProperties | null,
): SectionProperties | null {
  return chosenTube(choice, index, link)?.section ?? own;
}
