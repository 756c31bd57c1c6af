/**
 * The two search algorithms behind one ask/tell interface, chosen by name (study field
 * `optimizer.algorithm`). Both keep the same plain-JSON state shape, archive and determinism.
 */
import type { ArchiveMember } from './archive.js';
import { Nsga2, type Member, type Nsga2Settings, type Nsga2State } from './nsga2.js';
import { Nsga3 } from './nsga3.js';
import type { Evaluation } from './types.js';
import type { ProblemSpec } from './types.js';

export type AlgorithmName = 'nsga2' | 'nsga3';

export interface AskTellOptimizer {
  readonly generation: number;
  initialDesigns(): Float64Array[];
  ask(): Float64Array[];
  tell(designs: readonly Float64Array[], evaluations: readonly Evaluation[]): void;
  population(): readonly Member[];
  front(): readonly Member[];
  archive(): readonly ArchiveMember[];
  snapshot(): Nsga2State;
}

export function createOptimizer(algorithm: AlgorithmName, problem: ProblemSpec, settings: Nsga2Settings, state?: Nsga2State): AskTellOptimizer {
  if (algorithm === 'nsga3') return state === undefined ? new Nsga3(problem, settings) : Nsga3.restore(problem, settings, state);
  return state === undefined ? new Nsga2(problem, settings) : Nsga2.restore(problem, settings, state);
}
