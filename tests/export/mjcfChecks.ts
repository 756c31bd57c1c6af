/**
 * Shared checks of an exported MJCF model against the engine: the model loads in MuJoCo; with the
 * engine's static holding torques τ_g on the actuators, mj_forward gives joint accelerations ≈ 0 at
 * the home pose and at three other task-region poses; and 1 s of simulation from the home pose under
 * the home holding torques keeps the loop closed. Returns what it measured, for the report.
 */
import { MJCF_TIMESTEP } from '../../src/export/mjcf.js';
import { expect } from 'vitest';
import { FiveBarPose, PoseStatus, poseDynamics, solvePose } from '../helpers/fiveBarClosedForm.js';
import type { CandidateSheet } from '../../src/export/candidate.js';
import { chainJointAngles, fiveBarModelOf, mjcfOfSheet } from './sheetsFromStudy.js';
import type { Study } from '../../src/study/types.js';
import { SimulatedModel } from './mujocoSim.js';

/**
 * Tolerance on |q̈|∞ with the holding torques applied, rad/s². MuJoCo's loop-closure constraint is
 * soft: with impedance d = 0.9999 the constraint solve leaves a residual of about (1 − d) of the
 * unbalanced acceleration, i.e. ~1e-4 × (tens of rad/s²) ≈ a few 1e-3 rad/s² (derived from MuJoCo's
 * regulariser R = (1 − d)/d · A). 1e-2 rad/s² sits above that and three to four orders of magnitude
 * below the accelerations without torques, which each case measures and requires to exceed 1 rad/s².
 */
export const HELD_ACCELERATION_TOLERANCE = 1e-2;
/** Required: loop-closure distance between the rod-tip sites over 1 s of simulation, m (the bound). */
export const LOOP_CLOSURE_TOLERANCE = 1e-4;
/** Simulated time, s, and the number of 0.5 ms steps it takes. */
export const SIMULATED_SECONDS = 1;

export interface PoseMeasurement {
  readonly label: string;
  readonly endPoint: readonly [number, number];
  /** |q̈|∞ with the holding torques, rad/s². */
  readonly heldAcceleration: number;
  /** |q̈|∞ with zero torques, rad/s². */
  readonly unheldAcceleration: number;
}

export interface ModelMeasurement {
  readonly id: number;
  readonly poses: readonly PoseMeasurement[];
  /** Largest rod-tip distance over the simulation, m. */
  readonly maxLoopOpening: number;
  /** Largest change of any joint angle over the simulation, rad. */
  readonly maxJointDrift: number;
}

/** Three task-region points besides the centre (fractions of the half-sizes), or ring points around the home pose. */
export function otherTaskPoints(study: Study, home: { x: number; y: number }): [number, number][] {
  const region = study.task.region;
  if (region === null) return [[home.x + 0.02, home.y], [home.x, home.y + 0.02], [home.x - 0.02, home.y - 0.02]];
  if (region.shape === 'rectangle') {
    const hx = region.width / 2;
    const hy = region.height / 2;
    return [
      [region.centreX - 0.7 * hx, region.centreY - 0.6 * hy],
      [region.centreX + 0.7 * hx, region.centreY + 0.5 * hy],
      [region.centreX + 0.3 * hx, region.centreY - 0.8 * hy],
    ];
  }
  const r = region.radius;
  return [
    [region.centreX + 0.6 * r, region.centreY],
    [region.centreX - 0.4 * r, region.centreY + 0.4 * r],
    [region.centreX, region.centreY - 0.7 * r],
  ];
}

function maxAbs(values: ArrayLike<number>): number {
  let m = 0;
  for (let i = 0; i < values.length; i++) m = Math.max(m, Math.abs(values[i]!));
  return m;
}

/** Exports `sheet` to MJCF, loads it and runs every check; returns the measured figures. */
export async function checkExportedModel(study: Study, sheet: CandidateSheet, options: { readonly gravityLoadsDrives?: boolean } = {}): Promise<ModelMeasurement> {
  const gravityLoadsDrives = options.gravityLoadsDrives ?? true;
  const model = fiveBarModelOf(study, sheet.designVariables);
  const sim = await SimulatedModel.load(mjcfOfSheet(study, sheet), `candidate-${sheet.id}.xml`);
  try {
    expect(sim.sizes).toEqual({ nq: 4, nv: 4, nu: 2, nkey: 1, neq: 1 });
    // Gravity mapping (x, y) ↦ (x, 0, z) — derived from the plane convention.
    expect(sim.gravity()).toEqual([model.gravity[0], 0, model.gravity[1]]);
    // The writer's own time step (src/export/mjcf.ts; chosen so the model stays true in motion, docs/export.md).
    expect(sim.timestep).toBe(MJCF_TIMESTEP);

    // The home keyframe is the sheet's home pose, with the holding torques as controls.
    sim.resetToKeyframe('home');
    const home = sheet.homePose;
    expect(Array.from(sim.jointPositions())).toEqual([home.theta_1, home.elbow_1, home.theta_2, home.elbow_2]);
    expect(Array.from(sim.controls())).toEqual([home.gravityTorque_1, home.gravityTorque_2]);

    const points: [string, number, number][] = [
      ['home', home.endPoint.x, home.endPoint.y],
      ...otherTaskPoints(study, home.endPoint).map(([x, y], k): [string, number, number] => [`task point ${k + 1}`, x, y]),
    ];
    const pose = new FiveBarPose();
    const poses: PoseMeasurement[] = [];
    for (const [label, x, y] of points) {
      expect(solvePose(model, pose, x, y), `${label} must be assembled`).toBe(PoseStatus.Assembled);
      poseDynamics(model, pose);
      const q = chainJointAngles(model, pose);
      // Both rod tips at the engine's end point (x, y) ↦ (x, 0, y): the pose is closed (derived).
      sim.placeAtRest(q, [pose.tauG1, pose.tauG2]);
      for (const tip of ['tip_1', 'tip_2']) {
        const [tx, ty, tz] = sim.sitePosition(tip);
        expect(Math.abs(tx - x)).toBeLessThan(1e-12);
        expect(Math.abs(ty)).toBeLessThan(1e-12);
        expect(Math.abs(tz - y)).toBeLessThan(1e-12);
      }
      // Actuated joints stay inside the exported joint ranges.
      for (const [joint, angle] of [['theta_1', q[0]], ['theta_2', q[2]]] as const) {
        const range = sim.jointRange(joint);
        if (range) {
          expect(angle).toBeGreaterThanOrEqual(range[0]);
          expect(angle).toBeLessThanOrEqual(range[1]);
        }
      }
      const heldAcceleration = maxAbs(sim.jointAccelerations());
      sim.placeAtRest(q, [0, 0]);
      const unheldAcceleration = maxAbs(sim.jointAccelerations());
      poses.push({ label, endPoint: [x, y], heldAcceleration, unheldAcceleration });
      // Static equilibrium under τ_g: MuJoCo's M q̈ + c = τ + Jᵀλ with the engine's holding torque
      // (same sign as qfrc_bias reduced to the actuated joints, as checked in
      // tests/mechanics/reference-mujoco.test.ts) — derived.
      expect(heldAcceleration).toBeLessThan(HELD_ACCELERATION_TOLERANCE);
      // The check has teeth: without the torques the mechanism falls (vertical plane), or stays (horizontal).
      if (gravityLoadsDrives) expect(unheldAcceleration).toBeGreaterThan(1);
      else expect(unheldAcceleration).toBeLessThan(HELD_ACCELERATION_TOLERANCE);
    }

    // 1 s of simulation from the home keyframe under the home holding torques.
    sim.resetToKeyframe('home');
    const start = sim.jointPositions();
    const steps = Math.round(SIMULATED_SECONDS / sim.timestep);
    let maxLoopOpening = sim.siteDistance('tip_1', 'tip_2');
    let maxJointDrift = 0;
    for (let k = 0; k < steps; k++) {
      sim.step(1);
      maxLoopOpening = Math.max(maxLoopOpening, sim.siteDistance('tip_1', 'tip_2'));
    }
    const end = sim.jointPositions();
    for (let i = 0; i < end.length; i++) maxJointDrift = Math.max(maxJointDrift, Math.abs(end[i]! - start[i]!));
    expect(maxLoopOpening).toBeLessThan(LOOP_CLOSURE_TOLERANCE);
    return { id: sheet.id, poses, maxLoopOpening, maxJointDrift };
  } finally {
    sim.dispose();
  }
}

export function describeMeasurement(m: ModelMeasurement): string {
  const poses = m.poses
    .map((p) => `${p.label} (${p.endPoint[0].toFixed(3)}, ${p.endPoint[1].toFixed(3)}) m: |q̈| held ${p.heldAcceleration.toExponential(2)}, unheld ${p.unheldAcceleration.toExponential(2)} rad/s²`)
    .join('; ');
  return `candidate ${m.id}: ${poses}; 1 s: max loop opening ${m.maxLoopOpening.toExponential(2)} m, max joint drift ${m.maxJointDrift.toExponential(2)} rad`;
}
