/**
 * Constraints of a study: their definitions (the study's own plus the drive limits of mechanics §6),
 * their bounds for a design's drives, signed normalised margins and the total violation.
 */
import { ARCHITECTURES } from '../architectures/index.js';
import { metricIndex } from '../core/metrics.js';
import { driveAtJoint } from '../study/drives.js';
import type { DriveSpec, Study } from '../study/types.js';

export interface ConstraintDefinition {
  /** Column-safe name, e.g. "task_coverage" or "drive_torque_1". */
  readonly name: string;
  readonly metric: string;
  readonly metricIndex: number;
  readonly min?: number;
  readonly max?: number;
  /** Where the bound comes from, for messages. */
  readonly origin: 'study' | 'drive';
  /** Drive limits: the bound follows from the design's drive on this actuator (0-based; 0 to 2). */
  readonly driveLimit?: { readonly kind: 'torque' | 'speed' | 'cyclePeakTorque' | 'cycleRmsTorque'; readonly actuator: number };
}

/**
 * Bounds of a constraint for a design with the given drives (one per actuator). Drive limits are at
 * the joint: N·m and rad/s for cranks, N and m/s for sliders (see src/study/drives.ts). For a
 * comparison study the drive bounds depend on the member: pass the member study.
 */
export function constraintBounds(
  def: ConstraintDefinition,
  study: Pick<Study, 'torqueSafetyFactor'> & Partial<Pick<Study, 'architecture' | 'members'>>,
  drives: readonly DriveSpec[] | null,
): { min?: number; max?: number } {
  if (!def.driveLimit) return { ...(def.min !== undefined ? { min: def.min } : {}), ...(def.max !== undefined ? { max: def.max } : {}) };
  if (!drives || study.members) return {};
  const drive = drives[def.driveLimit.actuator];
  if (!drive) return {};
  const kind = ARCHITECTURES[study.architecture ?? 'five-bar'].actuators[def.driveLimit.actuator]!;
  const atJoint = driveAtJoint(drive, kind);
  switch (def.driveLimit.kind) {
    case 'torque':
      return { max: atJoint.ratedEffort / study.torqueSafetyFactor };
    case 'cyclePeakTorque':
      return { max: atJoint.peakEffort };
    case 'cycleRmsTorque':
      return { max: atJoint.ratedEffort };
    default:
      return { max: atJoint.maxSpeed };
  }
}

export interface DesignEvaluation {
  /** Bounds used per constraint (NaN = none); drive limits follow the design's drives. */
  readonly constraintMin: Float64Array;
  readonly constraintMax: Float64Array;
  /** Metric values in METRICS order (SI). NaN = not available for this study (e.g. no drives given). */
  readonly metrics: Float64Array;
  /** Signed normalised margin per constraint: ≥ 0 satisfied, < 0 violated (by that fraction of the bound). */
  readonly margins: Float64Array;
  /** Total normalised violation Σ max(0, −margin); 0 when feasible. */
  readonly violation: number;
  readonly feasible: boolean;
  /** Estimated absolute error of each metric (METRICS order, SI, the metric's unit); NaN = not estimated. */
  readonly errors?: Float64Array;
}

/** Constraint list of a study: its own constraints plus the drive limits of mechanics §6. */
export function constraintDefinitions(study: Study): ConstraintDefinition[] {
  if (study.members) return comparisonConstraints(study.members.map(constraintDefinitions)).union;
  const out: ConstraintDefinition[] = [];
  const seen = new Map<string, number>();
  for (const c of study.constraints) {
    const count = seen.get(c.metric) ?? 0;
    seen.set(c.metric, count + 1);
    const name = count === 0 ? c.metric : `${c.metric}_${count + 1}`;
    const def: { -readonly [K in keyof ConstraintDefinition]: ConstraintDefinition[K] } = {
      name, metric: c.metric, metricIndex: metricIndex(c.metric), origin: 'study',
    };
    if (c.min !== undefined) def.min = c.min;
    if (c.max !== undefined) def.max = c.max;
    out.push(def);
  }
  // Strength limits of the study's strength section (docs/accuracy.md): yield / factor, Euler factor.
  const strength = study.accuracy?.strength;
  if (strength?.yieldStrength) {
    out.push({ name: 'link_yield', metric: 'peak_link_stress', metricIndex: metricIndex('peak_link_stress'), max: strength.yieldStrength / strength.safetyFactor, origin: 'study' });
    out.push({ name: 'link_buckling', metric: 'buckling_margin', metricIndex: metricIndex('buckling_margin'), min: strength.bucklingFactor, origin: 'study' });
  }
  if (!study.drives && study.driveChoice.kind === 'fixed' && !study.driveTrains) return out;
  // Drive limits over the n actuators, at the joint (N·m or N; rad/s or m/s).
  const n = ARCHITECTURES[study.architecture].dof;
  const limit = (name: string, metric: string, kind: NonNullable<ConstraintDefinition['driveLimit']>['kind'], actuator: number): ConstraintDefinition =>
    ({ name, metric, metricIndex: metricIndex(metric), origin: 'drive', driveLimit: { kind, actuator } });
  for (let i = 0; i < n; i++) {
    const k = i + 1;
    out.push(limit(`drive_torque_${k}`, `peak_gravity_torque_${k}`, 'torque', i));
    if (study.task.speed > 0) out.push(limit(`drive_speed_${k}`, `peak_joint_speed_${k}`, 'speed', i));
  }
  if (study.task.acceleration > 0) {
    out.push({ name: 'drive_acceleration', metric: 'accel_capability', metricIndex: metricIndex('accel_capability'), min: study.task.acceleration, origin: 'drive' });
  }
  if (study.driveTrains) out.push(...driveTrainConstraints(study, n));
  if (study.dutyCycle) {
    // Duty-cycle drive limits (docs/duty-cycle.md): peak ≤ η N τ_peak, RMS ≤ η N τ_rated, speed ≤ ω_max/N.
    // Drive trains replace them by the envelope checks (docs/drives.md).
    for (let i = 0; i < n && !study.driveTrains; i++) {
      const k = i + 1;
      out.push(
        limit(`cycle_torque_${k}`, `cycle_peak_torque_${k}`, 'cyclePeakTorque', i),
        limit(`cycle_rms_${k}`, `cycle_rms_torque_${k}`, 'cycleRmsTorque', i),
        limit(`cycle_speed_${k}`, `cycle_peak_speed_${k}`, 'speed', i),
      );
    }
    if (study.dutyCycle.requiredRate) {
      out.push({ name: 'cycle_rate', metric: 'min_cycle_time', metricIndex: metricIndex('min_cycle_time'), max: 1 / study.dutyCycle.requiredRate, origin: 'drive' });
    }
  }
  return out;
}

/**
 * Constraints of drive trains (docs/drives.md), each a use ≤ 1 unless named otherwise: emergency-stop
 * torque of the gearbox; brake holding (when every motor in play has a brake); acceleration while
 * moving at the required speed ≥ task.acceleration; with a duty cycle, per actuator the peak envelope,
 * RMS against the continuous curve, gearbox (and stage) ratings and input speed, and inertia_ratio
 * ≤ drives.max_inertia_ratio when given.
 */
function driveTrainConstraints(study: Study, n: number): ConstraintDefinition[] {
  const setup = study.driveTrains!;
  const bound = (name: string, metric: string, limits: { min?: number; max?: number }): ConstraintDefinition =>
    ({ name, metric, metricIndex: metricIndex(metric), origin: 'drive', ...limits });
  const out = [bound('drive_estop', 'gearbox_estop_use', { max: 1 })];
  if (setup.motors.every((m) => m.brakeTorque !== undefined)) out.push(bound('drive_brake', 'brake_use', { max: 1 }));
  if (study.task.speed > 0 && study.task.acceleration > 0) out.push(bound('drive_acceleration_at_speed', 'accel_capability_at_speed', { min: study.task.acceleration }));
  if (!study.dutyCycle) return out;
  for (let i = 0; i < n; i++) {
    const k = i + 1;
    out.push(
      bound(`drive_envelope_${k}`, `drive_peak_use_${k}`, { max: 1 }),
      bound(`drive_rms_${k}`, `drive_rms_use_${k}`, { max: 1 }),
      bound(`drive_gearbox_${k}`, `gearbox_torque_use_${k}`, { max: 1 }),
      bound(`drive_input_speed_${k}`, `drive_speed_use_${k}`, { max: 1 }),
    );
  }
  if (setup.maxInertiaRatio !== null) out.push(bound('drive_inertia_ratio', 'inertia_ratio', { max: setup.maxInertiaRatio }));
  return out;
}

/**
 * Constraint columns of a comparison study: the union of the members' constraints by name, in order
 * of first appearance, and per member the column of each of its constraints.
 */
export function comparisonConstraints(perMember: readonly (readonly ConstraintDefinition[])[]): { union: ConstraintDefinition[]; columns: number[][] } {
  const union: ConstraintDefinition[] = [];
  const byName = new Map<string, number>();
  const columns = perMember.map((list) =>
    list.map((c) => {
      let k = byName.get(c.name);
      if (k === undefined) {
        k = union.length;
        byName.set(c.name, k);
        union.push(c);
      }
      return k;
    }),
  );
  return { union, columns };
}

/** Violations beyond this many times the bound count as this much (keeps infinite metrics comparable). */
const MAX_NORMALISED_VIOLATION = 1e6;

/** A design's metrics with every constraint's bounds (for its drives), signed margin and the total violation. */
export function applyConstraints(
  constraints: readonly ConstraintDefinition[],
  study: Parameters<typeof constraintBounds>[1],
  drives: readonly DriveSpec[] | null,
  metrics: Float64Array,
): DesignEvaluation {
  const n = constraints.length;
  const margins = new Float64Array(n);
  const constraintMin = new Float64Array(n).fill(Number.NaN);
  const constraintMax = new Float64Array(n).fill(Number.NaN);
  let violation = 0;
  constraints.forEach((c, k) => {
    const bounds = constraintBounds(c, study, drives);
    if (bounds.min !== undefined) constraintMin[k] = bounds.min;
    if (bounds.max !== undefined) constraintMax[k] = bounds.max;
    const margin = constraintMargin(bounds, metrics[c.metricIndex]!);
    margins[k] = margin;
    if (margin < 0) violation -= margin;
  });
  return { metrics, margins, constraintMin, constraintMax, violation, feasible: violation === 0 };
}

export function constraintMargin(bounds: { min?: number; max?: number }, value: number): number {
  if (Number.isNaN(value)) return -MAX_NORMALISED_VIOLATION;
  let margin = Infinity;
  if (bounds.min !== undefined) margin = Math.min(margin, (value - bounds.min) / (Math.abs(bounds.min) || 1));
  if (bounds.max !== undefined) margin = Math.min(margin, (bounds.max - value) / (Math.abs(bounds.max) || 1));
  return Math.max(margin, -MAX_NORMALISED_VIOLATION);
}

