/**
 * Thin typed access to the MuJoCo WebAssembly build (npm `mujoco-js`, Apache-2.0), used by tests as an
 * independent general-purpose multibody engine. Only the few calls the reference tests need are
 * declared here; the package's own declarations type most fields as `any`.
 *
 * Memory note: typed-array fields of `MjData` (qpos, qfrc_bias, …) are views into the WebAssembly
 * heap. An allocation can grow the heap and detach old views, so every method below fetches a fresh
 * view and returns copies.
 */

/** A MuJoCo-owned array of doubles (`mj.DoubleBuffer`). */
interface MujocoDoubleBuffer {
  GetView(): Float64Array;
  delete(): void;
}

/** Compiled model (`mjModel`). Sizes only; everything else is read through `MujocoSystem`. */
interface MujocoModel {
  /** Number of degrees of freedom. */
  readonly nv: number;
  /** Number of position coordinates. */
  readonly nq: number;
  delete(): void;
}

/** Simulation state (`mjData`); the arrays are live views into the WebAssembly heap. */
interface MujocoData {
  readonly qpos: Float64Array;
  readonly qvel: Float64Array;
  /** Bias forces c(q, q̇) + g(q): with q̇ = 0 the generalized forces that hold the system against gravity. */
  readonly qfrc_bias: Float64Array;
  /** Mass matrix in MuJoCo's sparse internal layout (expand with `mj_fullM`). */
  readonly qM: Float64Array;
  /** Site positions in the world frame, 3 per site, m. */
  readonly site_xpos: Float64Array;
  delete(): void;
}

/** The part of the loaded module the tests use. */
export interface MujocoModule {
  readonly FS: {
    mkdir(path: string): void;
    mount(type: unknown, options: { root: string }, mountPoint: string): void;
    writeFile(path: string, contents: string): void;
  };
  readonly MEMFS: unknown;
  readonly MjModel: { loadFromXML(path: string): MujocoModel };
  readonly MjData: new (model: MujocoModel) => MujocoData;
  readonly DoubleBuffer: new (length: number) => MujocoDoubleBuffer;
  readonly mjtObj: { readonly mjOBJ_SITE: { readonly value: number } };
  mj_forward(model: MujocoModel, data: MujocoData): void;
  mj_fullM(model: MujocoModel, destination: MujocoDoubleBuffer, sparseMass: Float64Array): void;
  mj_jacSite(
    model: MujocoModel,
    data: MujocoData,
    translational: MujocoDoubleBuffer,
    rotational: MujocoDoubleBuffer,
    siteId: number,
  ): void;
  mj_name2id(model: MujocoModel, objectType: number, name: string): number;
}

/** Directory of the in-memory file system that holds the MJCF files. */
const MOUNT_POINT = '/mjcf';

let loading: Promise<MujocoModule> | null = null;

/** Loads the WebAssembly module once per process (about 11 MB) and mounts an in-memory directory. */
export function loadMujoco(): Promise<MujocoModule> {
  if (loading === null) {
    loading = (async () => {
      const factory = (await import('mujoco-js')).default;
      const mj = (await factory()) as unknown as MujocoModule;
      mj.FS.mkdir(MOUNT_POINT);
      mj.FS.mount(mj.MEMFS, { root: '.' }, MOUNT_POINT);
      return mj;
    })();
  }
  return loading;
}

/** One compiled MJCF model with its data, evaluated at rest. Call `dispose` when done. */
export class MujocoSystem {
  readonly degreesOfFreedom: number;
  private readonly model: MujocoModel;
  private readonly data: MujocoData;

  /** Compiles `xml` (written to the in-memory file `fileName`). Throws when MuJoCo rejects it. */
  constructor(private readonly mj: MujocoModule, xml: string, fileName: string) {
    const path = `${MOUNT_POINT}/${fileName}`;
    mj.FS.writeFile(path, xml);
    try {
      this.model = mj.MjModel.loadFromXML(path);
    } catch (cause) {
      throw new Error(`MuJoCo rejected the MJCF model ${fileName}`, { cause });
    }
    this.data = new mj.MjData(this.model);
    this.degreesOfFreedom = this.model.nv;
    if (this.model.nq !== this.model.nv) {
      throw new Error('MujocoSystem expects hinge/slide joints only (nq = nv)');
    }
  }

  /** Sets the joint positions (rad for hinges), zero velocities, and runs `mj_forward`. */
  placeAtRest(jointPositions: ArrayLike<number>): void {
    const n = this.degreesOfFreedom;
    if (jointPositions.length !== n) throw new Error(`expected ${n} joint positions`);
    const qpos = this.data.qpos;
    const qvel = this.data.qvel;
    for (let i = 0; i < n; i++) {
      qpos[i] = jointPositions[i]!;
      qvel[i] = 0;
    }
    this.mj.mj_forward(this.model, this.data);
  }

  /** Copy of `qfrc_bias` (at rest: generalized holding forces against gravity, N·m for hinges). */
  biasForces(): Float64Array {
    return Float64Array.from(this.data.qfrc_bias.subarray(0, this.degreesOfFreedom));
  }

  /** Dense joint-space mass matrix (nv × nv, row-major copy), kg·m² for hinges. */
  denseMassMatrix(): Float64Array {
    const n = this.degreesOfFreedom;
    const buffer = new this.mj.DoubleBuffer(n * n);
    try {
      this.mj.mj_fullM(this.model, buffer, this.data.qM);
      return Float64Array.from(buffer.GetView());
    } finally {
      buffer.delete();
    }
  }

  /** World position of the named site, m. */
  sitePosition(name: string): [number, number, number] {
    const id = this.siteId(name);
    const xpos = this.data.site_xpos;
    return [xpos[3 * id]!, xpos[3 * id + 1]!, xpos[3 * id + 2]!];
  }

  /** Translational Jacobian of the named site (3 × nv, row-major copy), m per joint unit. */
  siteTranslationJacobian(name: string): Float64Array {
    const id = this.siteId(name);
    const n = this.degreesOfFreedom;
    const translational = new this.mj.DoubleBuffer(3 * n);
    const rotational = new this.mj.DoubleBuffer(3 * n);
    try {
      this.mj.mj_jacSite(this.model, this.data, translational, rotational, id);
      return Float64Array.from(translational.GetView());
    } finally {
      translational.delete();
      rotational.delete();
    }
  }

  /** Frees the MuJoCo model and data. */
  dispose(): void {
    this.data.delete();
    this.model.delete();
  }

  private siteId(name: string): number {
    const id = this.mj.mj_name2id(this.model, this.mj.mjtObj.mjOBJ_SITE.value, name);
    if (id < 0) throw new Error(`no site named ${name}`);
    return id;
  }
}
