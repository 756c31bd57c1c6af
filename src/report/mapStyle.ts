/**
 * Colours, dashes and widths of the workspace map's curves, and the colour scale they are drawn on.
 *
 * Style rule: the 1/κ colour scale is viridis (dark purple at 0 through blue, teal and green to yellow
 * at 1), and a curve may lie anywhere on it — singular curves at the dark end, good regions at the
 * yellow end. So every curve colour must differ from EVERY colour the scale uses by at least
 * MIN_CURVE_SCALE_DELTA_E in CIELAB (CIE76 colour difference ΔE*ab, the Euclidean distance in
 * L*a*b*, D65 white; CIE Publication 15, Colorimetry). That rules out blues, teals, greens, yellows and
 * violets: the curves use white, black, greys, oranges, reds and magentas, and differ from each other
 * by dash pattern and width as well, so the map reads without colour. Tested in
 * tests/report/map-style.test.ts against 256 samples of the scale as Vega renders it.
 */
import { scheme } from 'vega';

/** Name of the continuous colour scheme of the 1/κ colour map (Vega). */
export const MAP_COLOUR_SCHEME = 'viridis';

/** Smallest CIE76 ΔE*ab between any curve colour and any colour of the scale. */
export const MIN_CURVE_SCALE_DELTA_E = 30;

/** Legend entries of the curve layer, in legend order. */
export const MAP_FEATURES = {
  reach: 'reachable region (boundary)',
  legSingularity: 'leg singularity (some sᵢ = 0)',
  mechanismSingularity: 'mechanism singularity (det A = 0)',
  usable: 'usable workspace (boundary)',
  task: 'task region',
  rail: 'slider rail',
  mechanism: 'mechanism at home pose',
  platform: 'platform at home pose',
  keepOut: 'keep-out zone',
  zone: 'task zone',
  interference: 'interference (clearance = 0)',
  regular: 'regular workspace',
  housing: 'drive housing',
} as const;
export type MapFeature = (typeof MAP_FEATURES)[keyof typeof MAP_FEATURES];

export interface MapCurveStyle {
  readonly feature: MapFeature;
  readonly colour: string;
  readonly dash: readonly number[];
  readonly width: number;
}

/** The curve palette (see the style rule above). Rails come first so that curves along a rail show on top. */
export const MAP_CURVE_STYLES: readonly MapCurveStyle[] = [
  { feature: MAP_FEATURES.rail, colour: '#404040', dash: [1, 0], width: 6 },
  { feature: MAP_FEATURES.reach, colour: '#1a1a1a', dash: [1, 0], width: 1.5 },
  { feature: MAP_FEATURES.legSingularity, colour: '#ff8c1a', dash: [7, 3], width: 2.5 },
  { feature: MAP_FEATURES.mechanismSingularity, colour: '#ff2d9b', dash: [1, 0], width: 3 },
  { feature: MAP_FEATURES.usable, colour: '#ffffff', dash: [1, 0], width: 3 },
  { feature: MAP_FEATURES.task, colour: '#8c2d04', dash: [6, 3], width: 2.5 },
  { feature: MAP_FEATURES.mechanism, colour: '#1a1a1a', dash: [1, 0], width: 4.5 },
  { feature: MAP_FEATURES.platform, colour: '#c0392b', dash: [1, 0], width: 3.5 },
  { feature: MAP_FEATURES.keepOut, colour: '#7f0000', dash: [1, 0], width: 3.5 },
  { feature: MAP_FEATURES.zone, colour: '#8c2d04', dash: [2, 2], width: 2.5 },
  { feature: MAP_FEATURES.interference, colour: '#e31a1c', dash: [5, 2, 1, 2], width: 2.5 },
  { feature: MAP_FEATURES.regular, colour: '#ffffff', dash: [10, 4], width: 2.5 },
  { feature: MAP_FEATURES.housing, colour: '#1a1a1a', dash: [3, 1.5], width: 2 },
];

/** Stroke colour of each curve feature (what the SVG paths carry). */
export const MAP_FEATURE_COLOURS: Readonly<Record<string, string>> = Object.fromEntries(MAP_CURVE_STYLES.map((f) => [f.feature, f.colour]));

/** Joint markers of the mechanism at its home pose (fills follow the same rule as the curves). */
export const MAP_JOINT_STYLES: readonly { joint: string; shape: string; fill: string }[] = [
  { joint: 'actuated pivot Aᵢ', shape: 'square', fill: '#1a1a1a' },
  { joint: 'base pivot (passive)', shape: 'square', fill: '#ffffff' },
  { joint: 'slider Sᵢ (actuated)', shape: 'square', fill: '#1a1a1a' },
  { joint: 'elbow Cᵢ', shape: 'circle', fill: '#ffffff' },
  { joint: 'platform pin Bᵢ', shape: 'circle', fill: '#c0392b' },
  { joint: 'end point P (home)', shape: 'diamond', fill: '#ff2d9b' },
  { joint: 'home point (not reachable)', shape: 'cross', fill: '#c0392b' },
];

/** Opacity of the colour map where the legs reach but the pose is not usable (the usable region reads first). */
export const UNUSABLE_OPACITY = 0.28;

/** sRGB colour (#rrggbb or rgb(r, g, b)) → [r, g, b] in 0…255. */
export function parseColour(colour: string): [number, number, number] {
  const hex = /^#([0-9a-f]{6})$/i.exec(colour.trim());
  if (hex) {
    const v = parseInt(hex[1]!, 16);
    return [(v >> 16) & 255, (v >> 8) & 255, v & 255];
  }
  const rgb = /^rgb\(\s*(\d+)\s*,\s*(\d+)\s*,\s*(\d+)\s*\)$/i.exec(colour.trim());
  if (rgb) return [Number(rgb[1]), Number(rgb[2]), Number(rgb[3])];
  throw new Error(`not an sRGB colour: ${colour}`);
}

/**
 * CIELAB (D65) of an sRGB colour: sRGB decoding (IEC 61966-2-1), linear RGB → XYZ with the sRGB
 * primaries, then L*a*b* (CIE 15). Common practice, no source beyond those standards.
 */
export function srgbToLab(colour: string): [number, number, number] {
  const lin = parseColour(colour).map((c) => {
    const v = c / 255;
    return v <= 0.04045 ? v / 12.92 : ((v + 0.055) / 1.055) ** 2.4;
  }) as [number, number, number];
  const x = (0.4124564 * lin[0] + 0.3575761 * lin[1] + 0.1804375 * lin[2]) / 0.95047;
  const y = 0.2126729 * lin[0] + 0.7151522 * lin[1] + 0.072175 * lin[2];
  const z = (0.0193339 * lin[0] + 0.119192 * lin[1] + 0.9503041 * lin[2]) / 1.08883;
  const f = (t: number): number => (t > 216 / 24389 ? Math.cbrt(t) : (24389 / 27 * t + 16) / 116);
  return [116 * f(y) - 16, 500 * (f(x) - f(y)), 200 * (f(y) - f(z))];
}

/** CIE76 colour difference ΔE*ab: Euclidean distance in CIELAB. */
export function deltaE76(a: string, b: string): number {
  const p = srgbToLab(a);
  const q = srgbToLab(b);
  return Math.hypot(p[0] - q[0], p[1] - q[1], p[2] - q[2]);
}

/** `count` colours of the map's colour scale from 0 to 1, as Vega renders them. */
export function mapScaleColours(count = 256): string[] {
  const interpolate = scheme(MAP_COLOUR_SCHEME) as (t: number) => string;
  return Array.from({ length: count }, (_, k) => interpolate(k / (count - 1)));
}
