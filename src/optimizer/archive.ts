/**
 * External archive of the best designs found: every feasible design that no
 * other design seen so far weakly dominates. Unbounded.
 *
 * The population of NSGA-II holds only N designs, and the last population is
 * not the best front found: crowding distance throws away good designs, and N
 * points cannot cover a front densely. The archive keeps every non-dominated
 * feasible design that was ever offered, so the result of a run is the best
 * front it FOUND.
 *
 * Rules (objectives compared in minimisation form, 'max' objectives negated):
 * - infeasible and failed designs are never admitted;
 * - a design weakly dominated by a member (no worse in every objective; this
 *   includes an exact duplicate of a member's objective vector) is rejected,
 *   so of two designs with equal objectives the first one stays;
 * - an admitted design removes every member it dominates;
 * - members keep the order in which they were admitted.
 *
 * Offering is one linear scan over the members (O(n M) for n members and M
 * objectives), stopping at the first member that weakly dominates the
 * candidate. As long as the archive is mutually non-dominated, a candidate
 * that is rejected cannot dominate any member (that member would be dominated
 * by the rejecting one), so removal can be done in the same pass.
 */

import { isFeasible, sanitizeEvaluation, type Evaluation, type ObjectiveSpec } from './types.js';

/**
 * An Evaluation in plain JSON: non-finite numbers (only possible in a failed
 * evaluation) are written as null; a failed evaluation always has violation
 * +Infinity, written as null.
 */
export interface SerializedEvaluation {
  objectives: (number | null)[];
  violation: number | null;
  failed?: string;
}

export function serializeEvaluation(evaluation: Evaluation): SerializedEvaluation {
  const serialized: SerializedEvaluation = {
    objectives: evaluation.objectives.map((value) => (Number.isFinite(value) ? value : null)),
    violation: Number.isFinite(evaluation.violation) ? evaluation.violation : null,
  };
  if (evaluation.failed !== undefined) serialized.failed = evaluation.failed;
  return serialized;
}

export function deserializeEvaluation(serialized: SerializedEvaluation): Evaluation {
  const evaluation: Evaluation = {
    objectives: serialized.objectives.map((value) => (value === null ? Number.NaN : value)),
    violation: serialized.violation === null ? Number.POSITIVE_INFINITY : serialized.violation,
  };
  if (serialized.failed !== undefined) evaluation.failed = serialized.failed;
  return sanitizeEvaluation(evaluation);
}

/** One archived design. */
export interface ArchiveMember {
  /** The archive's own copy: read it, do not modify it. */
  design: Float64Array;
  /** Sanitized, feasible evaluation, objectives in the problem's own sense. */
  evaluation: Evaluation;
}

/** Plain JSON: members in archive order. */
export interface SerializedArchive {
  members: { design: number[]; evaluation: SerializedEvaluation }[];
}

export class ParetoArchive {
  readonly objectiveCount: number;
  private readonly maximize: boolean[];
  /** Members in admission order. */
  private entries: ArchiveMember[] = [];
  /** Minimised objectives of entries, row-major: entry i, objective m at i * M + m. */
  private minimized = new Float64Array(0);
  /** Scratch: minimised objectives of the candidate. */
  private readonly candidate: Float64Array;
  /** Frozen copy of entries handed out by members(); rebuilt after a change. */
  private view: readonly ArchiveMember[] | undefined;

  /** @param objectives the problem's objectives (their senses decide the minimisation form). */
  constructor(objectives: readonly Pick<ObjectiveSpec, 'sense'>[]) {
    if (objectives.length === 0) throw new RangeError('ParetoArchive: no objectives');
    this.objectiveCount = objectives.length;
    this.maximize = objectives.map((objective) => objective.sense === 'max');
    this.candidate = new Float64Array(this.objectiveCount);
  }

  /** Rebuilds an archive from toJSON(); members are offered in order, which reproduces it exactly. */
  static fromJSON(objectives: readonly Pick<ObjectiveSpec, 'sense'>[], serialized: SerializedArchive): ParetoArchive {
    const archive = new ParetoArchive(objectives);
    serialized.members.forEach((entry, j) => {
      const evaluation = deserializeEvaluation(entry.evaluation);
      if (!archive.offer(Float64Array.from(entry.design), evaluation)) {
        throw new RangeError(`archive state: member ${j} is infeasible, failed, or dominated by an earlier member`);
      }
    });
    return archive;
  }

  /** Number of members. */
  get size(): number {
    return this.entries.length;
  }

  /**
   * Offers a design; the archive keeps its own copy of it when admitted.
   * @returns true when the design was admitted.
   */
  offer(design: ArrayLike<number>, evaluation: Evaluation): boolean {
    const objectiveCount = this.objectiveCount;
    const sanitized = sanitizeEvaluation(evaluation, objectiveCount);
    if (!isFeasible(sanitized)) return false;
    const candidate = this.candidate;
    for (let m = 0; m < objectiveCount; m++) {
      const value = sanitized.objectives[m]!;
      candidate[m] = this.maximize[m] ? -value : value;
    }

    const kept = objectiveCount === 2 ? this.scanTwo() : objectiveCount === 3 ? this.scanThree() : this.scanAny();
    if (kept < 0) return false;
    this.entries.length = kept;

    if (this.minimized.length < (kept + 1) * objectiveCount) {
      const grown = new Float64Array(Math.max(16, 2 * (kept + 1)) * objectiveCount);
      grown.set(this.minimized.subarray(0, kept * objectiveCount));
      this.minimized = grown;
    }
    this.minimized.set(candidate, kept * objectiveCount);
    const copy = new Float64Array(design.length);
    for (let i = 0; i < design.length; i++) copy[i] = design[i]! + 0;
    this.entries.push({ design: copy, evaluation: sanitized });
    this.view = undefined;
    return true;
  }

  /*
   * The scans compare the candidate with every member in order. They return -1
   * as soon as a member weakly dominates the candidate (nothing has been
   * removed by then, see the top of the file); otherwise they drop the members
   * the candidate dominates by compacting the survivors to the front, and
   * return how many survived. One generic version and two unrolled ones for
   * the common cases of 2 and 3 objectives.
   */

  private scanAny(): number {
    const objectiveCount = this.objectiveCount;
    const minimized = this.minimized;
    const candidate = this.candidate;
    const entries = this.entries;
    const count = entries.length;
    let kept = 0;
    for (let i = 0; i < count; i++) {
      const offset = i * objectiveCount;
      let memberBetterSomewhere = false;
      let candidateBetterSomewhere = false;
      for (let m = 0; m < objectiveCount; m++) {
        const member = minimized[offset + m]!;
        const value = candidate[m]!;
        if (member < value) memberBetterSomewhere = true;
        else if (value < member) candidateBetterSomewhere = true;
      }
      if (!candidateBetterSomewhere) return -1;
      if (!memberBetterSomewhere) continue;
      if (kept !== i) {
        entries[kept] = entries[i]!;
        const target = kept * objectiveCount;
        for (let m = 0; m < objectiveCount; m++) minimized[target + m] = minimized[offset + m]!;
      }
      kept++;
    }
    return kept;
  }

  private scanTwo(): number {
    const minimized = this.minimized;
    const c0 = this.candidate[0]!;
    const c1 = this.candidate[1]!;
    const entries = this.entries;
    const count = entries.length;
    let kept = 0;
    for (let i = 0; i < count; i++) {
      const a0 = minimized[2 * i]!;
      const a1 = minimized[2 * i + 1]!;
      if (a0 <= c0 && a1 <= c1) return -1;
      if (c0 <= a0 && c1 <= a1) continue;
      if (kept !== i) {
        entries[kept] = entries[i]!;
        minimized[2 * kept] = a0;
        minimized[2 * kept + 1] = a1;
      }
      kept++;
    }
    return kept;
  }

  private scanThree(): number {
    const minimized = this.minimized;
    const c0 = this.candidate[0]!;
    const c1 = this.candidate[1]!;
    const c2 = this.candidate[2]!;
    const entries = this.entries;
    const count = entries.length;
    let kept = 0;
    for (let i = 0; i < count; i++) {
      const a0 = minimized[3 * i]!;
      const a1 = minimized[3 * i + 1]!;
      const a2 = minimized[3 * i + 2]!;
      if (a0 <= c0 && a1 <= c1 && a2 <= c2) return -1;
      if (c0 <= a0 && c1 <= a1 && c2 <= a2) continue;
      if (kept !== i) {
        entries[kept] = entries[i]!;
        minimized[3 * kept] = a0;
        minimized[3 * kept + 1] = a1;
        minimized[3 * kept + 2] = a2;
      }
      kept++;
    }
    return kept;
  }

  /** Members in admission order (survivors only). The array is not changed by later offers. */
  members(): readonly ArchiveMember[] {
    this.view ??= Object.freeze(this.entries.slice());
    return this.view;
  }

  /** Objectives of the members in minimisation form (`max` objectives negated), in member order; fresh arrays. */
  points(): Float64Array[] {
    const m = this.objectiveCount;
    return this.entries.map((_, i) => this.minimized.slice(i * m, (i + 1) * m));
  }

  /** Plain JSON; fromJSON(JSON.parse(JSON.stringify(archive.toJSON()))) gives the same archive. */
  toJSON(): SerializedArchive {
    return {
      members: this.entries.map((entry) => ({ design: Array.from(entry.design), evaluation: serializeEvaluation(entry.evaluation) })),
    };
  }
}
