/**
 * Shared builders for the mechanics tests: five-bar models written out by hand (no study needed),
 * studies from YAML text, the closed-form reachable area, a seeded random generator and the
 * positions of every body for finite-difference checks. Test support only; SI units throughout.
 */
import type { FiveBarModel, JointRange, WorkingMode } from './fiveBarClosedForm.js';
import { forwardKinematics } from './fiveBarClosedForm.js';
import { designFromValues, designVariables, resolveDesign } from '../../src/mechanics/designSpace.js';
import { buildFiveBarModel } from './fiveBarClosedForm.js';
import { parseStudyText } from '../../src/study/parse.js';
import type { Study } from '../../src/study/types.js';

type Pair = readonly [number, number];

/** Elbow signs (σ_1, σ_2) of a working-mode name. */
export function sigmaOf(mode: WorkingMode): [number, number] {
  return [mode[0] === '+' ? 1 : -1, mode[1] === '+' ? 1 : -1];
}

export interface FiveBarModelOptions {
  /** Actuated pivots A_1, A_2, m. */
  readonly pivot1: Pair;
  readonly pivot2: Pair;
  /** Crank lengths p_i, m. */
  readonly crank: Pair;
  /** Rod lengths d_i, m. */
  readonly rod: Pair;
  readonly workingMode?: WorkingMode;
  readonly assembly?: 1 | -1;
  readonly jointLimits?: readonly [JointRange | null, JointRange | null];
  /** kg·m² */
  readonly crankInertiaAboutPivot?: Pair;
  /** kg·m */
  readonly crankFirstMoment?: Pair;
  /** kg */
  readonly rodMass?: Pair;
  /** m from the elbow */
  readonly rodComDistance?: Pair;
  /** kg·m² */
  readonly rodInertiaAboutCom?: Pair;
  /** kg */
  readonly endMass?: number;
  /** kg·m² */
  readonly reflectedInertia?: Pair;
  /** m/s² */
  readonly gravity?: Pair;
  /** m/N */
  readonly complianceBending?: Pair;
  readonly complianceCrankAxial?: Pair;
  readonly complianceRodAxial?: Pair;
}

/** A model with every field given explicitly; unspecified masses are zero and links rigid. */
export function makeFiveBarModel(o: FiveBarModelOptions): FiveBarModel {
  const zero: Pair = [0, 0];
  return {
    pivotX: [o.pivot1[0], o.pivot2[0]],
    pivotY: [o.pivot1[1], o.pivot2[1]],
    crank: o.crank,
    rod: o.rod,
    sigma: sigmaOf(o.workingMode ?? '+-'),
    assembly: o.assembly ?? 1,
    jointLimits: o.jointLimits ?? [null, null],
    crankInertiaAboutPivot: o.crankInertiaAboutPivot ?? zero,
    crankFirstMoment: o.crankFirstMoment ?? zero,
    rodMass: o.rodMass ?? zero,
    rodComDistance: o.rodComDistance ?? [o.rod[0] / 2, o.rod[1] / 2],
    rodInertiaAboutCom: o.rodInertiaAboutCom ?? zero,
    endMass: o.endMass ?? 0,
    reflectedInertia: o.reflectedInertia ?? zero,
    gravity: o.gravity ?? zero,
    complianceBending: o.complianceBending ?? zero,
    complianceCrankAxial: o.complianceCrankAxial ?? zero,
    complianceRodAxial: o.complianceRodAxial ?? zero,
  };
}

/** Symmetric 5R: pivots at (∓span/2, 0), equal legs; massless and rigid. */
export function symmetricFiveBar(crank: number, rod: number, baseSpan: number, workingMode: WorkingMode = '+-', assembly: 1 | -1 = 1): FiveBarModel {
  return makeFiveBarModel({
    pivot1: [-baseSpan / 2, 0],
    pivot2: [baseSpan / 2, 0],
    crank: [crank, crank],
    rod: [rod, rod],
    workingMode,
    assembly,
  });
}

/** The same model with another working mode and/or assembly mode. */
export function withModes(model: FiveBarModel, workingMode: WorkingMode, assembly: 1 | -1): FiveBarModel {
  return { ...model, sigma: sigmaOf(workingMode), assembly };
}

/**
 * An asymmetric five-bar with every inertial term non-zero, rod centres of mass off the mid-points,
 * a raised second pivot and gravity oblique to the axes: the hard case for dynamics checks.
 * (Invented numbers, chosen only to be generic.)
 */
export function massiveAsymmetricFiveBar(workingMode: WorkingMode = '+-', assembly: 1 | -1 = 1): FiveBarModel {
  return makeFiveBarModel({
    pivot1: [-0.08, 0],
    pivot2: [0.1, 0.03],
    crank: [0.18, 0.22],
    rod: [0.31, 0.27],
    workingMode,
    assembly,
    crankInertiaAboutPivot: [0.004, 0.006],
    crankFirstMoment: [0.05, 0.07],
    rodMass: [0.3, 0.25],
    rodComDistance: [0.12, 0.16],
    rodInertiaAboutCom: [0.002, 0.0015],
    endMass: 0.7,
    reflectedInertia: [0.01, 0.02],
    gravity: [1.2, -9.7],
  });
}

/**
 * Area of the lens where two discs of radii r1, r2 with centres `distance` apart overlap, m².
 * Weisstein, "Circle-Circle Intersection", MathWorld (lens-area formula; written from memory, and it
 * reproduces the worked example 0.577664 m² checked in evaluate.test.ts):
 * A = r1² acos((d² + r1² − r2²)/(2 d r1)) + r2² acos((d² + r2² − r1²)/(2 d r2))
 *     − ½ √((−d + r1 + r2)(d + r1 − r2)(d − r1 + r2)(d + r1 + r2)).
 * Disjoint discs give 0; a disc inside the other gives the smaller disc's area.
 */
export function lensArea(r1: number, r2: number, distance: number): number {
  if (r1 <= 0 || r2 <= 0) return 0;
  if (distance >= r1 + r2) return 0;
  if (distance <= Math.abs(r1 - r2)) return Math.PI * Math.min(r1, r2) ** 2;
  const d = distance;
  const part1 = r1 * r1 * Math.acos((d * d + r1 * r1 - r2 * r2) / (2 * d * r1));
  const part2 = r2 * r2 * Math.acos((d * d + r2 * r2 - r1 * r1) / (2 * d * r2));
  const kite = 0.5 * Math.sqrt((-d + r1 + r2) * (d + r1 - r2) * (d - r1 + r2) * (d + r1 + r2));
  return part1 + part2 - kite;
}

/**
 * Closed-form reachable area of a 5R, m²: the intersection of the annuli
 * (A_1; |p_1 − d_1| .. p_1 + d_1) and (A_2; |p_2 − d_2| .. p_2 + d_2), by inclusion–exclusion of lens
 * areas L(R1,R2) − L(r1,R2) − L(R1,r2) + L(r1,r2) (derived: each inner disc lies inside its outer disc).
 */
export function annulusIntersectionArea(model: FiveBarModel): number {
  const distance = Math.hypot(model.pivotX[1] - model.pivotX[0], model.pivotY[1] - model.pivotY[0]);
  const outer1 = model.crank[0] + model.rod[0];
  const inner1 = Math.abs(model.crank[0] - model.rod[0]);
  const outer2 = model.crank[1] + model.rod[1];
  const inner2 = Math.abs(model.crank[1] - model.rod[1]);
  return (
    lensArea(outer1, outer2, distance) -
    lensArea(inner1, outer2, distance) -
    lensArea(outer1, inner2, distance) +
    lensArea(inner1, inner2, distance)
  );
}

/** Seeded uniform generator on [0, 1) (mulberry32; common practice, no source). */
export function seededRandom(seed: number): () => number {
  let state = seed >>> 0;
  return () => {
    state = (state + 0x6d2b79f5) >>> 0;
    let t = state;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
}

/** Positions of every part of the linkage for given actuated angles (from forward kinematics). */
export interface LinkageState {
  /** End point P, m. */
  readonly px: number;
  readonly py: number;
  /** Elbows C_i, m. */
  readonly c1x: number;
  readonly c1y: number;
  readonly c2x: number;
  readonly c2y: number;
  /** Absolute rod angles β_i = atan2(P − C_i), rad. */
  readonly rodAngle1: number;
  readonly rodAngle2: number;
  /** Rod centres of mass C_i + b_i u_i, m. */
  readonly rod1ComX: number;
  readonly rod1ComY: number;
  readonly rod2ComX: number;
  readonly rod2ComY: number;
}

/** Linkage state at (θ_1, θ_2) in the model's assembly mode, or null when the loop cannot close. */
export function linkageState(model: FiveBarModel, theta1: number, theta2: number): LinkageState | null {
  const endPoint = new Float64Array(2);
  if (!forwardKinematics(model, theta1, theta2, endPoint)) return null;
  const px = endPoint[0]!;
  const py = endPoint[1]!;
  const c1x = model.pivotX[0] + model.crank[0] * Math.cos(theta1);
  const c1y = model.pivotY[0] + model.crank[0] * Math.sin(theta1);
  const c2x = model.pivotX[1] + model.crank[1] * Math.cos(theta2);
  const c2y = model.pivotY[1] + model.crank[1] * Math.sin(theta2);
  const rodAngle1 = Math.atan2(py - c1y, px - c1x);
  const rodAngle2 = Math.atan2(py - c2y, px - c2x);
  const b1 = model.rodComDistance[0];
  const b2 = model.rodComDistance[1];
  return {
    px, py, c1x, c1y, c2x, c2y, rodAngle1, rodAngle2,
    rod1ComX: c1x + b1 * Math.cos(rodAngle1),
    rod1ComY: c1y + b1 * Math.sin(rodAngle1),
    rod2ComX: c2x + b2 * Math.cos(rodAngle2),
    rod2ComY: c2y + b2 * Math.sin(rodAngle2),
  };
}

/**
 * Gravitational potential energy U = −Σ_k m_k γ·r_k of the whole linkage, J (constant dropped).
 * Each crank enters through its first moment about the pivot (a_i e(θ_i) = m_i r_com,i − m_i A_i).
 */
export function potentialEnergy(model: FiveBarModel, theta1: number, theta2: number): number {
  const s = linkageState(model, theta1, theta2);
  if (s === null) return Number.NaN;
  const [gx, gy] = model.gravity;
  const crankTerm =
    model.crankFirstMoment[0] * (Math.cos(theta1) * gx + Math.sin(theta1) * gy) +
    model.crankFirstMoment[1] * (Math.cos(theta2) * gx + Math.sin(theta2) * gy);
  const rodTerm =
    model.rodMass[0] * (s.rod1ComX * gx + s.rod1ComY * gy) + model.rodMass[1] * (s.rod2ComX * gx + s.rod2ComY * gy);
  const endTerm = model.endMass * (s.px * gx + s.py * gy);
  return -(crankTerm + rodTerm + endTerm);
}

/** Header lines every test study shares. */
const STUDY_HEADER = 'study: mechanics-test\narchitecture: five-bar\n';

/** YAML fragments (flow style) of a five-bar study; omitted sections take the parser's defaults. */
export interface StudyTextParts {
  readonly geometry: string;
  readonly workingMode?: string;
  readonly assemblyMode?: string;
  readonly jointLimits?: string;
  readonly mass?: string;
  readonly gravity?: string;
  readonly drives?: string;
  readonly task?: string;
  readonly evaluation?: string;
  readonly constraints?: string;
  readonly objectives?: string;
}

/** Study YAML text from fragments, e.g. geometry: '{ base_span: 0.15, crank_1: 0.2, ... }'. */
export function fiveBarStudyText(parts: StudyTextParts): string {
  const lines = [STUDY_HEADER + `geometry: ${parts.geometry}`];
  if (parts.workingMode !== undefined) lines.push(`working_mode: "${parts.workingMode}"`);
  if (parts.assemblyMode !== undefined) lines.push(`assembly_mode: "${parts.assemblyMode}"`);
  if (parts.jointLimits !== undefined) lines.push(`joint_limits: ${parts.jointLimits}`);
  if (parts.mass !== undefined) lines.push(`mass: ${parts.mass}`);
  if (parts.gravity !== undefined) lines.push(`gravity: ${parts.gravity}`);
  if (parts.drives !== undefined) lines.push(`drives: ${parts.drives}`);
  if (parts.task !== undefined) lines.push(`task: ${parts.task}`);
  if (parts.evaluation !== undefined) lines.push(`evaluation: ${parts.evaluation}`);
  if (parts.constraints !== undefined) lines.push(`constraints: ${parts.constraints}`);
  lines.push(`objectives: ${parts.objectives ?? '[ { metric: workspace_area } ]'}`);
  return lines.join('\n') + '\n';
}

/** Parsed, validated study from fragments. */
export function studyFromParts(parts: StudyTextParts): Study {
  return parseStudyText(fiveBarStudyText(parts), '<test study>').study;
}

/** Model of a study design given by named values (none needed when the geometry is all fixed). */
export function modelOfStudy(study: Study, values: Readonly<Record<string, number | string>> = {}): FiveBarModel {
  const variables = designVariables(study);
  const design = designFromValues(variables, values);
  return buildFiveBarModel(study, resolveDesign(study, variables, design));
}

/** Geometry fragment of a fixed symmetric five-bar, lengths in m. */
export function symmetricGeometry(crank: number, rod: number, baseSpan: number): string {
  return `{ base_span: ${baseSpan}, crank_1: ${crank}, rod_1: ${rod}, crank_2: ${crank}, rod_2: ${rod} }`;
}
