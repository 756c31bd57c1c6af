/**
 * The built-arm checks of one design over the evaluation region (docs/accuracy.md): first-order
 * accuracy, out-of-plane mode and link loads, aggregated as worst values over the poses the evaluator
 * visits. Made once per evaluator; `prepare` per design; `atPose` per assembled, regular pose
 * (allocation-free); `write` fills the metrics. Without the study sections every metric stays NaN.
 */
import type { LeggedModel } from '../architectures/legged.js';
import type { ArchitectureModelBase, ArchitecturePose, DriveAtJoint, PlanarArchitecture } from '../architectures/types.js';
import { PoseStatus } from '../core/pose.js';
import { metricIndex } from '../core/metrics.js';
import { FirstOrderAccuracy } from './firstOrder.js';
import type { AccuracySpec } from './spec.js';
import { StructureAtPose, type LinkMaterial } from './structure.js';

const M = {
  positionWorst: metricIndex('position_error_worst'),
  positionRss: metricIndex('position_error_rss'),
  orientationWorst: metricIndex('orientation_error_worst'),
  orientationRss: metricIndex('orientation_error_rss'),
  outOfPlane: metricIndex('first_mode_out_of_plane'),
  axial: metricIndex('peak_link_axial_force'),
  bending: metricIndex('peak_link_bending_moment'),
  stress: metricIndex('peak_link_stress'),
  buckling: metricIndex('buckling_margin'),
  jointForce: metricIndex('peak_joint_force'),
  jointForceOf: [metricIndex('peak_joint_force_1'), metricIndex('peak_joint_force_2'), metricIndex('peak_joint_force_3')],
} as const;

/** Poses and accelerations along a duty cycle (reference timing), for the strength checks. */
export interface CycleLoadPath {
  readonly count: number;
  readonly x: Float64Array; readonly y: Float64Array; readonly phi: Float64Array;
  readonly ax: Float64Array; readonly ay: Float64Array; readonly aphi: Float64Array;
  /** Time scale of the moves at the evaluated cycle time (accelerations divide by its square); 1 = reference timing. */
  readonly timeScale: number;
}

/** What a design brings to the checks besides its model. */
export interface BuiltArmDesign {
  readonly spec: AccuracySpec;
  /** Per leg: crank and rod section, modulus and shear modulus. */
  readonly cranks: readonly LinkMaterial[];
  readonly rods: readonly LinkMaterial[];
  readonly drives: readonly DriveAtJoint[] | null;
}

export function isLeggedModel(model: ArchitectureModelBase): model is LeggedModel {
  return 'legs' in model && 'complianceRodAxial' in model;
}

export class BuiltArmChecks {
  private readonly n: number;
  private readonly firstOrder: FirstOrderAccuracy;
  private readonly structure: StructureAtPose;
  private design: BuiltArmDesign | null = null;
  /** Every link of the design has a section shape (needed by the stress, buckling and out-of-plane checks). */
  private sectionsKnown = false;
  private weight = 0;
  private positionWorst = 0;
  private positionRss = 0;
  private orientationWorst = 0;
  private orientationRss = 0;
  private outOfPlane = Infinity;
  private axial = 0;
  private bending = 0;
  private stress = 0;
  private euler = Infinity;
  private readonly jointForce = new Float64Array(3);
  private cyclePath: CycleLoadPath | null = null;
  private cyclePose: ArchitecturePose | null = null;

  constructor(dof: number) {
    this.n = dof;
    this.firstOrder = new FirstOrderAccuracy(dof);
    this.structure = new StructureAtPose(dof);
  }

  /** The duty cycle whose inertial loads the strength checks include (set once per evaluator). */
  setCycle(path: CycleLoadPath | null, pose: ArchitecturePose): void {
    this.cyclePath = path;
    this.cyclePose = pose;
  }

  /**
   * Link loads along the duty cycle (after the region's poses, before `write`): the end body's weight
   * and inertia at each cycle node. A node the design cannot hold makes the loads unbounded.
   */
  runCycle(modelBase: ArchitectureModelBase, architecture: PlanarArchitecture<ArchitectureModelBase>): void {
    const path = this.cyclePath;
    const design = this.design;
    const pose = this.cyclePose;
    if (!path || !design || !pose) return;
    const model = modelBase as LeggedModel;
    const s2 = path.timeScale * path.timeScale;
    for (let k = 0; k < path.count; k++) {
      const status = architecture.solvePose(modelBase, pose, path.x[k]!, path.y[k]!, path.phi[k]!);
      if (status !== PoseStatus.Assembled || !this.firstOrder.inverseOnly(pose)) {
        this.axial = Infinity; this.bending = Infinity; this.stress = Infinity; this.euler = 0; this.jointForce.fill(Infinity);
        return;
      }
      this.structure.loads(model, pose, this.firstOrder.inverse, design.spec.strength?.endLoad ?? 0, design.cranks, design.rods, path.ax[k]! / s2, path.ay[k]! / s2, path.aphi[k]! / s2);
      this.takeLoads();
    }
  }

  /** Per design; null (or a model outside the leg layer) turns the checks off. */
  prepare(model: ArchitectureModelBase, design: BuiltArmDesign | null): void {
    this.design = design && isLeggedModel(model) ? design : null;
    this.sectionsKnown = this.design !== null && (model as LeggedModel).legs.every((leg, i) =>
      this.design!.rods[i]!.section !== null && (leg.name !== 'crank-rod' || this.design!.cranks[i]!.section !== null));
    if (this.design?.spec.tolerances) this.firstOrder.prepare(model as LeggedModel, this.design.spec.tolerances, this.design.drives);
  }

  get active(): boolean {
    return this.design !== null;
  }

  reset(): void {
    this.weight = 0;
    this.positionWorst = 0; this.positionRss = 0; this.orientationWorst = 0; this.orientationRss = 0;
    this.outOfPlane = Infinity; this.axial = 0; this.bending = 0; this.stress = 0; this.euler = Infinity;
    this.jointForce.fill(0);
  }

  /** A pose the design cannot hold (unreachable or singular): every worst value becomes unbounded. */
  singular(): void {
    if (!this.design) return;
    this.weight++;
    this.positionWorst = Infinity; this.positionRss = Infinity; this.orientationWorst = Infinity; this.orientationRss = Infinity;
    this.outOfPlane = 0; this.axial = Infinity; this.bending = Infinity; this.stress = Infinity; this.euler = 0;
    this.jointForce.fill(Infinity);
  }

  /** At an assembled, regular pose (after solvePose). */
  atPose(modelBase: ArchitectureModelBase, pose: ArchitecturePose): void {
    const design = this.design;
    if (!design) return;
    const model = modelBase as LeggedModel;
    this.weight++;
    const fo = this.firstOrder;
    const tol = design.spec.tolerances;
    if (tol) {
      if (!fo.atPose(model, pose)) { this.singular(); return; }
      const r = fo.result;
      if (r.positionWorst > this.positionWorst) this.positionWorst = r.positionWorst;
      if (r.positionRss > this.positionRss) this.positionRss = r.positionRss;
      if (r.orientationWorst > this.orientationWorst) this.orientationWorst = r.orientationWorst;
      if (r.orientationRss > this.orientationRss) this.orientationRss = r.orientationRss;
    } else if (!fo.inverseOnly(pose)) {
      this.singular();
      return;
    }
    const s = this.structure;
    if (this.sectionsKnown) {
      const mode = s.outOfPlane(model, pose, design.cranks, design.rods);
      if (!(mode >= this.outOfPlane)) this.outOfPlane = mode;
    }
    s.loads(model, pose, fo.inverse, design.spec.strength?.endLoad ?? 0, design.cranks, design.rods);
    this.takeLoads();
  }

  /** The worst of the loads just computed and those before. */
  private takeLoads(): void {
    const r = this.structure.result;
    for (let i = 0; i < this.n; i++) {
      if (r.axial[i]! > this.axial) this.axial = r.axial[i]!;
      if (r.bending[i]! > this.bending) this.bending = r.bending[i]!;
      if (r.stress[i]! > this.stress) this.stress = r.stress[i]!;
      if (r.euler[i]! < this.euler) this.euler = r.euler[i]!;
      if (r.pinForce[i]! > this.jointForce[i]!) this.jointForce[i] = r.pinForce[i]!;
    }
  }

  /** Writes the metrics (NaN where the study gives no data for them). */
  write(metrics: Float64Array): void {
    const design = this.design;
    if (!design || this.weight === 0) return;
    if (design.spec.tolerances) {
      metrics[M.positionWorst] = this.positionWorst;
      metrics[M.positionRss] = this.positionRss;
      if (this.n === 3) {
        metrics[M.orientationWorst] = this.orientationWorst;
        metrics[M.orientationRss] = this.orientationRss;
      }
    }
    metrics[M.axial] = this.axial;
    metrics[M.bending] = this.bending;
    if (this.sectionsKnown) {
      metrics[M.outOfPlane] = this.outOfPlane;
      metrics[M.stress] = this.stress;
      metrics[M.buckling] = this.euler;
    }
    let joint = 0;
    for (let i = 0; i < this.n; i++) {
      metrics[M.jointForceOf[i]!] = this.jointForce[i]!;
      joint = Math.max(joint, this.jointForce[i]!);
    }
    metrics[M.jointForce] = joint;
  }
}
