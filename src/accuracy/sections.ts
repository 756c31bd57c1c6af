/**
 * Section properties of the link cross-sections loopsmith knows (exact formulas of the solid and
 * hollow round and rectangular sections; thin-walled torsion constants). SI units: m, m², m⁴.
 *
 * Orientation: links lie in the plane of motion. `width` is the section's size in that plane
 * (across the link, in-plane), `height` its size out of the plane. In-plane bending turns about the
 * plane normal, so it uses I_in = h w³/12 for a rectangle; out-of-plane bending uses I_out = w h³/12.
 */

export type SectionShape =
  | { readonly shape: 'round'; readonly diameter: number }
  | { readonly shape: 'round-tube'; readonly diameter: number; readonly wall: number }
  | { readonly shape: 'rectangle'; readonly width: number; readonly height: number }
  | { readonly shape: 'rectangular-tube'; readonly width: number; readonly height: number; readonly wall: number };

export interface SectionProperties {
  /** Area, m². */
  readonly area: number;
  /** Second moment for in-plane bending (about the plane normal), m⁴. */
  readonly inPlaneSecondMoment: number;
  /** Second moment for out-of-plane bending (about the in-plane axis across the link), m⁴. */
  readonly outOfPlaneSecondMoment: number;
  /** Torsion constant J (GJ = torsional rigidity), m⁴. */
  readonly torsionConstant: number;
  /** Distance from the neutral axis to the extreme fibre for in-plane bending, m. */
  readonly inPlaneHalfDepth: number;
  readonly label: string;
}

function mm(metres: number): string {
  return String(Math.round(metres * 1e4) / 10);
}

/**
 * Properties of a section. Round: I = π(D⁴ − d⁴)/64, J = 2I (exact for circular sections).
 * Rectangle a × b (a ≥ b): J = a b³ (1/3 − 0.21 (b/a)(1 − b⁴/(12 a⁴))) (Roark's Formulas for Stress
 * and Strain, 7th ed., Table 10.7 case 4, from memory). Rectangular tube, thin walls (Bredt):
 * J = 4 A_m² t / p_m with A_m = (w − t)(h − t), p_m = 2 (w − t) + 2 (h − t) (Roark, Table 10.7, from memory).
 */
export function sectionProperties(s: SectionShape): SectionProperties {
  switch (s.shape) {
    case 'round':
    case 'round-tube': {
      const d = s.diameter;
      const inner = s.shape === 'round' ? 0 : d - 2 * s.wall;
      const area = (Math.PI * (d * d - inner * inner)) / 4;
      const i = (Math.PI * (d ** 4 - inner ** 4)) / 64;
      const label = s.shape === 'round' ? `round ⌀${mm(d)} mm` : `round tube ⌀${mm(d)}×${mm(s.wall)} mm`;
      return { area, inPlaneSecondMoment: i, outOfPlaneSecondMoment: i, torsionConstant: 2 * i, inPlaneHalfDepth: d / 2, label };
    }
    case 'rectangle': {
      const { width: w, height: h } = s;
      const a = Math.max(w, h);
      const b = Math.min(w, h);
      const torsion = a * b ** 3 * (1 / 3 - 0.21 * (b / a) * (1 - b ** 4 / (12 * a ** 4)));
      return {
        area: w * h, inPlaneSecondMoment: (h * w ** 3) / 12, outOfPlaneSecondMoment: (w * h ** 3) / 12,
        torsionConstant: torsion, inPlaneHalfDepth: w / 2, label: `rectangle ${mm(w)}×${mm(h)} mm`,
      };
    }
    case 'rectangular-tube': {
      const { width: w, height: h, wall: t } = s;
      const wi = w - 2 * t;
      const hi = h - 2 * t;
      const am = (w - t) * (h - t);
      const pm = 2 * (w - t) + 2 * (h - t);
      return {
        area: w * h - wi * hi,
        inPlaneSecondMoment: (h * w ** 3 - hi * wi ** 3) / 12,
        outOfPlaneSecondMoment: (w * h ** 3 - wi * hi ** 3) / 12,
        torsionConstant: (4 * am * am * t) / pm,
        inPlaneHalfDepth: w / 2,
        label: `rectangular tube ${mm(w)}×${mm(h)}×${mm(t)} mm`,
      };
    }
  }
}

/** Euler critical load of a pinned–pinned strut, N: π² E I / L² (Euler; any mechanics-of-materials text). */
export function eulerLoad(youngsModulus: number, secondMoment: number, length: number): number {
  return (Math.PI * Math.PI * youngsModulus * secondMoment) / (length * length);
}

/**
 * Cantilever of length L under a tip force F: tip deflection F L³/(3 E I) and root moment F L; under
 * a uniform load w (N/m): tip deflection w L⁴/(8 E I), root moment w L²/2 (Roark's Formulas for Stress
 * and Strain, 7th ed., Table 8.1 cases 1a and 2a, from memory).
 */
export function cantilever(force: number, uniform: number, length: number, flexuralRigidity: number): { tipDeflection: number; rootMoment: number } {
  const L = length;
  return {
    tipDeflection: (force * L ** 3) / (3 * flexuralRigidity) + (uniform * L ** 4) / (8 * flexuralRigidity),
    rootMoment: force * L + (uniform * L * L) / 2,
  };
}

/**
 * Simply supported (pinned–pinned) beam of length L under a uniform load w (N/m): largest moment
 * w L²/8 at mid-span, mid-span deflection 5 w L⁴/(384 E I) (Roark's Formulas for Stress and Strain,
 * 7th ed., Table 8.1 case 2e, from memory). A rod carrying its own weight across its pins.
 */
export function simplySupportedUniform(uniform: number, length: number, flexuralRigidity: number): { maxMoment: number; centreDeflection: number } {
  const L = length;
  return { maxMoment: (uniform * L * L) / 8, centreDeflection: (5 * uniform * L ** 4) / (384 * flexuralRigidity) };
}
