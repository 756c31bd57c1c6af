/**
 * Zero-level contours of a field sampled on a regular grid (marching squares), joined into
 * polylines. Computation only: the polylines are drawn by the charting library (Vega-Lite line marks).
 */

export interface GridLayout {
  /** Nodes per row and per column. */
  readonly nx: number;
  readonly ny: number;
  /** Position of node (0, 0) and node spacing, m. */
  readonly x0: number;
  readonly y0: number;
  readonly h: number;
}

/** A contour polyline: x, y coordinates of its vertices, m. Closed when first and last vertex coincide. */
export interface Polyline {
  readonly x: number[];
  readonly y: number[];
}

/**
 * Polylines where `field` crosses zero, using only cells whose four corners pass `cellUsable`
 * (e.g. every corner reachable). Crossing points are linearly interpolated along cell edges;
 * saddle cells are split by the sign of the cell-centre average.
 */
export function zeroContours(layout: GridLayout, field: Float64Array, nodeUsable: (k: number) => boolean = () => true): Polyline[] {
  const { nx, ny, x0, y0, h } = layout;
  const vertical = nx * ny;
  const { segA, segB, segmentsAt } = contourSegments(layout, field, nodeUsable);
  const point = (edge: number): [number, number] => {
    const isVertical = edge >= vertical;
    const k = isVertical ? edge - vertical : edge;
    const i = k % nx;
    const j = (k - i) / nx;
    const a = field[k]!;
    const b = field[isVertical ? k + nx : k + 1]!;
    const t = a === b ? 0.5 : a / (a - b);
    return isVertical ? [x0 + i * h, y0 + (j + t) * h] : [x0 + (i + t) * h, y0 + j * h];
  };
  const used = new Uint8Array(segA.length);
  const lines: Polyline[] = [];
  const nextSegment = (edge: number): number => {
    for (const s of segmentsAt.get(edge) ?? []) if (!used[s]) return s;
    return -1;
  };
  for (let start = 0; start < segA.length; start++) {
    if (used[start]) continue;
    used[start] = 1;
    // Grow forward from segB, then backward from segA.
    const forward: number[] = [segA[start]!, segB[start]!];
    for (let edge = segB[start]!, s = nextSegment(edge); s >= 0; s = nextSegment(edge)) {
      used[s] = 1;
      edge = segA[s] === edge ? segB[s]! : segA[s]!;
      forward.push(edge);
    }
    const backward: number[] = [];
    for (let edge = segA[start]!, s = nextSegment(edge); s >= 0; s = nextSegment(edge)) {
      used[s] = 1;
      edge = segA[s] === edge ? segB[s]! : segA[s]!;
      backward.push(edge);
    }
    const edges = [...backward.reverse(), ...forward];
    const x: number[] = [];
    const y: number[] = [];
    for (const e of edges) {
      const [px, py] = point(e);
      x.push(px);
      y.push(py);
    }
    lines.push({ x, y });
  }
  return lines;
}

/** Marching-squares segments between cell edges; segmentsAt lists the segments that touch each edge. */
interface Segments {
  readonly segA: number[];
  readonly segB: number[];
  readonly segmentsAt: Map<number, number[]>;
}

/** The segments of every usable cell the zero level crosses (edge ids as in zeroContours). */
function contourSegments(layout: GridLayout, field: Float64Array, nodeUsable: (k: number) => boolean): Segments {
  const { nx, ny } = layout;
  // Edge ids: horizontal edge (i, j)–(i+1, j) = j·nx + i; vertical edge (i, j)–(i, j+1) = nx·ny + j·nx + i.
  const vertical = nx * ny;
  const segmentsAt = new Map<number, number[]>();
  const segA: number[] = [];
  const segB: number[] = [];
  const addSegment = (a: number, b: number): void => {
    const s = segA.length;
    segA.push(a);
    segB.push(b);
    for (const e of [a, b]) {
      const list = segmentsAt.get(e);
      if (list) list.push(s);
      else segmentsAt.set(e, [s]);
    }
  };
  const positive = (v: number): boolean => v >= 0;
  for (let j = 0; j + 1 < ny; j++) {
    for (let i = 0; i + 1 < nx; i++) {
      const k00 = j * nx + i;
      const k10 = k00 + 1;
      const k01 = k00 + nx;
      const k11 = k01 + 1;
      if (!nodeUsable(k00) || !nodeUsable(k10) || !nodeUsable(k01) || !nodeUsable(k11)) continue;
      const v00 = field[k00]!;
      const v10 = field[k10]!;
      const v01 = field[k01]!;
      const v11 = field[k11]!;
      const code = (positive(v00) ? 1 : 0) | (positive(v10) ? 2 : 0) | (positive(v11) ? 4 : 0) | (positive(v01) ? 8 : 0);
      if (code === 0 || code === 15) continue;
      const bottom = k00; // edge (i,j)-(i+1,j)
      const top = k01; // edge (i,j+1)-(i+1,j+1)
      const left = vertical + k00; // edge (i,j)-(i,j+1)
      const right = vertical + k10; // edge (i+1,j)-(i+1,j+1)
      switch (code) {
        case 1: case 14: addSegment(left, bottom); break;
        case 2: case 13: addSegment(bottom, right); break;
        case 3: case 12: addSegment(left, right); break;
        case 4: case 11: addSegment(right, top); break;
        case 6: case 9: addSegment(bottom, top); break;
        case 7: case 8: addSegment(left, top); break;
        case 5: case 10: {
          // Saddle: corners 00 and 11 share a sign, 10 and 01 the other.
          const centrePositive = positive((v00 + v10 + v01 + v11) / 4);
          const diagonalPositive = code === 5;
          if (centrePositive === diagonalPositive) {
            addSegment(left, top);
            addSegment(bottom, right);
          } else {
            addSegment(left, bottom);
            addSegment(right, top);
          }
          break;
        }
        default: break;
      }
    }
  }
  return { segA, segB, segmentsAt };
}
