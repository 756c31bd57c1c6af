/**
 * The metric catalogue: every quantity a design evaluation reports, with its unit and meaning.
 * The order here is the order of columns in tables, the store and exports.
 */
import type { QuantityKind } from './quantities.js';

export interface MetricInfo {
  readonly name: string;
  readonly kind: QuantityKind;
  /** Which direction is better, when the metric is used as an objective. */
  readonly better: 'min' | 'max';
  /** One-line meaning, in the project's own words, shown by `loopsmith check` and the README. */
  readonly description: string;
}

export const METRICS: readonly MetricInfo[] = [
  { name: 'reachable_area', kind: 'area', better: 'max', description: 'area both legs can reach, before any quality filter' },
  { name: 'workspace_area', kind: 'area', better: 'max', description: 'area of the usable (singularity-free, well-conditioned) workspace region' },
  { name: 'task_coverage', kind: 'dimensionless', better: 'max', description: 'fraction of the task region inside the usable workspace (1 = all of it)' },
  { name: 'inscribed_radius', kind: 'length', better: 'max', description: 'radius of the largest circle that fits inside the usable workspace' },
  { name: 'gci', kind: 'dimensionless', better: 'max', description: 'area-mean of 1/κ(J) over the evaluation region (global conditioning index)' },
  { name: 'min_inv_condition', kind: 'dimensionless', better: 'max', description: 'worst 1/κ(J) over the evaluation region' },
  { name: 'min_transmission_angle', kind: 'angle', better: 'max', description: 'worst transmission angle (crank–rod or rod–rod) over the evaluation region' },
  { name: 'min_stiffness', kind: 'linearStiffness', better: 'max', description: 'smallest eigenvalue of the end-point stiffness K_x over the evaluation region' },
  { name: 'peak_gravity_torque', kind: 'torque', better: 'min', description: 'largest static holding torque at any actuator joint, payload included' },
  { name: 'peak_gravity_torque_1', kind: 'torque', better: 'min', description: 'largest static holding torque at joint 1' },
  { name: 'peak_gravity_torque_2', kind: 'torque', better: 'min', description: 'largest static holding torque at joint 2' },
  // Renamed from `bandwidth` (the old name is still read, see METRIC_ALIASES): the stored column keeps its meaning.
  { name: 'first_mode_in_plane', kind: 'frequency', better: 'max', description: 'lowest in-plane natural frequency of the end point over the evaluation region (drives locked, lumped masses); formerly bandwidth' },
  { name: 'accel_capability', kind: 'acceleration', better: 'max', description: 'end-point acceleration available in every direction from standstill, at the worst pose' },
  { name: 'peak_joint_speed', kind: 'angularSpeed', better: 'min', description: 'largest actuator joint speed needed to move the end point at the required speed' },
  { name: 'peak_joint_speed_1', kind: 'angularSpeed', better: 'min', description: 'largest joint-1 speed for the required end-point speed' },
  { name: 'peak_joint_speed_2', kind: 'angularSpeed', better: 'min', description: 'largest joint-2 speed for the required end-point speed' },
  // Renamed from `resolution` (the old name is still read, see METRIC_ALIASES): the stored column keeps its meaning.
  { name: 'encoder_resolution', kind: 'length', better: 'min', description: 'largest end-point step caused by one encoder count on each joint; formerly resolution' },
  { name: 'footprint', kind: 'length', better: 'min', description: 'size proxy: pivot distance plus the longer leg reach' },
  { name: 'moving_mass', kind: 'mass', better: 'min', description: 'mass of cranks, rods and hubs (payload not included)' },
  // Duty cycle (NaN when the study gives no duty_cycle); see docs/duty-cycle.md.
  { name: 'cycle_peak_torque', kind: 'torque', better: 'min', description: 'largest actuator torque |τ_i| along the duty cycle (inertia, velocity terms, gravity, friction)' },
  { name: 'cycle_peak_torque_1', kind: 'torque', better: 'min', description: 'largest joint-1 torque along the duty cycle' },
  { name: 'cycle_peak_torque_2', kind: 'torque', better: 'min', description: 'largest joint-2 torque along the duty cycle' },
  { name: 'cycle_rms_torque', kind: 'torque', better: 'min', description: 'larger of the two actuators\' RMS torques over the duty cycle (root of the time-mean of τ²)' },
  { name: 'cycle_rms_torque_1', kind: 'torque', better: 'min', description: 'RMS joint-1 torque over the duty cycle' },
  { name: 'cycle_rms_torque_2', kind: 'torque', better: 'min', description: 'RMS joint-2 torque over the duty cycle' },
  { name: 'cycle_peak_speed', kind: 'angularSpeed', better: 'min', description: 'largest actuator joint speed along the duty cycle' },
  { name: 'cycle_peak_speed_1', kind: 'angularSpeed', better: 'min', description: 'largest joint-1 speed along the duty cycle' },
  { name: 'cycle_peak_speed_2', kind: 'angularSpeed', better: 'min', description: 'largest joint-2 speed along the duty cycle' },
  { name: 'cycle_peak_power', kind: 'power', better: 'min', description: 'largest joint power |τ_i θ̇_i| of either actuator along the duty cycle' },
  { name: 'cycle_peak_power_1', kind: 'power', better: 'min', description: 'largest joint-1 power along the duty cycle' },
  { name: 'cycle_peak_power_2', kind: 'power', better: 'min', description: 'largest joint-2 power along the duty cycle' },
  { name: 'min_cycle_time', kind: 'time', better: 'min', description: 'shortest duty-cycle time the drives allow (peak and RMS torque, speed), moves scaled, dwells kept' },
  // Third actuator and orientation (3-DOF platforms; NaN for 2-DOF architectures); see docs/architectures.md.
  { name: 'peak_gravity_torque_3', kind: 'torque', better: 'min', description: 'largest static holding effort at joint 3 (3-DOF)' },
  { name: 'peak_joint_speed_3', kind: 'angularSpeed', better: 'min', description: 'largest joint-3 speed for the required end-point speed (3-DOF)' },
  { name: 'orientation_margin', kind: 'angle', better: 'max', description: 'worst margin of the orientation requirement φ_0 ± Δφ over the task points (≥ 0: met everywhere; −π where nothing is reachable)' },
  { name: 'orientation_range', kind: 'angle', better: 'max', description: 'smallest width, over the task points, of the usable orientation range that holds φ_0 (2π = full turn)' },
  // Duty cycle, third actuator (3-DOF platforms; NaN for 2-DOF architectures and without a duty cycle).
  { name: 'cycle_peak_torque_3', kind: 'torque', better: 'min', description: 'largest joint-3 effort along the duty cycle (3-DOF)' },
  { name: 'cycle_rms_torque_3', kind: 'torque', better: 'min', description: 'RMS joint-3 effort over the duty cycle (3-DOF)' },
  { name: 'cycle_peak_speed_3', kind: 'angularSpeed', better: 'min', description: 'largest joint-3 speed along the duty cycle (3-DOF)' },
  { name: 'cycle_peak_power_3', kind: 'power', better: 'min', description: 'largest joint-3 power along the duty cycle (3-DOF)' },
  // Drive trains from motor and gearbox catalogues (NaN without them); see docs/drives.md. A "use" is value / limit: ≤ 1 holds.
  ...perActuatorMetrics('drive_peak_use', 'dimensionless', 'largest motor torque over the peak torque–speed envelope at its speed, along the duty cycle'),
  ...perActuatorMetrics('drive_rms_use', 'dimensionless', 'RMS motor torque over the cycle divided by the continuous torque at the mean motor speed'),
  ...perActuatorMetrics('gearbox_torque_use', 'dimensionless', 'gearbox output torque against its acceleration rating (peak) and rated torque (cubic mean), and a slider stage\'s thrust against its limit, along the cycle'),
  ...perActuatorMetrics('drive_speed_use', 'dimensionless', 'largest motor (gearbox input) speed over the smallest of the motor, gearbox and stage speed limits, along the cycle'),
  ...perActuatorMetrics('inertia_ratio', 'dimensionless', 'load inertia reflected to the motor (gearbox and screw included) over the rotor inertia, worst over the cycle'),
  { name: 'gearbox_estop_use', kind: 'dimensionless', better: 'min', description: 'gearbox output torque at an emergency stop, N·max(peak motor torque, brake torque), over its emergency-stop rating (worst actuator)' },
  { name: 'brake_use', kind: 'dimensionless', better: 'min', description: 'brake factor times the largest static holding torque, referred to the motor, over the brake holding torque (worst actuator)' },
  { name: 'drive_cost', kind: 'dimensionless', better: 'min', description: 'sum of the chosen motors\' and gearboxes\' catalogue costs over the actuators (catalogue currency; NaN when a cost is not given)' },
  { name: 'accel_capability_at_speed', kind: 'acceleration', better: 'max', description: 'end-point acceleration available in every direction while moving at the required speed (peak envelope at that motor speed), at the worst pose' },
  // The machine in its cell (studies with a cell section; NaN otherwise); see docs/cell.md.
  { name: 'min_clearance', kind: 'length', better: 'max', description: 'smallest clearance of the links from keep-outs, the other legs, the drive housings and between sliders, over the task region, zones and duty cycle, after the required clearance (negative = collision)' },
  { name: 'passive_joint_margin', kind: 'angle', better: 'max', description: 'smallest included angle at a passive joint minus its limit, over the task region, zones and duty cycle (negative = beyond the limit)' },
  { name: 'zone_coverage', kind: 'dimensionless', better: 'max', description: 'worst covered fraction of a task zone (pick, place, …) inside the usable workspace (1 = every zone whole)' },
  { name: 'cycle_coverage', kind: 'dimensionless', better: 'max', description: 'fraction of the duty-cycle path inside the usable workspace (1 = all of it)' },
  { name: 'regular_workspace_area', kind: 'area', better: 'max', description: 'area of the largest rectangle of the study aspect ratio and angle (a square by default) inside the usable workspace' },
  { name: 'regular_workspace_width', kind: 'length', better: 'max', description: 'width of that largest rectangle (along its angle; height = width / aspect)' },
  { name: 'regular_workspace_x', kind: 'length', better: 'max', description: 'x of the centre of that largest rectangle (its placement, not an objective)' },
  { name: 'regular_workspace_y', kind: 'length', better: 'max', description: 'y of the centre of that largest rectangle (its placement, not an objective)' },
  // Accuracy under tolerances, real joints, out-of-plane mode and strength (NaN unless the study gives the
  // section they need); see docs/accuracy.md.
  { name: 'position_error_worst', kind: 'length', better: 'min', description: 'largest first-order worst-case end-point error over the region from the study tolerances (lengths, pivots, clearances, backlash, encoder)' },
  { name: 'position_error_rss', kind: 'length', better: 'min', description: 'largest statistical end-point error over the region: coverage factor × σ along the worst direction (root-sum-square of independent sources)' },
  { name: 'orientation_error_worst', kind: 'angle', better: 'min', description: 'largest first-order worst-case platform orientation error over the region (3-DOF)' },
  { name: 'orientation_error_rss', kind: 'angle', better: 'min', description: 'largest statistical platform orientation error over the region, coverage factor × σ (3-DOF)' },
  { name: 'first_mode_out_of_plane', kind: 'frequency', better: 'max', description: 'lowest out-of-plane natural frequency over the region (links as beams in bending and torsion, see docs/accuracy.md)' },
  { name: 'peak_link_axial_force', kind: 'force', better: 'min', description: 'largest axial force in any link over the region (payload weight and the study end load)' },
  { name: 'peak_link_bending_moment', kind: 'torque', better: 'min', description: 'largest bending moment in any link over the region (cranks carry the rod force across their length)' },
  { name: 'peak_link_stress', kind: 'modulus', better: 'min', description: 'largest normal stress (axial plus bending) in any link over the region, Pa' },
  { name: 'buckling_margin', kind: 'dimensionless', better: 'max', description: 'smallest ratio of Euler load π²EI/L² to compressive force over the compressed rods and struts (≥ 1: no buckling)' },
  { name: 'peak_joint_force', kind: 'force', better: 'min', description: 'largest force at any pin joint over the region, for bearing selection' },
  { name: 'peak_joint_force_1', kind: 'force', better: 'min', description: 'largest force at the pins of leg 1 over the region' },
  { name: 'peak_joint_force_2', kind: 'force', better: 'min', description: 'largest force at the pins of leg 2 over the region' },
  { name: 'peak_joint_force_3', kind: 'force', better: 'min', description: 'largest force at the pins of leg 3 over the region (3-DOF)' },
];

/** The worst-over-actuators metric and one per actuator (drive-train checks). */
function perActuatorMetrics(name: string, kind: MetricInfo['kind'], description: string): MetricInfo[] {
  return [
    { name, kind, better: 'min', description: `${description} (worst actuator)` },
    ...[1, 2, 3].map((i) => ({ name: `${name}_${i}`, kind, better: 'min' as const, description: `${description}, actuator ${i}${i === 3 ? ' (3-DOF)' : ''}` })),
  ];
}

/**
 * Former metric names, still read from studies, stores and command lines: old name → current name.
 * The stored column keeps its meaning (the store migrates the column names, src/store/migrations.ts).
 */
export const METRIC_ALIASES: Readonly<Record<string, string>> = {
  bandwidth: 'first_mode_in_plane',
  resolution: 'encoder_resolution',
};

/** The current name of a metric (an old name maps to its new one; other names are returned as they are). */
export function currentMetricName(name: string): string {
  return METRIC_ALIASES[name] ?? name;
}

export type MetricName = (typeof METRICS)[number]['name'];
/** Metrics of the machine in its cell: computed only for a study with a cell section (NaN otherwise). */
export const CELL_METRIC_NAMES: ReadonlySet<string> = new Set([
  'min_clearance', 'passive_joint_margin', 'zone_coverage', 'cycle_coverage',
  'regular_workspace_area', 'regular_workspace_width', 'regular_workspace_x', 'regular_workspace_y',
]);
export const METRIC_NAMES: readonly string[] = METRICS.map((m) => m.name);
const BY_NAME = new Map(METRICS.map((m, i) => [m.name, { info: m, index: i }]));
for (const [old, now] of Object.entries(METRIC_ALIASES)) BY_NAME.set(old, BY_NAME.get(now)!);

/** Metrics of one actuator's effort: N·m for a crank, N for a slider (the names stay). */
const EFFORT_METRICS: ReadonlySet<string> = new Set([
  'peak_gravity_torque', 'peak_gravity_torque_1', 'peak_gravity_torque_2', 'peak_gravity_torque_3',
  'cycle_peak_torque', 'cycle_peak_torque_1', 'cycle_peak_torque_2', 'cycle_peak_torque_3',
  'cycle_rms_torque', 'cycle_rms_torque_1', 'cycle_rms_torque_2', 'cycle_rms_torque_3',
]);
/** Metrics of one actuator's speed: rad/s for a crank, m/s for a slider. */
const SPEED_METRICS: ReadonlySet<string> = new Set([
  'peak_joint_speed', 'peak_joint_speed_1', 'peak_joint_speed_2', 'peak_joint_speed_3',
  'cycle_peak_speed', 'cycle_peak_speed_1', 'cycle_peak_speed_2', 'cycle_peak_speed_3',
]);

/**
 * Quantity kind of a metric for an architecture's actuators: the per-actuator effort and speed
 * metrics are forces (N) and speeds (m/s) when the actuators are sliders; every other metric keeps
 * the kind in METRICS. `actuators` absent = the five-bar (revolute).
 */
export function metricKind(name: string, actuators?: readonly ('revolute' | 'prismatic')[]): QuantityKind {
  const info = BY_NAME.get(name)?.info;
  if (!info) throw new Error(`unknown metric "${name}"`);
  if (actuators && actuators.length > 0 && actuators.every((a) => a === 'prismatic')) {
    if (EFFORT_METRICS.has(name)) return 'force';
    if (SPEED_METRICS.has(name)) return 'speed';
  }
  return info.kind;
}

/**
 * Metrics of the built arm (docs/accuracy.md): NaN unless the study gives the sections they need
 * (tolerances for the errors; tolerances, joints, strength or link_sections for the others; section
 * shapes for stress, buckling and the out-of-plane mode).
 */
export const BUILT_ARM_METRICS: ReadonlySet<string> = new Set([
  'position_error_worst', 'position_error_rss', 'orientation_error_worst', 'orientation_error_rss', 'first_mode_out_of_plane',
  'peak_link_axial_force', 'peak_link_bending_moment', 'peak_link_stress', 'buckling_margin',
  'peak_joint_force', 'peak_joint_force_1', 'peak_joint_force_2', 'peak_joint_force_3',
]);

/** Why a metric is not available for an architecture with `dof` actuators, or null when it is. */
export function metricUnavailable(name: string, dof: number): string | null {
  if (dof < 3 && (name.endsWith('_3') || name.startsWith('orientation_'))) return 'exists for 3-DOF architectures only';
  return null;
}


export function metricIndex(name: string): number {
  const hit = BY_NAME.get(name);
  if (!hit) throw new Error(`unknown metric "${name}"`);
  return hit.index;
}

export function metricInfo(name: string): MetricInfo | undefined {
  return BY_NAME.get(name)?.info;
}
