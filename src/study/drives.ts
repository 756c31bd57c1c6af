/**
 * Drives referred to their joint. A study gives drives motor-side (gear ratio, motor torques, speed,
 * rotor inertia, encoder counts); the pipeline sees only `DriveAtJoint`, in the units of the joint
 * (see src/architectures/types.ts): N·m, rad/s, kg·m², N·m/rad, rad for a crank; N, m/s, kg, N/m, m for
 * a slider.
 *
 * Revolute joint, gearbox ratio N (motor turns per joint turn), efficiency η:
 *   effort η N τ_motor, speed ω_motor / N, inertia N² J_rotor + J_gear, encoder step 2π / (N counts).
 *
 * Prismatic joint driven through a screw or belt of lead ℓ (m of slider travel per turn of the gearbox
 * output), gearbox ratio N (derived): the slider moves x = ℓ α / (2π N) for a motor angle α, so the
 * transmission ratio is r = dx/dα = ℓ / (2π N) (m/rad). Power balance η τ α̇ = F ẋ gives the force
 * F = η τ / r = 2π N η τ / ℓ; kinetic energy ½ J_rotor α̇² = ½ (J_rotor / r²) ẋ² gives the reflected
 * mass J_rotor (2π N / ℓ)², plus J_gear (2π / ℓ)² for a gearbox/screw inertia given at the screw
 * shaft; speed ẋ_max = r ω_max; one encoder count moves ℓ / (N counts). The stiffness is given
 * directly in N/m. A `linear` drive (a linear motor, or figures already at the slider) is used as given.
 */
import type { ActuatorKind, DriveAtJoint } from '../architectures/types.js';
import type { DriveSpec } from './types.js';

/** The drive referred to a joint of the given kind (see the derivation above). */
export function driveAtJoint(drive: DriveSpec, kind: ActuatorKind): DriveAtJoint {
  if (drive.linear) {
    if (kind !== 'prismatic') throw new Error(`drive "${drive.label}": a linear drive needs a prismatic joint`);
    return drive.linear;
  }
  const n = drive.gearRatio;
  const eta = drive.efficiency;
  if (kind === 'revolute') {
    return {
      reflectedInertia: n ** 2 * drive.rotorInertia + drive.gearInertia,
      jointStiffness: drive.jointStiffness,
      peakEffort: eta * n * drive.peakTorque,
      ratedEffort: eta * n * drive.ratedTorque,
      maxSpeed: drive.maxSpeed / n,
      encoderStep: drive.encoderCounts > 0 ? (2 * Math.PI) / (drive.encoderCounts * n) : 0,
    };
  }
  const lead = drive.lead;
  if (lead === undefined || !(lead > 0)) throw new Error(`drive "${drive.label}": a slider needs a screw or belt lead (m per turn) or a linear drive`);
  const ratio = lead / (2 * Math.PI * n); // m of slider travel per rad of motor
  return {
    reflectedInertia: drive.rotorInertia / (ratio * ratio) + drive.gearInertia * ((2 * Math.PI) / lead) ** 2,
    jointStiffness: drive.jointStiffness,
    peakEffort: (eta * drive.peakTorque) / ratio,
    ratedEffort: (eta * drive.ratedTorque) / ratio,
    maxSpeed: drive.maxSpeed * ratio,
    encoderStep: drive.encoderCounts > 0 ? lead / (drive.encoderCounts * n) : 0,
  };
}
