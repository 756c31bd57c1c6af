/** The metric catalogue lives in src/core/metrics.ts (below every folder that uses it). */
export * from '../core/metrics.js';
