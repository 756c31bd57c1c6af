/**
 * Thin access to MuJoCo (the WebAssembly build, npm `mujoco-js`, Apache-2.0) for the check of an
 * exported MJCF model in motion (mjcfCheck.ts). `mujoco-js` is an optional peer dependency of
 * loopsmith (about 11 MB, only needed for `export --verify`): it is loaded on first use, and a
 * missing package is a user error with the install hint.
 *
 * Typed-array fields of MuJoCo's data are views into the WebAssembly heap that an allocation can
 * detach, so every access below fetches the view again.
 */
import { LoopsmithUserError } from '../core/errors.js';

interface EngineModel {
  readonly nq: number;
  readonly nv: number;
  readonly nu: number;
  readonly opt: { timestep: number; integrator: number; disableflags: number };
  delete(): void;
}

interface EngineData {
  readonly qpos: Float64Array;
  readonly qvel: Float64Array;
  readonly ctrl: Float64Array;
  readonly site_xpos: Float64Array;
  time: number;
  delete(): void;
}

interface EngineModule {
  readonly FS: { mkdir(path: string): void; mount(type: unknown, options: { root: string }, mountPoint: string): void; writeFile(path: string, contents: string): void; unlink(path: string): void };
  readonly MEMFS: unknown;
  readonly MjModel: { loadFromXML(path: string): EngineModel };
  readonly MjData: new (model: EngineModel) => EngineData;
  readonly mjtObj: { readonly mjOBJ_SITE: { readonly value: number } };
  readonly mjtDisableBit: { readonly mjDSBL_CLAMPCTRL: { readonly value: number } };
  mj_forward(model: EngineModel, data: EngineData): void;
  mj_step(model: EngineModel, data: EngineData): void;
  mj_name2id(model: EngineModel, objectType: number, name: string): number;
  mj_versionString(): string;
}

/** A user-facing problem with the MuJoCo check (the engine is not installed, the model is refused). */
export class MujocoCheckError extends LoopsmithUserError {
  constructor(message: string) {
    super(message);
    this.name = 'MujocoCheckError';
  }
}

const MOUNT_POINT = '/loopsmith-check';
let loading: Promise<EngineModule> | null = null;

/** Loads the MuJoCo WebAssembly module once per process. */
export function loadMujocoEngine(): Promise<EngineModule> {
  if (loading === null) {
    loading = (async () => {
      let factory: () => Promise<unknown>;
      try {
        // A variable specifier keeps TypeScript from requiring the optional package at build time.
        const name = 'mujoco-js';
        factory = ((await import(name)) as { default: () => Promise<unknown> }).default;
      } catch {
        throw new MujocoCheckError('--verify needs MuJoCo\'s WebAssembly build, which is not installed (install it next to loopsmith: npm install mujoco-js)');
      }
      const mj = (await factory()) as EngineModule;
      mj.FS.mkdir(MOUNT_POINT);
      mj.FS.mount(mj.MEMFS, { root: '.' }, MOUNT_POINT);
      return mj;
    })();
    loading.catch(() => (loading = null));
  }
  return loading;
}

let fileCounter = 0;

/** One compiled MJCF model and its data in MuJoCo. Call `dispose` when done. */
export class MujocoRun {
  readonly joints: number;
  readonly actuators: number;
  private readonly model: EngineModel;
  private readonly data: EngineData;

  constructor(private readonly mj: EngineModule, xml: string) {
    const path = `${MOUNT_POINT}/model-${++fileCounter}.xml`;
    mj.FS.writeFile(path, xml);
    try {
      this.model = mj.MjModel.loadFromXML(path);
    } catch (cause) {
      throw new MujocoCheckError(`MuJoCo refused the exported model (${cause instanceof Error ? cause.message : String(cause)})`);
    } finally {
      mj.FS.unlink(path);
    }
    this.data = new mj.MjData(this.model);
    this.joints = this.model.nq;
    this.actuators = this.model.nu;
  }

  /** MuJoCo's version text. */
  get version(): string {
    return this.mj.mj_versionString();
  }

  /** The model's own time step, s, and integrator code (0 Euler, 1 RK4, 2 implicit, 3 implicitfast). */
  get timestep(): number {
    return this.model.opt.timestep;
  }
  get integrator(): number {
    return this.model.opt.integrator;
  }

  /** Lets controls beyond `ctrlrange` through (the check replays efforts; it does not size drives). */
  unclampControls(): void {
    this.model.opt.disableflags = this.model.opt.disableflags | this.mj.mjtDisableBit.mjDSBL_CLAMPCTRL.value;
  }

  /** Sets joint positions and rates, time 0, and runs mj_forward. */
  setState(qpos: ArrayLike<number>, qvel: ArrayLike<number>): void {
    const p = this.data.qpos;
    for (let i = 0; i < this.model.nq; i++) p[i] = qpos[i]!;
    const v = this.data.qvel;
    for (let i = 0; i < this.model.nv; i++) v[i] = qvel[i]!;
    this.data.time = 0;
    this.mj.mj_forward(this.model, this.data);
  }

  /** One time step with the given actuator controls. */
  step(controls: ArrayLike<number>): void {
    const c = this.data.ctrl;
    for (let i = 0; i < this.model.nu; i++) c[i] = controls[i]!;
    this.mj.mj_step(this.model, this.data);
  }

  siteId(name: string): number {
    return this.mj.mj_name2id(this.model, this.mj.mjtObj.mjOBJ_SITE.value, name);
  }

  /** Site position in the plane of motion (MuJoCo x, z), m. */
  site(id: number): [number, number] {
    const xpos = this.data.site_xpos;
    return [xpos[3 * id]!, xpos[3 * id + 2]!];
  }

  dispose(): void {
    this.data.delete();
    this.model.delete();
  }
}
