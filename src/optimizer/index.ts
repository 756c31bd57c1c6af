/** Generic multi-objective optimizer (NSGA-II) and its tools; knows nothing about the application. */
export * from './types.js';
export * from './random.js';
export * from './operators.js';
export * from './sorting.js';
export * from './nsga2.js';
export { ParetoArchive } from './archive.js';
export * from './hypervolume.js';
export * from './testProblems.js';
export * from './convergence.js';
export * from './termination.js';
