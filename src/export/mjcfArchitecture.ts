/**
 * MJCF (MuJoCo XML) model of one design of a leg-based architecture (2-PRR, 3-RRR, 3-PRR), built
 * from the architecture interface alone: `architecture.buildModel(input)` gives the model, and the
 * home pose is solved with `architecture.solvePose`/`poseDynamics`. The five-bar keeps its own
 * writer (src/export/mjcf.ts, from a candidate sheet); this file follows the same conventions:
 *
 * - Plane of motion: engine (x, y) ↦ MuJoCo (x, 0, y); gravity (g_x, g_y) ↦ (g_x, 0, g_y). Hinge
 *   axes are 0 −1 0, so a positive angle turns +x toward +z (the engine's counter-clockwise sense).
 * - Chain (one serial arm per leg, built from the base):
 *   revolute leg i: body `crank_i` on the pivot A_i with hinge `theta_i` (θ_i, absolute), then body
 *   `rod_i` at the crank end with hinge `elbow_i` (β_i − θ_i, relative);
 *   prismatic leg i: body `slider_i` at the rail origin O_i with slide joint `slide_i` along the rail
 *   (q_i, m), then body `rod_i` at the slider with hinge `beta_i` (β_i, absolute: the slider does not
 *   turn). Every rod has a site `tip_i` at its distal end.
 * - End: 2-DOF — a body `end_mass` (end hub + payload, point mass) fixed on the tip of rod 1, closed
 *   by `<connect site1="tip_1" site2="tip_2">`. 3-DOF — a body `platform` on the tip of rod 1 with hinge
 *   `platform_joint` (φ − β_1); its frame has its origin at the pin B_1 and its x axis at the absolute
 *   angle φ, so P sits at −b_1 and pin k at b_k − b_1 (b the pins in the platform frame); sites
 *   `pin_k` and `centre`; one `<connect site1="tip_k" site2="pin_k">` per extra leg (k = 2, 3):
 *   each closes two planar equations, leaving 7 − 4 = 3 degrees of freedom.
 * - qpos order (MuJoCo's depth-first joint order): per leg (actuated, rod hinge), with the platform
 *   hinge right after rod 1 (3-DOF).
 * - Mass properties are the engine model's (LeggedModel): rods with their mass, centre-of-mass
 *   distance and inertia; sliders as translating masses; the platform with its mass and inertia about
 *   P; the payload as a point mass at P. A revolute crank is given to the engine only as its inertia
 *   I and first moment F about the pivot (crank bar plus elbow hub); only these two enter the motion
 *   of a body on a fixed hinge, and the body's mass m = 4F/p − 3I/p² is recovered from the engine's
 *   lumping (uniform bar of mass m_b: F = m_b p/2, I = m_b p²/3; hub h at p: F = h p, I = h p² — derived),
 *   with the centre of mass at F/m and I_com = I − F²/m. MuJoCo refuses moving bodies without mass: a
 *   massless crank or carriage gets MASSLESS_BODY_FILL (1e-6) of the design's total mass (a crank's
 *   on its pivot, where it adds no gravity moment).
 * - Drives: `armature` = reflected drive inertia (kg·m² on hinges, kg on slides); a `<motor>` on each
 *   actuated joint with gear 1 (control = joint torque N·m, or force N), ctrlrange ±peakEffort.
 * - Limits: the model's actuated joint ranges (rad or m) on the actuated joints; passive joints free.
 * - Loop closure with the five-bar export's stiff settings (LOOP_CLOSURE_SOLREF/SOLIMP, 0.5 ms step;
 *   docs/export.md).
 * - Keyframe `home`: the home pose and the engine's holding efforts τ_g there as controls.
 */
import type { LeggedModel } from '../architectures/legged.js';
import {
  PoseStatus,
  type ArchitectureModelBase,
  type ArchitecturePose,
  type JointRange,
  type PlanarArchitecture,
} from '../architectures/types.js';
import { LOOP_CLOSURE_SOLIMP, LOOP_CLOSURE_SOLREF, MJCF_TIMESTEP } from './mjcf.js';

/** A home pose of the design: P (m) and φ (rad; ignored by 2-DOF architectures). */
export interface ArchitectureHomePose {
  readonly x: number;
  readonly y: number;
  readonly phi?: number;
}

export interface ArchitectureMjcfOptions {
  /** `<mujoco model="...">` name (default "loopsmith <architecture> design"). */
  readonly modelName?: string;
  /** Extra lines for the header comment (provenance: run, study, design id…). */
  readonly description?: readonly string[];
  /** Safety caution repeated in the header comment (the export passes the candidate sheet's note). */
  readonly safetyNote?: string;
  /** Radius of the drawn links, m (default 2 % of the longest link, at least 4 mm). Looks only. */
  readonly linkRadius?: number;
}

/** One MuJoCo joint of the exported chain, in qpos order. */
export interface MjcfJointInfo {
  readonly name: string;
  readonly type: 'hinge' | 'slide';
  /** 'actuated' joints carry a motor; 'passive' joints are free pins. */
  readonly role: 'actuated' | 'passive';
}

/** The equality constraints of the exported model: pairs of sites that the loop closure keeps together. */
export interface MjcfClosure {
  readonly name: string;
  readonly site1: string;
  readonly site2: string;
}

const DEFAULT_SAFETY_NOTE =
  'Early-design estimate from simplified models (rigid bodies, frictionless pins, static and standstill analyses); ' +
  'not a safety analysis. Follow the machinery safety standards that apply, do your own risk assessment and have ' +
  'the design reviewed by a licensed engineer before anything is built or run.';

const TWO_PI = 2 * Math.PI;

/** True when the model carries the leg-engine fields this writer needs (2-PRR, 3-RRR, 3-PRR models). */
export function isLeggedModel(model: ArchitectureModelBase): model is LeggedModel {
  const m = model as Partial<LeggedModel>;
  return Array.isArray(m.baseX) && Array.isArray(m.rodMass) && Array.isArray(m.proximalFirstMoment) && Array.isArray(m.platformX);
}

function leggedModelOf(model: ArchitectureModelBase): LeggedModel {
  if (!isLeggedModel(model)) {
    throw new Error(`MJCF export: ${model.architecture} models are not leg-engine models; the five-bar is exported from its candidate sheet (toMjcf)`);
  }
  return model;
}

function statusText(status: PoseStatus): string {
  switch (status) {
    case PoseStatus.Unreachable: return 'a leg cannot reach it';
    case PoseStatus.OutsideJointLimits: return 'an actuated joint is outside its range';
    case PoseStatus.WrongAssembly: return 'det A has the other assembly sign (or is zero)';
    default: return 'assembled';
  }
}

/** Number in the shortest text that reads back to the same double. */
function num(value: number): string {
  if (!Number.isFinite(value)) throw new Error(`MJCF export: non-finite number ${value}`);
  return Object.is(value, -0) ? '0' : String(value);
}

/** Text safe inside an XML comment (no "--", no markup). */
function commentText(text: string): string {
  return text.replaceAll('&', '&amp;').replaceAll('<', '&lt;').replaceAll('>', '&gt;').replaceAll('--', '- -');
}

function attributeText(text: string): string {
  return text.replaceAll('&', '&amp;').replaceAll('"', '&quot;').replaceAll('<', '&lt;').replaceAll('>', '&gt;');
}

/** Angle in (−π, π]. */
function wrapAngle(angle: number): number {
  let a = angle % TWO_PI;
  if (a <= -Math.PI) a += TWO_PI;
  else if (a > Math.PI) a -= TWO_PI;
  return a;
}

/** Actuated angle written inside its range [min, min + 2π) when there is one, else in (−π, π]. */
function angleInRange(angle: number, range: JointRange | null): number {
  if (range === null) return wrapAngle(angle);
  let t = (angle - range.min) % TWO_PI;
  if (t < 0) t += TWO_PI;
  return range.min + t;
}

/** The joints of the exported chain of a model, in qpos order. */
export function architectureMjcfJoints(model: ArchitectureModelBase): MjcfJointInfo[] {
  const legged = leggedModelOf(model);
  const out: MjcfJointInfo[] = [];
  for (let i = 0; i < legged.dof; i++) {
    const leg = i + 1;
    if (legged.actuators[i] === 'revolute') {
      out.push({ name: `theta_${leg}`, type: 'hinge', role: 'actuated' }, { name: `elbow_${leg}`, type: 'hinge', role: 'passive' });
    } else {
      out.push({ name: `slide_${leg}`, type: 'slide', role: 'actuated' }, { name: `beta_${leg}`, type: 'hinge', role: 'passive' });
    }
    if (i === 0 && legged.dof === 3) out.push({ name: 'platform_joint', type: 'hinge', role: 'passive' });
  }
  return out;
}

/** The loop-closure constraints of the exported model (2-DOF: rod tips 1–2; 3-DOF: tip k on platform pin k, k = 2, 3). */
export function architectureMjcfClosures(model: ArchitectureModelBase): MjcfClosure[] {
  const legged = leggedModelOf(model);
  if (legged.dof === 2) return [{ name: 'loop_closure', site1: 'tip_1', site2: 'tip_2' }];
  return [2, 3].map((k) => ({ name: `loop_closure_${k}`, site1: `tip_${k}`, site2: `pin_${k}` }));
}

/**
 * Every joint coordinate of the exported chain (qpos order, rad or m) at a pose the architecture has
 * solved (`solvePose` returned an assembled or at least reachable status): actuated q_i (angles
 * written inside their ranges), rod hinges (β_i − θ_i for cranks, β_i for sliders) and, for 3-DOF,
 * the platform hinge φ − β_1. Passive angles are in (−π, π].
 */
export function architectureJointPositions(model: ArchitectureModelBase, pose: ArchitecturePose): Float64Array {
  const legged = leggedModelOf(model);
  const n = legged.dof;
  const out = new Float64Array(2 * n + (n === 3 ? 1 : 0));
  let k = 0;
  for (let i = 0; i < n; i++) {
    const beta = Math.atan2(pose.rodDirection[2 * i + 1]!, pose.rodDirection[2 * i]!);
    if (legged.actuators[i] === 'revolute') {
      const theta = angleInRange(pose.q[i]!, legged.jointLimits[i] ?? null);
      out[k++] = theta;
      out[k++] = wrapAngle(beta - theta);
    } else {
      out[k++] = pose.q[i]!;
      out[k++] = wrapAngle(beta);
    }
    if (i === 0 && n === 3) out[k++] = wrapAngle(pose.phi - beta);
  }
  return out;
}

/** Crank body (bar + elbow hub) from the engine's inertia I and first moment F about the pivot: kg, m from the pivot, kg·m². */
export function crankMassProperties(model: LeggedModel, i: number): { mass: number; centreOfMass: number; inertiaAboutCom: number } {
  const p = model.crank[i]!;
  const firstMoment = model.proximalFirstMoment[i]!;
  const inertia = model.proximalInertia[i]!;
  if (!(firstMoment > 0) || !(p > 0)) return { mass: 0, centreOfMass: 0, inertiaAboutCom: Math.max(inertia, 0) };
  // Bar + hub lumping (derived, see the file comment); never below F²/I, which would make I_com < 0.
  const mass = Math.max((4 * firstMoment) / p - (3 * inertia) / (p * p), (firstMoment * firstMoment) / inertia);
  const centreOfMass = firstMoment / mass;
  const inertiaAboutCom = Math.max(inertia - firstMoment * centreOfMass, 0);
  return { mass, centreOfMass, inertiaAboutCom };
}

/**
 * <inertial> of a link body: centre of mass on the link axis (body x), planar inertia about the
 * plane normal (body y) and the in-plane transverse axis (body z); the axial part is 1e-3 of it only to
 * keep MuJoCo's inertia positive definite (as the five-bar export).
 */
function linkInertial(mass: number, centreOfMass: number, inertiaAboutCom: number): string {
  return `<inertial pos="${num(centreOfMass)} 0 0" mass="${num(mass)}" diaginertia="${num(inertiaAboutCom * 1e-3)} ${num(inertiaAboutCom)} ${num(inertiaAboutCom)}"/>`;
}

/** Share of the design's total mass given to an actuated body the engine models as massless (see below). */
export const MASSLESS_BODY_FILL = 1e-6;

/**
 * <inertial> of a slider carriage: a translating mass. The carriage never turns (its only joint is the
 * slide; the rod hinge belongs to the rod body), so its rotational inertia has no effect on the motion;
 * it is set to m·r² (r the drawn link radius) only because MuJoCo refuses moving bodies without inertia.
 * MuJoCo also refuses a moving body without mass: a massless carriage gets `fill` kg
 * (MASSLESS_BODY_FILL × the design's total mass), which changes the efforts by about that share.
 */
function sliderInertial(mass: number, radius: number, fill: number): string {
  const m = mass > 0 ? mass : fill;
  const inertia = m * radius * radius;
  return `<inertial pos="0 0 0" mass="${num(m)}" diaginertia="${num(inertia)} ${num(inertia)} ${num(inertia)}"/>`;
}

function rangeAttribute(range: JointRange | null): string {
  return range === null ? '' : ` range="${num(range.min)} ${num(range.max)}"`;
}

/**
 * The MJCF text of one design of a leg-based architecture, with the home keyframe at `home`
 * (P in m, φ in rad for 3-DOF). Throws when the model is not a leg-engine model (five-bar: use
 * `toMjcf`), or when the design cannot be assembled at the home pose (status other than Assembled).
 */
export function architectureMjcf<TModel extends ArchitectureModelBase>(
  architecture: PlanarArchitecture<TModel>,
  model: TModel,
  home: ArchitectureHomePose,
  options: ArchitectureMjcfOptions = {},
): string {
  const legged = leggedModelOf(model);
  const n = legged.dof;
  const pose = architecture.createPose();
  const phi = n === 3 ? (home.phi ?? 0) : 0;
  const status = architecture.solvePose(model, pose, home.x, home.y, phi);
  if (status !== PoseStatus.Assembled) {
    throw new Error(
      `MJCF export: the ${architecture.name} design is not assembled at the home pose (${home.x}, ${home.y}${n === 3 ? `, φ ${phi}` : ''}): ${statusText(status)}`,
    );
  }
  architecture.poseDynamics(model, pose);
  const qpos = architectureJointPositions(legged, pose);
  const holding = Array.from(pose.tauG);

  let longest = 0;
  for (let i = 0; i < n; i++) longest = Math.max(longest, legged.crank[i]!, legged.rod[i]!);
  const radius = options.linkRadius ?? Math.max(0.004, 0.02 * longest);
  const drives = legged.drives;
  // A massless crank gets `fill` kg on its pivot (no gravity moment; inertia fill·r²); see sliderInertial.
  const fill = MASSLESS_BODY_FILL * Math.max(legged.movingMass + legged.payloadMass, 1e-3);

  const endBody = (): string => {
    if (n === 2) {
      const mass = legged.platformMass + legged.payloadMass;
      if (!(mass > 0)) return '';
      return `
          <body name="end_mass" pos="${num(legged.rod[0]!)} 0 0">
            <inertial pos="0 0 0" mass="${num(mass)}" diaginertia="0 0 0"/>
            <geom name="end_mass" type="sphere" size="${num(1.8 * radius)}" rgba="0.85 0.35 0.2 1"/>
            <site name="end_point" size="${num(0.5 * radius)}"/>
          </body>`;
    }
    // Platform frame: origin at B_1, x axis at φ; P at −b_1, pin k at b_k − b_1.
    const b1x = legged.platformX[0]!;
    const b1y = legged.platformY[0]!;
    const px = -b1x;
    const pz = -b1y;
    const pins = [0, 1, 2].map((k) => [legged.platformX[k]! - b1x, legged.platformY[k]! - b1y] as const);
    const mass = legged.platformMass;
    const inertia = legged.platformInertia;
    // Platform inertia about the plane normal (body y); the other two axes only keep MuJoCo's inertia positive definite.
    const platformInertial = mass > 0
      ? `<inertial pos="${num(px)} 0 ${num(pz)}" mass="${num(mass)}" diaginertia="${num(Math.max(inertia, 1e-12))} ${num(Math.max(inertia, 1e-12))} ${num(Math.max(inertia, 1e-12))}"/>`
      : '';
    const payload = legged.payloadMass > 0
      ? `
            <body name="payload" pos="${num(px)} 0 ${num(pz)}">
              <inertial pos="0 0 0" mass="${num(legged.payloadMass)}" diaginertia="0 0 0"/>
              <geom name="payload" type="sphere" size="${num(1.8 * radius)}" rgba="0.85 0.35 0.2 1"/>
            </body>`
      : '';
    const triangle = pins
      .map((pin, k) => {
        const next = pins[(k + 1) % 3]!;
        return `
            <geom name="platform_edge_${k + 1}" type="capsule" fromto="${num(pin[0])} 0 ${num(pin[1])} ${num(next[0])} 0 ${num(next[1])}" size="${num(0.8 * radius)}" rgba="0.35 0.6 0.45 1"/>`;
      })
      .join('');
    return `
          <body name="platform" pos="${num(legged.rod[0]!)} 0 0">
            <joint name="platform_joint" type="hinge" axis="0 -1 0"/>
            ${platformInertial}${triangle}
            <site name="centre" pos="${num(px)} 0 ${num(pz)}" size="${num(0.5 * radius)}"/>
            <site name="pin_1" pos="0 0 0" size="${num(0.5 * radius)}"/>
            <site name="pin_2" pos="${num(pins[1]![0])} 0 ${num(pins[1]![1])}" size="${num(0.5 * radius)}"/>
            <site name="pin_3" pos="${num(pins[2]![0])} 0 ${num(pins[2]![1])}" size="${num(0.5 * radius)}"/>${payload}
          </body>`;
  };

  const leg = (i: number): string => {
    const label = i + 1;
    const d = legged.rod[i]!;
    const armature = legged.reflectedInertia[i]!;
    const limits = rangeAttribute(legged.jointLimits[i] ?? null);
    const rodBody = (position: string, hinge: string): string => `
        <body name="rod_${label}" pos="${position}">
          <joint name="${hinge}" type="hinge" axis="0 -1 0"/>
          ${linkInertial(legged.rodMass[i]!, legged.rodComDistance[i]!, legged.rodInertiaAboutCom[i]!)}
          <geom name="rod_${label}" type="capsule" fromto="0 0 0 ${num(d)} 0 0" size="${num(0.7 * radius)}" rgba="0.55 0.6 0.65 1"/>
          <site name="tip_${label}" pos="${num(d)} 0 0" size="${num(0.5 * radius)}"/>${i === 0 ? endBody() : ''}
        </body>`;
    if (legged.actuators[i] === 'revolute') {
      const p = legged.crank[i]!;
      const crank = crankMassProperties(legged, i);
      return `
    <body name="crank_${label}" pos="${num(legged.baseX[i]!)} 0 ${num(legged.baseY[i]!)}">
      <joint name="theta_${label}" type="hinge" axis="0 -1 0" armature="${num(armature)}"${limits}/>
      ${crank.mass > 0 ? linkInertial(crank.mass, crank.centreOfMass, crank.inertiaAboutCom) : linkInertial(fill, 0, fill * radius * radius)}
      <geom name="crank_${label}" type="capsule" fromto="0 0 0 ${num(p)} 0 0" size="${num(radius)}" rgba="0.3 0.45 0.7 1"/>${rodBody(`${num(p)} 0 0`, `elbow_${label}`)}
    </body>`;
    }
    const ex = legged.railX[i]!;
    const ey = legged.railY[i]!;
    const sliderMass = legged.proximalInertia[i]!;
    return `
    <body name="slider_${label}" pos="${num(legged.baseX[i]!)} 0 ${num(legged.baseY[i]!)}">
      <joint name="slide_${label}" type="slide" axis="${num(ex)} 0 ${num(ey)}" armature="${num(armature)}"${limits}/>
      ${sliderInertial(sliderMass, radius, fill)}
      <geom name="slider_${label}" type="box" size="${num(2.2 * radius)} ${num(1.5 * radius)} ${num(1.2 * radius)}" euler="0 ${num(-Math.atan2(ey, ex))} 0" rgba="0.3 0.45 0.7 1"/>${rodBody('0 0 0', `beta_${label}`)}
    </body>`;
  };

  /** Drawn rails (world geoms, looks only): the stroke when limited, else ±(longest link + platform) about the home slider. */
  const rails = (): string => {
    let text = '';
    for (let i = 0; i < n; i++) {
      if (legged.actuators[i] !== 'prismatic') continue;
      const range = legged.jointLimits[i] ?? null;
      const reach = longest + Math.hypot(legged.platformX[i]!, legged.platformY[i]!);
      const qa = range ? range.min : pose.q[i]! - reach;
      const qb = range ? range.max : pose.q[i]! + reach;
      const ox = legged.baseX[i]!;
      const oy = legged.baseY[i]!;
      const ex = legged.railX[i]!;
      const ey = legged.railY[i]!;
      text += `
    <geom name="rail_${i + 1}" type="capsule" fromto="${num(ox + qa * ex)} 0.01 ${num(oy + qa * ey)} ${num(ox + qb * ex)} 0.01 ${num(oy + qb * ey)}" size="${num(0.5 * radius)}" rgba="0.6 0.6 0.6 1"/>`;
    }
    return text;
  };

  const motors = legged.actuators
    .map((kind, i) => {
      const joint = kind === 'revolute' ? `theta_${i + 1}` : `slide_${i + 1}`;
      const drive = drives ? drives[i]! : null;
      const range = drive && Number.isFinite(drive.peakEffort) && drive.peakEffort > 0 ? ` ctrlrange="${num(-drive.peakEffort)} ${num(drive.peakEffort)}"` : '';
      return `    <motor name="drive_${i + 1}" joint="${joint}" gear="1"${range}/>`;
    })
    .join('\n');
  const closures = architectureMjcfClosures(legged)
    .map((c) => `    <connect name="${c.name}" site1="${c.site1}" site2="${c.site2}" solref="${LOOP_CLOSURE_SOLREF}" solimp="${LOOP_CLOSURE_SOLIMP}"/>`)
    .join('\n');
  const joints = architectureMjcfJoints(legged);
  const units = legged.actuators.map((kind, i) => `${kind === 'revolute' ? `theta_${i + 1}: N·m` : `slide_${i + 1}: N`}`).join(', ');
  const g = legged.gravity;
  const homeText = n === 3 ? `P = (${num(home.x)}, ${num(home.y)}) m, φ = ${num(phi)} rad` : `P = (${num(home.x)}, ${num(home.y)}) m`;
  const header = [
    `${architecture.name} design exported by loopsmith. Working mode ${legged.sigma.map((s) => (s > 0 ? '+' : '-')).join('')}, assembly sign ${legged.assembly > 0 ? '+' : '-'}.`,
    ...(options.description ?? []),
    'Plane of motion: MuJoCo x-z (engine y is MuJoCo z). Units: SI, angles in radians, slider positions in metres.',
    `Joints (qpos order): ${joints.map((j) => j.name).join(', ')}.`,
    'elbow_i is the rod angle relative to its crank; beta_i the absolute rod angle on a slider; platform_joint is phi minus the angle of rod 1.',
    `Actuators (gear 1, controls are joint efforts): ${units}; limited to the drive's peak effort.`,
    `Keyframe "home": ${homeText}, with the static holding efforts as controls.`,
    options.safetyNote ?? DEFAULT_SAFETY_NOTE,
  ];
  return `<mujoco model="${attributeText(options.modelName ?? `loopsmith ${architecture.name} design`)}">
  <!--
${header.map((line) => `    ${commentText(line)}`).join('\n')}
  -->
  <compiler angle="radian" inertiafromgeom="false" autolimits="true"/>
  <option timestep="${num(MJCF_TIMESTEP)}" gravity="${num(g[0])} 0 ${num(g[1])}"/>
  <default>
    <geom contype="0" conaffinity="0"/>
  </default>
  <worldbody>${rails()}${Array.from({ length: n }, (_, i) => leg(i)).join('')}
  </worldbody>
  <equality>
${closures}
  </equality>
  <actuator>
${motors}
  </actuator>
  <keyframe>
    <key name="home" qpos="${Array.from(qpos).map(num).join(' ')}" ctrl="${holding.map(num).join(' ')}"/>
  </keyframe>
</mujoco>
`;
}
