/**
 * Programmatic API for single designs: baseline plus overrides, full evaluation report, one-pose probe,
 * study summary. The CLI commands `check`, `evaluate` and `probe` are thin wrappers over these.
 */
import { staticSizingNote } from './driveNotes.js';
import { DesignError, designFromValues, designToValues, designVariables, variableKind, type DesignVariable } from '../mechanics/designSpace.js';
import { Evaluator, type DesignEvaluation } from '../mechanics/evaluate.js';
import { METRICS } from '../mechanics/metrics.js';
import { probeArchitecturePose, probePose, type ArchitecturePoseReport, type PoseReport } from '../mechanics/probe.js';
import { ARCHITECTURES } from '../architectures/index.js';
import { parseQuantity, UnitError } from '../study/units.js';
import type { Study } from '../study/types.js';
import { WORKING_MODES } from '../core/pose.js';
import { builtArmField, type BuiltArmPoseReport } from '../mechanics/builtArmDesign.js';

export interface DesignChoice {
  /** The study, with fixed parameters replaced where an override named one. */
  readonly study: Study;
  readonly variables: readonly DesignVariable[];
  readonly design: Float64Array;
  /** Named values of every design variable (SI; working mode by name). */
  readonly values: Readonly<Record<string, number | string>>;
  /** Things the user should know (e.g. a value outside its bounds). */
  readonly warnings: readonly string[];
}

/**
 * The study's baseline design with `NAME=VALUE` overrides (values with units, e.g. `crank_1=320 mm`).
 * A design variable takes the value (outside its bounds with a warning); a fixed geometry parameter is
 * replaced for this evaluation.
 */
export function chooseDesign(study: Study, overrides: readonly string[] = []): DesignChoice {
  const values: Record<string, number | string> = { ...study.baseline };
  const warnings: string[] = [];
  const variablesBefore = designVariables(study);
  const variableNames = new Set(variablesBefore.map((v) => v.name));
  let geometry = study.geometry;
  const architecture = ARCHITECTURES[study.architecture];
  for (const raw of overrides) {
    const eq = raw.indexOf('=');
    if (eq <= 0) throw new DesignError(`--set ${raw}: expected NAME=VALUE, for example --set crank_1=320mm`);
    const name = raw.slice(0, eq).trim();
    const text = raw.slice(eq + 1).trim();
    if (name === 'working_mode' && !study.members) {
      const modes: readonly string[] = study.architecture === 'five-bar' ? WORKING_MODES : architecture.workingModes;
      if (!modes.includes(text)) throw new DesignError(`--set working_mode: expected one of ${modes.join(', ')}`);
      if (study.workingModes.length > 1) values[name] = text;
      else study = { ...study, workingModes: [text] };
      continue;
    }
    const categorical = variablesBefore.find((v) => v.name === name && v.kind === 'categorical');
    if (categorical) {
      values[name] = text;
      continue;
    }
    if (name === 'drive' || /^drive_[123]$/.test(name)) {
      values[name] = text;
      continue;
    }
    const variable = variablesBefore.find((v) => v.name === name);
    const kind = variableKind(study, name);
    let value: number;
    try {
      value = parseQuantity(text, kind, `--set ${name}`);
    } catch (error) {
      if (error instanceof UnitError) throw new DesignError(error.message);
      throw error;
    }
    const unit = kind === 'angle' ? 'rad' : 'm';
    if (variable && variable.kind === 'real') {
      values[name] = value;
      if (value < variable.min || value > variable.max) warnings.push(`${name} = ${value} ${unit} lies outside its bounds [${variable.min}, ${variable.max}] ${unit}`);
      continue;
    }
    const parameters = architecture.parameters.map((p) => p.name);
    if (study.members || !parameters.includes(name)) {
      const known = study.members ? [...variableNames] : [...parameters, 'working_mode', 'drive', 'drive_1', 'drive_2', ...(architecture.dof === 3 ? ['drive_3'] : [])];
      throw new DesignError(`--set ${name}: unknown name (expected one of ${known.join(', ')})`);
    }
    const spec = geometry[name]!;
    if (spec.kind === 'fixed') {
      geometry = { ...geometry, [name]: { kind: 'fixed', value } };
    } else if (spec.kind === 'tied') {
      throw new DesignError(`--set ${name}: this parameter is tied to ${spec.to}; set ${spec.to} instead`);
    }
  }
  if (geometry !== study.geometry) study = { ...study, geometry };
  const variables = designVariables(study);
  const design = designFromValues(variables, values, true);
  return { study, variables, design, values: designToValues(variables, design), warnings };
}

export interface ConstraintReport {
  readonly name: string;
  readonly metric: string;
  readonly value: number | null;
  readonly min: number | null;
  readonly max: number | null;
  /** Signed normalised margin: ≥ 0 satisfied. */
  readonly margin: number;
  readonly satisfied: boolean;
  readonly origin: 'study' | 'drive';
}

export interface EvaluationReport {
  readonly study: string;
  readonly design: Readonly<Record<string, number | string>>;
  /** Every metric in SI; null where the study gives no data for it (e.g. no drives). */
  readonly metrics: Readonly<Record<string, number | null>>;
  readonly constraints: readonly ConstraintReport[];
  readonly violation: number;
  readonly feasible: boolean;
  /**
   * Estimated absolute error of the metrics that carry one (SI, the metric's unit), from the study's
   * evaluation.tolerance: region averages and extremes, and reachable_area and workspace_area (m²)
   * when the areas are computed to the tolerance (absent from here on a fixed grid: grid_cells
   * without a tolerance). Metrics without an estimate are left out.
   */
  readonly errors: Readonly<Record<string, number>>;
}

/** The metrics that carry an error estimate, by name. */
export function errorsRecord(errors: Float64Array | undefined): Record<string, number> {
  const out: Record<string, number> = {};
  if (!errors) return out;
  METRICS.forEach((m, i) => {
    const v = errors[i]!;
    if (!Number.isNaN(v)) out[m.name] = v;
  });
  return out;
}

export function metricsRecord(metrics: Float64Array): Record<string, number | null> {
  const out: Record<string, number | null> = {};
  METRICS.forEach((m, i) => {
    const v = metrics[i]!;
    out[m.name] = Number.isNaN(v) ? null : v;
  });
  return out;
}

export function evaluationReport(evaluator: Evaluator, choice: DesignChoice, result: DesignEvaluation): EvaluationReport {
  return {
    study: choice.study.name,
    design: choice.values,
    metrics: metricsRecord(result.metrics),
    constraints: evaluator.constraints.map((c, k) => {
      const v = result.metrics[c.metricIndex]!;
      return {
        name: c.name,
        metric: c.metric,
        value: Number.isNaN(v) ? null : v,
        min: Number.isNaN(result.constraintMin[k]!) ? null : result.constraintMin[k]!,
        max: Number.isNaN(result.constraintMax[k]!) ? null : result.constraintMax[k]!,
        margin: result.margins[k]!,
        satisfied: result.margins[k]! >= 0,
        origin: c.origin,
      };
    }),
    violation: result.violation,
    feasible: result.feasible,
    errors: errorsRecord(result.errors),
  };
}

/** Evaluate one design of a study completely. */
export function evaluateDesign(study: Study, overrides: readonly string[] = []): { report: EvaluationReport; warnings: readonly string[] } {
  const choice = chooseDesign(study, overrides);
  const evaluator = new Evaluator(choice.study);
  const result = evaluator.evaluate(choice.design);
  const sizing = staticSizingNote(study);
  return { report: evaluationReport(evaluator, choice, result), warnings: sizing ? [...choice.warnings, sizing] : choice.warnings };
}

/** Everything about one pose of one five-bar design, in the five-bar's report shape (a view of the one probe). */
export function probeDesign(study: Study, x: number, y: number, overrides: readonly string[] = []): { report: PoseReport & { design: Readonly<Record<string, number | string>>; builtArm?: BuiltArmPoseReport }; warnings: readonly string[] } {
  const choice = chooseDesign(study, overrides);
  const evaluator = new Evaluator(choice.study);
  const d = evaluator.architectureDesign(choice.design);
  return { report: { design: choice.values, ...probePose(d.study, d.model, x, y, d.resolved.drives, d.resolved.mount), ...builtArmField(d, x, y) }, warnings: choice.warnings };
}

/**
 * Everything about one pose of one design of any architecture (arrays of n per actuator), through
 * the architecture interface; φ (rad) is the platform orientation for 3-DOF (default φ_0).
 */
export function probeArchitectureDesign(
  study: Study,
  x: number,
  y: number,
  phi?: number,
  overrides: readonly string[] = [],
): { report: ArchitecturePoseReport & { design: Readonly<Record<string, number | string>>; builtArm?: BuiltArmPoseReport }; warnings: readonly string[] } {
  const choice = chooseDesign(study, overrides);
  const evaluator = new Evaluator(choice.study);
  const d = evaluator.architectureDesign(choice.design);
  return { report: { design: choice.values, ...probeArchitecturePose(d.study, d.architecture, d.model, x, y, phi, d.resolved.drives, d.resolved.mount), ...builtArmField(d, x, y, phi) }, warnings: choice.warnings };
}

export { DesignError };
