/**
 * Choosing designs from a Pareto front: extremes, knees, a short list of representatives, and
 * objectives that are redundant on the front. Pure functions over objective vectors in
 * minimisation form (a `max` objective negated); `analyseFront` applies them to a stored front.
 *
 * Every step works in normalised objective space: f_n = (f - ideal) / (nadir - ideal) with ideal
 * and nadir the best and worst value of each objective on the front itself (an objective with no
 * spread maps to 0), so that units and scales do not decide what is "far".
 *
 * - Extremes: for each objective the design with its best value (ties: the smaller sum of the
 *   other normalised objectives, then the first).
 * - Knees: the point of largest distance from the hyperplane through the extreme points, on the
 *   side of the ideal point (Das 1999, "On characterizing the 'knee' of the Pareto curve based on
 *   Normal-Boundary Intersection", Structural Optimization 18(2-3), 107-115). Other points are
 *   kept as knees too when they are the largest of that distance within a neighbourhood (radius
 *   KNEE_NEIGHBOURHOOD in normalised space) and reach at least half the largest distance: a front
 *   can bulge in more than one place. When the extreme points do not span a hyperplane (too few
 *   distinct extremes, or a plane that does not cut every positive axis), the plane
 *   sum f_n = 1 is used.
 * - Representatives: extremes and knees first, then farthest-point clustering (Gonzalez 1985,
 *   "Clustering to minimize the maximum intercluster distance", Theoretical Computer Science 38,
 *   293-306): repeatedly the design farthest from every representative chosen so far (ties: the
 *   first). Every front design then belongs to its nearest representative; the cover radius is
 *   the largest distance of a design to its representative. Deterministic.
 * - Redundant objectives, after Deb & Saxena 2006, "Searching for Pareto-optimal solutions through
 *   dimensionality reduction for certain large-dimensional multi-objective optimization problems",
 *   IEEE CEC 2006: principal components of the objectives' correlation matrix on the front (in
 *   minimisation form, so a positive correlation means the two do not conflict); along each
 *   significant component (cumulative variance up to VARIANCE_CUT), the objectives with the most
 *   positive and the most negative weight are kept (one, the largest |weight|, when all weights
 *   share a sign). An objective not kept is reported redundant when its correlation with a kept
 *   one reaches CORRELATION_CUT; the correlation is the evidence.
 */
import { EigenvalueDecomposition, Matrix } from 'ml-matrix';
import { hyperplaneIntercepts } from '../optimizer/nsga3.js';

export const KNEE_NEIGHBOURHOOD = 0.25;
export const VARIANCE_CUT = 0.95;
export const CORRELATION_CUT = 0.9;

export interface Normalisation {
  ideal: number[];
  nadir: number[];
  points: number[][];
}

export function normaliseFront(points: readonly (readonly number[])[]): Normalisation {
  const m = points[0]?.length ?? 0;
  const ideal = new Array<number>(m).fill(Infinity);
  const nadir = new Array<number>(m).fill(-Infinity);
  for (const p of points) {
    for (let k = 0; k < m; k++) {
      ideal[k] = Math.min(ideal[k]!, p[k]!);
      nadir[k] = Math.max(nadir[k]!, p[k]!);
    }
  }
  const normalised = points.map((p) => p.map((v, k) => (nadir[k]! > ideal[k]! ? (v - ideal[k]!) / (nadir[k]! - ideal[k]!) : 0)));
  return { ideal, nadir, points: normalised };
}

function distance(a: readonly number[], b: readonly number[]): number {
  let sum = 0;
  for (let k = 0; k < a.length; k++) sum += (a[k]! - b[k]!) ** 2;
  return Math.sqrt(sum);
}

/** Index of the best design of each objective (normalised points). */
export function extremePoints(normalised: readonly (readonly number[])[]): number[] {
  const m = normalised[0]?.length ?? 0;
  const extremes: number[] = [];
  for (let k = 0; k < m; k++) {
    let best = -1;
    let bestOthers = Infinity;
    normalised.forEach((p, i) => {
      const others = p.reduce((s, v, j) => (j === k ? s : s + v), 0);
      if (best < 0 || p[k]! < normalised[best]![k]! || (p[k] === normalised[best]![k] && others < bestOthers)) {
        best = i;
        bestOthers = others;
      }
    });
    if (best >= 0) extremes.push(best);
  }
  return extremes;
}

/**
 * Signed distance of each normalised point from the hyperplane through the extreme points:
 * positive on the side of the ideal point (the front bulges towards it there).
 */
export function hyperplaneDistances(normalised: readonly (readonly number[])[], extremes: readonly number[]): { distances: number[]; plane: 'extremes' | 'unit-sum' } {
  const m = normalised[0]?.length ?? 0;
  const distinct = [...new Set(extremes)];
  let normal: number[] | null = null;
  if (distinct.length === m) {
    const intercepts = hyperplaneIntercepts(extremes.map((i) => normalised[i]!));
    if (intercepts && Array.from(intercepts).every((a) => Number.isFinite(a) && a > 1e-9)) normal = Array.from(intercepts, (a) => 1 / a);
  }
  const plane = normal ? 'extremes' : 'unit-sum';
  const b = normal ?? new Array<number>(m).fill(1);
  const length = Math.hypot(...b);
  const distances = normalised.map((p) => (1 - p.reduce((s, v, k) => s + v * b[k]!, 0)) / length);
  return { distances, plane };
}

/** Knee indices, the strongest first (see the file comment). */
export function kneePoints(normalised: readonly (readonly number[])[], extremes: readonly number[]): { knees: number[]; distances: number[]; plane: 'extremes' | 'unit-sum' } {
  const { distances, plane } = hyperplaneDistances(normalised, extremes);
  const largest = Math.max(0, ...distances);
  if (!(largest > 1e-9)) return { knees: [], distances, plane };
  const knees = normalised
    .map((_, i) => i)
    .filter((i) => {
      if (distances[i]! < 0.5 * largest) return false;
      return normalised.every((q, j) => j === i || distance(normalised[i]!, q) > KNEE_NEIGHBOURHOOD || distances[j]! < distances[i]! || (distances[j] === distances[i] && j > i));
    })
    .sort((a, b) => distances[b]! - distances[a]! || a - b);
  return { knees, distances, plane };
}

export interface Representative {
  index: number;
  reasons: string[];
  /** Front designs nearest to this representative (itself included). */
  clusterSize: number;
}

/**
 * K representatives: extremes and knees (always, even if more than K), then farthest-point
 * clustering. Designs with identical normalised objectives count once.
 */
export function chooseRepresentatives(
  normalised: readonly (readonly number[])[],
  count: number,
  extremes: readonly number[],
  knees: readonly number[],
  objectiveNames: readonly string[],
): { representatives: Representative[]; coverRadius: number } {
  const reasons = new Map<number, string[]>();
  const add = (i: number, reason: string): void => {
    const list = reasons.get(i) ?? [];
    list.push(reason);
    reasons.set(i, list);
  };
  extremes.forEach((i, k) => add(i, `best ${objectiveNames[k] ?? `objective ${k + 1}`}`));
  for (const i of knees) add(i, 'knee');
  const chosen = [...reasons.keys()];
  const nearest = normalised.map((p) => Math.min(Infinity, ...chosen.map((c) => distance(p, normalised[c]!))));
  while (chosen.length < count) {
    let far = -1;
    nearest.forEach((d, i) => {
      if (d > 1e-12 && (far < 0 || d > nearest[far]!)) far = i;
    });
    if (far < 0) break;
    chosen.push(far);
    add(far, 'spread');
    normalised.forEach((p, i) => (nearest[i] = Math.min(nearest[i]!, distance(p, normalised[far]!))));
  }
  const sizes = new Map<number, number>(chosen.map((c) => [c, 0]));
  let coverRadius = 0;
  normalised.forEach((p) => {
    let owner = chosen[0]!;
    let best = Infinity;
    for (const c of chosen) {
      const d = distance(p, normalised[c]!);
      if (d < best) {
        best = d;
        owner = c;
      }
    }
    sizes.set(owner, sizes.get(owner)! + 1);
    coverRadius = Math.max(coverRadius, best);
  });
  return { representatives: chosen.map((index) => ({ index, reasons: reasons.get(index)!, clusterSize: sizes.get(index)! })), coverRadius };
}

export interface RedundancyReport {
  /** Pearson correlation of every pair of objectives on the front (minimisation form). */
  correlation: number[][];
  /** Eigenvalues of the correlation matrix, largest first, and the share of variance each explains. */
  components: { eigenvalue: number; share: number; weights: number[] }[];
  /** Indices of objectives kept by the significant components. */
  essential: number[];
  /** Redundant objectives with the kept objective they follow and the correlation. */
  redundant: { objective: number; follows: number; correlation: number }[];
  /** Every pair that does not conflict on the front (correlation >= CORRELATION_CUT). */
  agreeingPairs: { a: number; b: number; correlation: number }[];
}

function pearson(points: readonly (readonly number[])[], a: number, b: number): number {
  const n = points.length;
  let ma = 0;
  let mb = 0;
  for (const p of points) {
    ma += p[a]! / n;
    mb += p[b]! / n;
  }
  let sab = 0;
  let saa = 0;
  let sbb = 0;
  for (const p of points) {
    sab += (p[a]! - ma) * (p[b]! - mb);
    saa += (p[a]! - ma) ** 2;
    sbb += (p[b]! - mb) ** 2;
  }
  return saa > 0 && sbb > 0 ? sab / Math.sqrt(saa * sbb) : a === b ? 1 : 0;
}

export function redundantObjectives(points: readonly (readonly number[])[]): RedundancyReport {
  const m = points[0]?.length ?? 0;
  const correlation = Array.from({ length: m }, (_, a) => Array.from({ length: m }, (_, b) => (a === b ? 1 : pearson(points, a, b))));
  const decomposition = new EigenvalueDecomposition(new Matrix(correlation), { assumeSymmetric: true });
  const values = decomposition.realEigenvalues;
  const vectors = decomposition.eigenvectorMatrix;
  const total = values.reduce((s, v) => s + Math.max(v, 0), 0) || 1;
  const components = values
    .map((eigenvalue, c) => ({ eigenvalue, share: Math.max(eigenvalue, 0) / total, weights: vectors.getColumn(c) }))
    .sort((x, y) => y.eigenvalue - x.eigenvalue);
  const essential = new Set<number>();
  let cumulative = 0;
  for (const component of components) {
    if (points.length < 3) break;
    const w = component.weights;
    const most = w.indexOf(Math.max(...w));
    const least = w.indexOf(Math.min(...w));
    if (w[most]! > 1e-9 && w[least]! < -1e-9) {
      essential.add(most);
      essential.add(least);
    } else {
      const abs = w.map(Math.abs);
      essential.add(abs.indexOf(Math.max(...abs)));
    }
    cumulative += component.share;
    if (cumulative >= VARIANCE_CUT) break;
  }
  if (essential.size === 0) for (let k = 0; k < m; k++) essential.add(k);
  const kept = [...essential].sort((a, b) => a - b);
  const redundant: RedundancyReport['redundant'] = [];
  for (let k = 0; k < m; k++) {
    if (essential.has(k)) continue;
    let follows = -1;
    for (const j of kept) if (follows < 0 || correlation[k]![j]! > correlation[k]![follows]!) follows = j;
    if (follows >= 0 && correlation[k]![follows]! >= CORRELATION_CUT) redundant.push({ objective: k, follows, correlation: correlation[k]![follows]! });
  }
  const agreeingPairs: RedundancyReport['agreeingPairs'] = [];
  for (let a = 0; a < m; a++) for (let b = a + 1; b < m; b++) if (correlation[a]![b]! >= CORRELATION_CUT) agreeingPairs.push({ a, b, correlation: correlation[a]![b]! });
  return { correlation, components, essential: kept, redundant, agreeingPairs };
}

export interface FrontAnalysis {
  normalisation: { ideal: number[]; nadir: number[] };
  extremes: number[];
  knees: { index: number; distance: number }[];
  kneePlane: 'extremes' | 'unit-sum';
  representatives: Representative[];
  coverRadius: number;
  redundancy: RedundancyReport;
}

/** All of the above on points in minimisation form. */
export function analysePoints(points: readonly (readonly number[])[], representativeCount: number, objectiveNames: readonly string[]): FrontAnalysis {
  const { ideal, nadir, points: normalised } = normaliseFront(points);
  const extremes = extremePoints(normalised);
  const { knees, distances, plane } = kneePoints(normalised, extremes);
  const { representatives, coverRadius } = chooseRepresentatives(normalised, representativeCount, extremes, knees, objectiveNames);
  return {
    normalisation: { ideal, nadir },
    extremes,
    knees: knees.map((index) => ({ index, distance: distances[index]! })),
    kneePlane: plane,
    representatives,
    coverRadius,
    redundancy: redundantObjectives(points),
  };
}

/** A stored front's analysis in terms of design ids and metric names. */
export interface StoredFrontAnalysis {
  readonly runId: number;
  readonly designs: number;
  readonly objectives: readonly { metric: string; sense: 'min' | 'max' }[];
  readonly extremes: readonly { metric: string; id: number }[];
  readonly knees: readonly { id: number; distance: number }[];
  /** 'extremes': Das's hyperplane through the extreme points; 'unit-sum': the fallback plane. */
  readonly kneePlane: 'extremes' | 'unit-sum';
  readonly representatives: readonly { id: number; reasons: readonly string[]; clusterSize: number }[];
  /** Largest normalised distance of a front design to its representative (0..sqrt(M)). */
  readonly coverRadius: number;
  readonly redundancy: {
    readonly correlation: Readonly<Record<string, Readonly<Record<string, number>>>>;
    readonly components: readonly { eigenvalue: number; share: number; weights: Readonly<Record<string, number>> }[];
    readonly essential: readonly string[];
    readonly redundant: readonly { metric: string; follows: string; correlation: number }[];
    readonly agreeingPairs: readonly { a: string; b: string; correlation: number }[];
  };
}

/** Minimisation-form objective vector of a stored design. */
export function minimisedObjectives(objectives: readonly { metric: string; sense: 'min' | 'max' }[], metrics: Readonly<Record<string, number | null | undefined>>): number[] {
  return objectives.map((o) => {
    const v = metrics[o.metric] ?? Number.NaN;
    return o.sense === 'max' ? -v : v;
  });
}

/** Front tools on a stored front (see runFront). An empty front gives empty lists. */
export function analyseFront(
  front: { runId: number; objectives: readonly { metric: string; sense: 'min' | 'max' }[]; designs: readonly { id: number; metrics: Readonly<Record<string, number | null>> }[] },
  representativeCount: number,
): StoredFrontAnalysis {
  const names = front.objectives.map((o) => o.metric);
  const ids = front.designs.map((d) => d.id);
  const base = { runId: front.runId, designs: front.designs.length, objectives: front.objectives };
  if (front.designs.length === 0) {
    return { ...base, extremes: [], knees: [], kneePlane: 'unit-sum', representatives: [], coverRadius: 0, redundancy: { correlation: {}, components: [], essential: names, redundant: [], agreeingPairs: [] } };
  }
  const a = analysePoints(front.designs.map((d) => minimisedObjectives(front.objectives, d.metrics)), representativeCount, names);
  const byName = (values: readonly number[]): Record<string, number> => Object.fromEntries(names.map((n, k) => [n, values[k]!]));
  return {
    ...base,
    extremes: a.extremes.map((i, k) => ({ metric: names[k]!, id: ids[i]! })),
    knees: a.knees.map((k) => ({ id: ids[k.index]!, distance: k.distance })),
    kneePlane: a.kneePlane,
    representatives: a.representatives.map((r) => ({ id: ids[r.index]!, reasons: r.reasons, clusterSize: r.clusterSize })),
    coverRadius: a.coverRadius,
    redundancy: {
      correlation: Object.fromEntries(names.map((n, k) => [n, byName(a.redundancy.correlation[k]!)])),
      components: a.redundancy.components.map((c) => ({ eigenvalue: c.eigenvalue, share: c.share, weights: byName(c.weights) })),
      essential: a.redundancy.essential.map((k) => names[k]!),
      redundant: a.redundancy.redundant.map((r) => ({ metric: names[r.objective]!, follows: names[r.follows]!, correlation: r.correlation })),
      agreeingPairs: a.redundancy.agreeingPairs.map((p) => ({ a: names[p.a]!, b: names[p.b]!, correlation: p.correlation })),
    },
  };
}
