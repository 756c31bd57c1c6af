/**
 * Workspace maps of the 2-PRR, 3-RRR and 3-PRR (src/report/architectureMap.ts): the SVG's curves,
 * turned back into metres with the map's axis scales, lie where the closed forms put them.
 * Designs: the invented test designs of tests/architectures/models.ts.
 */
import { describe, expect, it } from 'vitest';
import { prr2 } from '../../src/architectures/prr2.js';
import { prr3 } from '../../src/architectures/prr3.js';
import { rrr3 } from '../../src/architectures/rrr3.js';
import { PoseStatus, type ArchitectureModelBase, type PlanarArchitecture } from '../../src/architectures/types.js';
import type { LeggedModel } from '../../src/architectures/legged.js';
import {
  ARCHITECTURE_MAP_FEATURE_COLOURS,
  ARCHITECTURE_MAP_FEATURES,
  architectureMapSpec,
  renderArchitectureMap,
  type ArchitectureMapOptions,
  type ArchitectureMapSpec,
} from '../../src/report/architectureMap.js';
import { renderVegaLiteSvg, svgToPng } from '../../src/report/render.js';
import { PRR2_INPUT, PRR3_INPUT, RRR3_INPUT } from '../architectures/models.js';
import { svgPaths } from './svgPaths.js';

const USABLE = { minInverseCondition: 0.2, minTransmissionAngle: (20 * Math.PI) / 180 };
const erase = (a: PlanarArchitecture<LeggedModel>): PlanarArchitecture<ArchitectureModelBase> => a as unknown as PlanarArchitecture<ArchitectureModelBase>;

/** The map's SVG paths of one feature, vertices in metres, and the tolerance of one pixel in metres. */
async function featurePoints(map: ArchitectureMapSpec, feature: string): Promise<{ lines: [number, number][][]; pixel: number }> {
  const { xDomainMm, yDomainMm, widthPx, heightPx } = map.layout;
  const mmPerPxX = (xDomainMm[1] - xDomainMm[0]) / widthPx;
  const mmPerPxY = (yDomainMm[1] - yDomainMm[0]) / heightPx;
  expect(Math.abs(mmPerPxX / mmPerPxY - 1)).toBeLessThan(1e-9); // equal scales
  const svg = await renderVegaLiteSvg(map.spec);
  const colour = ARCHITECTURE_MAP_FEATURE_COLOURS[feature]!.toLowerCase();
  const paths = svgPaths(svg, /\bcurves_marks\b/).filter((p) => p.stroke?.toLowerCase() === colour);
  const lines = paths.map((p) => p.points.map(([x, y]): [number, number] => [(xDomainMm[0] + x * mmPerPxX) / 1000, (yDomainMm[1] - y * mmPerPxY) / 1000]));
  return { lines, pixel: mmPerPxX / 1000 };
}

describe('2-PRR map (rail_height 50 mm, rods 350 and 300 mm, mode -+, unlimited rails)', () => {
  const model = prr2.buildModel(PRR2_INPUT);
  const rail = PRR2_INPUT.parameters.rail_height!;
  const [d1, d2] = [PRR2_INPUT.parameters.rod_1!, PRR2_INPUT.parameters.rod_2!];
  const options: ArchitectureMapOptions = { usable: USABLE, taskRegion: { shape: 'rectangle', centreX: 0, centreY: 0.2, width: 0.3, height: 0.1 } };

  it('shows the leg singularity at |P_y − rail| = d_i within a grid cell, only where the other leg reaches', async () => {
    const map = architectureMapSpec(erase(prr2), model, options);
    const h = map.fields!.h;
    const { lines, pixel } = await featurePoints(map, ARCHITECTURE_MAP_FEATURES.legSingularity);
    expect(lines.length).toBeGreaterThan(0);
    // derived: u_i·e_rail = ±√(d_i² − (P_y − rail)²)/d_i vanishes exactly at |P_y − rail| = d_i (rod ⟂ rail).
    // Leg 1's lines (|Δy| = 0.35 m) lie outside leg 2's band (|Δy| ≤ 0.3 m): not drawn. Leg 2's lines: y = rail ± d_2.
    const expected = [rail + d2, rail - d2];
    let vertices = 0;
    let worst = 0;
    const near = new Set<number>();
    for (const line of lines) {
      for (const [, y] of line) {
        worst = Math.max(worst, Math.min(...expected.map((ye) => Math.abs(y - ye))));
        const k = expected.findIndex((ye) => Math.abs(y - ye) < h + pixel);
        expect(k, `vertex at y = ${y} m`).toBeGreaterThanOrEqual(0);
        near.add(k);
        vertices++;
      }
    }
    expect(near.size).toBe(2);
    expect(vertices).toBeGreaterThan(20);
    console.info(`2-PRR leg singularity: ${vertices} vertices, worst |y − (rail ± d_2)| = ${(worst * 1000).toFixed(3)} mm, grid cell ${(h * 1000).toFixed(3)} mm, pixel ${(pixel * 1000).toFixed(3)} mm`);
    // The lines span the drawn window along the rail (unbounded band): from one side of the grid to the other.
    const xs = lines.flat().map(([x]) => x);
    expect(Math.max(...xs) - Math.min(...xs)).toBeGreaterThan(2 * d1);
    // Sanity of the closed form with the engine: just inside the band edge, |s_2| is small and matches it.
    const pose = prr2.createPose();
    const dy = d2 * (1 - 1e-6);
    expect(prr2.solvePose(model, pose, 0.05, rail + dy)).not.toBe(PoseStatus.Unreachable);
    expect(Math.abs(Math.abs(pose.legSine[1]!) - Math.sqrt(d2 * d2 - dy * dy) / d2)).toBeLessThan(1e-12);
  });

  it('shows the mechanism singularity on the rail (det A ∝ (P_y − rail)(x_2 − x_1), derived) and the rail itself', async () => {
    const map = architectureMapSpec(erase(prr2), model, options);
    const h = map.fields!.h;
    const mechanism = await featurePoints(map, ARCHITECTURE_MAP_FEATURES.mechanismSingularity);
    expect(mechanism.lines.length).toBeGreaterThan(0);
    for (const [, y] of mechanism.lines.flat()) expect(Math.abs(y - rail)).toBeLessThan(h + mechanism.pixel);
    const rails = await featurePoints(map, ARCHITECTURE_MAP_FEATURES.rail);
    expect(rails.lines).toHaveLength(2);
    for (const [, y] of rails.lines.flat()) expect(Math.abs(y - rail)).toBeLessThan(rails.pixel);
    // Usable only above the rail (assembly +, mode -+) and within the task window: the task centre's region.
    expect(map.fields!.region).toBeGreaterThanOrEqual(0);
    const usable = await featurePoints(map, ARCHITECTURE_MAP_FEATURES.usable);
    for (const [, y] of usable.lines.flat()) expect(y).toBeGreaterThan(rail);
    expect(map.home?.source).toBe('task-centre');
    expect(map.home?.status).toBe(PoseStatus.Assembled);
  });
});

describe('3-RRR map at φ₀ = 0.3 rad', () => {
  const model = rrr3.buildModel(RRR3_INPUT);
  const phi0 = 0.3;
  const options: ArchitectureMapOptions = { usable: USABLE, phi0, taskRegion: { shape: 'circle', centreX: 0, centreY: 0, radius: 0.04 }, cells: 140 };

  it('draws leg singularities on the circles |P − (A_i − R(φ₀) b_i)| = p_i ± d_i and the platform through the pins', async () => {
    const map = architectureMapSpec(erase(rrr3), model, options);
    const h = map.fields!.h;
    const { lines, pixel } = await featurePoints(map, ARCHITECTURE_MAP_FEATURES.legSingularity);
    // derived: s_i = 0 ⇔ crank and rod aligned ⇔ |B_i − A_i| = p_i + d_i or |p_i − d_i|, with B_i = P + R(φ₀) b_i.
    const c = Math.cos(phi0);
    const s = Math.sin(phi0);
    const circles = [0, 1, 2].flatMap((i) => {
      const cx = model.baseX[i]! - (c * model.platformX[i]! - s * model.platformY[i]!);
      const cy = model.baseY[i]! - (s * model.platformX[i]! + c * model.platformY[i]!);
      return [model.crank[i]! + model.rod[i]!, Math.abs(model.crank[i]! - model.rod[i]!)].map((r) => ({ cx, cy, r }));
    });
    let vertices = 0;
    let worst = 0;
    for (const [x, y] of lines.flat()) {
      const distance = Math.min(...circles.map(({ cx, cy, r }) => Math.abs(Math.hypot(x - cx, y - cy) - r)));
      expect(distance).toBeLessThan(h + pixel);
      worst = Math.max(worst, distance);
      vertices++;
    }
    expect(vertices).toBeGreaterThan(100);
    console.info(`3-RRR leg singularity: ${vertices} vertices, worst distance to the closed-form circles ${(worst * 1000).toFixed(3)} mm, grid cell ${(h * 1000).toFixed(3)} mm`);
    // Platform: one closed triangle through the home pins P + R(φ₀) b_i.
    const platform = await featurePoints(map, ARCHITECTURE_MAP_FEATURES.platform);
    expect(platform.lines).toHaveLength(1);
    const triangle = platform.lines[0]!;
    expect(triangle).toHaveLength(4);
    for (let i = 0; i < 3; i++) {
      const bx = c * model.platformX[i]! - s * model.platformY[i]!;
      const by = s * model.platformX[i]! + c * model.platformY[i]!;
      expect(Math.hypot(triangle[i]![0] - bx, triangle[i]![1] - by)).toBeLessThan(platform.pixel);
    }
    // Mechanism singularity curves exist at this orientation and lie where the sampled mechanismSine changes sign.
    const mechanism = await featurePoints(map, ARCHITECTURE_MAP_FEATURES.mechanismSingularity);
    expect(mechanism.lines.length).toBeGreaterThan(0);
    const pose = rrr3.createPose();
    for (const [x, y] of mechanism.lines.flat().filter((_, k) => k % 7 === 0)) {
      // A sign change of mechanismSine within 1.5 grid cells (the contour runs through a cell whose corners
      // change sign; 8 directions so that a curve at any angle is crossed — derived from the construction).
      const values = Array.from({ length: 8 }, (_, k) => [1.5 * h * Math.cos((k * Math.PI) / 4), 1.5 * h * Math.sin((k * Math.PI) / 4)]).map(([dx, dy]) => {
        rrr3.solvePose(model, pose, x + dx!, y + dy!, phi0);
        return pose.status === PoseStatus.Unreachable ? Number.NaN : pose.mechanismSine;
      }).filter((v) => Number.isFinite(v));
      expect(Math.min(...values) * Math.max(...values)).toBeLessThanOrEqual(0);
    }
  });
});

describe('3-PRR map (tangential rails, unlimited)', () => {
  const model = prr3.buildModel({ ...PRR3_INPUT, assembly: -1 });
  const options: ArchitectureMapOptions = { usable: USABLE, taskRegion: { shape: 'circle', centreX: 0, centreY: -0.05, radius: 0.04 } };

  it('draws rails on the rail lines and leg singularities where the rod is perpendicular to its rail', async () => {
    const map = architectureMapSpec(erase(prr3), model, options);
    const h = map.fields!.h;
    const rails = await featurePoints(map, ARCHITECTURE_MAP_FEATURES.rail);
    expect(rails.lines).toHaveLength(3);
    rails.lines.forEach((line, i) => {
      for (const [x, y] of line) {
        const offset = model.railX[i]! * (y - model.baseY[i]!) - model.railY[i]! * (x - model.baseX[i]!);
        expect(Math.abs(offset)).toBeLessThan(rails.pixel);
      }
    });
    // derived: u_i·e_r,i = 0 ⇔ the pin B_i = P + b_i (φ₀ = 0) lies at distance d_i from rail i.
    const { lines, pixel } = await featurePoints(map, ARCHITECTURE_MAP_FEATURES.legSingularity);
    expect(lines.length).toBeGreaterThan(0);
    let worst = 0;
    for (const [x, y] of lines.flat()) {
      const distance = Math.min(...[0, 1, 2].map((i) => {
        const bx = x + model.platformX[i]! - model.baseX[i]!;
        const by = y + model.platformY[i]! - model.baseY[i]!;
        return Math.abs(Math.abs(model.railX[i]! * by - model.railY[i]! * bx) - model.rod[i]!);
      }));
      expect(distance).toBeLessThan(h + pixel);
      worst = Math.max(worst, distance);
    }
    console.info(`3-PRR leg singularity: worst | |offset from rail| − d_i | ${(worst * 1000).toFixed(3)} mm, grid cell ${(h * 1000).toFixed(3)} mm`);
    // The reachable set is bounded here (three slanted bands): the window was tightened to it, not cut.
    expect(map.fields!.windowCut).toBe(false);
  });

  it('renders to a PNG with the slider and platform legend entries', async () => {
    const svg = await renderArchitectureMap(erase(prr3), model, { ...options, cells: 60 });
    expect(svg).toContain('slider Sᵢ (actuated)');
    expect(svg).toContain('platform at home pose');
    expect(svg).toContain('x (mm)');
    const png = svgToPng(svg, 1);
    expect(png.subarray(1, 4).toString('latin1')).toBe('PNG');
    expect(png.length).toBeGreaterThan(10_000);
  });
});
