/**
 * Notes on how a study sizes its drives, shown by `check` and `evaluate` (docs/drives.md).
 */
import type { Study } from '../study/types.js';

/** The note that torque sizing is static only (drives but no duty cycle), or null. */
export function staticSizingNote(study: Study): string | null {
  const studies = study.members ?? [study];
  const hasDrives = studies.some((s) => s.drives !== null || s.driveChoice.kind !== 'fixed' || s.driveTrains);
  if (!hasDrives || study.dutyCycle) return null;
  return 'torque sizing is static only: without a duty_cycle the drives are checked against the static holding torque and the acceleration capability, not the peak and RMS torque of a motion; add a duty_cycle to size them along the cycle (docs/drives.md)';
}
