/**
 * Drive-train metrics of one design (docs/drives.md): along the duty cycle (driveChecks.ts) and the
 * static ones that need no cycle (emergency-stop torque of the gearbox, brake holding). Written into
 * the METRICS vector; NaN stays where a study has no drive trains.
 */
import { metricIndex } from '../core/metrics.js';
import { emergencyStopOutputTorque, transmission, use } from '../drives/envelope.js';
import type { DriveTrain } from '../drives/types.js';
import type { DriveSpec } from '../study/types.js';
import { DriveCheckResult, checkCycle, envelopeMinCycleTime, type JointCycle } from './driveChecks.js';

const PER_ACTUATOR = ['drive_peak_use', 'drive_rms_use', 'gearbox_torque_use', 'drive_speed_use', 'inertia_ratio'] as const;
const INDEX = Object.fromEntries(
  PER_ACTUATOR.map((name) => [name, { all: metricIndex(name), of: [1, 2, 3].map((i) => metricIndex(`${name}_${i}`)) }]),
) as Record<(typeof PER_ACTUATOR)[number], { all: number; of: number[] }>;
const ESTOP = metricIndex('gearbox_estop_use');
const BRAKE = metricIndex('brake_use');
const COST = metricIndex('drive_cost');
const MIN_CYCLE_TIME = metricIndex('min_cycle_time');
const GRAVITY_OF = [1, 2, 3].map((i) => metricIndex(`peak_gravity_torque_${i}`));

/** The drive trains of a design's drives, or null when any drive is not built from catalogues. */
export function trainsOf(drives: readonly DriveSpec[] | null): DriveTrain[] | null {
  if (!drives || drives.length === 0 || !drives.every((d) => d.train)) return null;
  return drives.map((d) => d.train!);
}

/** Reusable writer of the cycle checks (one per evaluator). */
export class CycleDriveMetrics {
  private readonly result = new DriveCheckResult();
  private readonly scratch = new DriveCheckResult();

  /**
   * Writes the checks at the pace `timeScale` (moves timed that many times their reference time) and
   * replaces min_cycle_time by the shortest cycle time that keeps inside every envelope and rating.
   * `assembled` false (the cycle left the assembled poses): every figure +∞.
   */
  write(cycle: JointCycle, assembled: boolean, trains: readonly DriveTrain[], timeScale: number, metrics: Float64Array): void {
    const n = cycle.dof;
    if (!assembled) {
      for (const name of PER_ACTUATOR) {
        metrics[INDEX[name].all] = Infinity;
        for (let i = 0; i < n; i++) metrics[INDEX[name].of[i]!] = Infinity;
      }
      metrics[MIN_CYCLE_TIME] = Infinity;
      return;
    }
    const r = this.result;
    checkCycle(cycle, trains, 1 / timeScale, r);
    const fields: Record<(typeof PER_ACTUATOR)[number], Float64Array> = {
      drive_peak_use: r.peakUse, drive_rms_use: r.rmsUse, gearbox_torque_use: r.gearboxUse, drive_speed_use: r.speedUse, inertia_ratio: r.inertiaRatio,
    };
    for (const name of PER_ACTUATOR) {
      let worst = 0;
      for (let i = 0; i < n; i++) {
        const v = fields[name][i]!;
        metrics[INDEX[name].of[i]!] = v;
        if (v > worst) worst = v;
      }
      metrics[INDEX[name].all] = worst;
    }
    metrics[MIN_CYCLE_TIME] = envelopeMinCycleTime(cycle, trains, this.scratch);
  }
}

/**
 * Checks that need no cycle: the gearbox's emergency-stop torque N·max(T_peak(0), T_brake) against
 * its rating, and the brake: factor × largest static holding effort (peak_gravity_torque_i, already
 * in `metrics`) referred to the motor (× r, no efficiency credit) against the brake's holding torque.
 * brake_use stays NaN when no motor has a brake. drive_cost: the catalogue costs summed (NaN when one is missing).
 */
export function writeStaticDriveMetrics(trains: readonly DriveTrain[], brakeFactor: number, metrics: Float64Array): void {
  let estop = 0;
  let brake = Number.NaN;
  trains.forEach((t, i) => {
    estop = Math.max(estop, use(emergencyStopOutputTorque(t), t.gearbox.emergencyStopTorque));
    const holding = t.motor.brakeTorque;
    if (holding === undefined) return;
    const needed = brakeFactor * metrics[GRAVITY_OF[i]!]! * transmission(t);
    const u = use(needed, holding);
    brake = Number.isNaN(brake) ? u : Math.max(brake, u);
  });
  metrics[ESTOP] = estop;
  metrics[BRAKE] = brake;
  metrics[COST] = trains.reduce((sum, t) => sum + t.motor.cost + t.gearbox.cost, 0);
}
