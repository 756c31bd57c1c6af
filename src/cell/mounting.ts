/**
 * Mounting of a design in its cell: the base frame placed at (mount_x, mount_y) and turned by
 * mount_angle in the task frame. The architecture builds its model in the base frame; `mountModel`
 * moves the model's fixed points into the task frame (p_task = m + R(a) p_base, rail directions
 * turned by a, crank joint ranges shifted by a since a crank angle is measured from the task x axis
 * once mounted). Gravity, the task, keep-outs and the duty cycle stay in the task frame, so turning
 * the base also turns the arm against gravity. Slider positions along a rail are unchanged.
 */
import { legNumbers, type LeggedModel } from '../architectures/legged.js';
import type { ArchitectureModelBase } from '../architectures/types.js';
import { MOUNT_VARIABLES, type CellParameter, type CellSpec, type Mount } from './types.js';

function isLegged(model: ArchitectureModelBase): model is LeggedModel {
  return 'baseX' in model && 'railX' in model;
}

/** The model with its base moved to `mount` (the same object when the mount is the identity). */
export function mountModel<T extends ArchitectureModelBase>(model: T, mount: Mount | undefined): T {
  if (!mount || (mount.x === 0 && mount.y === 0 && mount.angle === 0)) return model;
  if (!isLegged(model)) throw new Error(`mounting: the ${model.architecture} model has no base points to move`);
  const c = Math.cos(mount.angle);
  const s = Math.sin(mount.angle);
  const n = model.baseX.length;
  const baseX = legNumbers(n, (i) => mount.x + c * model.baseX[i]! - s * model.baseY[i]!);
  const baseY = legNumbers(n, (i) => mount.y + s * model.baseX[i]! + c * model.baseY[i]!);
  const railX = legNumbers(n, (i) => c * model.railX[i]! - s * model.railY[i]!);
  const railY = legNumbers(n, (i) => s * model.railX[i]! + c * model.railY[i]!);
  const jointLimits = model.jointLimits.map((r, i) =>
    r && model.actuators[i] === 'revolute' ? { min: r.min + mount.angle, max: r.max + mount.angle } : r,
  );
  return { ...model, baseX, baseY, railX, railY, jointLimits } as T;
}

/**
 * The mount of a resolved geometry: mounting variables are taken out of `geometry` (where the
 * design-vector walk put them) and fixed ones come from the study. Undefined without a mounting section.
 */
export function takeMount(cell: CellSpec | null | undefined, geometry: Record<string, number>): Mount | undefined {
  const mounting = cell?.mounting;
  if (!mounting) return undefined;
  const value = (name: (typeof MOUNT_VARIABLES)[number]): number => {
    const spec: CellParameter = mounting[name];
    const v = spec.kind === 'fixed' ? spec.value : geometry[name] ?? 0;
    delete geometry[name];
    return v;
  };
  return { x: value('mount_x'), y: value('mount_y'), angle: value('mount_angle') };
}
