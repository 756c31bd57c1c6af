/**
 * Typed access to the `odex` package (E. Hairer and G. Wanner's ODEX, Gragg–Bulirsch–Stoer
 * extrapolation with dense output, ported to JavaScript). The package ships its TypeScript source
 * next to the CommonJS build, and that source does not pass our strict type check, so it is loaded
 * with `require` and described here by the part of its interface we use.
 */
import { createRequire } from 'node:module';

/** Right-hand side y′ = f(x, y); the returned array is copied by the solver at once. */
export type OdexDerivative = (x: number, y: number[]) => number[];

/**
 * Called after every accepted step (and once at the start, with nr = 1 and no interpolator):
 * y is the solution at x; dense(i, t) interpolates component i for t in [xOld, x]. Return false to stop.
 */
export type OdexObserver = (nr: number, xOld: number, x: number, y: number[], dense?: ((component: number, t: number) => number) | false) => boolean | void;

/** 0 converged, 1 too many steps, 2 stopped by the observer (odex's `Outcome`). */
export const ODEX_CONVERGED = 0;

export interface OdexResult {
  readonly y: number[];
  readonly outcome: number;
  readonly nStep: number;
  readonly nAccept: number;
  readonly nReject: number;
  readonly nEval: number;
}

export interface OdexSolver {
  maxSteps: number;
  initialStepSize: number;
  maxStepSize: number;
  denseOutput: boolean;
  /**
   * How many times per step the midpoint-rule stability check runs (default 1; 0 = never). The check
   * compares f at the first midpoint with f at the start relative to f's size: at a state of rest f is
   * round-off noise, the ratio is random, and the check then halves the step without end.
   */
  stabilityCheckCount: number;
  relativeTolerance: number | number[];
  absoluteTolerance: number | number[];
  solve(f: OdexDerivative, x: number, y0: number[], xEnd: number, solOut?: OdexObserver): OdexResult;
}

const requireFromHere = createRequire(import.meta.url);
const odex = requireFromHere('odex') as { Solver: new (n: number) => OdexSolver };

/** A new ODEX solver for a system of dimension n. */
export function createOdexSolver(n: number): OdexSolver {
  return new odex.Solver(n);
}
