/**
 * `loopsmith map`: the workspace map of a study's baseline design with `--set` style overrides, for
 * every architecture — the one map specification (architectureMap.ts) through designMap.ts.
 */
import { chooseDesign } from '../api/design.js';
import type { Study } from '../study/types.js';
import { designMapSpec, MIN_MAP_CELLS } from './designMap.js';
import { renderVegaLiteSvg } from './render.js';

export { MIN_MAP_CELLS };
export { MAP_FEATURES, MAP_FEATURE_COLOURS } from './mapStyle.js';

export interface WorkspaceMapOptions {
  /** Grid cells across the window (default: the study's evaluation.grid_cells, at least 120). */
  readonly cells?: number;
  /** Largest width and height of the plotting area, px (defaults 560 and 520). */
  readonly maxWidthPx?: number;
  readonly maxHeightPx?: number;
  /** Colour-map cells across the longer side at most (default 120). */
  readonly maxColourCells?: number;
  /** Title above the chart (default: "Workspace of <study>"). */
  readonly title?: string;
}

/** A workspace map: Vega-Lite spec, layout, sampled fields, home pose, the design's metrics and feasibility. */
export type WorkspaceMapSpec = ReturnType<typeof designMapSpec>;

/** The map's Vega-Lite spec, layout, sampled fields, home pose, metrics and feasibility of the study's baseline with `--set` overrides. */
export function workspaceMapSpec(study: Study, overrides: readonly string[] = [], options: WorkspaceMapOptions = {}): WorkspaceMapSpec {
  const choice = chooseDesign(study, overrides);
  return designMapSpec(choice.study, choice.design, options);
}

/** SVG of the workspace map of the study's baseline design with `--set` style overrides. */
export async function renderWorkspaceMap(study: Study, overrides: readonly string[] = [], options: WorkspaceMapOptions = {}): Promise<string> {
  return renderVegaLiteSvg(workspaceMapSpec(study, overrides, options).spec);
}
