/** Generic multi-objective optimizer (NSGA-II) and its tools; knows nothing about the application. */
export * from './types.js';
export * from './random.js';
export * from './operators.js';
export * from './sorting.js';
export * from './nsga2.js';
export * from './nsga3.js';
export * from './algorithm.js';
export * from './referenceDirections.js';
export { ParetoArchive } from './archive.js';
export * from './hypervolume.js';
export * from './testProblems.js';
export * from './islands.js';
