/**
 * Variation operators of NSGA-II as small pure functions.
 *
 * Every function that needs chance takes a SeededRandom and draws from it in
 * a fixed order, so results are reproducible. Real and integer variables use
 * simulated binary crossover (SBX) and polynomial mutation in the bounded
 * forms of Deb's reference implementation of NSGA-II (as described in
 * Deb & Agrawal 1995, "Simulated binary crossover for continuous search
 * space", Complex Systems 9, and Deb & Goyal 1996 for the mutation);
 * integer variables vary on the widened interval [lower - 0.5, upper + 0.5]
 * and are rounded and clamped afterwards, so that every integer gets an
 * interval of equal width. Categorical variables use uniform crossover and
 * a mutation to another random choice.
 */

import type { ProblemSpec } from './types.js';
import type { SeededRandom } from './random.js';

export const KIND_REAL = 0;
export const KIND_INTEGER = 1;
export const KIND_CATEGORICAL = 2;

/** Flat, allocation-free description of the design vector used by the operators. */
export interface DesignLayout {
  readonly count: number;
  /** KIND_REAL, KIND_INTEGER or KIND_CATEGORICAL per variable. */
  readonly kinds: Int8Array;
  /** Lower bound used by the variation operators (integer: lower - 0.5; categorical: 0). */
  readonly variationLower: Float64Array;
  /** Upper bound used by the variation operators (integer: upper + 0.5; categorical: n - 1). */
  readonly variationUpper: Float64Array;
  /** Bounds of the variable itself (categorical: 0 and n - 1). */
  readonly lower: Float64Array;
  readonly upper: Float64Array;
  /** Number of choices of a categorical variable, 0 otherwise. */
  readonly choiceCounts: Int32Array;
}

export function designLayout(problem: ProblemSpec): DesignLayout {
  const count = problem.variables.length;
  const layout = {
    count,
    kinds: new Int8Array(count),
    variationLower: new Float64Array(count),
    variationUpper: new Float64Array(count),
    lower: new Float64Array(count),
    upper: new Float64Array(count),
    choiceCounts: new Int32Array(count),
  };
  problem.variables.forEach((variable, i) => {
    if (variable.kind === 'real') {
      layout.kinds[i] = KIND_REAL;
      layout.lower[i] = layout.variationLower[i] = variable.lower;
      layout.upper[i] = layout.variationUpper[i] = variable.upper;
    } else if (variable.kind === 'integer') {
      layout.kinds[i] = KIND_INTEGER;
      layout.lower[i] = variable.lower;
      layout.upper[i] = variable.upper;
      layout.variationLower[i] = variable.lower - 0.5;
      layout.variationUpper[i] = variable.upper + 0.5;
    } else {
      layout.kinds[i] = KIND_CATEGORICAL;
      layout.choiceCounts[i] = variable.choices.length;
      layout.lower[i] = layout.variationLower[i] = 0;
      layout.upper[i] = layout.variationUpper[i] = variable.choices.length - 1;
    }
  });
  return layout;
}

/** Parents closer than this are copied unchanged by SBX (as in Deb's code). */
const SBX_MIN_DISTANCE = 1e-14;

/**
 * Bounded SBX on one variable. Writes the two children into out[0], out[1].
 * Draws: one number for the spread factor and one for the 0.5 swap, only
 * when the parents differ.
 */
export function sbxVariable(
  parent1: number,
  parent2: number,
  lower: number,
  upper: number,
  eta: number,
  random: SeededRandom,
  out: Float64Array,
): void {
  if (Math.abs(parent1 - parent2) <= SBX_MIN_DISTANCE) {
    out[0] = parent1;
    out[1] = parent2;
    return;
  }
  const y1 = parent1 < parent2 ? parent1 : parent2;
  const y2 = parent1 < parent2 ? parent2 : parent1;
  const spread = y2 - y1;
  const u = random.next();
  const exponent = 1 / (eta + 1);

  let beta = 1 + (2 * (y1 - lower)) / spread;
  let alpha = 2 - Math.pow(beta, -(eta + 1));
  let betaQ = u <= 1 / alpha ? Math.pow(u * alpha, exponent) : Math.pow(1 / (2 - u * alpha), exponent);
  let child1 = 0.5 * (y1 + y2 - betaQ * spread);

  beta = 1 + (2 * (upper - y2)) / spread;
  alpha = 2 - Math.pow(beta, -(eta + 1));
  betaQ = u <= 1 / alpha ? Math.pow(u * alpha, exponent) : Math.pow(1 / (2 - u * alpha), exponent);
  let child2 = 0.5 * (y1 + y2 + betaQ * spread);

  child1 = clamp(child1, lower, upper);
  child2 = clamp(child2, lower, upper);
  if (random.next() <= 0.5) {
    out[0] = child2;
    out[1] = child1;
  } else {
    out[0] = child1;
    out[1] = child2;
  }
}

/**
 * Crossover of two design vectors into two children (children may not alias parents).
 * With probability `probability` the pair is crossed; then each variable is
 * crossed with probability 0.5 (reals/integers: SBX; categoricals: swap),
 * otherwise copied. Draw order follows Deb's code: one draw for the pair,
 * then per variable one draw for "cross this variable" and SBX's own draws.
 */
export function crossover(
  parent1: Float64Array,
  parent2: Float64Array,
  child1: Float64Array,
  child2: Float64Array,
  layout: DesignLayout,
  probability: number,
  eta: number,
  random: SeededRandom,
  scratchPair: Float64Array,
): void {
  const n = layout.count;
  if (random.next() > probability) {
    child1.set(parent1);
    child2.set(parent2);
    return;
  }
  for (let i = 0; i < n; i++) {
    if (random.next() > 0.5) {
      child1[i] = parent1[i]!;
      child2[i] = parent2[i]!;
      continue;
    }
    if (layout.kinds[i] === KIND_CATEGORICAL) {
      // Uniform crossover: this variable is exchanged.
      child1[i] = parent2[i]!;
      child2[i] = parent1[i]!;
      continue;
    }
    sbxVariable(parent1[i]!, parent2[i]!, layout.variationLower[i]!, layout.variationUpper[i]!, eta, random, scratchPair);
    child1[i] = scratchPair[0]!;
    child2[i] = scratchPair[1]!;
  }
}

/** Polynomial mutation of one value in Deb's bounded form (one draw). */
export function polynomialMutationValue(value: number, lower: number, upper: number, eta: number, random: SeededRandom): number {
  const range = upper - lower;
  if (!(range > 0)) return value;
  const delta1 = (value - lower) / range;
  const delta2 = (upper - value) / range;
  const u = random.next();
  const exponent = 1 / (eta + 1);
  let deltaQ: number;
  if (u <= 0.5) {
    const xy = 1 - delta1;
    const val = 2 * u + (1 - 2 * u) * Math.pow(xy, eta + 1);
    deltaQ = Math.pow(val, exponent) - 1;
  } else {
    const xy = 1 - delta2;
    const val = 2 * (1 - u) + 2 * (u - 0.5) * Math.pow(xy, eta + 1);
    deltaQ = 1 - Math.pow(val, exponent);
  }
  return clamp(value + deltaQ * range, lower, upper);
}

/** Categorical mutation: a uniformly random choice other than the current one (one draw). */
export function categoricalMutationValue(value: number, choiceCount: number, random: SeededRandom): number {
  if (choiceCount < 2) return value;
  const other = random.int(choiceCount - 1);
  return other >= value ? other + 1 : other;
}

/** Mutates variable `index` of `design` unconditionally. */
export function mutateVariable(design: Float64Array, index: number, layout: DesignLayout, eta: number, random: SeededRandom): void {
  if (layout.kinds[index] === KIND_CATEGORICAL) {
    design[index] = categoricalMutationValue(design[index]!, layout.choiceCounts[index]!, random);
  } else {
    design[index] = polynomialMutationValue(design[index]!, layout.variationLower[index]!, layout.variationUpper[index]!, eta, random);
  }
}

/**
 * Mutates each variable with probability `probability` (one draw per
 * variable, plus the mutation's own draw). Returns how many were mutated.
 */
export function mutate(design: Float64Array, layout: DesignLayout, probability: number, eta: number, random: SeededRandom): number {
  let mutated = 0;
  for (let i = 0; i < layout.count; i++) {
    if (random.next() <= probability) {
      mutateVariable(design, i, layout, eta, random);
      mutated++;
    }
  }
  return mutated;
}

/**
 * Rounds integer and categorical variables and clamps every variable into its
 * bounds; also turns -0 into +0. Call after variation.
 */
export function repair(design: Float64Array, layout: DesignLayout): void {
  for (let i = 0; i < layout.count; i++) {
    let value = design[i]!;
    if (layout.kinds[i] !== KIND_REAL) value = Math.round(value);
    design[i] = clamp(value, layout.lower[i]!, layout.upper[i]!) + 0;
  }
}

/**
 * Binary tournament on the crowded-comparison operator of Deb et al. 2002
 * (Section III-B): lower rank wins; equal rank, larger crowding distance
 * wins; a complete tie is decided by one draw.
 */
export function crowdedTournament(
  first: number,
  second: number,
  rank: ArrayLike<number>,
  crowding: ArrayLike<number>,
  random: SeededRandom,
): number {
  const rankFirst = rank[first]!;
  const rankSecond = rank[second]!;
  if (rankFirst < rankSecond) return first;
  if (rankSecond < rankFirst) return second;
  const crowdingFirst = crowding[first]!;
  const crowdingSecond = crowding[second]!;
  if (crowdingFirst > crowdingSecond) return first;
  if (crowdingSecond > crowdingFirst) return second;
  return random.next() <= 0.5 ? first : second;
}

/**
 * Space-filling start: Latin hypercube sampling for real and integer
 * variables (integers stratified on [lower, upper + 1) and floored), uniform
 * choice for categoricals. Returns `count` fresh designs.
 * Draw order: per variable, a permutation then one jitter per design.
 */
export function latinHypercube(count: number, layout: DesignLayout, random: SeededRandom): Float64Array[] {
  const designs: Float64Array[] = [];
  for (let j = 0; j < count; j++) designs.push(new Float64Array(layout.count));
  const strata = new Int32Array(count);
  for (let i = 0; i < layout.count; i++) {
    const kind = layout.kinds[i];
    if (kind === KIND_CATEGORICAL) {
      for (let j = 0; j < count; j++) designs[j]![i] = random.int(layout.choiceCounts[i]!);
      continue;
    }
    random.permutation(strata);
    const lower = layout.lower[i]!;
    const width = kind === KIND_INTEGER ? layout.upper[i]! - lower + 1 : layout.upper[i]! - lower;
    for (let j = 0; j < count; j++) {
      const position = (strata[j]! + random.next()) / count;
      let value = lower + position * width;
      if (kind === KIND_INTEGER) value = Math.floor(value);
      designs[j]![i] = clamp(value, lower, layout.upper[i]!) + 0;
    }
  }
  return designs;
}

/** Uniformly random design (used to replace duplicates in the initial population). */
export function uniformDesign(layout: DesignLayout, random: SeededRandom, target: Float64Array): void {
  for (let i = 0; i < layout.count; i++) {
    const kind = layout.kinds[i];
    if (kind === KIND_CATEGORICAL) target[i] = random.int(layout.choiceCounts[i]!);
    else if (kind === KIND_INTEGER) target[i] = layout.lower[i]! + random.int(layout.upper[i]! - layout.lower[i]! + 1);
    else target[i] = clamp(layout.lower[i]! + random.next() * (layout.upper[i]! - layout.lower[i]!), layout.lower[i]!, layout.upper[i]!) + 0;
  }
}

function clamp(value: number, lower: number, upper: number): number {
  return value < lower ? lower : value > upper ? upper : value;
}

/**
 * Exact-equality set of designs (hash buckets over the IEEE bit patterns,
 * equality by ===, so -0 and +0 are equal; designs passed here are expected
 * to be repaired, i.e. never -0).
 */
export class DesignSet {
  private readonly buckets = new Map<number, Float64Array[]>();
  private static readonly bitsView = new Float64Array(1);
  private static readonly wordsView = new Uint32Array(DesignSet.bitsView.buffer);

  static hash(design: Float64Array): number {
    let hash = 0x811c9dc5 | 0;
    for (let i = 0; i < design.length; i++) {
      DesignSet.bitsView[0] = design[i]! + 0;
      hash = Math.imul(hash ^ DesignSet.wordsView[0]!, 0x01000193);
      hash = Math.imul(hash ^ DesignSet.wordsView[1]!, 0x01000193);
    }
    return hash;
  }

  has(design: Float64Array): boolean {
    const bucket = this.buckets.get(DesignSet.hash(design));
    if (bucket === undefined) return false;
    for (const other of bucket) if (sameDesign(other, design)) return true;
    return false;
  }

  /** Adds (a reference to) the design. */
  add(design: Float64Array): void {
    const key = DesignSet.hash(design);
    const bucket = this.buckets.get(key);
    if (bucket === undefined) this.buckets.set(key, [design]);
    else bucket.push(design);
  }
}

export function sameDesign(a: ArrayLike<number>, b: ArrayLike<number>): boolean {
  if (a.length !== b.length) return false;
  for (let i = 0; i < a.length; i++) if (a[i] !== b[i]) return false;
  return true;
}

/**
 * Differential-evolution move (Storn & Price 1997, "Differential evolution: a simple and efficient
 * heuristic for global optimization over continuous spaces", J. Global Optimization 11, 341-359),
 * DE/rand/1 with crossover rate 1 as used in NSGA-II-DE and MOEA/D-DE by Li & Zhang 2009
 * ("Multiobjective optimization problems with complicated Pareto sets, MOEA/D and NSGA-II", IEEE
 * TEC 13(2), 284-302): child = base + F (a - b) for real and integer variables. A value beyond a
 * bound is put at a random point between the base's value and that bound (Li & Zhang's repair);
 * categorical variables keep the base's choice. One draw per variable that leaves its bounds.
 * Round integers with `repair()` afterwards.
 */
export function differentialMove(base: ArrayLike<number>, a: ArrayLike<number>, b: ArrayLike<number>, weight: number, child: Float64Array, layout: DesignLayout, random: SeededRandom): void {
  for (let i = 0; i < layout.count; i++) {
    const origin = base[i]!;
    if (layout.kinds[i] === KIND_CATEGORICAL) {
      child[i] = origin;
      continue;
    }
    const lower = layout.variationLower[i]!;
    const upper = layout.variationUpper[i]!;
    let value = origin + weight * (a[i]! - b[i]!);
    if (value < lower) value = lower + random.next() * (origin - lower);
    else if (value > upper) value = upper - random.next() * (upper - origin);
    child[i] = value;
  }
}
