/**
 * What the built-arm checks (src/accuracy/builtArm.ts) need from a study and a resolved design: the
 * study's accuracy sections, each link's section properties (its own shape or the chosen tube),
 * Young's modulus and shear modulus G = E / (2 (1 + ν)), and the drives at the joints.
 */
import { isLeggedModel, type BuiltArmDesign, type CycleLoadPath } from '../accuracy/builtArm.js';
import { CycleSamples, CycleTrajectory, evaluatedCycleTime } from './dutyCycle.js';
import { FirstOrderAccuracy, type PoseAccuracy } from '../accuracy/firstOrder.js';
import { StructureAtPose } from '../accuracy/structure.js';
import { chosenTube, linkSectionProperties } from '../accuracy/sectionChoice.js';
import type { LinkMaterial } from '../accuracy/structure.js';
import type { ArchitectureModelBase, ArchitecturePose, DriveAtJoint } from '../architectures/types.js';
import type { DutyCycleSpec, Study } from '../study/types.js';
import type { ToleranceSpec } from '../accuracy/spec.js';
import { ARCHITECTURES } from '../architectures/index.js';
import { drivesAtJoint, type ResolvedDesign } from './designSpace.js';
import type { ArchitectureDesign } from './evaluate.js';
import { PoseStatus } from '../core/pose.js';

/** The design's inputs to the built-arm checks, or null when the study has none of the accuracy sections. */
export function builtArmDesign(study: Study, resolved: ResolvedDesign, drives: readonly DriveAtJoint[] | null): BuiltArmDesign | null {
  const spec = study.accuracy;
  if (!spec) return null;
  const nu = spec.strength?.poissonRatio ?? 0.3;
  const material = (link: 'cranks' | 'rods', i: number): LinkMaterial => {
    const own = (link === 'cranks' ? spec.crankSections : spec.rodSections)[i] ?? null;
    const tube = chosenTube(spec.sectionChoice, resolved.linkSection, link);
    const youngsModulus = tube ? tube.youngsModulus : study.links[link][i]!.youngsModulus;
    return {
      section: linkSectionProperties(spec.sectionChoice, resolved.linkSection, link, own),
      youngsModulus,
      shearModulus: youngsModulus / (2 * (1 + nu)),
    };
  };
  const n = study.links.rods.length;
  return {
    spec: spec.tolerances ? { ...spec, tolerances: withGearboxBacklash(spec.tolerances, study, resolved) } : spec,
    cranks: Array.from({ length: n }, (_, i) => material('cranks', i)),
    rods: Array.from({ length: n }, (_, i) => material('rods', i)),
    drives,
  };
}

/** The built-arm figures at one pose (probe): first-order errors with the error ellipse, loads per leg, out-of-plane mode. */
export interface BuiltArmPoseReport {
  /** Coverage factor k of the statistical figures. */
  readonly coverage: number | null;
  /** First-order worst-case |δP| (m) and k σ along the worst direction (m); null without tolerances. */
  readonly positionErrorWorst: number | null;
  readonly positionErrorRss: number | null;
  /** Error ellipse at coverage k: semi-axes (m) and the major axis' angle from x (rad). */
  readonly errorEllipse: { readonly major: number; readonly minor: number; readonly angle: number } | null;
  /** 3-DOF: worst-case and k σ orientation error, rad. */
  readonly orientationErrorWorst: number | null;
  readonly orientationErrorRss: number | null;
  /** Lowest out-of-plane natural frequency at this pose, Hz (null without section shapes). */
  readonly outOfPlaneMode: number | null;
  /** Per leg: peak axial force (N), largest bending moment (N·m), pin force (N), largest stress (Pa), Euler ratio. */
  readonly legs: readonly { axialForce: number; bendingMoment: number; pinForce: number; stress: number | null; eulerRatio: number | null }[];
}

/** Built-arm figures at one solved, assembled pose; null when the study has no accuracy sections or the pose is singular. */
export function builtArmAtPose(study: Study, model: ArchitectureModelBase, resolved: ResolvedDesign, pose: ArchitecturePose): BuiltArmPoseReport | null {
  const design = builtArmDesign(study, resolved, drivesAtJoint(study, resolved.drives));
  if (!design || !isLeggedModel(model)) return null;
  const n = model.dof;
  const fo = new FirstOrderAccuracy(n);
  const tol = design.spec.tolerances;
  let accuracy: PoseAccuracy | null = null;
  if (tol) {
    fo.prepare(model, tol, design.drives);
    if (!fo.atPose(model, pose)) return null;
    accuracy = fo.result;
  } else if (!fo.inverseOnly(pose)) {
    return null;
  }
  const s = new StructureAtPose(n);
  const known = model.legs.every((leg, i) => design.rods[i]!.section && (leg.name !== 'crank-rod' || design.cranks[i]!.section));
  const mode = known ? s.outOfPlane(model, pose, design.cranks, design.rods) : Number.NaN;
  s.loads(model, pose, fo.inverse, design.spec.strength?.endLoad ?? 0, design.cranks, design.rods);
  const r = s.result;
  const finite = (v: number): number | null => (Number.isFinite(v) ? v : null);
  return {
    coverage: tol?.coverage ?? null,
    positionErrorWorst: accuracy?.positionWorst ?? null,
    positionErrorRss: accuracy?.positionRss ?? null,
    errorEllipse: accuracy ? { major: accuracy.positionRss, minor: accuracy.positionRssMinor, angle: accuracy.ellipseAngle } : null,
    orientationErrorWorst: accuracy && n === 3 ? accuracy.orientationWorst : null,
    orientationErrorRss: accuracy && n === 3 ? accuracy.orientationRss : null,
    outOfPlaneMode: finite(mode),
    legs: Array.from({ length: n }, (_, i) => ({
      axialForce: r.axial[i]!, bendingMoment: r.bending[i]!, pinForce: r.pinForce[i]!,
      stress: known ? r.stress[i]! : null, eulerRatio: known ? r.euler[i]! : null,
    })),
  };
}

/** `{ builtArm }` at the pose when the study has accuracy sections and the pose is assembled and regular, else `{}`. */
export function builtArmField(d: ArchitectureDesign, x: number, y: number, phi?: number): { builtArm?: BuiltArmPoseReport } {
  if (!d.study.accuracy) return {};
  const pose = d.architecture.createPose();
  const at = d.architecture.dof === 3 ? (phi ?? d.study.orientation?.phi0 ?? 0) : 0;
  if (d.architecture.solvePose(d.model, pose, x, y, at) !== PoseStatus.Assembled || pose.inverseCondition === 0) return {};
  const report = builtArmAtPose(d.study, d.model, d.resolved, pose);
  return report ? { builtArm: report } : {};
}


/** The duty cycle's nodes with their accelerations and the time scale of the evaluated pace (dwells kept, moves scaled). */
export function cycleLoadPath(duty: DutyCycleSpec): CycleLoadPath {
  const samples = new CycleSamples(new CycleTrajectory(duty.path), duty.samples);
  const cycleTime = evaluatedCycleTime(duty);
  const scale = cycleTime === null ? 1 : (cycleTime - samples.dwellTime) / samples.moveTime;
  return {
    count: samples.count, x: samples.x, y: samples.y, phi: samples.phi, ax: samples.ax, ay: samples.ay, aphi: samples.aphi,
    timeScale: scale > 0 ? scale : Number.NaN,
  };
}

/**
 * The tolerances with each drive's backlash: the study's where it gives one (> 0), else the gearbox
 * catalogue's backlash of the design's drive train (docs/drives.md; at the output, so at the joint for
 * a crank and × lead/2π for a slider's screw or belt), else none.
 */
export function withGearboxBacklash(tol: ToleranceSpec, study: Study, resolved: ResolvedDesign): ToleranceSpec {
  const actuators = ARCHITECTURES[study.architecture].actuators;
  const backlash = tol.backlash.map((given, i) => {
    if (given > 0) return given;
    const train = resolved.drives?.[i]?.train;
    if (!train) return 0;
    return actuators[i] === 'revolute' ? train.gearbox.backlash : (train.gearbox.backlash * (train.stage?.lead ?? 0)) / (2 * Math.PI);
  });
  return backlash.every((b, i) => b === tol.backlash[i]) ? tol : { ...tol, backlash };
}
