/**
 * Exact hypervolume (Lebesgue measure of the region dominated by a point set
 * and bounded by a reference point), for minimisation.
 *
 * - 1 objective: reference minus the best value.
 * - 2 objectives: sort by the first objective and sweep.
 * - 3 objectives: sweep along the third objective keeping the 2-D non-dominated
 *   staircase of the points seen so far (the slicing idea of the 3-D algorithm of
 *   Beume, Fonseca, López-Ibáñez, Paquete & Vahrenhold 2009, "On the complexity of
 *   computing the hypervolume indicator", IEEE TEVC 13(5)); O(n²) here, fast enough
 *   for archives of thousands of points.
 * - 4 or more (and on request for 3): WFG, after While, Bradstreet & Barone 2012, "A fast way of
 *   calculating exact hypervolumes", IEEE TEVC 16(1): the hypervolume is the
 *   sum of exclusive hypervolumes, exclhv(p) = inclhv(p) - hv(nds(limitset)),
 *   with the points sorted by the last objective (worst first) so that each
 *   limit set lies in a slice of constant last objective and the recursion
 *   drops one dimension.
 */

/** Points that do not strictly dominate the reference point (in every objective) are ignored. */
export function hypervolume(points: readonly ArrayLike<number>[], reference: ArrayLike<number>): number {
  const dimension = reference.length;
  if (dimension === 0) throw new RangeError('hypervolume: empty reference point');
  const referencePoint = Float64Array.from(reference as ArrayLike<number>);
  const kept: Float64Array[] = [];
  for (const point of points) {
    if (point.length !== dimension) throw new RangeError(`hypervolume: point of dimension ${point.length}, reference of ${dimension}`);
    let inside = true;
    for (let k = 0; k < dimension; k++) {
      if (!(point[k]! < referencePoint[k]!)) {
        inside = false;
        break;
      }
    }
    if (inside) kept.push(Float64Array.from(point as ArrayLike<number>));
  }
  if (kept.length === 0) return 0;
  if (dimension === 1) return hypervolume1(kept, referencePoint);
  if (dimension === 2) return hypervolume2(kept, referencePoint);
  if (dimension === 3) return hypervolume3(kept, [referencePoint[0]!, referencePoint[1]!, referencePoint[2]!]);
  return wfg(nonDominated(kept, dimension), dimension, referencePoint);
}

/** WFG for any dimension ≥ 2 (used by `hypervolume` from 4 objectives on; exported to cross-check the 3-D sweep). */
export function wfgHypervolume(points: readonly ArrayLike<number>[], reference: ArrayLike<number>): number {
  const dimension = reference.length;
  const referencePoint = Float64Array.from(reference as ArrayLike<number>);
  const kept = points
    .filter((p) => Array.from({ length: dimension }, (_, k) => p[k]! < referencePoint[k]!).every(Boolean))
    .map((p) => Float64Array.from(p as ArrayLike<number>));
  if (kept.length === 0) return 0;
  return wfg(nonDominated(kept, dimension), dimension, referencePoint);
}

function hypervolume3(points: readonly ArrayLike<number>[], reference: readonly [number, number, number]): number {
  const [referenceX, referenceY, referenceZ] = reference;
  const inside = points.filter((point) => point[0]! < referenceX && point[1]! < referenceY && point[2]! < referenceZ);
  inside.sort((a, b) => a[2]! - b[2]!);
  const frontX: number[] = [];
  const frontY: number[] = [];
  let volume = 0;
  let area = 0;
  for (let i = 0; i < inside.length; i++) {
    const x = inside[i]![0]!;
    const y = inside[i]![1]!;
    // First front index with frontX >= x; the front has at most one point with frontX = x.
    let low = 0;
    let high = frontX.length;
    while (low < high) {
      const middle = (low + high) >> 1;
      if (frontX[middle]! < x) low = middle + 1;
      else high = middle;
    }
    const dominated = (low > 0 && frontY[low - 1]! <= y) || (low < frontX.length && frontX[low] === x && frontY[low]! <= y);
    if (!dominated) {
      let end = low;
      while (end < frontX.length && frontY[end]! >= y) end++;
      frontX.splice(low, end - low, x);
      frontY.splice(low, end - low, y);
      area = 0;
      for (let k = 0; k < frontX.length; k++) {
        const nextX = k + 1 < frontX.length ? frontX[k + 1]! : referenceX;
        area += (nextX - frontX[k]!) * (referenceY - frontY[k]!);
      }
    }
    const nextZ = i + 1 < inside.length ? inside[i + 1]![2]! : referenceZ;
    volume += area * (nextZ - inside[i]![2]!);
  }
  return volume;
}



function hypervolume1(points: Float64Array[], reference: Float64Array): number {
  let best = Number.POSITIVE_INFINITY;
  for (const point of points) if (point[0]! < best) best = point[0]!;
  return reference[0]! - best;
}

/** Sweep over the first two coordinates; dominated and repeated points are harmless. */
function hypervolume2(points: Float64Array[], reference: Float64Array): number {
  const sorted = points.slice().sort((a, b) => a[0]! - b[0]! || a[1]! - b[1]!);
  let area = 0;
  let bestSecond = reference[1]!;
  const reference0 = reference[0]!;
  for (const point of sorted) {
    const second = point[1]!;
    if (second < bestSecond) {
      area += (reference0 - point[0]!) * (bestSecond - second);
      bestSecond = second;
    }
  }
  return area;
}

/** Volume of the box between a point and the reference in the first `dimension` coordinates. */
function inclusiveVolume(point: Float64Array, dimension: number, reference: Float64Array): number {
  let volume = 1;
  for (let k = 0; k < dimension; k++) volume *= reference[k]! - point[k]!;
  return volume;
}

/**
 * Removes points weakly dominated by another (and repeats) in the first
 * `dimension` coordinates. One pass after a lexicographic sort: a later point
 * can never weakly dominate an earlier, different one.
 */
function nonDominated(points: Float64Array[], dimension: number): Float64Array[] {
  const sorted = points.slice().sort((a, b) => {
    for (let k = 0; k < dimension; k++) {
      const difference = a[k]! - b[k]!;
      if (difference !== 0) return difference;
    }
    return 0;
  });
  const kept: Float64Array[] = [];
  for (const point of sorted) {
    let dominated = false;
    for (const other of kept) {
      let weaklyBetter = true;
      for (let k = 0; k < dimension; k++) {
        if (other[k]! > point[k]!) {
          weaklyBetter = false;
          break;
        }
      }
      if (weaklyBetter) {
        dominated = true;
        break;
      }
    }
    if (!dominated) kept.push(point);
  }
  return kept;
}

/** WFG on mutually non-dominated points (first `dimension` coordinates), dimension >= 2. */
function wfg(points: Float64Array[], dimension: number, reference: Float64Array): number {
  if (points.length === 0) return 0;
  if (dimension === 2) return hypervolume2(points, reference);
  if (points.length === 1) return inclusiveVolume(points[0]!, dimension, reference);
  const last = dimension - 1;
  // Worst last objective first: every later point is at least as good in it.
  const sorted = points.slice().sort((a, b) => b[last]! - a[last]!);
  const lower = dimension - 1;
  let volume = 0;
  for (let i = 0; i < sorted.length; i++) {
    const point = sorted[i]!;
    // limitset: the later points, each made no better than `point` (first dimension-1 coordinates).
    const limitSet: Float64Array[] = [];
    for (let j = i + 1; j < sorted.length; j++) {
      const other = sorted[j]!;
      const limited = new Float64Array(lower);
      for (let k = 0; k < lower; k++) limited[k] = other[k]! > point[k]! ? other[k]! : point[k]!;
      limitSet.push(limited);
    }
    const reduced = lower === 2 ? limitSet : nonDominated(limitSet, lower);
    const exclusive = inclusiveVolume(point, lower, reference) - wfg(reduced, lower, reference);
    volume += (reference[last]! - point[last]!) * exclusive;
  }
  return volume;
}

/** (f - ideal) / (nadir - ideal) per objective; needs nadir > ideal in every objective. */
export function normalizeObjectives(
  points: readonly ArrayLike<number>[],
  ideal: ArrayLike<number>,
  nadir: ArrayLike<number>,
): number[][] {
  if (ideal.length !== nadir.length) throw new RangeError('normalizeObjectives: ideal and nadir differ in length');
  for (let k = 0; k < ideal.length; k++) {
    if (!(nadir[k]! > ideal[k]!)) throw new RangeError(`normalizeObjectives: nadir ${nadir[k]} must exceed ideal ${ideal[k]} in objective ${k}`);
  }
  return points.map((point) => {
    if (point.length !== ideal.length) throw new RangeError('normalizeObjectives: point dimension differs from ideal');
    const normalized: number[] = new Array<number>(point.length);
    for (let k = 0; k < point.length; k++) normalized[k] = (point[k]! - ideal[k]!) / (nadir[k]! - ideal[k]!);
    return normalized;
  });
}

/** Objectives in the problem's own sense turned into minimisation form ('max' negated). */
export function toMinimization(objectives: readonly number[], senses: readonly ('min' | 'max')[]): number[] {
  if (objectives.length !== senses.length) throw new RangeError('toMinimization: objectives and senses differ in length');
  return objectives.map((value, k) => (senses[k] === 'max' ? -value : value));
}
