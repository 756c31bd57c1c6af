/**
 * Simulation-side access to MuJoCo (npm mujoco-js) for the export tests: load an exported MJCF,
 * place the joints, apply actuator controls, run mj_forward / mj_step, read joint accelerations and
 * site positions. Reuses the module loader of tests/helpers/mujoco.ts; declares only the few extra
 * members these tests call (the package's own declarations type most fields as `any`).
 *
 * Typed-array fields of MjData are views into the WebAssembly heap that an allocation can detach,
 * so every access below fetches the view again.
 */
import { loadMujoco, type MujocoModule } from '../helpers/mujoco.js';

interface SimModel {
  readonly nq: number;
  readonly nv: number;
  readonly nu: number;
  readonly nkey: number;
  readonly neq: number;
  /** Joint ranges, 2 per joint. */
  readonly jnt_range: Float64Array;
  /** 1 where a joint is limited. */
  readonly jnt_limited: Uint8Array;
  readonly dof_armature: Float64Array;
  readonly body_mass: Float64Array;
  readonly actuator_ctrlrange: Float64Array;
  readonly opt: { readonly timestep: number; readonly gravity: Float64Array };
  delete(): void;
}

interface SimData {
  readonly qpos: Float64Array;
  readonly qvel: Float64Array;
  readonly qacc: Float64Array;
  readonly ctrl: Float64Array;
  readonly site_xpos: Float64Array;
  readonly time: number;
  delete(): void;
}

interface SimModule {
  readonly FS: MujocoModule['FS'];
  readonly MjModel: { loadFromXML(path: string): SimModel };
  readonly MjData: new (model: SimModel) => SimData;
  readonly mjtObj: { readonly mjOBJ_SITE: { readonly value: number }; readonly mjOBJ_JOINT: { readonly value: number }; readonly mjOBJ_KEY: { readonly value: number } };
  mj_forward(model: SimModel, data: SimData): void;
  mj_step(model: SimModel, data: SimData): void;
  mj_resetDataKeyframe(model: SimModel, data: SimData, key: number): void;
  mj_name2id(model: SimModel, objectType: number, name: string): number;
}

const MOUNT_POINT = '/mjcf';

/** One compiled exported model and its data. Call `dispose` when done. */
export class SimulatedModel {
  private readonly model: SimModel;
  private readonly data: SimData;

  private constructor(private readonly mj: SimModule, xml: string, fileName: string) {
    const path = `${MOUNT_POINT}/${fileName}`;
    mj.FS.writeFile(path, xml);
    try {
      this.model = mj.MjModel.loadFromXML(path);
    } catch (cause) {
      throw new Error(`MuJoCo rejected the MJCF model ${fileName}`, { cause });
    }
    this.data = new mj.MjData(this.model);
  }

  static async load(xml: string, fileName: string): Promise<SimulatedModel> {
    const mj = (await loadMujoco()) as unknown as SimModule;
    return new SimulatedModel(mj, xml, fileName);
  }

  get sizes(): { nq: number; nv: number; nu: number; nkey: number; neq: number } {
    const m = this.model;
    return { nq: m.nq, nv: m.nv, nu: m.nu, nkey: m.nkey, neq: m.neq };
  }

  get timestep(): number {
    return this.model.opt.timestep;
  }

  gravity(): [number, number, number] {
    const g = this.model.opt.gravity;
    return [g[0]!, g[1]!, g[2]!];
  }

  armature(): Float64Array {
    return Float64Array.from(this.model.dof_armature);
  }

  bodyMasses(): Float64Array {
    return Float64Array.from(this.model.body_mass);
  }

  /** Joint range [min, max] of the named joint, or null when it is not limited. */
  jointRange(name: string): [number, number] | null {
    const id = this.mj.mj_name2id(this.model, this.mj.mjtObj.mjOBJ_JOINT.value, name);
    if (id < 0) throw new Error(`no joint named ${name}`);
    if (this.model.jnt_limited[id] === 0) return null;
    return [this.model.jnt_range[2 * id]!, this.model.jnt_range[2 * id + 1]!];
  }

  ctrlRange(actuator: number): [number, number] {
    const r = this.model.actuator_ctrlrange;
    return [r[2 * actuator]!, r[2 * actuator + 1]!];
  }

  /** Resets the state to the named keyframe (qpos, qvel, ctrl) and runs mj_forward. */
  resetToKeyframe(name: string): void {
    const id = this.mj.mj_name2id(this.model, this.mj.mjtObj.mjOBJ_KEY.value, name);
    if (id < 0) throw new Error(`no keyframe named ${name}`);
    this.mj.mj_resetDataKeyframe(this.model, this.data, id);
    this.mj.mj_forward(this.model, this.data);
  }

  /** Sets joint positions, zero velocities and the actuator controls, then runs mj_forward. */
  placeAtRest(jointPositions: ArrayLike<number>, controls: ArrayLike<number>): void {
    const qpos = this.data.qpos;
    const qvel = this.data.qvel;
    for (let i = 0; i < this.model.nq; i++) qpos[i] = jointPositions[i]!;
    for (let i = 0; i < this.model.nv; i++) qvel[i] = 0;
    this.setControls(controls);
    this.mj.mj_forward(this.model, this.data);
  }

  setControls(controls: ArrayLike<number>): void {
    const ctrl = this.data.ctrl;
    for (let i = 0; i < this.model.nu; i++) ctrl[i] = controls[i]!;
  }

  /** Advances `steps` time steps with the current controls. */
  step(steps: number): void {
    for (let k = 0; k < steps; k++) this.mj.mj_step(this.model, this.data);
  }

  jointPositions(): Float64Array {
    return Float64Array.from(this.data.qpos.subarray(0, this.model.nq));
  }

  controls(): Float64Array {
    return Float64Array.from(this.data.ctrl.subarray(0, this.model.nu));
  }

  jointAccelerations(): Float64Array {
    return Float64Array.from(this.data.qacc.subarray(0, this.model.nv));
  }

  sitePosition(name: string): [number, number, number] {
    const id = this.mj.mj_name2id(this.model, this.mj.mjtObj.mjOBJ_SITE.value, name);
    if (id < 0) throw new Error(`no site named ${name}`);
    const xpos = this.data.site_xpos;
    return [xpos[3 * id]!, xpos[3 * id + 1]!, xpos[3 * id + 2]!];
  }

  /** Distance between two sites, m. */
  siteDistance(a: string, b: string): number {
    const p = this.sitePosition(a);
    const q = this.sitePosition(b);
    return Math.hypot(p[0] - q[0], p[1] - q[1], p[2] - q[2]);
  }

  dispose(): void {
    this.data.delete();
    this.model.delete();
  }
}
