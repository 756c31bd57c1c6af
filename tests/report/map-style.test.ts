/**
 * Readability of the workspace map (issue: maps a designer reads at a glance):
 * - every curve colour differs from every colour of the 1/κ colour scale by at least
 *   MIN_CURVE_SCALE_DELTA_E, measured as the CIE76 colour difference ΔE*ab (Euclidean distance in
 *   CIELAB, D65; CIE Publication 15, Colorimetry) against 256 samples of the scale as Vega renders it;
 * - a pixel inside a reachable but unusable area renders dimmed, unlike a pixel of the usable region
 *   with the same conditioning (rendered to PNG through resvg, pixels read back);
 * - the title carries a feasibility line and the design as label–value pairs.
 */
import { describe, expect, it } from 'vitest';
import { PoseStatus } from '../../src/architectures/types.js';
import { workspaceMapSpec } from '../../src/report/map.js';
import {
  deltaE76,
  mapScaleColours,
  MAP_CURVE_STYLES,
  MIN_CURVE_SCALE_DELTA_E,
  srgbToLab,
  UNUSABLE_OPACITY,
} from '../../src/report/mapStyle.js';
import { renderVegaLiteSvg, svgToPng } from '../../src/report/render.js';
import { studyFromParts } from '../helpers/fivebarModels.js';
import { decodePng, pixelHex } from './pngPixels.js';
import { svgPaths } from './svgPaths.js';

describe('colour rule of the map', () => {
  it('converts sRGB to CIELAB as the standards give (white, black, pure red)', () => {
    // Common practice, no source: white (100, 0, 0), black (0, 0, 0); sRGB red ≈ (53.24, 80.09, 67.20) (from memory).
    const white = srgbToLab('#ffffff');
    expect(white[0]).toBeCloseTo(100, 3);
    expect(Math.abs(white[1])).toBeLessThan(0.01);
    expect(Math.abs(white[2])).toBeLessThan(0.01);
    expect(srgbToLab('#000000')[0]).toBeCloseTo(0, 6);
    const red = srgbToLab('#ff0000');
    expect(red[0]).toBeCloseTo(53.24, 1);
    expect(red[1]).toBeCloseTo(80.09, 1);
    expect(red[2]).toBeCloseTo(67.2, 1);
  });

  it(`every curve colour is at least ΔE*ab (CIE76) ${MIN_CURVE_SCALE_DELTA_E} from every colour of the scale`, () => {
    const scale = mapScaleColours(256);
    expect(scale[0]).toBe('rgb(68, 1, 84)');
    expect(scale[255]).toBe('rgb(253, 231, 37)');
    const closest = MAP_CURVE_STYLES.map((style) => ({ feature: style.feature, colour: style.colour, deltaE: Math.min(...scale.map((c) => deltaE76(style.colour, c))) }));
    console.info(closest.map((c) => `${c.feature} ${c.colour}: ΔE ≥ ${c.deltaE.toFixed(1)}`).join('; '));
    for (const c of closest) expect(c.deltaE, `${c.feature} ${c.colour}`).toBeGreaterThanOrEqual(MIN_CURVE_SCALE_DELTA_E);
  });

  it('the check has teeth: the earlier yellow and blue curves fail it', () => {
    const scale = mapScaleColours(256);
    for (const earlier of ['#F0E442', '#0072B2']) expect(Math.min(...scale.map((c) => deltaE76(earlier.toLowerCase(), c)))).toBeLessThan(MIN_CURVE_SCALE_DELTA_E);
  });
});

// Symmetric five-bar (pivots ±150 mm, cranks 200 mm, rods 300 mm, mode "+-"), task region around (0, 250) mm.
const study = studyFromParts({
  geometry: '{ base_span: 0.3, base_rise: 0, crank_1: 0.2, rod_1: 0.3, crank_2: { same_as: crank_1 }, rod_2: { same_as: rod_1 } }',
  workingMode: '+-',
  assemblyMode: '+',
  task: '{ region: { shape: rectangle, centre: [0, 0.25], width: 0.2, height: 0.1 } }',
  evaluation: '{ grid_cells: 120 }',
});

describe('map of a known design', () => {
  it('dims the reachable but unusable area: a pixel there differs from a usable pixel of the same 1/κ', async () => {
    const map = workspaceMapSpec(study, [], { cells: 120 });
    const fields = map.fields!;
    const svg = await renderVegaLiteSvg(map.spec);
    const origin = svgPaths(svg, /\bcurves_marks\b/)[0]!.origin;
    const scale = 2;
    const image = decodePng(svgToPng(svg, scale));
    const { xDomainMm, yDomainMm, widthPx } = map.layout;
    const mmPerPx = (xDomainMm[1] - xDomainMm[0]) / widthPx;
    const pixelAt = (x: number, y: number): string =>
      pixelHex(image, (origin[0] + (x * 1000 - xDomainMm[0]) / mmPerPx) * scale, (origin[1] + (yDomainMm[1] - y * 1000) / mmPerPx) * scale);
    // Nodes well inside (3 cells) the usable region or well inside the reachable, not usable area,
    // away from every curve (no leg or mechanism singularity, no region edge within 3 cells).
    const { nx, ny, x0, y0, h } = fields;
    const interior = (k: number, usable: boolean): boolean => {
      const i = k % nx;
      const j = (k - i) / nx;
      for (let dj = -3; dj <= 3; dj++) for (let di = -3; di <= 3; di++) {
        const q = (j + dj) * nx + (i + di);
        if (i + di < 0 || i + di >= nx || j + dj < 0 || j + dj >= ny) return false;
        if (fields.status[q] === PoseStatus.Unreachable) return false;
        if ((fields.regionMargin[q]! >= 0) !== usable) return false;
        if (Math.sign(fields.mechanismSine[q]!) !== Math.sign(fields.mechanismSine[k]!)) return false;
      }
      return true;
    };
    let pair: [number, number] | null = null;
    for (let a = 0; a < nx * ny && !pair; a++) {
      if (!interior(a, true)) continue;
      for (let b = 0; b < nx * ny; b++) {
        if (interior(b, false) && Math.abs(fields.inverseCondition[a]! - fields.inverseCondition[b]!) < 0.01 && Math.abs(fields.usable[b]!) > 0.02) { pair = [a, b]; break; }
      }
    }
    expect(pair, 'a usable and an unusable node of the same conditioning').not.toBeNull();
    const [a, b] = pair!;
    const point = (k: number): [number, number] => [x0 + (k % nx) * h, y0 + Math.floor(k / nx) * h];
    const usablePixel = pixelAt(...point(a));
    const unusablePixel = pixelAt(...point(b));
    const difference = deltaE76(usablePixel, unusablePixel);
    console.info(`usable node (${point(a).map((v) => (v * 1000).toFixed(0)).join(', ')}) mm 1/κ ${fields.inverseCondition[a]!.toFixed(3)} → ${usablePixel}; unusable node (${point(b).map((v) => (v * 1000).toFixed(0)).join(', ')}) mm 1/κ ${fields.inverseCondition[b]!.toFixed(3)} → ${unusablePixel}; ΔE*ab ${difference.toFixed(1)}`);
    expect(difference).toBeGreaterThan(20);
    // Dimmed means washed toward the white background: lighter than the usable pixel of the same colour.
    expect(srgbToLab(unusablePixel)[0]).toBeGreaterThan(srgbToLab(usablePixel)[0]);
    // And close to the scale colour blended with white at UNUSABLE_OPACITY (derived: source-over compositing).
    const scaleColour = mapScaleColours(1001)[Math.round(fields.inverseCondition[b]! * 1000)]!;
    const [r, g, bl] = scaleColour.match(/\d+/g)!.map(Number) as [number, number, number];
    const blend = (c: number): number => Math.round(UNUSABLE_OPACITY * c + (1 - UNUSABLE_OPACITY) * 255);
    const expected = '#' + [r, g, bl].map((c) => blend(c).toString(16).padStart(2, '0')).join('');
    expect(deltaE76(unusablePixel, expected)).toBeLessThan(8);
  }, 120_000);

  it('says in the title whether the design is feasible and lists the design as label–value pairs', () => {
    const map = workspaceMapSpec(study, [], { cells: 40 });
    const title = map.spec.title as { subtitle: string[] };
    expect(title.subtitle[0]).toMatch(/^(feasible|NOT feasible — fails: )/);
    expect(title.subtitle[0]!.startsWith('feasible')).toBe(map.feasible);
    expect(title.subtitle[1]).toMatch(/^five-bar — /);
  });

  it('names each failing constraint with its value and bound', () => {
    const strict = studyFromParts({
      geometry: '{ base_span: 0.3, base_rise: 0, crank_1: 0.2, rod_1: 0.3, crank_2: { same_as: crank_1 }, rod_2: { same_as: rod_1 } }',
      workingMode: '+-',
      assemblyMode: '+',
      task: '{ region: { shape: rectangle, centre: [0, 0.25], width: 0.2, height: 0.1 } }',
      evaluation: '{ grid_cells: 40 }',
      constraints: '[{ metric: workspace_area, min: 10 }]',
    });
    const map = workspaceMapSpec(strict, [], { cells: 40 });
    const line = (map.spec.title as { subtitle: string[] }).subtitle[0]!;
    expect(map.feasible).toBe(false);
    expect(line).toMatch(/^NOT feasible — fails: workspace_area [\d.]+ m² \(needs ≥ 10 m²\)/);
  });
});
