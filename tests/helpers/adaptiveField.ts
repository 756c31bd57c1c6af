/**
 * Test support: the adaptive area (src/mechanics/adaptive.ts) of a margin field given as a function,
 * on a coarse grid of `cells` across the square [−1, 1]², the field serving as both the usability and
 * the reach margin; the evaluation region is the largest coarse region.
 */
import { AdaptiveArea } from '../../src/mechanics/adaptive.js';
import { MarginGrid } from '../../src/mechanics/grid.js';

export type Field = (x: number, y: number) => number;

export function adaptiveArea(field: Field, cells = 24): { area: number; error: number; samples: number; inscribed: number } {
  const grid = new MarginGrid(cells + 8);
  grid.layout(-1, 1, -1, 1, cells);
  for (let j = 0; j < grid.ny; j++) {
    for (let i = 0; i < grid.nx; i++) {
      const v = field(grid.x0 + i * grid.h, grid.y0 + j * grid.h);
      grid.values[j * grid.nx + i] = v;
      grid.secondary[j * grid.nx + i] = v;
    }
  }
  grid.labelRegions();
  let largest = 0;
  for (let r = 1; r < grid.regionCount; r++) if (grid.regionSizes[r]! > grid.regionSizes[largest]!) largest = r;
  const adaptive = new AdaptiveArea();
  adaptive.begin(
    grid,
    (x, y, out) => {
      out[0] = field(x, y);
      out[1] = out[0]!;
    },
    largest,
  );
  const result = adaptive.area(0, 0.005);
  return { area: result.area, error: result.error, samples: adaptive.samples, inscribed: adaptive.inscribedRadius(largest) };
}
