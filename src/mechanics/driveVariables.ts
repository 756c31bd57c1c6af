/**
 * Design variables of drive trains (docs/drives.md): the motor and the gearbox chosen from their
 * catalogues (categorical, like working_mode), and a continuous gear ratio when the study gives
 * bounds. One of each for all actuators (`motor`, `gearbox`, `gear_ratio`) or one per actuator
 * (`motor_1`, `gearbox_1`, `gear_ratio_1`, …). A list of one entry is fixed: no variable.
 */
import type { ActuatorKind } from '../architectures/types.js';
import { composeDrive } from '../study/driveTrains.js';
import type { DriveSpec, DriveTrainSetup } from '../study/types.js';

export type DriveTrainVariable =
  | { readonly name: string; readonly kind: 'categorical'; readonly role: 'motor' | 'gearbox'; readonly actuators: readonly number[]; readonly choices: readonly string[]; readonly member?: number }
  | { readonly name: string; readonly kind: 'real'; readonly role: 'gear_ratio'; readonly actuators: readonly number[]; readonly min: number; readonly max: number; readonly member?: number };

/** Names a drive-train variable may have (for baselines and --set). */
export const DRIVE_TRAIN_NAME = /^(motor|gearbox|gear_ratio)(_[123])?$/;

export function driveTrainVariables(setup: DriveTrainSetup, actuators: number): DriveTrainVariable[] {
  const groups: { suffix: string; actuators: number[] }[] =
    setup.choose === 'shared'
      ? [{ suffix: '', actuators: Array.from({ length: actuators }, (_, i) => i) }]
      : Array.from({ length: actuators }, (_, i) => ({ suffix: `_${i + 1}`, actuators: [i] }));
  const out: DriveTrainVariable[] = [];
  for (const g of groups) {
    if (setup.motors.length > 1) out.push({ name: `motor${g.suffix}`, kind: 'categorical', role: 'motor', actuators: g.actuators, choices: setup.motors.map((m) => m.name) });
    if (setup.gearboxes.length > 1) out.push({ name: `gearbox${g.suffix}`, kind: 'categorical', role: 'gearbox', actuators: g.actuators, choices: setup.gearboxes.map((m) => m.name) });
    if (setup.ratio) out.push({ name: `gear_ratio${g.suffix}`, kind: 'real', role: 'gear_ratio', actuators: g.actuators, min: setup.ratio.min, max: setup.ratio.max });
  }
  return out;
}

/** The drives of a design from its drive-train variable values (index per categorical, ratio per real). */
export function composeDrives(
  setup: DriveTrainSetup,
  kinds: readonly ActuatorKind[],
  values: readonly { readonly variable: DriveTrainVariable; readonly value: number }[],
): DriveSpec[] {
  const motor = kinds.map(() => setup.motors[0]!);
  const gearbox = kinds.map(() => setup.gearboxes[0]!);
  const ratio: (number | undefined)[] = kinds.map(() => undefined);
  for (const { variable, value } of values) {
    for (const a of variable.actuators) {
      if (variable.role === 'motor') motor[a] = setup.motors[Math.round(value)]!;
      else if (variable.role === 'gearbox') gearbox[a] = setup.gearboxes[Math.round(value)]!;
      else ratio[a] = value;
    }
  }
  return kinds.map((kind, i) => composeDrive({ motor: motor[i]!, gearbox: gearbox[i]!, ratio: ratio[i] ?? gearbox[i]!.ratio, stage: setup.stage }, kind));
}
