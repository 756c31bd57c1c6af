/**
 * Duty-cycle metrics of a design of any architecture (docs/duty-cycle.md): figures at the study's
 * cycle time (or 1/required rate, else the steps' own times) and, with drives, the shortest cycle
 * time. A cycle that leaves the assembled, non-singular poses gives +∞ for every figure. The analysis
 * runs on the architecture interface (src/mechanics/dutyCycle.ts).
 */
import type { ArchitectureModelBase, DriveAtJoint, PlanarArchitecture } from '../architectures/types.js';
import type { Study } from '../study/types.js';
import { CycleSamples, CycleSummary, CycleTrajectory, DutyCycleAnalysis, cycleDriveLimits, evaluatedCycleTime, writeCycleMetrics } from './dutyCycle.js';
import type { DriveTrain } from '../drives/types.js';
import { CycleDriveMetrics } from './driveMetrics.js';

/** Duty-cycle buffers of one study (made once per evaluator), or null without a duty cycle. */
export class CycleMetrics {
  private readonly analysis: DutyCycleAnalysis;
  private readonly summary = new CycleSummary();
  private readonly driveMetrics = new CycleDriveMetrics();

  private constructor(private readonly study: Study, architecture: PlanarArchitecture<ArchitectureModelBase>) {
    const duty = study.dutyCycle!;
    this.analysis = new DutyCycleAnalysis(new CycleSamples(new CycleTrajectory(duty.path), duty.samples), study.friction ?? null, architecture);
  }

  static forStudy(study: Study, architecture: PlanarArchitecture<ArchitectureModelBase>): CycleMetrics | null {
    return study.dutyCycle ? new CycleMetrics(study, architecture) : null;
  }

  /**
   * Writes the cycle metrics of a design (its model and its drives at the joints) into `metrics`;
   * with drive trains (docs/drives.md) also the envelope and rating checks, and min_cycle_time
   * from the envelopes.
   */
  write(model: ArchitectureModelBase, drives: readonly DriveAtJoint[] | null, metrics: Float64Array, trains: readonly DriveTrain[] | null = null): void {
    const duty = this.study.dutyCycle!;
    writeCycleMetrics(this.analysis, model, duty, cycleDriveLimits(drives), this.summary, metrics);
    if (!trains) return;
    const cycleTime = evaluatedCycleTime(duty);
    const scale = cycleTime === null ? 1 : this.analysis.timeScaleFor(cycleTime);
    this.driveMetrics.write(this.analysis, this.analysis.assembled, trains, scale, metrics);
  }
}
