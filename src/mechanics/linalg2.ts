/** The 2×2 closed forms live in src/architectures/linalg2.ts (used by the leg layer). */
export * from '../architectures/linalg2.js';
