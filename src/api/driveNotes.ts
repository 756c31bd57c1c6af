/**
 * Notes on how a study sizes its drives, shown by `check` and `evaluate` (docs/drives.md).
 */
import type { DriveTrainSetup, Study } from '../study/types.js';

/** The note that torque sizing is static only (drives but no duty cycle), or null. */
export function staticSizingNote(study: Study): string | null {
  const studies = study.members ?? [study];
  const hasDrives = studies.some((s) => s.drives !== null || s.driveChoice.kind !== 'fixed' || s.driveTrains);
  if (!hasDrives || study.dutyCycle) return null;
  return 'torque sizing is static only: without a duty_cycle the drives are checked against the static holding torque and the acceleration capability, not the peak and RMS torque of a motion; add a duty_cycle to size them along the cycle (docs/drives.md)';
}

/** One line on a study's drive trains for `check`. */
export function driveTrainSummary(setup: DriveTrainSetup): string {
  const list = (items: readonly { name: string }[]): string => (items.length === 1 ? items[0]!.name : `${items.length} to choose from (${items.map((i) => i.name).join(', ')})`);
  const parts = [
    `drives: motors from ${setup.motorsPath}: ${list(setup.motors)}`,
    setup.gearboxesPath ? `gearboxes from ${setup.gearboxesPath}: ${list(setup.gearboxes)}` : 'direct drive (no gearbox)',
    ...(setup.ratio ? [`gear ratio ${setup.ratio.min} … ${setup.ratio.max}`] : []),
    `${setup.choose === 'shared' ? 'one choice for all actuators' : 'chosen per actuator'}`,
    ...(setup.stage ? [`${setup.stage.kind} lead ${(setup.stage.lead * 1e3).toPrecision(4)} mm, η ${setup.stage.efficiency}, thrust ≤ ${setup.stage.maxThrust} N`] : []),
    `brake factor ${setup.brakeFactor}`,
    ...(setup.maxInertiaRatio !== null ? [`inertia ratio ≤ ${setup.maxInertiaRatio}`] : []),
    'checked along the duty cycle against envelopes and gearbox ratings (docs/drives.md)',
  ];
  return parts.join('; ');
}
