/**
 * Regular workspace: the largest rectangle of a given aspect ratio (width/height) at a given angle
 * inside one labelled region of a sampled margin grid (the usable workspace of a design).
 *
 * Method (ours): the region is resampled on a lattice aligned with the rectangle, whose step along
 * the width is `aspect` times its step along the height; on that lattice the wanted rectangles are
 * squares, and the largest all-inside square of lattice points is the classic dynamic programme
 * side(i, j) = 1 + min(side(i−1, j), side(i, j−1), side(i−1, j−1)). A lattice point is inside when
 * the region's margin, bilinearly interpolated from the grid nodes (nodes of other regions count as
 * outside), is ≥ 0. Accuracy: about one grid spacing on each side (the lattice step is at most the
 * grid spacing h); holes larger than a cell (keep-outs) are seen.
 */
/** A sampled, labelled grid (the workspace sampler's MarginGrid has these fields). */
export interface LabelledGrid {
  readonly nx: number;
  readonly ny: number;
  /** Node (0, 0) and spacing, m. */
  readonly x0: number;
  readonly y0: number;
  readonly h: number;
  /** Margin per node (≥ 0 inside), row-major. */
  readonly values: Float64Array;
  /** Region label per node (−1 outside). */
  readonly labels: Int32Array;
}

/** A rectangle of the plane, m and rad: centre, width (along `angle`), height. */
export interface PlacedRectangle {
  readonly centreX: number;
  readonly centreY: number;
  readonly width: number;
  readonly height: number;
  readonly angle: number;
}

/** Bilinear margin of `region` at (x, y) on the grid (nodes of other regions negative); −1 off the grid. */
export function regionMarginAt(grid: LabelledGrid, region: number, x: number, y: number): number {
  const { nx, ny, x0, y0, h, values, labels } = grid;
  const fi = (x - x0) / h;
  const fj = (y - y0) / h;
  const i = Math.floor(fi);
  const j = Math.floor(fj);
  if (i < 0 || j < 0 || i + 1 >= nx || j + 1 >= ny) return -1;
  const u = fi - i;
  const v = fj - j;
  const k = j * nx + i;
  const at = (m: number): number => {
    const value = values[m]!;
    return labels[m] === region ? value : -Math.abs(value) - 1e-12;
  };
  return (1 - v) * ((1 - u) * at(k) + u * at(k + 1)) + v * ((1 - u) * at(k + nx) + u * at(k + nx + 1));
}

/** Finds regular rectangles; owns its lattice buffer (one per evaluator). */
export class RegularWorkspaceFinder {
  private side = new Int32Array(0);

  /**
   * The largest rectangle with width/height = `aspect` at `angle` (rad) inside `region` of the grid,
   * or null when the region is empty (a single inside lattice point gives a zero-size rectangle).
   */
  find(grid: LabelledGrid, region: number, aspect = 1, angle = 0): PlacedRectangle | null {
    if (region < 0) return null;
    const c = Math.cos(angle);
    const s = Math.sin(angle);
    const { nx, ny, x0, y0, h, labels } = grid;
    // Extent of the region's nodes in the rectangle's frame (u along the width, v along the height).
    let umin = Infinity, umax = -Infinity, vmin = Infinity, vmax = -Infinity;
    for (let j = 0; j < ny; j++) {
      for (let i = 0; i < nx; i++) {
        if (labels[j * nx + i] !== region) continue;
        const x = x0 + i * h;
        const y = y0 + j * h;
        const u = x * c + y * s;
        const v = -x * s + y * c;
        if (u < umin) umin = u; if (u > umax) umax = u;
        if (v < vmin) vmin = v; if (v > vmax) vmax = v;
      }
    }
    if (!Number.isFinite(umin)) return null;
    const sv = h / Math.max(aspect, 1);
    const su = aspect * sv;
    umin -= h; vmin -= h; umax += h; vmax += h;
    const nu = Math.ceil((umax - umin) / su) + 1;
    const nv = Math.ceil((vmax - vmin) / sv) + 1;
    if (this.side.length < nu * nv) this.side = new Int32Array(nu * nv);
    const side = this.side;
    let best = 0;
    let bestI = 0;
    let bestJ = 0;
    for (let j = 0; j < nv; j++) {
      const v = vmin + j * sv;
      for (let i = 0; i < nu; i++) {
        const u = umin + i * su;
        const k = j * nu + i;
        if (regionMarginAt(grid, region, u * c - v * s, u * s + v * c) < 0) { side[k] = 0; continue; }
        const value = i === 0 || j === 0 ? 1 : 1 + Math.min(side[k - 1]!, side[k - nu]!, side[k - nu - 1]!);
        side[k] = value;
        if (value > best) { best = value; bestI = i; bestJ = j; }
      }
    }
    if (best === 0) return null;
    const cu = umin + (bestI - (best - 1) / 2) * su;
    const cv = vmin + (bestJ - (best - 1) / 2) * sv;
    return { centreX: cu * c - cv * s, centreY: cu * s + cv * c, width: (best - 1) * su, height: (best - 1) * sv, angle };
  }
}
