/**
 * MJCF (MuJoCo XML) model of a candidate sheet, ready to simulate.
 *
 * The five-bar becomes two serial arms from the pivots in the MuJoCo x–z plane (engine (x, y) ↦
 * MuJoCo (x, z); gravity (g_x, g_y) ↦ (g_x, 0, g_y)), closed at the end point by an equality
 * constraint between the two rod-tip sites. Hinge axes are 0 −1 0, so a positive joint angle turns
 * +x toward +z, the engine's counter-clockwise sense. Joint coordinates are relative:
 * qpos = (θ_1, β_1 − θ_1, θ_2, β_2 − θ_2). Each body carries an explicit <inertial> from the sheet;
 * geoms are for looks only (no contacts, no mass). See docs/export.md for the parameter choices.
 */
import type { BodySheet, CandidateSheet } from './candidate.js';

/** Simulation time step, s. */
export const MJCF_TIMESTEP = 0.0005;
/**
 * Loop-closure constraint softness: time constant 2 ms (four time steps) with critical damping,
 * and impedance 0.9999 at every violation. MuJoCo's equality constraints are soft; these values
 * make the closure stiff enough that a held pose stays closed to well below a micrometre.
 */
export const LOOP_CLOSURE_SOLREF = '0.002 1';
export const LOOP_CLOSURE_SOLIMP = '0.9999 0.9999 0.001 0.5 2';

/** Joint names in qpos order. */
export const MJCF_JOINTS = ['theta_1', 'elbow_1', 'theta_2', 'elbow_2'] as const;

/** Number in the shortest text that reads back to the same double. */
function num(value: number): string {
  if (!Number.isFinite(value)) throw new Error(`MJCF export: non-finite number ${value}`);
  return Object.is(value, -0) ? '0' : String(value);
}

function escapeAttribute(text: string): string {
  return text.replaceAll('&', '&amp;').replaceAll('"', '&quot;').replaceAll('<', '&lt;').replaceAll('>', '&gt;');
}

/** Text safe inside an XML comment (no "--"). */
function commentText(text: string): string {
  return escapeAttribute(text).replaceAll('--', '- -');
}

/**
 * <inertial> of a link body: centre of mass on the link axis (body x); inertia about the plane
 * normal (body y) and the in-plane transverse axis (body z) equal to the planar value. The axial
 * component does not enter motion about the hinges; it is set to 1e-3 of the transverse value
 * because MuJoCo refuses a singular inertia on a moving body.
 */
function linkInertial(body: BodySheet): string {
  const transverse = body.inertiaAboutCom;
  const axial = transverse * 1e-3;
  return `<inertial pos="${num(body.centreOfMass)} 0 0" mass="${num(body.mass)}" diaginertia="${num(axial)} ${num(transverse)} ${num(transverse)}"/>`;
}

function jointRange(range: { min: number; max: number } | null): string {
  return range === null ? '' : ` range="${num(range.min)} ${num(range.max)}"`;
}

/** The MJCF text of one candidate. */
export function toMjcf(sheet: CandidateSheet, options: { readonly linkRadius?: number } = {}): string {
  const b = sheet.bodies;
  const radius = options.linkRadius ?? Math.max(0.004, 0.02 * Math.max(b.crank_1.length, b.crank_2.length, b.rod_1.length, b.rod_2.length));
  const home = sheet.homePose;
  const armature = (i: 1 | 2): number => (sheet.drives ? sheet.drives[i === 1 ? 'actuator_1' : 'actuator_2'].reflectedInertia : 0);
  const endMass = b.endMass.mass > 0
    ? `
        <body name="end_mass" pos="${num(b.rod_1.length)} 0 0">
          <inertial pos="0 0 0" mass="${num(b.endMass.mass)}" diaginertia="0 0 0"/>
          <geom name="end_mass" type="sphere" size="${num(1.8 * radius)}" rgba="0.85 0.35 0.2 1"/>
          <site name="end_point" size="${num(0.5 * radius)}"/>
        </body>`
    : '';
  const arm = (i: 1 | 2): string => {
    const crank = i === 1 ? b.crank_1 : b.crank_2;
    const rod = i === 1 ? b.rod_1 : b.rod_2;
    const pivot = i === 1 ? sheet.pivot_1 : sheet.pivot_2;
    const limits = i === 1 ? sheet.jointLimits.theta_1 : sheet.jointLimits.theta_2;
    return `
    <body name="crank_${i}" pos="${num(pivot.x)} 0 ${num(pivot.y)}">
      <joint name="theta_${i}" type="hinge" axis="0 -1 0" armature="${num(armature(i))}"${jointRange(limits)}/>
      ${linkInertial(crank)}
      <geom name="crank_${i}" type="capsule" fromto="0 0 0 ${num(crank.length)} 0 0" size="${num(radius)}" rgba="0.3 0.45 0.7 1"/>
      <body name="rod_${i}" pos="${num(crank.length)} 0 0">
        <joint name="elbow_${i}" type="hinge" axis="0 -1 0"/>
        ${linkInertial(rod)}
        <geom name="rod_${i}" type="capsule" fromto="0 0 0 ${num(rod.length)} 0 0" size="${num(0.7 * radius)}" rgba="0.55 0.6 0.65 1"/>
        <site name="tip_${i}" pos="${num(rod.length)} 0 0" size="${num(0.5 * radius)}"/>${i === 1 ? endMass : ''}
      </body>
    </body>`;
  };
  const motor = (i: 1 | 2): string => {
    const drive = sheet.drives ? sheet.drives[i === 1 ? 'actuator_1' : 'actuator_2'] : null;
    const range = drive ? ` ctrlrange="${num(-drive.peakJointTorque)} ${num(drive.peakJointTorque)}"` : '';
    return `    <motor name="drive_${i}" joint="theta_${i}" gear="1"${range}/>`;
  };
  const qpos = [home.theta_1, home.elbow_1, home.theta_2, home.elbow_2].map(num).join(' ');
  const holding = [home.gravityTorque_1, home.gravityTorque_2].map(num).join(' ');
  const g = sheet.gravity;
  const p = sheet.provenance;
  return `<mujoco model="loopsmith candidate ${sheet.id}">
  <!--
    Five-bar candidate ${sheet.id} exported by loopsmith ${commentText(p.loopsmithVersion)} from run ${p.runId} of study ${commentText(p.studyName)}
    (study file sha256 ${p.studyFileHash}). Working mode ${sheet.workingMode}, assembly mode ${sheet.assemblyMode}.
    Plane of motion: MuJoCo x-z (engine y is MuJoCo z). Joints (qpos order): theta_1, elbow_1, theta_2, elbow_2;
    elbow_i is the rod angle relative to its crank. Units: SI, angles in radians.
    Actuators: torque at the crank joints (gear 1), limited to the drive's peak joint torque.
    Keyframe "home": the home pose with the static holding torques as controls.
    ${commentText(sheet.safetyNote)}
  -->
  <compiler angle="radian" inertiafromgeom="false" autolimits="true"/>
  <option timestep="${num(MJCF_TIMESTEP)}" gravity="${num(g.x)} 0 ${num(g.y)}"/>
  <default>
    <geom contype="0" conaffinity="0"/>
  </default>
  <worldbody>
    <site name="pivot_1" pos="${num(sheet.pivot_1.x)} 0 ${num(sheet.pivot_1.y)}" size="${num(radius)}"/>
    <site name="pivot_2" pos="${num(sheet.pivot_2.x)} 0 ${num(sheet.pivot_2.y)}" size="${num(radius)}"/>${arm(1)}${arm(2)}
  </worldbody>
  <equality>
    <connect name="loop_closure" site1="tip_1" site2="tip_2" solref="${LOOP_CLOSURE_SOLREF}" solimp="${LOOP_CLOSURE_SOLIMP}"/>
  </equality>
  <actuator>
${motor(1)}
${motor(2)}
  </actuator>
  <keyframe>
    <key name="home" qpos="${qpos}" ctrl="${holding}"/>
  </keyframe>
</mujoco>
`;
}
