/**
 * Workspace map: the SVG holds the singularity curves and the task region at the right coordinates,
 * for a symmetric five-bar whose singular points are known in closed form. Pixel positions are turned
 * back into mm with the axis scales the map sets (MapLayout: domain in mm over plotting-area px).
 */
import { describe, expect, it } from 'vitest';
import { renderWorkspaceMap, workspaceMapSpec, MAP_FEATURES, MAP_FEATURE_COLOURS } from '../../src/report/map.js';
import { renderVegaLiteSvg, svgToPng } from '../../src/report/render.js';
import { FiveBarPose, solvePose } from '../helpers/fiveBarClosedForm.js';
import { makeFiveBarModel, studyFromParts } from '../helpers/fivebarModels.js';
import { svgPaths } from './svgPaths.js';

// Symmetric design: pivots A_1,2 = (∓a, 0) with a = 0.15 m (base_span 0.3 m), cranks p = 0.2 m, rods d = 0.3 m.
const a = 0.15;
const p = 0.2;
const d = 0.3;
const study = studyFromParts({
  geometry: '{ base_span: 0.3, base_rise: 0, crank_1: 0.2, rod_1: 0.3, crank_2: { same_as: crank_1 }, rod_2: { same_as: rod_1 } }',
  workingMode: '+-',
  assemblyMode: '+',
  task: '{ region: { shape: rectangle, centre: [0, 0.25], width: 0.2, height: 0.1 } }',
  evaluation: '{ grid_cells: 120 }',
});

/**
 * Mechanism singularities on the symmetry axis x = 0 in working mode "+-" (derived): the elbows are
 * mirror images C_1,2 = (∓c_x, c_y), so u_1 = (c_x, y − c_y)/d, u_2 = (−c_x, y − c_y)/d and
 * det A = 2 c_x (y − c_y)/d². It vanishes
 *  (i) when the elbows are level with P (c_x = d): (d − a)² + y² = p² → y = +√(p² − (d − a)²) = +0.13229 m;
 *      at y = −0.13229 the "+" crank turns up instead, so only the upper point is in this mode;
 *  (ii) when both elbows meet on the axis (c_x = 0): c_y = ±√(p² − a²) = ±0.13229 m and P = C ± d·ŷ;
 *      the "+" sign of leg 1 (crank counter-clockwise from A_1→P) keeps P = (0, 0.13229 − 0.3) and
 *      P = (0, −0.13229 − 0.3) only.
 */
const typeTwoOnAxis = [Math.sqrt(p * p - (d - a) ** 2), Math.sqrt(p * p - a * a) - d, -Math.sqrt(p * p - a * a) - d].sort((u, v) => u - v);

function mapGeometry() {
  const map = workspaceMapSpec(study, [], {});
  const { xDomainMm, yDomainMm, widthPx, heightPx } = map.layout;
  const mmPerPxX = (xDomainMm[1] - xDomainMm[0]) / widthPx;
  const mmPerPxY = (yDomainMm[1] - yDomainMm[0]) / heightPx;
  const toMm = (px: readonly [number, number]): [number, number] => [
    (xDomainMm[0] + px[0] * mmPerPxX) / 1000,
    (yDomainMm[1] - px[1] * mmPerPxY) / 1000,
  ];
  return { map, mmPerPxX, mmPerPxY, toMm };
}

describe('workspace map of a symmetric five-bar', () => {
  it('uses the same mm per pixel on both axes', () => {
    const { mmPerPxX, mmPerPxY } = mapGeometry();
    expect(Math.abs(mmPerPxX / mmPerPxY - 1)).toBeLessThan(1e-9);
  });

  it('the closed-form type-2 points are where det A changes sign on the axis (sanity check of the derivation)', () => {
    const model = makeFiveBarModel({ pivot1: [-a, 0], pivot2: [a, 0], crank: [p, p], rod: [d, d], workingMode: '+-' });
    const pose = new FiveBarPose();
    for (const y of typeTwoOnAxis) {
      solvePose(model, pose, 0, y - 1e-4);
      const below = pose.detA;
      solvePose(model, pose, 0, y + 1e-4);
      expect(Math.sign(below) * Math.sign(pose.detA)).toBe(-1);
    }
  });

  it('draws type-1 curves on the closed-form reach circles, type-2 curves through the closed-form points, the task region at its corners', async () => {
    const { map, mmPerPxX, toMm } = mapGeometry();
    const svg = await renderVegaLiteSvg(map.spec);
    const paths = svgPaths(svg, /\bcurves_marks\b/);
    const byColour = (feature: string) => paths.filter((path) => path.stroke?.toLowerCase() === MAP_FEATURE_COLOURS[feature]!.toLowerCase());
    const pxTolerance = 0.75; // Vega rounds path coordinates; sub-pixel
    const reachTolerance = pxTolerance * mmPerPxX / 1000;
    const cell = map.fields!.h;

    // Type 1: every vertex lies on |P − A_i| = p + d or |p − d| for some leg (derived: s_i = 0 ⇔ crank and rod aligned).
    const typeOne = byColour(MAP_FEATURES.legSingularity);
    expect(typeOne.length).toBeGreaterThan(0);
    let vertices = 0;
    for (const path of typeOne) {
      for (const px of path.points) {
        const [x, y] = toMm(px);
        const distance = Math.min(
          ...[-a, a].flatMap((ax) => [Math.abs(Math.hypot(x - ax, y) - (p + d)), Math.abs(Math.hypot(x - ax, y) - Math.abs(p - d))]),
        );
        expect(distance).toBeLessThan(reachTolerance);
        vertices++;
      }
    }
    expect(vertices).toBeGreaterThan(100);

    // Type 2: crossings of x = 0 within a grid cell of the closed form, and one near each closed-form point.
    const typeTwo = byColour(MAP_FEATURES.mechanismSingularity);
    expect(typeTwo.length).toBeGreaterThan(0);
    const crossings: number[] = [];
    for (const path of typeTwo) {
      const pts = path.points.map(toMm);
      for (let k = 1; k < pts.length; k++) {
        const [x0, y0] = pts[k - 1]!;
        const [x1, y1] = pts[k]!;
        if ((x0 < 0 && x1 >= 0) || (x0 >= 0 && x1 < 0)) crossings.push(y0 + ((0 - x0) / (x1 - x0)) * (y1 - y0));
      }
    }
    for (const yc of crossings) {
      expect(Math.min(...typeTwoOnAxis.map((y) => Math.abs(y - yc)))).toBeLessThan(cell);
    }
    for (const y of typeTwoOnAxis) {
      expect(Math.min(...crossings.map((yc) => Math.abs(y - yc)))).toBeLessThan(cell);
    }

    // Task region: the rectangle's corners, centre (0, 0.25) m, 0.2 m × 0.1 m.
    const task = byColour(MAP_FEATURES.task);
    expect(task).toHaveLength(1);
    const corners = task[0]!.points.map(toMm);
    const expected = [[-0.1, 0.2], [0.1, 0.2], [0.1, 0.3], [-0.1, 0.3]];
    for (const [ex, ey] of expected) {
      expect(Math.min(...corners.map(([x, y]) => Math.hypot(x - ex!, y - ey!)))).toBeLessThan(reachTolerance);
    }
  });

  it('draws the mechanism at the task centre with elbows at the inverse-kinematics positions', async () => {
    const { map } = mapGeometry();
    expect(map.home?.source).toBe('task-centre');
    const [c1, c2] = map.home!.legs!.map((leg) => leg.proximal);
    expect(c1 && c2).toBeTruthy();
    expect(Math.hypot(c1![0] + a, c1![1])).toBeCloseTo(p, 12);
    expect(Math.hypot(c1![0] - 0, c1![1] - 0.25)).toBeCloseTo(d, 12);
    expect(Math.hypot(c2![0] - a, c2![1])).toBeCloseTo(p, 12);
    expect(Math.hypot(c2![0] - 0, c2![1] - 0.25)).toBeCloseTo(d, 12);
    const svg = await renderWorkspaceMap(study);
    expect(svg).toContain('mechanism at home pose');
    expect(svg).toContain('x (mm)');
    expect(svg).toContain('y (mm)');
  });

  it('finds a font for PNG text (a PNG with a word differs from a blank one)', () => {
    const frame = (body: string) => `<svg xmlns="http://www.w3.org/2000/svg" width="120" height="40">${body}</svg>`;
    const blank = svgToPng(frame(''), 1);
    const word = svgToPng(frame('<text x="5" y="28" font-family="DejaVu Sans, sans-serif" font-size="20">x (mm)</text>'), 1);
    expect(word.equals(blank)).toBe(false);
    expect(word.length).toBeGreaterThan(blank.length + 100);
  });

  it('renders to a PNG', async () => {
    const svg = await renderWorkspaceMap(study, ['base_span=250mm'], { cells: 40 });
    const png = svgToPng(svg, 1);
    expect(png.subarray(1, 4).toString('latin1')).toBe('PNG');
    expect(png.length).toBeGreaterThan(10_000);
  });
});
