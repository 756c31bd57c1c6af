/**
 * Map layer of the first-order error ellipses (docs/accuracy.md): at a 5 × 5 lattice of the task
 * region (edges included), the k σ ellipse of the end-point error under the study's tolerances,
 * drawn magnified (the factor is in the map's label) so that the largest semi-axis is at most 0.4
 * of the lattice spacing. Only for studies with a tolerances section and a task region.
 */
import { PoseStatus } from '../core/pose.js';
import { builtArmAtPose } from '../mechanics/builtArmDesign.js';
import type { ArchitectureDesign } from '../mechanics/evaluate.js';
import { mapAxes, type MapScales } from './mapLayers.js';

/** Colour of the ellipses (a dark blue not used by the other map curves). */
export const ERROR_ELLIPSE_COLOUR = '#08306b';

interface EllipseRow { x: number; y: number; part: string; order: number }

/** A 1, 2, 5 × 10ⁿ factor at or below `value`. */
function roundFactor(value: number): number {
  const power = 10 ** Math.floor(Math.log10(value));
  const lead = value / power;
  return (lead >= 5 ? 5 : lead >= 2 ? 2 : 1) * power;
}

/** The ellipse layer and its magnification, or null (no tolerances, no task region, or no assembled lattice point). */
export function errorEllipseLayer(d: ArchitectureDesign, layout: MapScales, points = 5): { layer: object; magnification: number; coverage: number } | null {
  const study = d.study;
  const region = study.task.region;
  if (!study.accuracy?.tolerances || !region) return null;
  const pose = d.architecture.createPose();
  const phi = d.architecture.dof === 3 ? (study.orientation?.phi0 ?? 0) : 0;
  const halfW = region.shape === 'rectangle' ? region.width / 2 : region.radius;
  const halfH = region.shape === 'rectangle' ? region.height / 2 : region.radius;
  const found: { x: number; y: number; a: number; b: number; angle: number }[] = [];
  for (let i = 0; i < points; i++) {
    for (let j = 0; j < points; j++) {
      const x = region.centreX + halfW * (2 * i / (points - 1) - 1);
      const y = region.centreY + halfH * (2 * j / (points - 1) - 1);
      if (region.shape === 'circle' && (x - region.centreX) ** 2 + (y - region.centreY) ** 2 > region.radius ** 2 * (1 + 1e-12)) continue;
      if (d.architecture.solvePose(d.model, pose, x, y, phi) !== PoseStatus.Assembled || pose.inverseCondition === 0) continue;
      const r = builtArmAtPose(study, d.model, d.resolved, pose);
      if (!r?.errorEllipse) continue;
      found.push({ x, y, a: r.errorEllipse.major, b: r.errorEllipse.minor, angle: r.errorEllipse.angle });
    }
  }
  const largest = Math.max(0, ...found.map((e) => e.a));
  if (found.length === 0 || !(largest > 0)) return null;
  // The largest semi-axis drawn at 0.4 of the lattice spacing, so that neighbouring ellipses do not overlap.
  const spacing = (2 * Math.min(halfW, halfH)) / (points - 1);
  const magnification = roundFactor((0.4 * spacing) / largest);
  const rows: EllipseRow[] = [];
  found.forEach((e, k) => {
    const c = Math.cos(e.angle);
    const s = Math.sin(e.angle);
    for (let m = 0; m <= 48; m++) {
      const t = (2 * Math.PI * m) / 48;
      const u = e.a * magnification * Math.cos(t);
      const v = e.b * magnification * Math.sin(t);
      rows.push({ x: 1000 * (e.x + c * u - s * v), y: 1000 * (e.y + s * u + c * v), part: `ellipse ${k}`, order: m });
    }
  });
  const { xScale, yScale, xAxis, yAxis } = mapAxes(layout);
  return {
    magnification,
    coverage: study.accuracy.tolerances.coverage,
    layer: {
      name: 'error-ellipses',
      data: { values: rows },
      mark: { type: 'line', clip: true, strokeWidth: 1.5, color: ERROR_ELLIPSE_COLOUR },
      encoding: {
        x: { field: 'x', type: 'quantitative', scale: xScale, axis: xAxis },
        y: { field: 'y', type: 'quantitative', scale: yScale, axis: yAxis },
        detail: { field: 'part', type: 'nominal' },
        order: { field: 'order', type: 'quantitative' },
      },
    },
  };
}
