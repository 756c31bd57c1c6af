/**
 * Rendering of charts: Vega-Lite specs compiled to Vega and rendered headless to SVG in Node (no
 * browser, no network), SVG to PNG with resvg. Our own visual style lives in REPORT_THEME; colours
 * are colour-blind safe: Okabe–Ito for categories, viridis for continuous fields.
 */
import { Resvg } from '@resvg/resvg-js';
import * as vega from 'vega';
import { compile, type Config, type TopLevelSpec } from 'vega-lite';

/**
 * Okabe–Ito palette (Okabe & Ito 2008, "Color Universal Design", from memory): distinguishable
 * under the common colour-vision deficiencies.
 */
export const OKABE_ITO = {
  black: '#000000',
  orange: '#E69F00',
  skyBlue: '#56B4E9',
  bluishGreen: '#009E73',
  yellow: '#F0E442',
  blue: '#0072B2',
  vermillion: '#D55E00',
  reddishPurple: '#CC79A7',
} as const;

/** Font stack: DejaVu Sans ships with Debian (fonts-dejavu-core) and is what the PNG renderer uses. */
export const FONT_FAMILY = 'DejaVu Sans, Verdana, Arial, sans-serif';

/** loopsmith's chart style. */
export const REPORT_THEME: Config = {
  background: '#ffffff',
  font: FONT_FAMILY,
  padding: 8,
  view: { stroke: '#9a9a9a', strokeWidth: 1 },
  title: { anchor: 'start', fontSize: 15, fontWeight: 'bold', color: '#1a1a1a', subtitleColor: '#444444', subtitleFontSize: 12, offset: 10 },
  axis: {
    labelColor: '#333333',
    labelFontSize: 11,
    titleColor: '#1a1a1a',
    titleFontSize: 12,
    titleFontWeight: 'normal',
    domainColor: '#777777',
    tickColor: '#777777',
    gridColor: '#e4e4e4',
    gridDash: [2, 2],
  },
  legend: { labelFontSize: 11, titleFontSize: 12, titleFontWeight: 'normal', labelColor: '#333333', titleColor: '#1a1a1a', symbolStrokeWidth: 2 },
  range: { category: [OKABE_ITO.blue, OKABE_ITO.vermillion, OKABE_ITO.bluishGreen, OKABE_ITO.orange, OKABE_ITO.reddishPurple, OKABE_ITO.skyBlue, OKABE_ITO.yellow, OKABE_ITO.black] },
  point: { size: 36 },
  line: { strokeWidth: 2 },
};

/** Compile a Vega-Lite spec with our theme and render it to an SVG string (headless, offline). */
export async function renderVegaLiteSvg(spec: TopLevelSpec): Promise<string> {
  const compiled = compile(spec, { config: REPORT_THEME }).spec;
  const view = new vega.View(vega.parse(compiled), { renderer: 'none' });
  try {
    return await view.toSVG();
  } finally {
    view.finalize();
  }
}

/** Rasterise an SVG to PNG with resvg, using the system fonts (DejaVu Sans by default). */
export function svgToPng(svg: string, scale = 2): Buffer {
  const resvg = new Resvg(svg, {
    background: '#ffffff',
    fitTo: { mode: 'zoom', value: scale },
    font: { loadSystemFonts: true, defaultFontFamily: 'DejaVu Sans', sansSerifFamily: 'DejaVu Sans' },
  });
  return Buffer.from(resvg.render().asPng());
}
