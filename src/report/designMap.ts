/**
 * Workspace map of one design of any study through the architecture interface: the 2-PRR, 3-RRR,
 * 3-PRR and every member of a comparison study (a five-bar member through its adapter). Plain
 * five-bar studies keep the five-bar map (map.ts). The map takes the study's task region, usable
 * thresholds, orientation φ_0 and grid window (`evaluation.window`, clipped to the reach; without it
 * the map's own window, which follows the strokes).
 */
import type { ArchitectureModelBase, PlanarArchitecture, PlaneBox } from '../architectures/types.js';
import { Evaluator } from '../mechanics/evaluate.js';
import type { Study } from '../study/types.js';
import { formatQuantity } from '../study/units.js';
import { architectureMapSpec, type ArchitectureMapSpec } from './architectureMap.js';
import { MIN_MAP_CELLS } from './map.js';

/** True when a study's designs are drawn by the five-bar map (a single-architecture five-bar study). */
export function usesFiveBarMap(study: Study): boolean {
  return !study.members && study.architecture === 'five-bar';
}

/** Platform orientation the study's workspace is taken at, rad (0 for 2-DOF). */
export function studyPhi0(study: Study, dof: number): number {
  return dof === 3 ? (study.orientation?.phi0 ?? 0) : 0;
}

/**
 * The evaluator's grid box: the reachable box at φ_0 clipped to the study's `evaluation.window`;
 * undefined when it is unbounded or empty.
 */
export function studyGridBox(architecture: PlanarArchitecture<ArchitectureModelBase>, model: ArchitectureModelBase, study: Study, phi0: number): PlaneBox | undefined {
  const raw = architecture.reachableBox(model, phi0);
  if (!raw) return undefined;
  const w = study.evaluation.window;
  const box = w ? { xmin: Math.max(raw.xmin, w.xmin), xmax: Math.min(raw.xmax, w.xmax), ymin: Math.max(raw.ymin, w.ymin), ymax: Math.min(raw.ymax, w.ymax) } : raw;
  if (![box.xmin, box.xmax, box.ymin, box.ymax].every(Number.isFinite) || !(box.xmax > box.xmin && box.ymax > box.ymin)) return undefined;
  return box;
}

export interface DesignMapOptions {
  /** Grid cells across the window (default: the study's grid_cells, at least MIN_MAP_CELLS). */
  readonly cells?: number;
  readonly title?: string;
  readonly maxWidthPx?: number;
  readonly maxHeightPx?: number;
  readonly maxColourCells?: number;
}

/** The workspace-map spec of one design vector of a study (any architecture, comparison included). */
export function designMapSpec(study: Study, design: ArrayLike<number>, options: DesignMapOptions = {}): ArchitectureMapSpec & { readonly architecture: string } {
  const built = new Evaluator(study).architectureDesign(design);
  const member = built.study;
  const { architecture, model } = built;
  const phi0 = studyPhi0(member, model.dof);
  const box = member.evaluation.window ? studyGridBox(architecture, model, member, phi0) : undefined;
  // The design's variable parameters (fixed and tied ones follow from the study), as the five-bar map.
  const label = architecture.parameters
    .filter((p) => member.geometry[p.name]?.kind === 'variable')
    .map((p) => `${p.name} ${formatQuantity(built.resolved.geometry[p.name]!, p.kind === 'angle' ? 'angle' : 'length', 4)}`)
    .join(', ') || 'fixed geometry';
  const result = architectureMapSpec(architecture, model, {
    usable: { minInverseCondition: member.evaluation.minInverseCondition, minTransmissionAngle: member.evaluation.minTransmissionAngle },
    taskRegion: member.task.region ?? null,
    phi0,
    cells: options.cells ?? Math.max(member.evaluation.gridCells, MIN_MAP_CELLS),
    title: options.title ?? `Workspace of ${study.name}${study.members ? ` (${architecture.name} member)` : ''}`,
    designLabel: `${architecture.name}: ${label}`,
    ...(box ? { window: box } : {}),
    ...(options.maxWidthPx !== undefined ? { maxWidthPx: options.maxWidthPx } : {}),
    ...(options.maxHeightPx !== undefined ? { maxHeightPx: options.maxHeightPx } : {}),
    ...(options.maxColourCells !== undefined ? { maxColourCells: options.maxColourCells } : {}),
  });
  return { ...result, architecture: architecture.name };
}
