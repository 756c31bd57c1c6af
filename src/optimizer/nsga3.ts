/**
 * NSGA-III, written from Deb & Jain 2014, "An evolutionary many-objective optimization algorithm
 * using reference-point-based nondominated sorting approach, Part I: solving problems with box
 * constraints", IEEE Transactions on Evolutionary Computation 18(4), 577-601, with the constraint
 * handling of its Part II (Jain & Deb 2014, same issue, 602-622).
 *
 * One generation t (Algorithm 1 of the paper):
 *
 *     R_t = P_t ∪ Q_t
 *     (F_1, F_2, ...) = non-dominated-sort(R_t)          (constrained domination)
 *     S_t = F_1 ∪ ... ∪ F_l, the first fronts until |S_t| >= N
 *     if |S_t| = N: P_{t+1} = S_t
 *     else: P_{t+1} = F_1 ∪ ... ∪ F_{l-1}, and K = N - |P_{t+1}| members of F_l chosen by
 *       1. normalise S_t (Algorithm 2): ideal point, extreme points, intercepts;
 *       2. associate each member with its nearest reference line (Algorithm 3);
 *       3. niche counts of P_{t+1}'s members per reference point;
 *       4. niche-preserving selection from F_l (Algorithm 4).
 *     Q_{t+1} = recombination + mutation of P_{t+1}
 *
 * Reference points are Das-Dennis points (referenceDirections.ts), two layers for many objectives
 * (Section IV-B). Mating: the paper's unconstrained algorithm picks parents at random; its Part II
 * uses a binary tournament that prefers the feasible, then the smaller violation, and otherwise
 * picks at random, which is the same random choice when every entrant is feasible. That tournament
 * is used here. Variation is SBX and polynomial mutation (operators.ts) with the paper's settings
 * as defaults: p_c = 1, eta_c = 30, eta_m = 20, p_m = 1/n.
 *
 * The class has the ask/tell interface, archive, snapshot and restore of Nsga2 (nsga2.ts) with the
 * same guarantees: every random draw comes from one seeded source in a fixed order (the niching
 * draws after the offspring's), ties are broken by index, and a snapshot restores exactly.
 */

import type { Nsga2Settings, Nsga2State, ResolvedNsga2Settings } from './nsga2.js';
import { resolveSettings } from './nsga2.js';
import { PopulationOptimizer, type Individual } from './population.js';
import type { SeededRandom } from './random.js';
import { defaultReferenceLayers, referenceDirections, type ReferenceLayers } from './referenceDirections.js';
import { validateProblem, type ProblemSpec } from './types.js';

export interface Nsga3Settings extends Nsga2Settings {
  /** Das-Dennis divisions of the reference points (default: the most that fit in the population, see defaultReferenceLayers). */
  referenceLayers?: ReferenceLayers;
  /**
   * Keep the external archive (default true). With five or more objectives nearly every design is
   * non-dominated, the archive grows to tens of thousands and offering to it dominates the run time;
   * benchmarks that only measure the population may turn it off. Not part of the snapshot.
   */
  keepArchive?: boolean;
}

/** Same plain-JSON shape as Nsga2State: NSGA-III keeps nothing between generations but P_t and the random state. */
export type Nsga3State = Nsga2State;

/** Weight of the other axes in the achievement scalarising function that finds extreme points (paper: 10^-6). */
const ASF_EPSILON = 1e-6;
/** Intercepts smaller than this (in objective units after translation) are treated as degenerate. */
const INTERCEPT_EPSILON = 1e-10;

/** Settings with the paper's defaults (p_c = 1, eta_c = 30, eta_m = 20). */
export function resolveNsga3Settings(problem: ProblemSpec, settings: Nsga3Settings): ResolvedNsga2Settings {
  return resolveSettings(problem, { crossoverProbability: 1, crossoverEta: 30, mutationEta: 20, ...settings });
}

export class Nsga3 extends PopulationOptimizer {
  readonly referenceLayers: ReferenceLayers;
  /** Reference points Z_r on the unit simplex (sum 1 each). */
  readonly referencePoints: readonly Float64Array[];
  /** Reference directions scaled to unit length, row-major. */
  private readonly unitDirections: Float64Array;

  constructor(problem: ProblemSpec, settings: Nsga3Settings) {
    validateProblem(problem);
    super(problem, resolveNsga3Settings(problem, settings));
    this.referenceLayers = settings.referenceLayers ?? defaultReferenceLayers(this.objectiveCount, this.settings.populationSize);
    this.referencePoints = referenceDirections(this.objectiveCount, this.referenceLayers).map((w) => Float64Array.from(w));
    this.keepArchive = settings.keepArchive ?? true;
    this.unitDirections = new Float64Array(this.referencePoints.length * this.objectiveCount);
    this.referencePoints.forEach((w, j) => {
      const norm = Math.hypot(...w);
      for (let i = 0; i < this.objectiveCount; i++) this.unitDirections[j * this.objectiveCount + i] = w[i]! / norm;
    });
  }

  /** Continues from a snapshot() of an optimizer with the same problem and settings. */
  static restore(problem: ProblemSpec, settings: Nsga3Settings, state: Nsga3State): Nsga3 {
    const optimizer = new Nsga3(problem, settings);
    optimizer.restoreState(state);
    return optimizer;
  }

  // ---------------------------------------------------------------- survival (Algorithm 1)

  protected selectSurvivors(combined: Individual[], populationSize: number, random: SeededRandom): Individual[] {
    const { fronts } = this.sortFronts(combined);
    const chosen: number[] = [];
    let lastFront: Int32Array | undefined;
    for (const front of fronts) {
      if (chosen.length + front.length <= populationSize) {
        for (const p of front) chosen.push(p);
        if (chosen.length === populationSize) break;
        continue;
      }
      lastFront = front;
      break;
    }
    if (lastFront === undefined) return chosen.map((p) => combined[p]!);
    const picked = this.nichingSelection(combined, chosen, Array.from(lastFront), populationSize - chosen.length, random);
    return chosen.concat(picked).map((p) => combined[p]!);
  }

  /**
   * K members of the last front F_l: normalise S_t = P_{t+1} ∪ F_l, associate with reference lines,
   * count niches of P_{t+1}, then Algorithm 4. Failed evaluations (non-finite objectives) cannot be
   * normalised: when F_l consists of them they are taken in index order.
   */
  private nichingSelection(combined: Individual[], chosen: number[], lastFront: number[], count: number, random: SeededRandom): number[] {
    const usable = (p: number): boolean => combined[p]!.evaluation.failed === undefined;
    const candidates = lastFront.filter(usable);
    const failed = lastFront.filter((p) => !usable(p));
    if (candidates.length === 0) return failed.slice(0, count);
    const members = chosen.filter(usable).concat(candidates);
    const normalised = this.normalise(members.map((p) => combined[p]!.minimized));
    const association = new Map<number, { line: number; distance: number }>();
    members.forEach((p, i) => association.set(p, this.associate(normalised[i]!)));

    const nicheCount = new Int32Array(this.referencePoints.length);
    for (const p of chosen) {
      const a = association.get(p);
      if (a) nicheCount[a.line]!++;
    }
    return this.nichePreservingSelection(candidates, association, nicheCount, count, random, failed);
  }

  /**
   * Algorithm 2: translate by the ideal point z^min of S_t, find the extreme point of each axis by
   * the achievement scalarising function ASF(f', w^j) = max_i f'_i / w^j_i (w^j the axis j with
   * 10^-6 elsewhere), take the intercepts a_i of the hyperplane through the M extreme points, and
   * divide: f^n_i = f'_i / a_i. When the hyperplane is degenerate (singular, or an intercept that is
   * not positive), the intercept falls back to the largest translated value of that objective in
   * S_t (the nadir estimate of the population; the paper leaves this case open).
   */
  private normalise(points: readonly Float64Array[]): Float64Array[] {
    const m = this.objectiveCount;
    const ideal = new Float64Array(m).fill(Infinity);
    for (const point of points) for (let i = 0; i < m; i++) if (point[i]! < ideal[i]!) ideal[i] = point[i]!;
    const translated = points.map((point) => point.map((v, i) => v - ideal[i]!));

    const extremes: Float64Array[] = [];
    for (let axis = 0; axis < m; axis++) {
      let best = 0;
      let bestValue = Infinity;
      translated.forEach((point, p) => {
        let asf = -Infinity;
        for (let i = 0; i < m; i++) asf = Math.max(asf, point[i]! / (i === axis ? 1 : ASF_EPSILON));
        if (asf < bestValue) {
          bestValue = asf;
          best = p;
        }
      });
      extremes.push(translated[best]!);
    }
    const fallback = this.fallbackIntercepts(translated);
    const intercepts = hyperplaneIntercepts(extremes) ?? fallback;
    for (let i = 0; i < m; i++) if (!(intercepts[i]! > INTERCEPT_EPSILON && Number.isFinite(intercepts[i]!))) intercepts[i] = fallback[i]!;
    return translated.map((point) => point.map((v, i) => v / intercepts[i]!));
  }

  /** Largest translated value of each objective in S_t (1 when S_t has no spread in it). */
  private fallbackIntercepts(translated: readonly Float64Array[]): Float64Array {
    const intercepts = new Float64Array(this.objectiveCount);
    for (let i = 0; i < this.objectiveCount; i++) {
      const worst = translated.reduce((max, point) => Math.max(max, point[i]!), 0);
      intercepts[i] = worst > INTERCEPT_EPSILON ? worst : 1;
    }
    return intercepts;
  }

  /**
   * Algorithm 3: the reference line (through the origin and w) at the smallest perpendicular
   * distance; with u = w / |w|, the squared distance is |f|^2 - (f·u)^2.
   */
  private associate(point: Float64Array): { line: number; distance: number } {
    const m = this.objectiveCount;
    const units = this.unitDirections;
    let norm2 = 0;
    for (let i = 0; i < m; i++) norm2 += point[i]! * point[i]!;
    let line = 0;
    let best = Infinity;
    for (let j = 0, offset = 0; offset < units.length; j++, offset += m) {
      let dot = 0;
      for (let i = 0; i < m; i++) dot += point[i]! * units[offset + i]!;
      const d2 = norm2 - dot * dot;
      if (d2 < best) {
        best = d2;
        line = j;
      }
    }
    return { line, distance: Math.sqrt(Math.max(best, 0)) };
  }

  /**
   * Algorithm 4: repeatedly take a reference point j with the smallest niche count (ties: one drawn
   * at random among them, in index order); if no candidate of F_l is associated with it, drop j;
   * otherwise add the candidate nearest to its line when the niche is empty (rho_j = 0), or a
   * random candidate when it is not, and increase rho_j.
   */
  private nichePreservingSelection(
    candidates: number[],
    association: ReadonlyMap<number, { line: number; distance: number }>,
    nicheCount: Int32Array,
    count: number,
    random: SeededRandom,
    leftovers: number[],
  ): number[] {
    const byLine = new Map<number, number[]>();
    for (const p of candidates) {
      const { line } = association.get(p)!;
      const list = byLine.get(line) ?? [];
      list.push(p);
      byLine.set(line, list);
    }
    const active = this.referencePoints.map((_, j) => j);
    const tied: number[] = [];
    const picked: number[] = [];
    while (picked.length < count && active.length > 0) {
      let smallest = Infinity;
      for (const j of active) smallest = Math.min(smallest, nicheCount[j]!);
      tied.length = 0;
      for (const j of active) if (nicheCount[j] === smallest) tied.push(j);
      const j = tied[tied.length === 1 ? 0 : random.int(tied.length)]!;
      const pool = byLine.get(j);
      if (pool === undefined || pool.length === 0) {
        active.splice(active.indexOf(j), 1);
        continue;
      }
      let index = 0;
      if (nicheCount[j] === 0) {
        pool.forEach((p, k) => {
          if (association.get(p)!.distance < association.get(pool[index]!)!.distance) index = k;
        });
      } else if (pool.length > 1) {
        index = random.int(pool.length);
      }
      picked.push(pool[index]!);
      pool.splice(index, 1);
      nicheCount[j]!++;
    }
    // Only failed designs can be left to fill with (every usable candidate is associated with an active line).
    for (let k = 0; picked.length < count && k < leftovers.length; k++) picked.push(leftovers[k]!);
    return picked;
  }

  // ---------------------------------------------------------------- variation

  /** Binary tournament of Part II: feasible beats infeasible, then smaller violation; otherwise a random pick. */
  private pickParent(random: SeededRandom): number {
    const n = this.individuals.length;
    const a = random.int(n);
    const b = random.int(n);
    const va = this.individuals[a]!.evaluation.violation;
    const vb = this.individuals[b]!.evaluation.violation;
    if (va < vb) return a;
    if (vb < va) return b;
    return random.next() < 0.5 ? a : b;
  }

  /** Recombination and mutation of P_{t+1}: the shared variation step (population.ts) with the tournament above. */
  protected makeOffspring(random: SeededRandom): Float64Array[] {
    return this.variation(random, () => this.pickParent(random));
  }
}

/** Distance from `point` to the line through the origin along `direction`. */
export function perpendicularDistance(point: ArrayLike<number>, direction: ArrayLike<number>): number {
  let dot = 0;
  let norm2 = 0;
  for (let i = 0; i < direction.length; i++) {
    dot += point[i]! * direction[i]!;
    norm2 += direction[i]! * direction[i]!;
  }
  const scale = dot / norm2;
  let sum = 0;
  for (let i = 0; i < direction.length; i++) {
    const d = point[i]! - scale * direction[i]!;
    sum += d * d;
  }
  return Math.sqrt(sum);
}

/**
 * Intercepts of the hyperplane through M points (rows): solve E b = 1 by Gaussian elimination with
 * partial pivoting; the plane is b·f = 1 and its intercept on axis i is 1 / b_i. Null when the
 * system is singular.
 */
export function hyperplaneIntercepts(points: readonly ArrayLike<number>[]): Float64Array | null {
  const m = points.length;
  const a = points.map((row) => Float64Array.from({ length: m + 1 }, (_, j) => (j < m ? row[j]! : 1)));
  for (let col = 0; col < m; col++) {
    let pivot = col;
    for (let r = col + 1; r < m; r++) if (Math.abs(a[r]![col]!) > Math.abs(a[pivot]![col]!)) pivot = r;
    if (Math.abs(a[pivot]![col]!) < 1e-12) return null;
    [a[col], a[pivot]] = [a[pivot]!, a[col]!];
    for (let r = 0; r < m; r++) {
      if (r === col) continue;
      const factor = a[r]![col]! / a[col]![col]!;
      if (factor === 0) continue;
      for (let c = col; c <= m; c++) a[r]![c]! -= factor * a[col]![c]!;
    }
  }
  const intercepts = new Float64Array(m);
  for (let i = 0; i < m; i++) {
    const b = a[i]![m]! / a[i]![i]!;
    intercepts[i] = 1 / b;
  }
  return intercepts;
}
