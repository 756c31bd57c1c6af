/**
 * MJCF (MuJoCo XML) model of one design of any architecture, written by walking the model's body
 * tree (`architecture.bodyTree(model)`, src/architectures/types.ts): one `<body>` per tree body with
 * its joint (hinge or slide, axis, range, drive inertia as `armature`), mass, centre of mass and
 * inertia; the loops are closed by `<connect>` equality constraints between the tree's closure sites.
 * Nothing here knows an architecture by name.
 *
 * - Plane of motion: engine (x, y) ↦ MuJoCo (x, 0, y); gravity (g_x, g_y) ↦ (g_x, 0, g_y). Hinge
 *   axes are 0 −1 0, so a positive angle turns +x toward +z (the engine's counter-clockwise sense);
 *   a slide's axis is its tree axis (a_x, 0, a_y).
 * - qpos order = the tree's joint order (MuJoCo numbers joints depth-first, as the tree lists them).
 * - Inertia: `<inertial>` from the tree (`inertiafromgeom="false"`); the planar inertia is about the
 *   plane normal (body y). A bar's out-of-plane components are the planar value and 1e-3 of it along
 *   the bar, a plate's all three the planar value (at least 1e-12), a carriage's m r² (it never turns),
 *   a point mass 0: these only keep MuJoCo's inertia positive definite and do not enter planar motion.
 *   MuJoCo refuses moving bodies without mass: an actuated body without mass gets MASSLESS_BODY_FILL
 *   (1e-6) of the design's total mass at its joint; a point body without mass is left out.
 * - Drives: a `<motor>` per actuated joint (gear 1: control = joint torque N·m or force N),
 *   `ctrlrange` ±peak effort of the model's drive.
 * - Integration and loop closure: RK4, 0.1 ms step, closure time constant 0.2 ms (MJCF_INTEGRATOR,
 *   MJCF_TIMESTEP, LOOP_CLOSURE_SOLREF/SOLIMP; docs/export.md), checked in motion by mjcfCheck.ts.
 * - Keyframe `home`: the home pose (`bodyTreeJoints`) and the engine's holding efforts τ_g as controls.
 * Geoms are for looks only (no contacts, no mass).
 */
import {
  PoseStatus,
  type ArchitectureModelBase,
  type BodyTree,
  type JointRange,
  type PlanarArchitecture,
  type TreeBody,
} from '../architectures/types.js';
import { treeMass } from './bodyTree.js';

/**
 * Integration settings that keep the model true in motion, not only at rest (docs/export.md, "Settings
 * that stay true in motion"): 4th-order Runge–Kutta with a 0.1 ms step.
 */
export const MJCF_INTEGRATOR = 'RK4';
export const MJCF_TIMESTEP = 0.0001;
/**
 * Loop-closure constraint softness: time constant 0.2 ms (two time steps, the smallest MuJoCo accepts
 * without raising it) with critical damping, and impedance 0.9999 at every violation. MuJoCo's
 * equality constraints are soft and leave out the velocity product of the closure's acceleration;
 * a loop then opens by about that acceleration times the time constant squared, so the time
 * constant is what keeps a moving loop closed.
 */
export const LOOP_CLOSURE_SOLREF = '0.0002 1';
export const LOOP_CLOSURE_SOLIMP = '0.9999 0.9999 0.001 0.5 2';
/** Share of the design's total mass given to an actuated body the model has without mass. */
export const MASSLESS_BODY_FILL = 1e-6;

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
  /** Safety caution repeated in the header comment. */
  readonly safetyNote?: string;
  /** Radius of the drawn links, m (default 2 % of the longest bar, at least 4 mm). Looks only. */
  readonly linkRadius?: number;
}

/** One MuJoCo joint of the exported chain, in qpos order. */
export interface MjcfJointInfo {
  readonly name: string;
  readonly type: 'hinge' | 'slide';
  /** 'actuated' joints carry a motor; 'passive' joints are free pins. */
  readonly role: 'actuated' | 'passive';
}

const DEFAULT_SAFETY_NOTE =
  'Early-design estimate from simplified models (rigid bodies, frictionless pins, static and standstill analyses); ' +
  'not a safety analysis. Follow the machinery safety standards that apply, do your own risk assessment and have ' +
  'the design reviewed by a licensed engineer before anything is built or run.';

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

function statusText(status: PoseStatus): string {
  switch (status) {
    case PoseStatus.Unreachable: return 'a leg cannot reach it';
    case PoseStatus.OutsideJointLimits: return 'an actuated joint is outside its range';
    case PoseStatus.WrongAssembly: return 'det A has the other assembly sign (or is zero)';
    default: return 'assembled';
  }
}

function rangeAttribute(range: JointRange | null): string {
  return range === null ? '' : ` range="${num(range.min)} ${num(range.max)}"`;
}

/** The joints of a body tree in qpos order. */
export function treeMjcfJoints(tree: BodyTree): MjcfJointInfo[] {
  return tree.bodies
    .filter((b) => b.joint !== null)
    .map((b) => ({ name: b.joint!.name, type: b.joint!.kind === 'revolute' ? 'hinge' : 'slide', role: b.joint!.actuator === null ? 'passive' : 'actuated' }));
}

interface WriteContext {
  readonly tree: BodyTree;
  readonly radius: number;
  /** Mass given to an actuated body without mass, kg. */
  readonly fill: number;
}

function inertialOf(body: TreeBody, ctx: WriteContext): string {
  const { mass, inertiaAboutCom: inertia } = body;
  const [cx, cz] = body.centreOfMass;
  const actuated = body.joint !== null && body.joint.actuator !== null;
  switch (body.shape) {
    case 'bar': {
      if (!(mass > 0) && actuated) {
        const i = ctx.fill * ctx.radius * ctx.radius;
        return `<inertial pos="0 0 0" mass="${num(ctx.fill)}" diaginertia="${num(i * 1e-3)} ${num(i)} ${num(i)}"/>`;
      }
      return `<inertial pos="${num(cx)} 0 ${num(cz)}" mass="${num(mass)}" diaginertia="${num(inertia * 1e-3)} ${num(inertia)} ${num(inertia)}"/>`;
    }
    case 'carriage': {
      const m = mass > 0 ? mass : ctx.fill;
      const i = m * ctx.radius * ctx.radius;
      return `<inertial pos="${num(cx)} 0 ${num(cz)}" mass="${num(m)}" diaginertia="${num(i)} ${num(i)} ${num(i)}"/>`;
    }
    case 'plate': {
      if (!(mass > 0)) return '';
      const i = num(Math.max(inertia, 1e-12));
      return `<inertial pos="${num(cx)} 0 ${num(cz)}" mass="${num(mass)}" diaginertia="${i} ${i} ${i}"/>`;
    }
    case 'point':
      return `<inertial pos="${num(cx)} 0 ${num(cz)}" mass="${num(mass)}" diaginertia="0 0 0"/>`;
  }
}

function geomsOf(body: TreeBody, ctx: WriteContext): string[] {
  const r = ctx.radius;
  const actuated = body.joint !== null && body.joint.actuator !== null;
  switch (body.shape) {
    case 'bar':
      return [`<geom name="${body.name}" type="capsule" fromto="0 0 0 ${num(body.reversed ? -body.length : body.length)} 0 0" size="${num(actuated ? r : 0.7 * r)}" rgba="${actuated ? '0.3 0.45 0.7 1' : '0.55 0.6 0.65 1'}"/>`];
    case 'carriage': {
      const [ax, ay] = body.joint?.axis ?? [1, 0];
      return [`<geom name="${body.name}" type="box" size="${num(2.2 * r)} ${num(1.5 * r)} ${num(1.2 * r)}" euler="0 ${num(-Math.atan2(ay, ax))} 0" rgba="0.3 0.45 0.7 1"/>`];
    }
    case 'point':
      return [`<geom name="${body.name}" type="sphere" size="${num(1.8 * r)}" rgba="0.85 0.35 0.2 1"/>`];
    case 'plate': {
      const pins = body.sites.filter((s) => s.name !== 'centre').map((s) => s.at);
      return pins.map((pin, k) => {
        const next = pins[(k + 1) % pins.length]!;
        return `<geom name="${body.name}_edge_${k + 1}" type="capsule" fromto="${num(pin[0])} 0 ${num(pin[1])} ${num(next[0])} 0 ${num(next[1])}" size="${num(0.8 * r)}" rgba="0.35 0.6 0.45 1"/>`;
      });
    }
  }
}

/** The `<body>` element of one tree body and its subtree. */
function bodyXml(body: TreeBody, ctx: WriteContext, indent: string): string {
  const inner = `${indent}  `;
  const lines: string[] = [`${indent}<body name="${body.name}" pos="${num(body.origin[0])} 0 ${num(body.origin[1])}">`];
  const j = body.joint;
  if (j) {
    const armature = j.actuator !== null ? ` armature="${num(j.armature)}"` : '';
    const axis = j.kind === 'revolute' ? '0 -1 0' : `${num(j.axis[0])} 0 ${num(j.axis[1])}`;
    lines.push(`${inner}<joint name="${j.name}" type="${j.kind === 'revolute' ? 'hinge' : 'slide'}" axis="${axis}"${armature}${rangeAttribute(j.range)}/>`);
  }
  const inertial = inertialOf(body, ctx);
  if (inertial) lines.push(inner + inertial);
  for (const g of geomsOf(body, ctx)) lines.push(inner + g);
  for (const s of body.sites) lines.push(`${inner}<site name="${s.name}" pos="${num(s.at[0])} 0 ${num(s.at[1])}" size="${num(0.5 * ctx.radius)}"/>`);
  for (const child of ctx.tree.bodies) if (child.parent === body.name && included(child)) lines.push(bodyXml(child, ctx, inner));
  lines.push(`${indent}</body>`);
  return lines.join('\n');
}

/** A fixed point body without mass is left out (MuJoCo needs no body there). */
function included(body: TreeBody): boolean {
  return !(body.shape === 'point' && body.joint === null && !(body.mass > 0));
}

/** Ground features: a site at every ground pivot, a drawn rail under every ground slide (stroke, or ± `reach` about the home position). */
function groundFeatures(tree: BodyTree, qpos: Float64Array, ctx: WriteContext, reach: number): string[] {
  const out: string[] = [];
  let k = 0;
  let leg = 0;
  for (const body of tree.bodies) {
    if (body.parent === null) {
      leg++;
      const [ox, oy] = body.origin;
      if (body.joint?.kind === 'prismatic') {
        const [ex, ey] = body.joint.axis;
        const range = body.joint.range;
        const qa = range ? range.min : qpos[k]! - reach;
        const qb = range ? range.max : qpos[k]! + reach;
        out.push(`<geom name="rail_${leg}" type="capsule" fromto="${num(ox + qa * ex)} 0.01 ${num(oy + qa * ey)} ${num(ox + qb * ex)} 0.01 ${num(oy + qb * ey)}" size="${num(0.5 * ctx.radius)}" rgba="0.6 0.6 0.6 1"/>`);
      } else {
        out.push(`<site name="pivot_${leg}" pos="${num(ox)} 0 ${num(oy)}" size="${num(ctx.radius)}"/>`);
      }
    }
    if (body.joint) k++;
  }
  return out;
}

/**
 * The MJCF text of one design of any architecture, with the home keyframe at `home` (P in m, φ in
 * rad for 3-DOF). Throws when the design cannot be assembled at the home pose.
 */
export function architectureMjcf<TModel extends ArchitectureModelBase>(
  architecture: PlanarArchitecture<TModel>,
  model: TModel,
  home: ArchitectureHomePose,
  options: ArchitectureMjcfOptions = {},
): string {
  const n = model.dof;
  const pose = architecture.createPose();
  const phi = n === 3 ? (home.phi ?? 0) : 0;
  const status = architecture.solvePose(model, pose, home.x, home.y, phi);
  if (status !== PoseStatus.Assembled) {
    throw new Error(`MJCF export: the ${architecture.name} design is not assembled at the home pose (${home.x}, ${home.y}${n === 3 ? `, φ ${phi}` : ''}): ${statusText(status)}`);
  }
  architecture.poseDynamics(model, pose);
  const tree = architecture.bodyTree(model);
  const qpos = architecture.bodyTreeJoints(model, pose);
  const longest = Math.max(0, ...tree.bodies.map((b) => b.length));
  const radius = options.linkRadius ?? Math.max(0.004, 0.02 * longest);
  const ctx: WriteContext = { tree, radius, fill: MASSLESS_BODY_FILL * Math.max(treeMass(tree), 1e-3) };
  const reach = longest + Math.max(0, ...tree.bodies.flatMap((b) => b.sites.map((s) => Math.hypot(s.at[0], s.at[1]))));

  const joints = treeMjcfJoints(tree);
  const actuated = tree.bodies.filter((b) => b.joint?.actuator != null).sort((a, b) => a.joint!.actuator! - b.joint!.actuator!);
  const motors = actuated.map((b) => {
    const i = b.joint!.actuator!;
    const drive = model.drives ? model.drives[i]! : null;
    const range = drive && Number.isFinite(drive.peakEffort) && drive.peakEffort > 0 ? ` ctrlrange="${num(-drive.peakEffort)} ${num(drive.peakEffort)}"` : '';
    return `    <motor name="drive_${i + 1}" joint="${b.joint!.name}" gear="1"${range}/>`;
  });
  const closures = tree.closures.map((c) => `    <connect name="${c.name}" site1="${c.site1}" site2="${c.site2}" solref="${LOOP_CLOSURE_SOLREF}" solimp="${LOOP_CLOSURE_SOLIMP}"/>`);
  const units = actuated.map((b) => `${b.joint!.name}: ${b.joint!.kind === 'revolute' ? 'N·m' : 'N'}`).join(', ');
  const g = tree.gravity;
  const homeText = n === 3 ? `P = (${num(home.x)}, ${num(home.y)}) m, φ = ${num(phi)} rad` : `P = (${num(home.x)}, ${num(home.y)}) m`;
  const header = [
    `${architecture.name} design exported by loopsmith. Working mode and assembly as in the study; bodies and joints from the model's body tree.`,
    ...(options.description ?? []),
    'Plane of motion: MuJoCo x-z (engine y is MuJoCo z). Units: SI, angles in radians, slide positions in metres.',
    `Joints (qpos order): ${joints.map((j) => j.name).join(', ')}.`,
    'Each hinge angle is relative to the parent body (a body on the ground: absolute); a slide moves its body along the rail.',
    `Actuators (gear 1, controls are joint efforts): ${units}; limited to the drive's peak effort.`,
    `Keyframe "home": ${homeText}, with the static holding efforts as controls.`,
    options.safetyNote ?? DEFAULT_SAFETY_NOTE,
  ];
  const roots = tree.bodies.filter((b) => b.parent === null && included(b));
  return `<mujoco model="${attributeText(options.modelName ?? `loopsmith ${architecture.name} design`)}">
  <!--
${header.map((line) => `    ${commentText(line)}`).join('\n')}
  -->
  <compiler angle="radian" inertiafromgeom="false" autolimits="true"/>
  <option integrator="${MJCF_INTEGRATOR}" timestep="${num(MJCF_TIMESTEP)}" gravity="${num(g[0])} 0 ${num(g[1])}"/>
  <default>
    <geom contype="0" conaffinity="0"/>
  </default>
  <worldbody>
${groundFeatures(tree, qpos, ctx, reach).map((l) => `    ${l}`).join('\n')}
${roots.map((b) => bodyXml(b, ctx, '    ')).join('\n')}
  </worldbody>
  <equality>
${closures.join('\n')}
  </equality>
  <actuator>
${motors.join('\n')}
  </actuator>
  <keyframe>
    <key name="home" qpos="${Array.from(qpos).map(num).join(' ')}" ctrl="${actuated.map((b) => num(pose.tauG[b.joint!.actuator!]! + 0)).join(' ')}"/>
  </keyframe>
</mujoco>
`;
}
