/**
 * Knowing when the front is found: a hypervolume-stagnation test on the external archive.
 *
 * After every generation t the monitor is shown the archive (objectives in minimisation form). It
 * keeps, for each of the last W generations, the normalisation frame of that generation's archive
 * (ideal and nadir of its members) and the archive's hypervolume in that frame (reference point 1.1
 * per normalised objective). At generation t it measures the archive of t in the frame fixed at
 * generation t - W and reports the relative improvement
 *
 *     improvement(t) = (HV_{t-W}(A_t) - HV_{t-W}(A_{t-W})) / HV_{t-W}(A_{t-W})
 *
 * where HV_{t-W} is the hypervolume in the frame of generation t - W. Because the archive only ever
 * gains designs that no earlier design dominates, the improvement is never negative. The run has
 * converged when the improvement over a whole window is below the tolerance.
 *
 * The frame is fixed for the window so that a growing front does not look like a shrinking one, and
 * the figure is relative so that the tolerance means the same on every problem. This is the
 * "hypervolume change over a window of generations" stopping test discussed in the literature on
 * stopping criteria for multi-objective evolutionary algorithms (e.g. Wagner, Trautmann & Naujoks
 * 2009, "OCD: Online convergence detection for evolutionary multi-objective algorithms based on
 * statistical testing", EMO 2009, which uses the hypervolume among its indicators); here in its
 * plain deterministic form: one threshold, no statistical test.
 *
 * The monitor is plain data between generations (`toJSON` / constructor), so a resumed run makes
 * exactly the same decisions as an uninterrupted one.
 */
import { hypervolume } from './hypervolume.js';

/** Reference point of the normalised frame, per objective. */
export const CONVERGENCE_REFERENCE = 1.1;

export interface ConvergenceSettings {
  /** W: generations over which the improvement is measured (≥ 1). */
  readonly window: number;
  /** Relative hypervolume improvement over W generations below which the run has converged (≥ 0). */
  readonly tolerance: number;
}

export const DEFAULT_CONVERGENCE: ConvergenceSettings = { window: 20, tolerance: 1e-3 };

/** Per-objective bounds in minimisation form; nadir > ideal in every objective. */
export interface HypervolumeFrame {
  readonly ideal: readonly number[];
  readonly nadir: readonly number[];
}

export interface ConvergenceRecord {
  readonly generation: number;
  /** Frame of this generation's archive; null while the archive is empty. */
  readonly frame: HypervolumeFrame | null;
  /** Hypervolume of this generation's archive in its own frame; null with the frame. */
  readonly hypervolume: number | null;
}

/** Plain JSON state of a monitor: the records of the last W + 1 generations, oldest first. */
export interface ConvergenceState {
  readonly records: ConvergenceRecord[];
}

export interface ConvergenceStatus {
  readonly generation: number;
  readonly archiveSize: number;
  /** Archive hypervolume in this generation's own frame (null when the archive is empty). */
  readonly hypervolume: number | null;
  /**
   * Relative hypervolume improvement since generation t - W, in that generation's frame; null until
   * a window with a non-empty archive at its start has passed.
   */
  readonly improvement: number | null;
  /** improvement < tolerance. */
  readonly converged: boolean;
}

export function validateConvergenceSettings(settings: ConvergenceSettings): void {
  if (!Number.isInteger(settings.window) || settings.window < 1) throw new RangeError(`convergence window must be an integer >= 1, got ${settings.window}`);
  if (!(settings.tolerance >= 0 && Number.isFinite(settings.tolerance))) throw new RangeError(`convergence tolerance must be a finite number >= 0, got ${settings.tolerance}`);
}

/**
 * Bounds of a point set. An objective without spread gets a span of max(|value|, 1) · 1e-9 so that
 * the frame stays usable (a single design, or an objective every design shares).
 */
export function frameOf(points: readonly ArrayLike<number>[]): HypervolumeFrame | null {
  if (points.length === 0) return null;
  const m = points[0]!.length;
  const ideal = new Array<number>(m).fill(Infinity);
  const nadir = new Array<number>(m).fill(-Infinity);
  for (const p of points) {
    for (let k = 0; k < m; k++) {
      if (p[k]! < ideal[k]!) ideal[k] = p[k]!;
      if (p[k]! > nadir[k]!) nadir[k] = p[k]!;
    }
  }
  for (let k = 0; k < m; k++) {
    if (!(nadir[k]! > ideal[k]!)) nadir[k] = ideal[k]! + Math.max(Math.abs(ideal[k]!), 1) * 1e-9;
  }
  return { ideal, nadir };
}

/** Hypervolume of the points normalised to the frame (ideal → 0, nadir → 1), reference 1.1 per objective. */
export function hypervolumeInFrame(points: readonly ArrayLike<number>[], frame: HypervolumeFrame): number {
  const m = frame.ideal.length;
  const scaled = points.map((p) => {
    const q = new Float64Array(m);
    for (let k = 0; k < m; k++) q[k] = (p[k]! - frame.ideal[k]!) / (frame.nadir[k]! - frame.ideal[k]!);
    return q;
  });
  return hypervolume(scaled, new Array<number>(m).fill(CONVERGENCE_REFERENCE));
}

export class ConvergenceMonitor {
  readonly settings: ConvergenceSettings;
  private records: ConvergenceRecord[];

  constructor(settings: ConvergenceSettings, state?: ConvergenceState) {
    validateConvergenceSettings(settings);
    this.settings = settings;
    this.records = state ? state.records.map((r) => ({ ...r })) : [];
  }

  /** Records generation t's archive (minimisation form) and tells whether the run has converged. */
  observe(generation: number, archive: readonly ArrayLike<number>[]): ConvergenceStatus {
    const last = this.records.at(-1);
    if (last && generation <= last.generation) throw new RangeError(`convergence: generation ${generation} observed after ${last.generation}`);
    const frame = frameOf(archive);
    const own = frame ? hypervolumeInFrame(archive, frame) : null;
    this.records.push({ generation, frame, hypervolume: own });
    const start = generation - this.settings.window;
    this.records = this.records.filter((r) => r.generation >= start);
    const first = this.records[0]!;
    let improvement: number | null = null;
    if (first.generation === start && first.frame && first.hypervolume !== null) {
      const now = hypervolumeInFrame(archive, first.frame);
      improvement = first.hypervolume > 0 ? (now - first.hypervolume) / first.hypervolume : now > 0 ? Infinity : 0;
    }
    return {
      generation,
      archiveSize: archive.length,
      hypervolume: own,
      improvement,
      converged: improvement !== null && improvement < this.settings.tolerance,
    };
  }

  toJSON(): ConvergenceState {
    return { records: this.records.map((r) => ({ ...r })) };
  }
}
