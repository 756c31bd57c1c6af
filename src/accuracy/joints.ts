/**
 * Real joints in the stiffness model (docs/accuracy.md):
 * - drive: gearbox torsional stiffness (output side) in series with the servo's stiffness at the
 *   motor shaft referred to the joint through the transmission, 1/k = 1/k_gear + 1/(r² k_servo), with
 *   r the motor radians per joint unit (N for a gearbox, 2π N/lead for a screw); with only one of the
 *   two given, the other counts as rigid; with neither, the drive's own joint_stiffness stays;
 * - bearings: each passive pin in a leg's load path (the elbow or slider pin, and the distal pin; a
 *   strut's base and distal pins) deflects radially by F/k_b under the leg force F, which acts along
 *   the rod, so each adds 1/k_b to the leg's compliance along its line of action (in series with the
 *   rod's d/(EA)).
 * Absent sections change nothing: old studies give the same numbers.
 */
import type { LeggedModel } from '../architectures/legged.js';
import type { DriveAtJoint, ModelInput } from '../architectures/types.js';
import type { JointStiffnessSpec } from './spec.js';

/** Passive pins of a leg that carry its force (each with a bearing). */
export const PASSIVE_PINS_PER_LEG = 2;

/** Motor radians per joint unit of a drive (gearbox: N; screw: 2π N / lead; a linear drive given at the joint: 0). */
export function motorPerJointUnit(drive: { readonly gearRatio: number; readonly lead?: number; readonly linear?: unknown }): number {
  if (drive.linear) return 0;
  return drive.lead ? (2 * Math.PI * drive.gearRatio) / drive.lead : drive.gearRatio;
}

/** Joint stiffness of gearbox and servo in series (N·m/rad or N/m); `given` when the study gives neither. */
export function seriesDriveStiffness(spec: JointStiffnessSpec, ratio: number, given: number): number {
  if (spec.gearboxStiffness === null && spec.servoStiffness === null) return given;
  const gear = spec.gearboxStiffness === null ? 0 : 1 / spec.gearboxStiffness;
  const servo = spec.servoStiffness === null || ratio === 0 ? 0 : 1 / (ratio * ratio * spec.servoStiffness);
  return gear + servo > 0 ? 1 / (gear + servo) : given;
}

/** The model input with each drive's joint stiffness from the gearbox and servo (unchanged without them). */
export function withDriveStiffness(input: ModelInput, spec: JointStiffnessSpec | null, ratios: readonly number[] | null): ModelInput {
  if (!spec || !input.drives || !ratios) return input;
  const drives: DriveAtJoint[] = input.drives.map((d, i) => ({ ...d, jointStiffness: seriesDriveStiffness(spec, ratios[i]!, d.jointStiffness) }));
  return { ...input, drives };
}

/** The model with the bearings' radial compliance added to each leg's line of action (unchanged without them). */
export function withBearings(model: LeggedModel, spec: JointStiffnessSpec | null): LeggedModel {
  if (!spec || !Number.isFinite(spec.bearingRadialStiffness)) return model;
  const add = PASSIVE_PINS_PER_LEG / spec.bearingRadialStiffness;
  return { ...model, complianceRodAxial: model.complianceRodAxial.map((c) => c + add) };
}
