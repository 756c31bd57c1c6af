/**
 * Duty-cycle metrics of a design (docs/duty-cycle.md): figures at the study's cycle time (or 1/required
 * rate, else the steps' own times) and, with drives, the shortest cycle time. A cycle that leaves the
 * assembled, non-singular poses gives +∞ for every figure.
 *
 * Transitional: the duty-cycle analysis (src/mechanics/dutyCycle.ts) still runs on the five-bar's
 * former model type (`FiveBarModel`, built by `buildFiveBarModel`); it moves to the architecture
 * interface with the duty cycles of every architecture, and this file then drops that model.
 */
import { metricIndex } from '../core/metrics.js';
import type { Study } from '../study/types.js';
import { buildFiveBarModel, drivesAtJoint, type ResolvedDesign } from './designSpace.js';
import { CycleSamples, CycleSummary, CycleTrajectory, DutyCycleAnalysis, type CycleDriveLimits } from './dutyCycle.js';

const M = {
  peakTorque: metricIndex('cycle_peak_torque'),
  peakTorqueOf: [metricIndex('cycle_peak_torque_1'), metricIndex('cycle_peak_torque_2')],
  rmsTorque: metricIndex('cycle_rms_torque'),
  rmsTorqueOf: [metricIndex('cycle_rms_torque_1'), metricIndex('cycle_rms_torque_2')],
  peakSpeed: metricIndex('cycle_peak_speed'),
  peakSpeedOf: [metricIndex('cycle_peak_speed_1'), metricIndex('cycle_peak_speed_2')],
  peakPower: metricIndex('cycle_peak_power'),
  peakPowerOf: [metricIndex('cycle_peak_power_1'), metricIndex('cycle_peak_power_2')],
  minCycleTime: metricIndex('min_cycle_time'),
} as const;

/** Duty-cycle buffers of one study (made once per evaluator), or null without a duty cycle. */
export class CycleMetrics {
  private readonly analysis: DutyCycleAnalysis;
  private readonly summary = new CycleSummary();

  private constructor(private readonly study: Study) {
    const duty = study.dutyCycle!;
    this.analysis = new DutyCycleAnalysis(new CycleSamples(new CycleTrajectory(duty.path), duty.samples), study.friction ?? null);
  }

  static forStudy(study: Study): CycleMetrics | null {
    return study.dutyCycle ? new CycleMetrics(study) : null;
  }

  /** Writes the cycle metrics of a resolved design into `metrics`. */
  write(resolved: ResolvedDesign, metrics: Float64Array): void {
    const duty = this.study.dutyCycle!;
    const cycle = this.analysis;
    cycle.run(buildFiveBarModel(this.study, resolved));
    const drives = drivesAtJoint(this.study, resolved.drives);
    const limits: CycleDriveLimits | null = drives
      ? {
          peakTorque: [drives[0]!.peakEffort, drives[1]!.peakEffort],
          ratedTorque: [drives[0]!.ratedEffort, drives[1]!.ratedEffort],
          speed: [drives[0]!.maxSpeed, drives[1]!.maxSpeed],
        }
      : null;
    const cycleTime = duty.cycleTime ?? (duty.requiredRate ? 1 / duty.requiredRate : null);
    const scale = cycleTime === null ? 1 : cycle.timeScaleFor(cycleTime);
    const r = cycle.summarise(scale, limits, this.summary);
    metrics[M.peakTorqueOf[0]] = r.peakTorque1;
    metrics[M.peakTorqueOf[1]] = r.peakTorque2;
    metrics[M.peakTorque] = Math.max(r.peakTorque1, r.peakTorque2);
    metrics[M.rmsTorqueOf[0]] = r.rmsTorque1;
    metrics[M.rmsTorqueOf[1]] = r.rmsTorque2;
    metrics[M.rmsTorque] = Math.max(r.rmsTorque1, r.rmsTorque2);
    metrics[M.peakSpeedOf[0]] = r.peakSpeed1;
    metrics[M.peakSpeedOf[1]] = r.peakSpeed2;
    metrics[M.peakSpeed] = Math.max(r.peakSpeed1, r.peakSpeed2);
    metrics[M.peakPowerOf[0]] = r.peakPower1;
    metrics[M.peakPowerOf[1]] = r.peakPower2;
    metrics[M.peakPower] = Math.max(r.peakPower1, r.peakPower2);
    metrics[M.minCycleTime] = r.minCycleTime;
  }
}
